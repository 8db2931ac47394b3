//! `oxbind check --input`: the consistency findings of every row of a CSV
//! file, through BatchCheckBloodGas, by the rules of `oxbind batch`: the
//! whole file is read and checked before anything is sent; documented
//! column names in any case, a unit declared once in a header, the caller's
//! own columns carried with `--carry`, any other column stops the run; every
//! row is written, in order, and a run with a refused or unreadable row
//! exits with its own status.

use std::{
    io::{Read, Write},
    path::Path,
};

use clap::ValueEnum;
use oxbind_client::{
    ucum,
    v1::{
        BicarbonateSource, BloodGasResults, BloodGasSampleType, CheckBloodGasRequest,
        CheckBloodGasResponse, ConsistencyCheck, ReportedTemperature, ResultsAt37Cel,
        SaturationKind, UnitSystem,
    },
    ClientError,
};

use crate::{
    args::SaturationKindArg,
    batch::{read_quantity, refusal_cells, CellError},
    check::{
        verdict_word, BicarbonateSourceArg, CheckArgs, ReportedAtArg, SampleTypeArg,
        DEFAULT_CHUNK_SIZE,
    },
    columns::{self, ColumnSpec, Header, Kind},
    failure::Failure,
    fields::FieldNames,
    output::{self, stdout_error},
    Context,
};

/// A column `oxbind check --input` reads.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum CheckField {
    Po2,
    Pco2,
    Ph,
    Temperature,
    ReportedAt,
    SampleType,
    So2,
    So2Kind,
    Cohb,
    Methb,
    Hemoglobin,
    Hbf,
    Spo2,
    Fio2,
    Barometric,
    Bicarbonate,
    BicarbonateSource,
    WhiteCells,
    Ph37,
    Pco237,
    Po237,
}

/// One column of the table.
const fn column(
    field: CheckField,
    name: &'static str,
    aliases: &'static [&'static str],
    kind: Kind,
    path: &'static str,
) -> ColumnSpec<CheckField> {
    ColumnSpec {
        field,
        name,
        aliases,
        kind,
        path,
    }
}

/// Every column `oxbind check --input` reads, in the order `--help` lists
/// them; `path` is the request field below `sample`.
pub(crate) const CHECK_COLUMNS: [ColumnSpec<CheckField>; 21] = [
    column(CheckField::Po2, "po2", &[], Kind::Pressure, "po2"),
    column(CheckField::Pco2, "pco2", &[], Kind::Pressure, "pco2"),
    column(CheckField::Ph, "ph", &[], Kind::Ph, "ph"),
    column(
        CheckField::Temperature,
        "temperature",
        &["temp"],
        Kind::Temperature,
        "temperature",
    ),
    column(
        CheckField::ReportedAt,
        "reported_at",
        &["reported-at"],
        Kind::Word,
        "reported_at",
    ),
    column(
        CheckField::SampleType,
        "sample_type",
        &["sample-type"],
        Kind::Word,
        "sample_type",
    ),
    column(
        CheckField::So2,
        "so2",
        &["so2_fraction"],
        Kind::Fraction,
        "so2_fraction",
    ),
    column(
        CheckField::So2Kind,
        "so2_kind",
        &["so2-kind"],
        Kind::Word,
        "so2_kind",
    ),
    column(CheckField::Cohb, "cohb", &[], Kind::Fraction, "cohb"),
    column(CheckField::Methb, "methb", &[], Kind::Fraction, "methb"),
    column(
        CheckField::Hemoglobin,
        "hemoglobin",
        &["hb"],
        Kind::Hemoglobin,
        "hemoglobin",
    ),
    column(CheckField::Hbf, "hbf", &[], Kind::Fraction, "hbf"),
    column(
        CheckField::Spo2,
        "spo2",
        &["spo2_fraction"],
        Kind::Fraction,
        "spo2_fraction",
    ),
    column(CheckField::Fio2, "fio2", &[], Kind::Fraction, "fio2"),
    column(
        CheckField::Barometric,
        "barometric_pressure",
        &["barometric"],
        Kind::Pressure,
        "barometric_pressure",
    ),
    column(
        CheckField::Bicarbonate,
        "bicarbonate",
        &[],
        Kind::Concentration,
        "bicarbonate",
    ),
    column(
        CheckField::BicarbonateSource,
        "bicarbonate_source",
        &["bicarbonate-source"],
        Kind::Word,
        "bicarbonate_source",
    ),
    column(
        CheckField::WhiteCells,
        "white_cell_count",
        &["wbc"],
        Kind::CellCount,
        "white_cell_count",
    ),
    column(
        CheckField::Ph37,
        "ph_37",
        &["ph-37"],
        Kind::Ph,
        "results_at_37_cel.ph",
    ),
    column(
        CheckField::Pco237,
        "pco2_37",
        &["pco2-37"],
        Kind::Pressure,
        "results_at_37_cel.pco2",
    ),
    column(
        CheckField::Po237,
        "po2_37",
        &["po2-37"],
        Kind::Pressure,
        "results_at_37_cel.po2",
    ),
];

/// The columns, for `oxbind check --help`.
pub(crate) fn columns_help() -> String {
    format!(
        "With --input, a CSV file of samples. Columns (names in any case; a header may declare \
its unit once, as in `po2 (kPa)` or `cohb (%)`): {}. A cell holds a number with an optional \
UCUM code (`10.7kPa`); a bare number is in the column's declared unit, else mm[Hg] for tensions \
and barometric pressure, Cel for temperature, mmol/L for bicarbonate, g/dL for haemoglobin, \
10*9/L for the white-cell count, and for fractions (so2, spo2, cohb, methb, hbf, fio2) the \
fraction itself: write per cent as `12%` or declare the column `cohb (%)`. The word columns take \
the flags' values, in any case: reported_at 37-cel or patient-temperature; sample_type arterial, \
venous, mixed-venous, capillary or unknown; so2_kind functional or fractional; bicarbonate_source \
measured, measured-total-co2 or calculated. Any other column stops the run before anything is \
sent, unless --carry names it. The threshold and figure flags apply to every row.\n\nOutput \
columns: row (from 1), the carried columns, then for each check its verdict (consistent, \
discordant or not_evaluable) under the check's name ({}), `<check>_statistic (<unit>)` and \
`<check>_threshold (<unit>)`; then discordant and not_evaluable (space-separated check names), \
warning_codes, warnings, error_reasons and error (one line per refused column, naming it as the \
header does). A discordant row is a computed row: findings support the laboratory's review and \
do not reject results.",
        columns::accepted_names_in(&CHECK_COLUMNS),
        CHECKS.map(|c| check_code(c as i32)).join(", ")
    )
}

/// Every check, in the order of the output columns.
const CHECKS: [ConsistencyCheck; 11] = [
    ConsistencyCheck::MeasuredSaturation,
    ConsistencyCheck::PulseOximetryGap,
    ConsistencyCheck::CarbonMonoxideGap,
    ConsistencyCheck::AboveAlveolar,
    ConsistencyCheck::RoomAirExposure,
    ConsistencyCheck::VenousPattern,
    ConsistencyCheck::AcidBase,
    ConsistencyCheck::TemperatureCorrectionPh,
    ConsistencyCheck::TemperatureCorrectionPco2,
    ConsistencyCheck::TemperatureCorrectionPo2,
    ConsistencyCheck::WhiteCellConsumption,
];

/// A check's lower-case name (the contract's enum name without its prefix).
pub(crate) fn check_code(raw: i32) -> String {
    ConsistencyCheck::try_from(raw)
        .map(|c| {
            c.as_str_name()
                .trim_start_matches("CONSISTENCY_CHECK_")
                .to_lowercase()
        })
        .unwrap_or_else(|_| raw.to_string())
}

/// The unit of a check's statistic in `system`.
fn statistic_unit(check: ConsistencyCheck, system: UnitSystem) -> &'static str {
    let pressure = if system == UnitSystem::Si {
        ucum::KPA
    } else {
        ucum::MM_HG
    };
    match check {
        ConsistencyCheck::AboveAlveolar
        | ConsistencyCheck::TemperatureCorrectionPco2
        | ConsistencyCheck::TemperatureCorrectionPo2 => pressure,
        ConsistencyCheck::TemperatureCorrectionPh => "[pH]",
        ConsistencyCheck::WhiteCellConsumption => columns::CELLS_PER_NL,
        _ => ucum::FRACTION,
    }
}

/// One input row: its carried cells and its request, or why it is unusable.
struct Row {
    carried: Vec<String>,
    item: Result<CheckBloodGasRequest, Vec<CellError>>,
}

/// The file, read and checked, ready to send.
pub(crate) struct Prepared {
    carried_headers: Vec<String>,
    rows: Vec<Row>,
    names: FieldNames,
    system: UnitSystem,
}

/// Read and check the whole input before anything is sent.
pub(crate) fn prepare(a: &CheckArgs, model: i32, unit_system: i32) -> Result<Prepared, Failure> {
    let input = a.input.as_deref().unwrap_or(Path::new("-"));
    let source = input.display().to_string();
    let unreadable = |e: &dyn std::fmt::Display| Failure::Usage(format!("{source}: {e}"));
    let mut text = String::new();
    if input.as_os_str() == "-" {
        std::io::stdin()
            .read_to_string(&mut text)
            .map_err(|e| unreadable(&e))?;
    } else {
        text = std::fs::read_to_string(input).map_err(|e| unreadable(&e))?;
    }
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let header_record = reader.headers().map_err(|e| unreadable(&e))?.clone();
    let cells: Vec<&str> = header_record.iter().collect();
    let headers = columns::read_header_in(&CHECK_COLUMNS, &cells, &a.carry)
        .map_err(|e| Failure::Usage(format!("{source}: {e}")))?;
    if !headers
        .iter()
        .any(|h| matches!(h, Header::Read { spec, .. } if spec.field == CheckField::Po2))
    {
        return Err(Failure::Usage(format!(
            "{source}: no `po2` column; every sample needs a PO2"
        )));
    }
    // Every row takes the same figures, tied to the sample fields by the
    // flags' names.
    let uncertainty = a.figures.to_uncertainty()?;
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| unreadable(&e))?;
        let mut carried = Vec::new();
        let mut sample = SampleBuilder::default();
        for (header, cell) in headers.iter().zip(record.iter()) {
            match header {
                Header::Carried { .. } => carried.push(cell.to_owned()),
                Header::Read { spec, unit, text } => sample.read(spec, unit.as_deref(), text, cell),
            }
        }
        let item = sample.finish(&headers).map(|results| CheckBloodGasRequest {
            sample: Some(results),
            uncertainty: uncertainty.clone(),
            threshold_rule: a.figures.rule(),
            model,
            unit_system,
        });
        rows.push(Row { carried, item });
    }
    let mut names = a.figures.names(FieldNames::new());
    let mut carried_headers = Vec::new();
    for header in &headers {
        match header {
            Header::Read { spec, text, .. } => {
                names = names.with(&format!("sample.{}", spec.path), text.clone());
            }
            Header::Carried { text } => carried_headers.push(text.clone()),
        }
    }
    Ok(Prepared {
        carried_headers,
        rows,
        names,
        system: UnitSystem::try_from(unit_system).unwrap_or(UnitSystem::Conventional),
    })
}

/// The cells of one row, read.
#[derive(Default)]
struct SampleBuilder {
    results: BloodGasResults,
    at_37: ResultsAt37Cel,
    errors: Vec<CellError>,
}

/// A word cell as the value of the enum `E`, any case.
fn word<E: ValueEnum>(header: &str, cell: &str) -> Result<E, CellError> {
    E::from_str(cell, true).map_err(|_| CellError {
        reason: "UNKNOWN_WORD",
        message: format!(
            "{header}: `{cell}` is not one of {}",
            E::value_variants()
                .iter()
                .filter_map(|v| v.to_possible_value())
                .map(|v| v.get_name().to_owned())
                .collect::<Vec<_>>()
                .join(", ")
        ),
    })
}

impl SampleBuilder {
    fn read(
        &mut self,
        spec: &ColumnSpec<CheckField>,
        unit: Option<&str>,
        header: &str,
        cell: &str,
    ) {
        if cell.is_empty() {
            return;
        }
        if let Err(e) = self.set(spec, unit, header, cell) {
            self.errors.push(e);
        }
    }

    fn set(
        &mut self,
        spec: &ColumnSpec<CheckField>,
        unit: Option<&str>,
        header: &str,
        cell: &str,
    ) -> Result<(), CellError> {
        let number = || {
            cell.parse::<f64>().map_err(|_| CellError {
                reason: "NOT_A_NUMBER",
                message: format!("{header}: `{cell}` is not a number"),
            })
        };
        let q = || read_quantity(spec.kind, unit, header, cell).map(Some);
        let fraction = || {
            read_quantity(spec.kind, unit, header, cell).map(|q| {
                Some(if q.unit == ucum::PERCENT {
                    q.value / 100.0
                } else {
                    q.value
                })
            })
        };
        let r = &mut self.results;
        match spec.field {
            CheckField::Po2 => r.po2 = q()?,
            CheckField::Pco2 => r.pco2 = q()?,
            CheckField::Ph => r.ph = Some(number()?),
            CheckField::Temperature => r.temperature = q()?,
            CheckField::ReportedAt => {
                r.reported_at =
                    ReportedTemperature::from(word::<ReportedAtArg>(header, cell)?) as i32
            }
            CheckField::SampleType => {
                r.sample_type =
                    BloodGasSampleType::from(word::<SampleTypeArg>(header, cell)?) as i32
            }
            CheckField::So2 => r.so2_fraction = fraction()?,
            CheckField::So2Kind => {
                r.so2_kind = SaturationKind::from(word::<SaturationKindArg>(header, cell)?) as i32
            }
            CheckField::Cohb => r.cohb = q()?,
            CheckField::Methb => r.methb = q()?,
            CheckField::Hemoglobin => r.hemoglobin = q()?,
            CheckField::Hbf => r.hbf = q()?,
            CheckField::Spo2 => r.spo2_fraction = fraction()?,
            CheckField::Fio2 => r.fio2 = q()?,
            CheckField::Barometric => r.barometric_pressure = q()?,
            CheckField::Bicarbonate => r.bicarbonate = q()?,
            CheckField::BicarbonateSource => {
                r.bicarbonate_source =
                    BicarbonateSource::from(word::<BicarbonateSourceArg>(header, cell)?) as i32
            }
            CheckField::WhiteCells => r.white_cell_count = q()?,
            CheckField::Ph37 => self.at_37.ph = Some(number()?),
            CheckField::Pco237 => self.at_37.pco2 = q()?,
            CheckField::Po237 => self.at_37.po2 = q()?,
        }
        Ok(())
    }

    fn finish(mut self, headers: &[Header<CheckField>]) -> Result<BloodGasResults, Vec<CellError>> {
        if self.results.po2.is_none() && self.errors.is_empty() {
            let column = headers
                .iter()
                .find_map(|h| match h {
                    Header::Read { spec, text, .. } if spec.field == CheckField::Po2 => {
                        Some(text.clone())
                    }
                    _ => None,
                })
                .unwrap_or_default();
            self.errors.push(CellError {
                reason: "VALUE_REQUIRED",
                message: format!("{column} is empty; a PO2 is required"),
            });
        }
        if !self.errors.is_empty() {
            return Err(self.errors);
        }
        if self.at_37 != ResultsAt37Cel::default() {
            self.results.results_at_37_cel = Some(self.at_37);
        }
        Ok(self.results)
    }
}

/// What one row came to.
enum Outcome {
    Checked(Box<CheckBloodGasResponse>),
    Unreadable(Vec<CellError>),
    Refused(Box<ClientError>),
}

/// `oxbind check --input`, after [`prepare`].
pub(crate) async fn run(ctx: &Context, a: &CheckArgs, prepared: Prepared) -> Result<(), Failure> {
    let Prepared {
        carried_headers,
        rows,
        names,
        system,
    } = prepared;
    let output_path = a.output.as_deref().unwrap_or(Path::new("-"));
    let to_stdout = output_path.as_os_str() == "-";
    let sink: Box<dyn Write> = if to_stdout {
        Box::new(std::io::stdout())
    } else {
        Box::new(
            std::fs::File::create(output_path)
                .map_err(|e| Failure::Other(format!("{}: {e}", output_path.display())))?,
        )
    };
    let mut outcomes: Vec<Option<Outcome>> = rows
        .iter()
        .map(|row| match &row.item {
            Err(errors) => Some(Outcome::Unreadable(errors.clone())),
            Ok(_) => None,
        })
        .collect();
    let to_send: Vec<usize> = (0..rows.len()).filter(|&i| rows[i].item.is_ok()).collect();
    let chunk_size = a.chunk_size.unwrap_or(DEFAULT_CHUNK_SIZE) as usize;
    for chunk in to_send.chunks(chunk_size) {
        let requests: Vec<CheckBloodGasRequest> = chunk
            .iter()
            .filter_map(|&i| rows[i].item.as_ref().ok().cloned())
            .collect();
        let answers = ctx.client.batch_check_blood_gas(requests).await?;
        if answers.len() != chunk.len() {
            return Err(Failure::Other(format!(
                "server returned {} results for {} requests",
                answers.len(),
                chunk.len()
            )));
        }
        for (&i, answer) in chunk.iter().zip(answers) {
            outcomes[i] = Some(match answer {
                Ok(response) => Outcome::Checked(Box::new(response)),
                Err(e) => Outcome::Refused(Box::new(e)),
            });
        }
    }

    let write_error = |e: csv::Error| match e.into_kind() {
        csv::ErrorKind::Io(io) if to_stdout => stdout_error(io),
        other => Failure::Other(format!("{}: {other:?}", output_path.display())),
    };
    let mut writer = csv::Writer::from_writer(sink);
    let mut header: Vec<String> = vec!["row".to_owned()];
    header.extend(carried_headers.iter().cloned());
    for check in CHECKS {
        let code = check_code(check as i32);
        let unit = statistic_unit(check, system);
        header.push(code.clone());
        header.push(format!("{code}_statistic ({unit})"));
        header.push(format!("{code}_threshold ({unit})"));
    }
    header.extend(
        [
            "discordant",
            "not_evaluable",
            "warning_codes",
            "warnings",
            "error_reasons",
            "error",
        ]
        .map(str::to_owned),
    );
    writer.write_record(&header).map_err(write_error)?;
    let (mut refused, mut discordant_rows) = (0, 0);
    for (i, (row, outcome)) in rows.iter().zip(outcomes).enumerate() {
        let outcome = outcome.unwrap_or_else(|| {
            Outcome::Unreadable(vec![CellError {
                reason: "NO_RESULT",
                message: "no result".to_owned(),
            }])
        });
        let mut record = vec![(i + 1).to_string()];
        record.extend(row.carried.iter().cloned());
        match &outcome {
            Outcome::Checked(r) => {
                discordant_rows += usize::from(r.discordant_count > 0);
                record.extend(finding_cells(r, &names));
            }
            Outcome::Unreadable(errors) => {
                refused += 1;
                record.extend(vec![String::new(); CHECKS.len() * 3 + 4]);
                record.push(
                    errors
                        .iter()
                        .map(|e| e.reason)
                        .collect::<Vec<_>>()
                        .join(" "),
                );
                record.push(
                    errors
                        .iter()
                        .map(|e| e.message.clone())
                        .collect::<Vec<_>>()
                        .join("\n"),
                );
            }
            Outcome::Refused(error) => {
                refused += 1;
                record.extend(vec![String::new(); CHECKS.len() * 3 + 4]);
                let (reasons, messages) = refusal_cells(error, &names);
                record.push(reasons);
                record.push(messages);
            }
        }
        writer.write_record(&record).map_err(write_error)?;
    }
    writer
        .flush()
        .map_err(|e| write_error(csv::Error::from(e)))?;
    let place = if to_stdout {
        "standard output".to_owned()
    } else {
        output_path.display().to_string()
    };
    output::note(format!(
        "oxbind: {} rows: {} checked ({} with a discordant finding), {} refused; results on {place}",
        rows.len(),
        rows.len() - refused,
        discordant_rows,
        refused,
    ));
    if refused > 0 {
        return Err(Failure::RowsRefused);
    }
    Ok(())
}

/// A value as its cell: enough decimals for the unit.
fn value_cell(q: Option<&oxbind_client::v1::Quantity>) -> String {
    let Some(q) = q else {
        return String::new();
    };
    let decimals = match q.unit.as_str() {
        "1" => 5,
        "[pH]" | "kPa" => 4,
        "mm[Hg]" => 2,
        _ => 1,
    };
    format!("{:.decimals$}", q.value)
}

/// The finding and summary cells of a checked row (warnings and no error).
fn finding_cells(r: &CheckBloodGasResponse, names: &FieldNames) -> Vec<String> {
    let mut cells = Vec::with_capacity(CHECKS.len() * 3 + 6);
    let mut discordant = Vec::new();
    let mut not_evaluable = Vec::new();
    for check in CHECKS {
        match r.findings.iter().find(|f| f.check == check as i32) {
            Some(f) => {
                let word = verdict_word(f.verdict);
                match word {
                    "discordant" => discordant.push(check_code(f.check)),
                    "not_evaluable" => not_evaluable.push(check_code(f.check)),
                    _ => {}
                }
                cells.push(word.to_owned());
                cells.push(value_cell(f.statistic.as_ref()));
                cells.push(value_cell(f.threshold.as_ref()));
            }
            None => cells.extend([String::new(), String::new(), String::new()]),
        }
    }
    cells.push(discordant.join(" "));
    cells.push(not_evaluable.join(" "));
    cells.push(
        r.warnings
            .iter()
            .map(output::code_name)
            .collect::<Vec<_>>()
            .join(" "),
    );
    cells.push(
        r.warnings
            .iter()
            .map(|w| {
                format!(
                    "{}: {}",
                    output::severity_name(w.severity),
                    output::warning_text(w, names)
                )
            })
            .collect::<Vec<_>>()
            .join("\n"),
    );
    cells.extend([String::new(), String::new()]);
    cells
}
