//! Reading a request's `uncertainty` part into the engine's request: every
//! figure checked against the hard limits (the one table, [`limits`]), its
//! unit converted, its field path resolved to an engine input, and every
//! mistake collected as a violation naming its field path.

use oxbind_proto::v1::{
    input_uncertainty::Figure, BoundShape as WireBoundShape, CoverageIntervalKind,
    UncertaintyAmount, UncertaintyBound, UncertaintyMethod, UncertaintyRequest,
};

use super::inputs::{FigureUnit, InputRole, InputTable};
use crate::{
    api::{
        field_path::FieldPath,
        limits::{self, HardLimit},
        reader::RequestReader,
        status::{
            Violation, REASON_NOT_APPLICABLE, REASON_REQUIRED, REASON_UNCERTAINTY_FIELD,
            REASON_UNCERTAINTY_FIGURE, REASON_UNIT, REASON_UNKNOWN_ENUM,
        },
        units::{self, QuantityKind},
    },
    physiology::uncertainty::{
        evaluate::{DEFAULT_COVERAGE_PROBABILITY, DEFAULT_SIGNIFICANT_DIGITS},
        profiles::{profile, profile_sets},
        Amount, BoundShape, FigureSource, InputFigure, InputQuantity, IntervalKind, Method,
        MonteCarloOptions, Statement, UncertaintyRequest as EngineRequest, DEFAULT_DRAWS,
    },
};

/// Whether a request is a call of its own or an item of a batch.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Call {
    /// A single call: both methods.
    Single,
    /// A batch item: first order only (a Monte Carlo run per item would hold
    /// the batch's call for the whole batch times the run).
    BatchItem,
}

/// Why Monte Carlo is refused in a batch item.
const MONTE_CARLO_IN_BATCH: &str = "a batch item is evaluated by the first order only: Monte Carlo runs of up to 10^6 draws for each of up to 10,000 items would hold one call for hours; ask for Monte Carlo in single calls";

/// A figure for a request input that the engine does not take.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(super) struct OutsideFigure {
    /// The caller's path.
    pub(super) path: String,
    /// Why it is not taken.
    pub(super) role: InputRole,
}

/// The uncertainty a request asks for, read and checked.
#[derive(Debug, Clone)]
pub struct Requested {
    /// The engine's request.
    pub(super) engine: EngineRequest,
    /// The caller's path of each engine input given a figure.
    pub(super) names: Vec<(InputQuantity, String)>,
    /// Figures for request inputs the engine does not take.
    pub(super) outside: Vec<OutsideFigure>,
    /// The RPC's input table.
    pub(super) table: &'static InputTable,
}

impl Requested {
    /// The request field path of an engine input: the caller's, when it
    /// gave a figure, else the input's canonical path.
    pub(super) fn path_of(&self, quantity: InputQuantity) -> String {
        self.names
            .iter()
            .find(|(q, _)| *q == quantity)
            .map(|(_, p)| p.clone())
            .or_else(|| self.table.path_of(quantity).map(str::to_owned))
            .unwrap_or_else(|| quantity.name().to_owned())
    }

    /// Whether the Monte Carlo method was asked for.
    pub fn monte_carlo(&self) -> bool {
        matches!(self.engine.method, Method::MonteCarlo(_))
    }
}

/// Read `request` (the request's `uncertainty` field) for an RPC whose inputs
/// are `table`. Absent: `None`. Every mistake goes to `reader` (and `None`
/// comes back); the call is then refused as a whole by
/// [`RequestReader::finish`].
pub fn read(
    reader: &mut RequestReader,
    request: Option<&UncertaintyRequest>,
    table: &'static InputTable,
    call: Call,
) -> Option<Requested> {
    let request = request?;
    let root = FieldPath::ROOT;
    let path = root.field("uncertainty");
    let refuse = |reader: &mut RequestReader, v: Violation| reader.refuse(v);

    let inputs_path = path.field("inputs");
    if !limits::UNCERTAINTY_FIGURES.accepts(request.inputs.len() as f64) {
        refuse(
            reader,
            Violation::outside_limit(&inputs_path, &limits::UNCERTAINTY_FIGURES),
        );
    }
    let mut figures = Vec::with_capacity(request.inputs.len());
    let mut names: Vec<(InputQuantity, String)> = Vec::new();
    let mut outside = Vec::new();
    let mut seen: Vec<(String, usize)> = Vec::new();
    for (i, input) in request
        .inputs
        .iter()
        .enumerate()
        .take(limits::UNCERTAINTY_FIGURES.max as usize)
    {
        let item = path.indexed("inputs", i);
        let Some(spec) = table.find(&input.field) else {
            refuse(
                reader,
                Violation::other(
                    &item.field("field"),
                    REASON_UNCERTAINTY_FIELD,
                    format!(
                        "names no numeric input of this request; the inputs are {}",
                        table.paths().collect::<Vec<_>>().join(", ")
                    ),
                ),
            );
            continue;
        };
        // One figure per input: two paths may name one input (a sample's
        // `cohb` and its `conditions.cohb`).
        let key = match spec.role {
            InputRole::Engine(q) => q.name().to_owned(),
            _ => spec.path.clone(),
        };
        if let Some((_, first)) = seen.iter().find(|(k, _)| *k == key) {
            refuse(
                reader,
                Violation::other(
                    &item.field("field"),
                    REASON_UNCERTAINTY_FIGURE,
                    format!("names the same input as uncertainty.inputs[{first}]; give one figure per input"),
                ),
            );
            continue;
        }
        seen.push((key, i));
        let statement = read_figure(reader, input.figure.as_ref(), spec.unit, spec.role, &item);
        match (statement, spec.role) {
            (Some(source), InputRole::Engine(quantity)) => {
                names.push((quantity, spec.path.clone()));
                figures.push(InputFigure {
                    input: quantity,
                    source,
                });
            }
            (Some(_), role) => outside.push(OutsideFigure {
                path: spec.path.clone(),
                role,
            }),
            // The refusal is in `reader`.
            (None, _) => {}
        }
    }

    let sets = read_profile_sets(reader, &request.profile_sets, &path);
    let method = read_method(reader, request, call, &path);
    let coverage_probability = if request.coverage_probability == 0.0 {
        Some(DEFAULT_COVERAGE_PROBABILITY)
    } else {
        read_number(
            reader,
            request.coverage_probability,
            &path.field("coverage_probability"),
            &limits::UNCERTAINTY_COVERAGE_PROBABILITY,
        )
    };
    let significant_digits = if request.significant_digits == 0 {
        Some(DEFAULT_SIGNIFICANT_DIGITS)
    } else {
        read_number(
            reader,
            f64::from(request.significant_digits),
            &path.field("significant_digits"),
            &limits::UNCERTAINTY_SIGNIFICANT_DIGITS,
        )
        .map(|d| d as u8)
    };
    // A request refused anywhere is refused as a whole by `finish`.
    if reader.has_violations() {
        return None;
    }
    Some(Requested {
        engine: EngineRequest {
            figures,
            profile_sets: sets?,
            method: method?,
            coverage_probability: coverage_probability?,
            significant_digits: significant_digits?,
            model_component: !request.omit_model_component,
        },
        names,
        outside,
        table,
    })
}

/// A number checked against `limit` (NaN and infinities refused).
fn read_number(
    reader: &mut RequestReader,
    value: f64,
    path: &FieldPath<'_>,
    limit: &HardLimit,
) -> Option<f64> {
    if !value.is_finite() {
        reader.refuse(Violation::not_finite(path));
        return None;
    }
    if !limit.accepts(value) {
        reader.refuse(Violation::outside_limit(path, limit));
        return None;
    }
    Some(value)
}

/// A parameter that does not apply as the request is set.
fn not_applicable(path: &FieldPath<'_>, why: &str) -> Violation {
    Violation::other(path, REASON_NOT_APPLICABLE, why)
}

fn read_method(
    reader: &mut RequestReader,
    request: &UncertaintyRequest,
    call: Call,
    path: &FieldPath<'_>,
) -> Option<Method> {
    let method_path = path.field("method");
    let Ok(method) = UncertaintyMethod::try_from(request.method) else {
        reader.refuse(Violation::other(
            &method_path,
            REASON_UNKNOWN_ENUM,
            "not a known oxbind.v1.UncertaintyMethod value",
        ));
        return None;
    };
    let kind_path = path.field("interval_kind");
    let Ok(kind) = CoverageIntervalKind::try_from(request.interval_kind) else {
        reader.refuse(Violation::other(
            &kind_path,
            REASON_UNKNOWN_ENUM,
            "not a known oxbind.v1.CoverageIntervalKind value",
        ));
        return None;
    };
    match method {
        UncertaintyMethod::Unspecified | UncertaintyMethod::FirstOrder => {
            let mut ok = true;
            for (given, name) in [
                (request.draw_count != 0, "draw_count"),
                (request.seed != 0, "seed"),
                (kind != CoverageIntervalKind::Unspecified, "interval_kind"),
            ] {
                if given {
                    ok = false;
                    reader.refuse(not_applicable(
                        &path.field(name),
                        "applies to UNCERTAINTY_METHOD_MONTE_CARLO only; the first-order interval is y ± k u",
                    ));
                }
            }
            ok.then_some(Method::FirstOrder)
        }
        UncertaintyMethod::MonteCarlo => {
            if call == Call::BatchItem {
                reader.refuse(not_applicable(&method_path, MONTE_CARLO_IN_BATCH));
                return None;
            }
            let interval = match kind {
                CoverageIntervalKind::Unspecified
                | CoverageIntervalKind::ProbabilisticallySymmetric => {
                    IntervalKind::ProbabilisticallySymmetric
                }
                CoverageIntervalKind::Shortest => IntervalKind::Shortest,
                CoverageIntervalKind::FirstOrderNormal => {
                    reader.refuse(not_applicable(
                        &kind_path,
                        "COVERAGE_INTERVAL_KIND_FIRST_ORDER_NORMAL is the first-order interval, not a Monte Carlo one; ask for probabilistically symmetric or shortest",
                    ));
                    return None;
                }
            };
            let draws = if request.draw_count == 0 {
                DEFAULT_DRAWS
            } else {
                read_number(
                    reader,
                    f64::from(request.draw_count),
                    &path.field("draw_count"),
                    &limits::UNCERTAINTY_DRAWS,
                )? as usize
            };
            Some(Method::MonteCarlo(MonteCarloOptions {
                draws,
                // The seed's 64 bits as they are: every int64 is a seed.
                seed: request.seed as u64,
                interval,
            }))
        }
    }
}

/// The profile sets of an uncertainty part at `path` (its `profile_sets`):
/// each a known set, named once. `None` (and a refusal in `reader`) when one
/// is not.
pub fn read_profile_sets(
    reader: &mut RequestReader,
    sets: &[String],
    path: &FieldPath<'_>,
) -> Option<Vec<String>> {
    if sets.is_empty() {
        return Some(Vec::new());
    }
    let known = match profile_sets() {
        Ok(known) => known,
        Err(e) => {
            reader.refuse(Violation::other(
                &path.field("profile_sets"),
                REASON_UNCERTAINTY_FIGURE,
                e.to_string(),
            ));
            return None;
        }
    };
    let mut ok = true;
    for (j, set) in sets.iter().enumerate() {
        let item = path.indexed("profile_sets", j);
        if !known.contains(&set.as_str()) {
            ok = false;
            reader.refuse(Violation::other(
                &item,
                REASON_UNCERTAINTY_FIGURE,
                format!(
                    "names no built-in profile set; the sets are {} (ListModels lists them in uncertainty_profiles)",
                    known.join(", ")
                ),
            ));
        } else if sets[..j].contains(set) {
            ok = false;
            reader.refuse(Violation::other(
                &item,
                REASON_UNCERTAINTY_FIGURE,
                "names a profile set already named; name each once",
            ));
        }
    }
    ok.then(|| sets.to_vec())
}

/// One input's figure (`InputUncertainty.figure` of the item at `item`) as
/// the engine's source: its amounts in the engine unit of `unit` and within
/// the hard limits, a bound's shape and parameter, or a known profile that
/// fits `role`. `None` (and a refusal in `reader`) when it is not usable.
/// CheckBloodGas reads its figures with it too.
pub fn read_figure(
    reader: &mut RequestReader,
    figure: Option<&Figure>,
    unit: FigureUnit,
    role: InputRole,
    item: &FieldPath<'_>,
) -> Option<FigureSource> {
    match figure {
        None => {
            reader.refuse(Violation {
                field: item.render(),
                reason: REASON_REQUIRED,
                description: format!(
                    "{} needs a figure: standard_uncertainty, bound or profile_id",
                    item.render()
                ),
                metadata: Vec::new(),
            });
            None
        }
        Some(Figure::StandardUncertainty(amount)) => {
            read_amount(reader, amount, unit, &item.field("standard_uncertainty"))
                .map(|a| FigureSource::Stated(Statement::StandardUncertainty(a)))
        }
        Some(Figure::Bound(bound)) => {
            read_bound(reader, bound, unit, &item.field("bound")).map(FigureSource::Stated)
        }
        Some(Figure::ProfileId(id)) => {
            read_profile(reader, id, unit, role, &item.field("profile_id"))
                .map(FigureSource::Profile)
        }
    }
}

/// A profile id that exists and is a figure for this kind of input.
fn read_profile(
    reader: &mut RequestReader,
    id: &str,
    unit: FigureUnit,
    role: InputRole,
    path: &FieldPath<'_>,
) -> Option<String> {
    let found = match profile(id) {
        Ok(found) => found,
        Err(e) => {
            reader.refuse(Violation::other(
                path,
                REASON_UNCERTAINTY_FIGURE,
                e.to_string(),
            ));
            return None;
        }
    };
    let Some(p) = found else {
        reader.refuse(Violation::other(
            path,
            REASON_UNCERTAINTY_FIGURE,
            "names no built-in profile (ListModels lists them in uncertainty_profiles)",
        ));
        return None;
    };
    let fits = match role {
        InputRole::Engine(q) => q.measured_as() == p.input,
        // An input the engine does not take: the profile must at least be
        // for a quantity of the same kind (a PO2 figure for a PO2 field).
        _ => engine_unit(unit) == p.input.unit(),
    };
    if !fits {
        reader.refuse(Violation::other(
            path,
            REASON_UNCERTAINTY_FIGURE,
            format!(
                "names a profile for {}, another kind of input",
                p.input.name()
            ),
        ));
        return None;
    }
    Some(p.id.clone())
}

/// The engine unit (UCUM) of a figure unit.
fn engine_unit(unit: FigureUnit) -> &'static str {
    match unit {
        FigureUnit::Kind(kind) => units::engine_unit(kind),
        FigureUnit::Ph => "[pH]",
        FigureUnit::HufnerFactor => "mL/g",
        FigureUnit::Dimensionless => "1",
    }
}

fn read_bound(
    reader: &mut RequestReader,
    bound: &UncertaintyBound,
    unit: FigureUnit,
    path: &FieldPath<'_>,
) -> Option<Statement> {
    let half_width_path = path.field("half_width");
    let half_width = match bound.half_width.as_ref() {
        Some(a) => read_amount(reader, a, unit, &half_width_path),
        None => {
            reader.refuse(Violation::required(&half_width_path));
            None
        }
    };
    let shape_path = path.field("shape");
    let Ok(wire) = WireBoundShape::try_from(bound.shape) else {
        reader.refuse(Violation::other(
            &shape_path,
            REASON_UNKNOWN_ENUM,
            "not a known oxbind.v1.BoundShape value",
        ));
        return None;
    };
    let coverage_path = path.field("coverage_probability");
    let factor_path = path.field("coverage_factor");
    let ratio_path = path.field("trapezoid_top_ratio");
    // The parameters each shape reads; any other one set is refused.
    let (uses_coverage, uses_factor, uses_ratio) = match wire {
        WireBoundShape::Unspecified | WireBoundShape::Normal => (true, false, false),
        WireBoundShape::CoverageFactor => (false, true, false),
        WireBoundShape::Rectangular | WireBoundShape::Triangular => (false, false, false),
        WireBoundShape::Trapezoidal => (false, false, true),
    };
    let mut ok = true;
    for (uses, value, p) in [
        (uses_coverage, bound.coverage_probability, &coverage_path),
        (uses_factor, bound.coverage_factor, &factor_path),
        (uses_ratio, bound.trapezoid_top_ratio, &ratio_path),
    ] {
        if !uses && value != 0.0 {
            ok = false;
            reader.refuse(not_applicable(
                p,
                "does not apply to this bound's shape (coverage_probability: normal; coverage_factor: coverage factor; trapezoid_top_ratio: trapezoidal)",
            ));
        }
    }
    let required = |reader: &mut RequestReader, value: f64, p: &FieldPath<'_>, limit| {
        if value == 0.0 {
            reader.refuse(Violation::required_for(p, "this bound's shape"));
            None
        } else {
            read_number(reader, value, p, limit)
        }
    };
    let shape = match wire {
        WireBoundShape::Unspecified | WireBoundShape::Normal => required(
            reader,
            bound.coverage_probability,
            &coverage_path,
            &limits::UNCERTAINTY_BOUND_COVERAGE,
        )
        .map(|coverage_probability| BoundShape::Normal {
            coverage_probability,
        }),
        WireBoundShape::CoverageFactor => required(
            reader,
            bound.coverage_factor,
            &factor_path,
            &limits::UNCERTAINTY_COVERAGE_FACTOR,
        )
        .map(|k| BoundShape::CoverageFactor { k }),
        WireBoundShape::Rectangular => Some(BoundShape::Rectangular),
        WireBoundShape::Triangular => Some(BoundShape::Triangular),
        WireBoundShape::Trapezoidal => read_number(
            reader,
            bound.trapezoid_top_ratio,
            &ratio_path,
            &limits::UNCERTAINTY_TRAPEZOID_RATIO,
        )
        .map(|beta| BoundShape::Trapezoidal { beta }),
    };
    let (half_width, shape) = (half_width?, shape?);
    ok.then_some(Statement::Bound { half_width, shape })
}

/// An amount: the absolute part in a unit the input accepts (converted to
/// the engine unit as a difference), the relative part as `%` or `1`.
fn read_amount(
    reader: &mut RequestReader,
    amount: &UncertaintyAmount,
    unit: FigureUnit,
    path: &FieldPath<'_>,
) -> Option<Amount> {
    if amount.absolute.is_none() && amount.relative.is_none() {
        reader.refuse(Violation {
            field: path.render(),
            reason: REASON_REQUIRED,
            description: format!("{} needs absolute, relative or both", path.render()),
            metadata: Vec::new(),
        });
        return None;
    }
    let absolute_path = path.field("absolute");
    let absolute = match amount.absolute.as_ref() {
        None => Some(0.0),
        Some(q) => {
            let value_path = absolute_path.field("value");
            if !q.value.is_finite() {
                reader.refuse(Violation::not_finite(&value_path));
                None
            } else {
                match difference_to_engine(q.value, &q.unit, unit) {
                    None => {
                        reader.refuse(unit_refusal(&absolute_path.field("unit"), unit));
                        None
                    }
                    Some(v) if !limits::UNCERTAINTY_ABSOLUTE.accepts(v) => {
                        reader.refuse(Violation::outside_limit(
                            &absolute_path,
                            &limits::UNCERTAINTY_ABSOLUTE,
                        ));
                        None
                    }
                    Some(v) => Some(v),
                }
            }
        }
    };
    let relative_path = path.field("relative");
    let relative = match amount.relative.as_ref() {
        None => Some(0.0),
        Some(q) => {
            let value_path = relative_path.field("value");
            if !q.value.is_finite() {
                reader.refuse(Violation::not_finite(&value_path));
                None
            } else {
                match units::to_engine(q.value, &q.unit, QuantityKind::Fraction) {
                    Err(refusal) => {
                        reader.refuse(Violation::unit(
                            &relative_path.field("unit"),
                            QuantityKind::Fraction,
                            refusal.hint,
                        ));
                        None
                    }
                    Ok(v) if !limits::UNCERTAINTY_RELATIVE.accepts(v) => {
                        reader.refuse(Violation::outside_limit(
                            &relative_path,
                            &limits::UNCERTAINTY_RELATIVE,
                        ));
                        None
                    }
                    Ok(v) => Some(v),
                }
            }
        }
    };
    Some(Amount::greater_of(absolute?, relative?))
}

/// A difference of `value` in UCUM `code`, in the engine unit of `unit`
/// (`None` for a code the input does not accept). Every accepted conversion
/// is affine, so the difference is f(value) − f(0): 1 [degF] is 5/9 Cel.
pub(super) fn difference_to_engine(value: f64, code: &str, unit: FigureUnit) -> Option<f64> {
    match unit {
        FigureUnit::Kind(kind) => {
            let at = |v| units::to_engine(v, code, kind).ok();
            Some(at(value)? - at(0.0)?)
        }
        other => other.accepted().contains(&code).then_some(value),
    }
}

/// A unit code the input's figure does not accept.
fn unit_refusal(path: &FieldPath<'_>, unit: FigureUnit) -> Violation {
    if let FigureUnit::Kind(kind) = unit {
        return Violation::unit(path, kind, None);
    }
    let accepted = unit.accepted().join(", ");
    let field = path.render();
    Violation {
        description: format!(
            "{field} has a unit code this input's figure does not accept; accepted UCUM codes (case-sensitive): {accepted}"
        ),
        reason: REASON_UNIT,
        metadata: vec![("accepted_units".to_owned(), accepted)],
        field,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn differences_convert_without_the_offset() {
        let temperature = FigureUnit::Kind(QuantityKind::Temperature);
        let f = difference_to_engine(1.8, "[degF]", temperature).unwrap();
        assert!((f - 1.0).abs() < 1e-12);
        let pressure = FigureUnit::Kind(QuantityKind::Pressure);
        let kpa = difference_to_engine(1.0, "kPa", pressure).unwrap();
        assert!((kpa - 7.500_615_758).abs() < 1e-6);
        let fraction = FigureUnit::Kind(QuantityKind::Fraction);
        assert_eq!(difference_to_engine(3.0, "%", fraction), Some(0.03));
        assert_eq!(
            difference_to_engine(0.01, "[pH]", FigureUnit::Ph),
            Some(0.01)
        );
        assert_eq!(difference_to_engine(0.01, "1", FigureUnit::Ph), None);
        assert_eq!(difference_to_engine(3.0, "mmHg", pressure), None);
    }
}
