//! Reading `ConsistencyUncertainty`: the uncertainty figures of the
//! uncertainty-based rules, and the coverage probability.

use oxbind_proto::v1::{
    consistency_figure::Figure as WireFigure, ConsistencyInput, ConsistencyUncertainty,
};

use crate::api::{
    field_path::FieldPath,
    limits,
    reader::RequestReader,
    status::{
        Violation, REASON_INCONSISTENT, REASON_NOT_FINITE, REASON_OUT_OF_RANGE, REASON_UNIT,
        REASON_UNKNOWN_ENUM,
    },
    units::{self, QuantityKind},
};
use crate::physiology::{
    consistency::{figures::FigureError, Figure, FigureInput, Figures},
    uncertainty::{evaluate::DEFAULT_COVERAGE_PROBABILITY, Amount},
};

/// ErrorInfo reason: a profile id that names no built-in profile.
pub const REASON_UNKNOWN_PROFILE: &str = "UNKNOWN_PROFILE";

/// The UCUM code of a pH difference.
const PH_UNIT: &str = "[pH]";

/// The engine input of a contract input.
pub fn figure_input(input: ConsistencyInput) -> Option<FigureInput> {
    Some(match input {
        ConsistencyInput::Unspecified => return None,
        ConsistencyInput::Po2 => FigureInput::Po2,
        ConsistencyInput::Pco2 => FigureInput::Pco2,
        ConsistencyInput::Ph => FigureInput::Ph,
        ConsistencyInput::So2 => FigureInput::So2,
        ConsistencyInput::Spo2 => FigureInput::Spo2,
        ConsistencyInput::Cohb => FigureInput::Cohb,
        ConsistencyInput::Methb => FigureInput::Methb,
        ConsistencyInput::Fio2 => FigureInput::Fio2,
        ConsistencyInput::BarometricPressure => FigureInput::BarometricPressure,
        ConsistencyInput::Bicarbonate => FigureInput::Bicarbonate,
    })
}

/// The contract input of an engine input.
pub fn wire_input(input: FigureInput) -> ConsistencyInput {
    match input {
        FigureInput::Po2 => ConsistencyInput::Po2,
        FigureInput::Pco2 => ConsistencyInput::Pco2,
        FigureInput::Ph => ConsistencyInput::Ph,
        FigureInput::So2 => ConsistencyInput::So2,
        FigureInput::Spo2 => ConsistencyInput::Spo2,
        FigureInput::Cohb => ConsistencyInput::Cohb,
        FigureInput::Methb => ConsistencyInput::Methb,
        FigureInput::Fio2 => ConsistencyInput::Fio2,
        FigureInput::BarometricPressure => ConsistencyInput::BarometricPressure,
        FigureInput::Bicarbonate => ConsistencyInput::Bicarbonate,
    }
}

/// The quantity kind of an input's value (and of its standard uncertainty);
/// `None` for pH, a plain number.
pub(super) fn input_kind(input: FigureInput) -> Option<QuantityKind> {
    match input {
        FigureInput::Po2 | FigureInput::Pco2 | FigureInput::BarometricPressure => {
            Some(QuantityKind::Pressure)
        }
        FigureInput::So2
        | FigureInput::Spo2
        | FigureInput::Cohb
        | FigureInput::Methb
        | FigureInput::Fio2 => Some(QuantityKind::Fraction),
        FigureInput::Ph => None,
        FigureInput::Bicarbonate => Some(QuantityKind::Concentration),
    }
}

/// The largest standard uncertainty accepted for `input`, engine unit: the
/// width of its hard range (our limit: a larger figure says nothing, and
/// would overflow the arithmetic).
fn largest_standard_uncertainty(input: FigureInput) -> f64 {
    match input {
        FigureInput::Po2 | FigureInput::Pco2 | FigureInput::BarometricPressure => {
            limits::PRESSURE_MAX_MMHG
        }
        FigureInput::Ph => limits::PH.max - limits::PH.min,
        FigureInput::Bicarbonate => limits::BICARBONATE.max,
        FigureInput::So2
        | FigureInput::Spo2
        | FigureInput::Cohb
        | FigureInput::Methb
        | FigureInput::Fio2 => 1.0,
    }
}

/// The figures and the coverage probability of a request's `uncertainty`
/// at `path`; refusals go to `reader`.
pub(super) fn read_uncertainty(
    reader: &mut RequestReader,
    given: Option<&ConsistencyUncertainty>,
    path: &FieldPath<'_>,
) -> (Figures, f64) {
    let default = ConsistencyUncertainty::default();
    let given = given.unwrap_or(&default);
    let mut figures = if given.no_built_in_figures {
        Figures::none()
    } else {
        // The built-in table is checked by the tests; a malformed one (a
        // build defect) leaves every input without a figure rather than
        // failing every call.
        Figures::built_in().unwrap_or_default()
    };
    let mut seen: Vec<FigureInput> = Vec::new();
    for (index, figure) in given.figures.iter().enumerate() {
        let item = path.indexed("figures", index);
        let input_path = item.field("input");
        let input = match ConsistencyInput::try_from(figure.input) {
            Ok(input) => match figure_input(input) {
                Some(input) => input,
                None => {
                    reader.refuse(Violation::required(&input_path));
                    continue;
                }
            },
            Err(_) => {
                reader.refuse(Violation::other(
                    &input_path,
                    REASON_UNKNOWN_ENUM,
                    "not a known oxbind.v1.ConsistencyInput value",
                ));
                continue;
            }
        };
        if seen.contains(&input) {
            reader.refuse(Violation::other(
                &input_path,
                REASON_INCONSISTENT,
                "this input has a figure already; give one per input",
            ));
            continue;
        }
        seen.push(input);
        if let Some(read) = read_figure(reader, input, figure.figure.as_ref(), &item) {
            figures.set(input, read);
        }
    }
    let coverage = reader.number_or(
        given.coverage_probability,
        &path.field("coverage_probability"),
        &limits::COVERAGE_PROBABILITY,
        QuantityKind::Fraction,
        DEFAULT_COVERAGE_PROBABILITY,
    );
    (figures, coverage)
}

/// One figure; `None` (and a refusal) when it is unusable.
fn read_figure(
    reader: &mut RequestReader,
    input: FigureInput,
    given: Option<&WireFigure>,
    item: &FieldPath<'_>,
) -> Option<Figure> {
    match given {
        None => {
            reader.refuse(Violation::other(
                item,
                crate::api::status::REASON_REQUIRED,
                "needs a figure: standard_uncertainty, relative_standard_uncertainty or profile_id",
            ));
            None
        }
        Some(WireFigure::StandardUncertainty(q)) => {
            let path = item.field("standard_uncertainty");
            let value = if !q.value.is_finite() {
                reader.refuse(Violation::not_finite(&path.field("value")));
                return None;
            } else {
                match input_kind(input) {
                    Some(kind) => match units::to_engine(q.value, &q.unit, kind) {
                        Ok(v) => v,
                        Err(refusal) => {
                            reader.refuse(Violation::unit(&path.field("unit"), kind, refusal.hint));
                            return None;
                        }
                    },
                    None if q.unit == PH_UNIT => q.value,
                    None => {
                        reader.refuse(Violation {
                            field: path.field("unit").render(),
                            reason: REASON_UNIT,
                            description: format!(
                                "{} has a unit code this field does not accept; the uncertainty of pH takes `{PH_UNIT}`",
                                path.field("unit")
                            ),
                            metadata: vec![("accepted_units".to_owned(), PH_UNIT.to_owned())],
                        });
                        return None;
                    }
                }
            };
            let most = largest_standard_uncertainty(input);
            if !(0.0..=most).contains(&value) {
                reader.refuse(Violation::other(
                    &path.field("value"),
                    REASON_OUT_OF_RANGE,
                    format!(
                        "a standard uncertainty must be 0 or greater, and no larger than the \
input's whole accepted range ({} {})",
                        crate::api::status::readable(most),
                        input_kind(input).map_or(PH_UNIT, units::engine_unit)
                    ),
                ));
                return None;
            }
            Some(Figure::stated(Amount::absolute(value)))
        }
        Some(WireFigure::RelativeStandardUncertainty(r)) => {
            let path = item.field("relative_standard_uncertainty");
            if !r.is_finite() {
                reader.refuse(Violation {
                    field: path.render(),
                    reason: REASON_NOT_FINITE,
                    description: format!("{path} must be a finite number"),
                    metadata: Vec::new(),
                });
                return None;
            }
            if !(0.0..=1.0).contains(r) {
                reader.refuse(Violation::other(
                    &path,
                    REASON_OUT_OF_RANGE,
                    "a relative standard uncertainty is a fraction of the value, 0 to 1 (5 % is 0.05)",
                ));
                return None;
            }
            Some(Figure::stated(Amount::relative(*r)))
        }
        Some(WireFigure::ProfileId(id)) => {
            let path = item.field("profile_id");
            match Figure::profile(input, id) {
                Ok(figure) => Some(figure),
                Err(FigureError::ProfileForAnotherInput { profile_input }) => {
                    reader.refuse(Violation::other(
                        &path,
                        REASON_INCONSISTENT,
                        format!(
                            "the profile is a figure for {}, not for this input",
                            profile_input.name()
                        ),
                    ));
                    None
                }
                Err(_) => {
                    reader.refuse(Violation::other(
                        &path,
                        REASON_UNKNOWN_PROFILE,
                        "names no built-in profile (proto/API.md lists them)",
                    ));
                    None
                }
            }
        }
    }
}
