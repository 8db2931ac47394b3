//! `function_checks.csv`: check values of single engine functions. Those
//! whose result the service returns are sent through the RPC that returns
//! it; the rest (coefficients, intermediate values, approximations the
//! service does not offer) are listed as not run, each with its reason.

use serde_json::{json, Value};

use super::{equals, number, quantity, Row, RowOutcome, TableReader};

/// `function_checks.csv`.
pub(crate) const READER: TableReader = TableReader {
    file: "function_checks.csv",
    columns: &["function", "input", "expected", "tolerance"],
    read,
    batch: None,
};

/// The saturation of the single measured pair in the P50 examples
/// (methods.md section 12, as each row's source states: PO2 30 S 0.60).
const SINGLE_POINT_SATURATION: f64 = 0.60;

/// Functions internal to the engine, by name prefix, and why the service
/// cannot be asked for them.
const INTERNAL: [(&str, &str); 14] = [
    (
        "severinghaus_eq2_",
        "Severinghaus's approximate inverse (Eq. 2); the service answers with the exact Ellis inverse",
    ),
    ("severinghaus_eq3_", "a temperature coefficient inside the engine"),
    ("severinghaus_eq4_", "a Bohr coefficient inside the engine"),
    ("severinghaus_vpo2_", "a virtual PO2, an intermediate value the service does not return"),
    ("kelman_virtual_po2_", "a virtual PO2, an intermediate value the service does not return"),
    ("kelman_zero_crossing_", "a property of Kelman's polynomial inside the engine"),
    ("hill_k_", "a constant inside the engine"),
    ("sa1984_max_hill_slope", "the largest Hill slope over the whole curve, which no single call returns"),
    ("dash_hill_coefficient", "Dash's variable Hill coefficient, an intermediate value"),
    ("fractional_o2hb_", "a conversion inside the engine; OxygenContent cases cover its use"),
    ("single_point_standardised_po2_", "a standardised PO2, an intermediate value the service does not return"),
    ("single_point_standard_hill_p50_bohr_", "standardisation with a Bohr factor of 0.48; the service standardises with Kelman's 0.40"),
    ("single_point_standard_ratio_p50_bohr_", "standardisation with a Bohr factor of 0.48; the service standardises with Kelman's 0.40"),
    ("sa1990_cohb_p50_", "a slope between two P50s, not one call's result (the single P50s are cases)"),
];

fn read(row: &Row) -> Result<RowOutcome, String> {
    let function = row.text("function").ok_or("column function is empty")?;
    let input = row.required("input")?;
    let expected = row.required("expected")?;
    let tolerance = row.required("tolerance")?;
    if let Some(target) = temperature_target(function) {
        return Ok(RowOutcome::Case {
            rpc: "DissociationService/CorrectForTemperature",
            request: json!({
                "po2": quantity(input, "mm[Hg]"),
                "targetTemperature": quantity(target, "Cel"),
            }),
            checks: vec![
                number("po2.value", expected, tolerance),
                equals("po2.unit", json!("mm[Hg]")),
            ],
            note: Some(format!(
                "PO2 measured at 37 Cel (the default), corrected to {target} Cel"
            )),
        });
    }
    if let Some((conditions, path)) = single_point(function) {
        let mut pair = json!({
            "po2": quantity(input, "mm[Hg]"),
            "saturationFraction": SINGLE_POINT_SATURATION,
        });
        if let Some(conditions) = conditions {
            pair["conditions"] = conditions;
        }
        return Ok(RowOutcome::Case {
            rpc: "DissociationService/EstimateP50",
            request: json!({ "pairs": [pair] }),
            checks: vec![
                number(&format!("{path}.value"), expected, tolerance),
                equals(&format!("{path}.unit"), json!("mm[Hg]")),
            ],
            note: Some(format!(
                "one measured pair: the row's PO2 with saturation {SINGLE_POINT_SATURATION}, as \
                 its source states"
            )),
        });
    }
    if let Some(field) = siggaard_andersen_1990_p50(function) {
        let mut conditions = serde_json::Map::new();
        conditions.insert(field.to_owned(), quantity(input, "1"));
        return Ok(RowOutcome::Case {
            rpc: "DissociationService/TensionFromSaturation",
            request: json!({
                "saturationFraction": 0.5,
                "model": "MODEL_SIGGAARD_ANDERSEN_1990",
                "conditions": conditions,
            }),
            checks: vec![
                number("po2.value", expected, tolerance),
                equals("po2.unit", json!("mm[Hg]")),
            ],
            note: Some(format!(
                "P50 as the PO2 at saturation 0.5, with {field} the row's input (as a fraction)"
            )),
        });
    }
    match INTERNAL
        .iter()
        .find(|(prefix, _)| function.starts_with(prefix))
    {
        Some((_, why)) => Ok(RowOutcome::NotRun(format!("{function}: {why}"))),
        None => Ok(RowOutcome::NotRun(format!(
            "{function}: this build of oxbind verify does not know this function"
        ))),
    }
}

/// `po2_37_to_33_integrated_mmhg` -> 33.
fn temperature_target(function: &str) -> Option<f64> {
    function
        .strip_prefix("po2_37_to_")?
        .strip_suffix("_integrated_mmhg")?
        .parse()
        .ok()
}

/// The single-point P50 estimates the service returns: the conditions of
/// the pair, and the response field that holds the result.
fn single_point(function: &str) -> Option<(Option<Value>, &'static str)> {
    let acid = || Some(json!({"ph": 7.30}));
    match function {
        "single_point_hill_p50_ph_7_40" => Some((None, "p50AtConditions")),
        "single_point_ratio_p50_ph_7_40" => Some((None, "p50AtConditionsCurveShift")),
        "single_point_in_vivo_hill_p50_ph_7_30" => Some((acid(), "p50AtConditions")),
        "single_point_standard_hill_p50_kelman" => Some((acid(), "p50Standard")),
        _ => None,
    }
}

/// `sa1990_p50_hbf_mmhg` -> the condition field `hbf`.
fn siggaard_andersen_1990_p50(function: &str) -> Option<&'static str> {
    match function {
        "sa1990_p50_hbf_mmhg" => Some("hbf"),
        "sa1990_p50_methb_mmhg" => Some("methb"),
        "sa1990_p50_cohb_mmhg" => Some("cohb"),
        _ => None,
    }
}
