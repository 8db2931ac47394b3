//! Evaluating one derived value's uncertainty and writing it as an
//! `UncertaintyResult` in the response's unit system.

use oxbind_proto::v1::{
    CoverageInterval as WireInterval, CoverageIntervalKind, ExcludedModel, FigureOrigin,
    FirstOrderDetails, FirstOrderValidation, InputDistribution as WireDistribution,
    InputNotConsidered, ModelComponentStatus, ModelUncertaintyComponent, ModelValue,
    MonteCarloDetails, MonteCarloStability, NotConsideredReason, ProfileVerification, Quantity,
    SensitivityMethod, UncertaintyMethod, UncertaintyResult, UnitSystem, VarianceContribution,
    Warning, WarningCode, WarningSeverity,
};

use super::{
    inputs::{FigureUnit, InputRole},
    request::Requested,
};
use crate::{
    api::{
        field_path::FieldPath,
        status::{InvalidRequest, Violation, REASON_UNCERTAINTY_DRAWS, REASON_UNCERTAINTY_FIGURE},
        units::{self, QuantityKind},
        warnings::{warning, with_severity},
    },
    physiology::uncertainty::{
        self as engine,
        model_spread::ModelExclusion,
        monte_carlo::MonteCarloError,
        profiles::Verification,
        statement::{Conversion, InputDistribution},
        AbsentReason, CoverageInterval, DerivativeMethod, IntervalKind, MeasurementFunction,
        MethodUsed, ModelComponent, NotConsideredReason as EngineReason, UncertaintyError,
        UncertaintyEvaluation, UncertaintyWarning,
    },
};

/// The version of Oxbind's uncertainty evaluation (engine and API). It
/// changes whenever the implementation could change a result.
pub const UNCERTAINTY_METHOD_VERSION: &str = "1";

/// The published methods the evaluation follows.
pub const UNCERTAINTY_METHOD_REFERENCE: &str = "JCGM 100:2008 Evaluation of measurement data - Guide to the expression of uncertainty in measurement (GUM), clause 5.1.2 (law of propagation of uncertainty, first order, independent inputs); JCGM 101:2008 Supplement 1 to the GUM - Propagation of distributions using a Monte Carlo method, clauses 7 (Monte Carlo, coverage intervals 7.7, stability 7.9.4) and 8 (validation of the first-order result)";

/// The random-number generator of the Monte Carlo runs, pinned in
/// Cargo.toml so that a seed gives the same draws on every build.
pub const RANDOM_GENERATOR: &str = "ChaCha8 (rand_chacha 0.9.0, seeded by SeedableRng::seed_from_u64 with the seed's 64 bits); normal, rectangular and triangular draws by rand_distr 0.5.1, trapezoidal as the sum of two rectangular ones (JCGM 101:2008 6.4.4); rand 0.9.5";

/// The unit a derived value is reported in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueUnit {
    /// A fraction, unit `1`.
    Fraction,
    /// A pressure (or a pressure per unit fraction, as PaO2/FiO2): `mm[Hg]`
    /// or `kPa`.
    Pressure,
    /// A pressure per percentage point of saturation: `mm[Hg]/%` or `kPa/%`.
    PressurePerPercent,
    /// An oxygen content: `mL/dL` or `mmol/L`.
    OxygenContent,
}

/// A linear conversion from an engine unit to the response's unit.
#[derive(Debug, Clone)]
struct Scale {
    factor: f64,
    unit: String,
}

impl Scale {
    fn of_kind(kind: QuantityKind, system: UnitSystem) -> Scale {
        // Every output conversion is linear through 0 (temperatures are
        // reported in Cel whatever the system).
        let one = units::from_engine(1.0, kind, system);
        Scale {
            factor: one.value,
            unit: one.unit,
        }
    }

    fn of_value(unit: ValueUnit, system: UnitSystem) -> Scale {
        match unit {
            ValueUnit::Fraction => Scale::of_kind(QuantityKind::Fraction, system),
            ValueUnit::Pressure => Scale::of_kind(QuantityKind::Pressure, system),
            ValueUnit::PressurePerPercent => {
                let s = Scale::of_kind(QuantityKind::Pressure, system);
                Scale {
                    unit: format!("{}/%", s.unit),
                    ..s
                }
            }
            ValueUnit::OxygenContent => Scale::of_kind(QuantityKind::OxygenContent, system),
        }
    }

    fn of_input(unit: Option<FigureUnit>, system: UnitSystem) -> Scale {
        let plain = |u: &str| Scale {
            factor: 1.0,
            unit: u.to_owned(),
        };
        match unit {
            Some(FigureUnit::Kind(kind)) => Scale::of_kind(kind, system),
            Some(FigureUnit::Ph) => plain("[pH]"),
            Some(FigureUnit::HufnerFactor) => plain("mL/g"),
            Some(FigureUnit::Dimensionless) | None => plain("1"),
        }
    }

    fn quantity(&self, engine_value: f64) -> Option<Quantity> {
        Some(Quantity {
            value: engine_value * self.factor,
            unit: self.unit.clone(),
        })
    }

    fn interval(&self, interval: &CoverageInterval) -> Option<WireInterval> {
        Some(WireInterval {
            low: self.quantity(interval.low),
            high: self.quantity(interval.high),
            probability: interval.probability,
            kind: interval_kind(interval.kind) as i32,
        })
    }
}

fn interval_kind(kind: IntervalKind) -> CoverageIntervalKind {
    match kind {
        IntervalKind::FirstOrderNormal => CoverageIntervalKind::FirstOrderNormal,
        IntervalKind::ProbabilisticallySymmetric => {
            CoverageIntervalKind::ProbabilisticallySymmetric
        }
        IntervalKind::Shortest => CoverageIntervalKind::Shortest,
    }
}

/// The wire value of a profile's verification.
pub fn verification(v: Verification) -> ProfileVerification {
    match v {
        Verification::Verified => ProfileVerification::Verified,
        Verification::SecondarySource => ProfileVerification::SecondarySource,
        Verification::Unverified => ProfileVerification::Unverified,
    }
}

impl Requested {
    /// The uncertainty of the derived value `f`, reported in response field
    /// `value` in `unit` of `system`.
    ///
    /// # Errors
    ///
    /// The engine's refusal, naming the uncertainty field concerned.
    pub fn evaluate<F: MeasurementFunction + ?Sized>(
        &self,
        value: &'static str,
        f: &F,
        unit: ValueUnit,
        system: UnitSystem,
    ) -> Result<UncertaintyResult, InvalidRequest> {
        let evaluation =
            engine::evaluate_uncertainty(f, &self.engine).map_err(|e| self.refusal(&e))?;
        let linearity = match evaluation.method {
            MethodUsed::FirstOrder => {
                engine::linearity(f, &evaluation.first_order, self.engine.significant_digits)
            }
            MethodUsed::MonteCarlo => None,
        };
        let scale = Scale::of_value(unit, system);
        Ok(UncertaintyResult {
            value: value.to_owned(),
            estimate: scale.quantity(evaluation.estimate),
            standard_uncertainty: scale.quantity(evaluation.standard_uncertainty),
            interval: scale.interval(&evaluation.interval),
            method: match evaluation.method {
                MethodUsed::FirstOrder => UncertaintyMethod::FirstOrder,
                MethodUsed::MonteCarlo => UncertaintyMethod::MonteCarlo,
            } as i32,
            method_version: UNCERTAINTY_METHOD_VERSION.to_owned(),
            method_reference: UNCERTAINTY_METHOD_REFERENCE.to_owned(),
            first_order: Some(FirstOrderDetails {
                standard_uncertainty: scale.quantity(evaluation.first_order.standard_uncertainty),
                coverage_factor: evaluation.first_order.coverage_factor,
                interval: scale.interval(&evaluation.first_order.interval),
            }),
            monte_carlo: evaluation
                .monte_carlo
                .as_ref()
                .map(|mc| monte_carlo(mc, &scale)),
            validation: evaluation.validation.map(|v| FirstOrderValidation {
                significant_digits: i32::from(v.significant_digits),
                tolerance: scale.quantity(v.tolerance),
                lower_difference: scale.quantity(v.lower_difference),
                upper_difference: scale.quantity(v.upper_difference),
                passed: v.passed,
            }),
            budget: self.budget(&evaluation, &scale, system),
            model_component: Some(model_component(&evaluation, &scale)),
            not_considered: self.not_considered(&evaluation),
            warnings: self.warnings(&evaluation, linearity),
        })
    }

    fn budget(
        &self,
        evaluation: &UncertaintyEvaluation,
        value: &Scale,
        system: UnitSystem,
    ) -> Vec<VarianceContribution> {
        evaluation
            .budget()
            .iter()
            .map(|line| {
                let input = Scale::of_input(self.table.unit_of(line.input), system);
                let used = evaluation.figures.iter().find(|f| f.input == line.input);
                let (sensitivity_method, error) = match line.derivative {
                    DerivativeMethod::Exact => (SensitivityMethod::Exact, 0.0),
                    DerivativeMethod::Numerical {
                        error_estimate,
                        one_sided,
                        ..
                    } => (
                        if one_sided {
                            SensitivityMethod::NumericalOneSided
                        } else {
                            SensitivityMethod::Numerical
                        },
                        error_estimate,
                    ),
                };
                // c in reported units: value unit per input unit.
                let c_scale = value.factor / input.factor;
                let (origin, profile_id, profile_verification) = match used.map(|u| &u.source) {
                    Some(engine::UsedSource::Profile {
                        id,
                        verification: v,
                    }) => (FigureOrigin::Profile, id.clone(), verification(*v)),
                    _ => (
                        FigureOrigin::Stated,
                        String::new(),
                        ProfileVerification::Unspecified,
                    ),
                };
                VarianceContribution {
                    field: self.path_of(line.input),
                    estimate: input.quantity(line.estimate),
                    standard_uncertainty: input.quantity(line.standard_uncertainty),
                    sensitivity: line.sensitivity * c_scale,
                    sensitivity_method: sensitivity_method as i32,
                    sensitivity_error_estimate: error * c_scale.abs(),
                    contribution: value.quantity(line.contribution),
                    variance_share: line.variance_share,
                    origin: origin as i32,
                    profile_id,
                    profile_verification: profile_verification as i32,
                    divisor: match used.map(|u| u.conversion) {
                        Some(Conversion::Divided { divisor, .. }) => divisor,
                        _ => 1.0,
                    },
                    distribution: used.map_or(WireDistribution::Unspecified, |u| {
                        match u.distribution {
                            InputDistribution::Normal { .. } => WireDistribution::Normal,
                            InputDistribution::Rectangular { .. } => WireDistribution::Rectangular,
                            InputDistribution::Triangular { .. } => WireDistribution::Triangular,
                            InputDistribution::Trapezoidal { .. } => WireDistribution::Trapezoidal,
                        }
                    }) as i32,
                }
            })
            .collect()
    }

    fn not_considered(&self, evaluation: &UncertaintyEvaluation) -> Vec<InputNotConsidered> {
        let mut out: Vec<InputNotConsidered> = evaluation
            .not_considered
            .iter()
            .map(|n| {
                let (reason, message) = match n.reason {
                    EngineReason::NoFigure => (
                        NotConsideredReason::NoFigure,
                        "no figure was given for this input, and no profile set named covers it: it adds nothing".to_owned(),
                    ),
                    EngineReason::Absent(AbsentReason::NotAnInput) => (
                        NotConsideredReason::NotAnInput,
                        "this value does not depend on this input".to_owned(),
                    ),
                    EngineReason::Absent(AbsentReason::ValueNotGiven) => (
                        NotConsideredReason::ValueNotGiven,
                        "the input was not given: its default is a definition, not a measurement, and carries no uncertainty".to_owned(),
                    ),
                    EngineReason::Absent(AbsentReason::NotHonouredByModel(model)) => (
                        NotConsideredReason::NotHonouredByModel,
                        format!("model {model} does not take this condition into account"),
                    ),
                    EngineReason::Absent(AbsentReason::NotPropagated(why)) => {
                        (NotConsideredReason::NotPropagated, why.to_owned())
                    }
                };
                InputNotConsidered {
                    field: self.path_of(n.input),
                    reason: reason as i32,
                    message,
                }
            })
            .collect();
        for figure in &self.outside {
            let (reason, message) = match figure.role {
                InputRole::NotPropagated(why) => (NotConsideredReason::NotPropagated, why),
                _ => (
                    NotConsideredReason::NotAnInput,
                    "no value with an uncertainty evaluation depends on this input",
                ),
            };
            out.push(InputNotConsidered {
                field: figure.path.clone(),
                reason: reason as i32,
                message: message.to_owned(),
            });
        }
        out
    }

    fn warnings(
        &self,
        evaluation: &UncertaintyEvaluation,
        linearity: Option<engine::Linearity>,
    ) -> Vec<Warning> {
        let mut out = Vec::new();
        let any_uncertainty = evaluation
            .figures
            .iter()
            .any(|f| f.standard_uncertainty > 0.0);
        for w in &evaluation.warnings {
            let (code, field) = match w {
                UncertaintyWarning::FirstOrderNotValidated(_) => (
                    WarningCode::UncertaintyFirstOrderNotValidated,
                    String::new(),
                ),
                UncertaintyWarning::StronglyAsymmetric { .. } => {
                    (WarningCode::UncertaintyAsymmetricInterval, String::new())
                }
                UncertaintyWarning::DefaultFiguresUsed { .. } => {
                    (WarningCode::UncertaintyDefaultFigures, String::new())
                }
                UncertaintyWarning::PulseOximetryBiasNotIncluded => (
                    WarningCode::UncertaintyPulseOximetryBiasNotIncluded,
                    evaluation
                        .figures
                        .iter()
                        .find(|f| f.input == engine::InputQuantity::Spo2)
                        .map(|f| self.path_of(f.input))
                        .unwrap_or_default(),
                ),
                UncertaintyWarning::DrawsRedrawn { .. } => {
                    (WarningCode::UncertaintyDrawsRedrawn, String::new())
                }
                UncertaintyWarning::BeyondValidatedRange { input, .. } => (
                    WarningCode::UncertaintyDrawsBeyondValidatedRange,
                    self.path_of(*input),
                ),
                UncertaintyWarning::MonteCarloNotStable { .. } => {
                    (WarningCode::UncertaintyMonteCarloNotStable, String::new())
                }
                UncertaintyWarning::NoInputUncertainty => {
                    (WarningCode::UncertaintyNoInputFigures, String::new())
                }
            };
            out.push(warning(code, field, w.message()));
        }
        // Built-in figures not read at their source, one warning each.
        for figure in &evaluation.figures {
            if let engine::UsedSource::Profile { id, verification } = &figure.source {
                if *verification != Verification::Verified {
                    out.push(warning(
                        WarningCode::UncertaintyUnverifiedFigure,
                        self.path_of(figure.input),
                        format!(
                            "the figure of profile {id} is {}: it was not read at its source (ListModels says where it comes from); check it before relying on it",
                            match verification {
                                Verification::SecondarySource => "quoted from a secondary source",
                                _ => "unverified",
                            }
                        ),
                    ));
                }
            }
        }
        if evaluation.method == MethodUsed::FirstOrder && any_uncertainty {
            match linearity {
                Some(l) if !l.linear => out.push(warning(
                    WarningCode::UncertaintyNonlinear,
                    self.path_of(l.input),
                    "over the stated interval of this input the value departs from the straight line the first-order method assumes (by more than the numerical tolerance of its standard uncertainty), or the interval reaches beyond what the input can be: the first-order interval misstates it; ask for UNCERTAINTY_METHOD_MONTE_CARLO",
                )),
                _ => {}
            }
            out.push(with_severity(
                WarningCode::UncertaintyFirstOrderNotValidated,
                WarningSeverity::Informational,
                String::new(),
                "only the first order was asked for: its interval was not validated against a Monte Carlo one (JCGM 101:2008 clause 8)",
            ));
        }
        out
    }

    /// The refusal for an engine error, naming the uncertainty field
    /// concerned.
    fn refusal(&self, error: &UncertaintyError) -> InvalidRequest {
        let root = FieldPath::ROOT;
        let path = root.field("uncertainty");
        let figure_of = |input: engine::InputQuantity| {
            self.engine
                .figures
                .iter()
                .position(|f| f.input == input)
                .map(|i| format!("uncertainty.inputs[{i}]"))
                .unwrap_or_else(|| "uncertainty.inputs".to_owned())
        };
        let (field, reason) = match error {
            UncertaintyError::Statement(e) => (figure_of(e.input), REASON_UNCERTAINTY_FIGURE),
            UncertaintyError::UnknownProfile { input, .. }
            | UncertaintyError::ProfileForAnotherInput { input, .. }
            | UncertaintyError::DuplicateFigure { input } => {
                (figure_of(*input), REASON_UNCERTAINTY_FIGURE)
            }
            UncertaintyError::MonteCarlo(MonteCarloError::BadDistribution { input }) => {
                (figure_of(*input), REASON_UNCERTAINTY_FIGURE)
            }
            UncertaintyError::UnknownProfileSet { .. } => (
                path.field("profile_sets").render(),
                REASON_UNCERTAINTY_FIGURE,
            ),
            UncertaintyError::CoverageProbability => (
                path.field("coverage_probability").render(),
                limits_reason(&crate::api::limits::UNCERTAINTY_COVERAGE_PROBABILITY),
            ),
            UncertaintyError::SignificantDigits => (
                path.field("significant_digits").render(),
                limits_reason(&crate::api::limits::UNCERTAINTY_SIGNIFICANT_DIGITS),
            ),
            UncertaintyError::MonteCarlo(MonteCarloError::DrawsOutOfRange { .. }) => (
                path.field("draw_count").render(),
                limits_reason(&crate::api::limits::UNCERTAINTY_DRAWS),
            ),
            UncertaintyError::MonteCarlo(MonteCarloError::TooManyRejected { .. }) => {
                (path.field("inputs").render(), REASON_UNCERTAINTY_DRAWS)
            }
            UncertaintyError::Physiology(e) => {
                return InvalidRequest::one(Violation::from_physiology_at(path.render(), e));
            }
            UncertaintyError::ProfileTable(_) => (path.render(), REASON_UNCERTAINTY_FIGURE),
        };
        InvalidRequest::one(Violation {
            description: format!("{field}: {error}"),
            reason,
            metadata: Vec::new(),
            field,
        })
    }
}

fn limits_reason(limit: &crate::api::limits::HardLimit) -> &'static str {
    limit.error_reason
}

fn monte_carlo(mc: &engine::MonteCarloResult, scale: &Scale) -> MonteCarloDetails {
    MonteCarloDetails {
        draw_count: mc.draws as i64,
        // The seed's 64 bits as the request gave them.
        seed: mc.seed as i64,
        generator: RANDOM_GENERATOR.to_owned(),
        mean: scale.quantity(mc.mean),
        standard_uncertainty: scale.quantity(mc.standard_uncertainty),
        interval: scale.interval(&mc.interval),
        redrawn_outside_domain_count: mc.rejected_outside_domain as i64,
        redrawn_refused_count: mc.rejected_by_model as i64,
        stability: mc.stability.map(|s| MonteCarloStability {
            block_count: s.blocks as i32,
            block_draw_count: s.block_draws as i32,
            mean_spread: scale.quantity(s.mean),
            standard_uncertainty_spread: scale.quantity(s.standard_uncertainty),
            low_spread: scale.quantity(s.low),
            high_spread: scale.quantity(s.high),
            tolerance: scale.quantity(s.tolerance),
            stable: s.stable,
        }),
    }
}

fn model_component(evaluation: &UncertaintyEvaluation, scale: &Scale) -> ModelUncertaintyComponent {
    match &evaluation.model_component {
        ModelComponent::Computed(spread) => ModelUncertaintyComponent {
            status: ModelComponentStatus::Computed as i32,
            reason: String::new(),
            standard_uncertainty: scale.quantity(spread.standard_uncertainty),
            half_range: scale.quantity(spread.half_range),
            combined_standard_uncertainty: evaluation
                .standard_uncertainty_with_model()
                .and_then(|u| scale.quantity(u)),
            values: spread
                .values
                .iter()
                .map(|v| ModelValue {
                    model_id: v.model.to_owned(),
                    value: scale.quantity(v.value),
                })
                .collect(),
            excluded: spread
                .excluded
                .iter()
                .map(|x| ExcludedModel {
                    model_id: x.model.to_owned(),
                    reason: match x.reason {
                        ModelExclusion::DoesNotHonour(c) => format!(
                            "does not take {} into account",
                            crate::api::warnings::condition_field(c)
                        ),
                        ModelExclusion::Refused => {
                            "its equation is not defined at these inputs".to_owned()
                        }
                    },
                })
                .collect(),
            includes_chosen_model: spread.includes_chosen_model,
        },
        ModelComponent::NotApplicable(why) => ModelUncertaintyComponent {
            status: ModelComponentStatus::NotApplicable as i32,
            reason: (*why).to_owned(),
            ..Default::default()
        },
        ModelComponent::NotRequested => ModelUncertaintyComponent {
            status: ModelComponentStatus::Omitted as i32,
            ..Default::default()
        },
    }
}

/// The response warning that some of its values have no uncertainty
/// evaluation, when `values` is not empty.
pub fn not_evaluated(values: &[&str]) -> Option<Warning> {
    if values.is_empty() {
        return None;
    }
    Some(warning(
        WarningCode::UncertaintyNotEvaluated,
        String::new(),
        format!(
            "no uncertainty is evaluated for {}: the uncertainties list covers the other values",
            values.join(", ")
        ),
    ))
}
