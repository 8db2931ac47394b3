//! The Connect protocol on the main listener, spoken with plain HTTP
//! (hyper's client) to a real server on port 0: every shared vector gives
//! the same answer as gRPC in both codecs, over HTTP/1.1 and HTTP/2, by POST
//! and by GET; refusals carry the gRPC status's details in Connect's error
//! shape; deadlines, limits, admission (call slots taken once the request
//! is in, work counted in items), the request id and CORS hold as for gRPC. The protocol's facts are from its reference,
//! https://connectrpc.com/docs/protocol.

use base64::Engine as _;
use http::Method;
use oxbind_service::Config;
use oxbind_tests::{
    grpc_unary_bytes,
    http::{connect_post, percent_encode, request, send, Version, VERSIONS},
    vectors::{descriptor_pool, method, vectors},
    TestServer,
};
use prost::Message;
use prost_reflect::{DescriptorPool, DynamicMessage, MessageDescriptor, SerializeOptions};
use serde_json::{json, Value};
use tonic::codegen::Bytes;

const SATURATION: &str = "/oxbind.v1.DissociationService/SaturationFromTension";
const CURVE: &str = "/oxbind.v1.DissociationService/SampleCurve";
const LIST_MODELS: &str = "/oxbind.v1.ModelCatalogService/ListModels";

/// `value` with every `computeTime` removed (the only field that differs
/// between two computations of the same input).
fn without_compute_time(mut value: Value) -> Value {
    fn strip(value: &mut Value) {
        match value {
            Value::Object(map) => {
                map.remove("computeTime");
                map.values_mut().for_each(strip);
            }
            Value::Array(list) => list.iter_mut().for_each(strip),
            _ => {}
        }
    }
    strip(&mut value);
    value
}

/// A message (encoded) in the JSON mapping, as prost-reflect writes it.
fn reflect_json(descriptor: &MessageDescriptor, bytes: &[u8]) -> Value {
    let message = DynamicMessage::decode(descriptor.clone(), bytes).expect("decodes");
    without_compute_time(
        message
            .serialize_with_options(serde_json::value::Serializer, &SerializeOptions::new())
            .expect("serializes"),
    )
}

/// A JSON body read by prost-reflect (an implementation of the mapping
/// independent of the server's), encoded.
fn reflect_read(descriptor: &MessageDescriptor, json: &[u8]) -> Vec<u8> {
    let mut reader = serde_json::Deserializer::from_slice(json);
    DynamicMessage::deserialize(descriptor.clone(), &mut reader)
        .unwrap_or_else(|e| {
            panic!(
                "not in the JSON mapping ({e}): {}",
                String::from_utf8_lossy(json)
            )
        })
        .encode_to_vec()
}

/// One error detail, decoded (ErrorInfo's metadata is a map, so its
/// encoding's field order may differ from one encoding to the next).
#[derive(Debug, PartialEq)]
enum Detail {
    BadRequest(oxbind_proto::google::rpc::BadRequest),
    ErrorInfo(oxbind_proto::google::rpc::ErrorInfo),
    Other(String),
}

fn detail(type_name: &str, bytes: &[u8]) -> Detail {
    use oxbind_proto::google::rpc::{BadRequest, ErrorInfo};
    match type_name {
        "google.rpc.BadRequest" => Detail::BadRequest(BadRequest::decode(bytes).unwrap()),
        "google.rpc.ErrorInfo" => Detail::ErrorInfo(ErrorInfo::decode(bytes).unwrap()),
        other => Detail::Other(other.to_owned()),
    }
}

/// The `google.rpc.Status` details of a gRPC status.
fn grpc_details(status: &tonic::Status) -> Vec<Detail> {
    oxbind_proto::google::rpc::Status::decode(status.details())
        .expect("details decode")
        .details
        .iter()
        .map(|any| detail(any.type_name(), &any.value))
        .collect()
}

/// The details of a Connect error, from each one's `type` and `value`.
fn connect_details(error: &Value) -> Vec<Detail> {
    error["details"]
        .as_array()
        .expect("details")
        .iter()
        .map(|d| {
            let value = d["value"].as_str().expect("value");
            assert!(!value.ends_with('='), "unpadded base64: {value}");
            let bytes = base64::engine::general_purpose::STANDARD_NO_PAD
                .decode(value)
                .expect("base64");
            detail(d["type"].as_str().expect("type"), &bytes)
        })
        .collect()
}

/// One vector through gRPC and through Connect (JSON over HTTP/1.1, binary
/// over HTTP/2, and the GET form), all compared.
async fn agree(pool: &DescriptorPool, server: &TestServer, vector: &Value) {
    let name = vector["name"].as_str().expect("name");
    let rpc = vector["rpc"].as_str().expect("rpc");
    let path = format!("/{rpc}");
    let method = method(pool, rpc);
    let json_request = serde_json::to_vec(&vector["request"]).unwrap();
    let proto_request = reflect_read(&method.input(), &json_request);

    let grpc = grpc_unary_bytes(server.channel().await, &path, proto_request.clone()).await;
    let by_json = send(
        server.address(),
        Version::Http1,
        connect_post(&path, "application/json", json_request.clone()),
    )
    .await;
    let by_proto = send(
        server.address(),
        Version::Http2,
        connect_post(&path, "application/proto", proto_request.clone()),
    )
    .await;
    let query = format!(
        "{path}?encoding=json&message={}",
        percent_encode(&String::from_utf8(json_request).unwrap())
    );
    let by_get = send(
        server.address(),
        Version::Http1,
        request(Method::GET, &query, &[], Vec::new()),
    )
    .await;

    match grpc {
        Ok(bytes) => {
            let expected = reflect_json(&method.output(), &bytes);
            for (answer, form) in [(&by_json, "JSON POST"), (&by_get, "JSON GET")] {
                assert_eq!(
                    answer.status,
                    200,
                    "{name} {form}: {}",
                    String::from_utf8_lossy(&answer.body)
                );
                assert_eq!(answer.header("content-type"), "application/json");
                // The server's JSON, read by an independent implementation of
                // the mapping, is the same message gRPC answered.
                let read = reflect_read(&method.output(), &answer.body);
                assert_eq!(
                    reflect_json(&method.output(), &read),
                    expected,
                    "{name} {form}"
                );
            }
            assert_eq!(by_proto.status, 200, "{name} proto");
            assert_eq!(by_proto.header("content-type"), "application/proto");
            assert_eq!(
                reflect_json(&method.output(), &by_proto.body),
                expected,
                "{name} proto"
            );
        }
        Err(status) => {
            assert!(
                vector.get("refused").is_some(),
                "{name}: gRPC refused {status:?}"
            );
            for (answer, form) in [(&by_json, "JSON"), (&by_proto, "proto"), (&by_get, "GET")] {
                assert_eq!(answer.status, 400, "{name} {form}");
                assert_eq!(answer.header("content-type"), "application/json");
                let error = answer.json();
                assert_eq!(error["code"], "invalid_argument", "{name} {form}");
                assert_eq!(error["message"], status.message(), "{name} {form}");
                assert_eq!(
                    connect_details(&error),
                    grpc_details(&status),
                    "{name} {form}"
                );
                let field = vector["refused"]["field"].as_str().unwrap();
                assert!(
                    error["details"][0]["debug"]["fieldViolations"]
                        .as_array()
                        .unwrap()
                        .iter()
                        .any(|v| v["field"] == field),
                    "{name} {form}: {error}"
                );
            }
        }
    }
}

#[tokio::test]
async fn every_shared_vector_gives_the_same_answer_over_connect_as_over_grpc() {
    let pool = descriptor_pool();
    let server = TestServer::start().await;
    for vector in vectors() {
        agree(&pool, &server, &vector).await;
    }
    server.stop().await;
}

#[tokio::test]
async fn the_readme_example_answers_with_provenance_over_both_http_versions() {
    let server = TestServer::start().await;
    for version in VERSIONS {
        let answer = send(
            server.address(),
            version,
            // As the README sends it: no Connect-Protocol-Version header.
            request(
                Method::POST,
                SATURATION,
                &[("content-type", "application/json")],
                r#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#,
            ),
        )
        .await;
        assert_eq!(answer.status, 200, "{version:?}");
        let body = answer.json();
        // Severinghaus 1979 Eq. 1 at 60 mm[Hg]: 1 / (23400 / (60^3 + 150 * 60) + 1)
        // = 0.905797 (derived from the equation, methods.md section 1).
        let saturation = body["saturationFraction"].as_f64().unwrap();
        assert!((saturation - 0.905_797).abs() < 1e-6, "{body}");
        assert_eq!(body["provenance"]["modelId"], "severinghaus-1979");
        assert_eq!(
            body["provenance"]["buildCommit"],
            oxbind_service::BUILD_COMMIT
        );
        let time = body["provenance"]["computeTime"].as_str().unwrap();
        assert!(time.ends_with('Z'), "Z-normalized: {time}");
        assert!(!answer.header("x-request-id").is_empty());
    }
    server.stop().await;
}

#[tokio::test]
async fn warnings_and_a_bad_batch_item_come_through_in_json() {
    let server = TestServer::start().await;
    let answer = send(
        server.address(),
        Version::Http1,
        connect_post(
            "/oxbind.v1.DissociationService/BatchSaturationFromTension",
            "application/json",
            json!({"requests": [
                {"po2": {"value": 88, "unit": "mm[Hg]"}},
                {"po2": {"value": -5, "unit": "mm[Hg]"}},
                {"po2": {"value": 60, "unit": "mm[Hg]"}, "model": "MODEL_KELMAN_1966",
                 "conditions": {"dpg": {"value": 6, "unit": "mmol/L"}}}
            ]})
            .to_string(),
        ),
    )
    .await;
    assert_eq!(answer.status, 200);
    let body = answer.json();
    let results = body["results"].as_array().unwrap();
    assert_eq!(results.len(), 3);
    assert!(
        results[0]["response"]["saturationFraction"]
            .as_f64()
            .unwrap()
            > 0.9
    );
    let error = &results[1]["error"];
    assert_eq!(error["code"], 3);
    assert_eq!(
        error["details"][0]["@type"],
        "type.googleapis.com/google.rpc.BadRequest"
    );
    assert_eq!(
        error["details"][0]["fieldViolations"][0]["field"],
        "requests[1].po2.value"
    );
    assert_eq!(
        error["details"][1]["@type"],
        "type.googleapis.com/google.rpc.ErrorInfo"
    );
    // Kelman 1966 does not model 2,3-DPG: the item computes with a warning.
    let warnings = results[2]["response"]["warnings"].as_array().unwrap();
    assert!(
        warnings
            .iter()
            .any(|w| w["code"] == "WARNING_CODE_CONDITION_NOT_MODELLED"),
        "{body}"
    );
    server.stop().await;
}

#[tokio::test]
async fn an_uncertainty_call_answers_in_json_as_over_grpc() {
    let server = TestServer::start().await;
    let pool = descriptor_pool();
    let rpc = "oxbind.v1.OxygenTransportService/GasExchange";
    let path = format!("/{rpc}");
    let method = method(&pool, rpc);
    // PaO2 imputed from SpO2 0.94 with u 3 percentage points, seeded Monte
    // Carlo, and a first-order PaO2/FiO2 beside it.
    let body = json!({
        "fio2": {"value": 30, "unit": "%"},
        "pao2": {"value": 75, "unit": "mm[Hg]"},
        "spo2Fraction": 0.94,
        "uncertainty": {
            "inputs": [
                {"field": "spo2_fraction", "standardUncertainty": {"absolute": {"value": 3, "unit": "%"}}},
                {"field": "pao2", "bound": {"halfWidth": {"absolute": {"value": 15, "unit": "mm[Hg]"},
                    "relative": {"value": 15, "unit": "%"}}, "shape": "BOUND_SHAPE_NORMAL", "coveragePercent": 0}}
            ],
            "method": "UNCERTAINTY_METHOD_MONTE_CARLO",
            "drawCount": 20000,
            "seed": "11",
            "intervalKind": "COVERAGE_INTERVAL_KIND_SHORTEST"
        }
    });
    // An unknown JSON key is refused (the Connect door reads the mapping
    // strictly), so the misspelt key above is caught before anything runs.
    let refused = send(
        server.address(),
        Version::Http1,
        connect_post(&path, "application/json", body.to_string()),
    )
    .await;
    assert_eq!(
        refused.status,
        400,
        "{}",
        String::from_utf8_lossy(&refused.body)
    );
    let mut body = body;
    let bound = &mut body["uncertainty"]["inputs"][1]["bound"];
    bound.as_object_mut().unwrap().remove("coveragePercent");
    bound["coverageProbability"] = json!(0.95);
    let json_request = body.to_string();
    let answer = send(
        server.address(),
        Version::Http1,
        connect_post(&path, "application/json", json_request.clone()),
    )
    .await;
    assert_eq!(
        answer.status,
        200,
        "{}",
        String::from_utf8_lossy(&answer.body)
    );
    let json = answer.json();
    let results = json["uncertainties"].as_array().unwrap();
    let values: Vec<&str> = results
        .iter()
        .map(|r| r["value"].as_str().unwrap())
        .collect();
    assert_eq!(
        values,
        ["pao2_fio2_ratio", "imputed_pao2", "imputed_pao2_fio2_ratio"]
    );
    let imputed = &results[1];
    assert_eq!(imputed["method"], "UNCERTAINTY_METHOD_MONTE_CARLO");
    // 64-bit integers are strings in the JSON mapping.
    assert_eq!(imputed["monteCarlo"]["drawCount"], "20000");
    assert_eq!(imputed["monteCarlo"]["seed"], "11");
    assert_eq!(
        imputed["interval"]["kind"],
        "COVERAGE_INTERVAL_KIND_SHORTEST"
    );
    assert_eq!(imputed["interval"]["low"]["unit"], "mm[Hg]");
    // The CLIA-style bound: a = max(15, 15 % of 75) = 15 mm[Hg] at 95 %.
    let line = &results[0]["budget"][0];
    assert_eq!(line["field"], "pao2");
    assert!((line["divisor"].as_f64().unwrap() - 1.959_964).abs() < 1e-6);
    // The same request over gRPC gives the same message (Monte Carlo
    // included: the seed fixes every draw).
    let proto_request = reflect_read(&method.input(), json_request.as_bytes());
    let grpc = grpc_unary_bytes(server.channel().await, &path, proto_request)
        .await
        .expect("gRPC computes");
    assert_eq!(
        reflect_json(&method.output(), &grpc),
        reflect_json(
            &method.output(),
            &reflect_read(&method.output(), &answer.body)
        )
    );
    server.stop().await;
}

#[tokio::test]
async fn the_get_form_takes_base64_proto_and_says_what_is_missing() {
    let server = TestServer::start().await;
    let proto = oxbind_proto::v1::SaturationFromTensionRequest {
        po2: Some(oxbind_proto::v1::Quantity::mm_hg(60.0)),
        ..Default::default()
    }
    .encode_to_vec();
    let message = base64::engine::general_purpose::URL_SAFE_NO_PAD.encode(&proto);
    let answer = send(
        server.address(),
        Version::Http2,
        request(
            Method::GET,
            &format!("{SATURATION}?connect=v1&encoding=proto&base64=1&message={message}"),
            &[],
            Vec::new(),
        ),
    )
    .await;
    assert_eq!(answer.status, 200);
    assert_eq!(answer.header("content-type"), "application/proto");
    let response =
        oxbind_proto::v1::SaturationFromTensionResponse::decode(answer.body.as_ref()).unwrap();
    assert!((response.saturation_fraction - 0.905_797).abs() < 1e-6);

    let missing = send(
        server.address(),
        Version::Http1,
        request(Method::GET, SATURATION, &[], Vec::new()),
    )
    .await;
    assert_eq!(missing.status, 400);
    let error = missing.json();
    assert_eq!(error["code"], "invalid_argument");
    assert!(
        error["message"].as_str().unwrap().contains("encoding"),
        "{error}"
    );
    server.stop().await;
}

#[tokio::test]
async fn malformed_bodies_are_refused_naming_the_field() {
    let server = TestServer::start().await;
    let cases = [
        (r#"{"po2":{"value":"sixty","unit":"mm[Hg]"}}"#, "po2.value"),
        // An unknown key: the refusal names the message holding it (here
        // the request itself) and, in its text, the key.
        (r#"{"po2":{"value":60,"unit":"mm[Hg]"},"pH":7.4}"#, ""),
        (r#"{"po2":{"value":60,"unit":"mm[Hg]","Unit":"x"}}"#, "po2"),
        (
            r#"{"po2":{"value":60,"unit":"mm[Hg]"},"model":"MODEL_NO_SUCH"}"#,
            "model",
        ),
    ];
    for (body, field) in cases {
        let answer = send(
            server.address(),
            Version::Http1,
            connect_post(SATURATION, "application/json", body),
        )
        .await;
        assert_eq!(answer.status, 400, "{body}");
        let error = answer.json();
        assert_eq!(error["code"], "invalid_argument");
        let violation = &error["details"][0]["debug"]["fieldViolations"][0];
        // An empty field is left out of the JSON form.
        assert_eq!(
            violation["field"].as_str().unwrap_or_default(),
            field,
            "{error}"
        );
        assert_eq!(violation["reason"], "MESSAGE_NOT_DECODABLE");
        assert!(
            !error.to_string().contains("sixty"),
            "no value echoed: {error}"
        );
    }
    let answer = send(
        server.address(),
        Version::Http2,
        connect_post(SATURATION, "application/proto", vec![0xff, 0xff, 0xff]),
    )
    .await;
    assert_eq!(answer.status, 400);
    assert_eq!(answer.json()["code"], "invalid_argument");
    server.stop().await;
}

#[tokio::test]
async fn protocol_errors_have_the_protocols_statuses() {
    let server = TestServer::start().await;
    let address = server.address();
    // An unknown procedure: unimplemented, 501.
    let answer = send(
        address,
        Version::Http1,
        connect_post(
            "/oxbind.v1.DissociationService/NoSuchMethod",
            "application/json",
            "{}",
        ),
    )
    .await;
    assert_eq!(answer.status, 501);
    assert_eq!(answer.json()["code"], "unimplemented");
    // Health is not served over Connect.
    let answer = send(
        address,
        Version::Http1,
        connect_post("/grpc.health.v1.Health/Check", "application/json", "{}"),
    )
    .await;
    assert_eq!(answer.status, 501);
    // A content type of no door: 415 with the accepted types.
    for version in VERSIONS {
        let answer = send(
            address,
            version,
            request(
                Method::POST,
                SATURATION,
                &[("content-type", "text/plain")],
                "{}",
            ),
        )
        .await;
        assert_eq!(answer.status, 415, "{version:?}");
        assert!(answer.header("accept-post").contains("application/json"));
    }
    // gRPC over HTTP/1.1 (the listener speaks it for Connect): 505; and
    // grpc-web, which is off by default: 415.
    let answer = send(
        address,
        Version::Http1,
        request(
            Method::POST,
            SATURATION,
            &[("content-type", "application/grpc")],
            vec![0; 5],
        ),
    )
    .await;
    assert_eq!(answer.status, 505);
    let answer = send(
        address,
        Version::Http1,
        request(
            Method::POST,
            SATURATION,
            &[("content-type", "application/grpc-web")],
            vec![0; 5],
        ),
    )
    .await;
    assert_eq!(answer.status, 415);
    // The streaming content type: these RPCs are unary.
    let answer = send(
        address,
        Version::Http1,
        request(
            Method::POST,
            SATURATION,
            &[("content-type", "application/connect+json")],
            "{}",
        ),
    )
    .await;
    assert_eq!(answer.status, 415);
    // A method other than GET and POST: 405.
    let answer = send(
        address,
        Version::Http1,
        request(
            Method::PUT,
            SATURATION,
            &[("content-type", "application/json")],
            "{}",
        ),
    )
    .await;
    assert_eq!(answer.status, 405);
    assert_eq!(answer.header("allow"), "GET, POST");
    // A protocol version other than 1, an unsupported compression, a body
    // that is not the gzip it claims, a malformed timeout.
    for (header, value, status, code) in [
        ("connect-protocol-version", "2", 400, "invalid_argument"),
        ("content-encoding", "br", 501, "unimplemented"),
        ("content-encoding", "gzip", 400, "invalid_argument"),
        ("connect-timeout-ms", "soon", 400, "invalid_argument"),
    ] {
        let answer = send(
            address,
            Version::Http1,
            request(
                Method::POST,
                SATURATION,
                &[("content-type", "application/json"), (header, value)],
                r#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#,
            ),
        )
        .await;
        assert_eq!(answer.status, status, "{header}");
        assert_eq!(answer.json()["code"], code, "{header}");
    }
    server.stop().await;
}

/// The heaviest curve the limits allow: ten condition sets of 10,000 points.
fn heavy_curve() -> String {
    let sets: Vec<Value> = (0..10)
        .map(|i| json!({"ph": 7.0 + 0.05 * f64::from(i)}))
        .collect();
    json!({"conditionSets": sets, "pointCount": 10000, "model": "MODEL_DASH_2016"}).to_string()
}

#[tokio::test]
async fn a_short_connect_timeout_ends_the_call_with_deadline_exceeded() {
    let server = TestServer::start().await;
    let answer = send(
        server.address(),
        Version::Http1,
        request(
            Method::POST,
            CURVE,
            &[
                ("content-type", "application/json"),
                ("connect-timeout-ms", "1"),
            ],
            heavy_curve(),
        ),
    )
    .await;
    assert_eq!(
        answer.status,
        504,
        "{}",
        String::from_utf8_lossy(&answer.body)
    );
    assert_eq!(answer.json()["code"], "deadline_exceeded");
    // The same call with room computes.
    let answer = send(
        server.address(),
        Version::Http1,
        request(
            Method::POST,
            CURVE,
            &[
                ("content-type", "application/json"),
                ("connect-timeout-ms", "60000"),
            ],
            heavy_curve(),
        ),
    )
    .await;
    assert_eq!(answer.status, 200);
    server.stop().await;
}

#[tokio::test]
async fn size_limits_hold_for_requests_and_responses() {
    let config = Config {
        max_decoded_message_bytes: 64,
        max_encoded_message_bytes: 256,
        ..Config::default()
    };
    let server = TestServer::start_with(config).await;
    let big = json!({"po2": {"value": 60, "unit": "mm[Hg]"}, "conditions": {"ph": 7.4,
        "pco2": {"value": 40, "unit": "mm[Hg]"}, "temperature": {"value": 37, "unit": "Cel"}}})
    .to_string();
    assert!(big.len() > 64);
    let answer = send(
        server.address(),
        Version::Http1,
        connect_post(SATURATION, "application/json", big),
    )
    .await;
    assert_eq!(answer.status, 429);
    assert_eq!(answer.json()["code"], "resource_exhausted");
    // A small request whose answer (with provenance) is over 256 bytes.
    let answer = send(
        server.address(),
        Version::Http1,
        connect_post(
            SATURATION,
            "application/json",
            r#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#,
        ),
    )
    .await;
    assert_eq!(answer.status, 429);
    assert_eq!(answer.json()["code"], "resource_exhausted");
    server.stop().await;
}

/// The Connect door is admitted as gRPC is (layers/admission.rs): a call
/// takes a call slot only once its whole request is in, so a caller that
/// sends its headers and holds its body back holds none.
#[tokio::test]
async fn a_connect_call_whose_body_has_not_arrived_holds_no_call_slot() {
    use http_body_util::{BodyExt, StreamBody};
    use hyper::body::Frame;
    use hyper_util::rt::TokioIo;

    let config = Config {
        max_concurrent_calls: 1,
        ..Config::default()
    };
    let server = TestServer::start_with(config).await;
    // The first call sends its headers and holds its body back.
    let (body_tx, body_rx) = tokio::sync::mpsc::channel::<Result<Frame<Bytes>, std::io::Error>>(1);
    let stream = tokio::net::TcpStream::connect(server.address())
        .await
        .unwrap();
    let (mut sender, connection) = hyper::client::conn::http1::handshake(TokioIo::new(stream))
        .await
        .unwrap();
    tokio::spawn(connection);
    let held = http::Request::builder()
        .method(Method::POST)
        .uri(SATURATION)
        .header("host", server.address().to_string())
        .header("content-type", "application/json")
        .body(StreamBody::new(
            tokio_stream::wrappers::ReceiverStream::new(body_rx),
        ))
        .unwrap();
    let held = tokio::spawn(sender.send_request(held));

    // Whether or not the held call has reached the server, the only call
    // slot is free for others.
    for _ in 0..20 {
        let answer = send(
            server.address(),
            Version::Http1,
            connect_post(LIST_MODELS, "application/json", "{}"),
        )
        .await;
        assert_eq!(
            answer.status,
            200,
            "{}",
            String::from_utf8_lossy(&answer.body)
        );
        tokio::task::yield_now().await;
    }

    // The held call completes once its body arrives.
    let body = r#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#;
    body_tx
        .send(Ok(Frame::data(Bytes::from_static(body.as_bytes()))))
        .await
        .unwrap();
    drop(body_tx);
    let response = held.await.unwrap().unwrap();
    assert_eq!(response.status(), 200);
    let bytes = response.into_body().collect().await.unwrap().to_bytes();
    let json: Value = serde_json::from_slice(&bytes).unwrap();
    assert!(json["saturationFraction"].as_f64().is_some());
    server.stop().await;
}

#[tokio::test]
async fn past_the_call_limit_a_connect_call_is_shed_with_resource_exhausted() {
    use std::sync::{
        atomic::{AtomicBool, Ordering},
        Arc,
    };

    let config = Config {
        max_concurrent_calls: 1,
        ..Config::default()
    };
    let server = TestServer::start_with(config).await;
    let address = server.address();
    // Heavy curves, one after another: each holds the only call slot while
    // the compute pool computes it (about a second in a debug build).
    let stop = Arc::new(AtomicBool::new(false));
    let holder = {
        let stop = stop.clone();
        tokio::spawn(async move {
            let mut statuses = Vec::new();
            while !stop.load(Ordering::Relaxed) {
                let answer = send(
                    address,
                    Version::Http1,
                    connect_post(CURVE, "application/json", heavy_curve()),
                )
                .await;
                statuses.push(answer.status);
            }
            statuses
        })
    };
    // A call that arrives while a curve is computed is shed.
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs(60);
    let mut shed = None;
    while shed.is_none() && std::time::Instant::now() < deadline {
        let answer = send(
            address,
            Version::Http1,
            connect_post(LIST_MODELS, "application/json", "{}"),
        )
        .await;
        match answer.status {
            429 => shed = Some(answer),
            200 => tokio::time::sleep(std::time::Duration::from_millis(5)).await,
            other => panic!("only OK or shed: {other}"),
        }
    }
    stop.store(true, Ordering::Relaxed);
    let shed = shed.expect("a call past the limit is shed");
    assert_eq!(shed.json()["code"], "resource_exhausted");
    assert!(
        shed.json()["message"]
            .as_str()
            .is_some_and(|m| m.contains("concurrent call limit")),
        "{}",
        shed.json()
    );
    assert!(!shed.header("x-request-id").is_empty());
    let statuses = holder.await.unwrap();
    assert!(statuses.contains(&200), "{statuses:?}");
    assert!(
        statuses.iter().all(|s| *s == 200 || *s == 429),
        "{statuses:?}"
    );
    server.stop().await;
}

/// A Connect call's work is counted from its JSON before it is decoded, as
/// a gRPC call's is from its message: a batch of more items than the server
/// admits at once is refused, and one within it is computed.
#[tokio::test]
async fn a_connect_batch_is_admitted_by_its_items() {
    let config = Config {
        max_items_in_flight: 100,
        ..Config::default()
    };
    let server = TestServer::start_with(config).await;
    let batch = |items: usize| {
        let one = json!({"po2": {"value": 60, "unit": "mm[Hg]"}});
        json!({"requests": vec![one; items]}).to_string()
    };
    const BATCH: &str = "/oxbind.v1.DissociationService/BatchSaturationFromTension";
    for version in VERSIONS {
        let answer = send(
            server.address(),
            version,
            connect_post(BATCH, "application/json", batch(101)),
        )
        .await;
        assert_eq!(answer.status, 429, "{version:?}");
        assert_eq!(answer.json()["code"], "resource_exhausted");
        let message = answer.json()["message"]
            .as_str()
            .unwrap_or_default()
            .to_owned();
        assert!(message.contains("101 items"), "{message}");
        let answer = send(
            server.address(),
            version,
            connect_post(BATCH, "application/json", batch(100)),
        )
        .await;
        assert_eq!(answer.status, 200, "{version:?}");
        assert_eq!(answer.json()["results"].as_array().map(Vec::len), Some(100));
    }
    server.stop().await;
}

#[tokio::test]
async fn a_browser_on_an_allowed_origin_may_call_and_others_may_not() {
    const ALLOWED: &str = "https://dashboard.larchmere.example";
    let config = Config {
        cors_allowed_origins: vec![ALLOWED.to_owned()],
        ..Config::default()
    };
    let server = TestServer::start_with(config).await;
    let address = server.address();
    // The preflight a browser sends before a Connect POST.
    let preflight = send(
        address,
        Version::Http1,
        request(
            Method::OPTIONS,
            SATURATION,
            &[
                ("origin", ALLOWED),
                ("access-control-request-method", "POST"),
                (
                    "access-control-request-headers",
                    "content-type,connect-protocol-version,connect-timeout-ms",
                ),
            ],
            Vec::new(),
        ),
    )
    .await;
    assert_eq!(preflight.status, 200);
    assert_eq!(preflight.header("access-control-allow-origin"), ALLOWED);
    let methods = preflight.header("access-control-allow-methods");
    assert!(
        methods.contains("POST") && methods.contains("GET"),
        "{methods}"
    );
    let headers = preflight.header("access-control-allow-headers");
    assert!(
        headers.contains("connect-protocol-version") && headers.contains("connect-timeout-ms"),
        "{headers}"
    );
    // The call itself, by POST and by GET.
    let body = r#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#;
    let post = send(
        address,
        Version::Http1,
        request(
            Method::POST,
            SATURATION,
            &[("origin", ALLOWED), ("content-type", "application/json")],
            body,
        ),
    )
    .await;
    assert_eq!(post.status, 200);
    assert_eq!(post.header("access-control-allow-origin"), ALLOWED);
    assert!(post
        .header("access-control-expose-headers")
        .contains("x-request-id"));
    let get = send(
        address,
        Version::Http2,
        request(
            Method::GET,
            &format!(
                "{SATURATION}?encoding=json&message={}",
                percent_encode(body)
            ),
            &[("origin", ALLOWED)],
            Vec::new(),
        ),
    )
    .await;
    assert_eq!(get.status, 200);
    assert_eq!(get.header("access-control-allow-origin"), ALLOWED);
    // Another origin gets no permission (the browser withholds the answer).
    let other = send(
        address,
        Version::Http1,
        request(
            Method::POST,
            SATURATION,
            &[
                ("origin", "https://elsewhere.example"),
                ("content-type", "application/json"),
            ],
            body,
        ),
    )
    .await;
    assert!(other.headers.get("access-control-allow-origin").is_none());
    server.stop().await;
}

#[tokio::test]
async fn the_request_id_is_echoed_on_success_and_on_refusal() {
    let server = TestServer::start().await;
    for (body, status) in [
        (r#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#, 200),
        (r#"{"po2":{"value":-5,"unit":"mm[Hg]"}}"#, 400),
    ] {
        let answer = send(
            server.address(),
            Version::Http1,
            request(
                Method::POST,
                SATURATION,
                &[
                    ("content-type", "application/json"),
                    ("x-request-id", "lvi-order-4711"),
                ],
                body,
            ),
        )
        .await;
        assert_eq!(answer.status, status);
        assert_eq!(answer.header("x-request-id"), "lvi-order-4711");
    }
    server.stop().await;
}

#[tokio::test]
async fn a_gzip_request_gets_a_gzip_answer() {
    use std::io::{Read, Write};
    let server = TestServer::start().await;
    let mut encoder = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::default());
    encoder
        .write_all(br#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#)
        .unwrap();
    let answer = send(
        server.address(),
        Version::Http2,
        request(
            Method::POST,
            SATURATION,
            &[
                ("content-type", "application/json"),
                ("content-encoding", "gzip"),
            ],
            encoder.finish().unwrap(),
        ),
    )
    .await;
    assert_eq!(answer.status, 200);
    assert_eq!(answer.header("content-encoding"), "gzip");
    let mut text = String::new();
    flate2::read::GzDecoder::new(answer.body.as_ref())
        .read_to_string(&mut text)
        .unwrap();
    let body: Value = serde_json::from_str(&text).unwrap();
    assert!((body["saturationFraction"].as_f64().unwrap() - 0.905_797).abs() < 1e-6);
    server.stop().await;
}
