//! One verification run: probe the doors, read the server's identity,
//! catalog (with its uncertainty profiles) and settings, send every case
//! through every door that answers, and assemble the report.

use std::collections::{BTreeMap, BTreeSet};

use serde_json::Value;

use super::{
    case::{Case, CaseSet},
    check::judge,
    contract,
    report::{
        blank_sign_off, CaseFile, CaseRecord, Coverage, MethodCoverage, ModelCoverage, Report,
        Reverification, Server, Setting, Settings, SurfaceRecord, Tool, Totals, ALSO_DUE_WHEN,
        HASH_METHOD, SCHEMA, STATEMENT,
    },
    schedule::Schedule,
    sources,
    surface::{grpc::Grpc, CallFailure, Surface},
    uncertainty,
};

/// ListModels, the source of the catalog and the hard-limit table.
const LIST_MODELS: &str = "oxbind.v1.ModelCatalogService/ListModels";
/// GetServerSettings, the source of the identity and the settings.
const GET_SERVER_SETTINGS: &str = "oxbind.v1.ModelCatalogService/GetServerSettings";

/// Methods whose request names a dissociation model directly, and so use
/// the default model when it names none.
const MODEL_METHODS: [&str; 6] = [
    "oxbind.v1.DissociationService/SaturationFromTension",
    "oxbind.v1.DissociationService/TensionFromSaturation",
    "oxbind.v1.DissociationService/SampleCurve",
    "oxbind.v1.DissociationService/ShiftFactors",
    "oxbind.v1.DissociationService/BatchSaturationFromTension",
    "oxbind.v1.DissociationService/BatchTensionFromSaturation",
];

/// Why a run could not be made at all.
#[derive(Debug)]
pub(crate) enum RunError {
    /// The gRPC door did not answer.
    Unavailable(String),
    /// The server answered, but not as the contract says.
    Server(String),
}

/// What a run needs.
pub(crate) struct RunInput<'a> {
    /// The address as given.
    pub(crate) address: &'a str,
    /// The gRPC door; it must answer.
    pub(crate) grpc: Grpc,
    /// The other doors, in report order.
    pub(crate) others: Vec<Box<dyn Surface>>,
    /// The report's date and due date.
    pub(crate) schedule: Schedule,
    /// The cases.
    pub(crate) cases: CaseSet,
}

/// Make the run and its report.
pub(crate) async fn run(input: RunInput<'_>) -> Result<Report, RunError> {
    let grpc_probe = input.grpc.probe().await;
    if !grpc_probe.answered {
        return Err(RunError::Unavailable(grpc_probe.detail));
    }
    let catalog = call_grpc(&input.grpc, LIST_MODELS)
        .await
        .map_err(|f| RunError::Server(format!("ListModels: {} {}", f.code, f.message)))?;
    let settings_answer = call_grpc(&input.grpc, GET_SERVER_SETTINGS).await;
    // A server older than GetServerSettings still names itself in every
    // answer's provenance.
    let provenance = match &settings_answer {
        Ok(_) => Value::Null,
        Err(_) => provenance_of(&input.grpc).await,
    };

    let mut surfaces: Vec<(&dyn Surface, super::surface::Probe)> = vec![(&input.grpc, grpc_probe)];
    for other in &input.others {
        let probe = other.probe().await;
        surfaces.push((other.as_ref(), probe));
    }

    let default_model = catalog["models"]
        .as_array()
        .and_then(|models| models.iter().find(|m| m["isDefault"] == Value::Bool(true)))
        .and_then(|m| m["modelId"].as_str())
        .unwrap_or_default()
        .to_owned();
    let model_ids = model_ids(&catalog);

    let mut records = Vec::new();
    let mut surface_records = Vec::new();
    for (surface, probe) in &surfaces {
        let mut ran = 0;
        let mut passed = 0;
        if probe.answered {
            for case in &input.cases.cases {
                if !surface.offers(case) {
                    continue;
                }
                let record = run_case(*surface, case, &model_ids, &default_model).await;
                ran += 1;
                passed += usize::from(record.passed);
                records.push(record);
            }
        }
        surface_records.push(SurfaceRecord {
            key: surface.key(),
            title: surface.title(),
            probe: probe.clone(),
            cases: ran,
            passed,
        });
    }

    let (server, settings) = identity(input.address, &catalog, settings_answer, &provenance);
    let coverage = coverage(&records, &catalog);
    let checks: Vec<_> = records.iter().flat_map(|r| &r.checks).collect();
    let mut totals = Totals {
        cases: records.len(),
        passed: records.iter().filter(|r| r.passed).count(),
        checks: checks.len(),
        checks_passed: checks.iter().filter(|c| c.passed).count(),
        not_run: input.cases.not_run.len(),
        gaps: coverage.gaps.len(),
        source_problems: input.cases.problems.len(),
        ..Totals::default()
    };
    totals.failed = totals.cases - totals.passed;
    totals.verified =
        totals.failed == 0 && totals.gaps == 0 && totals.source_problems == 0 && totals.cases > 0;

    Ok(Report {
        schema: SCHEMA,
        statement: STATEMENT,
        as_of: input.schedule.as_of.to_string(),
        reverification: Reverification {
            interval: input.schedule.interval.clone(),
            interval_iso: input.schedule.interval_iso.clone(),
            due_by: input.schedule.due_by.to_string(),
            also_due_when: ALSO_DUE_WHEN.to_vec(),
        },
        tool: Tool {
            name: "oxbind verify",
            version: env!("CARGO_PKG_VERSION"),
            build_commit: sources::CLIENT_BUILD_COMMIT,
            case_files: sources::all()
                .map(|f| CaseFile {
                    path: f.path,
                    sha256: contract::sha256_hex(f.text.as_bytes()),
                })
                .collect(),
        },
        server,
        settings,
        surfaces: surface_records,
        uncertainty: uncertainty::section(&catalog, &records),
        coverage,
        totals,
        cases: records,
        not_run: input.cases.not_run,
        source_problems: input.cases.problems,
        sign_off: blank_sign_off(),
    })
}

/// Call `rpc` with an empty request on the gRPC door.
async fn call_grpc(grpc: &Grpc, rpc: &str) -> Result<Value, CallFailure> {
    let method = contract::method(rpc)
        .ok_or_else(|| CallFailure::no_answer(format!("this build's contract has no {rpc}")))?;
    grpc.call(&method, &Value::Object(Default::default())).await
}

/// The provenance of a saturation at standard conditions.
async fn provenance_of(grpc: &Grpc) -> Value {
    let Some(method) = contract::method("oxbind.v1.DissociationService/SaturationFromTension")
    else {
        return Value::Null;
    };
    let request = serde_json::json!({"po2": {"value": 40, "unit": "mm[Hg]"}});
    grpc.call(&method, &request)
        .await
        .map(|answer| answer["provenance"].clone())
        .unwrap_or(Value::Null)
}

/// Each catalog model's enum name and id.
fn model_ids(catalog: &Value) -> BTreeMap<String, String> {
    catalog["models"]
        .as_array()
        .map(Vec::as_slice)
        .unwrap_or(&[])
        .iter()
        .filter_map(|m| {
            Some((
                m["model"].as_str()?.to_owned(),
                m["modelId"].as_str()?.to_owned(),
            ))
        })
        .collect()
}

/// Run one case on one door.
async fn run_case(
    surface: &dyn Surface,
    case: &Case,
    model_ids: &BTreeMap<String, String>,
    default_model: &str,
) -> CaseRecord {
    let answer = match contract::method(&case.rpc) {
        Some(method) => surface.call(&method, &case.request).await,
        None => Err(CallFailure::no_answer(format!(
            "this build's contract has no method {}",
            case.rpc
        ))),
    };
    let checks = judge(&case.expect, &answer);
    CaseRecord {
        id: case.id.clone(),
        surface: surface.key(),
        family: case.family,
        file: case.file,
        rpc: case.rpc.clone(),
        inputs: case.request.clone(),
        source: case.source.clone(),
        note: case.note.clone(),
        models: models_of(case, model_ids, default_model),
        passed: !checks.is_empty() && checks.iter().all(|c| c.passed),
        checks,
    }
}

/// The catalog ids of the models a request names, or the default model for
/// a method that takes one and names none.
fn models_of(
    case: &Case,
    model_ids: &BTreeMap<String, String>,
    default_model: &str,
) -> Vec<String> {
    let mut names = BTreeSet::new();
    collect_models(&case.request, &mut names);
    let mut ids: Vec<String> = names
        .iter()
        .map(|name| model_ids.get(name).cloned().unwrap_or_else(|| name.clone()))
        .collect();
    if ids.is_empty() && MODEL_METHODS.contains(&case.rpc.as_str()) && !default_model.is_empty() {
        ids.push(default_model.to_owned());
    }
    ids
}

fn collect_models(value: &Value, names: &mut BTreeSet<String>) {
    match value {
        Value::Object(map) => {
            for (key, child) in map {
                match (key.as_str(), child) {
                    ("model", Value::String(name)) => {
                        names.insert(name.clone());
                    }
                    _ => collect_models(child, names),
                }
            }
        }
        Value::Array(items) => items.iter().for_each(|i| collect_models(i, names)),
        _ => {}
    }
}

/// The server's identity, hashes and settings.
fn identity(
    address: &str,
    catalog: &Value,
    settings_answer: Result<Value, CallFailure>,
    provenance: &Value,
) -> (Server, Settings) {
    let text = |v: &Value, key: &str| v[key].as_str().unwrap_or_default().to_owned();
    let (service_version, build_commit, api_version, identity_source, settings) =
        match settings_answer {
            Ok(answer) => {
                let items = answer["settings"]
                    .as_array()
                    .map(Vec::as_slice)
                    .unwrap_or(&[])
                    .iter()
                    .map(|s| Setting {
                        name: text(s, "name"),
                        value: text(s, "value"),
                        meaning: text(s, "meaning"),
                    })
                    .collect();
                (
                    text(&answer, "serviceVersion"),
                    text(&answer, "buildCommit"),
                    text(&answer, "apiVersion"),
                    "GetServerSettings".to_owned(),
                    Settings {
                        reported: true,
                        note: "As reported by GetServerSettings (file paths and keys are never \
                               reported)"
                            .to_owned(),
                        items,
                    },
                )
            }
            Err(failure) => (
                text(provenance, "serviceVersion"),
                text(provenance, "buildCommit"),
                text(provenance, "apiVersion"),
                "the provenance of a SaturationFromTension answer".to_owned(),
                Settings {
                    reported: false,
                    note: format!(
                        "The server reports no settings (GetServerSettings: {} {})",
                        failure.code, failure.message
                    ),
                    items: Vec::new(),
                },
            ),
        };
    let hash = |key: &str| contract::sha256_hex(contract::canonical_json(&catalog[key]).as_bytes());
    let count = |key: &str| catalog[key].as_array().map_or(0, Vec::len);
    (
        Server {
            address: address.to_owned(),
            service_version,
            build_commit,
            api_version,
            identity_source,
            catalog_sha256: hash("models"),
            hard_limits_sha256: hash("inputLimits"),
            hash_method: HASH_METHOD,
            catalog_models: count("models"),
            hard_limits: count("inputLimits"),
        },
        settings,
    )
}

/// Cases per method and model, and what nothing covered.
fn coverage(records: &[CaseRecord], catalog: &Value) -> Coverage {
    let mut methods: BTreeMap<String, MethodCoverage> = BTreeMap::new();
    for service in oxbind_proto::service_names::ALL {
        if let Some(service) = contract::pool().get_service_by_name(service) {
            for m in service.methods() {
                let rpc = format!("{}/{}", service.full_name(), m.name());
                methods.insert(
                    rpc.clone(),
                    MethodCoverage {
                        rpc,
                        cases: 0,
                        passed: 0,
                        refusals: 0,
                    },
                );
            }
        }
    }
    let mut models: BTreeMap<String, ModelCoverage> = model_ids(catalog)
        .into_values()
        .map(|id| {
            (
                id.clone(),
                ModelCoverage {
                    model_id: id,
                    cases: 0,
                    passed: 0,
                },
            )
        })
        .collect();
    for record in records {
        let entry = methods
            .entry(record.rpc.clone())
            .or_insert_with(|| MethodCoverage {
                rpc: record.rpc.clone(),
                cases: 0,
                passed: 0,
                refusals: 0,
            });
        entry.cases += 1;
        entry.passed += usize::from(record.passed);
        entry.refusals += usize::from(record.checks.iter().any(|c| c.what == "refusal"));
        if record.surface == "grpc" {
            for id in &record.models {
                if let Some(model) = models.get_mut(id) {
                    model.cases += 1;
                    model.passed += usize::from(record.passed);
                }
            }
        }
    }
    let mut gaps = Vec::new();
    for method in methods.values().filter(|m| m.cases == 0) {
        gaps.push(format!("no case ran for the method {}", method.rpc));
    }
    for model in models.values().filter(|m| m.cases == 0) {
        gaps.push(format!(
            "the catalog lists the model {}, and no case of this build uses it",
            model.model_id
        ));
    }
    Coverage {
        methods: methods.into_values().collect(),
        models: models.into_values().collect(),
        gaps,
    }
}
