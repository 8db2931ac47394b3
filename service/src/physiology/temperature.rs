//! Blood-gas temperature correction: pH, PCO2 and PO2 of an anaerobic sample
//! carried from the temperature at which it was measured (usually the
//! analyser's 37 °C) to another temperature (usually the patient's), and back.
//!
//! For anaerobic blood the oxygen content and the saturation do not change on
//! cooling or warming, so the tensions and the pH change instead. Which set of
//! values to use clinically (alpha-stat or pH-stat) is a local decision and is
//! not made here.
//!
//! Every correction in this module is exactly reversible in its own terms:
//! correcting from A to B and then from B to A returns the starting value (to
//! rounding for pH and PCO2, to the solver's tolerance for PO2).

use super::curves::severinghaus::{self, po2_temperature_coefficient_ln_per_celsius};
use super::error::{require_positive, require_within, Input, PhysiologyError};

/// The reference temperature of the published coefficients and of blood-gas
/// analysers, °C (common practice).
pub const REFERENCE_TEMPERATURE_CELSIUS: f64 = 37.0;

/// Lowest sample or patient temperature accepted, °C.
///
/// Our plausibility limit, not a published one: it lies below the coldest
/// temperatures used in deep hypothermic circulatory arrest (common practice),
/// and keeps every equation here well inside liquid water.
pub const TEMPERATURE_MIN_CELSIUS: f64 = 10.0;

/// Highest sample or patient temperature accepted, °C.
///
/// Our plausibility limit, not a published one: above the highest body
/// temperatures survived (common practice). The service's hard limit for
/// every temperature input is the same 10-46 °C.
pub const TEMPERATURE_MAX_CELSIUS: f64 = 46.0;

/// Largest gas pressure (partial or barometric) accepted by the transport
/// modules, mmHg.
///
/// Our plausibility limit, not a published one: about 13 atmospheres, far
/// beyond the roughly 3 atmospheres absolute of hyperbaric oxygen treatment
/// (common practice). It keeps every result finite.
pub const PRESSURE_MAX_MMHG: f64 = 10_000.0;

/// Lowest pH accepted (the service's hard limit, design.md "Input rules").
pub const PH_MIN: f64 = 6.0;

/// Highest pH accepted (the service's hard limit, design.md "Input rules").
pub const PH_MAX: f64 = 8.5;

/// Temperature coefficient of blood pH at pH 7.40, pH units per °C.
///
/// Traced to Rosenthal TB. The effect of temperature on the pH of blood and
/// plasma in vitro. *J Biol Chem* 1948 (title verified in a reference list;
/// the value −0.0147 is **from memory**, methods.md section 8 tag \[M\]).
pub const PH_COEFFICIENT_PER_CELSIUS: f64 = -0.0147;

/// pH-dependent part of the pH temperature coefficient, per °C per pH unit
/// away from [`PH_PIVOT`].
///
/// As in CLSI C46 and Ashwood ER, Kost G, Kenny M. *Clin Chem*
/// 1983;29:1877–1885 — **from memory** (methods.md section 8 tag \[M\]).
pub const PH_DEPENDENT_COEFFICIENT_PER_CELSIUS: f64 = 0.0065;

/// The pH at which the pH temperature coefficient equals
/// [`PH_COEFFICIENT_PER_CELSIUS`] (methods.md section 8, tag \[M\]).
pub const PH_PIVOT: f64 = 7.40;

/// Temperature coefficient of PCO2, log10 units per °C, measured in fresh
/// human blood: Nunn JF et al. Temperature coefficients for Pco2 and Po2 of
/// blood in vitro. *J Appl Physiol* 1965 (value and title verified in the
/// abstract, methods.md section 8 tag \[V\]; authors and pages 20:23–26 from
/// memory \[M\]).
pub const PCO2_COEFFICIENT_NUNN_1965_LOG10_PER_CELSIUS: f64 = 0.019;

/// Temperature coefficient of PCO2, log10 units per °C, as calculated by
/// Bradley AF, Stupfel M, Severinghaus JW. *J Appl Physiol* 1956;9(2):201–204,
/// doi:10.1152/jappl.1956.9.2.201 (value verified in the abstract,
/// methods.md section 8 tag \[V\]).
pub const PCO2_COEFFICIENT_BRADLEY_1956_LOG10_PER_CELSIUS: f64 = 0.0185;

/// Which pH temperature correction to apply.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum PhCorrection {
    /// −0.0147 per °C plus the pH-dependent term 0.0065·(7.40 − pH37) per °C
    /// (methods.md section 8; both coefficients from memory). The default.
    #[default]
    WithPhDependentTerm,
    /// The constant coefficient −0.0147 per °C alone, as it also appears in
    /// public code (methods.md section 8, tag \[V-code\]).
    ConstantCoefficient,
}

/// Which PCO2 temperature coefficient to apply.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Pco2Coefficient {
    /// 0.019 log10/°C, measured (Nunn et al. 1965). The default.
    #[default]
    Nunn1965,
    /// 0.0185 log10/°C, calculated (Bradley, Stupfel & Severinghaus 1956).
    Bradley1956,
}

impl Pco2Coefficient {
    /// The coefficient, log10 units per °C.
    pub fn log10_per_celsius(self) -> f64 {
        match self {
            Pco2Coefficient::Nunn1965 => PCO2_COEFFICIENT_NUNN_1965_LOG10_PER_CELSIUS,
            Pco2Coefficient::Bradley1956 => PCO2_COEFFICIENT_BRADLEY_1956_LOG10_PER_CELSIUS,
        }
    }
}

/// A blood gas to correct: any of pH, PCO2 and PO2, and the two temperatures.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BloodGasTemperatureInput {
    /// pH at the measured temperature, if given.
    pub ph: Option<f64>,
    /// PCO2 at the measured temperature, mmHg, if given.
    pub pco2_mmhg: Option<f64>,
    /// PO2 at the measured temperature, mmHg, if given.
    pub po2_mmhg: Option<f64>,
    /// Temperature of measurement, °C (analysers: 37).
    pub measured_celsius: f64,
    /// Temperature to correct to, °C.
    pub target_celsius: f64,
}

/// A blood gas after temperature correction (each value present exactly when
/// it was given).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TemperatureCorrectedBloodGas {
    /// pH at the target temperature.
    pub ph: Option<f64>,
    /// PCO2 at the target temperature, mmHg.
    pub pco2_mmhg: Option<f64>,
    /// PO2 at the target temperature, mmHg.
    pub po2_mmhg: Option<f64>,
}

/// Refuse a pressure that is not finite, not positive, or above
/// [`PRESSURE_MAX_MMHG`].
fn require_pressure(value_mmhg: f64, input: Input) -> Result<f64, PhysiologyError> {
    let value = require_positive(value_mmhg, input)?;
    require_within(value, input, 0.0, PRESSURE_MAX_MMHG)
}

fn check_temperatures(measured_celsius: f64, target_celsius: f64) -> Result<(), PhysiologyError> {
    require_within(
        measured_celsius,
        Input::MeasuredTemperature,
        TEMPERATURE_MIN_CELSIUS,
        TEMPERATURE_MAX_CELSIUS,
    )?;
    require_within(
        target_celsius,
        Input::TargetTemperature,
        TEMPERATURE_MIN_CELSIUS,
        TEMPERATURE_MAX_CELSIUS,
    )?;
    Ok(())
}

/// pH at temperature `T` from the pH measured at 37 °C.
///
/// # Formula
///
/// ```text
/// pH(T) = pH37 + c·(T − 37) + d·(7.40 − pH37)·(T − 37)
/// ```
///
/// * `pH37` — pH measured at 37 °C
/// * `T` — target temperature, °C
/// * `c` = −0.0147 per °C ([`PH_COEFFICIENT_PER_CELSIUS`])
/// * `d` = 0.0065 per °C per pH unit ([`PH_DEPENDENT_COEFFICIENT_PER_CELSIUS`]),
///   or 0 for [`PhCorrection::ConstantCoefficient`]
///
/// # Source
///
/// Rosenthal TB. The effect of temperature on the pH of blood and plasma in
/// vitro. *J Biol Chem* 1948 (coefficient −0.0147 from memory); the
/// pH-dependent term as in CLSI C46 and Ashwood ER, Kost G, Kenny M.
/// *Clin Chem* 1983;29:1877–1885 (from memory). Form as in methods.md
/// section 8.
fn ph_from_37(ph37: f64, target_celsius: f64, form: PhCorrection) -> f64 {
    let dt = target_celsius - REFERENCE_TEMPERATURE_CELSIUS;
    ph37 + PH_COEFFICIENT_PER_CELSIUS * dt + ph_dependent(form) * (PH_PIVOT - ph37) * dt
}

/// The exact inverse of [`ph_from_37`]: pH at 37 °C from pH at `T`.
///
/// # Formula
///
/// ```text
/// pH37 = (pH(T) − c·ΔT − 7.40·d·ΔT) / (1 − d·ΔT),   ΔT = T − 37
/// ```
/// (1 − d·ΔT stays between 0.94 and 1.18 for every accepted temperature.)
fn ph_to_37(ph_t: f64, from_celsius: f64, form: PhCorrection) -> f64 {
    let dt = from_celsius - REFERENCE_TEMPERATURE_CELSIUS;
    let d = ph_dependent(form);
    (ph_t - PH_COEFFICIENT_PER_CELSIUS * dt - PH_PIVOT * d * dt) / (1.0 - d * dt)
}

fn ph_dependent(form: PhCorrection) -> f64 {
    match form {
        PhCorrection::WithPhDependentTerm => PH_DEPENDENT_COEFFICIENT_PER_CELSIUS,
        PhCorrection::ConstantCoefficient => 0.0,
    }
}

/// Carry a blood pH from the temperature it was measured at to another, with
/// the default form ([`PhCorrection::WithPhDependentTerm`]).
///
/// # Formula
///
/// The published relation is written from 37 °C:
///
/// ```text
/// pH(T) = pH37 − 0.0147·(T − 37) + 0.0065·(7.40 − pH37)·(T − 37)
/// ```
///
/// A value measured at `T1 ≠ 37` is first brought to 37 °C by the exact
/// algebraic inverse of this relation, then carried to `T2`; so correcting
/// A → B → A returns the start.
///
/// * `ph` — pH at `measured_celsius`
/// * `measured_celsius`, `target_celsius` — °C, each within
///   [`TEMPERATURE_MIN_CELSIUS`, `TEMPERATURE_MAX_CELSIUS`]
///
/// # Source
///
/// Rosenthal TB. *J Biol Chem* 1948 (−0.0147/°C, from memory); pH-dependent
/// term as in CLSI C46 / Ashwood, Kost & Kenny, *Clin Chem* 1983;29:1877–1885
/// (from memory). methods.md section 8.
///
/// # Errors
///
/// [`PhysiologyError::NotFinite`] or [`PhysiologyError::OutOfRange`] naming
/// [`Input::Ph`] (outside 6.0–8.5), [`Input::MeasuredTemperature`] or
/// [`Input::TargetTemperature`]. A result outside 6.0–8.5 is refused the
/// same way, naming [`Input::Ph`].
pub fn correct_ph(
    ph: f64,
    measured_celsius: f64,
    target_celsius: f64,
) -> Result<f64, PhysiologyError> {
    correct_ph_with(
        ph,
        measured_celsius,
        target_celsius,
        PhCorrection::WithPhDependentTerm,
    )
}

/// Carry a blood pH between temperatures with a chosen form of the
/// correction.
///
/// # Formula
///
/// ```text
/// pH(T) = pH37 + c·(T − 37) + d·(7.40 − pH37)·(T − 37)
/// c = −0.0147 /°C;   d = 0.0065 /°C (WithPhDependentTerm) or 0 (ConstantCoefficient)
/// ```
///
/// From `T1 ≠ 37` the value is first brought to 37 °C by the exact inverse.
///
/// * `ph` — pH at `measured_celsius`; `measured_celsius`, `target_celsius` in °C
///
/// # Source
///
/// Rosenthal TB. *J Biol Chem* 1948 (coefficient from memory); CLSI C46 /
/// Ashwood ER, Kost G, Kenny M. *Clin Chem* 1983;29:1877–1885 (from memory);
/// the constant-coefficient form also appears in public code (methods.md
/// section 8, \[V-code\]).
///
/// # Errors
///
/// As [`correct_ph`].
pub fn correct_ph_with(
    ph: f64,
    measured_celsius: f64,
    target_celsius: f64,
    form: PhCorrection,
) -> Result<f64, PhysiologyError> {
    let ph = require_within(ph, Input::Ph, PH_MIN, PH_MAX)?;
    check_temperatures(measured_celsius, target_celsius)?;
    let ph37 = ph_to_37(ph, measured_celsius, form);
    let corrected = ph_from_37(ph37, target_celsius, form);
    require_within(corrected, Input::Ph, PH_MIN, PH_MAX)
}

/// Carry a PCO2 from the temperature it was measured at to another, with the
/// default coefficient ([`Pco2Coefficient::Nunn1965`], 0.019 log10/°C).
///
/// # Formula
///
/// ```text
/// PCO2(T2) = PCO2(T1) · 10^( f·(T2 − T1) )
/// ```
///
/// * `PCO2` — mmHg; `T1` = `measured_celsius`, `T2` = `target_celsius`, °C
/// * `f` = 0.019 log10 units per °C
///
/// # Source
///
/// Nunn JF et al. Temperature coefficients for Pco2 and Po2 of blood in
/// vitro. *J Appl Physiol* 1965 (0.019 verified in the abstract; volume and
/// pages 20:23–26 from memory). The form `Pbody/Pmeas = 10^(f·(Tb − Tm))` is
/// that of Bradley AF, Stupfel M, Severinghaus JW. *J Appl Physiol*
/// 1956;9(2):201–204. methods.md section 8.
///
/// # Errors
///
/// [`PhysiologyError::NotFinite`] or [`PhysiologyError::OutOfRange`] naming
/// [`Input::Pco2`] (not positive, or above 10 000 mmHg), [`Input::MeasuredTemperature`] or
/// [`Input::TargetTemperature`].
pub fn correct_pco2_mmhg(
    pco2_mmhg: f64,
    measured_celsius: f64,
    target_celsius: f64,
) -> Result<f64, PhysiologyError> {
    correct_pco2_with_mmhg(
        pco2_mmhg,
        measured_celsius,
        target_celsius,
        Pco2Coefficient::Nunn1965,
    )
}

/// Carry a PCO2 between temperatures with a chosen published coefficient.
///
/// # Formula
///
/// ```text
/// PCO2(T2) = PCO2(T1) · 10^( f·(T2 − T1) )
/// f = 0.019 /°C (Nunn 1965, measured) or 0.0185 /°C (Bradley 1956, calculated)
/// ```
///
/// * `pco2_mmhg` — mmHg at `measured_celsius`; temperatures in °C
///
/// # Source
///
/// Nunn JF et al. *J Appl Physiol* 1965 (abstract; pages from memory);
/// Bradley AF, Stupfel M, Severinghaus JW. *J Appl Physiol* 1956;9(2):201–204,
/// doi:10.1152/jappl.1956.9.2.201.
///
/// # Errors
///
/// As [`correct_pco2_mmhg`].
pub fn correct_pco2_with_mmhg(
    pco2_mmhg: f64,
    measured_celsius: f64,
    target_celsius: f64,
    coefficient: Pco2Coefficient,
) -> Result<f64, PhysiologyError> {
    let pco2 = require_pressure(pco2_mmhg, Input::Pco2)?;
    check_temperatures(measured_celsius, target_celsius)?;
    let exponent = coefficient.log10_per_celsius() * (target_celsius - measured_celsius);
    Ok(pco2 * 10f64.powf(exponent))
}

/// Carry a PO2 from the temperature it was measured at to another by
/// integrating the PO2-dependent temperature coefficient of Severinghaus 1979
/// Eq. 3 exactly.
///
/// # Formula
///
/// ```text
/// d ln PO2 / dT = fT(PO2) = 0.058 / ( 0.243·(PO2/100)^3.88 + 1 ) + 0.013     (per °C)
/// ```
///
/// integrated exactly from `T1` = `measured_celsius` to `T2` =
/// `target_celsius` by [`severinghaus::po2_at_temperature_mmhg`] (the
/// closed-form antiderivative of 1/fT, solved for PO2(T2) by Newton's
/// method; the same map the Severinghaus model uses for its own temperature).
///
/// * `po2_mmhg` — PO2 at `T1`, mmHg
/// * `fT` — per °C (natural log), from
///   [`po2_temperature_coefficient_ln_per_celsius`]
///
/// # Source
///
/// Severinghaus JW. Simple, accurate equations for human blood O2
/// dissociation computations. *J Appl Physiol: Respir Environ Exerc Physiol*
/// 1979;46(3):599–602, doi:10.1152/jappl.1979.46.3.599, Eq. 3. The exact
/// integration is derived from Eq. 3 (methods.md section 8: a single step
/// differs from the integral by up to 0.8 % over 4 °C).
///
/// # Errors
///
/// [`PhysiologyError::NotFinite`] or [`PhysiologyError::OutOfRange`] naming
/// [`Input::Po2`] (not positive, or above 10 000 mmHg), [`Input::MeasuredTemperature`] or
/// [`Input::TargetTemperature`].
pub fn correct_po2_mmhg(
    po2_mmhg: f64,
    measured_celsius: f64,
    target_celsius: f64,
) -> Result<f64, PhysiologyError> {
    let po2 = require_pressure(po2_mmhg, Input::Po2)?;
    check_temperatures(measured_celsius, target_celsius)?;
    if target_celsius == measured_celsius {
        return Ok(po2);
    }
    severinghaus::po2_at_temperature_mmhg(po2, measured_celsius, target_celsius)
}

/// Carry a PO2 between temperatures in one step with the coefficient taken at
/// the starting PO2 — the way published single-step tables do it.
///
/// Kept for comparison with such tables; [`correct_po2_mmhg`] is the one to
/// use, because the coefficient changes as PO2 changes.
///
/// # Formula
///
/// ```text
/// PO2(T2) = PO2(T1) · exp( fT(PO2(T1)) · (T2 − T1) )
/// fT(P)   = 0.058 / ( 0.243·(P/100)^3.88 + 1 ) + 0.013     (per °C)
/// ```
///
/// * `po2_mmhg` — mmHg at `measured_celsius`; temperatures in °C
///
/// # Source
///
/// Severinghaus JW. *J Appl Physiol: Respir Environ Exerc Physiol*
/// 1979;46(3):599–602, Eq. 3.
///
/// # Errors
///
/// As [`correct_po2_mmhg`].
pub fn correct_po2_single_step_mmhg(
    po2_mmhg: f64,
    measured_celsius: f64,
    target_celsius: f64,
) -> Result<f64, PhysiologyError> {
    let po2 = require_pressure(po2_mmhg, Input::Po2)?;
    check_temperatures(measured_celsius, target_celsius)?;
    let rate = po2_temperature_coefficient_ln_per_celsius(po2);
    Ok(po2 * (rate * (target_celsius - measured_celsius)).exp())
}

/// The log10 form of the PO2 temperature coefficient commonly attributed to
/// CLSI C46 (attribution from memory), per °C.
///
/// It equals Severinghaus 1979 Eq. 3 divided by ln 10 within 0.2 % over
/// 10–400 mmHg (methods.md section 8, derived); provided so that callers and
/// tests can compare the two.
///
/// # Formula
///
/// ```text
/// b(PO2) = (5.49e-11·PO2^3.88 + 0.071) / (9.72e-9·PO2^3.88 + 2.30)      (log10 per °C)
/// ```
///
/// * `po2_mmhg` — PO2, mmHg
///
/// # Source
///
/// methods.md section 8, form (b); commonly attributed to CLSI C46
/// (from memory).
///
/// # Errors
///
/// [`PhysiologyError::NotFinite`] or [`PhysiologyError::OutOfRange`] naming
/// [`Input::Po2`] when it is not positive.
pub fn po2_temperature_coefficient_log10_form_per_celsius(
    po2_mmhg: f64,
) -> Result<f64, PhysiologyError> {
    let po2 = require_pressure(po2_mmhg, Input::Po2)?;
    let p = po2.powf(3.88);
    Ok((5.49e-11 * p + 0.071) / (9.72e-9 * p + 2.30))
}

/// Correct any of pH, PCO2 and PO2 of one anaerobic sample between two
/// temperatures, each with the module's default method.
///
/// # Formula
///
/// ```text
/// pH(T)   = pH37 − 0.0147·(T − 37) + 0.0065·(7.40 − pH37)·(T − 37)
/// PCO2(T2) = PCO2(T1) · 10^(0.019·(T2 − T1))
/// d ln PO2/dT = 0.058 / (0.243·(PO2/100)^3.88 + 1) + 0.013, integrated exactly
/// ```
///
/// Symbols and units as in [`correct_ph`], [`correct_pco2_mmhg`] and
/// [`correct_po2_mmhg`].
///
/// # Source
///
/// Rosenthal 1948 and CLSI C46 / Ashwood, Kost & Kenny 1983 (pH, from
/// memory); Nunn et al. *J Appl Physiol* 1965 (PCO2); Severinghaus JW.
/// *J Appl Physiol* 1979;46(3):599–602, Eq. 3 (PO2).
///
/// # Errors
///
/// The first refusal among the temperatures, pH, PCO2 and PO2, naming that
/// input.
pub fn correct_blood_gas(
    input: &BloodGasTemperatureInput,
) -> Result<TemperatureCorrectedBloodGas, PhysiologyError> {
    check_temperatures(input.measured_celsius, input.target_celsius)?;
    let (from, to) = (input.measured_celsius, input.target_celsius);
    Ok(TemperatureCorrectedBloodGas {
        ph: input.ph.map(|ph| correct_ph(ph, from, to)).transpose()?,
        pco2_mmhg: input
            .pco2_mmhg
            .map(|p| correct_pco2_mmhg(p, from, to))
            .transpose()?,
        po2_mmhg: input
            .po2_mmhg
            .map(|p| correct_po2_mmhg(p, from, to))
            .transpose()?,
    })
}
