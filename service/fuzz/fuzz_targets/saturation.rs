//! SaturationFromTension and BatchSaturationFromTension over raw request
//! bytes. First byte even: the rest is one `SaturationFromTensionRequest`
//! (through `compute_saturation_from_tension`); odd: a
//! `BatchSaturationFromTensionRequest` through the real handler (batch size
//! check, then the per-item function).
#![no_main]

use libfuzzer_sys::fuzz_target;
use oxbind_fuzz::{check_refusal, check_response, check_tonic_refusal, names, ready, split};
use oxbind_proto::v1::{
    dissociation_service_server::DissociationService, saturation_from_tension_result,
    BatchSaturationFromTensionRequest, SaturationFromTensionRequest,
};
use oxbind_service::{api::dissociation::compute_saturation_from_tension, grpc::DissociationApi};
use prost::Message;

fuzz_target!(|data: &[u8]| {
    let Some((selector, bytes)) = split(data) else {
        return;
    };
    if selector % 2 == 0 {
        let Ok(request) = SaturationFromTensionRequest::decode(bytes) else {
            return;
        };
        match compute_saturation_from_tension(&request) {
            Ok(response) => {
                check_response(names::SATURATION, &response);
            }
            Err(refusal) => check_refusal(&refusal.to_rpc_status()),
        }
    } else {
        let Ok(request) = BatchSaturationFromTensionRequest::decode(bytes) else {
            return;
        };
        let items = request.requests.len();
        let api = DissociationApi::new(oxbind_fuzz::MAX_BATCH_ITEMS);
        match ready(api.batch_saturation_from_tension(tonic::Request::new(request))) {
            Ok(response) => {
                let response = response.into_inner();
                assert_eq!(response.results.len(), items, "one result per item");
                check_response(names::BATCH_SATURATION, &response);
                for result in &response.results {
                    match result.result.as_ref().expect("every result is set") {
                        saturation_from_tension_result::Result::Response(_) => {}
                        saturation_from_tension_result::Result::Error(status) => {
                            check_refusal(status)
                        }
                    }
                }
            }
            Err(status) => check_tonic_refusal(&status),
        }
    }
});
