//! Severinghaus 1979: the default dissociation curve (Eq. 1), its exact inverse
//! (Ellis 1989), the PO2 temperature coefficient (Eq. 3), the PO2-dependent Bohr
//! factor (Eq. 4 and the Inaba et al. restatement) and the virtual-PO2 correction.
//!
//! Sources:
//! * Severinghaus JW. Simple, accurate equations for human blood O2 dissociation
//!   computations. *J Appl Physiol: Respir Environ Exerc Physiol* 1979;46(3):599–602.
//!   doi:10.1152/jappl.1979.46.3.599
//! * Ellis RK. Determination of PO2 from saturation (letter). *J Appl Physiol*
//!   1989;67(2):902 (citation details from memory; the inverse is derived here by
//!   Cardano's formula and is the exact inverse of Eq. 1).
//! * Inaba H, Ohwada T, Sato J, Mizuguchi T, Hirasawa H. *Jpn J Physiol*
//!   1986;36(1):163–175 (the virtual-PO2 form with pH and base excess).
//!
//! Conditions: pH and base excess are the analyser's values at 37 °C; the
//! temperature is the temperature the PO2 refers to. A PO2 at temperature T is
//! first brought to 37 °C along Eq. 3 (integrated exactly, see
//! [`po2_at_temperature_mmhg`]); for anaerobic blood the saturation is the same at
//! both temperatures.

use super::curve::{
    check_inverse_saturation, check_po2, logit_of, Curve, ModelInfo, ValidatedRange,
};
use super::prepared::impl_dissociation_model;
use crate::physiology::conditions::{
    Condition, Conditions, STANDARD_PH, STANDARD_TEMPERATURE_CELSIUS,
};
use crate::physiology::error::{require_finite, Input, PhysiologyError};
use crate::physiology::solver::solve_increasing;
use std::f64::consts::LN_10;

/// Eq. 1 constant term, mmHg³: S = 1/(23400/(P³ + 150·P) + 1).
pub const EQ1_CONSTANT_MMHG3: f64 = 23_400.0;
/// Eq. 1 coefficient of the linear term, mmHg².
pub const EQ1_LINEAR_MMHG2: f64 = 150.0;
/// Ellis: A = 11700·S/(1 - S), 11700 = 23400/2 (mmHg³).
const ELLIS_HALF_CONSTANT_MMHG3: f64 = EQ1_CONSTANT_MMHG3 / 2.0;
/// Ellis: (150/3)³ = 125000 mmHg⁶, so that cbrt(B + A)·cbrt(B - A) = 50 mmHg².
const ELLIS_CUBE_MMHG6: f64 = 125_000.0;
/// Ellis: (150/3) mmHg², the product of the two cube roots.
const ELLIS_ROOT_PRODUCT_MMHG2: f64 = 50.0;
/// P50 of Eq. 1 itself, mmHg: the root of P³ + 150·P = 23400 (derived from Eq. 1,
/// methods.md §1: 26.8568). The conventional standard P50 is 26.8 mmHg.
pub const P50_EQ1_MMHG: f64 = 26.856_800_143_073_96;

/// Eq. 2 slope on ln(S/(1 - S)).
const EQ2_LOGIT_COEFFICIENT: f64 = 0.385;
/// Eq. 2 intercept (ln mmHg).
const EQ2_INTERCEPT: f64 = 3.32;
/// Eq. 2 coefficient of 1/S.
const EQ2_RECIPROCAL_DIVISOR: f64 = 72.0;
/// Eq. 2 coefficient of S⁶.
const EQ2_SIXTH_POWER_COEFFICIENT: f64 = 0.17;

/// Eq. 3 amplitude of the Hb-bound part of d ln PO2/dT, per °C.
pub const EQ3_BOUND_COEFFICIENT_PER_CELSIUS: f64 = 0.058;
/// Eq. 3 scale of (PO2/100)^3.88 in the denominator.
pub const EQ3_SCALE: f64 = 0.243;
/// Eq. 3 exponent of PO2/100.
pub const EQ3_EXPONENT: f64 = 3.88;
/// Eq. 3 reference pressure, mmHg.
pub const EQ3_REFERENCE_MMHG: f64 = 100.0;
/// Eq. 3 limit when Hb is fully saturated (dissolved O2 only), per °C.
pub const EQ3_DISSOLVED_COEFFICIENT_PER_CELSIUS: f64 = 0.013;

/// Eq. 4 reference pressure, mmHg: d ln PO2/d pH = (PO2/26.6)^0.184 - 2.2.
pub const EQ4_REFERENCE_MMHG: f64 = 26.6;
/// Eq. 4 exponent.
pub const EQ4_EXPONENT: f64 = 0.184;
/// Eq. 4 offset (ln per pH unit).
pub const EQ4_OFFSET: f64 = 2.2;

/// Inaba et al. log10 Bohr factor exponent: fB = (PO2/26.6)^0.08 - 1.52.
pub const INABA_BOHR_EXPONENT: f64 = 0.08;
/// Inaba et al. log10 Bohr factor offset (log10 per pH unit).
pub const INABA_BOHR_OFFSET: f64 = 1.52;
/// Inaba et al. base-excess coefficient, log10 per mmol/L.
pub const INABA_BASE_EXCESS_LOG10_PER_MMOL_PER_L: f64 = 0.0013;

/// Severinghaus JW 1979 (model id `severinghaus-1979`), the service default.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Severinghaus1979;

/// Sources followed and their disagreements (published in the catalog).
pub const NOTES: &str = "Eq. 1 and Eq. 3 as printed in the 1979 abstract; the inverse is Ellis's \
exact inverse of Eq. 1 (Eq. 2 is only approximate: 0.03 mmHg off at S 0.5, 4.4 mmHg at S 0.99). pH and \
base excess act through the virtual-PO2 form restated by Inaba et al. 1986, vPO2 = PO2 x \
10^(fB x (7.4 - pH) - 0.0013 x BE) with fB = (PO2/26.6)^0.08 - 1.52 taken at the measured PO2, because it \
is the published procedure that also covers base excess. Integrating Severinghaus' own Eq. 4 \
(d ln PO2/d pH = (PO2/26.6)^0.184 - 2.2) from the sample's pH to 7.40 instead gives a lower saturation by \
up to 0.0032 at pH 7.2 (near PO2 34 mmHg), 0.012 at pH 7.0 (near 43 mmHg) and 0.026 at pH 6.8, and by up to \
0.0026 at pH 7.6; P50 at pH 7.0 is 41.90 mmHg here against 42.61 mmHg with Eq. 4 integrated. Temperature: \
Eq. 3 integrated exactly (a single step with the coefficient at the starting PO2 differs by up to 0.8 % in \
PO2 over 4 C).";

/// Catalog entry of [`Severinghaus1979`].
pub static INFO: ModelInfo = ModelInfo {
    id: "severinghaus-1979",
    version: "1.0.0",
    title: "Severinghaus 1979 (Eq. 1) with virtual-PO2 correction for pH, base excess and temperature",
    reference: "Severinghaus JW. Simple, accurate equations for human blood O2 dissociation computations. \
J Appl Physiol: Respir Environ Exerc Physiol 1979;46(3):599–602. Inverse: Ellis RK. Determination of PO2 \
from saturation. J Appl Physiol 1989;67(2):902. pH/BE correction as restated by Inaba H, Ohwada T, Sato J, \
Mizuguchi T, Hirasawa H. Jpn J Physiol 1986;36(1):163–175.",
    doi: "10.1152/jappl.1979.46.3.599",
    honoured_conditions: &[
        Condition::Ph,
        Condition::Temperature,
        Condition::BaseExcess,
        Condition::Cohb,
    ],
    // The Bohr factor fit agrees with Eq. 4 over 10-100 mmHg (methods.md §1, derived);
    // pH and temperature ranges are our judgement of the clinical range, not the paper's.
    validated_ranges: &[
        ValidatedRange {
            input: Input::Ph,
            min: 6.8,
            max: 7.8,
        },
        ValidatedRange {
            input: Input::Temperature,
            min: 20.0,
            max: 43.0,
        },
        ValidatedRange {
            input: Input::BaseExcess,
            min: -30.0,
            max: 30.0,
        },
    ],
    is_default: true,
    notes: NOTES,
};

/// Functional saturation at standard conditions, Severinghaus 1979 Eq. 1.
///
/// # Formula
///
/// ```text
/// S = 1 / ( 23400 / (P^3 + 150*P) + 1 )
/// ```
///
/// `P`: PO2 in mmHg at 37 °C, pH 7.40, base excess 0; `S`: functional saturation
/// (fraction). Stated accuracy ±0.0055 for 0 < S < 1. `P = 0` gives 0.
///
/// Severinghaus JW. Simple, accurate equations for human blood O2 dissociation
/// computations. *J Appl Physiol: Respir Environ Exerc Physiol* 1979;46(3):599–602.
#[inline]
pub fn saturation_standard(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let p = check_po2(po2_mmhg)?;
    Ok(eq1(p))
}

#[inline]
fn eq1(p: f64) -> f64 {
    let q = p * (p * p + EQ1_LINEAR_MMHG2);
    q / (q + EQ1_CONSTANT_MMHG3)
}

/// PO2 at standard conditions from functional saturation: the exact inverse of
/// Eq. 1 (Ellis 1989), computed stably at both ends of the curve.
///
/// # Formula
///
/// ```text
/// A   = 11700 * S/(1 - S)
/// B   = sqrt(125000 + A^2)
/// PO2 = cbrt(B + A) - cbrt(B - A)
///     = 2A / (c^2 + 50 + (50/c)^2),   c = cbrt(B + A)   (used here: no cancellation)
/// ```
///
/// The second form follows from cbrt(B + A)·cbrt(B - A) = cbrt(B² - A²) = 50 and
/// x - y = (x³ - y³)/(x² + xy + y²). `S`: functional saturation (fraction, strictly
/// inside (0, 1)); `PO2` in mmHg at 37 °C, pH 7.40, BE 0.
///
/// Ellis RK. Determination of PO2 from saturation (letter). *J Appl Physiol*
/// 1989;67(2):902; inverse of Severinghaus JW, *J Appl Physiol: Respir Environ Exerc
/// Physiol* 1979;46(3):599–602, Eq. 1.
#[inline]
pub fn tension_from_saturation_standard_mmhg(
    saturation_fraction: f64,
) -> Result<f64, PhysiologyError> {
    let s = check_inverse_saturation(saturation_fraction)?;
    Ok(ellis(s))
}

#[inline]
fn ellis(s: f64) -> f64 {
    let a = ELLIS_HALF_CONSTANT_MMHG3 * s / (1.0 - s);
    let b = (ELLIS_CUBE_MMHG6 + a * a).sqrt();
    let c = (b + a).cbrt();
    let d = ELLIS_ROOT_PRODUCT_MMHG2 / c;
    2.0 * a / (c * c + ELLIS_ROOT_PRODUCT_MMHG2 + d * d)
}

/// Approximate PO2 from saturation, Severinghaus 1979 Eq. 2 (not the exact inverse
/// of Eq. 1: it differs by 0.03 mmHg at S = 0.5 and 4.4 mmHg at S = 0.99).
///
/// # Formula
///
/// ```text
/// ln P = 0.385 * ln( S/(1 - S) ) + 3.32 - 1/(72*S) - 0.17*S^6
/// ```
///
/// `S`: functional saturation (fraction, strictly inside (0, 1)); `P`: PO2 in mmHg.
///
/// Severinghaus JW. Simple, accurate equations for human blood O2 dissociation
/// computations. *J Appl Physiol: Respir Environ Exerc Physiol* 1979;46(3):599–602.
pub fn tension_from_saturation_eq2_mmhg(saturation_fraction: f64) -> Result<f64, PhysiologyError> {
    let s = check_inverse_saturation(saturation_fraction)?;
    let ln_p = EQ2_LOGIT_COEFFICIENT * logit_of(s) + EQ2_INTERCEPT
        - 1.0 / (EQ2_RECIPROCAL_DIVISOR * s)
        - EQ2_SIXTH_POWER_COEFFICIENT * s.powi(6);
    Ok(ln_p.exp())
}

/// Temperature coefficient of PO2 at constant O2 content, Severinghaus 1979 Eq. 3.
///
/// # Formula
///
/// ```text
/// fT = d ln PO2 / dT = 0.058 / ( 0.243*(PO2/100)^3.88 + 1 ) + 0.013      (per °C)
/// ```
///
/// `PO2` in mmHg; the result in ln units per °C, from 0.071 at low PO2 to 0.013
/// when Hb is fully saturated. Callers validate the input (this signature has no
/// error channel): a negative PO2 gives the PO2 → 0 limit 0.071, +∞ the limit 0.013,
/// and NaN gives NaN.
///
/// Severinghaus JW. Simple, accurate equations for human blood O2 dissociation
/// computations. *J Appl Physiol: Respir Environ Exerc Physiol* 1979;46(3):599–602.
#[inline]
pub fn po2_temperature_coefficient_ln_per_celsius(po2_mmhg: f64) -> f64 {
    if po2_mmhg.is_nan() {
        return f64::NAN;
    }
    let p = po2_mmhg.max(0.0);
    let w = EQ3_SCALE * (p / EQ3_REFERENCE_MMHG).powf(EQ3_EXPONENT);
    EQ3_BOUND_COEFFICIENT_PER_CELSIUS / (w + 1.0) + EQ3_DISSOLVED_COEFFICIENT_PER_CELSIUS
}

/// PO2 of anaerobic blood after a temperature change, Eq. 3 integrated exactly.
///
/// # Formula
///
/// Eq. 3, d ln P/dT = g(P) = (a + b·w)/(1 + w) with w = 0.243·(P/100)^3.88,
/// a = 0.058 + 0.013 = 0.071, b = 0.013, has the closed-form antiderivative
///
/// ```text
/// Φ(P) = ( ln w / a + (1/b - 1/a) * ln(a + b*w) ) / 3.88      (dΦ = d ln P / g = dT)
/// Φ(P_to) = Φ(P_from) + (T_to - T_from)
/// ```
///
/// solved for `P_to` by [`solve_increasing`] (Φ is strictly increasing). This is the
/// limit of integrating Eq. 3 in ever smaller steps (derived from Eq. 3; methods.md
/// §8 "integrated" values). `P` in mmHg (> 0), `T` in °C.
///
/// Severinghaus JW. Simple, accurate equations for human blood O2 dissociation
/// computations. *J Appl Physiol: Respir Environ Exerc Physiol* 1979;46(3):599–602, Eq. 3.
pub fn po2_at_temperature_mmhg(
    po2_mmhg: f64,
    from_celsius: f64,
    to_celsius: f64,
) -> Result<f64, PhysiologyError> {
    let p = check_po2(po2_mmhg)?;
    let from = require_finite(from_celsius, Input::MeasuredTemperature)?;
    let to = require_finite(to_celsius, Input::TargetTemperature)?;
    if p == 0.0 {
        return Ok(0.0);
    }
    temperature_map(p.ln(), to - from).map(f64::exp)
}

/// ln(0.243) + 3.88·(u - ln 100): ln w of Eq. 3 at u = ln P.
#[inline]
fn eq3_ln_w(u: f64) -> f64 {
    EQ3_SCALE.ln() + EQ3_EXPONENT * (u - EQ3_REFERENCE_MMHG.ln())
}

const EQ3_A: f64 = EQ3_BOUND_COEFFICIENT_PER_CELSIUS + EQ3_DISSOLVED_COEFFICIENT_PER_CELSIUS;
const EQ3_B: f64 = EQ3_DISSOLVED_COEFFICIENT_PER_CELSIUS;

/// Φ(u) and dΦ/du = 1/g at u = ln P.
#[inline]
fn eq3_phi(u: f64) -> (f64, f64) {
    let ln_w = eq3_ln_w(u);
    let w = ln_w.exp();
    let phi =
        (ln_w / EQ3_A + (1.0 / EQ3_B - 1.0 / EQ3_A) * (EQ3_A + EQ3_B * w).ln()) / EQ3_EXPONENT;
    (phi, (1.0 + w) / (EQ3_A + EQ3_B * w))
}

/// g(u) = d ln P/dT at u = ln P.
#[inline]
fn eq3_g(u: f64) -> f64 {
    let w = eq3_ln_w(u).exp();
    (EQ3_A + EQ3_B * w) / (1.0 + w)
}

/// ln P after a temperature change of `delta_celsius`, from ln P = `u`.
fn temperature_map(u: f64, delta_celsius: f64) -> Result<f64, PhysiologyError> {
    if delta_celsius == 0.0 {
        return Ok(u);
    }
    let target = eq3_phi(u).0 + delta_celsius;
    // g lies in [b, a], so the change in ln P lies between b·ΔT and a·ΔT.
    let (x, y) = (u + EQ3_B * delta_celsius, u + EQ3_A * delta_celsius);
    let margin = 1e-9 * (1.0 + u.abs());
    let (lo, hi) = (x.min(y) - margin, x.max(y) + margin);
    // Start from the second-order Taylor step of d ln P/dT = g: ln P moves by
    // g·ΔT + g·g'·ΔT²/2, with g' = dg/d ln P = 3.88·w·(b - a)/(1 + w)²; Newton
    // then needs fewer steps than from the first-order one.
    let w = eq3_ln_w(u).exp();
    let g = (EQ3_A + EQ3_B * w) / (1.0 + w);
    let dg = EQ3_EXPONENT * w * (EQ3_B - EQ3_A) / ((1.0 + w) * (1.0 + w));
    let guess = u + g * delta_celsius + 0.5 * g * dg * delta_celsius * delta_celsius;
    solve_increasing(
        |v| {
            let (phi, dphi) = eq3_phi(v);
            Ok((phi - target, dphi))
        },
        lo,
        hi,
        guess,
        PhysiologyError::OutsideModelDomain {
            input: Input::Temperature,
            value: delta_celsius,
            limit: 0.0,
            model: INFO.id,
        },
    )
}

/// The log10 Bohr factor of Severinghaus as restated by Inaba et al., varying with PO2.
///
/// # Formula
///
/// ```text
/// fB = (PO2/26.6)^0.08 - 1.52        (log10 PO2 per pH unit)
/// ```
///
/// `PO2` in mmHg (> 0). Agrees with Eq. 4/ln 10 within 0.007 over 10–100 mmHg.
///
/// Inaba H, Ohwada T, Sato J, Mizuguchi T, Hirasawa H. *Jpn J Physiol*
/// 1986;36(1):163–175 (attributed to Severinghaus JW, *J Appl Physiol: Respir Environ
/// Exerc Physiol* 1979;46(3):599–602).
pub fn bohr_factor_log10_per_ph(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let p = super::curve::check_positive_po2(po2_mmhg)?;
    Ok(inaba_fb(p))
}

#[inline]
fn inaba_fb(p: f64) -> f64 {
    (p / EQ4_REFERENCE_MMHG).powf(INABA_BOHR_EXPONENT) - INABA_BOHR_OFFSET
}

/// The Bohr coefficient varying with PO2, Severinghaus 1979 Eq. 4.
///
/// # Formula
///
/// ```text
/// d ln PO2 / d pH = (PO2/26.6)^0.184 - 2.2          (ln per pH unit)
/// ```
///
/// `PO2` in mmHg (> 0). Divide by ln 10 for log10 units.
///
/// Severinghaus JW. Simple, accurate equations for human blood O2 dissociation
/// computations. *J Appl Physiol: Respir Environ Exerc Physiol* 1979;46(3):599–602, Eq. 4.
pub fn bohr_coefficient_eq4_ln_per_ph(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let p = super::curve::check_positive_po2(po2_mmhg)?;
    Ok((p / EQ4_REFERENCE_MMHG).powf(EQ4_EXPONENT) - EQ4_OFFSET)
}

/// Virtual (standardised) PO2 at 37 °C from PO2, pH and base excess at 37 °C.
///
/// # Formula
///
/// ```text
/// vPO2 = PO2 * 10^( fB*(7.4 - pH) - 0.0013*BE ),    fB = (PO2/26.6)^0.08 - 1.52
/// ```
///
/// `PO2`, `vPO2` in mmHg at 37 °C; `pH` at 37 °C; `BE` whole-blood base excess in
/// mmol/L. Then S = Eq. 1 at vPO2.
///
/// Inaba H, Ohwada T, Sato J, Mizuguchi T, Hirasawa H. *Jpn J Physiol*
/// 1986;36(1):163–175; Severinghaus JW, *J Appl Physiol: Respir Environ Exerc Physiol*
/// 1979;46(3):599–602.
pub fn virtual_po2_mmhg(
    po2_mmhg: f64,
    ph: f64,
    base_excess_mmol_per_l: f64,
) -> Result<f64, PhysiologyError> {
    let p = check_po2(po2_mmhg)?;
    let conditions = Conditions {
        ph: Some(ph),
        base_excess_mmol_per_l: Some(base_excess_mmol_per_l),
        ..Conditions::STANDARD
    };
    conditions.validate()?;
    if p == 0.0 {
        return Ok(0.0);
    }
    let curve = Severinghaus1979.at(&conditions)?;
    Ok(curve.acid_base_map(p.ln()).0.exp())
}

/// Severinghaus 1979 with its conditions applied.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SeveringhausCurve {
    /// 7.4 - pH.
    ph_deficit: f64,
    /// -0.0013·BE·ln 10 (ln units).
    base_excess_term: f64,
    /// T - 37 °C.
    temperature_excess: f64,
}

impl Severinghaus1979 {
    /// Validate `conditions` and prepare the curve.
    pub(crate) fn at(&self, conditions: &Conditions) -> Result<SeveringhausCurve, PhysiologyError> {
        conditions.validate()?;
        Ok(SeveringhausCurve {
            ph_deficit: STANDARD_PH - conditions.ph(),
            base_excess_term: -INABA_BASE_EXCESS_LOG10_PER_MMOL_PER_L
                * conditions.base_excess_mmol_per_l()
                * LN_10,
            temperature_excess: conditions.temperature_celsius() - STANDARD_TEMPERATURE_CELSIUS,
        })
    }
}

impl SeveringhausCurve {
    /// ln vPO2 and d ln vPO2/d ln PO2(37) from u = ln PO2(37).
    #[inline]
    fn acid_base_map(&self, u: f64) -> (f64, f64) {
        if self.ph_deficit == 0.0 {
            return (u + self.base_excess_term, 1.0);
        }
        let r = ((u - EQ4_REFERENCE_MMHG.ln()) * INABA_BOHR_EXPONENT).exp();
        let fb = r - INABA_BOHR_OFFSET;
        (
            u + LN_10 * fb * self.ph_deficit + self.base_excess_term,
            1.0 + LN_10 * INABA_BOHR_EXPONENT * r * self.ph_deficit,
        )
    }

    /// ln vPO2 and d ln vPO2 / d ln PO2(T) from PO2(T).
    #[inline]
    fn virtual_ln(&self, p: f64) -> Result<(f64, f64), PhysiologyError> {
        let u_t = p.ln();
        let (u37, d37) = if self.temperature_excess == 0.0 {
            (u_t, 1.0)
        } else {
            let u37 = temperature_map(u_t, -self.temperature_excess)?;
            (u37, eq3_g(u37) / eq3_g(u_t))
        };
        let (v, dv) = self.acid_base_map(u37);
        Ok((v, dv * d37))
    }

    #[inline]
    fn is_standard(&self) -> bool {
        self.ph_deficit == 0.0 && self.base_excess_term == 0.0 && self.temperature_excess == 0.0
    }
}

impl Curve for SeveringhausCurve {
    #[inline]
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        let (ln_v, _) = self.virtual_ln(po2_mmhg)?;
        let v = ln_v.exp();
        Ok(ln_v + (v * v + EQ1_LINEAR_MMHG2).ln() - EQ1_CONSTANT_MMHG3.ln())
    }

    #[inline]
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.logit_and_slope(po2_mmhg)?.1)
    }

    #[inline]
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        let (ln_v, dv) = self.virtual_ln(po2_mmhg)?;
        let v = ln_v.exp();
        let v2 = v * v;
        let logit = ln_v + (v2 + EQ1_LINEAR_MMHG2).ln() - EQ1_CONSTANT_MMHG3.ln();
        let slope = (3.0 * v2 + EQ1_LINEAR_MMHG2) / (v2 + EQ1_LINEAR_MMHG2) * dv;
        Ok((logit, slope))
    }

    #[inline]
    fn saturation(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        if self.is_standard() {
            return Ok(eq1(po2_mmhg));
        }
        let (ln_v, _) = self.virtual_ln(po2_mmhg)?;
        Ok(eq1(ln_v.exp()))
    }

    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        let v = ellis(saturation);
        if self.is_standard() {
            return Ok(v);
        }
        let ln_v = v.ln();
        // Undo the acid-base map: solve acid_base_map(u37) = ln v. Its slope is
        // 1 + 0.184·(P/26.6)^0.08·(7.4 - pH) >= 0.5 within the accepted pH range up
        // to 1e5 mmHg, so the root lies within 2·|offset| of ln v.
        let u37 = if self.ph_deficit == 0.0 {
            ln_v - self.base_excess_term
        } else {
            let (at_v, slope_v) = self.acid_base_map(ln_v);
            let offset = at_v - ln_v;
            let half_width = 2.0 * offset.abs() + 1e-9;
            solve_increasing(
                |u| {
                    let (x, dx) = self.acid_base_map(u);
                    Ok((x - ln_v, dx))
                },
                ln_v - half_width,
                ln_v + half_width,
                ln_v - offset / slope_v.max(0.5),
                PhysiologyError::OutsideModelDomain {
                    input: Input::Saturation,
                    value: saturation,
                    limit: 0.0,
                    model: INFO.id,
                },
            )?
        };
        let u_t = temperature_map(u37, self.temperature_excess)?;
        Ok(u_t.exp())
    }
}

impl_dissociation_model!(Severinghaus1979, &INFO);
