//! What a call leaves in telemetry: the model used and the warning codes
//! raised (never a clinical value), recorded on the call's span and metrics.

use oxbind_proto::v1::{
    CorrectForTemperatureResponse, Curve, EstimateP50Response, GasExchangeResponse,
    OxygenContentResponse, Provenance, SampleCurveResponse, SaturationFromTensionResponse,
    ShiftFactorsResponse, TensionFromSaturationResponse, Warning, WarningCode,
};

use super::status::InvalidRequest;
use crate::{instruments, physiology::model::catalog};

/// Record the model and the warnings of one computed result.
pub fn result(provenance: Option<&Provenance>, warnings: &[Warning]) {
    if let Some(id) = provenance
        .map(|p| p.model_id.as_str())
        .and_then(|id| catalog().iter().find(|info| info.id == id))
        .map(|info| info.id)
    {
        instruments::record_model(id);
    }
    if !warnings.is_empty() {
        let codes: Vec<&'static str> = warnings
            .iter()
            .map(|w| {
                WarningCode::try_from(w.code)
                    .unwrap_or(WarningCode::Unspecified)
                    .as_str_name()
            })
            .collect();
        instruments::record_warnings(&codes);
    }
}

/// Record the refused field paths of one batch item (the path, never the
/// value).
pub fn refused_item(refusal: &InvalidRequest) {
    for violation in refusal.violations() {
        instruments::record_refused_input(&violation.field);
    }
}

/// A computed response that leaves its model and warnings in telemetry.
pub trait Observed {
    /// Record this response's model and warning codes.
    fn observe(&self);
}

/// Responses with one provenance and one list of warnings.
macro_rules! observed_by_provenance_and_warnings {
    ($($response:ty),* $(,)?) => {
        $(impl Observed for $response {
            fn observe(&self) {
                result(self.provenance.as_ref(), &self.warnings);
            }
        })*
    };
}

observed_by_provenance_and_warnings!(Curve, EstimateP50Response, CorrectForTemperatureResponse);

/// Responses that may also carry uncertainty results, whose warnings are
/// recorded too.
macro_rules! observed_with_uncertainties {
    ($($response:ty),* $(,)?) => {
        $(impl Observed for $response {
            fn observe(&self) {
                result(self.provenance.as_ref(), &self.warnings);
                for u in &self.uncertainties {
                    result(None, &u.warnings);
                }
            }
        })*
    };
}

observed_with_uncertainties!(
    SaturationFromTensionResponse,
    TensionFromSaturationResponse,
    ShiftFactorsResponse,
    OxygenContentResponse,
    GasExchangeResponse,
);

impl Observed for SampleCurveResponse {
    fn observe(&self) {
        self.curves.iter().for_each(Observed::observe);
    }
}
