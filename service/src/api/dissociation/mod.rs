//! `oxbind.v1.DissociationService`: one transport-neutral function per RPC.
//!
//! Each `compute_*` function takes the request message, reads and validates
//! it (collecting every bad field), calls the physiology engine, and returns
//! the response with its warnings and provenance, or the refusal
//! ([`InvalidRequest`]). It also leaves the model and warning codes in
//! telemetry ([`super::observe`]), so every door records the same. The doors
//! (gRPC in [`crate::grpc`], Connect in [`crate::http`]) only convert.

mod batch;
mod curve;
mod item_provenance;
mod p50;
mod point;
mod shift_factors;
mod temperature;

pub use batch::{compute_batch_saturation_from_tension, compute_batch_tension_from_saturation};
pub use curve::{
    compute_sample_curve, CURVE_DEFAULT_PO2_MAX_MMHG, CURVE_DEFAULT_PO2_MIN_MMHG,
    CURVE_DEFAULT_POINT_COUNT,
};
pub use p50::compute_estimate_p50;
pub use point::{compute_saturation_from_tension, compute_tension_from_saturation};
pub use shift_factors::{compute_shift_factors, direction, shift_factor};
pub use temperature::{compute_correct_for_temperature, TEMPERATURE_CORRECTION};

use super::{
    status::{InvalidRequest, Violation},
    warnings,
};
use crate::physiology::{
    conditions::Condition,
    error::{Input, PhysiologyError},
};

/// The request field path of an engine input in a request whose conditions
/// sit at `conditions` (and whose curve input is `po2` or
/// `saturation_fraction`).
fn field_of(input: Input, conditions: &str) -> String {
    let condition = Condition::ALL.iter().copied().find(|c| c.input() == input);
    match (input, condition) {
        (_, Some(Condition::Ph)) => format!("{conditions}.ph"),
        (_, Some(c)) => format!("{conditions}.{}.value", warnings::condition_field(c)),
        (Input::Po2, _) => "po2.value".to_owned(),
        (Input::Saturation, _) => "saturation_fraction".to_owned(),
        (Input::P50, _) => "hill.p50.value".to_owned(),
        (Input::HillN, _) => "hill.n".to_owned(),
        (other, _) => other.name().to_owned(),
    }
}

fn engine_refusal(error: &PhysiologyError, conditions: &str) -> InvalidRequest {
    InvalidRequest::one(Violation::from_physiology_at(
        field_of(error.input(), conditions),
        error,
    ))
}
