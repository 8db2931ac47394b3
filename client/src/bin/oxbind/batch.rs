//! `oxbind batch`: saturations for every row of a CSV file.
//!
//! Input: a header row, then one blood-gas row per line. Columns (any order;
//! only `po2` is required; an empty cell means "not measured"):
//! `id` (the caller's own, echoed back), `po2`, `ph`, `pco2`, `temperature`,
//! `dpg`, `base_excess`, `cohb`, `methb`, `hbf`. A cell holds a number with
//! an optional UCUM unit, as the flags do (`80`, `10.7kPa`, `38.5Cel`).
//!
//! Output: one row per input row, in order, with `row`, `id`,
//! `saturation_fraction`, `p50_at_conditions`, `p50_unit`,
//! `within_validated_range`, `warnings` and `error` (empty when computed).

use std::{io::IsTerminal, path::PathBuf};

use clap::Args;
use indicatif::{ProgressBar, ProgressStyle};
use oxbind_client::{
    code_name,
    v1::{BloodConditions, SaturationFromTensionRequest, SaturationFromTensionResponse},
    ClientError,
};

use crate::{args, failure::Failure, output, Context};

/// Flags of `oxbind batch`.
#[derive(Debug, Clone, Args)]
pub(crate) struct BatchArgs {
    /// CSV file of blood-gas rows (header: id, po2, ph, pco2, temperature, dpg,
    /// base_excess, cohb, methb, hbf; only po2 is required).
    #[arg(long, value_name = "FILE")]
    pub(crate) input: PathBuf,
    /// CSV file to write, one result row per input row.
    #[arg(long, value_name = "FILE")]
    pub(crate) output: PathBuf,
    /// Rows per batch call.
    #[arg(long, default_value_t = 500, value_parser = clap::value_parser!(u32).range(1..=10_000))]
    pub(crate) chunk_size: u32,
}

/// The output columns.
const OUTPUT_HEADER: [&str; 8] = [
    "row",
    "id",
    "saturation_fraction",
    "p50_at_conditions",
    "p50_unit",
    "within_validated_range",
    "warnings",
    "error",
];

/// One input row: its caller id and either a request or why it is unusable.
struct Row {
    id: String,
    request: Result<SaturationFromTensionRequest, String>,
}

fn read_rows(ctx: &Context, path: &PathBuf) -> Result<Vec<Row>, Failure> {
    let mut reader = csv::ReaderBuilder::new()
        .flexible(true)
        .trim(csv::Trim::All)
        .from_path(path)
        .map_err(|e| Failure::Usage(format!("{}: {e}", path.display())))?;
    let headers = reader
        .headers()
        .map_err(|e| Failure::Usage(format!("{}: {e}", path.display())))?
        .clone();
    let column = |name: &str| headers.iter().position(|h| h == name);
    let po2_column = column("po2").ok_or_else(|| {
        Failure::Usage(format!("{}: no `po2` column in the header", path.display()))
    })?;
    let id_column = column("id");
    let others = [
        "ph",
        "pco2",
        "temperature",
        "dpg",
        "base_excess",
        "cohb",
        "methb",
        "hbf",
    ]
    .map(|name| (name, column(name)));
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| Failure::Usage(format!("{}: {e}", path.display())))?;
        let cell = |i: Option<usize>| i.and_then(|i| record.get(i)).unwrap_or("").to_owned();
        let id = cell(id_column);
        let mut cells = std::collections::HashMap::new();
        for (name, index) in others {
            cells.insert(name, cell(index));
        }
        let request = build_request(ctx, &cell(Some(po2_column)), &cells);
        rows.push(Row { id, request });
    }
    Ok(rows)
}

fn build_request(
    ctx: &Context,
    po2: &str,
    cells: &std::collections::HashMap<&str, String>,
) -> Result<SaturationFromTensionRequest, String> {
    let optional =
        |name: &str, parse: fn(&str) -> Result<oxbind_client::v1::Quantity, String>| match cells
            .get(name)
            .map(String::as_str)
        {
            None | Some("") => Ok(None),
            Some(text) => parse(text).map(Some).map_err(|e| format!("{name}: {e}")),
        };
    if po2.is_empty() {
        return Err("po2: empty".to_owned());
    }
    let po2 = args::pressure(po2).map_err(|e| format!("po2: {e}"))?;
    let ph = match cells.get("ph").map(String::as_str) {
        None | Some("") => None,
        Some(text) => Some(
            text.parse::<f64>()
                .map_err(|_| format!("ph: `{text}` is not a number"))?,
        ),
    };
    let conditions = BloodConditions {
        ph,
        pco2: optional("pco2", args::pressure)?,
        temperature: optional("temperature", args::temperature)?,
        dpg: optional("dpg", args::concentration)?,
        base_excess: optional("base_excess", args::concentration)?,
        cohb: optional("cohb", args::percent)?,
        methb: optional("methb", args::percent)?,
        hbf: optional("hbf", args::percent)?,
    };
    Ok(SaturationFromTensionRequest {
        po2: Some(po2),
        conditions: Some(conditions),
        model: ctx.model,
        hill: None,
        unit_system: ctx.unit_system,
    })
}

/// The error column's text for a refused item.
fn refusal_text(error: &ClientError) -> String {
    let fields: Vec<String> = error
        .field_violations()
        .iter()
        .map(|v| format!("{}: {}", v.field, v.description))
        .collect();
    if fields.is_empty() {
        format!("{}: {error}", code_name(error.code()))
    } else {
        format!("{}: {}", code_name(error.code()), fields.join("; "))
    }
}

fn result_row(
    number: usize,
    id: &str,
    result: &Result<SaturationFromTensionResponse, String>,
) -> [String; 8] {
    match result {
        Ok(r) => {
            let (p50, unit) = r
                .p50_at_conditions
                .as_ref()
                .map(|q| (format!("{:.2}", q.value), q.unit.clone()))
                .unwrap_or_default();
            let warnings: Vec<String> = r.warnings.iter().map(output::warning).collect();
            [
                number.to_string(),
                id.to_owned(),
                format!("{:.5}", r.saturation_fraction),
                p50,
                unit,
                r.provenance
                    .as_ref()
                    .map(|p| p.within_validated_range.to_string())
                    .unwrap_or_default(),
                warnings.join("; "),
                String::new(),
            ]
        }
        Err(error) => [
            number.to_string(),
            id.to_owned(),
            String::new(),
            String::new(),
            String::new(),
            String::new(),
            String::new(),
            error.clone(),
        ],
    }
}

/// `oxbind batch`.
pub(crate) async fn run(ctx: &Context, a: &BatchArgs) -> Result<(), Failure> {
    let rows = read_rows(ctx, &a.input)?;
    let mut results: Vec<Option<Result<SaturationFromTensionResponse, String>>> =
        rows.iter().map(|_| None).collect();
    for (result, row) in results.iter_mut().zip(&rows) {
        if let Err(e) = &row.request {
            *result = Some(Err(format!("unreadable row: {e}")));
        }
    }
    let to_send: Vec<usize> = (0..rows.len())
        .filter(|&i| rows[i].request.is_ok())
        .collect();

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
        let requests: Vec<SaturationFromTensionRequest> = chunk
            .iter()
            .filter_map(|&i| rows[i].request.as_ref().ok().cloned())
            .collect();
        // The CSV keeps only within_validated_range of the provenance, so the
        // smaller shared-provenance answer serves it.
        let answers = ctx
            .client
            .batch_saturation_from_tension_sharing_provenance(requests)
            .await?;
        if answers.len() != chunk.len() {
            return Err(Failure::Other(format!(
                "server returned {} results for {} requests",
                answers.len(),
                chunk.len()
            )));
        }
        for (&i, answer) in chunk.iter().zip(answers) {
            results[i] = Some(answer.map_err(|e| refusal_text(&e)));
        }
        progress.inc(chunk.len() as u64);
    }
    progress.finish_and_clear();

    let mut writer = csv::Writer::from_path(&a.output)
        .map_err(|e| Failure::Other(format!("{}: {e}", a.output.display())))?;
    let write_error = |e: csv::Error| Failure::Other(format!("{}: {e}", a.output.display()));
    writer.write_record(OUTPUT_HEADER).map_err(write_error)?;
    let mut refused = 0;
    for (i, (row, result)) in rows.iter().zip(&results).enumerate() {
        let result = result
            .clone()
            .unwrap_or_else(|| Err("no result".to_owned()));
        refused += usize::from(result.is_err());
        writer
            .write_record(result_row(i + 1, &row.id, &result))
            .map_err(write_error)?;
    }
    writer
        .flush()
        .map_err(|e| Failure::Other(format!("{}: {e}", a.output.display())))?;
    eprintln!(
        "oxbind: {} rows: {} computed, {} with errors; results in {}",
        rows.len(),
        rows.len() - refused,
        refused,
        a.output.display()
    );
    Ok(())
}
