//! Dyshaemoglobins: carboxyhaemoglobin through the Haldane relation (the left shift
//! of the remaining haemoglobin), methaemoglobin, and the explicit conversion
//! between functional and fractional saturation.
//!
//! # The Haldane treatment used by every model
//!
//! CO and O2 compete for the same haem; by Haldane's first law
//! FCOHb/FO2Hb = M·PCO/PO2, so the non-oxidised haemoglobin carries CO and O2 together
//! as if it saw the single "equivalent" tension PO2 + M·PCO = PO2·(1 + FCOHb/FO2Hb):
//!
//! ```text
//! f  = FCOHb / (1 - FMetHb)                 CO share of the haem that is not MetHb
//! y  = FO2Hb / (1 - FMetHb) = σ·(1 - f)     O2 share; σ = functional saturation
//! t  = y + f                                total ligand saturation
//! t  = S_model( PO2·t/y )                   the model's own curve at the equivalent tension
//! ```
//!
//! Forward, the last line is solved for σ (it is monotone in σ); the inverse is
//! closed: t = f + σ(1 - f), PO2 = P_model(t)·y/t. The result is a left-shifted,
//! flattened curve of the remaining haemoglobin (the second Haldane effect).
//!
//! Sources: Siggaard-Andersen O, Siggaard-Andersen M, Fogh-Andersen N. The
//! TANH-equation modified for the hemoglobin, oxygen, and carbon monoxide equilibrium.
//! *Scand J Clin Lab Invest Suppl* 1993;214:113–119, doi:10.1080/00365519309090687
//! (s' = (FO2Hb + FCOHb)/(1 - FMetHb), p' = pO2·(1 + FCOHb/FO2Hb)); Haldane constant
//! M = 218 (HbA) and 175 (HbF): *Human Physiology* 2020 meta-analysis,
//! doi:10.1134/S0362119720020048.
//!
//! MetHb does not bind O2; here it only removes haem from the pool. Its own
//! allosteric left shift is modelled only by the oxygen status algorithm
//! (`siggaard-andersen-1990`, a3 = -0.7 per unit FMetHb); every other model
//! reports a given MetHb as a condition not modelled.
//!
//! This treatment is Eqs. 2-8 of the 1993 paper exactly: sCO = FCOHb/(1 - FMetHb)
//! is `f` above, sO2CO = sO2 + (1 - sO2)·sCO is `t`, and pO2CO = pO2·sO2CO/(sO2CO -
//! sCO) is the equivalent tension PO2·t/y.

use super::curve::{logistic, Curve};
use crate::physiology::error::{require_within, Input, PhysiologyError};
use crate::physiology::solver::solve_increasing;

/// Haldane constant M of adult haemoglobin at physiological conditions
/// (median 218, IQR 191–257; *Human Physiology* 2020 meta-analysis,
/// doi:10.1134/S0362119720020048).
pub const HALDANE_CONSTANT_HBA: f64 = 218.0;
/// Haldane constant M of fetal haemoglobin (≈175; same source).
pub const HALDANE_CONSTANT_HBF: f64 = 175.0;
/// Bracket of the solver in logit σ: σ from about 2e-22 to 1 - 2e-22.
const LOGIT_BRACKET: f64 = 50.0;

/// Fractional oxyhaemoglobin from functional saturation.
///
/// # Formula
///
/// ```text
/// FO2Hb = SO2 * (1 - FCOHb - FMetHb)
/// ```
///
/// SO2 = O2Hb/(O2Hb + HHb) (functional), FO2Hb = O2Hb/(O2Hb + HHb + COHb + MetHb)
/// (fractional); all fractions 0-1. Derived from the definitions (methods.md §10).
pub fn fractional_from_functional(
    functional_saturation: f64,
    cohb_fraction: f64,
    methb_fraction: f64,
) -> Result<f64, PhysiologyError> {
    let s = require_within(functional_saturation, Input::Saturation, 0.0, 1.0)?;
    let active = active_fraction(cohb_fraction, methb_fraction)?;
    Ok(s * active)
}

/// Functional saturation from fractional oxyhaemoglobin.
///
/// # Formula
///
/// ```text
/// SO2 = FO2Hb / (1 - FCOHb - FMetHb)
/// ```
///
/// Refuses FO2Hb + FCOHb + FMetHb > 1 as inconsistent. Derived from the definitions
/// (methods.md §10).
pub fn functional_from_fractional(
    fractional_oxyhemoglobin: f64,
    cohb_fraction: f64,
    methb_fraction: f64,
) -> Result<f64, PhysiologyError> {
    let f = require_within(fractional_oxyhemoglobin, Input::Saturation, 0.0, 1.0)?;
    let active = active_fraction(cohb_fraction, methb_fraction)?;
    if f > active {
        return Err(PhysiologyError::Inconsistent {
            input: Input::Saturation,
            reason: "oxy-, carboxy- and methaemoglobin fractions sum past 1",
        });
    }
    Ok(f / active)
}

/// 1 - FCOHb - FMetHb, validated.
fn active_fraction(cohb: f64, methb: f64) -> Result<f64, PhysiologyError> {
    let cohb = require_within(cohb, Input::Cohb, 0.0, 1.0)?;
    let methb = require_within(methb, Input::Methb, 0.0, 1.0)?;
    let active = 1.0 - cohb - methb;
    if active <= 0.0 {
        return Err(PhysiologyError::Inconsistent {
            input: Input::Methb,
            reason: "carboxy- and methaemoglobin fractions sum to 1 or more",
        });
    }
    Ok(active)
}

/// Haldane's first law: the COHb/O2Hb ratio at given CO and O2 tensions.
///
/// # Formula
///
/// ```text
/// FCOHb / FO2Hb = M * PCO / PO2
/// ```
///
/// `PCO`, `PO2` in mmHg (PO2 > 0); `M` dimensionless ([`HALDANE_CONSTANT_HBA`]).
/// Form from memory; constant from the *Human Physiology* 2020 meta-analysis,
/// doi:10.1134/S0362119720020048.
pub fn cohb_to_o2hb_ratio(
    pco_mmhg: f64,
    po2_mmhg: f64,
    haldane_constant: f64,
) -> Result<f64, PhysiologyError> {
    let pco = require_within(pco_mmhg, Input::Cohb, 0.0, f64::MAX)?;
    let po2 = super::curve::check_positive_po2(po2_mmhg)?;
    let m = crate::physiology::error::require_positive(haldane_constant, Input::Cohb)?;
    Ok(m * pco / po2)
}

/// Residual of the Haldane equation in z = logit σ, made increasing:
/// H(z) = logit(t) - logit_model(PO2·t/y), with its derivative.
#[inline]
fn haldane_residual<C: Curve>(
    curve: &C,
    ln_po2: f64,
    f: f64,
    z: f64,
) -> Result<(f64, f64, f64), PhysiologyError> {
    let sigma = logistic(z);
    let one_minus_sigma = logistic(-z);
    let y = (1.0 - f) * sigma;
    let t = f + y;
    let one_minus_t = (1.0 - f) * one_minus_sigma;
    let logit_t = t.ln() - one_minus_t.ln();
    let ln_eq = ln_po2 + t.ln() - y.ln();
    let (logit_model, m) = if ln_eq >= curve.max_po2_mmhg().ln() {
        // Beyond the curve's evaluable range the model is at least this saturated.
        (curve.logit(curve.max_po2_mmhg())?, 0.0)
    } else if ln_eq <= curve.min_po2_mmhg().ln() {
        // Below it the model is at most this saturated.
        (curve.logit(curve.min_po2_mmhg())?, 0.0)
    } else {
        curve.logit_and_slope(ln_eq.exp())?
    };
    let dy = (1.0 - f) * sigma * one_minus_sigma;
    let slope = dy / t * (m * f / y + 1.0 / one_minus_t);
    Ok((logit_t - logit_model, slope, m))
}

/// Solve the Haldane equation for z = logit σ at PO2 (mmHg, > 0) and CO share f.
fn solve_logit<C: Curve>(curve: &C, po2_mmhg: f64, f: f64) -> Result<f64, PhysiologyError> {
    let ln_po2 = po2_mmhg.ln();
    // The model's own logit at PO2 is a good start where the model is defined there.
    let guess = curve
        .logit(po2_mmhg)
        .unwrap_or(0.0)
        .clamp(-LOGIT_BRACKET, LOGIT_BRACKET);
    solve_increasing(
        |z| {
            let (r, d, _) = haldane_residual(curve, ln_po2, f, z)?;
            Ok((r, d))
        },
        -LOGIT_BRACKET,
        LOGIT_BRACKET,
        guess,
        PhysiologyError::OutsideModelDomain {
            input: Input::Cohb,
            value: f,
            limit: 0.0,
            model: "haldane",
        },
    )
}

/// Functional saturation with COHb share `f` (of the non-MetHb haem) at PO2 > 0.
pub(crate) fn functional_saturation_with_cohb<C: Curve>(
    curve: &C,
    po2_mmhg: f64,
    f: f64,
) -> Result<f64, PhysiologyError> {
    Ok(logistic(solve_logit(curve, po2_mmhg, f)?))
}

/// logit of the functional saturation with COHb share `f` at PO2 > 0.
pub(crate) fn functional_logit_with_cohb<C: Curve>(
    curve: &C,
    po2_mmhg: f64,
    f: f64,
) -> Result<f64, PhysiologyError> {
    solve_logit(curve, po2_mmhg, f)
}

/// PO2 (mmHg) at functional saturation σ with COHb share `f` (closed form).
pub(crate) fn tension_with_cohb<C: Curve>(
    curve: &C,
    sigma: f64,
    f: f64,
) -> Result<f64, PhysiologyError> {
    let y = sigma * (1.0 - f);
    let t = f + y;
    let p_eq = curve.tension(super::curve::check_inverse_saturation(t)?)?;
    Ok(p_eq * y / t)
}

/// Hill slope d logit σ / d ln PO2 with COHb share `f`:
/// m·t / (σ + m·f·(1 - σ)), m the model's slope at the equivalent tension
/// (derived by implicit differentiation of the Haldane equation above).
pub(crate) fn hill_slope_with_cohb<C: Curve>(
    curve: &C,
    po2_mmhg: f64,
    f: f64,
) -> Result<f64, PhysiologyError> {
    let z = solve_logit(curve, po2_mmhg, f)?;
    let sigma = logistic(z);
    let t = f + (1.0 - f) * sigma;
    let ln_eq = po2_mmhg.ln() + t.ln() - ((1.0 - f) * sigma).ln();
    let m = curve.slope(
        ln_eq
            .exp()
            .clamp(curve.min_po2_mmhg(), curve.max_po2_mmhg()),
    )?;
    Ok(m * t / (sigma + m * f * logistic(-z)))
}
