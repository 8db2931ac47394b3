//! Soft-limit warnings: computed results the caller should know how far to
//! trust.

use oxbind_proto::v1::{Warning, WarningCode, WarningSeverity};

use super::{field_path::FieldPath, standard_ranges, status::readable, units};
use crate::physiology::{
    conditions::{Condition, Conditions},
    error::Input,
    model::{DissociationModel, Model},
};

/// Saturations above this, given to an inverse, lie on the plateau where PO2
/// is poorly determined: an error of 0.0055 in S (the stated accuracy of
/// Severinghaus 1979 Eq. 1) moves PO2 by about 6.6 mmHg at S 0.97 and 40 mmHg at
/// 0.99 (derived from the Ellis inverse, reference/methods.md section 2).
pub const PLATEAU_SATURATION: f64 = 0.97;

/// A warning with `code` on `field`, with the code's usual severity
/// ([`usual_severity`]).
pub fn warning(code: WarningCode, field: String, message: impl Into<String>) -> Warning {
    with_severity(code, usual_severity(code), field, message)
}

/// A warning with `code` and an explicit `severity` on `field`.
pub fn with_severity(
    code: WarningCode,
    severity: WarningSeverity,
    field: String,
    message: impl Into<String>,
) -> Warning {
    Warning {
        code: code as i32,
        field,
        message: message.into(),
        severity: severity as i32,
    }
}

/// The severity a warning code carries unless the finding says otherwise.
///
/// Every finding that bears on how far the number can be trusted is a
/// caution. A condition the model ignores is informational by default (a
/// sample's conditions not needed beside a measured saturation); an ignored
/// blood condition is graded by its value in [`unmodelled_conditions`].
pub fn usual_severity(code: WarningCode) -> WarningSeverity {
    match code {
        WarningCode::ConditionNotModelled | WarningCode::UncertaintyNotEvaluated => {
            WarningSeverity::Informational
        }
        // Informational only when just the first order was asked for (the
        // uncertainty module says so); a failed validation is a caution.
        WarningCode::UncertaintyFirstOrderNotValidated
        | WarningCode::Unspecified
        | WarningCode::OutsideValidatedRange
        | WarningCode::PlateauPoorlyDetermined
        | WarningCode::ImputationNotValid
        | WarningCode::Extrapolated
        | WarningCode::SaturationCalculated
        | WarningCode::UncertaintyNonlinear
        | WarningCode::UncertaintyAsymmetricInterval
        | WarningCode::UncertaintyDefaultFigures
        | WarningCode::UncertaintyUnverifiedFigure
        | WarningCode::UncertaintyPulseOximetryBiasNotIncluded
        | WarningCode::UncertaintyDrawsRedrawn
        | WarningCode::UncertaintyDrawsBeyondValidatedRange
        | WarningCode::UncertaintyMonteCarloNotStable
        | WarningCode::UncertaintyNoInputFigures => WarningSeverity::Caution,
    }
}

/// The name of a condition's field in `BloodConditions`.
pub fn condition_field(condition: Condition) -> &'static str {
    match condition {
        Condition::Ph => "ph",
        Condition::Pco2 => "pco2",
        Condition::Temperature => "temperature",
        Condition::Dpg => "dpg",
        Condition::BaseExcess => "base_excess",
        Condition::Cohb => "cohb",
        Condition::Methb => "methb",
        Condition::Hbf => "hbf",
    }
}

/// Warn for every condition given that `model` does not honour: an
/// informational warning when the value lies inside the condition's standard
/// physiological range ([`standard_ranges`]), a caution when it lies outside
/// (the curve would have moved had the model taken it into account).
pub fn unmodelled_conditions(
    model: &Model,
    conditions: &Conditions,
    path: &FieldPath<'_>,
    out: &mut Vec<Warning>,
) {
    for condition in model.unmodelled_conditions(conditions) {
        let range = standard_ranges::standard_range(condition);
        let inside = range.is_some_and(|r| r.contains(condition_value(conditions, condition)));
        // Appended rather than formatted: in a batch this runs for many items.
        let mut message = String::with_capacity(160);
        message.push_str("model ");
        message.push_str(model.info().id);
        message
            .push_str(" does not take this condition into account; it did not affect the result");
        if let Some(range) = range {
            message.push_str(if inside {
                "; the value given lies inside its standard range, "
            } else {
                "; the value given lies outside its standard range, "
            });
            message.push_str(&range.describe());
        }
        let severity = if inside {
            WarningSeverity::Informational
        } else {
            WarningSeverity::Caution
        };
        out.push(with_severity(
            WarningCode::ConditionNotModelled,
            severity,
            path.field(condition_field(condition)).render(),
            message,
        ));
    }
}

/// The value of a condition as the model used it (given or standard).
fn condition_value(conditions: &Conditions, condition: Condition) -> f64 {
    match condition {
        Condition::Ph => conditions.ph(),
        Condition::Pco2 => conditions.pco2_mmhg(),
        Condition::Temperature => conditions.temperature_celsius(),
        Condition::Dpg => conditions.dpg_mmol_per_l(),
        Condition::BaseExcess => conditions.base_excess_mmol_per_l(),
        Condition::Cohb => conditions.cohb_fraction(),
        Condition::Methb => conditions.methb_fraction(),
        Condition::Hbf => conditions.hbf_fraction(),
    }
}

/// A point on the curve checked against the model's validated ranges: the
/// input (PO2 or saturation), its value, and the request field a warning
/// about it names.
pub type RangePoint<'a> = (Input, f64, &'a FieldPath<'a>);

/// Warn for every input outside the model's validated range, once each.
/// `points` are the call's point on the curve, given and computed (a PO2 and
/// its saturation), each with the field path a warning names (a computed
/// value names the input that produced it). Returns whether every input lay
/// inside.
pub fn validated_ranges(
    model: &Model,
    conditions: &Conditions,
    conditions_path: &FieldPath<'_>,
    points: &[RangePoint<'_>],
    out: &mut Vec<Warning>,
) -> bool {
    let info = model.info();
    let mut inside = true;
    for range in info.validated_ranges {
        // The field path is rendered only for a warning.
        let (value, condition_path, point_path) =
            if let Some(&(_, value, path)) = points.iter().find(|p| p.0 == range.input) {
                (value, None, Some(path))
            } else if let Some(condition) = Condition::ALL
                .iter()
                .copied()
                .find(|c| c.input() == range.input)
            {
                (
                    condition_value(conditions, condition),
                    Some(condition_field(condition)),
                    None,
                )
            } else {
                continue;
            };
        if value < range.min || value > range.max {
            inside = false;
            let field = match (point_path, condition_path) {
                (Some(path), _) => path.render(),
                (None, Some(name)) => conditions_path.field(name).render(),
                (None, None) => String::new(),
            };
            let unit = units::input_unit(range.input);
            let unit = if unit.is_empty() {
                String::new()
            } else {
                format!(" {unit}")
            };
            out.push(warning(
                WarningCode::OutsideValidatedRange,
                field,
                format!(
                    "{} lies outside the range model {} was validated for, {} to {}{unit}",
                    range.input,
                    info.id,
                    readable(range.min),
                    readable(range.max)
                ),
            ));
        }
    }
    inside
}
