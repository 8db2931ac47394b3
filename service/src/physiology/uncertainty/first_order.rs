//! The law of propagation of uncertainty, first order, for independent inputs
//! (JCGM 100:2008 clause 5.1.2, Eq. 10).

use super::coverage::{CoverageInterval, IntervalKind};
use super::function::{DerivativeMethod, MeasurementFunction};
use super::normal::normal_coverage_factor;
use super::quantity::InputQuantity;
use crate::physiology::error::PhysiologyError;

/// One line of the uncertainty budget.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BudgetLine {
    /// The input.
    pub input: InputQuantity,
    /// Its estimate xᵢ.
    pub estimate: f64,
    /// Its standard uncertainty u(xᵢ).
    pub standard_uncertainty: f64,
    /// The sensitivity coefficient cᵢ = ∂f/∂xᵢ at the estimates.
    pub sensitivity: f64,
    /// How cᵢ was obtained.
    pub derivative: DerivativeMethod,
    /// uᵢ(y) = |cᵢ| u(xᵢ).
    pub contribution: f64,
    /// uᵢ(y)² / u_c(y)²: the input's share of the first-order variance (0 when
    /// u_c(y) is 0).
    pub variance_share: f64,
}

/// The first-order result.
#[derive(Debug, Clone, PartialEq)]
pub struct FirstOrderResult {
    /// y = f(x₁, …, x_N).
    pub estimate: f64,
    /// The combined standard uncertainty u_c(y).
    pub standard_uncertainty: f64,
    /// The coverage factor k for the coverage probability (normal).
    pub coverage_factor: f64,
    /// y ± k·u_c(y).
    pub interval: CoverageInterval,
    /// One line per input with a standard uncertainty, in slot order.
    pub budget: Vec<BudgetLine>,
}

/// The law of propagation of uncertainty for independent inputs.
///
/// # Formula
///
/// ```text
/// u_c²(y) = Σᵢ cᵢ² u²(xᵢ),   cᵢ = ∂f/∂xᵢ at the estimates     (JCGM 100:2008 5.1.2 Eq. 10, 5.1.3)
/// interval = y ± k·u_c(y),   k = Φ⁻¹((1 + p)/2)               (normal; 1.960 at 95 %)
/// ```
///
/// `uncertainties[i]` is slot i's u(xᵢ), `None` when not considered; only
/// slots with u(xᵢ) > 0 have their coefficient computed. Correlated inputs
/// (Eq. 13) are not handled: every input is taken as independent.
///
/// # Errors
///
/// The physiology function's refusal at the estimates.
pub fn propagate<F: MeasurementFunction + ?Sized>(
    f: &F,
    uncertainties: &[Option<f64>],
    coverage_probability: f64,
) -> Result<FirstOrderResult, PhysiologyError> {
    let x = f.estimates();
    let estimate = f.evaluate(&x)?;
    let mut budget = Vec::new();
    let mut variance = 0.0;
    for (i, slot) in f.slots().iter().enumerate() {
        let Some(u) = uncertainties.get(i).copied().flatten() else {
            continue;
        };
        let partial = if u > 0.0 {
            f.partial(&x, i)?
        } else {
            super::function::Partial::exact(0.0)
        };
        let contribution = partial.value.abs() * u;
        variance += contribution * contribution;
        budget.push(BudgetLine {
            input: slot.quantity,
            estimate: slot.estimate,
            standard_uncertainty: u,
            sensitivity: partial.value,
            derivative: partial.method,
            contribution,
            variance_share: 0.0,
        });
    }
    for line in &mut budget {
        line.variance_share = if variance > 0.0 {
            line.contribution * line.contribution / variance
        } else {
            0.0
        };
    }
    let u = variance.sqrt();
    let k = normal_coverage_factor(coverage_probability);
    Ok(FirstOrderResult {
        estimate,
        standard_uncertainty: u,
        coverage_factor: k,
        interval: CoverageInterval {
            low: estimate - k * u,
            high: estimate + k * u,
            probability: coverage_probability,
            kind: IntervalKind::FirstOrderNormal,
        },
        budget,
    })
}
