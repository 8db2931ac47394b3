//! Check 4: the room-air exposure pattern. Air in the syringe pulls the PO2
//! toward the PO2 of air (about 150 mm[Hg]; up or down depending on where
//! it started) while the PCO2 falls toward zero.
//!
//! # Formula
//!
//! ```text
//! S_PO2     = S_model(PO2₃₇, pH₃₇, PCO2₃₇, ...)     saturation the sample's PO2 implies
//! S_air     = S_model(P_air, same conditions),  P_air = 0.2095·(PB − PH2O(37 °C))
//! statistic = S_PO2 − SpO2                          (fraction)
//! toward air when statistic ≠ 0 and has the sign of S_air − SpO2
//! discordant when toward air, |statistic| > k·√(u²(S_PO2) + u²_model + u²(SpO2)),
//!   and PCO2₃₇ < 35 mm[Hg]
//! ```
//!
//! A single sample holds no earlier PO2 or PCO2 to see them move, so the
//! patient's own oxygenation at the moment of sampling, the SpO2, stands in
//! for where the PO2 started, and a PCO2 below the usual arterial range for
//! a PCO2 that fell. The comparison is made on the saturation scale, where
//! the first-order uncertainty is well behaved (on the PO2 scale the flat top
//! of the curve makes it strongly asymmetric; reference/assurance.md A.3).
//! A sample labelled venous or mixed venous is not evaluable (the SpO2 reads
//! arterial blood).
//!
//! # Threshold
//!
//! No published threshold: uncertainty-based. The PO2 of air: Baird G.
//! Preanalytical considerations in blood gas analysis. *Biochem Med*
//! 2013;23(1):19-27 ("about 150 mmHg", secondary); small bubbles change pH
//! and PCO2 little (Toffaletti JG, McDonnell EH, 2012, verified), so the
//! PCO2 part of the pattern is a low PCO2, not a measured fall.

use super::combine::{
    available, calculated_saturation, curve_inputs_missing, decide, refused, usable, Budget, Side,
};
use super::figures::FigureInput;
use super::finding::{CheckSettings, Evaluated, NotEvaluable, Outcome, StatisticUnit};
use super::sample::{BloodGasSample, SampleField};
use crate::physiology::conditions::STANDARD_TEMPERATURE_CELSIUS;
use crate::physiology::gas_exchange::water_vapour_pressure_mmhg;
use crate::physiology::model::DissociationModel;

/// Oxygen fraction of dry air, 0.2095 (common practice).
pub const AIR_OXYGEN_FRACTION: f64 = 0.2095;

/// Lower limit of the usual arterial PCO2 range at 37 °C, mmHg: 35 (normal
/// PaCO2 35-45 mmHg, common practice).
pub const ARTERIAL_PCO2_LOWER_REFERENCE_MMHG: f64 = 35.0;

/// What the check needs its inputs for.
const PURPOSE: &str = "the saturation the PO2 implies is compared with the SpO2 at sampling, \
and a low PCO2 completes the pattern";

/// Check 4 for one sample.
pub fn room_air_exposure(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    evaluate(sample, settings).into()
}

/// The PO2 of air equilibrated with blood at 37 °C, mmHg.
///
/// # Formula
///
/// ```text
/// P_air = 0.2095 · (PB − PH2O(37 °C))       (149.4 mmHg at PB 760)
/// ```
///
/// The inspired-gas term of the alveolar gas equation with the oxygen
/// fraction of dry air (common practice); PH2O by Buck 1996, as the engine's
/// [`water_vapour_pressure_mmhg`].
///
/// # Errors
///
/// The engine's refusal of the barometric pressure (not above the
/// water-vapour pressure).
pub fn air_po2_mmhg(barometric_pressure_mmhg: f64) -> Result<f64, NotEvaluable> {
    let water =
        water_vapour_pressure_mmhg(STANDARD_TEMPERATURE_CELSIUS).map_err(|e| refused(&e))?;
    if barometric_pressure_mmhg <= water {
        return Err(NotEvaluable::because(
            "the barometric pressure does not exceed the water-vapour pressure",
        ));
    }
    Ok(AIR_OXYGEN_FRACTION * (barometric_pressure_mmhg - water))
}

fn evaluate(sample: &BloodGasSample, settings: &CheckSettings) -> Result<Evaluated, NotEvaluable> {
    if !sample.sample_type.may_be_arterial() {
        return Err(NotEvaluable::because(
            "the sample is labelled venous or mixed venous: the SpO2 describes arterial blood",
        ));
    }
    let mut missing = Vec::new();
    if sample.spo2_fraction.is_none() {
        missing.push(SampleField::Spo2);
    }
    let at_37 = available(sample.at_37(), &mut missing)?;
    if let Some(v) = &at_37 {
        curve_inputs_missing(settings, v, &mut missing);
        if v.pco2_mmhg.is_none() && !missing.contains(&SampleField::Pco2) {
            missing.push(SampleField::Pco2);
        }
    }
    let (Some(spo2), Some(at_37), true) = (sample.spo2_fraction, at_37, missing.is_empty()) else {
        return Err(NotEvaluable::missing(missing, PURPOSE));
    };
    let Some(pco2) = at_37.pco2_mmhg else {
        return Err(NotEvaluable::missing(vec![SampleField::Pco2], PURPOSE));
    };
    let conditions = sample.curve_conditions(&at_37);
    let mut budget = Budget::new();
    let implied = calculated_saturation(settings, at_37.po2_mmhg, &conditions, &mut budget)
        .map_err(|e| refused(&e))?;
    budget.input(&settings.figures, FigureInput::Spo2, spo2, 1.0);
    let air = air_po2_mmhg(sample.barometric_pressure().0)?;
    let air_saturation = settings
        .model
        .saturation(air, &conditions)
        .map_err(|e| refused(&e))?;
    let statistic = implied - spo2;
    let toward_air = statistic != 0.0 && statistic.signum() == (air_saturation - spo2).signum();
    let low_pco2 = pco2 < ARTERIAL_PCO2_LOWER_REFERENCE_MMHG;
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let (mut threshold, beyond) =
        decide(statistic, Side::Both, None, uncertainty.as_ref(), settings)?;
    threshold.rule = "discordant when the statistic points from the SpO2 toward the saturation \
of air-equilibrated blood, |statistic| > threshold, and PCO2 at 37 Cel < 35 mm[Hg]"
        .to_owned();
    let note = match (beyond && toward_air, low_pco2) {
        (true, true) => {
            "The PO2 lies toward the PO2 of air beyond the uncertainty, from where the \
SpO2 puts it, and the PCO2 is low: the pattern of air in the syringe."
        }
        (true, false) => {
            "The PO2 lies toward the PO2 of air beyond the uncertainty, but the \
PCO2 is not low, so the pattern is incomplete (small bubbles change the PCO2 little); see the \
pulse-oximetry and measured-saturation findings."
        }
        (false, _) if beyond => {
            "The PO2 differs from what the SpO2 implies beyond the \
uncertainty, but away from the PO2 of air: not the pattern of air in the syringe."
        }
        _ => "The PO2 agrees with the SpO2 within the uncertainty.",
    };
    Ok(Evaluated {
        statistic,
        unit: StatisticUnit::Fraction,
        observed: Some((implied, StatisticUnit::Fraction)),
        reference: Some((spo2, StatisticUnit::Fraction)),
        threshold,
        discordant: beyond && toward_air && low_pco2,
        uncertainty,
        note: format!(
            "Saturation the PO2 implies (model {}) minus SpO2. {note}",
            settings.model.info().id
        ),
    })
}
