//! The spread between the published adult curve models that honour the same
//! conditions, reported as a separate model component of uncertainty.
//!
//! # Formula
//!
//! ```text
//! yⱼ = the derived value with adult model j at the same inputs (models that honour every given condition)
//! a  = (max yⱼ − min yⱼ) / 2
//! u_model = a / √3          (the spread read as bounds ±a of a rectangular distribution, GUM 4.3.7)
//! ```
//!
//! shared/reference/assurance.md A.4 (derived there): the adult models differ
//! by up to 0.0262 in S at 20 mmHg, 6.5 mmHg in PO2 at S 0.97. The Hill fetal
//! and myoglobin presets are excluded: they describe different blood, not a
//! disagreement between models of the same blood. The component is kept
//! separate from the input uncertainty; [`ModelSpread::standard_uncertainty`]
//! may be combined with it in quadrature by a caller that wants to.

use super::function::MeasurementFunction;
use crate::physiology::conditions::Condition;
use crate::physiology::model::{DissociationModel, Model};

/// The published adult models compared, by catalog id (`hill` is the adult
/// preset, P50 26.8 mmHg and n 2.7).
pub const ADULT_MODEL_IDS: [&str; 6] = [
    "severinghaus-1979",
    "kelman-1966",
    "siggaard-andersen-1984",
    "dash-2016",
    "adair",
    "hill",
];

/// One model's value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ModelValue {
    /// Model id.
    pub model: &'static str,
    /// The derived value with that model.
    pub value: f64,
}

/// Why a model was left out of the comparison.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ModelExclusion {
    /// It does not honour a condition the caller gave.
    DoesNotHonour(Condition),
    /// Its equation refused the inputs (outside its domain).
    Refused,
}

/// A model left out, and why.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ExcludedModel {
    /// Model id.
    pub model: &'static str,
    /// Why.
    pub reason: ModelExclusion,
}

/// The spread between the comparable adult models.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelSpread {
    /// Each compared model's value, in [`ADULT_MODEL_IDS`] order.
    pub values: Vec<ModelValue>,
    /// The models left out.
    pub excluded: Vec<ExcludedModel>,
    /// a = (max − min)/2.
    pub half_range: f64,
    /// u_model = a/√3.
    pub standard_uncertainty: f64,
    /// Whether the model the value was computed with is among those compared.
    pub includes_chosen_model: bool,
}

/// The model component of a derived value.
#[derive(Debug, Clone, PartialEq)]
pub enum ModelComponent {
    /// Computed.
    Computed(ModelSpread),
    /// Not applicable, with the reason.
    NotApplicable(&'static str),
    /// Not asked for.
    NotRequested,
}

/// The model component of `f` at its estimates.
pub fn model_component<F: MeasurementFunction + ?Sized>(f: &F) -> ModelComponent {
    let Some(chosen) = f.curve_model() else {
        return ModelComponent::NotApplicable("the value does not depend on a dissociation curve");
    };
    let given = f.given_conditions();
    let x = f.estimates();
    let mut values = Vec::new();
    let mut excluded = Vec::new();
    let mut includes_chosen_model = false;
    for id in ADULT_MODEL_IDS {
        let Some(model) = Model::from_id(id) else {
            continue;
        };
        let honoured = model.info().honoured();
        if let Some(missing) = given.iter().find(|c| !honoured.contains(*c)) {
            excluded.push(ExcludedModel {
                model: id,
                reason: ModelExclusion::DoesNotHonour(missing),
            });
            continue;
        }
        match f.evaluate_with_model(&model, &x) {
            Some(Ok(value)) if value.is_finite() => {
                includes_chosen_model |= model == *chosen;
                values.push(ModelValue { model: id, value });
            }
            _ => excluded.push(ExcludedModel {
                model: id,
                reason: ModelExclusion::Refused,
            }),
        }
    }
    if values.len() < 2 {
        return ModelComponent::NotApplicable(
            "fewer than two published adult models honour the given conditions",
        );
    }
    let (min, max) = values
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v.value), hi.max(v.value))
        });
    let half_range = 0.5 * (max - min);
    ModelComponent::Computed(ModelSpread {
        values,
        excluded,
        half_range,
        standard_uncertainty: half_range / 3f64.sqrt(),
        includes_chosen_model,
    })
}

#[cfg(test)]
mod tests {
    use super::super::curve_values::{SaturationFromTension, TensionFromSaturation};
    use super::super::gas_exchange_values::Pao2Fio2Ratio;
    use super::*;
    use crate::physiology::conditions::Conditions;
    use crate::physiology::model::DEFAULT_MODEL;

    #[test]
    fn spread_at_60_mmhg_spans_the_adult_models() {
        let f = SaturationFromTension::new(DEFAULT_MODEL, 60.0, Conditions::STANDARD).unwrap();
        let ModelComponent::Computed(spread) = model_component(&f) else {
            panic!("computed expected");
        };
        assert_eq!(spread.values.len(), 6);
        assert!(spread.includes_chosen_model);
        // assurance.md A.4 (derived): Severinghaus 0.9058, Kelman 0.9106, Hill 0.8981;
        // methods.md check values: Siggaard-Andersen 0.905281, Dash 0.905865, Adair 0.900348.
        let value = |id: &str| spread.values.iter().find(|v| v.model == id).unwrap().value;
        assert!((value("kelman-1966") - 0.910_571).abs() < 1e-5);
        assert!((value("hill") - 0.898_078).abs() < 1e-5);
        let a = 0.5 * (0.910_571 - 0.898_078);
        assert!((spread.half_range - a).abs() < 1e-5);
        assert!((spread.standard_uncertainty - a / 3f64.sqrt()).abs() < 1e-5);
    }

    #[test]
    fn models_that_ignore_a_given_condition_are_excluded() {
        let c = Conditions {
            pco2_mmhg: Some(55.0),
            ..Conditions::STANDARD
        };
        let f = TensionFromSaturation::new(DEFAULT_MODEL, 0.9, c).unwrap();
        let ModelComponent::Computed(spread) = model_component(&f) else {
            panic!("computed expected");
        };
        assert!(!spread.includes_chosen_model);
        assert!(spread.excluded.contains(&ExcludedModel {
            model: "severinghaus-1979",
            reason: ModelExclusion::DoesNotHonour(Condition::Pco2),
        }));
        assert!(spread.values.iter().any(|v| v.model == "kelman-1966"));
    }

    #[test]
    fn values_without_a_curve_have_no_model_component() {
        let f = Pao2Fio2Ratio::new(80.0, 0.4).unwrap();
        assert!(matches!(
            model_component(&f),
            ModelComponent::NotApplicable(_)
        ));
    }
}
