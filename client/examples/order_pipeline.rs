//! An order pipeline: read blood-gas rows from a CSV file, send them through
//! the batch RPC in chunks, and write one result row per input row, with the
//! error for any row the server refused.
//!
//! ```text
//! cargo run -p oxbind-client --example order_pipeline -- rows.csv results.csv
//! ```
//!
//! With no arguments it uses a few invented rows and prints to standard
//! output. Input columns, exactly: `order_id,po2_mmhg,ph,pco2_mmhg,
//! temperature_cel` (plain numbers in those units; an empty cell is "not
//! measured"). Any other column, or a cell that is not a number, is refused
//! rather than dropped.
//! The server address comes from `OXBIND_SERVER` (default
//! `http://127.0.0.1:50051`).

use std::{error::Error, io::Write};

use oxbind_client::{
    v1::{BloodConditions, Quantity, SaturationFromTensionRequest, WarningCode},
    OxbindClient, DEFAULT_SERVER,
};

/// Rows per batch call.
const CHUNK: usize = 100;

/// Invented rows for a run without arguments (row B-3 has an impossible pH).
const SAMPLE: &str = "order_id,po2_mmhg,ph,pco2_mmhg,temperature_cel
B-1,82,7.38,41,36.8
B-2,61,7.31,48,38.5
B-3,75,9.90,40,37.0
B-4,104,7.08,19,37.0
";

/// The input columns, by name; every one must be present, and no other.
const COLUMNS: [&str; 5] = ["order_id", "po2_mmhg", "ph", "pco2_mmhg", "temperature_cel"];

/// One input row: its order id, and its request or why it cannot be read.
struct Order {
    id: String,
    request: Result<SaturationFromTensionRequest, String>,
}

/// Read the rows. The header must name exactly [`COLUMNS`] (in any order):
/// a misspelt column would otherwise be dropped without a word, and the row
/// computed at standard conditions.
fn read_orders(reader: impl std::io::Read) -> Result<Vec<Order>, Box<dyn Error>> {
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(reader);
    let headers = reader.headers()?.clone();
    let mut index = [0usize; 5];
    for (slot, name) in index.iter_mut().zip(COLUMNS) {
        *slot = headers.iter().position(|h| h == name).ok_or_else(|| {
            format!("the header needs the columns {COLUMNS:?}; `{name}` is missing")
        })?;
    }
    if let Some(unknown) = headers.iter().find(|h| !COLUMNS.contains(h)) {
        return Err(format!("unknown column `{unknown}`; the columns are {COLUMNS:?}").into());
    }
    let mut orders = Vec::new();
    for record in reader.records() {
        let record = record?;
        let cell = |i: usize| record.get(index[i]).unwrap_or_default();
        // An empty cell is "not measured"; anything else must be a number.
        let number = |i: usize| -> Result<Option<f64>, String> {
            match cell(i) {
                "" => Ok(None),
                text => text
                    .parse()
                    .map(Some)
                    .map_err(|_| format!("{}: `{text}` is not a number", COLUMNS[i])),
            }
        };
        let request = (|| {
            let po2 = number(1)?.ok_or("po2_mmhg: empty; a PO2 is required")?;
            let conditions = BloodConditions {
                ph: number(2)?,
                pco2: number(3)?.map(Quantity::mm_hg),
                temperature: number(4)?.map(Quantity::celsius),
                ..Default::default()
            };
            Ok(SaturationFromTensionRequest {
                po2: Some(Quantity::mm_hg(po2)),
                // Nothing empty is sent: no conditions means standard ones.
                conditions: (conditions != BloodConditions::default()).then_some(conditions),
                ..Default::default()
            })
        })();
        orders.push(Order {
            id: cell(0).to_owned(),
            request,
        });
    }
    Ok(orders)
}

#[tokio::main]
async fn main() -> Result<(), Box<dyn Error>> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let orders = match args.first() {
        Some(path) => read_orders(std::fs::File::open(path)?)?,
        None => read_orders(SAMPLE.as_bytes())?,
    };
    let output: Box<dyn Write> = match args.get(1) {
        Some(path) => Box::new(std::fs::File::create(path)?),
        None => Box::new(std::io::stdout()),
    };
    let server = std::env::var("OXBIND_SERVER").unwrap_or_else(|_| DEFAULT_SERVER.to_owned());
    let client = OxbindClient::builder(server)
        .user_agent("order-pipeline-example/1")
        .connect()
        .await?;

    let mut writer = csv::Writer::from_writer(output);
    writer.write_record([
        "order_id",
        "saturation_fraction",
        "p50_mmhg",
        "warning_codes",
        "warnings",
        "error",
    ])?;
    for chunk in orders.chunks(CHUNK) {
        let requests: Vec<SaturationFromTensionRequest> = chunk
            .iter()
            .filter_map(|o| o.request.as_ref().ok().cloned())
            .collect();
        let mut results = if requests.is_empty() {
            Vec::new()
        } else {
            client.batch_saturation_from_tension(requests).await?
        }
        .into_iter();
        for order in chunk {
            let result = match &order.request {
                Err(unreadable) => Err(unreadable.clone()),
                Ok(_) => results
                    .next()
                    .ok_or("the server answered fewer items than were sent")?
                    .map_err(|refused| {
                        refused
                            .field_violations()
                            .iter()
                            .map(|v| v.description.clone())
                            .collect::<Vec<_>>()
                            .join("\n")
                    }),
            };
            match result {
                Ok(answer) => {
                    // Codes for machines, messages for people, one per line.
                    let codes: Vec<String> = answer
                        .warnings
                        .iter()
                        .map(|w| {
                            WarningCode::try_from(w.code)
                                .map(|c| c.as_str_name().to_owned())
                                .unwrap_or_else(|_| w.code.to_string())
                        })
                        .collect();
                    let messages: Vec<String> =
                        answer.warnings.iter().map(|w| w.message.clone()).collect();
                    writer.write_record([
                        order.id.clone(),
                        format!("{:.4}", answer.saturation_fraction),
                        answer
                            .p50_at_conditions
                            .map(|q| format!("{:.1}", q.value))
                            .unwrap_or_default(),
                        codes.join(" "),
                        messages.join("\n"),
                        String::new(),
                    ])?;
                }
                Err(error) => {
                    writer.write_record([
                        order.id.clone(),
                        String::new(),
                        String::new(),
                        String::new(),
                        String::new(),
                        error,
                    ])?;
                }
            }
        }
    }
    writer.flush()?;
    Ok(())
}
