//! Check 7: results reported at the patient's temperature against the same
//! results at 37 °C, corrected to that temperature (one finding each for
//! pH, PCO2 and PO2).
//!
//! # Formula
//!
//! ```text
//! T         = the temperature the results are reported at (37 °C, or the patient's)
//! x_T       = the reported result;  x₃₇ = the same result at 37 °C
//! statistic = x_T − C(x₃₇, 37 → T)          C: the engine's default correction
//! u²        = (a/√3)² + (δ/√12)² + (∂C/∂x₃₇ · δ/√12)² + (∂C/∂T · δ_T/√12)²
//!   a       = the largest difference between C and the other published corrections
//!   δ, δ_T  = the resolution results and temperatures are reported to
//! discordant when |statistic| > k·u                       uncertainty-based rule
//! ```
//!
//! The two sets come from one measurement, so the analyser's imprecision
//! cancels: what remains is the choice of published correction (an analyser
//! may use any of them, so their spread is read as bounds of a rectangular
//! distribution, JCGM 100:2008 4.3.7) and rounding (JCGM 100:2008 F.2.2.1,
//! a resolution δ read as a rectangular distribution of half-width δ/2; the
//! clause number from memory).
//!
//! The published corrections compared (reference/methods.md section 8):
//!
//! * pH: −0.0147/°C with and without the pH-dependent term 0.0065·(7.40 − pH)
//!   (Rosenthal 1948; CLSI C46 / Ashwood et al. 1983; coefficients from
//!   memory).
//! * PCO2: 10^(0.019·ΔT) (Nunn et al. 1965, verified) and 10^(0.0185·ΔT)
//!   (Bradley, Stupfel & Severinghaus 1956, verified).
//! * PO2: Severinghaus 1979 Eq. 3 integrated, and in one step (verified);
//!   with total haemoglobin and the pH at 37 °C also the
//!   haemoglobin-dependent coefficient of Siggaard-Andersen et al. 1984
//!   ([`siggaard_andersen_1984_coefficient`], verified).

use super::combine::{decide, usable, Budget, Side};
use super::finding::{
    Check, CheckSettings, ComponentName, Evaluated, NotEvaluable, Outcome, StatisticUnit,
};
use super::sample::{BloodGasSample, ReportedTemperature, SampleField};
use crate::physiology::conditions::{Conditions, STANDARD_TEMPERATURE_CELSIUS};
use crate::physiology::error::PhysiologyError;
use crate::physiology::model::{DissociationModel, Model};
use crate::physiology::temperature::{
    correct_pco2_mmhg, correct_pco2_with_mmhg, correct_ph, correct_ph_with, correct_po2_mmhg,
    correct_po2_single_step_mmhg, Pco2Coefficient, PhCorrection,
};
use crate::physiology::units::{hemoglobin_mmol_per_l_from_g_per_dl, KPA_PER_MMHG};

/// Resolution of a reported pH: two decimals, the coarsest pH resolution in
/// common use (our judgement; analysers usually print three).
pub const PH_RESOLUTION: f64 = 0.01;

/// Resolution of a reported PCO2 or PO2, mmHg: whole mm[Hg], the coarsest
/// in common use (our judgement; 0.1 kPa is 0.75 mm[Hg]).
pub const PRESSURE_RESOLUTION_MMHG: f64 = 1.0;

/// Resolution of a reported temperature, °C (our judgement).
pub const TEMPERATURE_RESOLUTION_CELSIUS: f64 = 0.1;

/// Siggaard-Andersen 1984: the temperature coefficient of pO2 where oxygen
/// is physically dissolved, per kelvin.
pub const SIGGAARD_ANDERSEN_1984_A_PER_KELVIN: f64 = 0.012;

/// Siggaard-Andersen 1984: the temperature coefficient of pO2 where oxygen
/// is bound to haemoglobin (value for y = y₀), per kelvin.
pub const SIGGAARD_ANDERSEN_1984_B_PER_KELVIN: f64 = 0.073;

/// Siggaard-Andersen 1984: O2 solubility in blood at 37 °C, mmol/L per kPa.
pub const SIGGAARD_ANDERSEN_1984_ALPHA_MMOL_PER_L_PER_KPA: f64 = 0.0105;

/// The rule of the correction-methods component.
const METHODS_RULE: &str = "the largest difference between the engine's correction and the \
other published corrections (reference/methods.md section 8), read as the bounds of a \
rectangular distribution (JCGM 100:2008 4.3.7)";

/// The rule of the resolution component.
const RESOLUTION_RULE: &str = "rounding of both results and of the temperature to the coarsest \
resolution in common use (pH 0.01, 1 mm[Hg], 0.1 Cel; our judgement), each read as a \
rectangular distribution of half-width half the resolution (JCGM 100:2008 F.2.2.1)";

/// pO2 temperature coefficient of Siggaard-Andersen et al. 1984, per kelvin.
///
/// # Formula
///
/// ```text
/// d ln p / dT = (A·α·p + cHb·n·s·(1 − s)·B) / (α·p + cHb·n·s·(1 − s))
/// ```
///
/// * `p` — pO2, kPa; `α` = 0.0105 mmol L⁻¹ kPa⁻¹; `A` = 0.012 K⁻¹;
///   `B` = 0.073 K⁻¹; `cHb` — haemoglobin (monomer), mmol/L; `s` — the
///   saturation; `n` — the Hill slope d ln(s/(1−s))/d ln p.
///
/// # Source
///
/// Siggaard-Andersen O, Wimberley PD, Göthgen I, Siggaard-Andersen M. A
/// mathematical model of the hemoglobin-oxygen dissociation curve of human
/// blood and of the oxygen partial pressure as a function of temperature.
/// *Clin Chem* 1984;30(10):1646-1651 (abstract, verified: reference/methods.md
/// section 6). Check values (derived there): 0.0723 / 0.0674 / 0.0614 /
/// 0.0273 K⁻¹ at 40 / 80 / 100 / 200 mmHg, Hb 15 g/dL, standard conditions.
pub fn siggaard_andersen_1984_coefficient(
    po2_mmhg: f64,
    saturation: f64,
    hill_slope: f64,
    hemoglobin_mmol_per_l: f64,
) -> f64 {
    let dissolved = SIGGAARD_ANDERSEN_1984_ALPHA_MMOL_PER_L_PER_KPA * po2_mmhg * KPA_PER_MMHG;
    let bound = hemoglobin_mmol_per_l * hill_slope * saturation * (1.0 - saturation);
    (SIGGAARD_ANDERSEN_1984_A_PER_KELVIN * dissolved + SIGGAARD_ANDERSEN_1984_B_PER_KELVIN * bound)
        / (dissolved + bound)
}

/// Steps of the integration of [`siggaard_andersen_1984_coefficient`]
/// (fourth-order Runge-Kutta in ln p; 64 steps over a few kelvin are exact
/// to far below the rounding of a reported PO2).
const INTEGRATION_STEPS: usize = 64;

/// PO2 at `target_celsius` from the PO2 at 37 °C by the coefficient of
/// Siggaard-Andersen et al. 1984, integrated.
///
/// For anaerobic blood the saturation does not change with temperature, and
/// in the tanh model the Hill slope depends only on the saturation once the
/// pH term is held at its 37 °C value, so `s` and `n` are taken at 37 °C
/// (from [`Model::SiggaardAndersen1984`] at the sample's pH) and only the
/// dissolved term changes with p (our reading of the model's equations; the
/// small change of the pH term on cooling is left out).
///
/// # Errors
///
/// The model's refusal of the PO2 or the pH.
pub fn po2_siggaard_andersen_1984_mmhg(
    po2_37_mmhg: f64,
    ph_37: f64,
    hemoglobin_g_per_dl: f64,
    target_celsius: f64,
) -> Result<f64, PhysiologyError> {
    let model = Model::from_id("siggaard-andersen-1984").unwrap_or_default();
    let conditions = Conditions {
        ph: Some(ph_37),
        ..Conditions::STANDARD
    };
    let (s, n) = model.saturation_and_slope(po2_37_mmhg, &conditions)?;
    let c_hb = hemoglobin_mmol_per_l_from_g_per_dl(hemoglobin_g_per_dl);
    let rate = |ln_p: f64| siggaard_andersen_1984_coefficient(ln_p.exp(), s, n, c_hb);
    let h = (target_celsius - STANDARD_TEMPERATURE_CELSIUS) / INTEGRATION_STEPS as f64;
    let mut u = po2_37_mmhg.ln();
    for _ in 0..INTEGRATION_STEPS {
        let k1 = rate(u);
        let k2 = rate(u + 0.5 * h * k1);
        let k3 = rate(u + 0.5 * h * k2);
        let k4 = rate(u + h * k3);
        u += h / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
    }
    Ok(u.exp())
}

/// The analyte of a temperature-correction check.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Analyte {
    Ph,
    Pco2,
    Po2,
}

/// Check 7 for one analyte (the check names it) of one sample.
pub fn temperature_correction(
    check: Check,
    sample: &BloodGasSample,
    settings: &CheckSettings,
) -> Outcome {
    let analyte = match check {
        Check::TemperatureCorrectionPh => Analyte::Ph,
        Check::TemperatureCorrectionPco2 => Analyte::Pco2,
        _ => Analyte::Po2,
    };
    evaluate(analyte, sample, settings).into()
}

/// The engine's correction of `analyte` from 37 °C to `t`.
fn correct(analyte: Analyte, x37: f64, t: f64) -> Result<f64, PhysiologyError> {
    let from = STANDARD_TEMPERATURE_CELSIUS;
    match analyte {
        Analyte::Ph => correct_ph(x37, from, t),
        Analyte::Pco2 => correct_pco2_mmhg(x37, from, t),
        Analyte::Po2 => correct_po2_mmhg(x37, from, t),
    }
}

/// The other published corrections of `analyte` from 37 °C to `t`.
fn alternatives(
    analyte: Analyte,
    x37: f64,
    t: f64,
    sample: &BloodGasSample,
) -> Result<Vec<f64>, PhysiologyError> {
    let from = STANDARD_TEMPERATURE_CELSIUS;
    Ok(match analyte {
        Analyte::Ph => vec![correct_ph_with(
            x37,
            from,
            t,
            PhCorrection::ConstantCoefficient,
        )?],
        Analyte::Pco2 => vec![correct_pco2_with_mmhg(
            x37,
            from,
            t,
            Pco2Coefficient::Bradley1956,
        )?],
        Analyte::Po2 => {
            let mut out = vec![correct_po2_single_step_mmhg(x37, from, t)?];
            let ph_37 = match sample.reported_at {
                ReportedTemperature::At37 => sample.ph,
                ReportedTemperature::AtPatientTemperature => sample.at_37.ph,
            };
            if let (Some(hb), Some(ph)) = (sample.hemoglobin_g_per_dl, ph_37) {
                out.push(po2_siggaard_andersen_1984_mmhg(x37, ph, hb, t)?);
            }
            out
        }
    })
}

fn evaluate(
    analyte: Analyte,
    sample: &BloodGasSample,
    settings: &CheckSettings,
) -> Result<Evaluated, NotEvaluable> {
    let (reported, at_37, reported_field, at_37_field) = match analyte {
        Analyte::Ph => (
            sample.ph,
            sample.at_37.ph,
            SampleField::Ph,
            SampleField::PhAt37,
        ),
        Analyte::Pco2 => (
            sample.pco2_mmhg,
            sample.at_37.pco2_mmhg,
            SampleField::Pco2,
            SampleField::Pco2At37,
        ),
        Analyte::Po2 => (
            Some(sample.po2_mmhg),
            sample.at_37.po2_mmhg,
            SampleField::Po2,
            SampleField::Po2At37,
        ),
    };
    let mut missing = Vec::new();
    if reported.is_none() {
        missing.push(reported_field);
    }
    if at_37.is_none() {
        missing.push(at_37_field);
    }
    let t = sample.reported_celsius();
    if t.is_none() {
        missing.push(SampleField::Temperature);
    }
    let (Some(reported), Some(x37), Some(t), true) = (reported, at_37, t, missing.is_empty())
    else {
        return Err(NotEvaluable::missing(
            missing,
            "the reported result is compared with the same result at 37 Cel, corrected to the \
temperature it is reported at",
        ));
    };
    let refused = |e: PhysiologyError| super::combine::refused(&e);
    let corrected = correct(analyte, x37, t).map_err(refused)?;
    let spread = alternatives(analyte, x37, t, sample)
        .map_err(refused)?
        .into_iter()
        .map(|alt| (alt - corrected).abs())
        .fold(0.0, f64::max);
    let resolution = match analyte {
        Analyte::Ph => PH_RESOLUTION,
        Analyte::Pco2 | Analyte::Po2 => PRESSURE_RESOLUTION_MMHG,
    };
    let rounding = resolution / 12f64.sqrt();
    // Sensitivities by central differences of the engine's correction.
    let h = 1e-4 * x37.abs().max(1.0);
    let by_x37 = (correct(analyte, x37 + h, t).map_err(refused)?
        - correct(analyte, x37 - h, t).map_err(refused)?)
        / (2.0 * h);
    let by_t = if t == STANDARD_TEMPERATURE_CELSIUS {
        // Nothing was corrected: the temperature does not enter.
        0.0
    } else {
        let dt = 0.01;
        (correct(analyte, x37, t + dt).map_err(refused)?
            - correct(analyte, x37, t - dt).map_err(refused)?)
            / (2.0 * dt)
    };
    let temperature_rounding = TEMPERATURE_RESOLUTION_CELSIUS / 12f64.sqrt();
    let rounding_total =
        (rounding.powi(2) + (by_x37 * rounding).powi(2) + (by_t * temperature_rounding).powi(2))
            .sqrt();
    let mut budget = Budget::new();
    budget.rule(
        ComponentName::CorrectionMethods,
        spread / 3f64.sqrt(),
        METHODS_RULE,
    );
    budget.rule(
        ComponentName::ReportingResolution,
        rounding_total,
        RESOLUTION_RULE,
    );
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let statistic = reported - corrected;
    let (threshold, discordant) =
        decide(statistic, Side::Both, None, uncertainty.as_ref(), settings)?;
    let unit = match analyte {
        Analyte::Ph => StatisticUnit::Ph,
        Analyte::Pco2 | Analyte::Po2 => StatisticUnit::Pressure,
    };
    let note = if t == STANDARD_TEMPERATURE_CELSIUS {
        "The results are reported at 37 Cel: the reported result and the result at 37 Cel \
must be the same (up to rounding)."
            .to_owned()
    } else {
        format!(
            "The reported result minus the result at 37 Cel corrected to the patient's \
temperature ({} Cel) with the engine's correction.",
            super::finding::plain_number(t)
        )
    };
    Ok(Evaluated {
        statistic,
        unit,
        observed: Some((reported, unit)),
        reference: Some((corrected, unit)),
        threshold,
        discordant,
        uncertainty,
        note,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physiology::conditions::Conditions;

    #[test]
    fn the_siggaard_andersen_coefficient_matches_the_derived_check_values() {
        // reference/methods.md section 6 [D]: Hb 15 g/dL (cHb 9.308 mmol/L),
        // standard conditions, 1984 model.
        let model = Model::from_id("siggaard-andersen-1984").unwrap();
        let c_hb = hemoglobin_mmol_per_l_from_g_per_dl(15.0);
        for (po2, expected) in [
            (40.0, 0.0723),
            (80.0, 0.0674),
            (100.0, 0.0614),
            (200.0, 0.0273),
        ] {
            let (s, n) = model
                .saturation_and_slope(po2, &Conditions::STANDARD)
                .unwrap();
            let rate = siggaard_andersen_1984_coefficient(po2, s, n, c_hb);
            assert!((rate - expected).abs() < 0.00006, "{po2}: {rate}");
        }
    }

    #[test]
    fn the_integrated_siggaard_andersen_correction_is_near_severinghaus_eq_3() {
        // Eq. 3 integrated: 80 -> 33 Cel gives 61.059 mmHg (methods.md
        // section 8 [D]); the Hb-dependent coefficient agrees within a few
        // per cent (the two are different published fits).
        let sa = po2_siggaard_andersen_1984_mmhg(80.0, 7.40, 15.0, 33.0).unwrap();
        assert!((sa - 61.059).abs() < 2.5, "{sa}");
        let back = po2_siggaard_andersen_1984_mmhg(80.0, 7.40, 15.0, 37.0).unwrap();
        assert!((back - 80.0).abs() < 1e-12, "{back}");
    }
}
