//! Siggaard-Andersen's oxygen status algorithm (1990): the TANH equation with
//! pH at constant PCO2, a separate PCO2 term, 2,3-DPG, temperature,
//! methaemoglobin and foetal haemoglobin in the affinity term, and carbon
//! monoxide through the Haldane equation, as the 1993 paper states them.
//!
//! Sources:
//! * Siggaard-Andersen O, Siggaard-Andersen M. The oxygen status algorithm: a
//!   computer program for calculating and displaying pH and blood gas data.
//!   *Scand J Clin Lab Invest* 1990;50(Suppl 203):29–45 (not read; cited by the
//!   1993 paper as the program whose equations it states).
//! * Siggaard-Andersen O, Siggaard-Andersen M, Fogh-Andersen N. The TANH-equation
//!   modified for the hemoglobin, oxygen, and carbon monoxide equilibrium. *Scand J
//!   Clin Lab Invest* 1993;53(Suppl 214):113–119, doi:10.1080/00365519309090687,
//!   Eqs. 1–15 (read in the paper's text: every constant below is checked there).
//!
//! Conditions: pH and PCO2 are those of the blood at the temperature given (the
//! temperature term b is the coefficient at constant pH: the 1984 paper gives
//! 0.055 for it and 0.073 when the pH of an anaerobic sample changes with
//! temperature; our reading). An absent pH, PCO2 or 2,3-DPG contributes nothing:
//! the reference values are exactly pH 7.40, PCO2 5.33 kPa and 5 mmol/L (so PCO2
//! 40 mmHg = 5.3329 kPa, when given, shifts a by 0.000026).
//!
//! Carbon monoxide: Eqs. 2–8 of the 1993 paper (pO2CO = pO2 + M·pCO, sCO =
//! FCOHb/(1 - FMetHb), sO2CO = sO2 + (1 - sO2)·sCO) are exactly the Haldane
//! treatment every model of this engine shares (see
//! [`super::dyshemoglobin`]), so the tanh curve below is the curve of
//! (pO2CO, sO2CO) and COHb is applied by the shared code. The Haldane constant
//! M cancels (the paper: "not important for the following calculations").

use super::curve::{logit_of, Curve, ModelInfo, ValidatedRange};
use super::prepared::impl_dissociation_model;
use crate::physiology::conditions::{Condition, Conditions};
use crate::physiology::error::{Input, PhysiologyError};
use crate::physiology::solver::solve_increasing;
use crate::physiology::units::KPA_PER_MMHG;

/// p⊖, the reference tension of x = ln(pO2CO/p⊖), kPa (1993 Eq. 9).
pub const P0_KPA: f64 = 7.0;
/// y⊖, the ordinate of the point of symmetry (1993 Eq. 12).
pub const Y0: f64 = 1.8747;
/// k⊖, the slope factor (1993 Eq. 15).
pub const K0: f64 = 0.5343;
/// h⊖, the interaction factor at standard affinity: h = h⊖ + a (1993 Eq. 15).
pub const H0: f64 = 3.5;
/// Reference pH, pH⊖ (1993 Eq. 14).
pub const PH_REFERENCE: f64 = 7.40;
/// Reference PCO2, pCO2⊖, kPa (1993 Eq. 14).
pub const PCO2_REFERENCE_KPA: f64 = 5.33;
/// Reference 2,3-DPG, cDPG⊖, mmol/L (1993 Eq. 14).
pub const DPG_REFERENCE_MMOL_PER_L: f64 = 5.0;
/// Reference temperature, T⊖, °C (1993, b term).
pub const TEMPERATURE_REFERENCE_CELSIUS: f64 = 37.0;
/// a1, pH coefficient of a (per pH unit, at constant PCO2) (1993 Eq. 14).
pub const A1_PH: f64 = -0.88;
/// a2, coefficient of ln(pCO2/pCO2⊖) (1993 Eq. 14).
pub const A2_PCO2: f64 = 0.048;
/// a3, coefficient of FMetHb (1993 Eq. 14).
pub const A3_METHB: f64 = -0.7;
/// a4, coefficient of FHbF (1993 Eq. 14).
pub const A4_HBF: f64 = -0.25;
/// a5 = a50 + a51·FHbF, 2,3-DPG coefficient per mmol/L: a50 (1993 Eq. 14).
pub const A50_DPG: f64 = 0.06;
/// a51, the foetal-haemoglobin part of the 2,3-DPG coefficient (1993 Eq. 14).
pub const A51_DPG_HBF: f64 = -0.02;
/// db/dT, the thermal affinity coefficient per °C (1993, b term).
pub const B_PER_CELSIUS: f64 = 0.055;

/// Siggaard-Andersen oxygen status algorithm, 1990/1993 (model id
/// `siggaard-andersen-1990`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SiggaardAndersen1990;

/// Sources followed and their disagreements (published in the catalog).
pub const NOTES: &str = "Follows the equations of the 1993 paper (Eqs. 1-15), read in its text: \
x = ln(pO2CO/7 kPa), y = ln(sO2CO/(1 - sO2CO)), y = 1.8747 + x - x0 + h tanh(0.5343 (x - x0)), x0 = a + b, \
h = 3.5 + a, a = -0.88 (pH - 7.40) + 0.048 ln(pCO2/5.33 kPa) - 0.7 FMetHb - 0.25 FHbF + \
(0.06 - 0.02 FHbF)(cDPG - 5 mmol/L), b = 0.055 (T - 37 C); carbon monoxide through the Haldane equation \
(Eqs. 2-8), which the paper finds adequate up to 30 % COHb. pH and PCO2 are taken at the temperature \
given (b is the coefficient at constant pH; our reading). An independent Python implementation (kenners/odc) \
uses k0 = 0.5342857 instead of 0.5343: at most 0.000008 in S, P50 26.8394 against 26.8397 mmHg here. Against \
the 1984 model (siggaard-andersen-1984) at standard conditions: at most 0.00002 in S; the pH effect at \
constant PCO2 (0.88 per pH unit) replaces the 1984 effect at constant base excess (1.04), so P50 at \
pH 7.2 is 32.72 here against 33.91 mmHg there.";

/// Catalog entry of [`SiggaardAndersen1990`].
pub static INFO: ModelInfo = ModelInfo {
    id: "siggaard-andersen-1990",
    version: "1.0.0",
    title: "Siggaard-Andersen oxygen status algorithm: TANH equation with pH at constant PCO2, PCO2, \
2,3-DPG, temperature, MetHb, HbF, and CO through the Haldane equation",
    reference: "Siggaard-Andersen O, Siggaard-Andersen M. The oxygen status algorithm: a computer program \
for calculating and displaying pH and blood gas data. Scand J Clin Lab Invest 1990;50(Suppl 203):29-45. \
Siggaard-Andersen O, Siggaard-Andersen M, Fogh-Andersen N. The TANH-equation modified for the hemoglobin, \
oxygen, and carbon monoxide equilibrium. Scand J Clin Lab Invest 1993;53(Suppl 214):113-119.",
    doi: "10.1080/00365519309090687",
    honoured_conditions: &[
        Condition::Ph,
        Condition::Pco2,
        Condition::Temperature,
        Condition::Dpg,
        Condition::Cohb,
        Condition::Methb,
        Condition::Hbf,
    ],
    // COHb up to 0.3: the 1993 paper finds the Haldane equation adequate up to
    // 30 % COHb. The other ranges are our judgement of the clinical range (the
    // papers state none).
    validated_ranges: &[
        ValidatedRange {
            input: Input::Ph,
            min: 6.8,
            max: 7.8,
        },
        ValidatedRange {
            input: Input::Pco2,
            min: 10.0,
            max: 100.0,
        },
        ValidatedRange {
            input: Input::Temperature,
            min: 20.0,
            max: 43.0,
        },
        ValidatedRange {
            input: Input::Dpg,
            min: 1.0,
            max: 12.0,
        },
        ValidatedRange {
            input: Input::Cohb,
            min: 0.0,
            max: 0.3,
        },
        ValidatedRange {
            input: Input::Methb,
            min: 0.0,
            max: 0.1,
        },
    ],
    is_default: false,
    notes: NOTES,
};

/// The chemical affinity term a and the thermal term b at `conditions`.
///
/// # Formula
///
/// ```text
/// a = -0.88*(pH - 7.40) + 0.048*ln(pCO2/5.33 kPa) - 0.7*FMetHb - 0.25*FHbF
///     + (0.06 - 0.02*FHbF)*(cDPG - 5 mmol/L)
/// b = 0.055*(T - 37 °C)
/// ```
///
/// pH in pH units, pCO2 in kPa (converted from the engine's mmHg), fractions 0-1,
/// cDPG in mmol/L, T in °C. An absent condition contributes nothing.
///
/// Siggaard-Andersen O, Siggaard-Andersen M, Fogh-Andersen N. *Scand J Clin Lab
/// Invest* 1993;53(Suppl 214):113–119, Eq. 14.
///
/// # Errors
///
/// The conditions' own refusals ([`Conditions::validate`]).
///
/// # Example
///
/// ```
/// use oxbind_service::physiology::conditions::Conditions;
/// use oxbind_service::physiology::siggaard_andersen_1990::affinity_terms;
/// let c = Conditions { ph: Some(7.20), ..Conditions::STANDARD };
/// let (a, b) = affinity_terms(&c).unwrap();
/// assert!((a - 0.176).abs() < 1e-12 && b == 0.0);
/// ```
pub fn affinity_terms(conditions: &Conditions) -> Result<(f64, f64), PhysiologyError> {
    conditions.validate()?;
    Ok(terms(conditions))
}

fn terms(c: &Conditions) -> (f64, f64) {
    let hbf = c.hbf_fraction();
    let mut a = A3_METHB * c.methb_fraction() + A4_HBF * hbf;
    if let Some(ph) = c.ph {
        a += A1_PH * (ph - PH_REFERENCE);
    }
    if let Some(pco2) = c.pco2_mmhg {
        a += A2_PCO2 * (pco2 * KPA_PER_MMHG / PCO2_REFERENCE_KPA).ln();
    }
    if let Some(dpg) = c.dpg_mmol_per_l {
        a += (A50_DPG + A51_DPG_HBF * hbf) * (dpg - DPG_REFERENCE_MMOL_PER_L);
    }
    let b = c
        .temperature_celsius
        .map_or(0.0, |t| B_PER_CELSIUS * (t - TEMPERATURE_REFERENCE_CELSIUS));
    (a, b)
}

/// The TANH curve with its affinity applied.
///
/// # Formula
///
/// ```text
/// x = ln(p/7 kPa),  y = ln(s/(1 - s))
/// y = 1.8747 + (x - x0) + h*tanh(0.5343*(x - x0)),   x0 = a + b,   h = 3.5 + a
/// Hill slope n = dy/dx = 1 + h*0.5343*(1 - tanh²(0.5343*(x - x0)))
/// ```
///
/// `p`, `s`: the combined O2 + CO tension and saturation (equal to pO2 and sO2
/// without CO). Siggaard-Andersen O, Siggaard-Andersen M, Fogh-Andersen N. *Scand J
/// Clin Lab Invest* 1993;53(Suppl 214):113–119, Eqs. 9–15.
#[derive(Debug, Clone, Copy)]
pub(crate) struct StatusCurve {
    /// x0 expressed as ln(PO2/mmHg).
    x0: f64,
    h: f64,
}

impl SiggaardAndersen1990 {
    /// Validate `conditions` and prepare the curve.
    pub(crate) fn at(&self, conditions: &Conditions) -> Result<StatusCurve, PhysiologyError> {
        conditions.validate()?;
        let (a, b) = terms(conditions);
        let h = H0 + a;
        // h <= 0 would no longer be the cooperative curve the paper fits (and below
        // -1/k0 it would not increase); reachable only at extreme PCO2 within the
        // hard limits, so refused naming the condition that moved a most.
        if h <= 0.0 {
            let input = if conditions
                .pco2_mmhg
                .is_some_and(|p| A2_PCO2 * (p * KPA_PER_MMHG / PCO2_REFERENCE_KPA).ln() < -1.0)
            {
                Input::Pco2
            } else {
                Input::Ph
            };
            return Err(PhysiologyError::OutsideModelDomain {
                input,
                value: h,
                limit: 0.0,
                model: INFO.id,
            });
        }
        Ok(StatusCurve {
            // ln(p/7 kPa) = ln PO2 + ln(kPa per mmHg) - ln 7: x0 moved to ln(PO2/mmHg).
            x0: a + b + (P0_KPA / KPA_PER_MMHG).ln(),
            h,
        })
    }
}

impl StatusCurve {
    #[inline]
    fn y_of_x(&self, x: f64) -> (f64, f64) {
        let d = x - self.x0;
        let t = (K0 * d).tanh();
        (Y0 + d + self.h * t, 1.0 + self.h * K0 * (1.0 - t * t))
    }
}

impl Curve for StatusCurve {
    #[inline]
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.y_of_x(po2_mmhg.ln()).0)
    }
    #[inline]
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.y_of_x(po2_mmhg.ln()).1)
    }
    #[inline]
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        Ok(self.y_of_x(po2_mmhg.ln()))
    }
    /// Inverse by safeguarded Newton in x (the paper's Newton-Raphson, bracketed):
    /// the slope lies in [1, 1 + h·k0], so the root lies between
    /// x0 + (y - y0)/(1 + h·k0) and x0 + (y - y0).
    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        let dy = logit_of(saturation) - Y0;
        let near = self.x0 + dy / (1.0 + self.h * K0);
        let far = self.x0 + dy;
        let margin = 1e-12 * (1.0 + far.abs());
        let (lo, hi) = (near.min(far) - margin, near.max(far) + margin);
        let target = dy + Y0;
        let x = solve_increasing(
            |x| {
                let (y, dydx) = self.y_of_x(x);
                Ok((y - target, dydx))
            },
            lo,
            hi,
            near,
            PhysiologyError::OutsideModelDomain {
                input: Input::Saturation,
                value: saturation,
                limit: 0.0,
                model: INFO.id,
            },
        )?;
        Ok(x.exp())
    }
}

impl_dissociation_model!(SiggaardAndersen1990, &INFO);
