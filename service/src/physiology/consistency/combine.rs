//! The arithmetic every check shares: the combined standard uncertainty of a
//! statistic from its components, a saturation calculated from PO2 with its
//! uncertainty from the uncertainty engine, and the choice and application
//! of the threshold.
//!
//! # Formula
//!
//! ```text
//! u_c(y) = √( Σᵢ (cᵢ · u(xᵢ))² )        independent components (JCGM 100:2008 5.1.2, Eq. 10)
//! limit  = k · u_c(y),   k = Φ⁻¹((1 + p)/2)   (1.960 at p = 0.95; JCGM 100:2008 6.2, 6.3)
//! ```
//!
//! A saturation calculated from PO2 is one component whose own budget (PO2,
//! pH, PCO2, COHb, MetHb) and model spread come from
//! [`evaluate_uncertainty`]; its sensitivity in every statistic here is ±1.

use super::figures::{FigureInput, Figures};
use super::finding::{
    CheckSettings, Component, ComponentName, ComponentOrigin, FindingUncertainty, NotEvaluable,
    Threshold, ThresholdBasis, ThresholdRule,
};
use crate::physiology::conditions::{Condition, Conditions};
use crate::physiology::error::PhysiologyError;
use crate::physiology::model::DissociationModel;
use crate::physiology::uncertainty::normal::normal_coverage_factor;
use crate::physiology::uncertainty::{
    evaluate_uncertainty, FigureSource, InputFigure, MeasurementFunction, Method, ModelComponent,
    NotConsideredReason, SaturationFromTension, UncertaintyError, UncertaintyRequest,
};

/// The source of every uncertainty-based rule.
pub const UNCERTAINTY_RULE_SOURCE: &str = "uncertainty-based rule (no published threshold \
is used): k times the combined standard uncertainty of the statistic, by the first-order law \
of propagation of uncertainty for independent inputs (JCGM 100:2008, Evaluation of measurement \
data - Guide to the expression of uncertainty in measurement, 5.1.2), k the normal coverage \
factor for the coverage probability; the figures used are listed with the finding";

/// The rule of the model-spread component.
pub const MODEL_SPREAD_RULE: &str = "the spread of the published adult dissociation curves that \
honour the same conditions, read as the bounds of a rectangular distribution (JCGM 100:2008 \
4.3.7), from the uncertainty engine";

/// The components of one statistic's uncertainty, collected as a check
/// computes it.
#[derive(Debug, Clone, Default)]
pub struct Budget {
    components: Vec<Component>,
    not_considered: Vec<FigureInput>,
}

impl Budget {
    /// An empty budget.
    pub fn new() -> Budget {
        Budget::default()
    }

    /// The input `input` at value `x` enters the statistic with sensitivity
    /// `sensitivity`: its figure adds |sensitivity|·u(x); without a figure
    /// it is recorded as not considered.
    pub fn input(&mut self, figures: &Figures, input: FigureInput, x: f64, sensitivity: f64) {
        match figures.get(input) {
            Some(figure) => {
                let u = figure.standard_uncertainty(x);
                self.components.push(Component {
                    name: ComponentName::Input(input),
                    input_standard_uncertainty: Some(u),
                    contribution: (sensitivity * u).abs(),
                    origin: ComponentOrigin::Figure(figure.origin.clone()),
                });
            }
            None => self.not_considered(input),
        }
    }

    /// A component that is not an input (a spread of methods, a
    /// resolution), with the rule it rests on.
    pub fn rule(&mut self, name: ComponentName, contribution: f64, rule: impl Into<String>) {
        self.components.push(Component {
            name,
            input_standard_uncertainty: None,
            contribution: contribution.abs(),
            origin: ComponentOrigin::Rule(rule.into()),
        });
    }

    fn not_considered(&mut self, input: FigureInput) {
        if !self.not_considered.contains(&input) {
            self.not_considered.push(input);
        }
    }

    /// u_c, k and the components at coverage probability `p`.
    pub fn finish(self, p: f64) -> FindingUncertainty {
        let variance: f64 = self
            .components
            .iter()
            .map(|c| c.contribution * c.contribution)
            .sum();
        FindingUncertainty {
            standard_uncertainty: variance.sqrt(),
            coverage_factor: normal_coverage_factor(p),
            coverage_probability: p,
            components: self.components,
            not_considered: self.not_considered,
        }
    }
}

/// The functional saturation of `settings.model` at `po2_mmhg` (37 °C) and
/// `conditions`, its uncertainty components added to `budget`: each input's
/// first-order contribution from [`evaluate_uncertainty`] (the figures of
/// PO2, pH, PCO2, COHb and MetHb, as the model honours them) and the spread
/// of the published adult models ([`MODEL_SPREAD_RULE`]).
///
/// Only the conditions the model honours are passed on: the others cannot
/// change the value (the caller warns about them), and the model spread then
/// compares the models that honour the same conditions.
///
/// # Errors
///
/// The model's refusal of the inputs.
pub fn calculated_saturation(
    settings: &CheckSettings,
    po2_mmhg: f64,
    conditions: &Conditions,
    budget: &mut Budget,
) -> Result<f64, PhysiologyError> {
    let honoured = settings.model.info().honoured();
    let mut used = *conditions;
    for condition in Condition::ALL {
        if !honoured.contains(condition) {
            clear(&mut used, condition);
        }
    }
    let f = SaturationFromTension::new(settings.model, po2_mmhg, used)?;
    evaluate_with_engine(&f, settings, budget)
}

/// The value of `f` at its estimates, its uncertainty components added to
/// `budget`: each slot's first-order contribution from
/// [`evaluate_uncertainty`], with the figures of the inputs the slots stand
/// for ([`FigureInput::of_engine`]), and the model spread when the value
/// depends on a dissociation curve ([`MODEL_SPREAD_RULE`]).
///
/// # Errors
///
/// The physiology function's refusal at the estimates.
pub fn evaluate_with_engine<F: MeasurementFunction>(
    f: &F,
    settings: &CheckSettings,
    budget: &mut Budget,
) -> Result<f64, PhysiologyError> {
    let figures: Vec<InputFigure> = f
        .slots()
        .iter()
        .filter_map(|slot| {
            let input = FigureInput::of_engine(slot.quantity)?;
            let figure = settings.figures.get(input)?;
            Some(InputFigure {
                input: slot.quantity,
                source: FigureSource::Stated(figure.statement),
            })
        })
        .collect();
    let request = UncertaintyRequest {
        figures,
        method: Method::FirstOrder,
        coverage_probability: settings.coverage_probability,
        model_component: f.curve_model().is_some(),
        ..UncertaintyRequest::default()
    };
    let evaluation = evaluate_uncertainty(f, &request).map_err(|e| match e {
        UncertaintyError::Physiology(e) => e,
        // The figures were checked when read, and the value's own refusal
        // comes back as Physiology; nothing else can happen here.
        _ => PhysiologyError::NotInformative {
            input: crate::physiology::error::Input::Po2,
            reason: "the uncertainty of the value could not be evaluated",
        },
    })?;
    for line in evaluation.budget() {
        let Some(input) = FigureInput::of_engine(line.input) else {
            continue;
        };
        let origin = settings
            .figures
            .get(input)
            .map(|f| f.origin.clone())
            .map(ComponentOrigin::Figure)
            .unwrap_or_else(|| ComponentOrigin::Rule(String::new()));
        budget.components.push(Component {
            name: ComponentName::Input(input),
            input_standard_uncertainty: Some(line.standard_uncertainty),
            contribution: line.contribution,
            origin,
        });
    }
    for missing in &evaluation.not_considered {
        if missing.reason == NotConsideredReason::NoFigure {
            if let Some(input) = FigureInput::of_engine(missing.input) {
                budget.not_considered(input);
            }
        }
    }
    if let ModelComponent::Computed(spread) = &evaluation.model_component {
        budget.rule(
            ComponentName::ModelSpread,
            spread.standard_uncertainty,
            MODEL_SPREAD_RULE,
        );
    }
    Ok(evaluation.estimate)
}

/// A check that could not be made because the engine refused a calculation
/// (the refusal names the input and its limits, never a value).
pub fn refused(error: &PhysiologyError) -> NotEvaluable {
    NotEvaluable::because(format!("the calculation could not be made: {error}"))
}

/// The inputs a saturation calculated from PO2 needs besides PO2: the pH,
/// and the PCO2 when the model takes it into account.
pub fn curve_inputs_missing(
    settings: &CheckSettings,
    at_37: &super::sample::GasValues,
    missing: &mut Vec<super::sample::SampleField>,
) {
    use super::sample::SampleField;
    if at_37.ph.is_none() {
        missing.push(SampleField::Ph);
    }
    if at_37.pco2_mmhg.is_none() && settings.model.info().honoured().contains(Condition::Pco2) {
        missing.push(SampleField::Pco2);
    }
}

/// The budget terms of the sample's measured saturation as it enters a
/// statistic (with sensitivity ±1): as measured, or converted between
/// functional and fractional by a = 1 − FCOHb − FMetHb (given whenever a
/// conversion is made).
///
/// ```text
/// functional from fractional: SO2 = F/a     ∂/∂F = 1/a,  ∂/∂FCOHb = ∂/∂FMetHb = F/a²
/// fractional from functional: F = SO2·a     ∂/∂SO2 = a,  ∂/∂FCOHb = ∂/∂FMetHb = −SO2
/// ```
pub fn measured_saturation_budget(
    sample: &super::sample::BloodGasSample,
    figures: &Figures,
    budget: &mut Budget,
    as_fractional: bool,
) {
    use crate::physiology::content::SaturationKind;
    let Some(so2) = sample.so2 else {
        return;
    };
    let (cohb, methb) = (
        sample.cohb_fraction.unwrap_or(0.0),
        sample.methb_fraction.unwrap_or(0.0),
    );
    let a = 1.0 - cohb - methb;
    let measured = so2.fraction;
    match (so2.kind, as_fractional) {
        (SaturationKind::Functional, false) | (SaturationKind::Fractional, true) => {
            budget.input(figures, FigureInput::So2, measured, 1.0);
        }
        (SaturationKind::Fractional, false) => {
            budget.input(figures, FigureInput::So2, measured, 1.0 / a);
            budget.input(figures, FigureInput::Cohb, cohb, measured / (a * a));
            budget.input(figures, FigureInput::Methb, methb, measured / (a * a));
        }
        (SaturationKind::Functional, true) => {
            budget.input(figures, FigureInput::So2, measured, a);
            budget.input(figures, FigureInput::Cohb, cohb, measured);
            budget.input(figures, FigureInput::Methb, methb, measured);
        }
    }
}

/// A value derived from the sample: `Some` when it could be formed, `None`
/// with its missing inputs added to `missing`.
///
/// # Errors
///
/// [`NotEvaluable`] when the engine refused the calculation.
pub fn available<T>(
    derived: Result<T, super::sample::Unavailable>,
    missing: &mut Vec<super::sample::SampleField>,
) -> Result<Option<T>, NotEvaluable> {
    use super::sample::Unavailable;
    match derived {
        Ok(value) => Ok(Some(value)),
        Err(Unavailable::Missing(fields)) => {
            for field in fields {
                if !missing.contains(&field) {
                    missing.push(field);
                }
            }
            Ok(None)
        }
        Err(Unavailable::Refused(e)) => Err(refused(&e)),
    }
}

fn clear(conditions: &mut Conditions, condition: Condition) {
    match condition {
        Condition::Ph => conditions.ph = None,
        Condition::Pco2 => conditions.pco2_mmhg = None,
        Condition::Temperature => conditions.temperature_celsius = None,
        Condition::Dpg => conditions.dpg_mmol_per_l = None,
        Condition::BaseExcess => conditions.base_excess_mmol_per_l = None,
        Condition::Cohb => conditions.cohb_fraction = None,
        Condition::Methb => conditions.methb_fraction = None,
        Condition::Hbf => conditions.hbf_fraction = None,
    }
}

/// Which sign of the statistic is discordant.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// Either: |statistic| beyond the threshold.
    Both,
    /// Only a positive statistic beyond the threshold.
    Positive,
    /// Only a negative statistic beyond the threshold (below −threshold).
    Negative,
}

/// A published threshold.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Published {
    /// The limit, in the statistic's unit.
    pub value: f64,
    /// Its source.
    pub source: &'static str,
    /// Whether reaching the limit is already discordant (≥ rather than >).
    pub inclusive: bool,
}

/// The threshold that decides, and whether `statistic` lies beyond it.
///
/// A published threshold decides unless the settings ask for the
/// uncertainty-based rule and an uncertainty could be computed; without a
/// published threshold the uncertainty-based rule decides, and it needs an
/// uncertainty above zero (some input with a figure).
///
/// # Errors
///
/// [`NotEvaluable`] when no threshold can be applied.
pub fn decide(
    statistic: f64,
    side: Side,
    published: Option<Published>,
    uncertainty: Option<&FindingUncertainty>,
    settings: &CheckSettings,
) -> Result<(Threshold, bool), NotEvaluable> {
    let limit = uncertainty
        .map(FindingUncertainty::expanded)
        .filter(|l| *l > 0.0 && l.is_finite());
    let (value, basis, source, inclusive) = match (published, limit, settings.rule) {
        (Some(_), Some(l), ThresholdRule::UncertaintyBased) => (
            l,
            ThresholdBasis::UncertaintyBased,
            UNCERTAINTY_RULE_SOURCE,
            false,
        ),
        (Some(p), _, _) => (p.value, ThresholdBasis::Published, p.source, p.inclusive),
        (None, Some(l), _) => (
            l,
            ThresholdBasis::UncertaintyBased,
            UNCERTAINTY_RULE_SOURCE,
            false,
        ),
        (None, None, _) => {
            return Err(NotEvaluable::because(
                "no input of this check has an uncertainty figure, and the check has no \
published threshold: give figures (or leave the built-in ones on)",
            ))
        }
    };
    let beyond = |x: f64| if inclusive { x >= value } else { x > value };
    let discordant = match side {
        Side::Both => beyond(statistic.abs()),
        Side::Positive => beyond(statistic),
        Side::Negative => beyond(-statistic),
    };
    let comparison = if inclusive { ">=" } else { ">" };
    let rule = match side {
        Side::Both => format!("discordant when |statistic| {comparison} threshold"),
        Side::Positive => format!("discordant when statistic {comparison} threshold"),
        Side::Negative => format!("discordant when -statistic {comparison} threshold"),
    };
    Ok((
        Threshold {
            value,
            basis,
            source: source.to_owned(),
            rule,
        },
        discordant,
    ))
}

/// The note sentence that compares the two rules, when both exist.
pub fn other_rule_note(threshold: &Threshold, published: Option<Published>) -> String {
    match (threshold.basis, published) {
        (ThresholdBasis::Published, Some(_)) => "The published threshold decided; the \
uncertainty-based limit is in uncertainty.expanded_uncertainty."
            .to_owned(),
        (ThresholdBasis::UncertaintyBased, Some(p)) => format!(
            "The uncertainty-based rule decided, as asked; the published threshold is {} ({}).",
            super::finding::plain_number(p.value),
            p.source
        ),
        _ => String::new(),
    }
}

/// The evaluated uncertainty, or `None` when no component has a figure.
pub fn usable(uncertainty: FindingUncertainty) -> Option<FindingUncertainty> {
    (uncertainty.standard_uncertainty > 0.0).then_some(uncertainty)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physiology::consistency::figures::Figure;
    use crate::physiology::model::DEFAULT_MODEL;
    use crate::physiology::uncertainty::Amount;

    fn settings(figures: Figures, rule: ThresholdRule) -> CheckSettings {
        CheckSettings {
            model: DEFAULT_MODEL,
            rule,
            coverage_probability: 0.95,
            figures,
        }
    }

    #[test]
    fn components_add_in_quadrature_with_the_normal_coverage_factor() {
        let mut figures = Figures::none();
        figures.set(FigureInput::Spo2, Figure::stated(Amount::absolute(0.03)));
        figures.set(FigureInput::So2, Figure::stated(Amount::absolute(0.04)));
        let mut budget = Budget::new();
        budget.input(&figures, FigureInput::Spo2, 0.9, 1.0);
        budget.input(&figures, FigureInput::So2, 0.9, -1.0);
        budget.input(&figures, FigureInput::Cohb, 0.05, 1.0);
        let u = budget.finish(0.95);
        assert!((u.standard_uncertainty - 0.05).abs() < 1e-15);
        assert!((u.expanded() - 0.05 * 1.959_963_984_540_054).abs() < 1e-12);
        assert_eq!(u.not_considered, [FigureInput::Cohb]);
    }

    #[test]
    fn the_calculated_saturation_is_the_models_with_the_engines_first_order_budget() {
        // Severinghaus Eq. 1 at 60 mmHg: 0.905797 (reference/methods.md
        // section 1 [D]); dS/dPO2 = 0.00415 per mmHg (assurance.md A.3 [D]).
        let mut figures = Figures::none();
        figures.set(FigureInput::Po2, Figure::stated(Amount::absolute(3.0)));
        let s = settings(figures, ThresholdRule::PublishedWhereAvailable);
        let mut budget = Budget::new();
        let sat = calculated_saturation(&s, 60.0, &Conditions::STANDARD, &mut budget).unwrap();
        assert!((sat - 0.905_797).abs() < 1e-6);
        let u = budget.finish(0.95);
        let po2 = &u.components[0];
        assert_eq!(po2.name, ComponentName::Input(FigureInput::Po2));
        assert!(
            (po2.contribution - 3.0 * 0.004_15).abs() < 2e-5,
            "{}",
            po2.contribution
        );
        assert!(u
            .components
            .iter()
            .any(|c| c.name == ComponentName::ModelSpread));
    }

    #[test]
    fn the_published_threshold_decides_unless_the_uncertainty_rule_is_asked_for() {
        let published = Published {
            value: 0.10,
            source: "a source",
            inclusive: true,
        };
        let mut figures = Figures::none();
        figures.set(FigureInput::Spo2, Figure::stated(Amount::absolute(0.01)));
        let mut budget = Budget::new();
        budget.input(&figures, FigureInput::Spo2, 0.9, 1.0);
        let u = budget.finish(0.95);
        let by_default = settings(Figures::none(), ThresholdRule::PublishedWhereAvailable);
        let (t, d) = decide(0.10, Side::Both, Some(published), Some(&u), &by_default).unwrap();
        assert_eq!(
            (t.value, t.basis, d),
            (0.10, ThresholdBasis::Published, true)
        );
        let (_, d) = decide(-0.0999, Side::Both, Some(published), Some(&u), &by_default).unwrap();
        assert!(!d);
        let asked = settings(Figures::none(), ThresholdRule::UncertaintyBased);
        let (t, d) = decide(0.03, Side::Both, Some(published), Some(&u), &asked).unwrap();
        assert_eq!(t.basis, ThresholdBasis::UncertaintyBased);
        assert!(d, "0.03 > 1.96 x 0.01");
        let (_, d) = decide(0.03, Side::Negative, None, Some(&u), &asked).unwrap();
        assert!(!d, "only a negative statistic counts");
        assert!(decide(0.03, Side::Both, None, None, &asked).is_err());
    }
}
