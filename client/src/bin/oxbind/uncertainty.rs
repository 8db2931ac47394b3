//! The uncertainty flags (`--uncertainty`, `--u`, `--uncertainty-method`,
//! `--draws`, `--seed`, ...) of the commands whose RPCs evaluate it, the
//! spelling of a figure, and the rows that show a result.

use clap::{Args, ValueEnum};
use oxbind_client::v1::{
    input_uncertainty::Figure, BoundShape, CoverageIntervalKind, InputUncertainty, Quantity,
    UncertaintyAmount, UncertaintyBound, UncertaintyMethod, UncertaintyRequest, UncertaintyResult,
};

use crate::{
    args::{self, bare_fraction_hint, split_quantity},
    failure::Failure,
    fields::FieldNames,
    output::{self, Table},
};

/// How a figure is written, as `--help` states it.
pub(crate) const FIGURE_HELP: &str = "A figure for one input, `NAME=FIGURE`, NAME being the \
input's own flag without its dashes (`po2`, `spo2`, `ph`, `temp`, `hb`, `sao2`, ...). FIGURE is a \
standard uncertainty (`3mm[Hg]`, `0.4kPa`, `2%` or `0.02` for a fraction: percentage points; \
`0.02` for pH), or relative to the value with `%rel` (`5%rel`), or the greater of both \
(`15mm[Hg],15%rel`); followed by `@` it is a bound with what it covers (`15mm[Hg]@95%`: a normal \
bound covering 95 %; `@k2`: an expanded uncertainty with coverage factor 2; `@rect`, `@tri`, \
`@trap0.5`); or the id of a built-in profile (`clia-2024-po2`; `oxbind models` lists them). A \
bare number is accepted only where the input's own flag takes no unit (pH, --rq, --hill-n, \
--hufner in mL/g) and for fractions (the fraction itself); every other figure names its unit. \
Repeat --u for more inputs.";

/// The method of an uncertainty.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum MethodArg {
    /// The law of propagation of uncertainty, first order (JCGM 100:2008).
    FirstOrder,
    /// A seeded Monte Carlo propagation of distributions (JCGM 101:2008),
    /// validated against the first order.
    MonteCarlo,
}

/// The Monte Carlo coverage interval.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub(crate) enum IntervalArg {
    /// Equal probability below and above (JCGM 101:2008 7.7.2).
    Symmetric,
    /// The shortest interval (JCGM 101:2008 7.7.3).
    Shortest,
}

/// One `--u NAME=FIGURE`, parsed but not yet tied to a request field.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct FigureArg {
    /// The input's flag name, without dashes.
    pub(crate) name: String,
    /// The figure as typed (for messages).
    pub(crate) text: String,
    figure: ParsedFigure,
}

#[derive(Debug, Clone, PartialEq)]
enum ParsedFigure {
    Profile(String),
    Amount {
        amount: ParsedAmount,
        bound: Option<BoundArg>,
    },
}

#[derive(Debug, Clone, PartialEq)]
struct ParsedAmount {
    /// (value, unit as written, if any).
    absolute: Option<(f64, Option<String>)>,
    /// Per cent of the value.
    relative_percent: Option<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum BoundArg {
    Normal(f64),
    CoverageFactor(f64),
    Rectangular,
    Triangular,
    Trapezoidal(f64),
}

/// Parse `NAME=FIGURE` (clap value parser).
pub(crate) fn figure_arg(text: &str) -> Result<FigureArg, String> {
    let (name, figure) = text
        .split_once('=')
        .ok_or_else(|| format!("`{text}` is not NAME=FIGURE (for example po2=3mm[Hg])"))?;
    let name = name.trim().trim_start_matches('-').to_owned();
    if name.is_empty() {
        return Err(format!("`{text}` names no input before `=`"));
    }
    let figure = figure.trim();
    let parsed = if figure.starts_with(|c: char| c.is_ascii_alphabetic()) {
        ParsedFigure::Profile(figure.to_owned())
    } else {
        let (amount, bound) = match figure.split_once('@') {
            Some((amount, bound)) => (amount, Some(bound_arg(bound.trim())?)),
            None => (figure, None),
        };
        ParsedFigure::Amount {
            amount: amount_arg(amount)?,
            bound,
        }
    };
    Ok(FigureArg {
        name,
        text: figure.to_owned(),
        figure: parsed,
    })
}

/// `3mm[Hg]`, `5%rel` or both, comma-separated.
fn amount_arg(text: &str) -> Result<ParsedAmount, String> {
    let mut amount = ParsedAmount {
        absolute: None,
        relative_percent: None,
    };
    for part in text.split(',').map(str::trim) {
        if let Some(number) = part.strip_suffix("%rel") {
            let value: f64 = number
                .trim()
                .parse()
                .map_err(|_| format!("`{part}`: a relative figure is a number then `%rel`"))?;
            if amount.relative_percent.replace(value).is_some() {
                return Err(format!("`{text}` gives two relative parts"));
            }
        } else {
            let (q, with_unit) = split_quantity(part, "")?;
            let unit = with_unit.then_some(q.unit);
            if amount.absolute.replace((q.value, unit)).is_some() {
                return Err(format!("`{text}` gives two absolute parts"));
            }
        }
    }
    Ok(amount)
}

/// What a bound covers: `95%`, `0.95`, `k2`, `rect`, `tri`, `trap0.5`.
fn bound_arg(text: &str) -> Result<BoundArg, String> {
    let number = |t: &str| {
        t.trim_start_matches('=')
            .trim()
            .parse::<f64>()
            .map_err(|_| format!("`@{text}`: not a number after the shape"))
    };
    if let Some(k) = text.strip_prefix('k') {
        return Ok(BoundArg::CoverageFactor(number(k)?));
    }
    for (name, shape) in [
        ("rectangular", BoundArg::Rectangular),
        ("rect", BoundArg::Rectangular),
        ("triangular", BoundArg::Triangular),
        ("tri", BoundArg::Triangular),
    ] {
        if text == name {
            return Ok(shape);
        }
    }
    for name in ["trapezoidal", "trap"] {
        if let Some(beta) = text.strip_prefix(name) {
            return Ok(BoundArg::Trapezoidal(number(beta)?));
        }
    }
    let coverage = args::saturation(text).map_err(|e| {
        format!("`@{text}`: a coverage (`95%`, `0.95`), `k2`, `rect`, `tri` or `trap0.5` ({e})")
    })?;
    Ok(BoundArg::Normal(coverage))
}

/// The flags that give an input's value as a fraction (a bare figure is
/// the fraction; `%` is percentage points).
const FRACTION_INPUTS: [&str; 13] = [
    "saturation",
    "so2",
    "sao2",
    "svo2",
    "spo2",
    "fio2",
    "cohb",
    "methb",
    "hbf",
    "venous-cohb",
    "venous-methb",
    "venous-hbf",
    "saturation-fraction",
];

/// The unit of a bare absolute figure for the input `name`, or why it
/// needs one.
fn bare_unit(name: &str, value: f64, text: &str) -> Result<&'static str, String> {
    if FRACTION_INPUTS.contains(&name) {
        if value > 1.0 {
            return Err(bare_fraction_hint(text));
        }
        return Ok("1");
    }
    match name {
        "ph" | "venous-ph" | "ph-37" => Ok("[pH]"),
        "rq" | "hill-n" => Ok("1"),
        "hufner" => Ok("mL/g"),
        _ => Err(format!(
            "--u {name}={text}: an uncertainty's unit is never guessed; write it after the number (for example `3mm[Hg]`, `0.4kPa`, `0.5Cel`, `0.3g/dL`)"
        )),
    }
}

/// The figures: `--uncertainty SET` and `--u NAME=FIGURE`, the one way to
/// say how uncertain an input is, on every command whose RPC takes figures
/// (with [`UncertaintyArgs`]) and on `oxbind check` (the figures of its
/// uncertainty-based rules).
#[derive(Debug, Clone, Default, Args)]
pub(crate) struct FigureFlags {
    /// A built-in profile set for every input it covers (for example
    /// `clia-2024`, `pulse-oximeter-fda-2013-transmittance`; `oxbind models`
    /// lists them with their sources); repeat for more. It asks for the
    /// uncertainty of the answer (`check`: it sets the figures of the
    /// uncertainty-based rules).
    #[arg(long = "uncertainty", value_name = "PROFILE_SET")]
    pub(crate) profile_sets: Vec<String>,
    /// A figure for one input: `NAME=FIGURE`, e.g. `--u 'po2=3mm[Hg]'`,
    /// `--u spo2=2%`, `--u 'po2=15mm[Hg],15%rel@95%'`, `--u
    /// pao2=clia-2024-po2` (`--help` says more); repeat for more inputs. It
    /// asks for the uncertainty of the answer (`check`: it sets the figures
    /// of the uncertainty-based rules).
    #[arg(long = "u", value_name = "NAME=FIGURE", value_parser = figure_arg, long_help = FIGURE_HELP)]
    pub(crate) figures: Vec<FigureArg>,
}

impl FigureFlags {
    /// Whether a set or a figure was given.
    pub(crate) fn is_given(&self) -> bool {
        !self.profile_sets.is_empty() || !self.figures.is_empty()
    }

    /// Each `--u` as the contract's figure for the request field its flag
    /// sets (`names`).
    pub(crate) fn inputs(&self, names: &FieldNames) -> Result<Vec<InputUncertainty>, Failure> {
        self.figures.iter().map(|f| input(f, names)).collect()
    }

    /// `names` with `uncertainty.profile_sets` and `uncertainty.inputs` (and
    /// each item below them) named as the flags that set them.
    pub(crate) fn names(&self, names: FieldNames) -> FieldNames {
        let mut names = names
            .with("uncertainty", "the uncertainty flags")
            .with("uncertainty.profile_sets", "--uncertainty")
            .with("uncertainty.inputs", "--u");
        for (j, set) in self.profile_sets.iter().enumerate() {
            names = names.with(
                &format!("uncertainty.profile_sets[{j}]"),
                format!("--uncertainty {set}"),
            );
        }
        for (i, f) in self.figures.iter().enumerate() {
            let flag = format!("--u {}={}", f.name, f.text);
            for sub in FIGURE_PATHS {
                let path = if sub.is_empty() {
                    format!("uncertainty.inputs[{i}]")
                } else {
                    format!("uncertainty.inputs[{i}].{sub}")
                };
                names = names.with(&path, flag.clone());
            }
        }
        names
    }
}

/// The uncertainty flags. Any of them asks for the uncertainty of the
/// answer.
#[derive(Debug, Clone, Default, Args)]
#[command(next_help_heading = "Uncertainty (on request)")]
pub(crate) struct UncertaintyArgs {
    #[command(flatten)]
    pub(crate) figures: FigureFlags,
    /// How the uncertainty is evaluated (server default first-order).
    #[arg(long, value_enum)]
    pub(crate) uncertainty_method: Option<MethodArg>,
    /// Monte Carlo draws, 10,000 to 1,000,000 (server default 100,000).
    #[arg(long)]
    pub(crate) draws: Option<i32>,
    /// Monte Carlo seed: the same seed gives the same answer (server default 0).
    #[arg(long, allow_hyphen_values = true)]
    pub(crate) seed: Option<i64>,
    /// Monte Carlo coverage interval (server default symmetric).
    #[arg(long, value_enum)]
    pub(crate) interval: Option<IntervalArg>,
    /// Coverage probability of the interval (`0.95`, or `95%`; server
    /// default 0.95).
    #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
    pub(crate) coverage: Option<f64>,
    /// Significant digits of a standard uncertainty for the validation's
    /// tolerance (server default 2).
    #[arg(long)]
    pub(crate) significant_digits: Option<i32>,
    /// Leave out the spread between published models.
    #[arg(long)]
    pub(crate) no_model_component: bool,
}

impl UncertaintyArgs {
    /// Whether any uncertainty flag was given (any of them asks for it).
    pub(crate) fn is_given(&self) -> bool {
        self.figures.is_given()
            || self.uncertainty_method.is_some()
            || self.draws.is_some()
            || self.seed.is_some()
            || self.interval.is_some()
            || self.coverage.is_some()
            || self.significant_digits.is_some()
            || self.no_model_component
    }

    /// Whether Monte Carlo was asked for.
    pub(crate) fn monte_carlo(&self) -> bool {
        self.uncertainty_method == Some(MethodArg::MonteCarlo)
    }

    /// The request's uncertainty part, each `--u` tied to the request field
    /// its flag sets (`names`); `None` when no flag asked for one.
    pub(crate) fn to_request(
        &self,
        names: &FieldNames,
    ) -> Result<Option<UncertaintyRequest>, Failure> {
        if !self.is_given() {
            return Ok(None);
        }
        Ok(Some(UncertaintyRequest {
            inputs: self.figures.inputs(names)?,
            profile_sets: self.figures.profile_sets.clone(),
            method: match self.uncertainty_method {
                None => UncertaintyMethod::Unspecified,
                Some(MethodArg::FirstOrder) => UncertaintyMethod::FirstOrder,
                Some(MethodArg::MonteCarlo) => UncertaintyMethod::MonteCarlo,
            } as i32,
            draw_count: self.draws.unwrap_or(0),
            seed: self.seed.unwrap_or(0),
            interval_kind: match self.interval {
                None => CoverageIntervalKind::Unspecified,
                Some(IntervalArg::Symmetric) => CoverageIntervalKind::ProbabilisticallySymmetric,
                Some(IntervalArg::Shortest) => CoverageIntervalKind::Shortest,
            } as i32,
            coverage_probability: self.coverage.unwrap_or(0.0),
            significant_digits: self.significant_digits.unwrap_or(0),
            omit_model_component: self.no_model_component,
        }))
    }

    /// `names` with the uncertainty fields named as the flags that set them.
    pub(crate) fn names(&self, names: FieldNames) -> FieldNames {
        self.figures
            .names(names)
            .with("uncertainty.method", "--uncertainty-method")
            .with("uncertainty.draw_count", "--draws")
            .with("uncertainty.seed", "--seed")
            .with("uncertainty.interval_kind", "--interval")
            .with("uncertainty.coverage_probability", "--coverage")
            .with("uncertainty.significant_digits", "--significant-digits")
    }
}

/// The paths below one figure that a refusal may name.
const FIGURE_PATHS: [&str; 14] = [
    "",
    "field",
    "profile_id",
    "standard_uncertainty",
    "standard_uncertainty.absolute",
    "standard_uncertainty.relative",
    "bound",
    "bound.half_width",
    "bound.half_width.absolute",
    "bound.half_width.relative",
    "bound.shape",
    "bound.coverage_probability",
    "bound.coverage_factor",
    "bound.trapezoid_top_ratio",
];

/// One `--u` as the contract's figure for the field its flag sets.
fn input(f: &FigureArg, names: &FieldNames) -> Result<InputUncertainty, Failure> {
    let flag = match f.name.as_str() {
        "temperature" => "--temp".to_owned(),
        other => format!("--{other}"),
    };
    let field = names.path_of(&flag).ok_or_else(|| {
        Failure::Usage(format!(
            "--u {}: this command has no input {flag}; name an input by its own flag without the dashes",
            f.name
        ))
    })?;
    let figure = match &f.figure {
        ParsedFigure::Profile(id) => Figure::ProfileId(id.clone()),
        ParsedFigure::Amount { amount, bound } => {
            let absolute = match &amount.absolute {
                None => None,
                Some((value, Some(unit))) => Some(Quantity::new(*value, unit)),
                Some((value, None)) => Some(Quantity::new(
                    *value,
                    bare_unit(&f.name, *value, &f.text).map_err(Failure::Usage)?,
                )),
            };
            let amount = UncertaintyAmount {
                absolute,
                relative: amount.relative_percent.map(|p| Quantity::new(p, "%")),
            };
            match bound {
                None => Figure::StandardUncertainty(amount),
                Some(b) => {
                    let mut bound = UncertaintyBound {
                        half_width: Some(amount),
                        ..Default::default()
                    };
                    bound.shape = match *b {
                        BoundArg::Normal(p) => {
                            bound.coverage_probability = p;
                            BoundShape::Normal
                        }
                        BoundArg::CoverageFactor(k) => {
                            bound.coverage_factor = k;
                            BoundShape::CoverageFactor
                        }
                        BoundArg::Rectangular => BoundShape::Rectangular,
                        BoundArg::Triangular => BoundShape::Triangular,
                        BoundArg::Trapezoidal(beta) => {
                            bound.trapezoid_top_ratio = beta;
                            BoundShape::Trapezoidal
                        }
                    } as i32;
                    Figure::Bound(bound)
                }
            }
        }
    };
    Ok(InputUncertainty {
        field,
        figure: Some(figure),
    })
}

/// A derived value in plain words.
fn value_label(value: &str) -> String {
    match value {
        "saturation_fraction" => "oxygen saturation".to_owned(),
        "po2" => "oxygen tension".to_owned(),
        "po2_change_per_percent" => "PO2 change per saturation point".to_owned(),
        "p50_at_conditions" => "P50 at these conditions".to_owned(),
        "arterial_content" => "arterial oxygen content".to_owned(),
        "venous_content" => "venous oxygen content".to_owned(),
        "arteriovenous_difference" => "arteriovenous difference".to_owned(),
        "extraction_fraction" => "extraction fraction".to_owned(),
        "alveolar_po2" => "alveolar PO2".to_owned(),
        "alveolar_arterial_gradient" => "alveolar-arterial gradient".to_owned(),
        "pao2_fio2_ratio" => "PaO2/FiO2 ratio".to_owned(),
        "imputed_pao2" => "PaO2 imputed from SpO2".to_owned(),
        "imputed_pao2_fio2_ratio" => "imputed PaO2/FiO2 ratio".to_owned(),
        other => other.replace('_', " "),
    }
}

fn value_of(q: Option<&Quantity>) -> String {
    q.map(output::quantity).unwrap_or_default()
}

fn method_name(raw: i32) -> &'static str {
    match UncertaintyMethod::try_from(raw) {
        Ok(UncertaintyMethod::MonteCarlo) => "Monte Carlo (JCGM 101)",
        _ => "first order (GUM)",
    }
}

fn interval_text(interval: Option<&oxbind_client::v1::CoverageInterval>) -> String {
    interval
        .map(|i| {
            format!(
                "{} % interval {} to {}",
                output::trim(i.probability * 100.0),
                value_of(i.low.as_ref()),
                value_of(i.high.as_ref())
            )
        })
        .unwrap_or_default()
}

impl Table {
    /// The rows of each uncertainty result, naming inputs as the user wrote
    /// them.
    pub(crate) fn uncertainties(
        &mut self,
        results: &[UncertaintyResult],
        names: &FieldNames,
    ) -> &mut Self {
        let name = |path: &str| names.name(path).unwrap_or_else(|| path.to_owned());
        for r in results {
            let label = value_label(&r.value);
            let mut text = format!(
                "u {}; {} ({})",
                value_of(r.standard_uncertainty.as_ref()),
                interval_text(r.interval.as_ref()),
                method_name(r.method)
            );
            if let Some(mc) = &r.monte_carlo {
                text.push_str(&format!(", {} draws, seed {}", mc.draw_count, mc.seed));
            }
            self.row(format!("uncertainty of {label}"), text);
            if let (Some(fo), true) = (&r.first_order, r.monte_carlo.is_some()) {
                let validated = match &r.validation {
                    Some(v) if v.passed => "validated",
                    Some(_) => "not validated",
                    None => "",
                };
                self.row(
                    "  first order",
                    format!(
                        "u {}; {} ({validated})",
                        value_of(fo.standard_uncertainty.as_ref()),
                        interval_text(fo.interval.as_ref())
                    ),
                );
            }
            for line in &r.budget {
                let origin = if line.profile_id.is_empty() {
                    String::new()
                } else {
                    format!(", profile {}", line.profile_id)
                };
                self.row(
                    format!("  from {}", name(&line.field)),
                    format!(
                        "u {} gives {} ({:.1} % of the variance{origin})",
                        value_of(line.standard_uncertainty.as_ref()),
                        value_of(line.contribution.as_ref()),
                        line.variance_share * 100.0
                    ),
                );
            }
            if let Some(m) = &r.model_component {
                if let Some(u) = &m.standard_uncertainty {
                    self.row(
                        "  spread between models",
                        format!("u {} ({} models)", output::quantity(u), m.values.len()),
                    );
                }
            }
            for n in &r.not_considered {
                self.row(
                    format!("  not considered: {}", name(&n.field)),
                    n.message.clone(),
                );
            }
            for w in &r.warnings {
                self.row(
                    format!("  warning ({})", output::severity_name(w.severity)),
                    output::warning_text(w, names),
                );
            }
        }
        self
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figures_are_spelt_as_documented() {
        let f = figure_arg("po2=3mm[Hg]").unwrap();
        assert_eq!(f.name, "po2");
        assert_eq!(
            f.figure,
            ParsedFigure::Amount {
                amount: ParsedAmount {
                    absolute: Some((3.0, Some("mm[Hg]".to_owned()))),
                    relative_percent: None
                },
                bound: None
            }
        );
        let f = figure_arg("pao2=15mm[Hg],15%rel@95%").unwrap();
        let ParsedFigure::Amount { amount, bound } = f.figure else {
            panic!("an amount");
        };
        assert_eq!(amount.relative_percent, Some(15.0));
        assert_eq!(bound, Some(BoundArg::Normal(0.95)));
        assert_eq!(
            figure_arg("temp=0.3Cel@k2").unwrap().figure,
            ParsedFigure::Amount {
                amount: ParsedAmount {
                    absolute: Some((0.3, Some("Cel".to_owned()))),
                    relative_percent: None
                },
                bound: Some(BoundArg::CoverageFactor(2.0))
            }
        );
        assert!(matches!(
            figure_arg("po2=2mm[Hg]@trap0.5").unwrap().figure,
            ParsedFigure::Amount {
                bound: Some(BoundArg::Trapezoidal(b)),
                ..
            } if b == 0.5
        ));
        assert_eq!(
            figure_arg("spo2=pulse-oximeter-fda-2013-transmittance-spo2")
                .unwrap()
                .figure,
            ParsedFigure::Profile("pulse-oximeter-fda-2013-transmittance-spo2".to_owned())
        );
        assert!(figure_arg("po2").is_err());
        assert!(figure_arg("po2=3mm[Hg]@often").is_err());
    }

    #[test]
    fn a_bare_figure_is_a_fraction_or_unitless_or_refused() {
        assert_eq!(bare_unit("spo2", 0.02, "0.02"), Ok("1"));
        assert!(bare_unit("spo2", 2.0, "2").unwrap_err().contains("`2%`"));
        assert_eq!(bare_unit("ph", 0.02, "0.02"), Ok("[pH]"));
        assert!(bare_unit("po2", 3.0, "3")
            .unwrap_err()
            .contains("never guessed"));
    }
}
