//! The trait every dissociation-curve model implements, the description of a
//! model ([`ModelInfo`]) and the helpers the models share: input checks, the
//! logit, and the inverse by the bracketing solver.
//!
//! Every model computes the *functional* saturation S = O2Hb/(O2Hb + HHb) as a
//! fraction. This module imports no model: the models import it, and the
//! dispatch enum ([`super::dispatch::Model`]) imports both.

use crate::physiology::conditions::{Condition, ConditionSet, Conditions};
use crate::physiology::error::{require_finite, Input, PhysiologyError};
use crate::physiology::solver::solve_increasing;

/// Hard upper limit of PO2 accepted by every model, mmHg. A computational limit, far
/// above any blood gas (ten atmospheres are 7600 mmHg), set so that every inverse's
/// result over its guaranteed saturation range (up to 1 - 1e-6, which for myoglobin is
/// 2.8e6 mmHg) can be fed back to the forward model. Clinical plausibility is the job
/// of the validated ranges (soft limits), not of this one.
pub const PO2_MAX_MMHG: f64 = 1e7;

/// A range of an input over which a model was validated or fitted (engine units).
///
/// Outside it the engine still computes (a soft limit); the API warns.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ValidatedRange {
    /// The input the range applies to.
    pub input: Input,
    /// Smallest validated value.
    pub min: f64,
    /// Largest validated value.
    pub max: f64,
}

/// The description of a model: identity, source and what it honours.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ModelInfo {
    /// Stable model id, e.g. `severinghaus-1979`.
    pub id: &'static str,
    /// Version of our implementation of the model.
    pub version: &'static str,
    /// Short human-readable title.
    pub title: &'static str,
    /// Full citation.
    pub reference: &'static str,
    /// DOI of the primary source, or empty if none is verified.
    pub doi: &'static str,
    /// Conditions that shift this model's curve.
    pub honoured_conditions: &'static [Condition],
    /// Ranges over which the model was validated or fitted.
    pub validated_ranges: &'static [ValidatedRange],
    /// Whether this is the service's default model.
    pub is_default: bool,
    /// Which source the implementation follows where published sources
    /// disagree, why, and how large each difference is at typical conditions;
    /// any rule of ours (for example how two published pieces are joined).
    pub notes: &'static str,
}

impl ModelInfo {
    /// The honoured conditions as a set.
    pub const fn honoured(&self) -> ConditionSet {
        ConditionSet::from_slice(self.honoured_conditions)
    }

    /// Whether `value` of `input` lies inside every validated range given for it.
    pub fn within_validated_range(&self, input: Input, value: f64) -> bool {
        self.validated_ranges
            .iter()
            .filter(|r| r.input == input)
            .all(|r| value >= r.min && value <= r.max)
    }
}

/// A model of the oxygen-haemoglobin dissociation curve.
///
/// All methods validate their inputs (and the conditions) and refuse bad ones
/// with a [`PhysiologyError`] naming the input; none panics or returns NaN.
pub trait DissociationModel {
    /// The model's description.
    fn info(&self) -> &'static ModelInfo;

    /// Functional saturation (fraction) at `po2_mmhg` under `conditions`.
    fn saturation(&self, po2_mmhg: f64, conditions: &Conditions) -> Result<f64, PhysiologyError>;

    /// The inverse: PO2 (mmHg) at functional `saturation` under `conditions`.
    /// Saturations `<= 0` or `>= 1` are refused (`OutOfRange` on
    /// [`Input::Saturation`]).
    fn tension_mmhg(
        &self,
        saturation: f64,
        conditions: &Conditions,
    ) -> Result<f64, PhysiologyError>;

    /// The Hill slope d logit S / d ln PO2 at `po2_mmhg` (> 0).
    fn hill_slope(&self, po2_mmhg: f64, conditions: &Conditions) -> Result<f64, PhysiologyError>;

    /// logit S = ln(S/(1 - S)) at `po2_mmhg` (> 0), computed without forming
    /// 1 - S (accurate on the flat top of the curve).
    fn logit_saturation(
        &self,
        po2_mmhg: f64,
        conditions: &Conditions,
    ) -> Result<f64, PhysiologyError>;

    /// Functional saturation and Hill slope at `po2_mmhg` (> 0) together: the
    /// same values as [`Self::saturation`] and [`Self::hill_slope`] (to
    /// rounding), with the curve prepared once and, where the model allows,
    /// evaluated once.
    fn saturation_and_slope(
        &self,
        po2_mmhg: f64,
        conditions: &Conditions,
    ) -> Result<(f64, f64), PhysiologyError> {
        Ok((
            self.saturation(po2_mmhg, conditions)?,
            self.hill_slope(po2_mmhg, conditions)?,
        ))
    }

    /// P50 (mmHg): the PO2 at which the functional saturation is 0.5.
    fn p50_mmhg(&self, conditions: &Conditions) -> Result<f64, PhysiologyError> {
        self.tension_mmhg(0.5, conditions)
    }

    /// Conditions given in `conditions` that this model does not honour, so that
    /// the caller can warn; no allocation.
    fn unmodelled_conditions(&self, conditions: &Conditions) -> ConditionSet {
        conditions.given().difference(self.info().honoured())
    }
}

/// A curve with its conditions already applied (crate-internal building block).
///
/// Inputs reaching these methods are validated: PO2 finite and `> 0`,
/// saturation finite and strictly inside (0, 1).
pub(crate) trait Curve {
    /// logit S at PO2 (mmHg).
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError>;
    /// Hill slope d logit S / d ln PO2 at PO2 (mmHg).
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError>;
    /// logit S and Hill slope together (one pass where the model allows).
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        Ok((self.logit(po2_mmhg)?, self.slope(po2_mmhg)?))
    }
    /// Saturation at PO2 (mmHg).
    fn saturation(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(logistic(self.logit(po2_mmhg)?))
    }
    /// PO2 (mmHg) at saturation.
    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError>;
    /// Largest PO2 (mmHg) the curve may be evaluated at by a solver.
    fn max_po2_mmhg(&self) -> f64 {
        SOLVER_MAX_PO2_MMHG
    }
    /// Smallest PO2 (mmHg) the curve may be evaluated at by a solver.
    fn min_po2_mmhg(&self) -> f64 {
        SOLVER_MIN_PO2_MMHG
    }
    /// Saturation at PO2 = 0 (0 for every model whose equation is defined there).
    fn saturation_at_zero(&self) -> Result<f64, PhysiologyError> {
        Ok(0.0)
    }
    /// Whether carboxyhaemoglobin acts on this curve (false for myoglobin).
    fn honours_cohb(&self) -> bool {
        true
    }
}

/// Largest PO2 (mmHg) an inverse searches up to: beyond any accepted PO2, so that
/// saturations on the flat top (up to about 1 - 1e-12 for Eq. 1) still invert.
pub(crate) const SOLVER_MAX_PO2_MMHG: f64 = 1e9;
/// Smallest PO2 (mmHg) an inverse searches down to.
pub(crate) const SOLVER_MIN_PO2_MMHG: f64 = 1e-100;

/// Invert a prepared curve by the bracketing solver on the Hill plot:
/// solve logit S(e^u) = logit(s) for u = ln PO2.
pub(crate) fn invert_by_logit<C: Curve>(
    curve: &C,
    saturation: f64,
    guess_po2_mmhg: f64,
    model: &'static str,
) -> Result<f64, PhysiologyError> {
    let target = logit_of(saturation);
    let lo = curve.min_po2_mmhg().ln();
    let hi = curve.max_po2_mmhg().ln();
    let guess = if guess_po2_mmhg > 0.0 && guess_po2_mmhg.is_finite() {
        guess_po2_mmhg.ln()
    } else {
        0.5 * (lo + hi)
    };
    solve_increasing(
        |u| {
            let (logit, slope) = curve.logit_and_slope(u.exp())?;
            Ok((logit - target, slope))
        },
        lo,
        hi,
        guess,
        PhysiologyError::OutsideModelDomain {
            input: Input::Saturation,
            value: saturation,
            limit: 0.0,
            model,
        },
    )
    .map(f64::exp)
}

/// S = 1/(1 + exp(-logit)), without overflow.
#[inline]
pub(crate) fn logistic(logit: f64) -> f64 {
    if logit >= 0.0 {
        1.0 / (1.0 + (-logit).exp())
    } else {
        let e = logit.exp();
        e / (1.0 + e)
    }
}

/// ln(S/(1 - S)) of a saturation strictly inside (0, 1).
#[inline]
pub(crate) fn logit_of(saturation: f64) -> f64 {
    saturation.ln() - (-saturation).ln_1p()
}

/// Refuse a PO2 that is not finite, negative, or above [`PO2_MAX_MMHG`].
#[inline]
pub(crate) fn check_po2(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let p = require_finite(po2_mmhg, Input::Po2)?;
    if !(0.0..=PO2_MAX_MMHG).contains(&p) {
        return Err(PhysiologyError::OutOfRange {
            input: Input::Po2,
            value: p,
            min: 0.0,
            max: PO2_MAX_MMHG,
        });
    }
    Ok(p)
}

/// Refuse a PO2 that is not strictly positive (or fails [`check_po2`]).
#[inline]
pub(crate) fn check_positive_po2(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let p = check_po2(po2_mmhg)?;
    if p <= 0.0 {
        return Err(PhysiologyError::OutOfRange {
            input: Input::Po2,
            value: p,
            min: f64::MIN_POSITIVE,
            max: PO2_MAX_MMHG,
        });
    }
    Ok(p)
}

/// Refuse a saturation for an inverse unless finite and strictly inside (0, 1).
#[inline]
pub(crate) fn check_inverse_saturation(saturation: f64) -> Result<f64, PhysiologyError> {
    let s = require_finite(saturation, Input::Saturation)?;
    if s <= 0.0 || s >= 1.0 {
        return Err(PhysiologyError::OutOfRange {
            input: Input::Saturation,
            value: s,
            min: 0.0,
            max: 1.0,
        });
    }
    Ok(s)
}
