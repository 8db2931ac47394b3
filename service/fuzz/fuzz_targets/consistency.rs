//! CheckBloodGas and BatchCheckBloodGas over raw request bytes. First byte
//! even: the rest is one `CheckBloodGasRequest` (through
//! `compute_check_blood_gas`); odd: a `BatchCheckBloodGasRequest` through the
//! real handler (batch size check, then the per-item function).
#![no_main]

use libfuzzer_sys::fuzz_target;
use oxbind_fuzz::{check_refusal, check_response, check_tonic_refusal, names, ready, split};
use oxbind_proto::v1::{
    check_blood_gas_result, consistency_service_server::ConsistencyService,
    BatchCheckBloodGasRequest, CheckBloodGasRequest,
};
use oxbind_service::{api::consistency::compute_check_blood_gas, grpc::ConsistencyApi};
use prost::Message;

fuzz_target!(|data: &[u8]| {
    let Some((selector, bytes)) = split(data) else {
        return;
    };
    if selector % 2 == 0 {
        let Ok(request) = CheckBloodGasRequest::decode(bytes) else {
            return;
        };
        match compute_check_blood_gas(&request) {
            Ok(response) => {
                assert_eq!(response.findings.len(), 11, "one finding per check");
                check_response(names::CONSISTENCY, &response);
            }
            Err(refusal) => check_refusal(&refusal.to_rpc_status()),
        }
    } else {
        let Ok(request) = BatchCheckBloodGasRequest::decode(bytes) else {
            return;
        };
        let items = request.requests.len();
        let api = ConsistencyApi::new(oxbind_fuzz::MAX_BATCH_ITEMS);
        match ready(api.batch_check_blood_gas(tonic::Request::new(request))) {
            Ok(response) => {
                let response = response.into_inner();
                assert_eq!(response.results.len(), items, "one result per item");
                check_response(names::BATCH_CONSISTENCY, &response);
                for result in &response.results {
                    match result.result.as_ref().expect("every result is set") {
                        check_blood_gas_result::Result::Response(_) => {}
                        check_blood_gas_result::Result::Error(status) => check_refusal(status),
                    }
                }
            }
            Err(status) => check_tonic_refusal(&status),
        }
    }
});
