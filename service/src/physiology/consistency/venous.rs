//! Check 5: a venous pattern in a sample labelled arterial: the sample's
//! saturation lies below the patient's SpO2 at sampling beyond the
//! uncertainty of both.
//!
//! # Formula
//!
//! ```text
//! S_sample  = the measured functional saturation, else S_model(PO2₃₇, pH₃₇, PCO2₃₇, ...)
//! statistic = S_sample − SpO2                                  (fraction)
//! discordant when statistic < −k·√(u²(S_sample) [+ u²_model] + u²(SpO2))
//! ```
//!
//! Only a sample labelled arterial is checked. Venous blood has a PO2 about
//! 36.9 mmHg lower than arterial, with wide scatter (meta-analyses as
//! summarised in reference/assurance.md B.2 row 4, secondary), so its
//! saturation lies well below the SpO2.
//!
//! # Threshold
//!
//! No published threshold: "a numeric flag rule (e.g. arterial sO2 < 75 %
//! with SpO2 ≥ 94 %) has no published threshold found — derive from u(SpO2)
//! and u(sO2)" (reference/assurance.md B.2 row 4). Uncertainty-based.

use super::combine::{
    available, calculated_saturation, curve_inputs_missing, decide, measured_saturation_budget,
    refused, usable, Budget, Side,
};
use super::figures::FigureInput;
use super::finding::{CheckSettings, Evaluated, NotEvaluable, Outcome, StatisticUnit};
use super::sample::{BloodGasSample, SampleField, SampleType};
use crate::physiology::model::DissociationModel;

/// Check 5 for one sample.
pub fn venous_pattern(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    evaluate(sample, settings).into()
}

fn evaluate(sample: &BloodGasSample, settings: &CheckSettings) -> Result<Evaluated, NotEvaluable> {
    if sample.sample_type != SampleType::Arterial {
        return Err(NotEvaluable::because(
            "only a sample labelled arterial is checked for a venous pattern",
        ));
    }
    let mut missing = Vec::new();
    if sample.spo2_fraction.is_none() {
        missing.push(SampleField::Spo2);
    }
    let mut budget = Budget::new();
    let (saturation, measured) = match sample.so2 {
        Some(_) => {
            let functional = available(sample.functional_so2(), &mut missing)?.flatten();
            if functional.is_some() {
                measured_saturation_budget(sample, &settings.figures, &mut budget, false);
            }
            (functional, true)
        }
        None => {
            let at_37 = available(sample.at_37(), &mut missing)?;
            let mut calculated = None;
            if let Some(v) = &at_37 {
                curve_inputs_missing(settings, v, &mut missing);
                if missing.is_empty() {
                    let conditions = sample.curve_conditions(v);
                    calculated = Some(
                        calculated_saturation(settings, v.po2_mmhg, &conditions, &mut budget)
                            .map_err(|e| refused(&e))?,
                    );
                }
            }
            (calculated, false)
        }
    };
    let (Some(spo2), Some(saturation), true) =
        (sample.spo2_fraction, saturation, missing.is_empty())
    else {
        return Err(NotEvaluable::missing(
            missing,
            "the sample's saturation (measured, or calculated from PO2 at its pH) is compared \
with the SpO2 at sampling",
        ));
    };
    budget.input(&settings.figures, FigureInput::Spo2, spo2, 1.0);
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let statistic = saturation - spo2;
    let (threshold, discordant) = decide(
        statistic,
        Side::Negative,
        None,
        uncertainty.as_ref(),
        settings,
    )?;
    let note = if measured {
        "The measured functional saturation minus SpO2; negative when the sample is less \
saturated than the patient's arterial blood."
            .to_owned()
    } else {
        format!(
            "The saturation calculated from the PO2 (model {}; no saturation was measured) \
minus SpO2; negative when the sample is less saturated than the patient's arterial blood.",
            settings.model.info().id
        )
    };
    Ok(Evaluated {
        statistic,
        unit: StatisticUnit::Fraction,
        observed: Some((saturation, StatisticUnit::Fraction)),
        reference: Some((spo2, StatisticUnit::Fraction)),
        threshold,
        discordant,
        uncertainty,
        note,
    })
}
