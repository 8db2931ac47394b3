//! OxygenContent and GasExchange over raw request bytes. First byte even:
//! the rest is an `OxygenContentRequest`; odd: a `GasExchangeRequest`.
#![no_main]

use libfuzzer_sys::fuzz_target;
use oxbind_fuzz::{check_refusal, check_response, names, split};
use oxbind_proto::v1::{GasExchangeRequest, OxygenContentRequest};
use oxbind_service::api::transport::{compute_gas_exchange, compute_oxygen_content};
use prost::Message;

fuzz_target!(|data: &[u8]| {
    let Some((selector, bytes)) = split(data) else {
        return;
    };
    if selector % 2 == 0 {
        let Ok(request) = OxygenContentRequest::decode(bytes) else {
            return;
        };
        match compute_oxygen_content(&request) {
            Ok(response) => {
                check_response(names::CONTENT, &response);
            }
            Err(refusal) => check_refusal(&refusal.to_rpc_status()),
        }
    } else {
        let Ok(request) = GasExchangeRequest::decode(bytes) else {
            return;
        };
        match compute_gas_exchange(&request) {
            Ok(response) => {
                check_response(names::GAS_EXCHANGE, &response);
            }
            Err(refusal) => check_refusal(&refusal.to_rpc_status()),
        }
    }
});
