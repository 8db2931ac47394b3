//! Gas exchange: the alveolar gas equation (with water-vapour pressure from
//! body temperature), the alveolar–arterial gradient, end-capillary content
//! and shunt fraction, the oxygenation ratios and indices, and PaO2 imputed
//! from SpO2 with its validity limit.

use super::content::{
    content_of_sample, BloodOxygenSample, OxygenContent, SampleRole, SaturationKind,
};
use crate::physiology::curves::severinghaus::tension_from_saturation_standard_mmhg;
use crate::physiology::error::{require_finite, require_within, Input, PhysiologyError};
use crate::physiology::temperature::{
    PRESSURE_MAX_MMHG, TEMPERATURE_MAX_CELSIUS, TEMPERATURE_MIN_CELSIUS,
};
use crate::physiology::units::{percent_from_fraction, PASCALS_PER_MMHG};

/// Buck 1996 saturation vapour pressure over liquid water: the value at 0 °C,
/// hPa.
///
/// Source: Buck AL. New equations for computing vapor pressure and
/// enhancement factor. *J Appl Meteorol* 1981;20:1527–1532, in the modified
/// form of Buck Research CR-1A user's manual (1996), Appendix 1
/// (verified in the Wikipedia article "Arden Buck equation", which gives the
/// fit range −80 to 50 °C).
pub const BUCK_1996_PRESSURE_HPA: f64 = 6.1121;

/// Buck 1996: the linear coefficient of the exponent (dimensionless).
pub const BUCK_1996_A: f64 = 18.678;

/// Buck 1996: the temperature scale of the exponent's quadratic term, °C.
pub const BUCK_1996_B_CELSIUS: f64 = 234.5;

/// Buck 1996: the temperature offset of the denominator, °C.
pub const BUCK_1996_C_CELSIUS: f64 = 257.14;

/// Pascals in one hectopascal (definitional).
const PASCALS_PER_HPA: f64 = 100.0;

/// The conventional water-vapour pressure at 37 °C, mmHg, used in the
/// abbreviated alveolar gas equation.
///
/// Source: Martin L. The four most important equations in clinical practice
/// (educational article, globalrph.com) — methods.md section 10, \[V\].
pub const WATER_VAPOUR_PRESSURE_37_CELSIUS_CONVENTIONAL_MMHG: f64 = 47.0;

/// The default respiratory exchange ratio R (common practice; methods.md
/// section 10).
pub const RESPIRATORY_QUOTIENT_DEFAULT: f64 = 0.8;

/// Smallest respiratory exchange ratio accepted (our plausibility limit;
/// resting values lie between about 0.7 and 1.0, common practice).
pub const RESPIRATORY_QUOTIENT_MIN: f64 = 0.5;

/// Largest respiratory exchange ratio accepted (our plausibility limit).
pub const RESPIRATORY_QUOTIENT_MAX: f64 = 2.0;

/// Standard barometric pressure at sea level, mmHg (common practice).
pub const SEA_LEVEL_BAROMETRIC_PRESSURE_MMHG: f64 = 760.0;

/// Largest SpO2, fraction, at which PaO2 imputed from SpO2 by the nonlinear
/// method is valid.
///
/// Source: Brown SM, Grissom CK, Moss M, Rice TW, Schoenfeld D, Hou PC,
/// Thompson BT, Brower RG. *Chest*
/// 2016;150(2):307–313, doi:10.1016/j.chest.2016.01.003 (abstract:
/// lower error than linear or log-linear imputation for SpO2 ≤ 96 %;
/// methods.md section 11, \[V\]).
pub const IMPUTATION_MAX_SPO2_FRACTION: f64 = 0.96;

/// Largest mean airway pressure accepted, cmH2O (our plausibility limit:
/// far above any ventilator setting, common practice).
pub const MEAN_AIRWAY_PRESSURE_MAX_CMH2O: f64 = 200.0;

/// Smallest inspired O2 fraction accepted (our plausibility limit: below any
/// breathable gas mixture; hypoxic test mixtures stay near 0.10 or above,
/// common practice).
pub const FIO2_MIN_FRACTION: f64 = 0.01;

/// Which alveolar gas equation to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum AlveolarGasForm {
    /// `PAO2 = FiO2·(PB − PH2O) − PaCO2·(FiO2 + (1 − FiO2)/R)`. The default.
    #[default]
    Full,
    /// `PAO2 = FiO2·(PB − PH2O) − PaCO2/R`.
    Simplified,
}

/// Inputs of the alveolar gas equation, with water vapour from body
/// temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AlveolarGasInput {
    /// Inspired O2 fraction, 0.01–1.
    pub fio2_fraction: f64,
    /// Barometric pressure, mmHg.
    pub barometric_pressure_mmhg: f64,
    /// Arterial PCO2 (taken as alveolar PCO2), mmHg.
    pub paco2_mmhg: f64,
    /// Respiratory exchange ratio R.
    pub respiratory_quotient: f64,
    /// Body temperature, °C (sets the water-vapour pressure).
    pub body_temperature_celsius: f64,
}

/// Result of the alveolar gas equation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AlveolarGas {
    /// Alveolar PO2, mmHg.
    pub alveolar_po2_mmhg: f64,
    /// Inspired PO2 of humidified gas, FiO2·(PB − PH2O), mmHg.
    pub inspired_po2_mmhg: f64,
    /// The water-vapour pressure used, mmHg.
    pub water_vapour_pressure_mmhg: f64,
}

/// Saturation vapour pressure of water at body temperature, mmHg (the
/// water-vapour pressure of fully humidified alveolar gas).
///
/// # Formula
///
/// ```text
/// Ps(T) = 6.1121 · exp( (18.678 − T/234.5) · T / (257.14 + T) )      (hPa)
/// PH2O  = Ps · 100 / 133.322387415                                 (mmHg)
/// ```
///
/// * `T` — temperature, °C (10–45 accepted; the fit covers −80 to 50 °C)
///
/// At 37 °C this gives 47.10 mmHg, against the conventional 47 mmHg
/// (Martin L., globalrph.com; methods.md section 10).
///
/// # Source
///
/// Buck AL. New equations for computing vapor pressure and enhancement
/// factor. *J Appl Meteorol* 1981;20:1527–1532; modified constants from Buck
/// Research CR-1A user's manual (1996), Appendix 1 (as given in the Wikipedia
/// article "Arden Buck equation").
///
/// # Errors
///
/// [`Input::Temperature`] not finite or outside 10–45 °C.
pub fn water_vapour_pressure_mmhg(temperature_celsius: f64) -> Result<f64, PhysiologyError> {
    let t = require_within(
        temperature_celsius,
        Input::Temperature,
        TEMPERATURE_MIN_CELSIUS,
        TEMPERATURE_MAX_CELSIUS,
    )?;
    let hpa = BUCK_1996_PRESSURE_HPA
        * ((BUCK_1996_A - t / BUCK_1996_B_CELSIUS) * t / (BUCK_1996_C_CELSIUS + t)).exp();
    Ok(hpa * PASCALS_PER_HPA / PASCALS_PER_MMHG)
}

fn require_fio2(fio2_fraction: f64) -> Result<f64, PhysiologyError> {
    require_within(fio2_fraction, Input::Fio2, FIO2_MIN_FRACTION, 1.0)
}

/// Refuse a ratio or index that overflowed because its denominator was tiny,
/// naming that denominator.
fn finite_index(
    value: f64,
    denominator: Input,
    denominator_value: f64,
) -> Result<f64, PhysiologyError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(PhysiologyError::OutOfRange {
            input: denominator,
            value: denominator_value,
            min: f64::MIN_POSITIVE,
            max: f64::INFINITY,
        })
    }
}

/// The PaCO2 multiplier of the full alveolar gas equation.
///
/// # Formula
///
/// ```text
/// factor = FiO2 + (1 − FiO2)/R
/// ```
///
/// * `FiO2` — fraction; `R` — respiratory exchange ratio
///
/// It is 1.1975 at FiO2 0.21 and R 0.8 — the "1.2" of the abbreviated bedside
/// form `PAO2 = FiO2·(PB − 47) − 1.2·PaCO2` — and exactly 1 at FiO2 1.0.
///
/// # Source
///
/// Martin L. The four most important equations in clinical practice
/// (educational article, globalrph.com): full and abbreviated alveolar gas
/// equations (methods.md section 10, \[V\]).
///
/// # Errors
///
/// [`Input::Fio2`] not in [0.01, 1]; [`Input::RespiratoryQuotient`] not in
/// 0.5–2.0.
pub fn alveolar_paco2_factor(
    fio2_fraction: f64,
    respiratory_quotient: f64,
) -> Result<f64, PhysiologyError> {
    let fio2 = require_fio2(fio2_fraction)?;
    let r = require_within(
        respiratory_quotient,
        Input::RespiratoryQuotient,
        RESPIRATORY_QUOTIENT_MIN,
        RESPIRATORY_QUOTIENT_MAX,
    )?;
    Ok(fio2 + (1.0 - fio2) / r)
}

/// The alveolar gas equation with an explicit water-vapour pressure.
///
/// # Formula
///
/// ```text
/// full:        PAO2 = FiO2·(PB − PH2O) − PaCO2·( FiO2 + (1 − FiO2)/R )
/// simplified:  PAO2 = FiO2·(PB − PH2O) − PaCO2/R
/// ```
///
/// * `FiO2` — inspired O2 fraction; `PB` — barometric pressure, mmHg;
///   `PH2O` — water-vapour pressure, mmHg; `PaCO2` — mmHg; `R` — exchange ratio
///
/// # Source
///
/// The alveolar gas equation, both forms as given by Martin L. The four most
/// important equations in clinical practice (educational article,
/// globalrph.com; methods.md section 10, \[V\]).
///
/// # Errors
///
/// [`Input::Fio2`] not in [0.01, 1]; [`Input::BarometricPressure`] not
/// positive; [`Input::Temperature`] (the water vapour's origin) for a
/// negative or non-finite `water_vapour_pressure_mmhg`; `PB ≤ PH2O` is
/// [`PhysiologyError::Inconsistent`] naming [`Input::BarometricPressure`];
/// [`Input::Paco2`] negative; [`Input::RespiratoryQuotient`] outside
/// 0.5–2.0; a negative PAO2 is [`PhysiologyError::Inconsistent`] naming
/// [`Input::Paco2`].
pub fn alveolar_po2_with_water_vapour_mmhg(
    fio2_fraction: f64,
    barometric_pressure_mmhg: f64,
    water_vapour_pressure_mmhg: f64,
    paco2_mmhg: f64,
    respiratory_quotient: f64,
    form: AlveolarGasForm,
) -> Result<AlveolarGas, PhysiologyError> {
    let fio2 = require_fio2(fio2_fraction)?;
    let pb = require_within(
        barometric_pressure_mmhg,
        Input::BarometricPressure,
        0.0,
        PRESSURE_MAX_MMHG,
    )?;
    let ph2o = require_within(
        water_vapour_pressure_mmhg,
        Input::Temperature,
        0.0,
        PRESSURE_MAX_MMHG,
    )?;
    if pb <= ph2o {
        return Err(PhysiologyError::Inconsistent {
            input: Input::BarometricPressure,
            reason: "barometric pressure does not exceed the water-vapour pressure",
        });
    }
    let paco2 = require_within(paco2_mmhg, Input::Paco2, 0.0, PRESSURE_MAX_MMHG)?;
    let factor = match form {
        AlveolarGasForm::Full => alveolar_paco2_factor(fio2, respiratory_quotient)?,
        AlveolarGasForm::Simplified => {
            1.0 / require_within(
                respiratory_quotient,
                Input::RespiratoryQuotient,
                RESPIRATORY_QUOTIENT_MIN,
                RESPIRATORY_QUOTIENT_MAX,
            )?
        }
    };
    let inspired = fio2 * (pb - ph2o);
    let alveolar = inspired - paco2 * factor;
    if alveolar < 0.0 {
        return Err(PhysiologyError::Inconsistent {
            input: Input::Paco2,
            reason: "PaCO2 is too high for this inspired PO2: the alveolar PO2 would be negative",
        });
    }
    Ok(AlveolarGas {
        alveolar_po2_mmhg: alveolar,
        inspired_po2_mmhg: inspired,
        water_vapour_pressure_mmhg: ph2o,
    })
}

/// The alveolar gas equation with the water-vapour pressure computed from
/// body temperature.
///
/// # Formula
///
/// ```text
/// PH2O = Buck 1996 saturation vapour pressure at T   (see water_vapour_pressure_mmhg)
/// full:        PAO2 = FiO2·(PB − PH2O) − PaCO2·( FiO2 + (1 − FiO2)/R )
/// simplified:  PAO2 = FiO2·(PB − PH2O) − PaCO2/R
/// ```
///
/// * symbols and units as in [`alveolar_po2_with_water_vapour_mmhg`];
///   `T` — body temperature, °C
///
/// # Source
///
/// Alveolar gas equation as given by Martin L. (globalrph.com; methods.md
/// section 10); water vapour: Buck AL. *J Appl Meteorol* 1981;20:1527–1532
/// (1996 constants).
///
/// # Errors
///
/// As [`alveolar_po2_with_water_vapour_mmhg`], and [`Input::Temperature`]
/// outside 10–45 °C.
pub fn alveolar_po2_mmhg(
    input: &AlveolarGasInput,
    form: AlveolarGasForm,
) -> Result<AlveolarGas, PhysiologyError> {
    let ph2o = water_vapour_pressure_mmhg(input.body_temperature_celsius)?;
    alveolar_po2_with_water_vapour_mmhg(
        input.fio2_fraction,
        input.barometric_pressure_mmhg,
        ph2o,
        input.paco2_mmhg,
        input.respiratory_quotient,
        form,
    )
}

/// Alveolar–arterial PO2 gradient, mmHg.
///
/// A slightly negative value (measurement scatter) is returned as computed,
/// not clamped.
///
/// # Formula
///
/// ```text
/// A–a gradient = PAO2 − PaO2
/// ```
///
/// * `PAO2` — alveolar PO2, mmHg; `PaO2` — arterial PO2, mmHg
///
/// # Source
///
/// Standard physiology (methods.md section 10, \[M\]).
///
/// # Errors
///
/// [`Input::AlveolarPo2`] or [`Input::Pao2`] not finite or negative.
pub fn alveolar_arterial_gradient_mmhg(
    alveolar_po2_mmhg: f64,
    pao2_mmhg: f64,
) -> Result<f64, PhysiologyError> {
    let alveolar = require_within(
        alveolar_po2_mmhg,
        Input::AlveolarPo2,
        0.0,
        PRESSURE_MAX_MMHG,
    )?;
    let arterial = require_within(pao2_mmhg, Input::Pao2, 0.0, PRESSURE_MAX_MMHG)?;
    Ok(alveolar - arterial)
}

/// End-capillary oxygen content, mL O2 per dL blood: the content of blood
/// fully equilibrated with alveolar gas.
///
/// # Formula
///
/// ```text
/// CcO2 = k · Hb · Sc + 0.0031 · PAO2
/// Sc   = 1.0 (functional)     or  1 − FCOHb − FMetHb (fractional, or with measured dyshaemoglobins)
/// ```
///
/// * `Hb` — g/dL; `PAO2` — mmHg; `k` — Hüfner factor, mL/g (default by the
///   arterial sample's saturation kind, as in
///   [`sample_oxygen_content`](super::content::sample_oxygen_content))
/// * the dyshaemoglobins are those of `arterial`
///
/// # Source
///
/// Standard shunt equation (methods.md section 10, \[M\]: end-capillary S taken
/// as 1.0 and end-capillary PO2 as PAO2).
///
/// # Errors
///
/// [`Input::Hemoglobin`], [`Input::AlveolarPo2`], [`Input::Cohb`],
/// [`Input::Methb`] or [`Input::HufnerFactor`] not finite or out of range.
pub fn end_capillary_content(
    hemoglobin_g_per_dl: f64,
    alveolar_po2_mmhg: f64,
    arterial: &BloodOxygenSample,
    hufner_factor_ml_per_g: Option<f64>,
) -> Result<OxygenContent, PhysiologyError> {
    let alveolar = require_within(
        alveolar_po2_mmhg,
        Input::AlveolarPo2,
        0.0,
        PRESSURE_MAX_MMHG,
    )?;
    let saturation = match arterial.saturation_kind {
        SaturationKind::Functional => 1.0,
        SaturationKind::Fractional => {
            let cohb =
                require_within(arterial.cohb_fraction.unwrap_or(0.0), Input::Cohb, 0.0, 1.0)?;
            let methb = require_within(
                arterial.methb_fraction.unwrap_or(0.0),
                Input::Methb,
                0.0,
                1.0,
            )?;
            1.0 - cohb - methb
        }
    };
    let capillary = BloodOxygenSample {
        saturation_fraction: saturation,
        po2_mmhg: alveolar,
        ..*arterial
    };
    content_of_sample(
        hemoglobin_g_per_dl,
        &capillary,
        hufner_factor_ml_per_g,
        SampleRole::Arterial,
    )
}

/// Inputs of the shunt equation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ShuntInput {
    /// Total haemoglobin, g/dL.
    pub hemoglobin_g_per_dl: f64,
    /// Alveolar PO2 (for example from [`alveolar_po2_mmhg`]), mmHg.
    pub alveolar_po2_mmhg: f64,
    /// The arterial sample.
    pub arterial: BloodOxygenSample,
    /// The mixed-venous sample.
    pub venous: BloodOxygenSample,
    /// Hüfner factor, mL/g; `None` = the default for the saturation kind.
    pub hufner_factor_ml_per_g: Option<f64>,
}

/// Result of the shunt equation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Shunt {
    /// Shunt fraction Qs/Qt, 0–1.
    pub shunt_fraction: f64,
    /// End-capillary content.
    pub end_capillary: OxygenContent,
    /// Arterial content.
    pub arterial: OxygenContent,
    /// Mixed-venous content.
    pub venous: OxygenContent,
}

/// Shunt fraction Qs/Qt from end-capillary, arterial and mixed-venous
/// contents.
///
/// # Formula
///
/// ```text
/// Qs/Qt = (CcO2 − CaO2) / (CcO2 − CvO2)
/// CcO2  = k·Hb·1.0 + 0.0031·PAO2        (end-capillary S = 1.0, PcO2 = PAO2)
/// ```
///
/// * contents — mL O2/dL blood (see
///   [`sample_oxygen_content`](super::content::sample_oxygen_content));
///   one Hüfner factor `k` for all three
///
/// # Source
///
/// The shunt equation of standard respiratory physiology (methods.md
/// section 10, \[M\]; check values there \[D\]).
///
/// # Errors
///
/// Any refusal of the content calculation (venous inputs named
/// [`Input::VenousSaturation`] and [`Input::VenousPo2`]);
/// [`PhysiologyError::Inconsistent`] naming [`Input::Saturation`] when the
/// arterial content exceeds the end-capillary content (PAO2 too low for this
/// arterial sample), or naming [`Input::VenousSaturation`] when the venous
/// content exceeds the arterial one or the saturation kinds differ.
pub fn shunt_fraction(input: &ShuntInput) -> Result<Shunt, PhysiologyError> {
    let arterial = content_of_sample(
        input.hemoglobin_g_per_dl,
        &input.arterial,
        input.hufner_factor_ml_per_g,
        SampleRole::Arterial,
    )?;
    let k = Some(arterial.hufner_factor_ml_per_g);
    let capillary = end_capillary_content(
        input.hemoglobin_g_per_dl,
        input.alveolar_po2_mmhg,
        &input.arterial,
        k,
    )?;
    let venous = content_of_sample(
        input.hemoglobin_g_per_dl,
        &input.venous,
        k,
        SampleRole::Venous,
    )?;
    if venous.bound_saturation_kind != arterial.bound_saturation_kind {
        return Err(PhysiologyError::Inconsistent {
            input: Input::VenousSaturation,
            reason: "venous and arterial saturations are of different kinds \
                     (functional versus fractional); give both of one kind",
        });
    }
    let (cc, ca, cv) = (
        capillary.total_ml_per_dl,
        arterial.total_ml_per_dl,
        venous.total_ml_per_dl,
    );
    if ca > cc {
        return Err(PhysiologyError::Inconsistent {
            input: Input::Saturation,
            reason: "arterial oxygen content exceeds end-capillary content: \
                     the alveolar PO2 is too low for this arterial sample",
        });
    }
    if cv > ca {
        return Err(PhysiologyError::Inconsistent {
            input: Input::VenousSaturation,
            reason: "venous oxygen content exceeds arterial oxygen content",
        });
    }
    if cc - cv <= 0.0 {
        return Err(PhysiologyError::NotInformative {
            input: Input::VenousSaturation,
            reason: "end-capillary and venous contents are equal, so the shunt is undefined",
        });
    }
    Ok(Shunt {
        shunt_fraction: (cc - ca) / (cc - cv),
        end_capillary: capillary,
        arterial,
        venous,
    })
}

/// PaO2/FiO2 ratio, mmHg.
///
/// # Formula
///
/// ```text
/// P/F = PaO2 / FiO2
/// ```
///
/// * `PaO2` — mmHg; `FiO2` — fraction [0.01, 1]
///
/// # Source
///
/// Standard practice (methods.md section 10, \[M\]); used in the Berlin
/// definition of ARDS, *JAMA* 2012;307(23):2526–2533.
///
/// # Errors
///
/// [`Input::Pao2`] not finite or negative; [`Input::Fio2`] not in [0.01, 1].
pub fn pao2_fio2_ratio_mmhg(pao2_mmhg: f64, fio2_fraction: f64) -> Result<f64, PhysiologyError> {
    let pao2 = require_within(pao2_mmhg, Input::Pao2, 0.0, PRESSURE_MAX_MMHG)?;
    let fio2 = require_fio2(fio2_fraction)?;
    Ok(pao2 / fio2)
}

/// SpO2/FiO2 ratio, with SpO2 in percent as it is used clinically.
///
/// # Formula
///
/// ```text
/// S/F = SpO2(%) / FiO2
/// ```
///
/// * `spo2_fraction` — SpO2 as a fraction (converted to %); `FiO2` — fraction
///
/// # Source
///
/// Rice TW, Wheeler AP, Bernard GR et al. *Chest* 2007 (S/F 235 ↔ P/F 200, 315 ↔ P/F 300, verified in a review
/// table; volume and pages 132(2):410–417 from memory). methods.md section 11.
///
/// # Errors
///
/// [`Input::Spo2`] not in 0–1; [`Input::Fio2`] not in [0.01, 1].
pub fn spo2_fio2_ratio(spo2_fraction: f64, fio2_fraction: f64) -> Result<f64, PhysiologyError> {
    let spo2 = require_within(spo2_fraction, Input::Spo2, 0.0, 1.0)?;
    let fio2 = require_fio2(fio2_fraction)?;
    Ok(percent_from_fraction(spo2) / fio2)
}

/// Oxygenation index.
///
/// # Formula
///
/// ```text
/// OI = FiO2 · MAP · 100 / PaO2
/// ```
///
/// * `FiO2` — fraction; `MAP` — mean airway pressure, cmH2O; `PaO2` — mmHg
///
/// # Source
///
/// Wikipedia "Oxygenation index" and a critical-care education page
/// (methods.md section 10, \[V\]); PALICC severity bands in *Pediatr Crit Care
/// Med* 2015;16(5):428–439.
///
/// # Errors
///
/// [`Input::Fio2`] not in [0.01, 1]; [`Input::MeanAirwayPressure`] not finite
/// or negative; [`Input::Pao2`] not positive.
pub fn oxygenation_index(
    fio2_fraction: f64,
    mean_airway_pressure_cmh2o: f64,
    pao2_mmhg: f64,
) -> Result<f64, PhysiologyError> {
    let fio2 = require_fio2(fio2_fraction)?;
    let map = require_within(
        mean_airway_pressure_cmh2o,
        Input::MeanAirwayPressure,
        0.0,
        MEAN_AIRWAY_PRESSURE_MAX_CMH2O,
    )?;
    let pao2 = crate::physiology::error::require_positive(pao2_mmhg, Input::Pao2)?;
    let pao2 = require_within(pao2, Input::Pao2, 0.0, PRESSURE_MAX_MMHG)?;
    finite_index(fio2 * map * 100.0 / pao2, Input::Pao2, pao2)
}

/// Oxygen saturation index.
///
/// # Formula
///
/// ```text
/// OSI = FiO2 · MAP · 100 / SpO2(%)
/// ```
///
/// * `FiO2` — fraction; `MAP` — cmH2O; `spo2_fraction` — fraction (used in %)
///
/// # Source
///
/// Thomas NJ et al. *Pediatr Crit Care Med* 2010;11(1):12–17, as cited by a
/// critical-care education page (methods.md section 10, \[V\]).
///
/// # Errors
///
/// [`Input::Fio2`] not in [0.01, 1]; [`Input::MeanAirwayPressure`] not finite
/// or negative; [`Input::Spo2`] not in [0.01, 1].
pub fn oxygen_saturation_index(
    fio2_fraction: f64,
    mean_airway_pressure_cmh2o: f64,
    spo2_fraction: f64,
) -> Result<f64, PhysiologyError> {
    let fio2 = require_fio2(fio2_fraction)?;
    let map = require_within(
        mean_airway_pressure_cmh2o,
        Input::MeanAirwayPressure,
        0.0,
        MEAN_AIRWAY_PRESSURE_MAX_CMH2O,
    )?;
    let spo2 = require_within(spo2_fraction, Input::Spo2, 0.0, 1.0)?;
    if spo2 == 0.0 {
        return Err(PhysiologyError::OutOfRange {
            input: Input::Spo2,
            value: spo2,
            min: f64::MIN_POSITIVE,
            max: 1.0,
        });
    }
    finite_index(
        fio2 * map * 100.0 / percent_from_fraction(spo2),
        Input::Spo2,
        spo2,
    )
}

/// Whether an imputed PaO2 lies inside the published validity limit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ImputationValidity {
    /// SpO2 ≤ 96 %: the nonlinear method was validated here.
    Valid,
    /// SpO2 > 96 %: computed, but the curve is too flat for the value to mean
    /// much; report it as not valid.
    AboveValiditySpo2,
}

/// PaO2 imputed from SpO2, with its validity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImputedPao2 {
    /// The imputed PaO2, mmHg.
    pub pao2_mmhg: f64,
    /// Whether SpO2 was within the method's validity limit.
    pub validity: ImputationValidity,
}

impl ImputedPao2 {
    /// True when SpO2 was within the validity limit (≤ 96 %).
    pub fn is_valid(&self) -> bool {
        self.validity == ImputationValidity::Valid
    }
}

/// PaO2 imputed from SpO2 by the nonlinear method, with a validity flag that
/// is set, never clamped, when SpO2 exceeds 96 %.
///
/// # Formula
///
/// The Ellis inverse of Severinghaus Eq. 1 with S = SpO2:
///
/// ```text
/// A    = 11700 · S/(1 − S)
/// B    = sqrt(50^3 + A^2)
/// PaO2 = cbrt(B + A) − cbrt(B − A)
/// valid when S ≤ 0.96
/// ```
///
/// * `S` — SpO2 as a fraction, exclusive of 0 and 1; PaO2 in mmHg
///
/// # Source
///
/// Brown SM, Grissom CK, Moss M, Rice TW, Schoenfeld D, Hou PC, Thompson BT,
/// Brower RG. *Chest* 2016;150(2):307–313,
/// doi:10.1016/j.chest.2016.01.003 (validity SpO2 ≤ 96 %, abstract);
/// Ellis RK. *J Appl Physiol* 1989;67(2):902 (citation from memory);
/// Severinghaus JW. *J Appl Physiol* 1979;46(3):599–602. The identity of
/// Brown's equation with the Ellis inverse is derived (methods.md
/// section 11); the inverse itself comes from
/// [`tension_from_saturation_standard_mmhg`].
///
/// # Errors
///
/// [`Input::Spo2`] not finite or not strictly between 0 and 1.
pub fn impute_pao2_from_spo2(spo2_fraction: f64) -> Result<ImputedPao2, PhysiologyError> {
    let spo2 = require_finite(spo2_fraction, Input::Spo2)?;
    if spo2 <= 0.0 || spo2 >= 1.0 {
        return Err(PhysiologyError::OutOfRange {
            input: Input::Spo2,
            value: spo2,
            min: 0.0,
            max: 1.0,
        });
    }
    let pao2 =
        tension_from_saturation_standard_mmhg(spo2).map_err(|e| rename_input(e, Input::Spo2))?;
    let validity = if spo2 <= IMPUTATION_MAX_SPO2_FRACTION {
        ImputationValidity::Valid
    } else {
        ImputationValidity::AboveValiditySpo2
    };
    Ok(ImputedPao2 {
        pao2_mmhg: pao2,
        validity,
    })
}

/// The same error, naming `input` (the caller's name for the quantity).
fn rename_input(error: PhysiologyError, input: Input) -> PhysiologyError {
    match error {
        PhysiologyError::NotFinite { .. } => PhysiologyError::NotFinite { input },
        PhysiologyError::OutOfRange {
            value, min, max, ..
        } => PhysiologyError::OutOfRange {
            input,
            value,
            min,
            max,
        },
        PhysiologyError::OutsideModelDomain {
            value,
            limit,
            model,
            ..
        } => PhysiologyError::OutsideModelDomain {
            input,
            value,
            limit,
            model,
        },
        PhysiologyError::NotInformative { reason, .. } => {
            PhysiologyError::NotInformative { input, reason }
        }
        PhysiologyError::Inconsistent { reason, .. } => {
            PhysiologyError::Inconsistent { input, reason }
        }
    }
}
