//! The FHIR door gives exactly the gRPC numbers: every shared vector
//! (`tests/vectors/*.json`) whose request can be written as LOINC-coded
//! Observations is sent both ways, and every derived value the vector's RPC
//! answers is compared for equality (a fraction stated in % as the same
//! `value * 100.0`). A vector the door cannot express (Hill parameters, a
//! 2,3-DPG, a blood temperature other than the analyser's 37 Cel, ...) is
//! skipped and counted; enough must remain.

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient, CorrectForTemperatureRequest,
    EstimateP50Request, GasExchangeRequest, OxygenContentRequest, Quantity,
    SaturationFromTensionRequest, ShiftFactorsRequest,
};
use oxbind_service::http::fhir::codes::{Output, MAPPING};
use oxbind_tests::{
    fhir::{derive, FhirAnswer},
    TestServer,
};
use prost_reflect::{DescriptorPool, DynamicMessage};
use serde_json::{json, Value};

/// Fewest vectors that must be compared (of the shared file's RPCs the
/// door calls).
const MIN_COMPARED: usize = 25;

fn vectors() -> Vec<Value> {
    let text = include_str!("../vectors/dissociation.json");
    let file: Value = serde_json::from_str(text).unwrap();
    file["vectors"].as_array().unwrap().clone()
}

/// The request JSON as the generated type, through the contract's
/// descriptors (the protobuf JSON mapping).
fn typed<T: prost::Message + Default>(pool: &DescriptorPool, name: &str, json: &Value) -> T {
    let descriptor = pool.get_message_by_name(name).unwrap();
    let dynamic = DynamicMessage::deserialize(descriptor, json.clone()).unwrap();
    dynamic.transcode_to::<T>().unwrap()
}

/// Observations for a vector request, or why it cannot be written so.
struct Panel {
    observations: Vec<Value>,
    options: Vec<Value>,
    next: usize,
}

impl Panel {
    fn new() -> Self {
        Self {
            observations: Vec::new(),
            options: Vec::new(),
            next: 0,
        }
    }

    fn add(&mut self, code: &str, value: f64, unit: &str) {
        self.next += 1;
        self.observations.push(json!({
            "resourceType": "Observation",
            "id": format!("vector-input-{}", self.next),
            "status": "final",
            "code": {"coding": [{"system": "http://loinc.org", "code": code}]},
            "subject": {"reference": "Patient/lvi-vector-0001"},
            "valueQuantity": {"value": value, "unit": unit,
                "system": "http://unitsofmeasure.org", "code": unit},
        }));
    }

    fn quantity(&mut self, code: &str, q: &Value) {
        // The protobuf JSON mapping leaves out a zero value.
        let value = q.get("value").and_then(Value::as_f64).unwrap_or(0.0);
        self.add(code, value, q["unit"].as_str().unwrap_or_default());
    }

    fn parameters(&self) -> Value {
        let mut parameter: Vec<Value> = self
            .observations
            .iter()
            .map(|o| json!({"name": "observation", "resource": o}))
            .collect();
        parameter.extend(self.options.iter().cloned());
        json!({"resourceType": "Parameters", "parameter": parameter})
    }
}

fn model_id(name: &str) -> Option<&'static str> {
    Some(match name {
        "MODEL_SEVERINGHAUS_1979" => "severinghaus-1979",
        "MODEL_KELMAN_1966" => "kelman-1966",
        "MODEL_ADAIR" => "adair",
        "MODEL_SIGGAARD_ANDERSEN_1984" => "siggaard-andersen-1984",
        "MODEL_DASH_2016" => "dash-2016",
        "MODEL_SIGGAARD_ANDERSEN_1990" => "siggaard-andersen-1990",
        _ => return None,
    })
}

/// Only these keys, or a reason to skip.
fn only(object: &Value, keys: &[&str]) -> Result<(), String> {
    match object.as_object() {
        Some(map) => match map.keys().find(|k| !keys.contains(&k.as_str())) {
            Some(k) => Err(format!("field {k} has no FHIR input")),
            None => Ok(()),
        },
        None => Ok(()),
    }
}

fn options(panel: &mut Panel, request: &Value) -> Result<(), String> {
    if let Some(model) = request.get("model") {
        let id = model_id(model.as_str().unwrap()).ok_or("model without a FHIR code")?;
        panel
            .options
            .push(json!({"name": "model", "valueCode": id}));
    }
    if let Some(system) = request.get("unitSystem") {
        let code = match system.as_str().unwrap() {
            "UNIT_SYSTEM_SI" => "si",
            "UNIT_SYSTEM_CONVENTIONAL" => "conventional",
            _ => return Err("unit system".into()),
        };
        panel
            .options
            .push(json!({"name": "unitSystem", "valueCode": code}));
    }
    if let Some(q) = request.get("barometricPressure") {
        panel
            .options
            .push(json!({"name": "barometricPressure", "valueQuantity": {
            "value": q["value"], "unit": q["unit"],
            "system": "http://unitsofmeasure.org", "code": q["unit"]}}));
    }
    Ok(())
}

/// Arterial (or venous) blood conditions as Observations.
fn conditions(panel: &mut Panel, c: &Value, arterial: bool) -> Result<(), String> {
    only(c, &["ph", "pco2", "baseExcess", "cohb", "methb", "hbf"])?;
    if let Some(ph) = c.get("ph") {
        panel.add(
            if arterial { "2744-1" } else { "2746-6" },
            ph.as_f64().unwrap(),
            "[pH]",
        );
    }
    if let Some(q) = c.get("pco2") {
        panel.quantity(if arterial { "2019-8" } else { "2021-4" }, q);
    }
    if let Some(q) = c.get("baseExcess") {
        panel.quantity(if arterial { "1925-7" } else { "1927-3" }, q);
    }
    if let Some(q) = c.get("hbf") {
        panel.quantity("4576-5", q);
    }
    Ok(())
}

fn dyshemoglobins(panel: &mut Panel, holder: &Value) {
    if let Some(q) = holder.get("cohb") {
        panel.quantity("20563-3", q);
    }
    if let Some(q) = holder.get("methb") {
        panel.quantity("2615-3", q);
    }
}

fn hemoglobin(panel: &mut Panel, q: &Value) {
    let code = if q["unit"] == "mmol/L" {
        "59260-0"
    } else {
        "718-7"
    };
    panel.quantity(code, q);
}

/// A BloodSample as Observations (`arterial` or venous codes).
fn sample(panel: &mut Panel, s: &Value, arterial: bool, po2: bool) -> Result<(), String> {
    only(
        s,
        &[
            "saturationFraction",
            "po2",
            "saturationKind",
            "conditions",
            "model",
            "cohb",
            "methb",
        ],
    )?;
    if po2 {
        panel.quantity(if arterial { "2703-7" } else { "2705-2" }, &s["po2"]);
    }
    if let Some(f) = s.get("saturationFraction") {
        let fractional = s.get("saturationKind") == Some(&json!("SATURATION_KIND_FRACTIONAL"));
        let code = match (arterial, fractional) {
            (true, false) => "2708-6",
            (true, true) => "71839-5",
            (false, false) => "2711-0",
            (false, true) => "2716-9",
        };
        panel.add(code, f.as_f64().unwrap(), "1");
    } else if let Some(c) = s.get("conditions") {
        conditions(panel, c, arterial)?;
    }
    if s.get("model").is_some() {
        return Err("a sample's own model".into());
    }
    Ok(())
}

/// Both samples must carry the same dyshaemoglobins (the door applies one
/// COHb and one MetHb to the blood on both sides).
fn same_dyshemoglobins(a: &Value, b: Option<&Value>) -> Result<(), String> {
    if let Some(b) = b {
        for key in ["cohb", "methb"] {
            if a.get(key) != b.get(key) {
                return Err(format!("samples with different {key}"));
            }
        }
    }
    Ok(())
}

fn panel_for(rpc: &str, request: &Value) -> Result<Panel, String> {
    let mut panel = Panel::new();
    options(&mut panel, request)?;
    match rpc {
        "SaturationFromTension" => {
            only(request, &["po2", "conditions", "model", "unitSystem"])?;
            panel.quantity("2703-7", &request["po2"]);
            if let Some(c) = request.get("conditions") {
                conditions(&mut panel, c, true)?;
                dyshemoglobins(&mut panel, c);
            }
        }
        "ShiftFactors" => {
            only(request, &["conditions", "model", "unitSystem"])?;
            let c = &request["conditions"];
            conditions(&mut panel, c, true)?;
            dyshemoglobins(&mut panel, c);
        }
        "EstimateP50" => {
            only(request, &["pairs", "model", "unitSystem"])?;
            let pairs = request["pairs"].as_array().unwrap();
            let [pair] = pairs.as_slice() else {
                return Err("more than one pair".into());
            };
            only(pair, &["po2", "saturationFraction", "conditions"])?;
            panel.quantity("2703-7", &pair["po2"]);
            panel.add("2708-6", pair["saturationFraction"].as_f64().unwrap(), "1");
            if let Some(c) = pair.get("conditions") {
                only(c, &["ph", "pco2"])?;
                conditions(&mut panel, c, true)?;
            }
        }
        "CorrectForTemperature" => {
            only(
                request,
                &["ph", "pco2", "po2", "targetTemperature", "unitSystem"],
            )?;
            if let Some(ph) = request.get("ph") {
                panel.add("2744-1", ph.as_f64().unwrap(), "[pH]");
            }
            if let Some(q) = request.get("pco2") {
                panel.quantity("2019-8", q);
            }
            if let Some(q) = request.get("po2") {
                panel.quantity("2703-7", q);
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
            hemoglobin(&mut panel, &request["hemoglobin"]);
            same_dyshemoglobins(&request["arterial"], request.get("venous"))?;
            sample(&mut panel, &request["arterial"], true, true)?;
            dyshemoglobins(&mut panel, &request["arterial"]);
            if let Some(v) = request.get("venous") {
                sample(&mut panel, v, false, true)?;
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
            if let Some(q) = request.get("paco2") {
                panel.quantity("2019-8", q);
            }
            if let Some(q) = request.get("pao2") {
                panel.quantity("2703-7", q);
            }
            if let Some(s) = request.get("spo2Fraction") {
                panel.add("59408-5", s.as_f64().unwrap(), "1");
            }
            if let Some(q) = request.get("meanAirwayPressure") {
                panel.quantity("76530-5", q);
            }
            if let Some(q) = request.get("bodyTemperature") {
                panel.quantity("8310-5", q);
            }
            if let Some(q) = request.get("hemoglobin") {
                hemoglobin(&mut panel, q);
            }
            if let Some(v) = request.get("venous") {
                let arterial = request.get("arterial").cloned().unwrap_or(json!({}));
                same_dyshemoglobins(&arterial, Some(v))?;
                sample(&mut panel, &arterial, true, false)?;
                dyshemoglobins(&mut panel, &arterial);
                sample(&mut panel, v, false, true)?;
            }
        }
        other => return Err(format!("{other} is not an RPC the door calls")),
    }
    Ok(panel)
}

/// The derived Observation for `output` stated in `unit`.
fn derived<'a>(answer: &'a FhirAnswer, output: Output, unit: &str) -> &'a Value {
    let coding = MAPPING
        .coding_of(output, unit)
        .unwrap_or_else(|| panic!("no coding for {output:?} in {unit}"));
    let found = answer
        .parameters("observation")
        .into_iter()
        .find(|o| o["code"]["coding"][0]["code"] == coding.code.as_str());
    found.unwrap_or_else(|| panic!("no {output:?} in {:#}", answer.body))
}

/// One comparison: the FHIR value equals the gRPC value exactly.
fn same(answer: &FhirAnswer, output: Output, grpc: f64, unit: &str, name: &str) -> usize {
    let o = derived(answer, output, unit);
    let fhir = o["valueQuantity"]["value"].as_f64().unwrap();
    assert_eq!(fhir, grpc, "{name}: {output:?}");
    assert_eq!(o["valueQuantity"]["code"], unit, "{name}: {output:?}");
    1
}

fn same_q(answer: &FhirAnswer, output: Output, grpc: &Option<Quantity>, name: &str) -> usize {
    grpc.as_ref()
        .map_or(0, |q| same(answer, output, q.value, &q.unit, name))
}

#[tokio::test]
async fn every_expressible_shared_vector_gives_the_grpc_numbers() {
    let server = TestServer::start().await;
    let pool = DescriptorPool::decode(oxbind_proto::FILE_DESCRIPTOR_SET).unwrap();
    let mut dissociation = DissociationServiceClient::new(server.channel().await);
    let mut transport = OxygenTransportServiceClient::new(server.channel().await);
    let (mut compared, mut values, mut skipped) = (0, 0, Vec::new());
    for vector in vectors() {
        let name = vector["name"].as_str().unwrap();
        let rpc = vector["rpc"].as_str().unwrap().rsplit('/').next().unwrap();
        let request = &vector["request"];
        let panel = match panel_for(rpc, request) {
            Ok(panel) => panel,
            Err(reason) => {
                skipped.push(format!("{name}: {reason}"));
                continue;
            }
        };
        let answer = derive(&format!("agreement-{name}"), &panel.parameters());
        if vector["refused"]["reason"] == "INPUT_NOT_INFORMATIVE" && rpc == "EstimateP50" {
            // The door derives what the inputs allow: on the plateau it
            // estimates no P50 and says so, instead of refusing the panel.
            assert_eq!(answer.status, 200, "{name}: {:#}", answer.body);
            assert!(answer.derived("p50-standard-arterial").is_none(), "{name}");
            assert!(answer
                .issues()
                .iter()
                .any(|i| i["severity"] == "information"
                    && i["diagnostics"]
                        .as_str()
                        .unwrap()
                        .contains("no P50 estimated")));
            compared += 1;
            continue;
        }
        if vector.get("refused").is_some() {
            assert!(
                [400, 422].contains(&answer.status),
                "{name}: the door must refuse too"
            );
            compared += 1;
            continue;
        }
        assert_eq!(answer.status, 200, "{name}: {:#}", answer.body);
        let pct = |f: f64| f * 100.0;
        values += match rpc {
            "SaturationFromTension" => {
                let r: SaturationFromTensionRequest =
                    typed(&pool, "oxbind.v1.SaturationFromTensionRequest", request);
                let g = dissociation
                    .saturation_from_tension(r)
                    .await
                    .unwrap()
                    .into_inner();
                same(
                    &answer,
                    Output::SaturationCalculatedArterial,
                    pct(g.saturation_fraction),
                    "%",
                    name,
                )
            }
            "ShiftFactors" => {
                let r: ShiftFactorsRequest = typed(&pool, "oxbind.v1.ShiftFactorsRequest", request);
                let g = dissociation.shift_factors(r).await.unwrap().into_inner();
                same_q(
                    &answer,
                    Output::P50AtConditionsArterial,
                    &g.p50_at_conditions,
                    name,
                )
            }
            "EstimateP50" => {
                let r: EstimateP50Request = typed(&pool, "oxbind.v1.EstimateP50Request", request);
                let g = dissociation.estimate_p50(r).await.unwrap().into_inner();
                same_q(
                    &answer,
                    Output::P50AtConditionsArterial,
                    &g.p50_at_conditions,
                    name,
                ) + same_q(&answer, Output::P50StandardArterial, &g.p50_standard, name)
            }
            "CorrectForTemperature" => {
                let r: CorrectForTemperatureRequest =
                    typed(&pool, "oxbind.v1.CorrectForTemperatureRequest", request);
                let g = dissociation
                    .correct_for_temperature(r)
                    .await
                    .unwrap()
                    .into_inner();
                g.ph.map_or(0, |ph| {
                    same(&answer, Output::PhAtBodyTemperature, ph, "[pH]", name)
                }) + same_q(&answer, Output::Pco2AtBodyTemperature, &g.pco2, name)
                    + same_q(&answer, Output::Po2AtBodyTemperature, &g.po2, name)
            }
            "OxygenContent" => {
                let r: OxygenContentRequest =
                    typed(&pool, "oxbind.v1.OxygenContentRequest", request);
                let g = transport.oxygen_content(r).await.unwrap().into_inner();
                same_q(&answer, Output::ContentArterial, &g.arterial_content, name)
                    + same_q(&answer, Output::ContentVenous, &g.venous_content, name)
                    + same_q(
                        &answer,
                        Output::ContentDifference,
                        &g.arteriovenous_difference,
                        name,
                    )
                    + g.extraction_fraction.map_or(0, |f| {
                        same(&answer, Output::ExtractionFraction, pct(f), "%", name)
                    })
                    + same_q(&answer, Output::Delivery, &g.delivery, name)
                    + same_q(&answer, Output::Consumption, &g.consumption, name)
            }
            "GasExchange" => {
                let r: GasExchangeRequest = typed(&pool, "oxbind.v1.GasExchangeRequest", request);
                let si = r.unit_system == oxbind_client::v1::UnitSystem::Si as i32;
                let pressure = if si { "kPa" } else { "mm[Hg]" };
                let g = transport.gas_exchange(r).await.unwrap().into_inner();
                same_q(&answer, Output::AlveolarPo2, &g.alveolar_po2, name)
                    + same_q(
                        &answer,
                        Output::AlveolarArterialGradient,
                        &g.alveolar_arterial_gradient,
                        name,
                    )
                    + g.pao2_fio2_ratio.map_or(0, |v| {
                        same(&answer, Output::Pao2Fio2Ratio, v, pressure, name)
                    })
                    + g.spo2_fio2_ratio
                        .map_or(0, |v| same(&answer, Output::Spo2Fio2Ratio, v, "%", name))
                    + same_q(&answer, Output::ImputedPao2, &g.imputed_pao2, name)
                    + g.oxygenation_index
                        .map_or(0, |v| same(&answer, Output::OxygenationIndex, v, "1", name))
                    + g.oxygen_saturation_index.map_or(0, |v| {
                        same(&answer, Output::OxygenSaturationIndex, v, "1", name)
                    })
                    + g.shunt_fraction.map_or(0, |v| {
                        same(&answer, Output::ShuntFraction, pct(v), "%", name)
                    })
            }
            _ => unreachable!("panel_for accepts only these"),
        };
        compared += 1;
    }
    println!(
        "compared {compared} vectors ({values} values); skipped {}:",
        skipped.len()
    );
    for reason in &skipped {
        println!("  {reason}");
    }
    assert!(compared >= MIN_COMPARED, "only {compared} vectors compared");
    assert!(values >= compared / 2, "only {values} values compared");
    server.stop().await;
}
