//! SampleCurve over raw request bytes (the whole input is one
//! `SampleCurveRequest`). The service allows 10 condition sets of 10,000
//! points each, so one small input can ask for 100,000 model evaluations;
//! the smoke run's `-timeout` allows for that.
#![no_main]

use libfuzzer_sys::fuzz_target;
use oxbind_fuzz::{check_refusal, check_response, names};
use oxbind_proto::v1::SampleCurveRequest;
use oxbind_service::api::dissociation::compute_sample_curve;
use prost::Message;

fuzz_target!(|data: &[u8]| {
    let Ok(request) = SampleCurveRequest::decode(data) else {
        return;
    };
    match compute_sample_curve(&request) {
        Ok(response) => {
            let sets = request.condition_sets.len().max(1);
            assert_eq!(response.curves.len(), sets, "one curve per condition set");
            check_response(names::CURVE, &response);
        }
        Err(refusal) => check_refusal(&refusal.to_rpc_status()),
    }
});
