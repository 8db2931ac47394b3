//! A derived value as a measurement function Y = f(X₁, …, X_N) of its inputs
//! (JCGM 100:2008 clause 4.1), the one shape both evaluation methods work on,
//! and the numerical derivative used where no exact one is available.

use super::quantity::{Domain, InputQuantity, DERIVATIVE_RELATIVE_STEP};
use crate::physiology::error::PhysiologyError;
use crate::physiology::model::Model;

/// A derived value the engine can evaluate the uncertainty of.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum DerivedQuantity {
    /// Functional saturation from PO2 at conditions (SaturationFromTension).
    Saturation,
    /// PO2 from saturation at conditions (TensionFromSaturation).
    Po2FromSaturation,
    /// PO2 change per percentage point of saturation (TensionFromSaturation's
    /// `po2_change_per_percent`).
    Po2ChangePerPercent,
    /// P50 at conditions (ShiftFactors).
    P50AtConditions,
    /// Arterial oxygen content (OxygenContent).
    ArterialContent,
    /// Venous oxygen content (OxygenContent).
    VenousContent,
    /// Arteriovenous content difference (OxygenContent).
    ArteriovenousDifference,
    /// Oxygen extraction fraction (OxygenContent).
    ExtractionFraction,
    /// PaO2 imputed from SpO2 (GasExchange).
    ImputedPao2,
    /// Imputed PaO2 / FiO2 (GasExchange).
    ImputedPao2Fio2Ratio,
    /// PaO2 / FiO2 (GasExchange).
    Pao2Fio2Ratio,
    /// Alveolar PO2 (GasExchange).
    AlveolarPo2,
    /// Alveolar-arterial PO2 gradient (GasExchange).
    AlveolarArterialGradient,
}

impl DerivedQuantity {
    /// A stable lower_snake_case name.
    pub const fn name(self) -> &'static str {
        match self {
            DerivedQuantity::Saturation => "saturation",
            DerivedQuantity::Po2FromSaturation => "po2",
            DerivedQuantity::Po2ChangePerPercent => "po2_change_per_percent",
            DerivedQuantity::P50AtConditions => "p50_at_conditions",
            DerivedQuantity::ArterialContent => "arterial_content",
            DerivedQuantity::VenousContent => "venous_content",
            DerivedQuantity::ArteriovenousDifference => "arteriovenous_difference",
            DerivedQuantity::ExtractionFraction => "extraction_fraction",
            DerivedQuantity::ImputedPao2 => "imputed_pao2",
            DerivedQuantity::ImputedPao2Fio2Ratio => "imputed_pao2_fio2_ratio",
            DerivedQuantity::Pao2Fio2Ratio => "pao2_fio2_ratio",
            DerivedQuantity::AlveolarPo2 => "alveolar_po2",
            DerivedQuantity::AlveolarArterialGradient => "alveolar_arterial_gradient",
        }
    }

    /// The engine unit of the value, as a UCUM code.
    pub const fn unit(self) -> &'static str {
        match self {
            DerivedQuantity::Saturation | DerivedQuantity::ExtractionFraction => "1",
            DerivedQuantity::Po2FromSaturation
            | DerivedQuantity::P50AtConditions
            | DerivedQuantity::ImputedPao2
            | DerivedQuantity::ImputedPao2Fio2Ratio
            | DerivedQuantity::Pao2Fio2Ratio
            | DerivedQuantity::AlveolarPo2
            | DerivedQuantity::AlveolarArterialGradient => "mm[Hg]",
            DerivedQuantity::Po2ChangePerPercent => "mm[Hg]/%",
            DerivedQuantity::ArterialContent
            | DerivedQuantity::VenousContent
            | DerivedQuantity::ArteriovenousDifference => "mL/dL",
        }
    }
}

/// One input of a measurement function.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Slot {
    /// Which quantity.
    pub quantity: InputQuantity,
    /// Its estimate x (the value the caller gave), engine unit.
    pub estimate: f64,
    /// Values the function accepts; Monte Carlo draws outside it are redrawn.
    pub domain: Domain,
    /// The range over which the derived value's method was validated, when it
    /// has one (SpO2 ≤ 0.96 for imputation); draws beyond it are counted.
    pub validated: Option<(f64, f64)>,
}

impl Slot {
    /// A slot with the quantity's own domain and no validated range.
    pub fn new(quantity: InputQuantity, estimate: f64) -> Slot {
        Slot {
            quantity,
            estimate,
            domain: quantity.domain(),
            validated: None,
        }
    }

    /// The same slot with a narrower domain.
    pub fn with_domain(self, domain: Domain) -> Slot {
        Slot { domain, ..self }
    }

    /// The same slot with a validated range.
    pub fn with_validated(self, min: f64, max: f64) -> Slot {
        Slot {
            validated: Some((min, max)),
            ..self
        }
    }
}

/// How a sensitivity coefficient was obtained.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DerivativeMethod {
    /// From a closed form: the model's exact Hill slope, the formula's own
    /// derivative, or the implicit-function theorem applied to those.
    Exact,
    /// Numerically, where the public model functions give no closed form (a
    /// condition's effect on the curve, a second derivative): central
    /// differences at steps h and h/2 combined by one Richardson step (a
    /// second-order one-sided formula at a domain edge).
    Numerical {
        /// The step h, engine unit of the input.
        step: f64,
        /// An error estimate: |D(h/2) − D(h)|/3 plus rounding ε·|f|/h (the
        /// extrapolated value is usually far better).
        error_estimate: f64,
        /// Whether a one-sided formula was used.
        one_sided: bool,
    },
}

/// A sensitivity coefficient ∂f/∂xᵢ at the estimates (JCGM 100:2008 5.1.3).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Partial {
    /// The coefficient, unit of the value per unit of the input.
    pub value: f64,
    /// How it was obtained.
    pub method: DerivativeMethod,
}

impl Partial {
    /// An exact coefficient.
    pub const fn exact(value: f64) -> Partial {
        Partial {
            value,
            method: DerivativeMethod::Exact,
        }
    }
}

/// Why an input of the caller's was not considered for this derived value,
/// when it is not one of the function's slots.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AbsentReason {
    /// The derived value does not depend on this quantity.
    NotAnInput,
    /// The quantity could be an input but its value was not given; a
    /// defaulted value (a standard condition, a default Hüfner factor) is a
    /// definition, not a measurement.
    ValueNotGiven,
    /// The curve model does not honour this condition (model id).
    NotHonouredByModel(&'static str),
    /// The engine does not propagate this input for this derived value (the
    /// reason says why).
    NotPropagated(&'static str),
}

/// A derived value as a measurement function of its slots.
///
/// Implementations compute the value with the engine's public physiology
/// functions (the one source of truth) and give exact sensitivity
/// coefficients wherever a closed form exists.
pub trait MeasurementFunction {
    /// What the value is.
    fn quantity(&self) -> DerivedQuantity;

    /// The inputs, in a fixed order.
    fn slots(&self) -> &[Slot];

    /// The value at `x` (one entry per slot, engine units).
    ///
    /// # Errors
    ///
    /// The physiology function's refusal.
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError>;

    /// ∂f/∂xᵢ at `x`. The default is numerical ([`numerical_partial`]).
    ///
    /// # Errors
    ///
    /// The physiology function's refusal at or near `x`.
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        numerical_partial(self, x, i)
    }

    /// The curve model the value depends on, if any (for the model component).
    fn curve_model(&self) -> Option<&Model> {
        None
    }

    /// The value at `x` with another curve model in place of
    /// [`curve_model`](Self::curve_model); `None` for a value without a curve.
    fn evaluate_with_model(
        &self,
        _model: &Model,
        _x: &[f64],
    ) -> Option<Result<f64, PhysiologyError>> {
        None
    }

    /// The conditions that a curve model must honour for its value to be
    /// comparable (the conditions the caller gave).
    fn given_conditions(&self) -> crate::physiology::conditions::ConditionSet {
        crate::physiology::conditions::ConditionSet::EMPTY
    }

    /// Why `quantity`, not a slot, was not considered.
    fn absent_reason(&self, _quantity: InputQuantity) -> AbsentReason {
        AbsentReason::NotAnInput
    }

    /// The estimates of every slot, in order.
    fn estimates(&self) -> Vec<f64> {
        self.slots().iter().map(|s| s.estimate).collect()
    }
}

/// ∂f/∂xᵢ by Richardson-extrapolated differences of [`MeasurementFunction::evaluate`].
///
/// # Errors
///
/// The refusal of the function at every probe.
pub fn numerical_partial<F: MeasurementFunction + ?Sized>(
    f: &F,
    x: &[f64],
    i: usize,
) -> Result<Partial, PhysiologyError> {
    let slot = f.slots()[i];
    let mut probe = x.to_vec();
    richardson(
        |v| {
            probe[i] = v;
            f.evaluate(&probe)
        },
        x[i],
        step_for(slot.quantity, x[i]),
        slot.domain,
    )
}

/// The numerical step for `quantity` at `x`.
pub fn step_for(quantity: InputQuantity, x: f64) -> f64 {
    DERIVATIVE_RELATIVE_STEP * x.abs().max(quantity.derivative_scale())
}

/// The derivative of a scalar function at `x` by differences with step `h` and
/// `h/2` and one Richardson step, inside `domain`.
///
/// # Formula
///
/// ```text
/// central:   D(h) = (f(x + h) − f(x − h)) / 2h                 error O(h²)
/// one-sided: D(h) = (−3 f(x) + 4 f(x + h) − f(x + 2h)) / 2h    error O(h²)
/// D = (4 D(h/2) − D(h)) / 3                                    error O(h⁴) central, O(h³) one-sided
/// error estimate = |D(h/2) − D(h)|/3 + ε·max|f|/h
/// ```
///
/// Richardson LF. *Philos Trans R Soc A* 1911;210:307–357 (the extrapolation;
/// citation from memory); the formulas are standard finite differences.
/// The one-sided formula (forward, or backward with −h) is used when x ± h
/// leaves the domain or the function refuses there.
///
/// # Errors
///
/// The function's refusal when no formula can be evaluated.
pub fn richardson<E>(
    mut f: impl FnMut(f64) -> Result<f64, E>,
    x: f64,
    h: f64,
    domain: Domain,
) -> Result<Partial, E> {
    let both_sides = domain.contains(x - h) && domain.contains(x + h);
    let mut attempt = if both_sides {
        central_differences(&mut f, x, h).map(|d| (d, false))
    } else {
        let s = if domain.contains(x + 2.0 * h) { h } else { -h };
        one_sided_differences(&mut f, x, s).map(|d| (d, true))
    };
    if attempt.is_err() && both_sides {
        // The function refused on one side (a model's domain edge): one-sided.
        for s in [h, -h] {
            if domain.contains(x + 2.0 * s) {
                if let Ok(d) = one_sided_differences(&mut f, x, s) {
                    attempt = Ok((d, true));
                    break;
                }
            }
        }
    }
    let (d, one_sided) = attempt?;
    Ok(Partial {
        value: (4.0 * d.half_step - d.full_step) / 3.0,
        method: DerivativeMethod::Numerical {
            step: h,
            error_estimate: (d.half_step - d.full_step).abs() / 3.0 + f64::EPSILON * d.scale / h,
            one_sided,
        },
    })
}

/// Difference quotients at steps h and h/2, and the size of f for the
/// rounding-error term.
struct Differences {
    full_step: f64,
    half_step: f64,
    scale: f64,
}

fn central_differences<E>(
    f: &mut impl FnMut(f64) -> Result<f64, E>,
    x: f64,
    h: f64,
) -> Result<Differences, E> {
    let (p1, m1) = (f(x + h)?, f(x - h)?);
    let (p2, m2) = (f(x + 0.5 * h)?, f(x - 0.5 * h)?);
    Ok(Differences {
        full_step: (p1 - m1) / (2.0 * h),
        half_step: (p2 - m2) / h,
        scale: p1.abs().max(m1.abs()),
    })
}

fn one_sided_differences<E>(
    f: &mut impl FnMut(f64) -> Result<f64, E>,
    x: f64,
    s: f64,
) -> Result<Differences, E> {
    let f0 = f(x)?;
    let (a1, a2) = (f(x + s)?, f(x + 2.0 * s)?);
    let b1 = f(x + 0.5 * s)?;
    Ok(Differences {
        full_step: (-3.0 * f0 + 4.0 * a1 - a2) / (2.0 * s),
        half_step: (-3.0 * f0 + 4.0 * b1 - a1) / s,
        scale: f0.abs().max(a2.abs()),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn richardson_central_is_exact_to_rounding_for_smooth_functions() {
        let d = richardson(
            |x: f64| Ok::<_, ()>(x.exp()),
            1.0,
            1e-3,
            Domain::closed(-10.0, 10.0),
        )
        .unwrap();
        assert!((d.value - 1f64.exp()).abs() < 1e-10);
        match d.method {
            DerivativeMethod::Numerical {
                one_sided,
                error_estimate,
                ..
            } => {
                assert!(!one_sided);
                assert!(error_estimate < 1e-6);
            }
            DerivativeMethod::Exact => panic!("numerical expected"),
        }
    }

    #[test]
    fn richardson_goes_one_sided_at_a_domain_edge() {
        // d/dx x^3 at the edge x = 0 of [0, 1]: 0; at 0.5: 0.75.
        let cube = |x: f64| Ok::<_, ()>(x * x * x);
        let at_edge = richardson(cube, 0.0, 1e-4, Domain::closed(0.0, 1.0)).unwrap();
        assert!(at_edge.value.abs() < 1e-7);
        assert!(matches!(
            at_edge.method,
            DerivativeMethod::Numerical {
                one_sided: true,
                ..
            }
        ));
        let upper = richardson(cube, 1.0, 1e-4, Domain::closed(0.0, 1.0)).unwrap();
        assert!((upper.value - 3.0).abs() < 1e-7);
    }

    #[test]
    fn richardson_steps_around_a_refusal() {
        // Refuses below 1.0 (like a model's domain edge) inside a wider domain.
        let f = |x: f64| if x < 1.0 { Err(()) } else { Ok(x * x) };
        let d = richardson(f, 1.0, 1e-4, Domain::closed(0.0, 10.0)).unwrap();
        assert!((d.value - 2.0).abs() < 1e-7);
    }
}
