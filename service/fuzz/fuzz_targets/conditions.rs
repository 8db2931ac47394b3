//! ShiftFactors, EstimateP50 and CorrectForTemperature over raw request
//! bytes. First byte modulo 3: 0 the rest is a `ShiftFactorsRequest`, 1 an
//! `EstimateP50Request`, 2 a `CorrectForTemperatureRequest`.
#![no_main]

use libfuzzer_sys::fuzz_target;
use oxbind_fuzz::{check_refusal, check_response, names, split};
use oxbind_proto::v1::{CorrectForTemperatureRequest, EstimateP50Request, ShiftFactorsRequest};
use oxbind_service::api::{
    dissociation::{compute_correct_for_temperature, compute_estimate_p50, compute_shift_factors},
    status::InvalidRequest,
};
use prost::Message;

fn check<M: Message>(name: &str, result: Result<M, InvalidRequest>) {
    match result {
        Ok(response) => {
            check_response(name, &response);
        }
        Err(refusal) => check_refusal(&refusal.to_rpc_status()),
    }
}

fuzz_target!(|data: &[u8]| {
    let Some((selector, bytes)) = split(data) else {
        return;
    };
    match selector % 3 {
        0 => {
            if let Ok(request) = ShiftFactorsRequest::decode(bytes) {
                check(names::SHIFT, compute_shift_factors(&request));
            }
        }
        1 => {
            if let Ok(request) = EstimateP50Request::decode(bytes) {
                check(names::P50, compute_estimate_p50(&request));
            }
        }
        _ => {
            if let Ok(request) = CorrectForTemperatureRequest::decode(bytes) {
                check(
                    names::TEMPERATURE,
                    compute_correct_for_temperature(&request),
                );
            }
        }
    }
});
