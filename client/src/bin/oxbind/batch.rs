//! `oxbind batch`: saturations (or tensions) for every row of a CSV file,
//! through the batch RPCs.
//!
//! The whole file is read and checked before anything is sent: its header
//! must name only documented columns ([`crate::columns`]), the id, or
//! columns the caller carries with `--carry`; otherwise the run stops with
//! the usage status. A row that cannot be read, or that the server refuses,
//! gets its error and every other row still computes; every row is written,
//! in order, and a run with any refused row exits with its own status.

use std::{
    io::{IsTerminal, Read, Write},
    path::PathBuf,
};

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use oxbind_client::{
    ucum,
    v1::{
        BloodConditions, Provenance, Quantity, SaturationFromTensionRequest,
        TensionFromSaturationRequest, Warning,
    },
    ClientError, ItemResult,
};

use crate::{
    args::{self, HillArgs},
    columns::{self, ColumnSpec, Field, Header, Kind},
    failure::Failure,
    fields::FieldNames,
    output::{self, stdout_error},
    Context,
};

/// Flags of `oxbind batch`.
#[derive(Debug, Clone, Args)]
#[command(after_help = columns_help())]
pub(crate) struct BatchArgs {
    /// CSV file of blood-gas rows with a header row (`-` for standard input).
    #[arg(long, value_name = "FILE")]
    pub(crate) input: PathBuf,
    /// CSV file to write, one result row per input row (`-` for standard output).
    #[arg(long, value_name = "FILE")]
    pub(crate) output: PathBuf,
    /// Columns of your own (a row key, a time, a bed) to copy to the output
    /// unchanged; they are never sent. Comma-separated, any case.
    #[arg(long, value_delimiter = ',', value_name = "COLUMN,...")]
    pub(crate) carry: Vec<String>,
    /// Rows per batch call.
    #[arg(long, default_value_t = 500, value_parser = clap::value_parser!(u32).range(1..=10_000))]
    pub(crate) chunk_size: u32,
    #[command(flatten)]
    pub(crate) hill: HillArgs,
}

/// The columns, for `oxbind batch --help`.
fn columns_help() -> String {
    format!(
        "Columns (names in any case; a header may declare its unit once, as in `po2 (kPa)` or \
`cohb (%)`): {}. A `po2` column asks for saturations, a `saturation` column for tensions. A cell \
holds a number with an optional UCUM code (`10.7kPa`); a bare number is in the column's declared \
unit, else mm[Hg] for tensions, Cel for temperature, mmol/L for 2,3-DPG and base excess, and for \
fractions (saturation, cohb, methb, hbf) the fraction itself: write per cent as `12%` or declare \
the column `cohb (%)`. Any other column stops the run before anything is sent, unless --carry \
names it.\n\nOutput columns: row (from 1), the carried columns, the results (saturation_fraction, \
or po2, po2_unit, po2_change_per_percent, po2_change_unit; then p50_at_conditions, p50_unit), \
within_validated_range, warning_severity (caution, informational or empty), warning_codes \
(space-separated WarningCode names), warnings (one line per code, in the same order: severity, \
column and message), error_reasons (space-separated reasons) and error (one line per refused \
column, naming it as the header does).",
        columns::accepted_names()
    )
}

/// Which batch RPC the file asks for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Direction {
    /// A `po2` column: BatchSaturationFromTension.
    Saturations,
    /// A `saturation` column: BatchTensionFromSaturation.
    Tensions,
}

/// One request of either batch RPC.
#[derive(Debug, Clone)]
enum Item {
    Saturation(SaturationFromTensionRequest),
    Tension(TensionFromSaturationRequest),
}

/// Why a row could not be read, for its `error_reasons` and `error` cells.
#[derive(Debug, Clone)]
pub(crate) struct CellError {
    pub(crate) reason: &'static str,
    pub(crate) message: String,
}

/// One input row: its carried cells and its request, or why it is unusable.
struct Row {
    carried: Vec<String>,
    item: Result<Item, Vec<CellError>>,
}

/// The file, read and checked, ready to send.
pub(crate) struct Prepared {
    direction: Direction,
    carried_headers: Vec<String>,
    rows: Vec<Row>,
    names: FieldNames,
}

/// Read and check the whole input before anything is sent.
pub(crate) fn prepare(a: &BatchArgs, model: i32, unit_system: i32) -> Result<Prepared, Failure> {
    let source = a.input.display().to_string();
    let unreadable = |e: &dyn std::fmt::Display| Failure::Usage(format!("{source}: {e}"));
    let mut text = String::new();
    if a.input.as_os_str() == "-" {
        std::io::stdin()
            .read_to_string(&mut text)
            .map_err(|e| unreadable(&e))?;
    } else {
        text = std::fs::read_to_string(&a.input).map_err(|e| unreadable(&e))?;
    }
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let header_record = reader.headers().map_err(|e| unreadable(&e))?.clone();
    let cells: Vec<&str> = header_record.iter().collect();
    let headers = columns::read_header(&cells, &a.carry)
        .map_err(|e| Failure::Usage(format!("{source}: {e}")))?;
    let has = |field: Field| {
        headers
            .iter()
            .any(|h| matches!(h, Header::Read { spec, .. } if spec.field == field))
    };
    let direction = match (has(Field::Po2), has(Field::Saturation)) {
        (true, false) => Direction::Saturations,
        (false, true) => Direction::Tensions,
        (true, true) => {
            return Err(Failure::Usage(format!(
                "{source}: give a `po2` column (for saturations) or a `saturation` column (for tensions), not both"
            )))
        }
        (false, false) => {
            return Err(Failure::Usage(format!(
                "{source}: no `po2` column (for saturations) or `saturation` column (for tensions); the columns read are {}",
                columns::accepted_names()
            )))
        }
    };
    let hill = a.hill.to_hill();
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| unreadable(&e))?;
        let mut carried = Vec::new();
        let mut item = ItemBuilder::default();
        for (header, cell) in headers.iter().zip(record.iter()) {
            match header {
                Header::Carried { .. } => carried.push(cell.to_owned()),
                Header::Read { spec, unit, text } => {
                    item.read(spec, unit.as_deref(), text, cell);
                }
            }
        }
        let item = item.finish(direction, &headers, model, unit_system, hill.clone());
        rows.push(Row { carried, item });
    }
    let mut names = FieldNames::new().with_hill("hill");
    let mut carried_headers = Vec::new();
    for header in &headers {
        match header {
            Header::Read { spec, text, .. } => names = names.with(spec.path, text.clone()),
            Header::Carried { text } => carried_headers.push(text.clone()),
        }
    }
    Ok(Prepared {
        direction,
        carried_headers,
        rows,
        names,
    })
}

/// The cells of one row, read.
#[derive(Default)]
struct ItemBuilder {
    po2: Option<Quantity>,
    saturation: Option<f64>,
    conditions: BloodConditions,
    any_condition: bool,
    errors: Vec<CellError>,
}

impl ItemBuilder {
    fn read(&mut self, spec: &ColumnSpec, unit: Option<&str>, header: &str, cell: &str) {
        if cell.is_empty() {
            return;
        }
        if spec.kind == Kind::Ph {
            match cell.parse::<f64>() {
                Ok(ph) => {
                    self.conditions.ph = Some(ph);
                    self.any_condition = true;
                }
                Err(_) => self.errors.push(CellError {
                    reason: "NOT_A_NUMBER",
                    message: format!("{header}: `{cell}` is not a number"),
                }),
            }
            return;
        }
        let quantity = match read_quantity(spec.kind, unit, header, cell) {
            Ok(q) => q,
            Err(e) => {
                self.errors.push(e);
                return;
            }
        };
        let q = Some(quantity.clone());
        match spec.field {
            Field::Po2 => self.po2 = q,
            Field::Saturation => {
                self.saturation = Some(if quantity.unit == ucum::PERCENT {
                    quantity.value / 100.0
                } else {
                    quantity.value
                })
            }
            Field::Pco2 => self.conditions.pco2 = q,
            Field::Temperature => self.conditions.temperature = q,
            Field::Dpg => self.conditions.dpg = q,
            Field::BaseExcess => self.conditions.base_excess = q,
            Field::Cohb => self.conditions.cohb = q,
            Field::Methb => self.conditions.methb = q,
            Field::Hbf => self.conditions.hbf = q,
            Field::Ph => {}
        }
        if !matches!(spec.field, Field::Po2 | Field::Saturation) {
            self.any_condition = true;
        }
    }

    fn finish(
        mut self,
        direction: Direction,
        headers: &[Header],
        model: i32,
        unit_system: i32,
        hill: Option<oxbind_client::v1::HillParameters>,
    ) -> Result<Item, Vec<CellError>> {
        let column = |field: Field| {
            headers
                .iter()
                .find_map(|h| match h {
                    Header::Read { spec, text, .. } if spec.field == field => Some(text.clone()),
                    _ => None,
                })
                .unwrap_or_default()
        };
        match direction {
            Direction::Saturations if self.po2.is_none() && self.errors.is_empty() => {
                self.errors.push(CellError {
                    reason: "VALUE_REQUIRED",
                    message: format!("{} is empty; a PO2 is required", column(Field::Po2)),
                })
            }
            Direction::Tensions if self.saturation.is_none() && self.errors.is_empty() => {
                self.errors.push(CellError {
                    reason: "VALUE_REQUIRED",
                    message: format!(
                        "{} is empty; a saturation is required",
                        column(Field::Saturation)
                    ),
                })
            }
            _ => {}
        }
        if !self.errors.is_empty() {
            return Err(self.errors);
        }
        let conditions = self.any_condition.then_some(self.conditions);
        Ok(match direction {
            Direction::Saturations => Item::Saturation(SaturationFromTensionRequest {
                po2: self.po2,
                conditions,
                model,
                hill,
                unit_system,
                uncertainty: None,
            }),
            Direction::Tensions => Item::Tension(TensionFromSaturationRequest {
                saturation_fraction: self.saturation.unwrap_or_default(),
                conditions,
                model,
                hill,
                unit_system,
                uncertainty: None,
            }),
        })
    }
}

/// A cell as a quantity: its own unit, else the header's, else the kind's
/// default; the one rule for bare fractions applies when neither the cell
/// nor the header gives a unit.
pub(crate) fn read_quantity(
    kind: Kind,
    header_unit: Option<&str>,
    header: &str,
    cell: &str,
) -> Result<Quantity, CellError> {
    let default = header_unit.unwrap_or(kind.default_unit());
    let (q, with_unit) = args::split_quantity(cell, default).map_err(|e| CellError {
        reason: "NOT_A_NUMBER",
        message: format!("{header}: {e}"),
    })?;
    if with_unit {
        if let Some(declared) = header_unit {
            if q.unit != declared {
                return Err(CellError {
                    reason: "UNIT_CONFLICTS_WITH_HEADER",
                    message: format!(
                        "{header}: `{cell}` carries the unit {}, but the column declares {declared}",
                        q.unit
                    ),
                });
            }
        }
    }
    if kind == Kind::Fraction {
        if !with_unit && header_unit.is_none() && q.value > 1.0 {
            return Err(CellError {
                reason: "BARE_FRACTION_ABOVE_ONE",
                message: format!(
                    "{header}: {}, or declare the column `{} (%)`",
                    args::bare_fraction_hint(cell),
                    header
                ),
            });
        }
        if q.unit != ucum::PERCENT && q.unit != ucum::FRACTION {
            return Err(CellError {
                reason: "NOT_A_FRACTION_UNIT",
                message: format!(
                    "{header}: a fraction takes no unit but `%` or `1`, not `{}`",
                    q.unit
                ),
            });
        }
    }
    Ok(q)
}

/// What one row came to.
enum Outcome {
    Computed {
        values: Vec<String>,
        /// The provenance's `within_validated_range`, when it came back.
        within_validated_range: Option<bool>,
        warnings: Vec<Warning>,
    },
    Unreadable(Vec<CellError>),
    Refused(Box<ClientError>),
}

/// `oxbind batch`, after [`prepare`].
pub(crate) async fn run(ctx: &Context, a: &BatchArgs, prepared: Prepared) -> Result<(), Failure> {
    let Prepared {
        direction,
        carried_headers,
        rows,
        names,
    } = prepared;
    // The output is opened before the first call, so an unwritable file
    // costs the server nothing.
    let to_stdout = a.output.as_os_str() == "-";
    let sink: Box<dyn Write> = if to_stdout {
        Box::new(std::io::stdout())
    } else {
        Box::new(
            std::fs::File::create(&a.output)
                .map_err(|e| Failure::Other(format!("{}: {e}", a.output.display())))?,
        )
    };
    let mut outcomes: Vec<Option<Outcome>> = rows.iter().map(|_| None).collect();
    for (outcome, row) in outcomes.iter_mut().zip(&rows) {
        if let Err(errors) = &row.item {
            *outcome = Some(Outcome::Unreadable(errors.clone()));
        }
    }
    let to_send: Vec<usize> = (0..rows.len()).filter(|&i| rows[i].item.is_ok()).collect();
    let progress = if std::io::stderr().is_terminal() {
        ProgressBar::new(rows.len() as u64)
    } else {
        ProgressBar::hidden()
    };
    progress.set_style(
        ProgressStyle::with_template("{bar:40} {pos}/{len} rows {elapsed_precise}")
            .map_err(|e| Failure::Other(e.to_string()))?,
    );
    progress.inc((rows.len() - to_send.len()) as u64);
    for chunk in to_send.chunks(a.chunk_size as usize) {
        let items: Vec<&Item> = chunk
            .iter()
            .filter_map(|&i| rows[i].item.as_ref().ok())
            .collect();
        // The CSV keeps only within_validated_range of the provenance, so the
        // smaller shared-provenance answer serves it.
        let answers = send(ctx, direction, &items).await?;
        if answers.len() != chunk.len() {
            return Err(Failure::Other(format!(
                "server returned {} results for {} requests",
                answers.len(),
                chunk.len()
            )));
        }
        for (&i, answer) in chunk.iter().zip(answers) {
            outcomes[i] = Some(answer);
        }
        progress.inc(chunk.len() as u64);
    }
    progress.finish_and_clear();

    let write_error = |e: csv::Error| match e.into_kind() {
        csv::ErrorKind::Io(io) if to_stdout => stdout_error(io),
        other => Failure::Other(format!("{}: {other:?}", a.output.display())),
    };
    let mut writer = csv::Writer::from_writer(sink);
    let mut header: Vec<String> = vec!["row".to_owned()];
    header.extend(carried_headers.iter().cloned());
    header.extend(result_columns(direction).iter().map(|c| (*c).to_owned()));
    header.extend(
        [
            "within_validated_range",
            "warning_severity",
            "warning_codes",
            "warnings",
            "error_reasons",
            "error",
        ]
        .map(str::to_owned),
    );
    writer.write_record(&header).map_err(write_error)?;
    let mut refused = 0;
    for (i, (row, outcome)) in rows.iter().zip(outcomes).enumerate() {
        let outcome = outcome.unwrap_or_else(|| {
            Outcome::Unreadable(vec![CellError {
                reason: "NO_RESULT",
                message: "no result".to_owned(),
            }])
        });
        refused += usize::from(!matches!(outcome, Outcome::Computed { .. }));
        let mut record = vec![(i + 1).to_string()];
        record.extend(row.carried.iter().cloned());
        record.extend(outcome_cells(direction, &outcome, &names));
        writer.write_record(&record).map_err(write_error)?;
    }
    writer
        .flush()
        .map_err(|e| write_error(csv::Error::from(e)))?;
    let place = if to_stdout {
        "standard output".to_owned()
    } else {
        a.output.display().to_string()
    };
    output::note(format!(
        "oxbind: {} rows: {} computed, {} refused; results on {place}",
        rows.len(),
        rows.len() - refused,
        refused,
    ));
    if refused > 0 {
        return Err(Failure::RowsRefused);
    }
    Ok(())
}

/// Send one chunk through the batch RPC of `direction`.
async fn send(
    ctx: &Context,
    direction: Direction,
    items: &[&Item],
) -> Result<Vec<Outcome>, Failure> {
    fn outcomes<R>(
        answers: Vec<ItemResult<R>>,
        cells: impl Fn(&R) -> (Vec<String>, Option<Provenance>, Vec<Warning>),
    ) -> Vec<Outcome> {
        answers
            .into_iter()
            .map(|answer| match answer {
                Ok(r) => {
                    let (values, provenance, warnings) = cells(&r);
                    Outcome::Computed {
                        values,
                        within_validated_range: provenance.map(|p| p.within_validated_range),
                        warnings,
                    }
                }
                Err(e) => Outcome::Refused(Box::new(e)),
            })
            .collect()
    }
    match direction {
        Direction::Saturations => {
            let requests = items
                .iter()
                .filter_map(|i| match i {
                    Item::Saturation(r) => Some(r.clone()),
                    Item::Tension(_) => None,
                })
                .collect();
            let answers = ctx
                .client
                .batch_saturation_from_tension_sharing_provenance(requests)
                .await?;
            Ok(outcomes(answers, |r| {
                let (p50, unit) = quantity_cells(r.p50_at_conditions.as_ref(), 2);
                (
                    vec![format!("{:.5}", r.saturation_fraction), p50, unit],
                    r.provenance.clone(),
                    r.warnings.clone(),
                )
            }))
        }
        Direction::Tensions => {
            let requests = items
                .iter()
                .filter_map(|i| match i {
                    Item::Tension(r) => Some(r.clone()),
                    Item::Saturation(_) => None,
                })
                .collect();
            let answers = ctx
                .client
                .batch_tension_from_saturation_sharing_provenance(requests)
                .await?;
            Ok(outcomes(answers, |r| {
                let (po2, po2_unit) = quantity_cells(r.po2.as_ref(), 3);
                let (change, change_unit) = quantity_cells(r.po2_change_per_percent.as_ref(), 4);
                let (p50, unit) = quantity_cells(r.p50_at_conditions.as_ref(), 2);
                (
                    vec![po2, po2_unit, change, change_unit, p50, unit],
                    r.provenance.clone(),
                    r.warnings.clone(),
                )
            }))
        }
    }
}

fn quantity_cells(q: Option<&Quantity>, decimals: usize) -> (String, String) {
    q.map(|q| (format!("{:.decimals$}", q.value), q.unit.clone()))
        .unwrap_or_default()
}

fn result_columns(direction: Direction) -> &'static [&'static str] {
    match direction {
        Direction::Saturations => &["saturation_fraction", "p50_at_conditions", "p50_unit"],
        Direction::Tensions => &[
            "po2",
            "po2_unit",
            "po2_change_per_percent",
            "po2_change_unit",
            "p50_at_conditions",
            "p50_unit",
        ],
    }
}

/// The result, warning and error cells of one row.
fn outcome_cells(direction: Direction, outcome: &Outcome, names: &FieldNames) -> Vec<String> {
    let empty_results = vec![String::new(); result_columns(direction).len()];
    match outcome {
        Outcome::Computed {
            values,
            within_validated_range,
            warnings,
        } => {
            let severity = if warnings.is_empty() {
                ""
            } else if warnings
                .iter()
                .any(|w| output::severity_name(w.severity) == "caution")
            {
                "caution"
            } else {
                "informational"
            };
            let codes: Vec<String> = warnings.iter().map(output::code_name).collect();
            let messages: Vec<String> = warnings
                .iter()
                .map(|w| {
                    format!(
                        "{}: {}",
                        output::severity_name(w.severity),
                        output::warning_text(w, names)
                    )
                })
                .collect();
            let mut cells = values.clone();
            cells.extend([
                within_validated_range
                    .map(|inside| inside.to_string())
                    .unwrap_or_default(),
                severity.to_owned(),
                codes.join(" "),
                messages.join("\n"),
                String::new(),
                String::new(),
            ]);
            cells
        }
        Outcome::Unreadable(errors) => {
            let mut cells = empty_results;
            cells.extend([
                String::new(),
                String::new(),
                String::new(),
                String::new(),
                errors
                    .iter()
                    .map(|e| e.reason)
                    .collect::<Vec<_>>()
                    .join(" "),
                errors
                    .iter()
                    .map(|e| e.message.clone())
                    .collect::<Vec<_>>()
                    .join("\n"),
            ]);
            cells
        }
        Outcome::Refused(error) => {
            let (reasons, messages) = refusal_cells(error, names);
            let mut cells = empty_results;
            cells.extend([
                String::new(),
                String::new(),
                String::new(),
                String::new(),
                reasons,
                messages,
            ]);
            cells
        }
    }
}

/// A refused item's reasons and messages, each field named as the file's
/// header names it (the item's `requests[i].` prefix removed).
pub(crate) fn refusal_cells(error: &ClientError, names: &FieldNames) -> (String, String) {
    let violations = error.field_violations();
    if violations.is_empty() {
        return (
            oxbind_client::code_name(error.code()).to_owned(),
            error.to_string(),
        );
    }
    let reasons: Vec<&str> = violations.iter().map(|v| v.reason.as_str()).collect();
    let messages: Vec<String> = violations
        .iter()
        .map(|v| {
            let (field, description) = match v.field.split_once('.') {
                Some((item, field)) if item.starts_with("requests[") => (
                    field,
                    v.description
                        .strip_prefix(item)
                        .and_then(|d| d.strip_prefix('.'))
                        .unwrap_or(&v.description),
                ),
                _ => (v.field.as_str(), v.description.as_str()),
            };
            names.restate(field, description)
        })
        .collect();
    (reasons.join(" "), messages.join("\n"))
}
