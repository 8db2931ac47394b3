//! An order pipeline: read blood-gas rows from a CSV file, send them through
//! the batch RPC in chunks, and write one result row per input row, with the
//! error for any row the server refused.
//!
//! ```text
//! cargo run -p oxbind-client --example order_pipeline -- rows.csv results.csv
//! ```
//!
//! With no arguments it uses a few invented rows and prints to standard
//! output. Input columns: `order_id,po2_mmhg,ph,pco2_mmhg,temperature_cel`.
//! The server address comes from `OXBIND_SERVER` (default
//! `http://127.0.0.1:50051`).

use std::{error::Error, io::Write};

use oxbind_client::{
    v1::{BloodConditions, Quantity, SaturationFromTensionRequest},
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

/// One input row.
struct Order {
    id: String,
    request: SaturationFromTensionRequest,
}

fn number(record: &csv::StringRecord, index: usize) -> Option<f64> {
    record.get(index).and_then(|s| s.trim().parse().ok())
}

fn read_orders(reader: impl std::io::Read) -> Result<Vec<Order>, csv::Error> {
    let mut orders = Vec::new();
    for record in csv::Reader::from_reader(reader).records() {
        let record = record?;
        let mut conditions = BloodConditions::standard();
        if let Some(ph) = number(&record, 2) {
            conditions = conditions.with_ph(ph);
        }
        if let Some(pco2) = number(&record, 3) {
            conditions = conditions.with_pco2(Quantity::mm_hg(pco2));
        }
        if let Some(t) = number(&record, 4) {
            conditions = conditions.with_temperature(Quantity::celsius(t));
        }
        orders.push(Order {
            id: record.get(0).unwrap_or_default().to_owned(),
            request: SaturationFromTensionRequest {
                // A missing PO2 goes to the server as NaN, which it refuses
                // for this row alone, naming the field.
                po2: Some(Quantity::mm_hg(number(&record, 1).unwrap_or(f64::NAN))),
                conditions: Some(conditions),
                ..Default::default()
            },
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
        "warnings",
        "error",
    ])?;
    for chunk in orders.chunks(CHUNK) {
        let requests = chunk.iter().map(|o| o.request.clone()).collect();
        let results = client.batch_saturation_from_tension(requests).await?;
        for (order, result) in chunk.iter().zip(results) {
            match result {
                Ok(answer) => {
                    let warnings: Vec<String> =
                        answer.warnings.iter().map(|w| w.message.clone()).collect();
                    writer.write_record([
                        order.id.clone(),
                        format!("{:.4}", answer.saturation_fraction),
                        answer
                            .p50_at_conditions
                            .map(|q| format!("{:.1}", q.value))
                            .unwrap_or_default(),
                        warnings.join("; "),
                        String::new(),
                    ])?;
                }
                Err(refused) => {
                    let fields: Vec<String> = refused
                        .field_violations()
                        .iter()
                        .map(|v| format!("{}: {}", v.field, v.description))
                        .collect();
                    writer.write_record([
                        order.id.clone(),
                        String::new(),
                        String::new(),
                        String::new(),
                        fields.join("; "),
                    ])?;
                }
            }
        }
    }
    writer.flush()?;
    Ok(())
}
