//! `transport_oxygen_content.csv`, `transport_gas_exchange.csv` and
//! `transport_temperature_correction.csv`: one check per row, its inputs
//! written `key=value;key=value`. A row is sent when the RPC returns its
//! quantity from exactly the inputs the row gives (or, where the RPC needs
//! an input the quantity does not depend on, with that input stated in the
//! case's note); otherwise it is listed as not run, with the reason.

use std::collections::BTreeMap;

use serde_json::{json, Map, Value};

use super::{equals, number, quantity, Row, RowOutcome, TableReader};
use crate::verify::case::{Check, Want};

/// The columns of the three transport tables.
const COLUMNS: &[&str] = &["check", "inputs", "expected", "tolerance", "unit"];

/// `transport_oxygen_content.csv`.
pub(crate) const OXYGEN_CONTENT: TableReader = TableReader {
    file: "transport_oxygen_content.csv",
    columns: COLUMNS,
    read: oxygen_content,
    batch: None,
};

/// `transport_gas_exchange.csv`.
pub(crate) const GAS_EXCHANGE: TableReader = TableReader {
    file: "transport_gas_exchange.csv",
    columns: COLUMNS,
    read: gas_exchange,
    batch: None,
};

/// `transport_temperature_correction.csv`.
pub(crate) const TEMPERATURE_CORRECTION: TableReader = TableReader {
    file: "transport_temperature_correction.csv",
    columns: COLUMNS,
    read: temperature_correction,
    batch: None,
};

/// A row's check name, inputs, expected value and tolerance.
struct TransportRow {
    check: String,
    inputs: BTreeMap<String, f64>,
    expected: f64,
    tolerance: f64,
    unit: Option<String>,
}

impl TransportRow {
    fn read(row: &Row) -> Result<Self, String> {
        let mut inputs = BTreeMap::new();
        for pair in row.text("inputs").unwrap_or("").split(';') {
            if pair.trim().is_empty() {
                continue;
            }
            let (key, value) = pair
                .split_once('=')
                .ok_or_else(|| format!("input `{pair}` is not key=value"))?;
            let value: f64 = value
                .trim()
                .parse()
                .map_err(|_| format!("input `{pair}`: not a number"))?;
            inputs.insert(key.trim().to_owned(), value);
        }
        Ok(Self {
            check: row.text("check").ok_or("column check is empty")?.to_owned(),
            inputs,
            expected: row.required("expected")?,
            tolerance: row.required("tolerance")?,
            unit: row.text("unit").map(str::to_owned),
        })
    }

    /// The input `key`, which the check needs.
    fn input(&self, key: &str) -> Result<f64, String> {
        self.inputs
            .get(key)
            .copied()
            .ok_or_else(|| format!("{}: input {key} is missing", self.check))
    }

    /// Whether every input is one of `known`: a row with an input the
    /// request cannot carry is not sent.
    fn unknown_input(&self, known: &[&str]) -> Option<&str> {
        self.inputs
            .keys()
            .map(String::as_str)
            .find(|k| !known.contains(k))
    }

    /// The value check at `path` (a Quantity's `.value`, or a plain
    /// number), with the unit check where the row names a unit and the
    /// response carries one.
    fn checks(&self, path: &str) -> Vec<Check> {
        match path.strip_suffix(".value") {
            Some(quantity_path) => {
                let mut checks = vec![number(path, self.expected, self.tolerance)];
                if let Some(unit) = &self.unit {
                    checks.push(equals(&format!("{quantity_path}.unit"), json!(unit)));
                }
                checks
            }
            None => vec![Check {
                path: path.to_owned(),
                want: Want::Number {
                    value: self.expected,
                    tolerance: self.tolerance,
                },
            }],
        }
    }
}

fn not_run(check: &str, why: &str) -> Result<RowOutcome, String> {
    Ok(RowOutcome::NotRun(format!("{check}: {why}")))
}

/// A blood sample: measured saturation `s_key`, PO2 `po2_key`.
fn sample(row: &TransportRow, s_key: &str, po2_key: &str) -> Result<Map<String, Value>, String> {
    let mut sample = Map::new();
    sample.insert("saturationFraction".to_owned(), json!(row.input(s_key)?));
    sample.insert("po2".to_owned(), quantity(row.input(po2_key)?, "mm[Hg]"));
    Ok(sample)
}

fn oxygen_content(row: &Row) -> Result<RowOutcome, String> {
    let row = TransportRow::read(row)?;
    let path = match row.check.as_str() {
        "arterial_content"
        | "arterial_content_default_functional"
        | "venous_content"
        | "content_functional_with_dyshemoglobins" => "arterialContent.value",
        "delivery" => "delivery.value",
        "consumption" => "consumption.value",
        "extraction" => "extractionFraction",
        "arteriovenous_difference" => "arteriovenousDifference.value",
        "capacity" => {
            return not_run(
                &row.check,
                "the RPC needs an arterial sample, which the row does not give",
            )
        }
        "fractional_from_functional"
        | "dissolved_per_kpa"
        | "solubility_si_as_conventional"
        | "content_si"
        | "flow_si" => {
            return not_run(
                &row.check,
                "a constant or conversion inside the engine; the shared vectors check its use",
            )
        }
        other => {
            return not_run(
                other,
                "this build of oxbind verify does not know this check",
            )
        }
    };
    if let Some(unknown) =
        row.unknown_input(&["hb", "s", "po2", "k", "sv", "pv", "co", "cohb", "methb"])
    {
        return Err(format!("{}: input {unknown} is not understood", row.check));
    }
    let mut arterial = sample(&row, "s", "po2")?;
    for key in ["cohb", "methb"] {
        if let Some(value) = row.inputs.get(key) {
            arterial.insert(key.to_owned(), quantity(*value, "1"));
        }
    }
    let mut request = Map::new();
    request.insert("hemoglobin".to_owned(), quantity(row.input("hb")?, "g/dL"));
    request.insert("arterial".to_owned(), Value::Object(arterial));
    if row.inputs.contains_key("sv") {
        request.insert(
            "venous".to_owned(),
            Value::Object(sample(&row, "sv", "pv")?),
        );
    }
    if let Some(co) = row.inputs.get("co") {
        request.insert("cardiacOutput".to_owned(), quantity(*co, "L/min"));
    }
    if let Some(k) = row.inputs.get("k") {
        request.insert("hufnerFactorMlPerG".to_owned(), json!(k));
    }
    let note = (row.check == "venous_content").then(|| {
        "the venous sample's values sent as the arterial sample: the content equation is the same \
         for any sample"
            .to_owned()
    });
    Ok(RowOutcome::Case {
        rpc: "OxygenTransportService/OxygenContent",
        request: Value::Object(request),
        checks: row.checks(path),
        note,
    })
}

fn gas_exchange(row: &Row) -> Result<RowOutcome, String> {
    let row = TransportRow::read(row)?;
    let path =
        match row.check.as_str() {
            "alveolar_body_temperature" => "alveolarPo2.value",
            "pf_ratio" => "pao2Fio2Ratio",
            "oxygenation_index" => "oxygenationIndex",
            "oxygen_saturation_index" => "oxygenSaturationIndex",
            "imputed_pao2" | "imputed_pao2_not_valid" => "imputedPao2.value",
            "imputed_pf_ratio" => "imputedPao2Fio2Ratio",
            "sf_ratio" => "spo2Fio2Ratio",
            "water_vapour" | "paco2_factor" => {
                return not_run(&row.check, "an intermediate value inside the engine")
            }
            "alveolar_simplified" | "alveolar_full" | "alveolar_abbreviated" => return not_run(
                &row.check,
                "the row fixes PH2O at 47 mm[Hg]; the service takes the water-vapour pressure at \
                 body temperature",
            ),
            "end_capillary_content" | "shunt" | "a_a_gradient" => {
                return not_run(
                    &row.check,
                    "the row gives the alveolar PO2; the service computes it from FiO2 and PaCO2",
                )
            }
            other => {
                return not_run(
                    other,
                    "this build of oxbind verify does not know this check",
                )
            }
        };
    if let Some(unknown) =
        row.unknown_input(&["fio2", "pb", "t", "paco2", "r", "pao2", "map", "spo2"])
    {
        return Err(format!("{}: input {unknown} is not understood", row.check));
    }
    let mut request = Map::new();
    let mut note = None;
    match row.inputs.get("fio2") {
        Some(fio2) => {
            request.insert("fio2".to_owned(), quantity(*fio2, "1"));
        }
        None => {
            // FiO2 is required by the RPC; the quantity checked does not
            // depend on it.
            request.insert("fio2".to_owned(), quantity(0.21, "1"));
            note = Some(
                "FiO2 0.21 added: the RPC requires it, and the imputed PaO2 does not depend on it"
                    .to_owned(),
            );
        }
    }
    let quantities = [
        ("pb", "barometricPressure", "mm[Hg]"),
        ("t", "bodyTemperature", "Cel"),
        ("paco2", "paco2", "mm[Hg]"),
        ("pao2", "pao2", "mm[Hg]"),
        ("map", "meanAirwayPressure", "cm[H2O]"),
    ];
    for (key, field, unit) in quantities {
        if let Some(value) = row.inputs.get(key) {
            request.insert(field.to_owned(), quantity(*value, unit));
        }
    }
    if let Some(r) = row.inputs.get("r") {
        request.insert("respiratoryQuotient".to_owned(), json!(r));
    }
    if let Some(spo2) = row.inputs.get("spo2") {
        request.insert("spo2Fraction".to_owned(), json!(spo2));
    }
    let mut checks = row.checks(path);
    if row.check == "imputed_pao2_not_valid" {
        checks.push(Check {
            path: "warnings".to_owned(),
            want: Want::Contains(json!({"code": "WARNING_CODE_IMPUTATION_NOT_VALID"})),
        });
    }
    Ok(RowOutcome::Case {
        rpc: "OxygenTransportService/GasExchange",
        request: Value::Object(request),
        checks,
        note,
    })
}

fn temperature_correction(row: &Row) -> Result<RowOutcome, String> {
    let row = TransportRow::read(row)?;
    let (path, field, unit) = match row.check.as_str() {
        "ph" => ("ph", "ph", None),
        "pco2_nunn" => ("pco2.value", "pco2", Some("mm[Hg]")),
        "po2_integrated" => ("po2.value", "po2", Some("mm[Hg]")),
        "ph_constant_coefficient" => {
            return not_run(
                &row.check,
                "a pH correction without the 0.0065 term; the service applies the full formula",
            )
        }
        "pco2_bradley" => {
            return not_run(
                &row.check,
                "Bradley's coefficient 0.0185; the service uses Nunn's 0.019",
            )
        }
        "po2_single_step" => {
            return not_run(
                &row.check,
                "Severinghaus Eq. 3 in one step; the service integrates it",
            )
        }
        "po2_log10_form_coefficient" | "po2_eq3_over_ln10" => {
            return not_run(&row.check, "a coefficient inside the engine")
        }
        other => {
            return not_run(
                other,
                "this build of oxbind verify does not know this check",
            )
        }
    };
    if let Some(unknown) = row.unknown_input(&["ph", "pco2", "po2", "from", "to"]) {
        return Err(format!("{}: input {unknown} is not understood", row.check));
    }
    let mut request = Map::new();
    match unit {
        None => {
            request.insert(field.to_owned(), json!(row.input(field)?));
        }
        Some(unit) => {
            request.insert(field.to_owned(), quantity(row.input(field)?, unit));
        }
    }
    request.insert(
        "measuredTemperature".to_owned(),
        quantity(row.input("from")?, "Cel"),
    );
    request.insert(
        "targetTemperature".to_owned(),
        quantity(row.input("to")?, "Cel"),
    );
    // A plain number (pH) gets its value check alone: the table's unit
    // `pH` is not a field of the answer.
    Ok(RowOutcome::Case {
        rpc: "DissociationService/CorrectForTemperature",
        request: Value::Object(request),
        checks: row.checks(path),
        note: None,
    })
}
