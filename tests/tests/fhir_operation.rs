//! The FHIR R4 operation: a LOINC-coded panel in, derived Observations with
//! their provenance out; refusals as OperationOutcomes naming the element.
//! Every answer is kept for the independent validators (tests/fhir/run.sh).
//!
//! Patients, ids and values are invented (the Larchmere Valley Infirmary).

use http::Method;
use oxbind_tests::fhir::{self, call, derive, observation, parameters, FhirAnswer};
use serde_json::{json, Value};

fn panel() -> Value {
    serde_json::from_str(fhir::LARCHMERE_PANEL).unwrap()
}

fn assert_close(actual: &Value, expected: f64, tolerance: f64, what: &str) {
    let actual = actual
        .as_f64()
        .unwrap_or_else(|| panic!("{what}: not a number"));
    assert!(
        (actual - expected).abs() <= tolerance,
        "{what}: {actual} is not within {tolerance} of {expected}"
    );
}

fn derived_from(observation: &Value) -> Vec<String> {
    observation["derivedFrom"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["reference"].as_str().unwrap().to_owned())
        .collect()
}

/// The single issue of a refusal, checked for status, code and expression.
fn refused(answer: &FhirAnswer, status: u16, code: &str, expression: &str) {
    assert_eq!(answer.status, status, "{:#}", answer.body);
    assert_eq!(answer.body["resourceType"], "OperationOutcome");
    assert!(answer.content_type.starts_with("application/fhir+json"));
    let issues = answer.issues();
    assert!(
        issues.iter().any(|i| i["code"] == code
            && i["severity"] == "error"
            && i["expression"]
                .as_array()
                .unwrap()
                .iter()
                .any(|e| e == expression)),
        "no {code} issue at {expression}: {:#}",
        answer.body
    );
    for issue in &issues {
        assert!(!issue["expression"].as_array().unwrap().is_empty());
        assert!(issue["diagnostics"].as_str().is_some_and(|d| !d.is_empty()));
    }
}

#[test]
fn the_icu_panel_gives_derived_observations_linked_to_their_inputs() {
    let answer = derive("icu-panel", &panel());
    assert_eq!(answer.status, 200, "{:#}", answer.body);
    assert_eq!(answer.body["resourceType"], "Parameters");
    let observations = answer.parameters("observation");
    assert_eq!(observations.len(), 23);
    let device = answer.parameters("device")[0];
    let device_reference = format!("Device/{}", device["id"].as_str().unwrap());
    for o in &observations {
        assert_eq!(o["status"], "final");
        assert_eq!(o["category"][0]["coding"][0]["code"], "laboratory");
        assert_eq!(o["valueQuantity"]["system"], "http://unitsofmeasure.org");
        assert_eq!(o["valueQuantity"]["code"], o["valueQuantity"]["unit"]);
        assert_eq!(o["device"]["reference"], device_reference.as_str());
        // The patient references pass through as given.
        assert_eq!(o["subject"]["reference"], "Patient/lvi-demo-0417");
        assert_eq!(o["encounter"]["reference"], "Encounter/lvi-icu-2291");
        assert!(o["method"]["text"].as_str().unwrap().len() > 20);
        assert!(!derived_from(o).is_empty());
    }
    // Saturation calculated from the arterial PO2 (LOINC 51733-4): the
    // model ignores PCO2 and MetHb, so they are not among its inputs.
    let saturation = answer.derived("51733-4").unwrap();
    assert_eq!(saturation["valueQuantity"]["code"], "%");
    assert_close(
        &saturation["valueQuantity"]["value"],
        92.03,
        0.01,
        "SO2 calc",
    );
    assert_eq!(
        derived_from(saturation),
        [
            "Observation/lvi-abg-0931-po2",
            "Observation/lvi-abg-0931-ph",
            "Observation/lvi-abg-0931-cohb"
        ]
    );
    assert_eq!(saturation["specimen"]["reference"], "Specimen/lvi-abg-0931");
    assert_eq!(saturation["effectiveDateTime"], "2026-12-03T09:31:00+00:00");
    // PaO2/FiO2 (LOINC 50984-4): 68 / 0.45, from exactly those two, whose
    // different times give a period.
    let ratio = answer.derived("50984-4").unwrap();
    assert_close(&ratio["valueQuantity"]["value"], 68.0 / 0.45, 1e-9, "P/F");
    assert_eq!(ratio["valueQuantity"]["code"], "mm[Hg]");
    assert_eq!(
        derived_from(ratio),
        [
            "Observation/lvi-abg-0931-po2",
            "Observation/lvi-vent-0930-fio2"
        ]
    );
    assert_eq!(
        ratio["effectivePeriod"]["start"],
        "2026-12-03T09:30:00+00:00"
    );
    assert_eq!(ratio["effectivePeriod"]["end"], "2026-12-03T09:31:00+00:00");
    // Its only specimen is the arterial sample's; a value from two samples
    // has none.
    assert_eq!(ratio["specimen"]["reference"], "Specimen/lvi-abg-0931");
    assert!(answer.derived("61007-1").unwrap().get("specimen").is_none());
    // A value without a LOINC term is coded in the service's CodeSystem.
    let si = answer.derived("spo2-fio2-ratio").unwrap();
    assert_eq!(
        si["code"]["coding"][0]["system"],
        "https://oxbind.example.invalid/fhir/r4/CodeSystem/oxygen-derived-values"
    );
    assert_close(&si["valueQuantity"]["value"], 92.0 / 0.45, 1e-9, "S/F");
    // The SpO2 Observation carries 2708-6 beside 59408-5 (the vital-signs
    // profile requires it): it is read as SpO2, not as a blood saturation.
    assert_eq!(
        derived_from(si),
        [
            "Observation/lvi-vs-0930-spo2",
            "Observation/lvi-vent-0930-fio2"
        ]
    );
    // Temperature-corrected values (LOINC 33254-4, 32771-8, 19255-9).
    for code in ["33254-4", "32771-8", "19255-9"] {
        let o = answer.derived(code).unwrap();
        assert!(derived_from(o).contains(&"Observation/lvi-vs-0930-temp".to_owned()));
    }
    // One Provenance: every derived Observation, every input used, the
    // Device, the compute time.
    let provenance = answer.parameters("provenance")[0];
    let targets: Vec<String> = provenance["target"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["reference"].as_str().unwrap().to_owned())
        .collect();
    let ids: Vec<String> = observations
        .iter()
        .map(|o| format!("Observation/{}", o["id"].as_str().unwrap()))
        .collect();
    assert_eq!(targets, ids);
    assert_eq!(
        provenance["agent"][0]["who"]["reference"],
        device_reference.as_str()
    );
    let entities = provenance["entity"].as_array().unwrap();
    assert_eq!(entities.len(), 14, "every input but the unused oxygen flow");
    assert!(entities.iter().all(|e| e["role"] == "derivation"));
    assert_eq!(provenance["recorded"], observations[0]["issued"]);
    // The Device names the service, its version and build commit.
    assert_eq!(device["deviceName"][0]["name"], "Oxbind");
    assert_eq!(
        device["version"][0]["value"],
        oxbind_service::SERVICE_VERSION
    );
    assert_eq!(device["version"][1]["value"], oxbind_service::BUILD_COMMIT);
    // The oxygen flow (LOINC 3151-8) is not an input: listed, not dropped.
    let issues = answer.issues();
    assert!(issues.iter().any(|i| i["severity"] == "information"
        && i["expression"][0] == "Parameters.parameter[14].resource.code"));
    // Warnings point at the derived Observations they concern.
    let warnings: Vec<&Value> = issues
        .iter()
        .filter(|i| i["severity"] == "warning")
        .collect();
    assert!(!warnings.is_empty());
    for w in warnings {
        for e in w["expression"].as_array().unwrap() {
            let e = e.as_str().unwrap();
            let index: usize = e
                .strip_prefix("Parameters.parameter[")
                .and_then(|r| r.strip_suffix("].resource"))
                .unwrap()
                .parse()
                .unwrap();
            assert_eq!(answer.body["parameter"][index]["name"], "observation");
        }
    }
}

#[test]
fn si_units_and_a_chosen_model() {
    let mut request = panel();
    let params = request["parameter"].as_array_mut().unwrap();
    params.push(json!({"name": "unitSystem", "valueCode": "si"}));
    params.push(json!({"name": "model", "valueCode": "dash-2016"}));
    params.push(json!({"name": "barometricPressure",
        "valueQuantity": {"value": 84.0, "unit": "kPa", "system": "http://unitsofmeasure.org", "code": "kPa"}}));
    let answer = derive("icu-panel-si", &request);
    assert_eq!(answer.status, 200, "{:#}", answer.body);
    let ratio = answer.derived("pao2-fio2-ratio").unwrap();
    assert_eq!(ratio["valueQuantity"]["code"], "kPa");
    let content = answer.derived("19218-7").unwrap();
    assert_eq!(content["valueQuantity"]["code"], "mmol/L");
    let saturation = answer.derived("51733-4").unwrap();
    assert!(saturation["method"]["text"]
        .as_str()
        .unwrap()
        .contains("dash-2016"));
}

#[test]
fn conformance_resources_are_served() {
    let metadata = call("metadata", Method::GET, "/fhir/r4/metadata", None, b"");
    assert_eq!(metadata.status, 200);
    assert_eq!(metadata.body["resourceType"], "CapabilityStatement");
    assert_eq!(metadata.body["fhirVersion"], "4.0.1");
    assert_eq!(
        metadata.body["rest"][0]["operation"][0]["name"],
        "derive-oxygen-values"
    );
    let definition = call(
        "operation-definition",
        Method::GET,
        "/fhir/r4/OperationDefinition/derive-oxygen-values",
        None,
        b"",
    );
    assert_eq!(definition.status, 200);
    assert_eq!(definition.body["resourceType"], "OperationDefinition");
    assert_eq!(
        definition.body["url"],
        metadata.body["rest"][0]["operation"][0]["definition"]
    );
    let code_system = call(
        "code-system",
        Method::GET,
        "/fhir/r4/CodeSystem/oxygen-derived-values",
        None,
        b"",
    );
    assert_eq!(code_system.status, 200);
    assert_eq!(code_system.body["resourceType"], "CodeSystem");
    // Served at its canonical URL's path.
    assert!(code_system.body["url"]
        .as_str()
        .unwrap()
        .ends_with("/fhir/r4/CodeSystem/oxygen-derived-values"));
}

#[test]
fn paths_methods_and_media_types_the_endpoint_does_not_serve() {
    let missing = call("not-found", Method::GET, "/fhir/r4/Patient/1", None, b"");
    refused(&missing, 404, "not-found", "Parameters");
    let get_operation = call(
        "get-operation",
        Method::GET,
        "/fhir/r4/$derive-oxygen-values",
        None,
        b"",
    );
    refused(&get_operation, 405, "not-supported", "Parameters");
    assert_eq!(get_operation.allow.as_deref(), Some("POST"));
    let xml = call(
        "xml-body",
        Method::POST,
        "/fhir/r4/$derive-oxygen-values",
        Some("application/fhir+xml"),
        b"<Parameters/>",
    );
    refused(&xml, 415, "not-supported", "Parameters");
    let xml_answer = call(
        "xml-format",
        Method::GET,
        "/fhir/r4/metadata?_format=xml",
        None,
        b"",
    );
    refused(&xml_answer, 406, "not-supported", "Parameters");
}

#[test]
fn a_malformed_panel_names_the_element() {
    // Not JSON.
    let answer = call(
        "not-json",
        Method::POST,
        fhir::OPERATION,
        Some("application/fhir+json"),
        b"{\"resourceType\": \"Parameters\",",
    );
    refused(&answer, 400, "invalid", "Parameters");
    // A number where FHIR has a decimal written as a string.
    let mut bad = observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]");
    bad["valueQuantity"]["value"] = json!("60");
    let answer = derive("value-as-string", &parameters(&[bad]));
    refused(
        &answer,
        400,
        "structure",
        "Parameters.parameter[0].resource.valueQuantity.value",
    );
    // An element the operation does not accept.
    let mut bad = observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]");
    bad["bodySite"] = json!({"text": "left radial artery"});
    let answer = derive("unknown-element", &parameters(&[bad]));
    refused(
        &answer,
        400,
        "structure",
        "Parameters.parameter[0].resource.bodySite",
    );
    // A modifier extension changes the meaning: refused.
    let mut bad = observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]");
    bad["modifierExtension"] = json!([{"url": "https://example.invalid/x", "valueBoolean": true}]);
    let answer = derive("modifier-extension", &parameters(&[bad]));
    refused(
        &answer,
        400,
        "structure",
        "Parameters.parameter[0].resource.modifierExtension",
    );
    // A panel Observation with components.
    let mut bad = observation("lvi-t-panel", "24336-0", 1.0, "1");
    bad["component"] = json!([]);
    let answer = derive("component", &parameters(&[bad]));
    refused(
        &answer,
        400,
        "structure",
        "Parameters.parameter[0].resource.component",
    );
    // Missing status.
    let mut bad = observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]");
    bad.as_object_mut().unwrap().remove("status");
    let answer = derive("missing-status", &parameters(&[bad]));
    refused(
        &answer,
        400,
        "required",
        "Parameters.parameter[0].resource.status",
    );
    // A Bundle sent as is.
    let bundle: Value = serde_json::from_str(fhir::LARCHMERE_BUNDLE).unwrap();
    let answer = derive("bundle", &bundle);
    refused(&answer, 400, "structure", "Parameters.resourceType");
    // An unknown parameter.
    let mut request = parameters(&[observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]")]);
    request["parameter"]
        .as_array_mut()
        .unwrap()
        .push(json!({"name": "respiratoryQuotient", "valueDecimal": 0.8}));
    let answer = derive("unknown-parameter", &request);
    refused(
        &answer,
        400,
        "structure",
        "Parameters.parameter[1].valueDecimal",
    );
}

#[test]
fn inputs_the_operation_cannot_compute_from_are_unprocessable() {
    // A unit the UCUM table does not accept for a pressure, named with its
    // UCUM spelling (the same table and words as the gRPC path).
    let answer = derive(
        "mmhg-unit",
        &parameters(&[observation("lvi-t-po2", "2703-7", 60.0, "mmHg")]),
    );
    refused(
        &answer,
        422,
        "code-invalid",
        "Parameters.parameter[0].resource.valueQuantity.code",
    );
    assert!(answer.issues()[0]["diagnostics"]
        .as_str()
        .unwrap()
        .contains("mm[Hg]"));
    // A pH outside the hard limit names the Observation's value.
    let answer = derive(
        "ph-out-of-range",
        &parameters(&[
            observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]"),
            observation("lvi-t-ph", "2744-1", 9.123456789, "[pH]"),
        ]),
    );
    refused(
        &answer,
        422,
        "value",
        "Parameters.parameter[1].resource.valueQuantity.value",
    );
    assert!(!String::from_utf8_lossy(&answer.raw).contains("9.123456789"));
    // Two Observations for the same input.
    let answer = derive(
        "duplicate-input",
        &parameters(&[
            observation("lvi-t-po2-a", "2703-7", 60.0, "mm[Hg]"),
            observation("lvi-t-po2-b", "2703-7", 61.0, "mm[Hg]"),
        ]),
    );
    refused(
        &answer,
        422,
        "duplicate",
        "Parameters.parameter[1].resource.code",
    );
    // Subjects that disagree.
    let mut other = observation("lvi-t-ph", "2744-1", 7.4, "[pH]");
    other["subject"] = json!({"reference": "Patient/lvi-test-0002"});
    let answer = derive(
        "subjects-disagree",
        &parameters(&[observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]"), other]),
    );
    refused(
        &answer,
        422,
        "conflict",
        "Parameters.parameter[1].resource.subject",
    );
    assert!(!String::from_utf8_lossy(&answer.raw).contains("lvi-test-0002"));
    // A preliminary result.
    let mut preliminary = observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]");
    preliminary["status"] = json!("preliminary");
    let answer = derive("preliminary", &parameters(&[preliminary]));
    refused(
        &answer,
        422,
        "business-rule",
        "Parameters.parameter[0].resource.status",
    );
    // No id to point derivedFrom at.
    let mut no_id = observation("x", "2703-7", 60.0, "mm[Hg]");
    no_id.as_object_mut().unwrap().remove("id");
    let answer = derive("no-id", &parameters(&[no_id]));
    refused(
        &answer,
        422,
        "required",
        "Parameters.parameter[0].resource.id",
    );
    // A censored value.
    let mut bound = observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]");
    bound["valueQuantity"]["comparator"] = json!(">");
    let answer = derive("comparator", &parameters(&[bound]));
    refused(
        &answer,
        422,
        "not-supported",
        "Parameters.parameter[0].resource.valueQuantity.comparator",
    );
    // Nothing to derive.
    let answer = derive(
        "nothing-to-derive",
        &parameters(&[observation("lvi-t-hbf", "4576-5", 1.0, "%")]),
    );
    refused(&answer, 422, "business-rule", "Parameters.parameter");
    // An unknown model.
    let mut request = parameters(&[observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]")]);
    request["parameter"]
        .as_array_mut()
        .unwrap()
        .push(json!({"name": "model", "valueCode": "no-such-model"}));
    let answer = derive("unknown-model", &request);
    refused(
        &answer,
        422,
        "code-invalid",
        "Parameters.parameter[1].valueCode",
    );
}

#[test]
fn observations_without_a_value_or_a_used_code_are_listed_not_dropped() {
    let mut absent = observation("lvi-t-spo2", "59408-5", 0.0, "%");
    absent.as_object_mut().unwrap().remove("valueQuantity");
    absent["dataAbsentReason"] = json!({"text": "probe off"});
    let site_unspecified = observation("lvi-t-po2-blood", "11556-8", 70.0, "mm[Hg]");
    let answer = derive(
        "listed-not-dropped",
        &parameters(&[
            observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]"),
            absent,
            site_unspecified,
            observation("lvi-t-co", "8741-1", 5.0, "L/min"),
        ]),
    );
    assert_eq!(answer.status, 200, "{:#}", answer.body);
    let information: Vec<String> = answer
        .issues()
        .iter()
        .filter(|i| i["severity"] == "information")
        .map(|i| i["expression"][0].as_str().unwrap().to_owned())
        .collect();
    assert_eq!(
        information,
        [
            "Parameters.parameter[1].resource.dataAbsentReason",
            "Parameters.parameter[2].resource.code",
            "Parameters.parameter[3].resource.code",
        ]
    );
}

#[test]
fn effective_times_that_cannot_be_ordered_are_refused() {
    let mut po2 = observation("lvi-t-po2", "2703-7", 60.0, "mm[Hg]");
    po2["effectiveDateTime"] = json!("2026-12-03");
    let mut fio2 = observation("lvi-t-fio2", "3150-0", 40.0, "%");
    fio2["effectiveDateTime"] = json!("2026-12-03T09:30:00Z");
    let answer = derive("unordered-times", &parameters(&[po2, fio2]));
    refused(
        &answer,
        422,
        "business-rule",
        "Parameters.parameter[1].resource.effectiveDateTime",
    );
}
