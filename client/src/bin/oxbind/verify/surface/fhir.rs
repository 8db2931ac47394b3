//! The FHIR R4 door (`/fhir/r4`): probed by its CapabilityStatement
//! (`GET /fhir/r4/metadata`, the FHIR R4 "capabilities" interaction,
//! https://hl7.org/fhir/R4/http.html#capabilities), and the cases it can
//! carry sent to `POST /fhir/r4/$derive-oxygen-values`.
//!
//! A case goes through this door when its request can be written as
//! LOINC-coded Observations (the door's inputs: no Hill parameters, no
//! 2,3-DPG, no blood temperature other than the analyser's, one pair for a
//! P50) and every value it checks comes back as a derived Observation. The
//! request is written as a `Parameters` of Observations; the derived
//! Observations are read back, by the codes of the door's own mapping table
//! (embedded from `service/src/http/fhir/data/loinc-mapping.csv`), into the
//! fields of the RPC's answer, so that the case's checks apply unchanged (a
//! fraction the door states in `%` is read back as the fraction). Refusals,
//! warnings and provenance have other shapes in FHIR, so cases that check
//! them run on the other doors only.

use std::collections::{BTreeMap, BTreeSet};

use prost_reflect::MethodDescriptor;
use reqwest::{header, StatusCode};
use serde_json::{json, Map, Value};

use super::{connect::describe, CallFailure, Pending, Probe, Surface};
use crate::verify::{
    case::{Case, Expect},
    cases::tables::rows,
    sources::FHIR_CODES_FILE,
};

/// The FHIR base path on the main listener.
const FHIR_BASE: &str = "/fhir/r4";
/// The operation.
const OPERATION: &str = "$derive-oxygen-values";
/// The FHIR JSON media type.
const FHIR_JSON: &str = "application/fhir+json";
/// LOINC's code system.
const LOINC: &str = "http://loinc.org";
/// UCUM's code system.
const UCUM: &str = "http://unitsofmeasure.org";
/// The invented subject every verification Observation is about.
const SUBJECT: &str = "Patient/lvi-verification-0001";

/// How a derived Observation's value becomes a field of the answer.
#[derive(Debug, Clone, Copy)]
enum Reading {
    /// A Quantity: `{value, unit}`.
    Quantity,
    /// A fraction the door states in `%`.
    Percent,
    /// A plain number.
    Number,
}

/// One field of an answer: its name, the derived value (the door's own code
/// name) it comes from, and how it is read.
type Field = (&'static str, &'static str, Reading);

/// The fields of each RPC's answer this door returns.
const OUTPUTS: [(&str, &[Field]); 5] = [
    (
        "SaturationFromTension",
        &[
            (
                "saturationFraction",
                "oxygen-saturation-calculated-arterial",
                Reading::Percent,
            ),
            (
                "p50AtConditions",
                "p50-at-sample-conditions-arterial",
                Reading::Quantity,
            ),
        ],
    ),
    (
        "EstimateP50",
        &[
            (
                "p50AtConditions",
                "p50-at-sample-conditions-arterial",
                Reading::Quantity,
            ),
            ("p50Standard", "p50-standard-arterial", Reading::Quantity),
        ],
    ),
    (
        "CorrectForTemperature",
        &[
            ("ph", "ph-at-body-temperature-arterial", Reading::Number),
            (
                "pco2",
                "pco2-at-body-temperature-arterial",
                Reading::Quantity,
            ),
            ("po2", "po2-at-body-temperature-arterial", Reading::Quantity),
        ],
    ),
    (
        "OxygenContent",
        &[
            (
                "arterialContent",
                "oxygen-content-arterial",
                Reading::Quantity,
            ),
            ("venousContent", "oxygen-content-venous", Reading::Quantity),
            (
                "arteriovenousDifference",
                "oxygen-content-arteriovenous-difference",
                Reading::Quantity,
            ),
            (
                "extractionFraction",
                "oxygen-extraction-fraction",
                Reading::Percent,
            ),
            ("delivery", "oxygen-delivery", Reading::Quantity),
            ("consumption", "oxygen-consumption", Reading::Quantity),
        ],
    ),
    (
        "GasExchange",
        &[
            (
                "alveolarPo2",
                "alveolar-oxygen-partial-pressure",
                Reading::Quantity,
            ),
            (
                "alveolarArterialGradient",
                "alveolar-arterial-oxygen-gradient",
                Reading::Quantity,
            ),
            ("pao2Fio2Ratio", "pao2-fio2-ratio", Reading::Number),
            ("spo2Fio2Ratio", "spo2-fio2-ratio", Reading::Number),
            ("imputedPao2", "pao2-imputed-from-spo2", Reading::Quantity),
            ("oxygenationIndex", "oxygenation-index", Reading::Number),
            (
                "oxygenSaturationIndex",
                "oxygen-saturation-index",
                Reading::Number,
            ),
            ("shuntFraction", "shunt-fraction", Reading::Percent),
        ],
    ),
];

/// The FHIR door of one deployment.
pub(crate) struct FhirR4 {
    client: reqwest::Client,
    base: String,
    /// Each derived value's codes: its own code name and its LOINC codes.
    codes: BTreeMap<String, BTreeSet<String>>,
}

impl FhirR4 {
    /// The door under `base` (the `--server` address), through `client`.
    pub(crate) fn new(client: reqwest::Client, base: &str) -> Self {
        Self {
            client,
            base: format!("{}{FHIR_BASE}", base.trim_end_matches('/')),
            codes: output_codes(),
        }
    }

    /// The derived Observations of the answer to `parameters`.
    async fn derive(&self, parameters: &Value) -> Result<Vec<Value>, CallFailure> {
        let response = self
            .client
            .post(format!("{}/{OPERATION}", self.base))
            .header(header::CONTENT_TYPE, FHIR_JSON)
            .header(header::ACCEPT, FHIR_JSON)
            .body(parameters.to_string())
            .send()
            .await
            .map_err(|e| CallFailure::no_answer(describe(&e)))?;
        let status = response.status();
        let body: Value = response
            .bytes()
            .await
            .ok()
            .and_then(|b| serde_json::from_slice(&b).ok())
            .unwrap_or(Value::Null);
        if status != StatusCode::OK {
            let diagnostics: Vec<&str> = body["issue"]
                .as_array()
                .map(Vec::as_slice)
                .unwrap_or(&[])
                .iter()
                .filter_map(|i| i["diagnostics"].as_str())
                .collect();
            return Err(CallFailure::no_answer(format!(
                "HTTP {status}: {}",
                diagnostics.join("; ")
            )));
        }
        Ok(body["parameter"]
            .as_array()
            .map(Vec::as_slice)
            .unwrap_or(&[])
            .iter()
            .filter(|p| p["name"] == "observation")
            .map(|p| p["resource"].clone())
            .collect())
    }
}

/// The codes of every derived value, from the door's mapping table.
fn output_codes() -> BTreeMap<String, BTreeSet<String>> {
    let mut codes: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    let Ok((_, table)) = rows(FHIR_CODES_FILE.text) else {
        return codes;
    };
    for row in table
        .iter()
        .filter(|r| r.text("direction") == Some("output"))
    {
        let Some(name) = row.text("name") else {
            continue;
        };
        let entry = codes.entry(name.to_owned()).or_default();
        entry.insert(name.to_owned());
        if let Some(loinc) = row.text("loinc") {
            entry.insert(loinc.to_owned());
        }
    }
    codes
}

/// The fields this door returns for `rpc` (the method's name alone).
fn outputs(rpc: &str) -> Option<&'static [Field]> {
    OUTPUTS.iter().find(|(r, _)| *r == rpc).map(|(_, o)| *o)
}

/// Whether the door derives `field` for this request: the P50 at the
/// sample's conditions beside a calculated saturation only when the sample
/// states its pH or PCO2 (the door's rule).
fn returned_for(rpc: &str, field: &str, request: &Value) -> bool {
    match (rpc, field) {
        ("SaturationFromTension", "p50AtConditions") => {
            let c = &request["conditions"];
            c.get("ph").is_some() || c.get("pco2").is_some()
        }
        _ => true,
    }
}

/// The method's name alone: `oxbind.v1.X/SaturationFromTension` ->
/// `SaturationFromTension`.
fn method_name(rpc: &str) -> &str {
    rpc.rsplit('/').next().unwrap_or(rpc)
}

impl Surface for FhirR4 {
    fn key(&self) -> &'static str {
        "fhir-r4"
    }

    fn title(&self) -> &'static str {
        "FHIR R4 operation ($derive-oxygen-values)"
    }

    fn probe(&self) -> Pending<'_, Probe> {
        Box::pin(async move {
            let asked = format!("GET {FHIR_BASE}/metadata");
            let response = match self
                .client
                .get(format!("{}/metadata", self.base))
                .header(header::ACCEPT, FHIR_JSON)
                .send()
                .await
            {
                Ok(response) => response,
                Err(e) => return Probe::not_offered(format!("{asked}: {}", describe(&e))),
            };
            let status = response.status();
            let body: Option<Value> = response
                .bytes()
                .await
                .ok()
                .and_then(|b| serde_json::from_slice(&b).ok());
            let kind = body
                .as_ref()
                .and_then(|b| b["resourceType"].as_str())
                .unwrap_or_default();
            if status == StatusCode::OK && kind == "CapabilityStatement" {
                let version = body
                    .as_ref()
                    .and_then(|b| b["fhirVersion"].as_str())
                    .unwrap_or("not stated");
                Probe::answered(format!(
                    "{asked} answered a CapabilityStatement (FHIR version {version}); the cases \
                     it can carry are sent to POST {FHIR_BASE}/{OPERATION}"
                ))
            } else {
                Probe::not_offered(format!(
                    "{asked} answered HTTP {status} without a CapabilityStatement"
                ))
            }
        })
    }

    fn offers(&self, case: &Case) -> bool {
        let rpc = method_name(&case.rpc);
        let (
            Some(fields),
            Expect::Answer {
                checks,
                item_errors,
            },
        ) = (outputs(rpc), &case.expect)
        else {
            return false;
        };
        let returned = |path: &str| {
            let root = path.split(['.', '[']).next().unwrap_or(path);
            fields.iter().any(|(field, _, _)| *field == root)
                && returned_for(rpc, root, &case.request)
        };
        item_errors.is_empty()
            && !checks.is_empty()
            && checks.iter().all(|c| returned(&c.path))
            && panel(rpc, &case.request).is_ok()
    }

    fn call<'a>(
        &'a self,
        method: &'a MethodDescriptor,
        request: &'a Value,
    ) -> Pending<'a, Result<Value, CallFailure>> {
        Box::pin(async move {
            let rpc = method.name();
            let fields = outputs(rpc).ok_or_else(|| {
                CallFailure::no_answer(format!("{rpc} is not offered through the FHIR door"))
            })?;
            let parameters = panel(rpc, request).map_err(CallFailure::no_answer)?;
            let observations = self.derive(&parameters).await?;
            let mut answer = Map::new();
            for (field, output, reading) in fields {
                let Some(codes) = self.codes.get(*output) else {
                    continue;
                };
                let found = observations.iter().find(|o| {
                    o["code"]["coding"].as_array().is_some_and(|c| {
                        c.iter()
                            .any(|c| c["code"].as_str().is_some_and(|code| codes.contains(code)))
                    })
                });
                let Some(quantity) = found.map(|o| &o["valueQuantity"]) else {
                    continue;
                };
                let value = quantity["value"].as_f64().unwrap_or(f64::NAN);
                let unit = quantity["code"].as_str().unwrap_or_default();
                let read = match reading {
                    Reading::Quantity => json!({"value": value, "unit": unit}),
                    Reading::Percent => json!(value / 100.0),
                    Reading::Number => json!(value),
                };
                answer.insert((*field).to_owned(), read);
            }
            Ok(Value::Object(answer))
        })
    }
}

/// The request of `rpc` as a `Parameters` of Observations (and the
/// operation's options), or why it cannot be written so.
fn panel(rpc: &str, request: &Value) -> Result<Value, String> {
    let mut panel = Panel::default();
    panel.options(request)?;
    match rpc {
        "SaturationFromTension" => {
            only(request, &["po2", "conditions", "model", "unitSystem"])?;
            panel.quantity("2703-7", &request["po2"]);
            if let Some(c) = request.get("conditions") {
                panel.conditions(c, true)?;
                panel.dyshemoglobins(c);
            }
        }
        "EstimateP50" => {
            only(request, &["pairs", "unitSystem"])?;
            let [pair] = request["pairs"]
                .as_array()
                .map(Vec::as_slice)
                .unwrap_or(&[])
            else {
                return Err("the door takes one measured pair".to_owned());
            };
            only(pair, &["po2", "saturationFraction", "conditions"])?;
            panel.quantity("2703-7", &pair["po2"]);
            panel.number("2708-6", &pair["saturationFraction"], "1");
            if let Some(c) = pair.get("conditions") {
                only(c, &["ph", "pco2"])?;
                panel.conditions(c, true)?;
            }
        }
        "CorrectForTemperature" => {
            only(
                request,
                &["ph", "pco2", "po2", "targetTemperature", "unitSystem"],
            )?;
            if let Some(ph) = request.get("ph") {
                panel.number("2744-1", ph, "[pH]");
            }
            for (field, code) in [("pco2", "2019-8"), ("po2", "2703-7")] {
                if let Some(q) = request.get(field) {
                    panel.quantity(code, q);
                }
            }
            panel.quantity("8310-5", &request["targetTemperature"]);
        }
        "OxygenContent" => {
            only(
                request,
                &[
                    "hemoglobin",
                    "arterial",
                    "venous",
                    "cardiacOutput",
                    "unitSystem",
                ],
            )?;
            panel.hemoglobin(&request["hemoglobin"]);
            let arterial = &request["arterial"];
            same_dyshemoglobins(arterial, request.get("venous"))?;
            panel.sample(arterial, true, true)?;
            panel.dyshemoglobins(arterial);
            if let Some(venous) = request.get("venous") {
                panel.sample(venous, false, true)?;
            }
            if let Some(q) = request.get("cardiacOutput") {
                panel.quantity("8741-1", q);
            }
        }
        "GasExchange" => {
            only(
                request,
                &[
                    "fio2",
                    "barometricPressure",
                    "paco2",
                    "pao2",
                    "spo2Fraction",
                    "meanAirwayPressure",
                    "hemoglobin",
                    "venous",
                    "arterial",
                    "bodyTemperature",
                    "unitSystem",
                ],
            )?;
            panel.quantity("3150-0", &request["fio2"]);
            for (field, code) in [
                ("paco2", "2019-8"),
                ("pao2", "2703-7"),
                ("meanAirwayPressure", "76530-5"),
                ("bodyTemperature", "8310-5"),
            ] {
                if let Some(q) = request.get(field) {
                    panel.quantity(code, q);
                }
            }
            if let Some(spo2) = request.get("spo2Fraction") {
                panel.number("59408-5", spo2, "1");
            }
            if let Some(q) = request.get("hemoglobin") {
                panel.hemoglobin(q);
            }
            if let Some(venous) = request.get("venous") {
                let arterial = request
                    .get("arterial")
                    .cloned()
                    .unwrap_or_else(|| json!({}));
                same_dyshemoglobins(&arterial, Some(venous))?;
                panel.sample(&arterial, true, false)?;
                panel.dyshemoglobins(&arterial);
                panel.sample(venous, false, true)?;
            } else if request.get("arterial").is_some() {
                return Err("an arterial sample without a venous one".to_owned());
            }
        }
        other => return Err(format!("{other} is not a method the FHIR door calls")),
    }
    Ok(panel.parameters())
}

/// Observations and options being written.
#[derive(Default)]
struct Panel {
    parameter: Vec<Value>,
}

impl Panel {
    fn add(&mut self, code: &str, value: Value, unit: &Value) {
        let id = format!("verification-input-{}", self.parameter.len() + 1);
        self.parameter.push(json!({
            "name": "observation",
            "resource": {
                "resourceType": "Observation",
                "id": id,
                "status": "final",
                "code": {"coding": [{"system": LOINC, "code": code}]},
                "subject": {"reference": SUBJECT},
                "valueQuantity": {"value": value, "unit": unit, "system": UCUM, "code": unit},
            },
        }));
    }

    /// A Quantity in the protobuf JSON mapping (a zero value is left out
    /// there).
    fn quantity(&mut self, code: &str, q: &Value) {
        let value = q.get("value").cloned().unwrap_or_else(|| json!(0.0));
        self.add(code, value, &q["unit"]);
    }

    fn number(&mut self, code: &str, value: &Value, unit: &str) {
        self.add(code, value.clone(), &json!(unit));
    }

    fn options(&mut self, request: &Value) -> Result<(), String> {
        if let Some(model) = request.get("model").and_then(Value::as_str) {
            let id = match model {
                "MODEL_SEVERINGHAUS_1979" => "severinghaus-1979",
                "MODEL_KELMAN_1966" => "kelman-1966",
                "MODEL_ADAIR" => "adair",
                "MODEL_SIGGAARD_ANDERSEN_1984" => "siggaard-andersen-1984",
                "MODEL_DASH_2016" => "dash-2016",
                "MODEL_SIGGAARD_ANDERSEN_1990" => "siggaard-andersen-1990",
                other => return Err(format!("the door has no code for {other}")),
            };
            self.parameter
                .push(json!({"name": "model", "valueCode": id}));
        }
        if let Some(system) = request.get("unitSystem").and_then(Value::as_str) {
            let code = match system {
                "UNIT_SYSTEM_SI" => "si",
                "UNIT_SYSTEM_CONVENTIONAL" => "conventional",
                other => return Err(format!("unit system {other}")),
            };
            self.parameter
                .push(json!({"name": "unitSystem", "valueCode": code}));
        }
        if let Some(q) = request.get("barometricPressure") {
            self.parameter
                .push(json!({"name": "barometricPressure", "valueQuantity": {
                "value": q["value"], "unit": q["unit"], "system": UCUM, "code": q["unit"]}}));
        }
        Ok(())
    }

    /// Blood conditions the door takes, arterial or venous.
    fn conditions(&mut self, c: &Value, arterial: bool) -> Result<(), String> {
        only(c, &["ph", "pco2", "baseExcess", "cohb", "methb", "hbf"])?;
        if let Some(ph) = c.get("ph") {
            self.number(if arterial { "2744-1" } else { "2746-6" }, ph, "[pH]");
        }
        if let Some(q) = c.get("pco2") {
            self.quantity(if arterial { "2019-8" } else { "2021-4" }, q);
        }
        if let Some(q) = c.get("baseExcess") {
            self.quantity(if arterial { "1925-7" } else { "1927-3" }, q);
        }
        if let Some(q) = c.get("hbf") {
            self.quantity("4576-5", q);
        }
        Ok(())
    }

    fn dyshemoglobins(&mut self, holder: &Value) {
        if let Some(q) = holder.get("cohb") {
            self.quantity("20563-3", q);
        }
        if let Some(q) = holder.get("methb") {
            self.quantity("2615-3", q);
        }
    }

    fn hemoglobin(&mut self, q: &Value) {
        let code = if q["unit"] == "mmol/L" {
            "59260-0"
        } else {
            "718-7"
        };
        self.quantity(code, q);
    }

    /// A blood sample: its PO2 (when `po2`), its measured saturation or its
    /// conditions.
    fn sample(&mut self, s: &Value, arterial: bool, po2: bool) -> Result<(), String> {
        only(
            s,
            &[
                "saturationFraction",
                "po2",
                "saturationKind",
                "conditions",
                "cohb",
                "methb",
            ],
        )?;
        if po2 {
            self.quantity(if arterial { "2703-7" } else { "2705-2" }, &s["po2"]);
        }
        if let Some(saturation) = s.get("saturationFraction") {
            let fractional = s["saturationKind"] == "SATURATION_KIND_FRACTIONAL";
            let code = match (arterial, fractional) {
                (true, false) => "2708-6",
                (true, true) => "71839-5",
                (false, false) => "2711-0",
                (false, true) => "2716-9",
            };
            self.number(code, saturation, "1");
        } else if let Some(c) = s.get("conditions") {
            self.conditions(c, arterial)?;
        }
        Ok(())
    }

    fn parameters(self) -> Value {
        json!({"resourceType": "Parameters", "parameter": self.parameter})
    }
}

/// Only these keys, or which one the door cannot take.
fn only(object: &Value, keys: &[&str]) -> Result<(), String> {
    match object
        .as_object()
        .and_then(|map| map.keys().find(|k| !keys.contains(&k.as_str())))
    {
        Some(key) => Err(format!("the door has no input for {key}")),
        None => Ok(()),
    }
}

/// The door applies one COHb and one MetHb to both samples.
fn same_dyshemoglobins(arterial: &Value, venous: Option<&Value>) -> Result<(), String> {
    if let Some(venous) = venous {
        for key in ["cohb", "methb"] {
            if arterial.get(key) != venous.get(key) {
                return Err(format!("the samples have different {key}"));
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_returned_field_has_codes_in_the_doors_table() {
        let codes = output_codes();
        for (_, fields) in OUTPUTS {
            for (field, output, _) in fields {
                assert!(codes.contains_key(*output), "{field}: no row for {output}");
            }
        }
    }

    #[test]
    fn requests_the_door_cannot_take_are_said_so() {
        let hill = json!({"po2": {"value": 40, "unit": "mm[Hg]"}, "model": "MODEL_HILL"});
        assert!(panel("SaturationFromTension", &hill).is_err());
        let warm = json!({"po2": {"value": 40, "unit": "mm[Hg]"},
                          "conditions": {"temperature": {"value": 39, "unit": "Cel"}}});
        assert!(panel("SaturationFromTension", &warm).is_err());
        let plain = json!({"po2": {"value": 40, "unit": "mm[Hg]"}, "conditions": {"ph": 7.3}});
        let parameters = panel("SaturationFromTension", &plain).unwrap();
        assert_eq!(parameters["parameter"].as_array().unwrap().len(), 2);
        assert!(panel("TensionFromSaturation", &json!({})).is_err());
    }
}
