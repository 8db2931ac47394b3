//! The shared test vectors of `tests/vectors/*.json`, checked against a real
//! in-process server. The Python suite in `tests/interop/` reads the same
//! files, so both clients must agree on every request and expected value.
//!
//! Each vector's request is written in the protobuf JSON mapping. It is parsed
//! into a `prost_reflect::DynamicMessage` with the contract's own descriptor
//! set, encoded, decoded into the generated request type and sent through the
//! generated client. The response is re-encoded as a `DynamicMessage` and
//! turned back into JSON, where each expectation's path is looked up. The
//! vector file's `description` explains the schema; every vector names its
//! source beside it.

use std::collections::BTreeSet;

use oxbind_client::v1::{
    consistency_service_client::ConsistencyServiceClient,
    dissociation_service_client::DissociationServiceClient,
    model_catalog_service_client::ModelCatalogServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient,
};
use oxbind_tests::{
    refusal_of,
    vectors::{descriptor_pool, method, vectors},
    TestServer,
};
use prost::Message;
use prost_reflect::{DescriptorPool, DynamicMessage, SerializeOptions};
use serde_json::Value;
use tonic::transport::Channel;

/// Absolute tolerance for numbers inside `equals` and `contains` matchers,
/// which compare values that should be exact (enum names, limits, constants).
const EXACT_NUMBER_TOLERANCE: f64 = 1e-12;

/// The error domain every refusal's `google.rpc.ErrorInfo` carries.
const ERROR_DOMAIN: &str = "oxbind.v1";

/// Decode `body` as the typed request, call `method` on a fresh client of
/// `service`, and give back the encoded response.
macro_rules! unary {
    ($service:ident, $channel:expr, $method:ident, $body:expr) => {{
        let mut client = $service::new($channel);
        let request = Message::decode($body).expect("the typed request decodes");
        client
            .$method(tonic::Request::new(request))
            .await
            .map(|response| response.into_inner().encode_to_vec())
    }};
}

/// Send the encoded request `body` to `rpc` through the generated client.
async fn call(channel: Channel, rpc: &str, body: &[u8]) -> Result<Vec<u8>, tonic::Status> {
    use DissociationServiceClient as Dissociation;
    use ModelCatalogServiceClient as Catalog;
    use OxygenTransportServiceClient as Transport;
    match rpc {
        "oxbind.v1.DissociationService/SaturationFromTension" => {
            unary!(Dissociation, channel, saturation_from_tension, body)
        }
        "oxbind.v1.DissociationService/TensionFromSaturation" => {
            unary!(Dissociation, channel, tension_from_saturation, body)
        }
        "oxbind.v1.DissociationService/SampleCurve" => {
            unary!(Dissociation, channel, sample_curve, body)
        }
        "oxbind.v1.DissociationService/ShiftFactors" => {
            unary!(Dissociation, channel, shift_factors, body)
        }
        "oxbind.v1.DissociationService/EstimateP50" => {
            unary!(Dissociation, channel, estimate_p50, body)
        }
        "oxbind.v1.DissociationService/CorrectForTemperature" => {
            unary!(Dissociation, channel, correct_for_temperature, body)
        }
        "oxbind.v1.DissociationService/BatchSaturationFromTension" => {
            unary!(Dissociation, channel, batch_saturation_from_tension, body)
        }
        "oxbind.v1.DissociationService/BatchTensionFromSaturation" => {
            unary!(Dissociation, channel, batch_tension_from_saturation, body)
        }
        "oxbind.v1.OxygenTransportService/OxygenContent" => {
            unary!(Transport, channel, oxygen_content, body)
        }
        "oxbind.v1.OxygenTransportService/GasExchange" => {
            unary!(Transport, channel, gas_exchange, body)
        }
        "oxbind.v1.ModelCatalogService/ListModels" => {
            unary!(Catalog, channel, list_models, body)
        }
        "oxbind.v1.ModelCatalogService/GetServerSettings" => {
            unary!(Catalog, channel, get_server_settings, body)
        }
        "oxbind.v1.ConsistencyService/CheckBloodGas" => {
            unary!(ConsistencyServiceClient, channel, check_blood_gas, body)
        }
        "oxbind.v1.ConsistencyService/BatchCheckBloodGas" => {
            unary!(
                ConsistencyServiceClient,
                channel,
                batch_check_blood_gas,
                body
            )
        }
        other => panic!("no client call for {other}"),
    }
}

/// The value at a dotted path such as `curves[0].points[3].po2`.
fn lookup<'a>(root: &'a Value, path: &str) -> Option<&'a Value> {
    let mut node = root;
    for segment in path.split('.') {
        let (name, indices) = match segment.find('[') {
            Some(at) => (&segment[..at], &segment[at..]),
            None => (segment, ""),
        };
        node = node.get(name)?;
        for index in indices.split('[').filter(|s| !s.is_empty()) {
            let index: usize = index
                .strip_suffix(']')
                .and_then(|i| i.parse().ok())
                .unwrap_or_else(|| panic!("bad index in path {path:?}"));
            node = node.get(index)?;
        }
    }
    Some(node)
}

/// Whether `actual` has every key of `want` with an equal value (recursively
/// for objects; numbers within [`EXACT_NUMBER_TOLERANCE`]).
fn matches(actual: &Value, want: &Value) -> bool {
    match (actual, want) {
        (Value::Object(a), Value::Object(w)) => w
            .iter()
            .all(|(key, value)| a.get(key).is_some_and(|got| matches(got, value))),
        (Value::Number(a), Value::Number(w)) => {
            let (a, w) = (a.as_f64().unwrap(), w.as_f64().unwrap());
            (a - w).abs() <= EXACT_NUMBER_TOLERANCE
        }
        (a, w) => a == w,
    }
}

/// Check one expectation of vector `name` against the response JSON.
fn check_expectation(name: &str, response: &Value, expectation: &Value) {
    let path = expectation["path"].as_str().expect("expectation path");
    let actual = lookup(response, path)
        .unwrap_or_else(|| panic!("{name}: {path} is absent from the response {response}"));
    if let Some(expected) = expectation.get("value") {
        let expected = expected.as_f64().expect("numeric value");
        let tolerance = expectation["tolerance"]
            .as_f64()
            .unwrap_or_else(|| panic!("{name}: {path} has a value but no tolerance"));
        let actual = actual
            .as_f64()
            .unwrap_or_else(|| panic!("{name}: {path} is not a number: {actual}"));
        assert!(
            (actual - expected).abs() <= tolerance,
            "{name}: {path} = {actual}, expected {expected} +/- {tolerance}"
        );
    } else if let Some(expected) = expectation.get("equals") {
        assert!(
            matches(actual, expected),
            "{name}: {path} = {actual}, expected {expected}"
        );
    } else if let Some(wanted) = expectation.get("contains") {
        let list = actual
            .as_array()
            .unwrap_or_else(|| panic!("{name}: {path} is not a list"));
        assert!(
            list.iter().any(|element| matches(element, wanted)),
            "{name}: no element of {path} matches {wanted}: {actual}"
        );
    } else {
        panic!("{name}: expectation on {path} has no value, equals or contains");
    }
}

/// Check a batch item that must carry its own INVALID_ARGUMENT status.
fn check_item_error(name: &str, response: &Value, wanted: &Value) {
    let index = wanted["index"].as_u64().expect("item index");
    let field = wanted["field"].as_str().expect("item field");
    let reason = wanted["reason"].as_str().expect("item reason");
    let item = lookup(response, &format!("results[{index}]"))
        .unwrap_or_else(|| panic!("{name}: no result {index}"));
    assert!(
        item.get("response").is_none(),
        "{name}: item {index} computed"
    );
    let error = item
        .get("error")
        .unwrap_or_else(|| panic!("{name}: item {index} has no error: {item}"));
    assert_eq!(
        error["code"].as_i64(),
        Some(tonic::Code::InvalidArgument as i64),
        "{name}: item {index}"
    );
    let details = error["details"].as_array().expect("status details");
    let of_type = |suffix: &str| {
        details
            .iter()
            .find(|d| d["@type"].as_str().is_some_and(|t| t.ends_with(suffix)))
            .unwrap_or_else(|| panic!("{name}: item {index} has no {suffix}: {error}"))
    };
    let violations = of_type("google.rpc.BadRequest")["fieldViolations"]
        .as_array()
        .expect("field violations");
    assert!(
        violations
            .iter()
            .any(|v| v["field"] == field && v["reason"] == reason),
        "{name}: item {index}: no violation {field} {reason}: {violations:?}"
    );
    let info = of_type("google.rpc.ErrorInfo");
    assert_eq!(info["reason"], reason, "{name}: item {index} ErrorInfo");
    assert_eq!(info["domain"], ERROR_DOMAIN, "{name}: item {index} domain");
}

/// Send one vector and check everything it expects.
async fn check_vector(pool: &DescriptorPool, server: &TestServer, vector: &Value) {
    let name = vector["name"].as_str().expect("vector name");
    let rpc = vector["rpc"].as_str().expect("vector rpc");
    let source = vector["source"].as_str().unwrap_or_default();
    assert!(!source.trim().is_empty(), "{name}: no source");
    let method = method(pool, rpc);
    let request = DynamicMessage::deserialize(method.input(), vector["request"].clone())
        .unwrap_or_else(|e| panic!("{name}: request does not parse: {e}"));
    let result = call(server.channel().await, rpc, &request.encode_to_vec()).await;

    if let Some(refused) = vector.get("refused") {
        let field = refused["field"].as_str().expect("refused field");
        let reason = refused["reason"].as_str().expect("refused reason");
        let status = result.expect_err(&format!("{name}: expected a refusal, the call computed"));
        let (violations, info) = refusal_of(&status);
        assert!(
            violations
                .iter()
                .any(|v| v.field == field && v.reason == reason),
            "{name}: expected {field} {reason}, got {violations:?}"
        );
        let (info_reason, domain) = info.unwrap_or_else(|| panic!("{name}: no ErrorInfo"));
        assert_eq!(info_reason, reason, "{name}: ErrorInfo reason");
        assert_eq!(domain, ERROR_DOMAIN, "{name}: ErrorInfo domain");
        return;
    }

    let bytes = result.unwrap_or_else(|status| panic!("{name}: call failed: {status:?}"));
    let response = DynamicMessage::decode(method.output(), bytes.as_slice())
        .unwrap_or_else(|e| panic!("{name}: response does not decode: {e}"));
    let response = response
        .serialize_with_options(
            serde_json::value::Serializer,
            &SerializeOptions::new().skip_default_fields(false),
        )
        .unwrap_or_else(|e| panic!("{name}: response does not serialize: {e}"));
    let expectations = vector["expect"]
        .as_array()
        .map(Vec::as_slice)
        .unwrap_or(&[]);
    let item_errors = vector["itemErrors"]
        .as_array()
        .map(Vec::as_slice)
        .unwrap_or(&[]);
    assert!(
        !expectations.is_empty() || !item_errors.is_empty(),
        "{name}: expects nothing"
    );
    for expectation in expectations {
        check_expectation(name, &response, expectation);
    }
    for wanted in item_errors {
        check_item_error(name, &response, wanted);
    }
}

#[tokio::test]
async fn every_shared_vector_holds_against_the_server() {
    let pool = descriptor_pool();
    let server = TestServer::start().await;
    let all = vectors();
    for vector in &all {
        check_vector(&pool, &server, vector).await;
    }
    server.stop().await;
}

#[test]
fn the_vectors_cover_every_rpc_and_have_unique_names() {
    let pool = descriptor_pool();
    let all = vectors();
    let mut names = BTreeSet::new();
    for vector in &all {
        let name = vector["name"].as_str().expect("vector name");
        assert!(names.insert(name.to_owned()), "duplicate vector {name}");
    }
    let covered: BTreeSet<&str> = all.iter().filter_map(|v| v["rpc"].as_str()).collect();
    let refused: BTreeSet<&str> = all
        .iter()
        .filter(|v| v.get("refused").is_some())
        .filter_map(|v| v["rpc"].as_str())
        .collect();
    for service in oxbind_proto::service_names::ALL {
        let service = pool.get_service_by_name(service).expect("v1 service");
        for m in service.methods() {
            let rpc = format!("{}/{}", service.full_name(), m.name());
            assert!(covered.contains(rpc.as_str()), "no vector for {rpc}");
        }
    }
    assert!(refused.len() >= 4, "refusals for too few RPCs: {refused:?}");
}
