//! Check 6: pH, PCO2 and a measured bicarbonate against the
//! Henderson-Hasselbalch equation.
//!
//! # Formula
//!
//! ```text
//! HCO3,calc = 0.03 · PCO2₃₇ · 10^(pH₃₇ − 6.1)                 mmol/L (PCO2 mmHg)
//! HCO3,meas = bicarbonate, or total CO2 − 0.03 · PCO2₃₇
//! statistic = (HCO3,meas − HCO3,calc) / HCO3,calc               (fraction)
//! discordant when |statistic| > 0.10                             (published)
//!   or, as asked, > k·u_c with
//!   ∂/∂HCO3,meas = 1/HCO3,calc,   ∂/∂pH = −(HCO3,meas/HCO3,calc)·ln 10,
//!   ∂/∂PCO2 = −(HCO3,meas/HCO3,calc)/PCO2 [− 0.03/HCO3,calc for total CO2]
//! ```
//!
//! pK′ 6.1 and the CO2 solubility 0.03 mmol/L per mmHg belong to plasma at
//! 37 °C, so the results at 37 °C are used. A bicarbonate the analyser
//! calculated from the same pH and PCO2 would only test the equation against
//! itself: the check is then not evaluable.
//!
//! # Sources
//!
//! The equation pH = 6.1 + log10(HCO3 / (0.03·PCO2)): AccessAnesthesiology
//! (verified, reference/assurance.md B.2 row 6). The 10 % rule: "if over
//! 10 % error, then one of the values is wrong" (Harrison's Principles of
//! Internal Medicine, accessmedicine.mhmedical.com, verified; also Sharing
//! in Health, arterial blood gas analysis, verified). Total CO2 exceeds
//! bicarbonate by about 1.2 mmol/L, the dissolved CO2 (StatPearls,
//! verified): 0.03 × 40 = 1.2.

use super::combine::{available, decide, other_rule_note, usable, Budget, Published, Side};
use super::figures::FigureInput;
use super::finding::{CheckSettings, Evaluated, NotEvaluable, Outcome, StatisticUnit};
use super::sample::{BicarbonateSource, BloodGasSample, SampleField};

/// pK′ of the bicarbonate buffer in plasma at 37 °C.
///
/// AccessAnesthesiology, Henderson-Hasselbalch equation (verified,
/// reference/assurance.md B.2 row 6).
pub const PK_PRIME: f64 = 6.1;

/// CO2 solubility in plasma at 37 °C, mmol/L per mmHg (the same source).
pub const CO2_SOLUBILITY_MMOL_PER_L_PER_MMHG: f64 = 0.03;

/// More than 10 % between measured and calculated bicarbonate means one of
/// the values is wrong.
///
/// Harrison's Principles of Internal Medicine, acidosis and alkalosis
/// (accessmedicine.mhmedical.com); Sharing in Health, arterial blood gas
/// analysis (sharinginhealth.ca); both verified (reference/assurance.md B.2
/// row 6).
pub const RELATIVE_DIFFERENCE_LIMIT: f64 = 0.10;

/// The citation of [`RELATIVE_DIFFERENCE_LIMIT`].
pub const RELATIVE_DIFFERENCE_SOURCE: &str = "Harrison's Principles of Internal Medicine, \
acidosis and alkalosis (accessmedicine.mhmedical.com): with more than 10 % difference between \
measured and calculated bicarbonate one of the values is wrong; the same rule in Sharing in \
Health, arterial blood gas analysis (sharinginhealth.ca) (both verified)";

/// Bicarbonate from pH and PCO2 (Henderson-Hasselbalch), mmol/L.
///
/// # Formula
///
/// ```text
/// HCO3 = 0.03 · PCO2 · 10^(pH − 6.1)
/// ```
///
/// * `pH` at 37 °C; `PCO2` at 37 °C, mmHg.
///
/// Check value: pH 7.40, PCO2 40 mmHg gives 1.2 · 10^1.3 = 23.94 mmol/L
/// (derived).
pub fn calculated_bicarbonate_mmol_per_l(ph: f64, pco2_mmhg: f64) -> f64 {
    CO2_SOLUBILITY_MMOL_PER_L_PER_MMHG * pco2_mmhg * 10f64.powf(ph - PK_PRIME)
}

/// Check 6 for one sample.
pub fn acid_base(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    evaluate(sample, settings).into()
}

fn evaluate(sample: &BloodGasSample, settings: &CheckSettings) -> Result<Evaluated, NotEvaluable> {
    if let Some(b) = sample.bicarbonate {
        if b.source == BicarbonateSource::Calculated {
            return Err(NotEvaluable::because(
                "the bicarbonate was calculated from the same pH and PCO2: comparing them would \
test the equation against itself; a measured bicarbonate or total CO2 is needed",
            ));
        }
    }
    let mut missing = Vec::new();
    if sample.bicarbonate.is_none() {
        missing.push(SampleField::Bicarbonate);
    }
    let at_37 = available(sample.at_37(), &mut missing)?;
    if let Some(v) = &at_37 {
        if v.ph.is_none() {
            missing.push(SampleField::Ph);
        }
        if v.pco2_mmhg.is_none() {
            missing.push(SampleField::Pco2);
        }
    }
    let (Some(bicarbonate), Some(at_37), true) = (sample.bicarbonate, at_37, missing.is_empty())
    else {
        return Err(NotEvaluable::missing(
            missing,
            "a measured bicarbonate is compared with the bicarbonate pH and PCO2 imply",
        ));
    };
    let (Some(ph), Some(pco2)) = (at_37.ph, at_37.pco2_mmhg) else {
        return Err(NotEvaluable::missing(
            vec![SampleField::Ph, SampleField::Pco2],
            "the equation needs both",
        ));
    };
    let total_co2 = bicarbonate.source == BicarbonateSource::MeasuredTotalCo2;
    let measured = if total_co2 {
        bicarbonate.mmol_per_l - CO2_SOLUBILITY_MMOL_PER_L_PER_MMHG * pco2
    } else {
        bicarbonate.mmol_per_l
    };
    if measured <= 0.0 {
        return Err(NotEvaluable::because(
            "the total CO2 does not exceed the dissolved CO2 of this PCO2, so no bicarbonate can \
be taken from it",
        ));
    }
    let calculated = calculated_bicarbonate_mmol_per_l(ph, pco2);
    let ratio = measured / calculated;
    let statistic = ratio - 1.0;
    let mut budget = Budget::new();
    let figures = &settings.figures;
    budget.input(
        figures,
        FigureInput::Bicarbonate,
        bicarbonate.mmol_per_l,
        1.0 / calculated,
    );
    budget.input(
        figures,
        FigureInput::Ph,
        ph,
        -ratio * std::f64::consts::LN_10,
    );
    let dissolved = if total_co2 {
        CO2_SOLUBILITY_MMOL_PER_L_PER_MMHG / calculated
    } else {
        0.0
    };
    budget.input(figures, FigureInput::Pco2, pco2, -ratio / pco2 - dissolved);
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let published = Published {
        value: RELATIVE_DIFFERENCE_LIMIT,
        source: RELATIVE_DIFFERENCE_SOURCE,
        inclusive: false,
    };
    let (threshold, discordant) = decide(
        statistic,
        Side::Both,
        Some(published),
        uncertainty.as_ref(),
        settings,
    )?;
    let note = format!(
        "(Measured - calculated bicarbonate) / calculated, at 37 Cel, pK' 6.1 and CO2 solubility \
0.03 mmol/L per mm[Hg]{}. {}",
        if total_co2 {
            "; the bicarbonate is the total CO2 less the dissolved CO2"
        } else {
            ""
        },
        other_rule_note(&threshold, Some(published))
    );
    Ok(Evaluated {
        statistic,
        unit: StatisticUnit::Fraction,
        observed: Some((measured, StatisticUnit::Concentration)),
        reference: Some((calculated, StatisticUnit::Concentration)),
        threshold,
        discordant,
        uncertainty,
        note: note.trim_end().to_owned(),
    })
}
