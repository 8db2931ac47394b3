//! One uncertainty evaluation of one derived value: resolve the stated
//! figures, propagate them (first order always, Monte Carlo on request),
//! validate, add the model component, and say honestly what was left out.

use super::coverage::{validate, CoverageInterval, Validation};
use super::first_order::{self, BudgetLine, FirstOrderResult};
use super::function::{AbsentReason, DerivedQuantity, MeasurementFunction};
use super::model_spread::{model_component, ModelComponent};
use super::monte_carlo::{self, MonteCarloError, MonteCarloOptions, MonteCarloResult};
use super::profiles::{profile, profile_in_set, profile_sets, ProfileTableError, Verification};
use super::quantity::InputQuantity;
use super::statement::{Conversion, InputDistribution, Statement, StatementError};
use crate::physiology::error::PhysiologyError;
use std::fmt;

/// The coverage probability used unless the caller asks for another.
pub const DEFAULT_COVERAGE_PROBABILITY: f64 = 0.95;
/// Smallest coverage probability accepted (our limit: below one half an
/// interval says little).
pub const MIN_COVERAGE_PROBABILITY: f64 = 0.5;
/// Largest coverage probability accepted (our limit: 0.999 already needs
/// 10⁵ draws, a tenth of [`monte_carlo::MAX_DRAWS`]).
pub const MAX_COVERAGE_PROBABILITY: f64 = 0.999;
/// Significant digits regarded as meaningful in u(y) for the numerical
/// tolerance δ (JCGM 101 clause 7.9.2 says usually one or two).
pub const DEFAULT_SIGNIFICANT_DIGITS: u8 = 2;
/// Largest number of significant digits accepted.
pub const MAX_SIGNIFICANT_DIGITS: u8 = 4;
/// An interval whose longer side from the estimate exceeds the shorter one by
/// this ratio is reported as strongly asymmetric (our judgement: at 1.5 a
/// "± value" misstates one side by a third or more).
pub const ASYMMETRY_RATIO_WARNING: f64 = 1.5;
/// Share of Monte Carlo draws redrawn (an input left its domain) above which
/// the truncation is reported (our judgement).
pub const REDRAWN_FRACTION_WARNING: f64 = 0.001;
/// Share of kept draws beyond a method's validated range above which it is
/// reported (our judgement).
pub const BEYOND_VALIDATED_FRACTION_WARNING: f64 = 0.01;

/// Where an input's figure comes from, as the caller gives it.
#[derive(Debug, Clone, PartialEq)]
pub enum FigureSource {
    /// The caller's own statement.
    Stated(Statement),
    /// A built-in profile, by id (see [`super::profiles`]).
    Profile(String),
}

/// The caller's figure for one input.
#[derive(Debug, Clone, PartialEq)]
pub struct InputFigure {
    /// The input.
    pub input: InputQuantity,
    /// The figure.
    pub source: FigureSource,
}

/// The evaluation method asked for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Method {
    /// The law of propagation of uncertainty, first order (JCGM 100:2008).
    FirstOrder,
    /// A Monte Carlo method (JCGM 101:2008), with the first-order result
    /// alongside and validated against it (clause 8).
    MonteCarlo(MonteCarloOptions),
}

/// What the caller asks for.
#[derive(Debug, Clone, PartialEq)]
pub struct UncertaintyRequest {
    /// Figures per input (at most one per input).
    pub figures: Vec<InputFigure>,
    /// Profile sets applied, in order, to inputs without a figure.
    pub profile_sets: Vec<String>,
    /// The method.
    pub method: Method,
    /// Coverage probability p of the interval.
    pub coverage_probability: f64,
    /// Significant digits of u(y) for the numerical tolerance δ.
    pub significant_digits: u8,
    /// Whether to compute the model component.
    pub model_component: bool,
}

impl Default for UncertaintyRequest {
    fn default() -> Self {
        UncertaintyRequest {
            figures: Vec::new(),
            profile_sets: Vec::new(),
            method: Method::FirstOrder,
            coverage_probability: DEFAULT_COVERAGE_PROBABILITY,
            significant_digits: DEFAULT_SIGNIFICANT_DIGITS,
            model_component: true,
        }
    }
}

/// Where a used figure came from.
#[derive(Debug, Clone, PartialEq)]
pub enum UsedSource {
    /// The caller's statement.
    Stated,
    /// A built-in profile.
    Profile {
        /// Its id.
        id: String,
        /// How far its figure was verified.
        verification: Verification,
    },
}

/// A figure as used for one input.
#[derive(Debug, Clone, PartialEq)]
pub struct UsedFigure {
    /// The input.
    pub input: InputQuantity,
    /// Where it came from.
    pub source: UsedSource,
    /// u(x), engine unit.
    pub standard_uncertainty: f64,
    /// How u(x) was obtained from the figure.
    pub conversion: Conversion,
    /// The distribution assigned for the Monte Carlo method.
    pub distribution: InputDistribution,
}

/// Why an input did not contribute.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NotConsideredReason {
    /// An input of the value, but no figure was given (and no named profile
    /// set covers it): it adds nothing.
    NoFigure,
    /// A figure was given for a quantity that is not an input here.
    Absent(AbsentReason),
}

/// An input that was not considered.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct NotConsidered {
    /// The input.
    pub input: InputQuantity,
    /// Why.
    pub reason: NotConsideredReason,
}

/// The method whose result is reported at the top of an evaluation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MethodUsed {
    /// JCGM 100:2008 first order.
    FirstOrder,
    /// JCGM 101:2008 Monte Carlo.
    MonteCarlo,
}

/// A condition the caller should know about.
#[derive(Debug, Clone, PartialEq)]
pub enum UncertaintyWarning {
    /// The first-order interval fails the JCGM 101 clause 8 validation: use
    /// the Monte Carlo interval.
    FirstOrderNotValidated(Validation),
    /// The reported interval is strongly asymmetric about the estimate.
    StronglyAsymmetric {
        /// estimate − low.
        below: f64,
        /// high − estimate.
        above: f64,
    },
    /// Built-in default figures were used instead of the laboratory's own.
    DefaultFiguresUsed {
        /// The profiles used, with their verification.
        profiles: Vec<(String, Verification)>,
    },
    /// A pulse-oximeter accuracy profile was used: it comes from laboratory
    /// studies in healthy volunteers and leaves out bias by skin
    /// pigmentation, perfusion and dyshaemoglobins.
    PulseOximetryBiasNotIncluded,
    /// Draws were redrawn because an input left its physical domain (the
    /// input distribution is in effect truncated there).
    DrawsRedrawn {
        /// Share of attempts redrawn.
        fraction: f64,
    },
    /// Draws of an input went beyond the range the method was validated for.
    BeyondValidatedRange {
        /// The input.
        input: InputQuantity,
        /// Share of kept draws beyond it.
        fraction: f64,
    },
    /// The Monte Carlo result is not stable to its numerical tolerance: more
    /// draws are needed.
    MonteCarloNotStable {
        /// The tolerance δ that was not met.
        tolerance: f64,
    },
    /// No input had a figure: the uncertainty shown is zero and means nothing.
    NoInputUncertainty,
}

impl UncertaintyWarning {
    /// A stable lower_snake_case code.
    pub const fn code(&self) -> &'static str {
        match self {
            UncertaintyWarning::FirstOrderNotValidated(_) => "first_order_not_validated",
            UncertaintyWarning::StronglyAsymmetric { .. } => "strongly_asymmetric_interval",
            UncertaintyWarning::DefaultFiguresUsed { .. } => "default_figures_used",
            UncertaintyWarning::PulseOximetryBiasNotIncluded => "pulse_oximetry_bias_not_included",
            UncertaintyWarning::DrawsRedrawn { .. } => "draws_redrawn_outside_domain",
            UncertaintyWarning::BeyondValidatedRange { .. } => "draws_beyond_validated_range",
            UncertaintyWarning::MonteCarloNotStable { .. } => "monte_carlo_not_stable",
            UncertaintyWarning::NoInputUncertainty => "no_input_uncertainty",
        }
    }

    /// An English sentence for a person (no patient values).
    pub fn message(&self) -> String {
        match self {
            UncertaintyWarning::FirstOrderNotValidated(v) => format!(
                "the first-order interval differs from the Monte Carlo interval by more than the numerical tolerance {:e} (JCGM 101 clause 8): rely on the Monte Carlo interval",
                v.tolerance
            ),
            UncertaintyWarning::StronglyAsymmetric { .. } => format!(
                "the interval is strongly asymmetric about the value (one side more than {ASYMMETRY_RATIO_WARNING} times the other): a symmetric ± figure would misstate it"
            ),
            UncertaintyWarning::DefaultFiguresUsed { profiles } => format!(
                "built-in default figures were used ({}); a laboratory's own imprecision and a device's own accuracy describe its results better",
                profiles
                    .iter()
                    .map(|(id, v)| format!("{id}, {}", v.name()))
                    .collect::<Vec<_>>()
                    .join("; ")
            ),
            UncertaintyWarning::PulseOximetryBiasNotIncluded => "pulse-oximeter accuracy figures come from laboratory studies in healthy volunteers: bias by skin pigmentation, low perfusion and dyshaemoglobins is not included unless given".to_owned(),
            UncertaintyWarning::DrawsRedrawn { fraction } => format!(
                "{:.1} % of Monte Carlo draws fell outside an input's physical range and were redrawn: the stated distribution is truncated there",
                100.0 * fraction
            ),
            UncertaintyWarning::BeyondValidatedRange { input, fraction } => format!(
                "{:.1} % of Monte Carlo draws of {} lay beyond the range the method was validated for",
                100.0 * fraction,
                input.name()
            ),
            UncertaintyWarning::MonteCarloNotStable { tolerance } => format!(
                "the Monte Carlo results vary between blocks of draws by more than the numerical tolerance {tolerance:e}: ask for more draws"
            ),
            UncertaintyWarning::NoInputUncertainty => "no input of this value had an uncertainty figure: the uncertainty shown is zero and means nothing".to_owned(),
        }
    }
}

/// The uncertainty of one derived value.
#[derive(Debug, Clone, PartialEq)]
pub struct UncertaintyEvaluation {
    /// What the value is.
    pub quantity: DerivedQuantity,
    /// The estimate y = f(x) (the value the service reports).
    pub estimate: f64,
    /// The standard uncertainty by the method used.
    pub standard_uncertainty: f64,
    /// The coverage interval by the method used.
    pub interval: CoverageInterval,
    /// The method used for the three fields above.
    pub method: MethodUsed,
    /// The figures used, one per considered input.
    pub figures: Vec<UsedFigure>,
    /// The first-order result (always computed; holds the variance budget).
    pub first_order: FirstOrderResult,
    /// The Monte Carlo result, when asked for.
    pub monte_carlo: Option<MonteCarloResult>,
    /// The clause 8 validation, when Monte Carlo ran.
    pub validation: Option<Validation>,
    /// The model component.
    pub model_component: ModelComponent,
    /// Inputs not considered, with the reason.
    pub not_considered: Vec<NotConsidered>,
    /// Warnings.
    pub warnings: Vec<UncertaintyWarning>,
}

impl UncertaintyEvaluation {
    /// The engine unit of the value (UCUM).
    pub fn unit(&self) -> &'static str {
        self.quantity.unit()
    }

    /// The variance budget: each input's first-order contribution and share.
    pub fn budget(&self) -> &[BudgetLine] {
        &self.first_order.budget
    }

    /// Monte Carlo draws, if it ran.
    pub fn draws(&self) -> Option<usize> {
        self.monte_carlo.as_ref().map(|m| m.draws)
    }

    /// Monte Carlo seed, if it ran.
    pub fn seed(&self) -> Option<u64> {
        self.monte_carlo.as_ref().map(|m| m.seed)
    }

    /// √(u² + u_model²), when the model component was computed.
    pub fn standard_uncertainty_with_model(&self) -> Option<f64> {
        match &self.model_component {
            ModelComponent::Computed(spread) => Some(
                (self.standard_uncertainty.powi(2) + spread.standard_uncertainty.powi(2)).sqrt(),
            ),
            _ => None,
        }
    }
}

/// Why an evaluation was refused. Messages name inputs and limits, never
/// patient values.
#[derive(Debug, Clone, PartialEq)]
pub enum UncertaintyError {
    /// A stated figure is unusable.
    Statement(StatementError),
    /// No built-in profile has this id.
    UnknownProfile {
        /// The input it was named for.
        input: InputQuantity,
        /// The id.
        id: String,
    },
    /// The profile is a figure for another input.
    ProfileForAnotherInput {
        /// The input it was named for.
        input: InputQuantity,
        /// The id.
        id: String,
        /// The input the profile is for.
        profile_input: InputQuantity,
    },
    /// No built-in profile set has this name.
    UnknownProfileSet {
        /// The name.
        set: String,
    },
    /// Two figures for one input.
    DuplicateFigure {
        /// The input.
        input: InputQuantity,
    },
    /// The coverage probability is outside the accepted range.
    CoverageProbability,
    /// The number of significant digits is outside 1 to
    /// [`MAX_SIGNIFICANT_DIGITS`].
    SignificantDigits,
    /// The Monte Carlo run could not be completed.
    MonteCarlo(MonteCarloError),
    /// The physiology function refused the estimates.
    Physiology(PhysiologyError),
    /// The built-in profile table is malformed (a build defect).
    ProfileTable(ProfileTableError),
}

impl fmt::Display for UncertaintyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            UncertaintyError::Statement(e) => e.fmt(f),
            UncertaintyError::UnknownProfile { input, id } => {
                write!(f, "uncertainty of {}: no built-in profile {id}", input.name())
            }
            UncertaintyError::ProfileForAnotherInput {
                input,
                id,
                profile_input,
            } => write!(
                f,
                "uncertainty of {}: profile {id} is a figure for {}",
                input.name(),
                profile_input.name()
            ),
            UncertaintyError::UnknownProfileSet { set } => {
                write!(f, "no built-in profile set {set}")
            }
            UncertaintyError::DuplicateFigure { input } => {
                write!(f, "uncertainty of {}: given more than once", input.name())
            }
            UncertaintyError::CoverageProbability => write!(
                f,
                "coverage probability must lie between {MIN_COVERAGE_PROBABILITY} and {MAX_COVERAGE_PROBABILITY}"
            ),
            UncertaintyError::SignificantDigits => write!(
                f,
                "significant digits must lie between 1 and {MAX_SIGNIFICANT_DIGITS}"
            ),
            UncertaintyError::MonteCarlo(MonteCarloError::DrawsOutOfRange { min, max, .. }) => {
                write!(f, "Monte Carlo draws must lie between {min} and {max}")
            }
            UncertaintyError::MonteCarlo(MonteCarloError::TooManyRejected { .. }) => write!(
                f,
                "the stated input distributions put most Monte Carlo draws outside what the inputs can physically be"
            ),
            UncertaintyError::MonteCarlo(MonteCarloError::BadDistribution { input }) => write!(
                f,
                "uncertainty of {}: no distribution can be formed from the figure",
                input.name()
            ),
            UncertaintyError::Physiology(e) => e.fmt(f),
            UncertaintyError::ProfileTable(e) => e.fmt(f),
        }
    }
}

impl std::error::Error for UncertaintyError {}

impl From<PhysiologyError> for UncertaintyError {
    fn from(e: PhysiologyError) -> Self {
        UncertaintyError::Physiology(e)
    }
}

impl From<ProfileTableError> for UncertaintyError {
    fn from(e: ProfileTableError) -> Self {
        UncertaintyError::ProfileTable(e)
    }
}

impl From<StatementError> for UncertaintyError {
    fn from(e: StatementError) -> Self {
        UncertaintyError::Statement(e)
    }
}

/// Evaluate the uncertainty of the value `f` as `request` asks.
///
/// The first-order result (JCGM 100:2008 5.1.2) is always computed and holds
/// the variance budget. With [`Method::MonteCarlo`] the reported standard
/// uncertainty and interval are the Monte Carlo ones (JCGM 101:2008 7.6, 7.7)
/// and the first-order interval is validated against them (clause 8). The
/// estimate is always f(x), the value the service reports; the mean of the
/// draws is in [`MonteCarloResult::mean`].
///
/// # Errors
///
/// [`UncertaintyError`] for unusable figures, unknown or mismatched profiles,
/// duplicate figures, settings outside their limits, a refused estimate or an
/// abandoned Monte Carlo run.
pub fn evaluate_uncertainty<F: MeasurementFunction + ?Sized>(
    f: &F,
    request: &UncertaintyRequest,
) -> Result<UncertaintyEvaluation, UncertaintyError> {
    let p = request.coverage_probability;
    if !(MIN_COVERAGE_PROBABILITY..=MAX_COVERAGE_PROBABILITY).contains(&p) {
        return Err(UncertaintyError::CoverageProbability);
    }
    if !(1..=MAX_SIGNIFICANT_DIGITS).contains(&request.significant_digits) {
        return Err(UncertaintyError::SignificantDigits);
    }
    let resolved = resolve_figures(f, request)?;
    let uncertainties: Vec<Option<f64>> = resolved
        .slot_figures
        .iter()
        .map(|u| u.as_ref().map(|u| u.standard_uncertainty))
        .collect();
    let first_order = first_order::propagate(f, &uncertainties, p)?;

    let monte_carlo = match request.method {
        Method::FirstOrder => None,
        Method::MonteCarlo(options) => {
            let distributions: Vec<Option<InputDistribution>> = resolved
                .slot_figures
                .iter()
                .map(|u| u.as_ref().map(|u| u.distribution))
                .collect();
            Some(
                monte_carlo::propagate(f, &distributions, p, request.significant_digits, &options)
                    .map_err(UncertaintyError::MonteCarlo)?,
            )
        }
    };
    let validation = monte_carlo.as_ref().map(|mc| {
        validate(
            &first_order.interval,
            first_order.standard_uncertainty,
            &mc.interval,
            request.significant_digits,
        )
    });
    let (method, standard_uncertainty, interval) = match &monte_carlo {
        Some(mc) => (MethodUsed::MonteCarlo, mc.standard_uncertainty, mc.interval),
        None => (
            MethodUsed::FirstOrder,
            first_order.standard_uncertainty,
            first_order.interval,
        ),
    };
    let model_component = if request.model_component {
        model_component(f)
    } else {
        ModelComponent::NotRequested
    };
    let figures: Vec<UsedFigure> = resolved.slot_figures.into_iter().flatten().collect();
    let warnings = warnings(
        first_order.estimate,
        &interval,
        &figures,
        monte_carlo.as_ref(),
        validation.as_ref(),
    );
    Ok(UncertaintyEvaluation {
        quantity: f.quantity(),
        estimate: first_order.estimate,
        standard_uncertainty,
        interval,
        method,
        figures,
        first_order,
        monte_carlo,
        validation,
        model_component,
        not_considered: resolved.not_considered,
        warnings,
    })
}

struct ResolvedFigures {
    /// One entry per slot.
    slot_figures: Vec<Option<UsedFigure>>,
    not_considered: Vec<NotConsidered>,
}

fn resolve_figures<F: MeasurementFunction + ?Sized>(
    f: &F,
    request: &UncertaintyRequest,
) -> Result<ResolvedFigures, UncertaintyError> {
    for (i, figure) in request.figures.iter().enumerate() {
        if request.figures[..i].iter().any(|g| g.input == figure.input) {
            return Err(UncertaintyError::DuplicateFigure {
                input: figure.input,
            });
        }
    }
    if !request.profile_sets.is_empty() {
        let known = profile_sets()?;
        if let Some(unknown) = request
            .profile_sets
            .iter()
            .find(|s| !known.contains(&s.as_str()))
        {
            return Err(UncertaintyError::UnknownProfileSet {
                set: unknown.clone(),
            });
        }
    }
    // Every figure is checked, also those for quantities that turn out not to
    // be inputs here, so that a mistake is refused rather than ignored.
    for figure in &request.figures {
        match &figure.source {
            FigureSource::Stated(statement) => statement.check(figure.input)?,
            FigureSource::Profile(id) => {
                profile_for(figure.input, id)?;
            }
        }
    }
    let slots = f.slots();
    let mut slot_figures = Vec::with_capacity(slots.len());
    let mut not_considered = Vec::new();
    for slot in slots {
        let explicit = request.figures.iter().find(|g| g.input == slot.quantity);
        let (statement, source) = match explicit {
            Some(InputFigure {
                source: FigureSource::Stated(statement),
                ..
            }) => (Some(*statement), UsedSource::Stated),
            Some(InputFigure {
                source: FigureSource::Profile(id),
                input,
            }) => {
                let p = profile_for(*input, id)?;
                (
                    Some(p.statement),
                    UsedSource::Profile {
                        id: p.id.clone(),
                        verification: p.verification,
                    },
                )
            }
            None => {
                let mut found = None;
                for set in &request.profile_sets {
                    if let Some(p) = profile_in_set(set, slot.quantity.measured_as())? {
                        found = Some((
                            p.statement,
                            UsedSource::Profile {
                                id: p.id.clone(),
                                verification: p.verification,
                            },
                        ));
                        break;
                    }
                }
                match found {
                    Some((statement, source)) => (Some(statement), source),
                    None => (None, UsedSource::Stated),
                }
            }
        };
        match statement {
            Some(statement) => {
                let r = statement.resolve(slot.quantity, slot.estimate)?;
                slot_figures.push(Some(UsedFigure {
                    input: slot.quantity,
                    source,
                    standard_uncertainty: r.standard_uncertainty,
                    conversion: r.conversion,
                    distribution: r.distribution,
                }));
            }
            None => {
                slot_figures.push(None);
                not_considered.push(NotConsidered {
                    input: slot.quantity,
                    reason: NotConsideredReason::NoFigure,
                });
            }
        }
    }
    for figure in &request.figures {
        if !slots.iter().any(|s| s.quantity == figure.input) {
            not_considered.push(NotConsidered {
                input: figure.input,
                reason: NotConsideredReason::Absent(f.absent_reason(figure.input)),
            });
        }
    }
    Ok(ResolvedFigures {
        slot_figures,
        not_considered,
    })
}

/// The built-in profile `id`, which must be a figure for `input`.
fn profile_for(
    input: InputQuantity,
    id: &str,
) -> Result<&'static super::profiles::Profile, UncertaintyError> {
    let p = profile(id)?.ok_or_else(|| UncertaintyError::UnknownProfile {
        input,
        id: id.to_owned(),
    })?;
    if p.input != input.measured_as() {
        return Err(UncertaintyError::ProfileForAnotherInput {
            input,
            id: id.to_owned(),
            profile_input: p.input,
        });
    }
    Ok(p)
}

fn warnings(
    estimate: f64,
    interval: &CoverageInterval,
    figures: &[UsedFigure],
    monte_carlo: Option<&MonteCarloResult>,
    validation: Option<&Validation>,
) -> Vec<UncertaintyWarning> {
    let mut out = Vec::new();
    if figures.iter().all(|f| f.standard_uncertainty == 0.0) {
        out.push(UncertaintyWarning::NoInputUncertainty);
    }
    if let Some(v) = validation.filter(|v| !v.passed) {
        out.push(UncertaintyWarning::FirstOrderNotValidated(*v));
    }
    let (below, above) = (estimate - interval.low, interval.high - estimate);
    let strongly_asymmetric = if below <= 0.0 || above <= 0.0 {
        below != above
    } else {
        below.max(above) > ASYMMETRY_RATIO_WARNING * below.min(above)
    };
    if strongly_asymmetric {
        out.push(UncertaintyWarning::StronglyAsymmetric { below, above });
    }
    let profiles: Vec<(String, Verification)> = figures
        .iter()
        .filter_map(|f| match &f.source {
            UsedSource::Profile { id, verification } => Some((id.clone(), *verification)),
            UsedSource::Stated => None,
        })
        .collect();
    if figures
        .iter()
        .any(|f| f.input == InputQuantity::Spo2 && matches!(f.source, UsedSource::Profile { .. }))
    {
        out.push(UncertaintyWarning::PulseOximetryBiasNotIncluded);
    }
    if !profiles.is_empty() {
        out.push(UncertaintyWarning::DefaultFiguresUsed { profiles });
    }
    if let Some(mc) = monte_carlo {
        let fraction = mc.rejected_fraction();
        if fraction > REDRAWN_FRACTION_WARNING {
            out.push(UncertaintyWarning::DrawsRedrawn { fraction });
        }
        for beyond in &mc.beyond_validated_range {
            if beyond.fraction > BEYOND_VALIDATED_FRACTION_WARNING {
                out.push(UncertaintyWarning::BeyondValidatedRange {
                    input: beyond.input,
                    fraction: beyond.fraction,
                });
            }
        }
        if let Some(s) = mc.stability.filter(|s| !s.stable) {
            out.push(UncertaintyWarning::MonteCarloNotStable {
                tolerance: s.tolerance,
            });
        }
    }
    out
}
