//! The FHIR worked example of `proto/API.md` (section 9), sent exactly as
//! documented: the answer must equal the documented one, element for
//! element and number for number, once the parts that change on every call
//! (ids, times) or every build (version, commit) are replaced by the
//! placeholders the document uses. The README's curl example sends the
//! panel of `client/assets/fhir/larchmere-icu-panel.json`, which
//! `fhir_operation.rs` checks.

use std::collections::BTreeMap;

use oxbind_tests::fhir::derive;
use serde_json::Value;

const API_MD: &str = include_str!("../../proto/API.md");

/// The JSON block after `marker` in API.md.
fn block(marker: &str) -> Value {
    let start = API_MD
        .find(marker)
        .unwrap_or_else(|| panic!("{marker} not in API.md"));
    let rest = &API_MD[start..];
    let open = rest
        .find("```json\n")
        .expect("a json block after the marker")
        + 8;
    let close = rest[open..].find("\n```").expect("the block ends");
    serde_json::from_str(&rest[open..open + close])
        .unwrap_or_else(|e| panic!("the block after {marker} is not JSON: {e}"))
}

/// Replace what changes between calls and builds by the document's
/// placeholders.
fn mask(answer: &mut Value) {
    let mut ids: BTreeMap<String, String> = BTreeMap::new();
    let version = oxbind_service::SERVICE_VERSION;
    let commit = oxbind_service::BUILD_COMMIT;
    for parameter in answer["parameter"].as_array_mut().unwrap() {
        let resource = &mut parameter["resource"];
        match resource["resourceType"].as_str().unwrap() {
            "Observation" => {
                let n = ids.len() + 1;
                let id = resource["id"].as_str().unwrap().to_owned();
                ids.insert(id, format!("derived-{n}"));
                resource["id"] = format!("derived-{n}").into();
                resource["issued"] = "COMPUTE-TIME".into();
                resource["device"]["reference"] = "Device/oxbind-VERSION-COMMIT".into();
            }
            "Device" => {
                resource["id"] = "oxbind-VERSION-COMMIT".into();
                assert_eq!(resource["version"][0]["value"], version);
                assert_eq!(resource["version"][1]["value"], commit);
                resource["version"][0]["value"] = "VERSION".into();
                resource["version"][1]["value"] = "COMMIT".into();
            }
            "Provenance" => {
                resource["id"] = "provenance-1".into();
                resource["recorded"] = "COMPUTE-TIME".into();
                resource["agent"][0]["who"]["reference"] = "Device/oxbind-VERSION-COMMIT".into();
                for target in resource["target"].as_array_mut().unwrap() {
                    let id = target["reference"]
                        .as_str()
                        .unwrap()
                        .trim_start_matches("Observation/");
                    target["reference"] = format!("Observation/{}", ids[id]).into();
                }
            }
            _ => {}
        }
    }
}

#[test]
fn the_documented_fhir_example_is_what_the_service_answers() {
    let request = block("<!-- fhir-example-request -->");
    let answer = derive("doc-example", &request);
    assert_eq!(answer.status, 200, "{:#}", answer.body);
    let mut actual = answer.body.clone();
    mask(&mut actual);
    if std::env::var_os("OXBIND_PRINT_FHIR_EXAMPLE").is_some() {
        println!("{}", serde_json::to_string_pretty(&actual).unwrap());
    }
    let documented = block("<!-- fhir-example-response -->");
    assert_eq!(actual, documented, "API.md's FHIR example is out of date");
}

#[test]
fn the_documented_refusal_is_what_the_service_answers() {
    let request = block("<!-- fhir-refusal-request -->");
    let answer = derive("doc-refusal", &request);
    assert_eq!(answer.status, 422);
    assert_eq!(answer.body, block("<!-- fhir-refusal-response -->"));
}
