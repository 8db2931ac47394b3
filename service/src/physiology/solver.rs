//! The one bracketing root finder every inverse uses: safeguarded Newton.
//!
//! Each step takes the Newton step when it lands strictly inside the current
//! bracket and otherwise bisects, so the bracket shrinks on every step that is
//! not a converged Newton step; with at most
//! [`SOLVER_MAX_ITERATIONS`] steps it can
//! neither loop nor diverge.

use super::error::PhysiologyError;
use super::tolerance::{INVERSE_RELATIVE_TOLERANCE, SOLVER_MAX_ITERATIONS};

/// Stopping tolerance on the unknown, a thousandth of
/// [`INVERSE_RELATIVE_TOLERANCE`]: when the unknown is ln PO2, an absolute error of
/// `d` in it is a relative PO2 error of about `d`, and Newton's last step bounds the
/// remaining error quadratically.
pub const SOLVER_STEP_TOLERANCE: f64 = INVERSE_RELATIVE_TOLERANCE * 1e-3;

/// Solve `f(u) = 0` for an increasing function `f` on the bracket `[lo, hi]`.
///
/// `f` returns the value and its derivative. The caller guarantees (from the
/// model's mathematics) that `f(lo) <= 0 <= f(hi)`; if the iteration ends at an
/// end of the bracket whose sign was never confirmed, that end is checked and
/// `not_bracketed` returned if the root is not inside. `guess` is clamped into
/// the bracket.
///
/// # Formula
///
/// ```text
/// u_{k+1} = u_k - f(u_k)/f'(u_k)   if that lies strictly inside (lo, hi)
/// u_{k+1} = (lo + hi)/2            otherwise
/// after each evaluation: f(u_k) < 0 -> lo = u_k;  f(u_k) > 0 -> hi = u_k
/// stop when |f(u_k)/f'(u_k)| <= SOLVER_STEP_TOLERANCE or hi - lo <= SOLVER_STEP_TOLERANCE
/// ```
///
/// Symbols: `u` the unknown (in this engine ln PO2 with PO2 in mmHg, or a saturation
/// fraction), `f` the residual in the caller's units.
///
/// Citation: safeguarded Newton-Raphson as in Press WH, Teukolsky SA, Vetterling WT,
/// Flannery BP. *Numerical Recipes*, 3rd ed., Cambridge University Press 2007,
/// §9.4 (`rtsafe`) (common practice).
pub fn solve_increasing<F>(
    mut f: F,
    mut lo: f64,
    mut hi: f64,
    guess: f64,
    not_bracketed: PhysiologyError,
) -> Result<f64, PhysiologyError>
where
    F: FnMut(f64) -> Result<(f64, f64), PhysiologyError>,
{
    if !(lo.is_finite() && hi.is_finite() && lo < hi) {
        return Err(not_bracketed);
    }
    let (mut lo_checked, mut hi_checked) = (false, false);
    let mut u = if guess.is_finite() {
        guess.clamp(lo, hi)
    } else {
        0.5 * (lo + hi)
    };
    for _ in 0..SOLVER_MAX_ITERATIONS {
        let (value, slope) = f(u)?;
        if value == 0.0 {
            return Ok(u);
        }
        if value < 0.0 {
            lo = u;
            lo_checked = true;
        } else {
            hi = u;
            hi_checked = true;
        }
        let step = value / slope;
        if slope > 0.0 && step.is_finite() && step.abs() <= SOLVER_STEP_TOLERANCE {
            // Converged: the Newton step is below the tolerance (it may round to u).
            return Ok((u - step).clamp(lo, hi));
        }
        let newton = u - step;
        let newton_ok = slope > 0.0 && newton.is_finite() && newton > lo && newton < hi;
        if hi - lo <= SOLVER_STEP_TOLERANCE {
            break;
        }
        u = if newton_ok { newton } else { 0.5 * (lo + hi) };
    }
    // Ended by bracket width (or, impossibly, by the iteration cap): the root is in
    // [lo, hi] provided both ends really bracket it.
    if !lo_checked && f(lo)?.0 > 0.0 {
        return Err(not_bracketed);
    }
    if !hi_checked && f(hi)?.0 < 0.0 {
        return Err(not_bracketed);
    }
    Ok(0.5 * (lo + hi))
}
