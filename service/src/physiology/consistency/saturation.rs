//! Check 1: the measured (co-oximetry) saturation against the saturation
//! calculated from the sample's PO2 at its pH, PCO2 and temperature.
//!
//! # Formula
//!
//! ```text
//! SO2,meas  = measured functional saturation O2Hb/(O2Hb + HHb)
//!             (a fractional FO2Hb is divided by 1 − FCOHb − FMetHb)
//! SO2,calc  = S_model(PO2₃₇, pH₃₇, PCO2₃₇, FCOHb, FMetHb, FHbF)    at 37 °C
//! statistic = SO2,meas − SO2,calc                                   (fraction)
//! discordant when |statistic| ≥ 0.10                                (published)
//!   or, as asked, |statistic| > k·√(u²(SO2,meas) + u²(SO2,calc) + u²_model)
//! ```
//!
//! Both saturations are functional, so that dyshaemoglobins count the same
//! way in both. The calculation uses the results at 37 °C: for anaerobic
//! blood the saturation is the same at 37 °C and at the patient's
//! temperature (reference/methods.md section 1). 2,3-DPG and base excess
//! take their standard values (they are not inputs of the check).
//!
//! # Threshold
//!
//! [`GUNSOLUS_2018_DIFFERENCE`]: Gunsolus et al. 2018 defined a difference
//! of 10 percentage points or more between calculated and measured sO2 as
//! discordant (8 % of 3,323 comparisons; 27 % when pO2 < 50 mmHg).

use super::combine::{
    available, calculated_saturation, curve_inputs_missing, decide, measured_saturation_budget,
    other_rule_note, refused, usable, Budget, Published, Side,
};
use super::finding::{CheckSettings, Evaluated, NotEvaluable, Outcome, StatisticUnit};
use super::sample::{BloodGasSample, SampleField};
use crate::physiology::model::DissociationModel;

/// A difference of 10 percentage points or more defined discordance.
///
/// Gunsolus IL, Love SA, Kohl LP, Schmidt M, Apple FS. Low pO2 contributes to
/// potential error in oxygen saturation calculations using a point-of-care
/// assay. *Am J Clin Pathol* 2018;149(1):82-86 (abstract read:
/// reference/assurance.md B.2, verified).
pub const GUNSOLUS_2018_DIFFERENCE: f64 = 0.10;

/// The citation of [`GUNSOLUS_2018_DIFFERENCE`].
pub const GUNSOLUS_2018_SOURCE: &str = "Gunsolus IL, Love SA, Kohl LP, Schmidt M, Apple FS. Low \
pO2 contributes to potential error in oxygen saturation calculations using a point-of-care assay. \
Am J Clin Pathol 2018;149(1):82-86: a difference of 10 percentage points or more between \
calculated and measured sO2 defined discordance (verified in the abstract)";

/// What the check needs its inputs for.
const PURPOSE: &str = "the measured saturation is compared with the saturation calculated from \
PO2 at the sample's pH (and PCO2, when the model takes it into account)";

/// Check 1 for one sample.
pub fn measured_saturation(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    evaluate(sample, settings).into()
}

fn evaluate(sample: &BloodGasSample, settings: &CheckSettings) -> Result<Evaluated, NotEvaluable> {
    let mut missing = Vec::new();
    if sample.so2.is_none() {
        missing.push(SampleField::So2);
    }
    let at_37 = available(sample.at_37(), &mut missing)?;
    if let Some(v) = &at_37 {
        curve_inputs_missing(settings, v, &mut missing);
    }
    let measured = available(sample.functional_so2(), &mut missing)?.flatten();
    let (Some(at_37), Some(measured), true) = (at_37, measured, missing.is_empty()) else {
        return Err(NotEvaluable::missing(missing, PURPOSE));
    };
    let mut budget = Budget::new();
    let conditions = sample.curve_conditions(&at_37);
    let calculated = calculated_saturation(settings, at_37.po2_mmhg, &conditions, &mut budget)
        .map_err(|e| refused(&e))?;
    measured_saturation_budget(sample, &settings.figures, &mut budget, false);
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let statistic = measured - calculated;
    let published = Published {
        value: GUNSOLUS_2018_DIFFERENCE,
        source: GUNSOLUS_2018_SOURCE,
        inclusive: true,
    };
    let (threshold, discordant) = decide(
        statistic,
        Side::Both,
        Some(published),
        uncertainty.as_ref(),
        settings,
    )?;
    let note = format!(
        "Measured minus calculated functional saturation. Calculated at 37 Cel with model {} \
from the PO2, pH and PCO2 at 37 Cel and the dyshaemoglobins given (2,3-DPG and base excess at \
their standard values). {}",
        settings.model.info().id,
        other_rule_note(&threshold, Some(published))
    );
    Ok(Evaluated {
        statistic,
        unit: StatisticUnit::Fraction,
        observed: Some((measured, StatisticUnit::Fraction)),
        reference: Some((calculated, StatisticUnit::Fraction)),
        threshold,
        discordant,
        uncertainty,
        note: note.trim_end().to_owned(),
    })
}
