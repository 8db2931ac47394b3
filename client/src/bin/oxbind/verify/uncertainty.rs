//! The report's uncertainty section: what the deployed instance offers, read
//! from its own ListModels answer (`uncertaintyProfiles`: each built-in
//! profile with its figure, citation and how far the figure was verified,
//! recorded as the server publishes it); the methods it follows, as
//! `proto/API.md` section 10 states them; and the cases of this run that ask
//! for an uncertainty, with what no case checks.

use std::collections::BTreeSet;

use serde::Serialize;
use serde_json::Value;

use super::{contract, report::CaseRecord};

/// The statement when the instance publishes built-in profiles.
pub(crate) const OFFERED: &str = "This instance states the uncertainty of its derived values on \
request (proto/API.md section 10). A caller gives, for each input, a standard uncertainty, a \
bound with what it covers, or a built-in profile; each derived value then comes with its \
estimate, standard uncertainty, coverage interval, method, variance budget, the spread between \
published models (kept apart), the inputs not considered and warnings. The built-in profiles \
below are recorded as the server published them in its ListModels answer on the gRPC door. The \
uncertainty cases run through every door that carries the request field (gRPC and Connect; the \
FHIR operation takes none).";

/// The statement when the instance publishes none (a server older than the
/// uncertainty contract).
pub(crate) const NOT_OFFERED: &str = "This instance does not state an uncertainty for its derived \
values: its ListModels answer lists no built-in uncertainty profiles, as a server older than the \
uncertainty contract (proto/API.md section 10) answers. The uncertainty cases of this build are \
run all the same, and are listed below with their results.";

/// The cautions that go with any interval (proto/API.md section 10).
pub(crate) const CAUTIONS: &str = "An interval describes the arithmetic from the figures stated \
for the inputs, not the patient. The built-in profiles are fallbacks: the laboratory's own \
imprecision (internal quality control) and each device's stated accuracy describe its results \
better, and some profile figures were not verified at their source (see each profile's \
verification). Bias of pulse oximetry by skin pigmentation, low perfusion or dyshaemoglobins is \
not included unless the caller gives it as a figure. Decision support only: measured \
co-oximetry and licensed clinicians decide.";

/// The model component, reported beside either method.
pub(crate) const MODEL_COMPONENT: &str = "Beside either method, the spread between the published \
adult models that honour the given conditions is reported as a separate component: half the \
range of their values, a, read as the bounds of a rectangular distribution, u_model = a/\u{221a}3 \
(JCGM 100:2008 clause 4.3.7). It is not included in the standard uncertainty.";

/// How the profile hash is made.
pub(crate) const PROFILES_HASH_METHOD: &str = "SHA-256 of the canonical JSON of the \
uncertaintyProfiles list of the ListModels answer, made as the catalog hash is (see the instance \
verified).";

/// The methods of proto/API.md section 10: enum name, title, published
/// method, and what the service does with it.
const METHODS: [(&str, &str, &str, &str); 2] = [
    (
        "UNCERTAINTY_METHOD_FIRST_ORDER",
        "Law of propagation of uncertainty, first order (the GUM)",
        "JCGM 100:2008, clause 5.1.2",
        "The default, and always computed. Inputs are treated as independent; sensitivity \
         coefficients come from exact derivatives where a closed form exists, otherwise from \
         central differences with one Richardson extrapolation (the budget says which). The \
         interval is y \u{b1} k u with the normal coverage factor k.",
    ),
    (
        "UNCERTAINTY_METHOD_MONTE_CARLO",
        "Propagation of distributions by a Monte Carlo method",
        "JCGM 101:2008 (Supplement 1 to the GUM), clause 7; validation of the first-order \
         result, clause 8",
        "On request. Seeded and reproducible: the same seed, inputs and settings give the same \
         result on every server of one version. 10,000 to 1,000,000 draws; a probabilistically \
         symmetric or shortest coverage interval; the first-order interval is validated against \
         it and the block check of stability is reported. Batch items are evaluated by the \
         first order only.",
    ),
];

/// The uncertainty section.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Uncertainty {
    /// Whether the instance offers an uncertainty statement: its ListModels
    /// answer lists built-in profiles.
    pub(crate) offered: bool,
    /// [`OFFERED`] or [`NOT_OFFERED`].
    pub(crate) statement: &'static str,
    /// [`CAUTIONS`], when offered.
    pub(crate) cautions: Option<&'static str>,
    /// The methods it follows, when offered.
    pub(crate) methods: Vec<Method>,
    /// [`MODEL_COMPONENT`], when offered.
    pub(crate) model_component: Option<&'static str>,
    /// The built-in profiles, as the server published them.
    pub(crate) profiles: Vec<Profile>,
    /// SHA-256 of the profiles' canonical JSON.
    pub(crate) profiles_sha256: String,
    /// [`PROFILES_HASH_METHOD`].
    pub(crate) profiles_hash_method: &'static str,
    /// Every case run that asks for an uncertainty, on every door.
    pub(crate) cases: Vec<UncertaintyCase>,
    /// The methods of the contract that take an uncertainty request and
    /// that no case asks one of.
    pub(crate) unchecked: Vec<String>,
}

/// One method.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Method {
    /// The `UncertaintyMethod` value that asks for it.
    pub(crate) method: &'static str,
    /// Its name.
    pub(crate) title: &'static str,
    /// The published method.
    pub(crate) reference: &'static str,
    /// What the service does with it.
    pub(crate) how: &'static str,
    /// Cases run that ask for it (every door).
    pub(crate) cases: usize,
    /// Of which passed.
    pub(crate) passed: usize,
}

/// One built-in profile, as the server published it.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Profile {
    /// Its id.
    pub(crate) profile_id: String,
    /// The set it belongs to.
    pub(crate) profile_set: String,
    /// The kind of input it is a figure for.
    pub(crate) input: String,
    /// The figure as published: `{"standardUncertainty": ...}` or
    /// `{"bound": ...}`.
    pub(crate) figure: Value,
    /// The figure in words.
    pub(crate) figure_text: String,
    /// What the figure is.
    pub(crate) description: String,
    /// How it becomes a standard uncertainty.
    pub(crate) conversion: String,
    /// Its citation.
    pub(crate) source: String,
    /// How far it was verified (the `ProfileVerification` name).
    pub(crate) verification: String,
    /// What that means, in words.
    pub(crate) verification_meaning: &'static str,
    /// Where it was verified, or why it could not be.
    pub(crate) verification_note: String,
}

/// A case that asks for an uncertainty, on one door.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct UncertaintyCase {
    /// The case id.
    pub(crate) id: String,
    /// The door's key.
    pub(crate) surface: &'static str,
    /// The method of the contract called.
    pub(crate) rpc: String,
    /// The uncertainty methods the request asks for.
    pub(crate) methods: Vec<&'static str>,
    /// Whether every check held.
    pub(crate) passed: bool,
}

/// The section, from the ListModels answer and the cases run.
pub(crate) fn section(catalog: &Value, records: &[CaseRecord]) -> Uncertainty {
    let published = catalog["uncertaintyProfiles"]
        .as_array()
        .map(Vec::as_slice)
        .unwrap_or(&[]);
    let profiles: Vec<Profile> = published.iter().map(profile).collect();
    let offered = !profiles.is_empty();
    // Only requests that take an UncertaintyRequest ask for an uncertainty:
    // CheckBloodGas's own `uncertainty` holds the figures of its rules.
    let carrying = carrying_methods();
    let cases: Vec<UncertaintyCase> = records
        .iter()
        .filter(|record| carrying.contains(&record.rpc))
        .filter_map(|record| {
            let methods = asked_methods(&record.inputs);
            (!methods.is_empty()).then(|| UncertaintyCase {
                id: record.id.clone(),
                surface: record.surface,
                rpc: record.rpc.clone(),
                methods: methods.into_iter().collect(),
                passed: record.passed,
            })
        })
        .collect();
    let methods = if offered {
        METHODS
            .iter()
            .map(|&(method, title, reference, how)| {
                let asking = cases.iter().filter(|c| c.methods.contains(&method));
                Method {
                    method,
                    title,
                    reference,
                    how,
                    cases: asking.clone().count(),
                    passed: asking.filter(|c| c.passed).count(),
                }
            })
            .collect()
    } else {
        Vec::new()
    };
    let asked: BTreeSet<&str> = cases.iter().map(|c| c.rpc.as_str()).collect();
    let unchecked = carrying
        .into_iter()
        .filter(|rpc| !asked.contains(rpc.as_str()))
        .collect();
    Uncertainty {
        offered,
        statement: if offered { OFFERED } else { NOT_OFFERED },
        cautions: offered.then_some(CAUTIONS),
        methods,
        model_component: offered.then_some(MODEL_COMPONENT),
        profiles,
        profiles_sha256: contract::sha256_hex(
            contract::canonical_json(&catalog["uncertaintyProfiles"]).as_bytes(),
        ),
        profiles_hash_method: PROFILES_HASH_METHOD,
        cases,
        unchecked,
    }
}

/// One published profile.
fn profile(published: &Value) -> Profile {
    let text = |key: &str| published[key].as_str().unwrap_or_default().to_owned();
    let figure = ["standardUncertainty", "bound"]
        .into_iter()
        .find_map(|key| {
            published
                .get(key)
                .filter(|v| v.is_object())
                .map(|v| serde_json::json!({ key: v }))
        })
        .unwrap_or(Value::Null);
    let verification = text("verification");
    Profile {
        profile_id: text("profileId"),
        profile_set: text("profileSet"),
        input: text("input"),
        figure_text: figure_text(&figure),
        figure,
        description: text("description"),
        conversion: text("conversion"),
        source: text("source"),
        verification_meaning: verification_meaning(&verification),
        verification,
        verification_note: text("verificationNote"),
    }
}

/// What a `ProfileVerification` value means (uncertainty.proto; proto/API.md
/// section 10).
fn verification_meaning(name: &str) -> &'static str {
    match name {
        "PROFILE_VERIFICATION_VERIFIED" => "verified: the figure was read at its source",
        "PROFILE_VERIFICATION_SECONDARY_SOURCE" => {
            "secondary: the figure was read in a public page that quotes the source; the source \
             itself was not read"
        }
        "PROFILE_VERIFICATION_UNVERIFIED" => {
            "unverified: the figure was not found in a readable copy of the source; check it \
             before relying on it"
        }
        _ => "not stated by the server",
    }
}

/// A published figure in words: `standard uncertainty 0.04 (unit 1)`,
/// `bound ± 15 mm[Hg] or 0.15 of the value, whichever is greater; normal,
/// covering 0.95`.
pub(crate) fn figure_text(figure: &Value) -> String {
    if let Some(amount) = figure.get("standardUncertainty") {
        return format!("standard uncertainty {}", amount_text(amount));
    }
    let Some(bound) = figure.get("bound") else {
        return "no figure published".to_owned();
    };
    let number = |key: &str| number_text(&bound[key]);
    let shape = match bound["shape"].as_str().unwrap_or_default() {
        "BOUND_SHAPE_NORMAL" | "BOUND_SHAPE_UNSPECIFIED" | "" => {
            format!("normal, covering {}", number("coverageProbability"))
        }
        "BOUND_SHAPE_COVERAGE_FACTOR" => {
            format!(
                "an expanded uncertainty, coverage factor {}",
                number("coverageFactor")
            )
        }
        "BOUND_SHAPE_RECTANGULAR" => "rectangular".to_owned(),
        "BOUND_SHAPE_TRIANGULAR" => "triangular".to_owned(),
        "BOUND_SHAPE_TRAPEZOIDAL" => format!(
            "trapezoidal, top-to-base ratio {}",
            number("trapezoidTopRatio")
        ),
        other => other.to_owned(),
    };
    format!("bound \u{b1} {}; {shape}", amount_text(&bound["halfWidth"]))
}

/// An `UncertaintyAmount` in words; with both parts, the greater applies.
fn amount_text(amount: &Value) -> String {
    fn quantity(q: &Value) -> (String, &str) {
        (number_text(&q["value"]), q["unit"].as_str().unwrap_or(""))
    }
    let absolute = amount
        .get("absolute")
        .filter(|q| q.is_object())
        .map(|q| match quantity(q) {
            (value, "1") => format!("{value} (unit 1)"),
            (value, unit) => format!("{value} {unit}"),
        });
    let relative = amount
        .get("relative")
        .filter(|q| q.is_object())
        .map(|q| match quantity(q) {
            (value, "%") => format!("{value} % of the value"),
            (value, "1") => format!("{value} of the value"),
            (value, unit) => format!("{value} {unit} of the value"),
        });
    match (absolute, relative) {
        (Some(a), Some(r)) => format!("{a} or {r}, whichever is greater"),
        (Some(a), None) => a,
        (None, Some(r)) => r,
        (None, None) => "(no amount)".to_owned(),
    }
}

/// A number as its shortest decimal form (`15`, not `15.0`).
fn number_text(value: &Value) -> String {
    match value.as_f64() {
        Some(number) => format!("{number}"),
        None => "(not stated)".to_owned(),
    }
}

/// The uncertainty methods a request asks for: one per `uncertainty` in it
/// (a batch asks per item); without a `method`, the first order.
pub(crate) fn asked_methods(request: &Value) -> BTreeSet<&'static str> {
    let mut methods = BTreeSet::new();
    collect_methods(request, &mut methods);
    methods
}

fn collect_methods(value: &Value, methods: &mut BTreeSet<&'static str>) {
    match value {
        Value::Object(map) => {
            for (key, child) in map {
                if key == "uncertainty" && child.is_object() {
                    methods.insert(match child["method"].as_str() {
                        Some("UNCERTAINTY_METHOD_MONTE_CARLO") => METHODS[1].0,
                        _ => METHODS[0].0,
                    });
                } else {
                    collect_methods(child, methods);
                }
            }
        }
        Value::Array(items) => items.iter().for_each(|i| collect_methods(i, methods)),
        _ => {}
    }
}

/// The methods of this build's contract whose request takes an
/// `UncertaintyRequest`, directly or in each batch item.
fn carrying_methods() -> Vec<String> {
    let takes = |message: &prost_reflect::MessageDescriptor| {
        message.fields().any(|f| {
            f.kind()
                .as_message()
                .is_some_and(|m| m.name() == "UncertaintyRequest")
        })
    };
    let mut rpcs = Vec::new();
    for service in oxbind_proto::service_names::ALL {
        let Some(service) = contract::pool().get_service_by_name(service) else {
            continue;
        };
        for method in service.methods() {
            let input = method.input();
            let carries = takes(&input)
                || input
                    .fields()
                    .filter_map(|f| f.kind().as_message().cloned())
                    .any(|m| takes(&m));
            if carries {
                rpcs.push(format!("{}/{}", service.full_name(), method.name()));
            }
        }
    }
    rpcs
}

#[cfg(test)]
mod tests {
    use serde_json::json;

    use super::*;

    #[test]
    fn figures_read_as_the_server_wrote_them() {
        assert_eq!(
            figure_text(
                &json!({"standardUncertainty": {"absolute": {"value": 0.04, "unit": "1"}}})
            ),
            "standard uncertainty 0.04 (unit 1)"
        );
        assert_eq!(
            figure_text(&json!({"bound": {
                "halfWidth": {"absolute": {"value": 15.0, "unit": "mm[Hg]"},
                              "relative": {"value": 0.15, "unit": "1"}},
                "shape": "BOUND_SHAPE_NORMAL", "coverageProbability": 0.95,
                "coverageFactor": 0.0, "trapezoidTopRatio": 0.0}})),
            "bound \u{b1} 15 mm[Hg] or 0.15 of the value, whichever is greater; normal, covering 0.95"
        );
        assert_eq!(
            figure_text(
                &json!({"bound": {"halfWidth": {"relative": {"value": 4, "unit": "%"}},
                                          "shape": "BOUND_SHAPE_RECTANGULAR"}})
            ),
            "bound \u{b1} 4 % of the value; rectangular"
        );
    }

    #[test]
    fn a_request_asks_for_the_first_order_unless_it_names_monte_carlo() {
        assert!(asked_methods(&json!({"po2": {"value": 40}})).is_empty());
        assert_eq!(
            asked_methods(&json!({"uncertainty": {"inputs": []}})),
            BTreeSet::from(["UNCERTAINTY_METHOD_FIRST_ORDER"])
        );
        assert_eq!(
            asked_methods(&json!({"requests": [
                {"uncertainty": {"method": "UNCERTAINTY_METHOD_MONTE_CARLO"}},
                {"uncertainty": {}}
            ]})),
            BTreeSet::from([
                "UNCERTAINTY_METHOD_FIRST_ORDER",
                "UNCERTAINTY_METHOD_MONTE_CARLO"
            ])
        );
    }

    #[test]
    fn the_figures_of_the_consistency_rules_are_not_an_uncertainty_case() {
        let record = |rpc: &str| CaseRecord {
            id: format!("example.json/{rpc}"),
            surface: "grpc",
            family: crate::verify::case::Family::SharedVector,
            file: "tests/vectors/example.json",
            rpc: rpc.to_owned(),
            inputs: json!({"uncertainty": {"inputs": []}}),
            source: "a source".to_owned(),
            note: None,
            models: Vec::new(),
            passed: true,
            checks: Vec::new(),
        };
        let catalog = json!({"uncertaintyProfiles": [{"profileId": "clia-2024-po2"}]});
        let s = section(
            &catalog,
            &[
                record("oxbind.v1.ConsistencyService/CheckBloodGas"),
                record("oxbind.v1.DissociationService/SaturationFromTension"),
            ],
        );
        let rpcs: Vec<&str> = s.cases.iter().map(|c| c.rpc.as_str()).collect();
        assert_eq!(
            rpcs,
            ["oxbind.v1.DissociationService/SaturationFromTension"]
        );
    }

    #[test]
    fn the_contract_takes_an_uncertainty_request_on_the_seven_methods() {
        let names: Vec<String> = carrying_methods()
            .iter()
            .map(|rpc| rpc.rsplit('/').next().unwrap().to_owned())
            .collect();
        for name in [
            "SaturationFromTension",
            "TensionFromSaturation",
            "ShiftFactors",
            "OxygenContent",
            "GasExchange",
            "BatchSaturationFromTension",
            "BatchTensionFromSaturation",
        ] {
            assert!(names.iter().any(|n| n == name), "{name}: {names:?}");
        }
        assert_eq!(names.len(), 7, "{names:?}");
    }

    #[test]
    fn a_server_without_profiles_is_said_to_offer_none() {
        let old = section(&json!({"models": [], "inputLimits": []}), &[]);
        assert!(!old.offered);
        assert_eq!(old.statement, NOT_OFFERED);
        assert!(old.methods.is_empty() && old.profiles.is_empty());
        assert!(old.cautions.is_none());

        let new = section(
            &json!({"uncertaintyProfiles": [{
                "profileId": "clia-2024-ph", "profileSet": "clia-2024", "input": "ph",
                "bound": {"halfWidth": {"absolute": {"value": 0.04, "unit": "[pH]"}},
                          "shape": "BOUND_SHAPE_NORMAL", "coverageProbability": 0.95},
                "description": "d", "conversion": "c", "source": "42 CFR 493.931",
                "verification": "PROFILE_VERIFICATION_SECONDARY_SOURCE",
                "verificationNote": "n"}]}),
            &[],
        );
        assert!(new.offered);
        assert_eq!(new.methods.len(), 2);
        let p = &new.profiles[0];
        assert_eq!(p.profile_id, "clia-2024-ph");
        assert_eq!(p.source, "42 CFR 493.931");
        assert_eq!(
            p.figure_text,
            "bound \u{b1} 0.04 [pH]; normal, covering 0.95"
        );
        assert!(p.verification_meaning.starts_with("secondary"));
        assert_ne!(old.profiles_sha256, new.profiles_sha256);
    }
}
