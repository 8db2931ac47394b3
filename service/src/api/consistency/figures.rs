//! Reading `ConsistencyUncertainty`: each input's figure in the shape every
//! RPC takes (`InputUncertainty`, read by the uncertainty reader of
//! [`crate::api::uncertainty`], so a figure is spelt, converted and refused
//! the same way everywhere), the profile sets, the built-in figures and the
//! coverage probability of the uncertainty-based limits.

use oxbind_proto::v1::ConsistencyUncertainty;

use crate::api::{
    field_path::FieldPath,
    limits,
    reader::RequestReader,
    status::{Violation, REASON_UNCERTAINTY_FIELD, REASON_UNCERTAINTY_FIGURE},
    uncertainty::{
        inputs::{FigureUnit, InputRole},
        read_figure, read_profile_sets,
    },
    units::{self, QuantityKind},
};
use crate::physiology::{
    consistency::{figures::FigureError, Figure, FigureInput, Figures},
    uncertainty::{evaluate::DEFAULT_COVERAGE_PROBABILITY, Amount, FigureSource, Statement},
};

/// The request fields a figure may name, and the input each one is: every
/// input's own path first (its canonical path, in [`FigureInput::ALL`]
/// order), then the 37 Cel results, which are the same measurements.
const FIGURE_FIELDS: [(&str, FigureInput); 13] = [
    ("sample.po2", FigureInput::Po2),
    ("sample.pco2", FigureInput::Pco2),
    ("sample.ph", FigureInput::Ph),
    ("sample.so2_fraction", FigureInput::So2),
    ("sample.spo2_fraction", FigureInput::Spo2),
    ("sample.cohb", FigureInput::Cohb),
    ("sample.methb", FigureInput::Methb),
    ("sample.fio2", FigureInput::Fio2),
    (
        "sample.barometric_pressure",
        FigureInput::BarometricPressure,
    ),
    ("sample.bicarbonate", FigureInput::Bicarbonate),
    ("sample.results_at_37_cel.po2", FigureInput::Po2),
    ("sample.results_at_37_cel.pco2", FigureInput::Pco2),
    ("sample.results_at_37_cel.ph", FigureInput::Ph),
];

/// The request field path that names `input` in findings (its canonical
/// path, for example `sample.so2_fraction`).
pub fn field_path(input: FigureInput) -> &'static str {
    FIGURE_FIELDS
        .iter()
        .find(|(_, i)| *i == input)
        .map_or("sample", |(path, _)| path)
}

/// The input a request field path names, if a figure may be given for it.
fn input_at(path: &str) -> Option<FigureInput> {
    FIGURE_FIELDS
        .iter()
        .find(|(p, _)| *p == path)
        .map(|(_, input)| *input)
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

/// The units a figure for `input` may be written in: those of its own
/// field.
fn figure_unit(input: FigureInput) -> FigureUnit {
    input_kind(input).map_or(FigureUnit::Ph, FigureUnit::Kind)
}

/// What `input` is to the uncertainty reader: the engine quantity a profile
/// for it must be for (bicarbonate has none, so no built-in profile fits it).
fn role(input: FigureInput) -> InputRole {
    input
        .engine_quantities()
        .first()
        .map_or(InputRole::NotAnInput, |q| InputRole::Engine(*q))
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
    let mut figures = Figures::none();
    let inputs_path = path.field("inputs");
    if !limits::UNCERTAINTY_FIGURES.accepts(given.inputs.len() as f64) {
        reader.refuse(Violation::outside_limit(
            &inputs_path,
            &limits::UNCERTAINTY_FIGURES,
        ));
    }
    let mut seen: Vec<(FigureInput, usize)> = Vec::new();
    for (index, figure) in given
        .inputs
        .iter()
        .enumerate()
        .take(limits::UNCERTAINTY_FIGURES.max as usize)
    {
        let item = path.indexed("inputs", index);
        let Some(input) = input_at(&figure.field) else {
            reader.refuse(Violation::other(
                &item.field("field"),
                REASON_UNCERTAINTY_FIELD,
                format!(
                    "names no input the consistency checks take a figure for; they are {}",
                    FIGURE_FIELDS.map(|(p, _)| p).join(", ")
                ),
            ));
            continue;
        };
        if let Some((_, first)) = seen.iter().find(|(i, _)| *i == input) {
            reader.refuse(Violation::other(
                &item.field("field"),
                REASON_UNCERTAINTY_FIGURE,
                format!(
                    "names the same input as uncertainty.inputs[{first}] (a result and its 37 Cel \
result are one measurement); give one figure per input"
                ),
            ));
            continue;
        }
        seen.push((input, index));
        match read_figure(
            reader,
            figure.figure.as_ref(),
            figure_unit(input),
            role(input),
            &item,
        ) {
            // The refusal is in `reader`.
            None => {}
            Some(FigureSource::Stated(statement)) => {
                if !within_largest(reader, input, &statement, &item) {
                    continue;
                }
                figures.set(input, Figure::stated_as(statement));
            }
            Some(FigureSource::Profile(id)) => match Figure::profile(input, &id) {
                Ok(found) => figures.set(input, found),
                Err(error) => reader.refuse(profile_refusal(&item.field("profile_id"), &error)),
            },
        }
    }
    if let Some(sets) = read_profile_sets(reader, &given.profile_sets, path) {
        for set in &sets {
            // The sets were checked against the table just now; a malformed
            // table (a build defect, caught by the tests) adds nothing.
            let _ = figures.fill_from_set(set);
        }
    }
    if !given.no_built_in_figures {
        // As above: the built-in table is checked by the tests.
        let _ = figures.fill_built_in();
    }
    let coverage = reader.number_or(
        (given.coverage_probability != 0.0).then_some(given.coverage_probability),
        &path.field("coverage_probability"),
        &limits::UNCERTAINTY_COVERAGE_PROBABILITY,
        QuantityKind::Fraction,
        DEFAULT_COVERAGE_PROBABILITY,
    );
    (figures, coverage)
}

/// Whether a stated figure gives a standard uncertainty no larger than
/// [`largest_standard_uncertainty`] in its absolute part and 100 % of the
/// value in its relative part (a bound's half-width over its divisor);
/// otherwise a refusal naming the part.
fn within_largest(
    reader: &mut RequestReader,
    input: FigureInput,
    statement: &Statement,
    item: &FieldPath<'_>,
) -> bool {
    let (amount, divisor, bound): (Amount, f64, bool) = match *statement {
        Statement::StandardUncertainty(amount) => (amount, 1.0, false),
        Statement::Bound { half_width, shape } => (half_width, shape.divisor(), true),
    };
    let most = largest_standard_uncertainty(input);
    let unit = input_kind(input).map_or("[pH]", units::engine_unit);
    let stated = if bound {
        item.field("bound")
    } else {
        item.field("standard_uncertainty")
    };
    let half_width = stated.field("half_width");
    let amount_path = if bound { &half_width } else { &stated };
    let mut ok = true;
    for (part, value, largest, what) in [
        (
            "absolute",
            amount.absolute,
            most,
            format!(
                "no larger than the width of the input's whole accepted range, {} {unit}",
                crate::api::status::readable(most)
            ),
        ),
        (
            "relative",
            amount.relative,
            1.0,
            "no larger than 100 % of the value".to_owned(),
        ),
    ] {
        if value / divisor > largest {
            ok = false;
            reader.refuse(Violation::other(
                &amount_path.field(part),
                limits::UNCERTAINTY_ABSOLUTE.error_reason,
                format!(
                    "the standard uncertainty this figure gives (for a bound, the half-width over \
its divisor) must be {what}"
                ),
            ));
        }
    }
    ok
}

/// A profile the consistency checks cannot use for this input.
fn profile_refusal(path: &FieldPath<'_>, error: &FigureError) -> Violation {
    let description = match error {
        FigureError::ProfileForAnotherInput { profile_input } => format!(
            "names a profile for {}, another kind of input",
            profile_input.name()
        ),
        FigureError::UnknownProfile => {
            "names no built-in profile (ListModels lists them in uncertainty_profiles)".to_owned()
        }
        FigureError::ProfileTable(e) => e.to_string(),
    };
    Violation::other(path, REASON_UNCERTAINTY_FIGURE, description)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_input_has_one_canonical_path_and_its_own_units() {
        for input in FigureInput::ALL {
            let path = field_path(input);
            assert_eq!(input_at(path), Some(input), "{path}");
            assert!(path.starts_with("sample."));
        }
        assert_eq!(field_path(FigureInput::So2), "sample.so2_fraction");
        assert_eq!(
            input_at("sample.results_at_37_cel.ph"),
            Some(FigureInput::Ph)
        );
        assert_eq!(input_at("sample.temperature"), None);
        assert_eq!(figure_unit(FigureInput::Ph), FigureUnit::Ph);
        assert_eq!(
            figure_unit(FigureInput::Bicarbonate),
            FigureUnit::Kind(QuantityKind::Concentration)
        );
        assert_eq!(role(FigureInput::Bicarbonate), InputRole::NotAnInput);
    }
}
