//! Cases from the engine's reference tables (`service/tests/data/*.csv`).
//!
//! The engine tests call the physiology directly; here each row whose
//! quantity the service returns becomes a request through the contract, with
//! the row's expected value, tolerance and source. A row whose quantity is
//! internal to the engine (a coefficient, an intermediate value, a
//! published approximation the service does not offer) is listed as not
//! run, with the reason. A table, column or check name this build does not
//! know stops nothing: its rows are listed as not run, and a unit test fails
//! the build until they are placed.

use std::collections::BTreeMap;

use serde_json::{json, Value};

use crate::verify::{
    case::{file_name, Case, CaseSet, Check, Expect, Family, NotRun, Want},
    sources::EmbeddedFile,
};

mod curve_points;
mod function_checks;
mod transport;

/// A row of a table: its line in the file and its cells by column name.
#[derive(Debug, Clone)]
pub(crate) struct Row {
    /// The line number in the file (the header is line 1).
    pub(crate) line: u64,
    /// Each cell by its column name; empty cells are left out.
    pub(crate) cells: BTreeMap<String, String>,
}

impl Row {
    /// The cell `column`, when not empty.
    pub(crate) fn text(&self, column: &str) -> Option<&str> {
        self.cells.get(column).map(String::as_str)
    }

    /// The number in cell `column`, when not empty.
    pub(crate) fn number(&self, column: &str) -> Result<Option<f64>, String> {
        self.text(column)
            .map(|text| {
                text.trim()
                    .parse::<f64>()
                    .map_err(|_| format!("column {column}: `{text}` is not a number"))
            })
            .transpose()
    }

    /// The number in cell `column`, which must be present.
    pub(crate) fn required(&self, column: &str) -> Result<f64, String> {
        self.number(column)?
            .ok_or_else(|| format!("column {column} is empty"))
    }

    /// Where the row is, for the report.
    pub(crate) fn location(&self) -> String {
        format!("line {}", self.line)
    }
}

/// What one table's reader makes of one row.
pub(crate) enum RowOutcome {
    /// A case: the request, the checks, and a note on how it was built.
    Case {
        /// The method name without the package, e.g.
        /// `DissociationService/SaturationFromTension`.
        rpc: &'static str,
        /// The request in the protobuf JSON mapping.
        request: Value,
        /// The checks on the response.
        checks: Vec<Check>,
        /// How the row was turned into a request, where that is not plain.
        note: Option<String>,
    },
    /// Not a case through the service, and why.
    NotRun(String),
}

/// A table reader: the columns it understands and what it makes of a row.
pub(crate) struct TableReader {
    /// The file name it reads.
    pub(crate) file: &'static str,
    /// Every column it understands; any other column stops the table.
    pub(crate) columns: &'static [&'static str],
    /// What it makes of a row.
    pub(crate) read: fn(&Row) -> Result<RowOutcome, String>,
    /// Whether its cases are also sent as one batch, and how.
    pub(crate) batch: Option<curve_points::BatchOf>,
}

/// Every table this build knows how to send.
pub(crate) const READERS: [TableReader; 6] = [
    curve_points::SATURATION,
    curve_points::TENSION,
    function_checks::READER,
    transport::OXYGEN_CONTENT,
    transport::GAS_EXCHANGE,
    transport::TEMPERATURE_CORRECTION,
];

/// The column every table gives the source of a row in.
const SOURCE: &str = "source";

/// Every row of every table.
pub(crate) fn cases(files: &[EmbeddedFile]) -> CaseSet {
    let mut set = CaseSet::default();
    for file in files {
        let name = file_name(file.path);
        match READERS.iter().find(|r| r.file == name) {
            Some(reader) => set.extend(read_table(file, reader)),
            None => set.not_run.push(NotRun {
                file: file.path,
                location: "every row".to_owned(),
                reason: "this build of oxbind verify does not know how to send this table's rows"
                    .to_owned(),
            }),
        }
    }
    set
}

/// The rows of a CSV text.
pub(crate) fn rows(text: &str) -> Result<(Vec<String>, Vec<Row>), String> {
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    let headers: Vec<String> = reader
        .headers()
        .map_err(|e| format!("header: {e}"))?
        .iter()
        .map(|h| h.trim().to_owned())
        .collect();
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| e.to_string())?;
        let line = record.position().map_or(0, |p| p.line());
        let cells = headers
            .iter()
            .zip(record.iter())
            .filter(|(_, cell)| !cell.trim().is_empty())
            .map(|(h, cell)| (h.clone(), cell.trim().to_owned()))
            .collect();
        rows.push(Row { line, cells });
    }
    Ok((headers, rows))
}

fn read_table(file: &EmbeddedFile, reader: &TableReader) -> CaseSet {
    let mut set = CaseSet::default();
    let problem = |location: String, reason: String| NotRun {
        file: file.path,
        location,
        reason,
    };
    let (headers, rows) = match rows(file.text) {
        Ok(read) => read,
        Err(reason) => {
            set.problems.push(problem("the file".to_owned(), reason));
            return set;
        }
    };
    if let Some(unknown) = headers
        .iter()
        .find(|h| h.as_str() != SOURCE && !reader.columns.contains(&h.as_str()))
    {
        // A column that is not understood could change what a row means:
        // no row is sent without it.
        set.not_run.push(problem(
            "every row".to_owned(),
            format!("column `{unknown}` is not one this build of oxbind verify understands"),
        ));
        return set;
    }
    let mut batch_rows = Vec::new();
    for row in &rows {
        let Some(source) = row.text(SOURCE).map(str::to_owned) else {
            // A row without a source is not a verification case.
            set.not_run.push(problem(
                row.location(),
                "the row names no source".to_owned(),
            ));
            continue;
        };
        match (reader.read)(row) {
            Ok(RowOutcome::Case {
                rpc,
                request,
                checks,
                note,
            }) => {
                batch_rows.push((row.line, request.clone(), checks.clone()));
                set.cases.push(Case {
                    id: format!("{}/line-{}", file_name(file.path), row.line),
                    family: Family::ReferenceTable,
                    file: file.path,
                    rpc: format!("oxbind.v1.{rpc}"),
                    request,
                    expect: Expect::Answer {
                        checks,
                        item_errors: Vec::new(),
                    },
                    source,
                    note,
                });
            }
            Ok(RowOutcome::NotRun(reason)) => set.not_run.push(problem(row.location(), reason)),
            Err(reason) => set.problems.push(problem(row.location(), reason)),
        }
    }
    if let Some(batch) = &reader.batch {
        if !batch_rows.is_empty() {
            set.cases.push(batch.case(file, &batch_rows));
        }
    }
    set
}

/// A quantity in the protobuf JSON mapping.
pub(crate) fn quantity(value: f64, unit: &str) -> Value {
    json!({"value": value, "unit": unit})
}

/// A number check.
pub(crate) fn number(path: &str, value: f64, tolerance: f64) -> Check {
    Check {
        path: path.to_owned(),
        want: Want::Number { value, tolerance },
    }
}

/// An exact check.
pub(crate) fn equals(path: &str, value: Value) -> Check {
    Check {
        path: path.to_owned(),
        want: Want::Equals(value),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::verify::sources::TABLE_FILES;

    #[test]
    fn every_table_is_known_and_every_row_is_a_case_or_says_why_not() {
        let set = cases(TABLE_FILES);
        assert!(set.problems.is_empty(), "{:#?}", set.problems);
        for skipped in &set.not_run {
            assert_ne!(skipped.location, "every row", "{skipped:?}");
            assert!(
                !skipped.reason.contains("does not know"),
                "place this check in a reader: {skipped:?}"
            );
        }
        let rows: usize = TABLE_FILES
            .iter()
            .map(|f| rows(f.text).unwrap().1.len())
            .sum();
        let batches = set
            .cases
            .iter()
            .filter(|c| c.id.ends_with("/batch"))
            .count();
        assert_eq!(set.cases.len() - batches + set.not_run.len(), rows);
    }
}
