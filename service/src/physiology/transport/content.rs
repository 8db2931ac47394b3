//! Oxygen content of blood — haemoglobin-bound plus dissolved — and what
//! follows from it with a venous sample and a cardiac output: capacity,
//! arteriovenous difference, extraction, delivery and Fick consumption.
//!
//! Conventional units throughout (Hb g/dL, PO2 mmHg, content mL O2 per dL
//! blood at STPD, flows mL/min); SI helpers at the end convert with the O2
//! molar volume.

use crate::physiology::error::{require_finite, require_within, Input, PhysiologyError};
use crate::physiology::temperature::PRESSURE_MAX_MMHG;
use crate::physiology::units::KPA_PER_MMHG;

/// Hüfner factor for *fractional* saturation (FO2Hb from a CO-oximeter,
/// dyshaemoglobins already excluded), mL O2 per g Hb: the theoretical value
/// for 4 O2 per tetramer.
///
/// Source: Klinke R, Pape HC, Silbernagl S. *Physiologie* 2005,
/// p. 283 (via a derived page), and Dijkhuizen P, Buursma A, Fongers TME et
/// al. *Pflügers Arch* 1977;369:223–231 (methods.md section 10, \[V\]);
/// 4·22.414/64.458 = 1.3909 (derived). Pairing with fractional saturation:
/// methods.md section 10, from memory, consistent with those sources.
pub const HUFNER_FRACTIONAL_DEFAULT_ML_PER_G: f64 = 1.39;

/// Hüfner factor for *functional* saturation (SaO2/SpO2 that cannot see
/// COHb/MetHb), mL O2 per g Hb: the traditional in-vivo figure that lumps in
/// the normal dyshaemoglobin fraction.
///
/// Source: the traditional textbook figure (methods.md section 10, \[V\]:
/// German physiology page after Klinke/Pape/Silbernagl 2005 and several
/// physiology pages). Pairing with functional saturation (1.34–1.37):
/// methods.md section 10, from memory.
pub const HUFNER_FUNCTIONAL_DEFAULT_ML_PER_G: f64 = 1.34;

/// Hüfner factor measured in healthy men, mL/g: mean 1.368 ± 0.017.
///
/// Source: Dijkhuizen P, Buursma A, Fongers TME et al. *Pflügers Arch* 1977;369:223–231
/// (abstract, methods.md section 10, \[V\]). Offered for callers who select it.
pub const HUFNER_MEASURED_DIJKHUIZEN_1977_ML_PER_G: f64 = 1.368;

/// Smallest Hüfner factor accepted from a caller, mL/g (our plausibility
/// limit: below every figure in methods.md section 10).
pub const HUFNER_MIN_ML_PER_G: f64 = 1.30;

/// Largest Hüfner factor accepted from a caller, mL/g (our plausibility
/// limit: the theoretical 1.3909 rounded up; more O2 per g than four per
/// tetramer is impossible).
pub const HUFNER_MAX_ML_PER_G: f64 = 1.40;

/// Dissolved O2 in blood, mL O2 per dL blood per mmHg (0.003 in older texts).
///
/// Source: standard physiology, **from memory** (methods.md section 10, \[M\]).
pub const DISSOLVED_O2_ML_PER_DL_PER_MMHG: f64 = 0.0031;

/// [`DISSOLVED_O2_ML_PER_DL_PER_MMHG`] per kPa: 0.0031 × 7.50062 =
/// 0.023252 mL/dL/kPa (derived with the exact mmHg, methods.md section 10).
pub const DISSOLVED_O2_ML_PER_DL_PER_KPA: f64 = DISSOLVED_O2_ML_PER_DL_PER_MMHG / KPA_PER_MMHG;

/// O2 solubility in blood at 37 °C in SI units, mmol O2 per L blood per kPa.
///
/// Source: Siggaard-Andersen O, Wimberley PD, Göthgen I, Siggaard-Andersen M.
/// *Clin Chem* 1984;30(10):1646–1651 (methods.md section 10, \[V\]). Times the
/// molar volume it is 0.00314 mL/dL/mmHg (derived), 1.3 % above
/// [`DISSOLVED_O2_ML_PER_DL_PER_MMHG`]; the content functions use the
/// conventional 0.0031 so that conventional and SI outputs agree.
pub const O2_SOLUBILITY_SI_MMOL_PER_L_PER_KPA: f64 = 0.0105;

/// Molar volume of O2 as an ideal gas at STPD, mL per mmol (= L/mol).
///
/// Source: methods.md section 13 (22.414 L/mol ideal; about 22.39 for real
/// O2, from memory). Used for every mmol <-> mL conversion here.
pub const O2_MOLAR_VOLUME_ML_PER_MMOL: f64 = 22.414;

/// Largest haemoglobin concentration accepted, g/dL.
///
/// Our plausibility limit: whole blood cannot hold more haemoglobin than its
/// red cells do, and mean corpuscular haemoglobin concentration is about
/// 32–36 g/dL (common practice).
pub const HEMOGLOBIN_MAX_G_PER_DL: f64 = 35.0;

/// Largest cardiac output accepted, L/min.
///
/// Our plausibility limit: several times the highest outputs of elite
/// athletes at peak exercise (about 35–40 L/min, common practice).
pub const CARDIAC_OUTPUT_MAX_L_PER_MIN: f64 = 100.0;

/// Which saturation a value is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SaturationKind {
    /// Functional SO2 = O2Hb / (O2Hb + HHb): what a pulse oximeter or a
    /// saturation calculated from PO2 gives (Severinghaus' S).
    Functional,
    /// Fractional FO2Hb = O2Hb / (O2Hb + HHb + COHb + MetHb): what a
    /// CO-oximeter gives.
    Fractional,
}

/// The default Hüfner factor for a saturation of this kind, mL/g:
/// fractional → 1.39 ([`HUFNER_FRACTIONAL_DEFAULT_ML_PER_G`]),
/// functional → 1.34 ([`HUFNER_FUNCTIONAL_DEFAULT_ML_PER_G`]).
///
/// # Formula
///
/// ```text
/// k = 1.39 mL/g  for fractional FO2Hb      k = 1.34 mL/g  for functional SO2
/// ```
///
/// # Source
///
/// methods.md section 10: 1.39 theoretical (Klinke, Pape & Silbernagl
/// *Physiologie* 2005 p. 283; Dijkhuizen et al. *Pflügers Arch*
/// 1977;369:223–231); 1.34 the traditional in-vivo figure; the pairing of
/// each with a saturation kind is from memory, consistent with those sources
/// (Dijkhuizen warns that 1.39 × Hb overstates capacity by 10–15 % when
/// inactive Hb is ignored).
pub fn default_hufner_factor_ml_per_g(kind: SaturationKind) -> f64 {
    match kind {
        SaturationKind::Functional => HUFNER_FUNCTIONAL_DEFAULT_ML_PER_G,
        SaturationKind::Fractional => HUFNER_FRACTIONAL_DEFAULT_ML_PER_G,
    }
}

/// One blood sample as far as its oxygen content is concerned.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BloodOxygenSample {
    /// Oxygen saturation, fraction 0–1, of the kind given by `saturation_kind`.
    pub saturation_fraction: f64,
    /// Whether `saturation_fraction` is functional or fractional.
    pub saturation_kind: SaturationKind,
    /// Oxygen partial pressure, mmHg (for the dissolved part).
    pub po2_mmhg: f64,
    /// Carboxyhaemoglobin fraction of total Hb, 0–1, if measured.
    pub cohb_fraction: Option<f64>,
    /// Methaemoglobin fraction of total Hb, 0–1, if measured.
    pub methb_fraction: Option<f64>,
}

impl BloodOxygenSample {
    /// A sample with a functional saturation and no dyshaemoglobin measured.
    pub fn functional(saturation_fraction: f64, po2_mmhg: f64) -> Self {
        BloodOxygenSample {
            saturation_fraction,
            saturation_kind: SaturationKind::Functional,
            po2_mmhg,
            cohb_fraction: None,
            methb_fraction: None,
        }
    }
}

/// The oxygen content of one sample, with what was used to compute it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OxygenContent {
    /// Total content (bound + dissolved), mL O2 per dL blood.
    pub total_ml_per_dl: f64,
    /// Haemoglobin-bound part, mL/dL.
    pub bound_ml_per_dl: f64,
    /// Dissolved part, mL/dL.
    pub dissolved_ml_per_dl: f64,
    /// The saturation that multiplied k·Hb, fraction.
    pub bound_saturation_fraction: f64,
    /// The kind of that saturation (a functional saturation given with
    /// measured COHb/MetHb is converted and reported as fractional).
    pub bound_saturation_kind: SaturationKind,
    /// The Hüfner factor used, mL/g.
    pub hufner_factor_ml_per_g: f64,
}

/// Which sample a validation concerns, so that errors name the right input.
#[derive(Clone, Copy)]
pub(crate) enum SampleRole {
    Arterial,
    Venous,
}

impl SampleRole {
    fn saturation(self) -> Input {
        match self {
            SampleRole::Arterial => Input::Saturation,
            SampleRole::Venous => Input::VenousSaturation,
        }
    }
    fn po2(self) -> Input {
        match self {
            SampleRole::Arterial => Input::Po2,
            SampleRole::Venous => Input::VenousPo2,
        }
    }
}

fn require_fraction(value: f64, input: Input) -> Result<f64, PhysiologyError> {
    require_within(value, input, 0.0, 1.0)
}

fn require_hemoglobin(hemoglobin_g_per_dl: f64) -> Result<f64, PhysiologyError> {
    require_within(
        hemoglobin_g_per_dl,
        Input::Hemoglobin,
        0.0,
        HEMOGLOBIN_MAX_G_PER_DL,
    )
}

fn require_hufner(hufner_factor_ml_per_g: f64) -> Result<f64, PhysiologyError> {
    require_within(
        hufner_factor_ml_per_g,
        Input::HufnerFactor,
        HUFNER_MIN_ML_PER_G,
        HUFNER_MAX_ML_PER_G,
    )
}

fn require_po2(po2_mmhg: f64, input: Input) -> Result<f64, PhysiologyError> {
    require_within(po2_mmhg, input, 0.0, PRESSURE_MAX_MMHG)
}

/// Validated dyshaemoglobin fractions (absent = 0) and their sum.
fn dyshemoglobin_sum(cohb: f64, methb: f64) -> Result<f64, PhysiologyError> {
    let cohb = require_fraction(cohb, Input::Cohb)?;
    let methb = require_fraction(methb, Input::Methb)?;
    let sum = cohb + methb;
    if sum >= 1.0 {
        return Err(PhysiologyError::Inconsistent {
            input: Input::Methb,
            reason: "COHb and MetHb fractions sum to 1 or more, leaving no haemoglobin to carry O2",
        });
    }
    Ok(sum)
}

/// Dissolved oxygen, mL O2 per dL blood.
///
/// # Formula
///
/// ```text
/// dissolved = 0.0031 · PO2
/// ```
///
/// * `PO2` — mmHg; 0.0031 mL/dL/mmHg ([`DISSOLVED_O2_ML_PER_DL_PER_MMHG`])
///
/// # Source
///
/// Standard physiology, coefficient from memory (methods.md section 10, \[M\]).
///
/// # Errors
///
/// [`Input::Po2`] not finite, negative or above 10 000 mmHg.
pub fn dissolved_oxygen_ml_per_dl(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let po2 = require_po2(po2_mmhg, Input::Po2)?;
    Ok(DISSOLVED_O2_ML_PER_DL_PER_MMHG * po2)
}

/// Oxygen content from its plain ingredients, mL O2 per dL blood.
///
/// # Formula
///
/// ```text
/// CO2content = k · Hb · S + 0.0031 · PO2
/// ```
///
/// * `k` — Hüfner factor, mL O2 per g Hb (1.30–1.40 accepted)
/// * `Hb` — haemoglobin, g/dL (0–35)
/// * `S` — the saturation that matches `k` (see [`default_hufner_factor_ml_per_g`]), fraction
/// * `PO2` — mmHg; 0.0031 mL/dL/mmHg dissolved-O2 coefficient
///
/// # Source
///
/// Standard physiology (methods.md section 10: Hüfner factors \[V\] as cited on
/// [`HUFNER_FRACTIONAL_DEFAULT_ML_PER_G`] and
/// [`HUFNER_FUNCTIONAL_DEFAULT_ML_PER_G`]; dissolved coefficient \[M\]).
///
/// # Errors
///
/// [`Input::Hemoglobin`], [`Input::Saturation`], [`Input::Po2`] or
/// [`Input::HufnerFactor`] not finite or out of range.
pub fn oxygen_content_ml_per_dl(
    hemoglobin_g_per_dl: f64,
    saturation_fraction: f64,
    po2_mmhg: f64,
    hufner_factor_ml_per_g: f64,
) -> Result<f64, PhysiologyError> {
    let hb = require_hemoglobin(hemoglobin_g_per_dl)?;
    let s = require_fraction(saturation_fraction, Input::Saturation)?;
    let po2 = require_po2(po2_mmhg, Input::Po2)?;
    let k = require_hufner(hufner_factor_ml_per_g)?;
    Ok(k * hb * s + DISSOLVED_O2_ML_PER_DL_PER_MMHG * po2)
}

/// The saturation that multiplies k·Hb for `sample`, and its kind.
fn bound_saturation(
    sample: &BloodOxygenSample,
    role: SampleRole,
) -> Result<(f64, SaturationKind), PhysiologyError> {
    let s = require_fraction(sample.saturation_fraction, role.saturation())?;
    let measured = sample.cohb_fraction.is_some() || sample.methb_fraction.is_some();
    let dys = dyshemoglobin_sum(
        sample.cohb_fraction.unwrap_or(0.0),
        sample.methb_fraction.unwrap_or(0.0),
    )?;
    match sample.saturation_kind {
        SaturationKind::Fractional => {
            if s > 1.0 - dys {
                return Err(PhysiologyError::Inconsistent {
                    input: role.saturation(),
                    reason: "O2Hb, COHb and MetHb fractions sum past 1",
                });
            }
            Ok((s, SaturationKind::Fractional))
        }
        SaturationKind::Functional if measured => Ok((s * (1.0 - dys), SaturationKind::Fractional)),
        SaturationKind::Functional => Ok((s, SaturationKind::Functional)),
    }
}

pub(crate) fn content_of_sample(
    hemoglobin_g_per_dl: f64,
    sample: &BloodOxygenSample,
    hufner_factor_ml_per_g: Option<f64>,
    role: SampleRole,
) -> Result<OxygenContent, PhysiologyError> {
    let hb = require_hemoglobin(hemoglobin_g_per_dl)?;
    let (s, kind) = bound_saturation(sample, role)?;
    let po2 = require_po2(sample.po2_mmhg, role.po2())?;
    let k = match hufner_factor_ml_per_g {
        Some(k) => require_hufner(k)?,
        None => default_hufner_factor_ml_per_g(kind),
    };
    let bound = k * hb * s;
    let dissolved = DISSOLVED_O2_ML_PER_DL_PER_MMHG * po2;
    Ok(OxygenContent {
        total_ml_per_dl: bound + dissolved,
        bound_ml_per_dl: bound,
        dissolved_ml_per_dl: dissolved,
        bound_saturation_fraction: s,
        bound_saturation_kind: kind,
        hufner_factor_ml_per_g: k,
    })
}

/// Oxygen content of one blood sample, mL O2 per dL blood, with the Hüfner
/// factor chosen by the caller or by the sample's saturation kind.
///
/// # Formula
///
/// ```text
/// content = k · Hb · S_b + 0.0031 · PO2
/// S_b = FO2Hb                              fractional saturation given
/// S_b = SO2 · (1 − FCOHb − FMetHb)         functional SO2 given with measured COHb/MetHb
/// S_b = SO2                                functional SO2, no dyshaemoglobin measured
/// k   = caller's value, else 1.39 mL/g when S_b is fractional, 1.34 mL/g when functional
/// ```
///
/// * `Hb` — g/dL; `PO2` — mmHg; saturations and dyshaemoglobins — fractions
/// * 0.0031 mL/dL/mmHg — dissolved-O2 coefficient
///
/// # Source
///
/// methods.md section 10: Hüfner factors (Klinke, Pape & Silbernagl
/// *Physiologie* 2005 p. 283; Dijkhuizen P et al. *Pflügers Arch*
/// 1977;369:223–231; the traditional 1.34), their pairing with saturation
/// kinds (from memory), the dissolved coefficient (from memory), FO2Hb =
/// SO2·(1 − FCOHb − FMetHb) (derived from the definitions).
///
/// # Errors
///
/// [`Input::Hemoglobin`] (outside 0–35 g/dL), [`Input::Saturation`],
/// [`Input::Po2`] (negative), [`Input::Cohb`], [`Input::Methb`] or
/// [`Input::HufnerFactor`] (outside 1.30–1.40) not finite or out of range;
/// [`PhysiologyError::Inconsistent`] when the haemoglobin fractions sum past 1.
pub fn sample_oxygen_content(
    hemoglobin_g_per_dl: f64,
    sample: &BloodOxygenSample,
    hufner_factor_ml_per_g: Option<f64>,
) -> Result<OxygenContent, PhysiologyError> {
    content_of_sample(
        hemoglobin_g_per_dl,
        sample,
        hufner_factor_ml_per_g,
        SampleRole::Arterial,
    )
}

/// Oxygen capacity: the most O2 the haemoglobin able to bind it can carry,
/// mL O2 per dL blood (dissolved O2 not included).
///
/// # Formula
///
/// ```text
/// capacity = k · Hb · (1 − FCOHb − FMetHb)
/// ```
///
/// * `k` — Hüfner factor, mL/g; `Hb` — g/dL; `FCOHb`, `FMetHb` — fractions
///   (pass 0 when not measured; with k = 1.34 the normal dyshaemoglobin
///   fraction is already lumped into k)
///
/// # Source
///
/// Standard physiology (methods.md section 10; Dijkhuizen P et al.
/// *Pflügers Arch* 1977;369:223–231 on capacity and inactive Hb).
///
/// # Errors
///
/// [`Input::Hemoglobin`], [`Input::HufnerFactor`], [`Input::Cohb`] or
/// [`Input::Methb`] not finite or out of range; inconsistent dyshaemoglobins.
pub fn oxygen_capacity_ml_per_dl(
    hemoglobin_g_per_dl: f64,
    hufner_factor_ml_per_g: f64,
    cohb_fraction: f64,
    methb_fraction: f64,
) -> Result<f64, PhysiologyError> {
    let hb = require_hemoglobin(hemoglobin_g_per_dl)?;
    let k = require_hufner(hufner_factor_ml_per_g)?;
    let dys = dyshemoglobin_sum(cohb_fraction, methb_fraction)?;
    Ok(k * hb * (1.0 - dys))
}

/// Arteriovenous content difference, mL/dL; refuses a venous content above
/// the arterial one.
///
/// # Formula
///
/// ```text
/// a−vDO2 = CaO2 − CvO2
/// ```
pub(crate) fn arteriovenous_difference(
    arterial_ml_per_dl: f64,
    venous_ml_per_dl: f64,
) -> Result<f64, PhysiologyError> {
    let difference = arterial_ml_per_dl - venous_ml_per_dl;
    if difference < 0.0 {
        return Err(PhysiologyError::Inconsistent {
            input: Input::VenousSaturation,
            reason: "venous oxygen content exceeds arterial oxygen content",
        });
    }
    Ok(difference)
}

/// Inputs for the whole oxygen-transport calculation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OxygenTransportInput {
    /// Total haemoglobin, g/dL.
    pub hemoglobin_g_per_dl: f64,
    /// The arterial sample.
    pub arterial: BloodOxygenSample,
    /// The (mixed or central) venous sample, if any.
    pub venous: Option<BloodOxygenSample>,
    /// Cardiac output, L/min, if known.
    pub cardiac_output_l_per_min: Option<f64>,
    /// Hüfner factor, mL/g; `None` = the default for the saturation kind.
    pub hufner_factor_ml_per_g: Option<f64>,
}

/// Results of the whole oxygen-transport calculation (conventional units).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OxygenTransport {
    /// Arterial oxygen content.
    pub arterial: OxygenContent,
    /// Venous oxygen content, when a venous sample was given.
    pub venous: Option<OxygenContent>,
    /// CaO2 − CvO2, mL/dL, when a venous sample was given.
    pub arteriovenous_difference_ml_per_dl: Option<f64>,
    /// (CaO2 − CvO2) / CaO2, fraction, when a venous sample was given.
    pub extraction_fraction: Option<f64>,
    /// Oxygen capacity k·Hb·(1 − FCOHb − FMetHb) with the arterial
    /// dyshaemoglobins, mL/dL.
    pub oxygen_capacity_ml_per_dl: f64,
    /// DO2 = CO · CaO2 · 10, mL/min, when cardiac output was given.
    pub delivery_ml_per_min: Option<f64>,
    /// Fick VO2 = CO · (CaO2 − CvO2) · 10, mL/min, when cardiac output and a
    /// venous sample were given.
    pub consumption_ml_per_min: Option<f64>,
}

/// Arterial and venous oxygen content, capacity, arteriovenous difference,
/// extraction, delivery and Fick consumption.
///
/// # Formula
///
/// ```text
/// CaO2, CvO2 = k · Hb · S_b + 0.0031 · PO2           (see sample_oxygen_content)
/// capacity   = k · Hb · (1 − FCOHb − FMetHb)
/// a−vDO2     = CaO2 − CvO2
/// O2ER       = (CaO2 − CvO2) / CaO2
/// DO2        = CO · CaO2 · 10                        (mL/min; 10 dL per L)
/// VO2        = CO · (CaO2 − CvO2) · 10               (Fick principle)
/// ```
///
/// * contents — mL O2/dL blood; `CO` — cardiac output, L/min; `Hb` — g/dL
/// * one Hüfner factor `k` serves both samples, so both must have the same
///   saturation basis
///
/// # Source
///
/// Standard physiology (methods.md section 10, \[M\]; check values there \[D\]);
/// the Fick principle (Fick A, 1870 — year from memory). Hüfner factors as cited on
/// [`default_hufner_factor_ml_per_g`].
///
/// # Errors
///
/// Any input refusal of [`sample_oxygen_content`] (venous inputs named
/// [`Input::VenousSaturation`] and [`Input::VenousPo2`]);
/// [`Input::CardiacOutput`] not finite, negative or above 100 L/min;
/// [`PhysiologyError::Inconsistent`] naming [`Input::VenousSaturation`] when
/// the two samples' saturation bases differ or the venous content exceeds
/// the arterial one; [`PhysiologyError::NotInformative`] naming
/// [`Input::Saturation`] when the arterial content is zero (no extraction).
pub fn oxygen_transport(input: &OxygenTransportInput) -> Result<OxygenTransport, PhysiologyError> {
    let cardiac_output = input
        .cardiac_output_l_per_min
        .map(|co| require_within(co, Input::CardiacOutput, 0.0, CARDIAC_OUTPUT_MAX_L_PER_MIN))
        .transpose()?;
    let arterial = content_of_sample(
        input.hemoglobin_g_per_dl,
        &input.arterial,
        input.hufner_factor_ml_per_g,
        SampleRole::Arterial,
    )?;
    let k = arterial.hufner_factor_ml_per_g;
    let capacity = oxygen_capacity_ml_per_dl(
        input.hemoglobin_g_per_dl,
        k,
        input.arterial.cohb_fraction.unwrap_or(0.0),
        input.arterial.methb_fraction.unwrap_or(0.0),
    )?;
    let venous = match &input.venous {
        Some(sample) => {
            let venous = content_of_sample(
                input.hemoglobin_g_per_dl,
                sample,
                Some(k),
                SampleRole::Venous,
            )?;
            if venous.bound_saturation_kind != arterial.bound_saturation_kind {
                return Err(PhysiologyError::Inconsistent {
                    input: Input::VenousSaturation,
                    reason: "venous and arterial saturations are of different kinds \
                             (functional versus fractional); give both of one kind",
                });
            }
            Some(venous)
        }
        None => None,
    };
    let difference = venous
        .map(|v| arteriovenous_difference(arterial.total_ml_per_dl, v.total_ml_per_dl))
        .transpose()?;
    let extraction = match difference {
        Some(d) => {
            if arterial.total_ml_per_dl <= 0.0 {
                return Err(PhysiologyError::NotInformative {
                    input: Input::Saturation,
                    reason: "arterial oxygen content is zero, so extraction is undefined",
                });
            }
            Some(d / arterial.total_ml_per_dl)
        }
        None => None,
    };
    Ok(OxygenTransport {
        arterial,
        venous,
        arteriovenous_difference_ml_per_dl: difference,
        extraction_fraction: extraction,
        oxygen_capacity_ml_per_dl: capacity,
        delivery_ml_per_min: cardiac_output.map(|co| co * arterial.total_ml_per_dl * DL_PER_L),
        consumption_ml_per_min: match (cardiac_output, difference) {
            (Some(co), Some(d)) => Some(co * d * DL_PER_L),
            _ => None,
        },
    })
}

/// Decilitres in one litre (definitional).
const DL_PER_L: f64 = 10.0;

/// Oxygen content in SI units, mmol O2 per L blood, from mL/dL.
///
/// # Formula
///
/// ```text
/// ctO2 (mmol/L) = content (mL/dL) · 10 / 22.414
/// ```
///
/// * 22.414 mL/mmol — O2 molar volume at STPD ([`O2_MOLAR_VOLUME_ML_PER_MMOL`])
///
/// # Source
///
/// methods.md sections 10 and 13 (22.414 L/mol ideal-gas molar volume).
///
/// # Errors
///
/// [`Input::Saturation`] (the content's origin) not finite.
pub fn oxygen_content_mmol_per_l_from_ml_per_dl(
    content_ml_per_dl: f64,
) -> Result<f64, PhysiologyError> {
    let c = require_finite(content_ml_per_dl, Input::Saturation)?;
    Ok(c * DL_PER_L / O2_MOLAR_VOLUME_ML_PER_MMOL)
}

/// Oxygen content in conventional units, mL O2 per dL blood, from mmol/L.
///
/// # Formula
///
/// ```text
/// content (mL/dL) = ctO2 (mmol/L) · 22.414 / 10
/// ```
///
/// # Source
///
/// methods.md sections 10 and 13 (× 2.2414 → mL/dL).
///
/// # Errors
///
/// [`Input::Saturation`] (the content's origin) not finite.
pub fn oxygen_content_ml_per_dl_from_mmol_per_l(
    content_mmol_per_l: f64,
) -> Result<f64, PhysiologyError> {
    let c = require_finite(content_mmol_per_l, Input::Saturation)?;
    Ok(c * O2_MOLAR_VOLUME_ML_PER_MMOL / DL_PER_L)
}

/// An oxygen flow (delivery or consumption) in SI units, mmol/min, from mL/min.
///
/// # Formula
///
/// ```text
/// flow (mmol/min) = flow (mL/min) / 22.414
/// ```
///
/// # Source
///
/// methods.md section 13 (22.414 L/mol ideal-gas molar volume at STPD).
///
/// # Errors
///
/// [`Input::CardiacOutput`] (the flow's origin) not finite.
pub fn oxygen_flow_mmol_per_min_from_ml_per_min(
    flow_ml_per_min: f64,
) -> Result<f64, PhysiologyError> {
    let f = require_finite(flow_ml_per_min, Input::CardiacOutput)?;
    Ok(f / O2_MOLAR_VOLUME_ML_PER_MMOL)
}
