//! What a check gives back: a [`Finding`] with its verdict, statistic,
//! threshold and source, direction and uncertainty; and the settings every
//! check reads ([`CheckSettings`]).

use super::figures::{FigureInput, FigureOrigin, Figures};
use super::sample::SampleField;
use crate::physiology::model::Model;

/// The checks, in the order findings are reported.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Check {
    /// Measured (co-oximetry) against calculated saturation.
    MeasuredSaturation,
    /// SpO2 against the measured functional saturation.
    PulseOximetryGap,
    /// SpO2 against the measured oxyhaemoglobin fraction (carbon monoxide
    /// gap).
    CarbonMonoxideGap,
    /// PO2 above the alveolar PO2.
    AboveAlveolar,
    /// The room-air exposure pattern.
    RoomAirExposure,
    /// A venous pattern in a sample labelled arterial.
    VenousPattern,
    /// pH, PCO2 and measured bicarbonate (Henderson-Hasselbalch).
    AcidBase,
    /// pH at patient temperature against the 37 °C pH corrected.
    TemperatureCorrectionPh,
    /// PCO2 at patient temperature against the 37 °C PCO2 corrected.
    TemperatureCorrectionPco2,
    /// PO2 at patient temperature against the 37 °C PO2 corrected.
    TemperatureCorrectionPo2,
    /// Oxygen consumption by white cells in the syringe.
    WhiteCellConsumption,
}

impl Check {
    /// Every check, in report order.
    pub const ALL: [Check; 11] = [
        Check::MeasuredSaturation,
        Check::PulseOximetryGap,
        Check::CarbonMonoxideGap,
        Check::AboveAlveolar,
        Check::RoomAirExposure,
        Check::VenousPattern,
        Check::AcidBase,
        Check::TemperatureCorrectionPh,
        Check::TemperatureCorrectionPco2,
        Check::TemperatureCorrectionPo2,
        Check::WhiteCellConsumption,
    ];

    /// A stable lower_snake_case code (the contract's enum name without its
    /// prefix), as the causes table names the check.
    pub const fn code(self) -> &'static str {
        match self {
            Check::MeasuredSaturation => "measured_saturation",
            Check::PulseOximetryGap => "pulse_oximetry_gap",
            Check::CarbonMonoxideGap => "carbon_monoxide_gap",
            Check::AboveAlveolar => "above_alveolar",
            Check::RoomAirExposure => "room_air_exposure",
            Check::VenousPattern => "venous_pattern",
            Check::AcidBase => "acid_base",
            Check::TemperatureCorrectionPh => "temperature_correction_ph",
            Check::TemperatureCorrectionPco2 => "temperature_correction_pco2",
            Check::TemperatureCorrectionPo2 => "temperature_correction_po2",
            Check::WhiteCellConsumption => "white_cell_consumption",
        }
    }

    /// The check with this [`code`](Self::code).
    pub fn from_code(code: &str) -> Option<Check> {
        Check::ALL.into_iter().find(|c| c.code() == code)
    }
}

/// Which threshold decides a check that has a published one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ThresholdRule {
    /// The published threshold where one exists, else the uncertainty-based
    /// rule.
    #[default]
    PublishedWhereAvailable,
    /// The uncertainty-based rule for every check that has one.
    UncertaintyBased,
}

/// What every check reads besides the sample.
#[derive(Debug, Clone)]
pub struct CheckSettings {
    /// The dissociation model of calculated saturations.
    pub model: Model,
    /// Which threshold decides.
    pub rule: ThresholdRule,
    /// Coverage probability p of the uncertainty-based limits.
    pub coverage_probability: f64,
    /// The uncertainty figures.
    pub figures: Figures,
}

/// The unit a statistic (and its threshold) is stated in, in engine units.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StatisticUnit {
    /// A fraction (saturation difference, relative difference), `1`.
    Fraction,
    /// A pressure, mmHg.
    Pressure,
    /// pH units, `[pH]`.
    Ph,
    /// A cell count, 10⁹/L.
    CellCount,
    /// A concentration, mmol/L.
    Concentration,
}

/// Where a threshold comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ThresholdBasis {
    /// Published in the cited source.
    Published,
    /// k times the combined standard uncertainty of the statistic.
    UncertaintyBased,
}

/// A threshold with its source and the rule that applies it.
#[derive(Debug, Clone, PartialEq)]
pub struct Threshold {
    /// The limit, in the statistic's unit (a magnitude, 0 or greater).
    pub value: f64,
    /// Published or uncertainty-based.
    pub basis: ThresholdBasis,
    /// The citation, or the uncertainty-based rule's methods.
    pub source: String,
    /// The rule in words.
    pub rule: String,
}

/// The sign of a statistic.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Direction {
    /// Positive.
    Above,
    /// Negative.
    Below,
    /// Zero.
    None,
}

impl Direction {
    /// The direction of `statistic`.
    pub fn of(statistic: f64) -> Direction {
        if statistic > 0.0 {
            Direction::Above
        } else if statistic < 0.0 {
            Direction::Below
        } else {
            Direction::None
        }
    }
}

/// What a component of an uncertainty is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ComponentName {
    /// An input with a figure.
    Input(FigureInput),
    /// The spread of the published adult dissociation curves.
    ModelSpread,
    /// The spread of the published temperature corrections.
    CorrectionMethods,
    /// The resolution values are reported to.
    ReportingResolution,
}

impl ComponentName {
    /// A stable lower_snake_case name.
    pub const fn name(self) -> &'static str {
        match self {
            ComponentName::Input(input) => input.name(),
            ComponentName::ModelSpread => "model_spread",
            ComponentName::CorrectionMethods => "correction_methods",
            ComponentName::ReportingResolution => "reporting_resolution",
        }
    }
}

/// One component of a statistic's uncertainty.
#[derive(Debug, Clone, PartialEq)]
pub struct Component {
    /// What it is.
    pub name: ComponentName,
    /// u of the input itself, in the input's engine unit (inputs only).
    pub input_standard_uncertainty: Option<f64>,
    /// |sensitivity| × u, in the statistic's unit.
    pub contribution: f64,
    /// Where the figure comes from (inputs), or the rule (others).
    pub origin: ComponentOrigin,
}

/// Where a component's figure comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum ComponentOrigin {
    /// An input's figure.
    Figure(FigureOrigin),
    /// A rule of the check, in words, with its source.
    Rule(String),
}

/// The combined standard uncertainty of a statistic (JCGM 100:2008 5.1.2,
/// first order, independent components).
#[derive(Debug, Clone, PartialEq)]
pub struct FindingUncertainty {
    /// u_c = √(Σ contribution²).
    pub standard_uncertainty: f64,
    /// k for the coverage probability (normal).
    pub coverage_factor: f64,
    /// The coverage probability.
    pub coverage_probability: f64,
    /// The components.
    pub components: Vec<Component>,
    /// Inputs of the statistic that had no figure.
    pub not_considered: Vec<FigureInput>,
}

impl FindingUncertainty {
    /// k·u_c: the uncertainty-based limit.
    pub fn expanded(&self) -> f64 {
        self.coverage_factor * self.standard_uncertainty
    }
}

/// A check that could be made.
#[derive(Debug, Clone, PartialEq)]
pub struct Evaluated {
    /// The statistic (see each check for what it is).
    pub statistic: f64,
    /// Its unit (and the threshold's).
    pub unit: StatisticUnit,
    /// The observed value the statistic starts from, with its unit.
    pub observed: Option<(f64, StatisticUnit)>,
    /// The value it is compared with, with its unit.
    pub reference: Option<(f64, StatisticUnit)>,
    /// The threshold that decided.
    pub threshold: Threshold,
    /// Whether the statistic lies beyond the threshold.
    pub discordant: bool,
    /// The combined uncertainty, when it could be computed.
    pub uncertainty: Option<FindingUncertainty>,
    /// A short explanation for people.
    pub note: String,
}

/// A check that could not be made.
#[derive(Debug, Clone, PartialEq)]
pub struct NotEvaluable {
    /// Why, in plain English (no patient values).
    pub reason: String,
    /// The inputs whose absence made it so.
    pub missing: Vec<SampleField>,
}

impl NotEvaluable {
    /// Not evaluable because `missing` are absent.
    pub fn missing(missing: Vec<SampleField>, purpose: &str) -> NotEvaluable {
        let names: Vec<&str> = missing.iter().map(|f| f.describe()).collect();
        NotEvaluable {
            reason: format!("{} not given: {purpose}", join_words(&names)),
            missing,
        }
    }

    /// Not evaluable for `reason`, with nothing missing.
    pub fn because(reason: impl Into<String>) -> NotEvaluable {
        NotEvaluable {
            reason: reason.into(),
            missing: Vec::new(),
        }
    }
}

/// A number as a person reads it: at most six decimals, no trailing zeros.
pub(crate) fn plain_number(value: f64) -> String {
    let text = format!("{value:.6}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    match text {
        "" | "-0" => "0".to_owned(),
        other => other.to_owned(),
    }
}

/// `a`, `a and b`, `a, b and c`.
pub(crate) fn join_words(words: &[&str]) -> String {
    match words {
        [] => String::new(),
        [one] => (*one).to_owned(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}

/// A check's outcome.
#[derive(Debug, Clone, PartialEq)]
pub enum Outcome {
    /// The check was made.
    Evaluated(Evaluated),
    /// It could not be made.
    NotEvaluable(NotEvaluable),
}

impl From<Result<Evaluated, NotEvaluable>> for Outcome {
    fn from(result: Result<Evaluated, NotEvaluable>) -> Self {
        match result {
            Ok(evaluated) => Outcome::Evaluated(evaluated),
            Err(not) => Outcome::NotEvaluable(not),
        }
    }
}

/// The verdict of a finding.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Verdict {
    /// Within the threshold.
    Consistent,
    /// Beyond the threshold.
    Discordant,
    /// The check could not be made.
    NotEvaluable,
}

/// One check's finding.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    /// The check.
    pub check: Check,
    /// Its outcome.
    pub outcome: Outcome,
}

impl Finding {
    /// The verdict.
    pub fn verdict(&self) -> Verdict {
        match &self.outcome {
            Outcome::Evaluated(e) if e.discordant => Verdict::Discordant,
            Outcome::Evaluated(_) => Verdict::Consistent,
            Outcome::NotEvaluable(_) => Verdict::NotEvaluable,
        }
    }

    /// The evaluation, if the check was made.
    pub fn evaluated(&self) -> Option<&Evaluated> {
        match &self.outcome {
            Outcome::Evaluated(e) => Some(e),
            Outcome::NotEvaluable(_) => None,
        }
    }

    /// Why it was not evaluable, if so.
    pub fn not_evaluable(&self) -> Option<&NotEvaluable> {
        match &self.outcome {
            Outcome::NotEvaluable(n) => Some(n),
            Outcome::Evaluated(_) => None,
        }
    }

    /// The direction of the statistic, if evaluated.
    pub fn direction(&self) -> Option<Direction> {
        self.evaluated().map(|e| Direction::of(e.statistic))
    }
}
