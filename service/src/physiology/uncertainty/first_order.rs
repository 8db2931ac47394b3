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

/// How far the value departs from the straight line the first-order method
/// assumes, across the coverage interval, one input at a time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Linearity {
    /// The input with the largest departure.
    pub input: InputQuantity,
    /// That departure, unit of the value (infinite when the interval of an
    /// input reaches beyond its physical domain or the function refuses
    /// there).
    pub departure: f64,
    /// The numerical tolerance δ of u_c(y) it is compared with.
    pub tolerance: f64,
    /// Whether every departure is within δ.
    pub linear: bool,
}

/// A screen of the linearisation behind a first-order result, for use when
/// no Monte Carlo run validates it (JCGM 101:2008 clause 8 needs one).
///
/// # Formula
///
/// ```text
/// for each input i with u(xᵢ) > 0 and s = −1, +1:
///   x′ = x with xᵢ moved to xᵢ + s·k·u(xᵢ)           (k: the result's coverage factor)
///   dᵢ,ₛ = |f(x′) − (y + s·k·cᵢ·u(xᵢ))|               (departure from the tangent)
/// departure = max dᵢ,ₛ;   linear when departure ≤ δ     (δ: numerical_tolerance(u_c(y), n_dig))
/// ```
///
/// Our own screen (not from JCGM 100 or 101): the GUM's 5.1.2 note says
/// higher-order terms matter where f is markedly nonlinear over the
/// uncertainty of its inputs, and this measures exactly that, input by input,
/// at the ends of the interval the result states. It does not see
/// interactions between inputs; a Monte Carlo run does. Returns `None` when
/// no input has an uncertainty.
pub fn linearity<F: MeasurementFunction + ?Sized>(
    f: &F,
    result: &FirstOrderResult,
    significant_digits: u8,
) -> Option<Linearity> {
    let x = f.estimates();
    let slots = f.slots();
    let k = result.coverage_factor;
    let mut worst: Option<(InputQuantity, f64)> = None;
    for line in result
        .budget
        .iter()
        .filter(|l| l.standard_uncertainty > 0.0)
    {
        let Some(i) = slots.iter().position(|s| s.quantity == line.input) else {
            continue;
        };
        for s in [-1.0, 1.0] {
            let moved = x[i] + s * k * line.standard_uncertainty;
            let departure = if slots[i].domain.contains(moved) {
                let mut probe = x.clone();
                probe[i] = moved;
                match f.evaluate(&probe) {
                    Ok(y) if y.is_finite() => {
                        let tangent =
                            result.estimate + s * k * line.sensitivity * line.standard_uncertainty;
                        (y - tangent).abs()
                    }
                    _ => f64::INFINITY,
                }
            } else {
                f64::INFINITY
            };
            if worst.is_none_or(|(_, d)| departure > d) {
                worst = Some((line.input, departure));
            }
        }
    }
    let (input, departure) = worst?;
    let tolerance =
        super::coverage::numerical_tolerance(result.standard_uncertainty, significant_digits);
    Some(Linearity {
        input,
        departure,
        tolerance,
        linear: departure <= tolerance,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physiology::conditions::Conditions;
    use crate::physiology::model::DEFAULT_MODEL;
    use crate::physiology::uncertainty::curve_values::SaturationFromTension;
    use crate::physiology::uncertainty::gas_exchange_values::{ImputedPao2, Pao2Fio2Ratio};

    #[test]
    fn a_linear_value_passes_and_a_curved_one_does_not() {
        // PaO2/FiO2 is linear in PaO2: the tangent is the function itself.
        let ratio = Pao2Fio2Ratio::new(80.0, 0.4).unwrap();
        let r = propagate(&ratio, &[Some(4.0), None], 0.95).unwrap();
        let l = linearity(&ratio, &r, 2).unwrap();
        assert!(l.linear, "{l:?}");
        assert!(l.departure < 1e-9);

        // PaO2 imputed at SpO2 0.94 with u 0.03: the upper end of the
        // interval, 0.94 + 1.96 × 0.03 = 0.9988, lies far up the plateau.
        let imputed = ImputedPao2::new(0.94).unwrap();
        let r = propagate(&imputed, &[Some(0.03)], 0.95).unwrap();
        let l = linearity(&imputed, &r, 2).unwrap();
        assert!(!l.linear);
        assert_eq!(l.input, InputQuantity::Spo2);
        assert!(l.departure > 10.0, "{l:?}");
    }

    #[test]
    fn an_interval_beyond_the_domain_is_not_linear() {
        // S from PO2 3 mmHg with u 5 mmHg: the lower end is a negative PO2.
        let f = SaturationFromTension::new(DEFAULT_MODEL, 3.0, Conditions::STANDARD).unwrap();
        let r = propagate(&f, &[Some(5.0)], 0.95).unwrap();
        let l = linearity(&f, &r, 2).unwrap();
        assert!(l.departure.is_infinite() && !l.linear);
        // Nothing to screen without an uncertainty.
        let none = propagate(&f, &[None], 0.95).unwrap();
        assert!(linearity(&f, &none, 2).is_none());
    }
}
