//! The FHIR door on a real server's main listener: HTTP/1.1 and HTTP/2,
//! the per-call layer (request id echoed), the body size limit, admission
//! (a body that does not arrive in time holds no call slot), and the same
//! answers as the door itself. Every answer is kept for the
//! validators (tests/fhir/run.sh).

use http::Method;
use oxbind_service::Config;
use oxbind_tests::{
    fhir::{self, wire},
    TestServer,
};
use serde_json::Value;

fn address(server: &TestServer) -> std::net::SocketAddr {
    server.uri().trim_start_matches("http://").parse().unwrap()
}

#[tokio::test]
async fn the_operation_answers_over_http1_and_http2() {
    let server = TestServer::start().await;
    let panel = fhir::LARCHMERE_PANEL.as_bytes();
    let one = wire::http1(
        "http1-panel",
        address(&server),
        "POST",
        fhir::OPERATION,
        panel,
    )
    .await;
    assert_eq!(one.status, 200, "{:#}", one.body);
    assert_eq!(one.content_type, "application/fhir+json; charset=utf-8");
    assert_eq!(one.parameters("observation").len(), 23);
    let mut channel = server.channel().await;
    let (two, request_id) = wire::http2(
        "http2-panel",
        &mut channel,
        &server.uri(),
        Method::POST,
        fhir::OPERATION,
        panel,
    )
    .await;
    assert_eq!(two.status, 200, "{:#}", two.body);
    // The per-call layer echoed the caller's request id.
    assert_eq!(request_id.as_deref(), Some("lvi-fhir-test-1"));
    // The same numbers both ways (ids and times differ).
    let values = |a: &fhir::FhirAnswer| -> Vec<(Value, Value)> {
        a.parameters("observation")
            .iter()
            .map(|o| (o["code"].clone(), o["valueQuantity"].clone()))
            .collect()
    };
    assert_eq!(values(&one), values(&two));
    let (metadata, _) = wire::http2(
        "http2-metadata",
        &mut channel,
        &server.uri(),
        Method::GET,
        "/fhir/r4/metadata",
        b"",
    )
    .await;
    assert_eq!(metadata.body["resourceType"], "CapabilityStatement");
    // A refusal keeps its status and OperationOutcome through the layers.
    let refused = wire::http1(
        "http1-refused",
        address(&server),
        "POST",
        fhir::OPERATION,
        br#"{"resourceType": "Parameters", "parameter": [{"name": "observation"}]}"#,
    )
    .await;
    assert_eq!(refused.status, 400);
    assert_eq!(
        refused.issues()[0]["expression"][0],
        "Parameters.parameter[0].resource"
    );
    // gRPC is still served beside it.
    let client = oxbind_client::OxbindClient::from_channel(
        server.channel().await,
        oxbind_client::RetryPolicy::default(),
    );
    assert!(client
        .saturation(
            oxbind_client::v1::Quantity::mm_hg(60.0),
            oxbind_client::v1::BloodConditions::standard()
        )
        .await
        .is_ok());
    server.stop().await;
}

#[tokio::test]
async fn a_body_over_the_message_limit_is_refused_with_413() {
    let config = Config {
        max_decoded_message_bytes: 4096,
        ..Config::default()
    };
    let server = TestServer::start_with(config).await;
    let answer = wire::http1(
        "http1-too-large",
        address(&server),
        "POST",
        fhir::OPERATION,
        fhir::LARCHMERE_PANEL.as_bytes(),
    )
    .await;
    assert_eq!(answer.status, 413, "{:#}", answer.body);
    assert_eq!(answer.issues()[0]["code"], "too-costly");
    server.stop().await;
}

/// The FHIR door is admitted as gRPC is (layers/admission.rs): a caller
/// that declares a body and does not send it holds no call slot, and is
/// answered 408 once the request arrival timeout has passed.
#[tokio::test]
async fn a_body_that_does_not_arrive_in_time_is_refused_and_holds_no_call_slot() {
    let config = Config {
        max_concurrent_calls: 1,
        request_arrival_timeout: std::time::Duration::from_millis(500),
        ..Config::default()
    };
    let server = TestServer::start_with(config).await;
    let at = address(&server);
    let late = tokio::spawn(async move {
        wire::http1_declaring("http1-late-body", at, "POST", fhir::OPERATION, 4096, b"{").await
    });
    // Meanwhile the only call slot is free for others.
    for _ in 0..5 {
        let metadata = wire::http1("http1-metadata", at, "GET", "/fhir/r4/metadata", b"").await;
        assert_eq!(metadata.status, 200, "{:#}", metadata.body);
    }
    let late = tokio::time::timeout(std::time::Duration::from_secs(10), late)
        .await
        .expect("answered within the arrival timeout")
        .unwrap();
    assert_eq!(late.status, 408, "{:#}", late.body);
    assert_eq!(late.body["resourceType"], "OperationOutcome");
    assert_eq!(late.issues()[0]["code"], "timeout");
    server.stop().await;
}
