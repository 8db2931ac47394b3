//! `saturation_checks.csv` and `tension_checks.csv`: one point of a model's
//! curve per row, sent as SaturationFromTension or TensionFromSaturation;
//! and all the rows of each table once more as one batch, which checks that
//! a batch answers every item in request order.

use clap::ValueEnum;
use oxbind_client::v1::Model;
use serde_json::{json, Map, Value};

use super::{equals, number, quantity, Row, RowOutcome, TableReader};
use crate::{
    model_arg::ModelArg,
    verify::{
        case::{file_name, Case, Check, Expect, Family},
        sources::EmbeddedFile,
    },
};

/// The columns that set the model and the blood conditions, shared by both
/// tables.
const CONDITION_COLUMNS: [&str; 8] = [
    "model",
    "hill_p50_mmhg",
    "hill_n",
    "ph",
    "pco2_mmhg",
    "temperature_celsius",
    "dpg_mmol_per_l",
    "base_excess_mmol_per_l",
];

/// `saturation_checks.csv`.
pub(crate) const SATURATION: TableReader = TableReader {
    file: "saturation_checks.csv",
    columns: &[
        "model",
        "po2_mmhg",
        "hill_p50_mmhg",
        "hill_n",
        "ph",
        "pco2_mmhg",
        "temperature_celsius",
        "dpg_mmol_per_l",
        "base_excess_mmol_per_l",
        "expected_saturation",
        "tolerance",
    ],
    read: saturation,
    batch: Some(BatchOf::Saturation),
};

/// `tension_checks.csv`.
pub(crate) const TENSION: TableReader = TableReader {
    file: "tension_checks.csv",
    columns: &[
        "model",
        "saturation",
        "hill_p50_mmhg",
        "hill_n",
        "ph",
        "pco2_mmhg",
        "temperature_celsius",
        "dpg_mmol_per_l",
        "base_excess_mmol_per_l",
        "expected_po2_mmhg",
        "tolerance_mmhg",
    ],
    read: tension,
    batch: Some(BatchOf::Tension),
};

fn saturation(row: &Row) -> Result<RowOutcome, String> {
    let mut request = model_and_conditions(row)?;
    request.insert(
        "po2".to_owned(),
        quantity(row.required("po2_mmhg")?, "mm[Hg]"),
    );
    Ok(RowOutcome::Case {
        rpc: "DissociationService/SaturationFromTension",
        request: Value::Object(request),
        checks: vec![number(
            "saturationFraction",
            row.required("expected_saturation")?,
            row.required("tolerance")?,
        )],
        note: None,
    })
}

fn tension(row: &Row) -> Result<RowOutcome, String> {
    let mut request = model_and_conditions(row)?;
    request.insert(
        "saturationFraction".to_owned(),
        json!(row.required("saturation")?),
    );
    Ok(RowOutcome::Case {
        rpc: "DissociationService/TensionFromSaturation",
        request: Value::Object(request),
        checks: vec![
            number(
                "po2.value",
                row.required("expected_po2_mmhg")?,
                row.required("tolerance_mmhg")?,
            ),
            equals("po2.unit", json!("mm[Hg]")),
        ],
        note: None,
    })
}

/// The model, Hill parameters and conditions of a row, as request fields.
fn model_and_conditions(row: &Row) -> Result<Map<String, Value>, String> {
    debug_assert!(CONDITION_COLUMNS
        .iter()
        .all(|c| SATURATION.columns.contains(c) && TENSION.columns.contains(c)));
    let mut request = Map::new();
    let id = row.text("model").ok_or("column model is empty")?;
    let model = ModelArg::from_str(id, false)
        .map_err(|_| format!("model `{id}` is not one this build knows"))?;
    request.insert("model".to_owned(), json!(Model::from(model).as_str_name()));
    let p50 = row.number("hill_p50_mmhg")?;
    let n = row.number("hill_n")?;
    if p50.is_some() || n.is_some() {
        let mut hill = Map::new();
        if let Some(p50) = p50 {
            hill.insert("p50".to_owned(), quantity(p50, "mm[Hg]"));
        }
        if let Some(n) = n {
            hill.insert("n".to_owned(), json!(n));
        }
        request.insert("hill".to_owned(), Value::Object(hill));
    }
    let mut conditions = Map::new();
    if let Some(ph) = row.number("ph")? {
        conditions.insert("ph".to_owned(), json!(ph));
    }
    let quantities = [
        ("pco2_mmhg", "pco2", "mm[Hg]"),
        ("temperature_celsius", "temperature", "Cel"),
        ("dpg_mmol_per_l", "dpg", "mmol/L"),
        ("base_excess_mmol_per_l", "baseExcess", "mmol/L"),
    ];
    for (column, field, unit) in quantities {
        if let Some(value) = row.number(column)? {
            conditions.insert(field.to_owned(), quantity(value, unit));
        }
    }
    if !conditions.is_empty() {
        request.insert("conditions".to_owned(), Value::Object(conditions));
    }
    Ok(request)
}

/// Which batch RPC a table's rows are sent through together.
#[derive(Debug, Clone, Copy)]
pub(crate) enum BatchOf {
    /// BatchSaturationFromTension.
    Saturation,
    /// BatchTensionFromSaturation.
    Tension,
}

impl BatchOf {
    /// One case sending every row of `file` in one batch: each item's
    /// checks hold on the result at its own index.
    pub(crate) fn case(self, file: &EmbeddedFile, rows: &[(u64, Value, Vec<Check>)]) -> Case {
        let rpc = match self {
            BatchOf::Saturation => "DissociationService/BatchSaturationFromTension",
            BatchOf::Tension => "DissociationService/BatchTensionFromSaturation",
        };
        let requests: Vec<Value> = rows.iter().map(|(_, r, _)| r.clone()).collect();
        let checks = rows
            .iter()
            .enumerate()
            .flat_map(|(i, (_, _, checks))| {
                checks.iter().map(move |check| Check {
                    path: format!("results[{i}].response.{}", check.path),
                    want: check.want.clone(),
                })
            })
            .collect();
        let lines: Vec<String> = rows.iter().map(|(line, _, _)| line.to_string()).collect();
        Case {
            id: format!("{}/batch", file_name(file.path)),
            family: Family::ReferenceTable,
            file: file.path,
            rpc: format!("oxbind.v1.{rpc}"),
            request: json!({ "requests": requests }),
            expect: Expect::Answer {
                checks,
                item_errors: Vec::new(),
            },
            source: format!(
                "each row's own source in {} (the single-row cases above); answers in request \
                 order: design.md input rules and the contract's batch comment",
                file.path
            ),
            note: Some(format!(
                "the rows on lines {} in one batch, in file order; result i is checked against \
                 row i",
                lines.join(", ")
            )),
        }
    }
}
