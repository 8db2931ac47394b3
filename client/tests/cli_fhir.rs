//! `oxbind fhir`: the example panel of the invented hospital (Larchmere
//! Valley Infirmary) as a Parameters and as a Bundle, the global flags as
//! operation parameters, and a refusal's issues on standard error.

mod common;

use common::Server;
use serde_json::Value;

fn asset(name: &str) -> String {
    format!("{}/assets/fhir/{name}", env!("CARGO_MANIFEST_DIR"))
}

fn observations(answer: &Value) -> Vec<&Value> {
    answer["parameter"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|p| p["name"] == "observation")
        .map(|p| &p["resource"])
        .collect()
}

#[test]
fn a_parameters_file_and_a_bundle_give_the_same_derived_values() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let written = dir.path().join("answer.json");
    server
        .oxbind()
        .args(["fhir", &asset("larchmere-icu-panel.json"), "--output"])
        .arg(&written)
        .assert()
        .success();
    let from_parameters: Value =
        serde_json::from_str(&std::fs::read_to_string(&written).unwrap()).unwrap();
    let printed = server
        .oxbind()
        .args(["fhir", &asset("larchmere-icu-bundle.json")])
        .output()
        .unwrap();
    assert!(printed.status.success());
    let from_bundle: Value = serde_json::from_slice(&printed.stdout).unwrap();
    let values = |a: &Value| -> Vec<Value> {
        observations(a)
            .iter()
            .map(|o| o["valueQuantity"].clone())
            .collect()
    };
    assert_eq!(values(&from_parameters).len(), 23);
    assert_eq!(values(&from_parameters), values(&from_bundle));
}

#[test]
fn global_flags_become_operation_parameters() {
    let server = Server::start();
    let out = server
        .oxbind()
        .args([
            "--unit-system",
            "si",
            "--model",
            "kelman-1966",
            "fhir",
            &asset("larchmere-icu-panel.json"),
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let answer: Value = serde_json::from_slice(&out.stdout).unwrap();
    let saturation = observations(&answer)
        .into_iter()
        .find(|o| o["code"]["coding"][0]["code"] == "51733-4")
        .unwrap();
    assert!(saturation["method"]["text"]
        .as_str()
        .unwrap()
        .contains("kelman-1966"));
    let alveolar = observations(&answer)
        .into_iter()
        .find(|o| o["code"]["coding"][0]["code"] == "alveolar-oxygen-partial-pressure")
        .unwrap();
    assert_eq!(alveolar["valueQuantity"]["code"], "kPa");
}

#[test]
fn a_refused_panel_names_the_element_and_exits_3() {
    let server = Server::start();
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("bad.json");
    let mut panel: Value =
        serde_json::from_str(&std::fs::read_to_string(asset("larchmere-icu-panel.json")).unwrap())
            .unwrap();
    panel["parameter"][2]["resource"]["valueQuantity"]["code"] = "pH".into();
    std::fs::write(&file, panel.to_string()).unwrap();
    let out = server.oxbind().arg("fhir").arg(&file).output().unwrap();
    assert_eq!(out.status.code(), Some(3));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("Parameters.parameter[2].resource.valueQuantity.code"),
        "{stderr}"
    );
    let outcome: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(outcome["resourceType"], "OperationOutcome");
    // A Bundle entry that is not an Observation is refused before sending.
    let mut bundle: Value =
        serde_json::from_str(&std::fs::read_to_string(asset("larchmere-icu-bundle.json")).unwrap())
            .unwrap();
    bundle["entry"][1]["resource"] = serde_json::json!({"resourceType": "Patient", "id": "x"});
    std::fs::write(&file, bundle.to_string()).unwrap();
    let out = server.oxbind().arg("fhir").arg(&file).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("Bundle.entry[1].resource"));
}
