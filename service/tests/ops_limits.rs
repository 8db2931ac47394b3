//! Limits and load shedding against a real in-process server on loopback:
//! a burst past the call limit gets only OK or RESOURCE_EXHAUSTED while health
//! still answers; oversize messages and batches get their codes; a tiny
//! deadline gets DEADLINE_EXCEEDED and the server stays healthy; the request
//! id is echoed back.

mod ops_support;

use std::time::Duration;

use ops_support::{q, saturation_request, Running};
use oxbind_client::{
    health::{
        health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
    },
    v1::{
        dissociation_service_client::DissociationServiceClient, BatchSaturationFromTensionRequest,
        SampleCurveRequest,
    },
};
use oxbind_service::Config;
use tonic::{transport::Channel, Code, Request};

/// Calls in the overload burst.
const BURST_CALLS: usize = 96;
/// Items per call in the burst: enough work that calls overlap.
const BURST_ITEMS: usize = 2_000;
/// Health checks made while the burst runs.
const HEALTH_CHECKS_DURING_BURST: usize = 20;

fn batch(items: usize) -> BatchSaturationFromTensionRequest {
    BatchSaturationFromTensionRequest {
        requests: (0..items)
            .map(|i| saturation_request(20.0 + (i % 80) as f64, 7.40))
            .collect(),
        ..Default::default()
    }
}

async fn channel(uri: String) -> Channel {
    oxbind_client::connect(uri).await.expect("connect")
}

async fn assert_serving(channel: Channel) {
    let status = HealthClient::new(channel)
        .check(HealthCheckRequest::default())
        .await
        .expect("health answers")
        .into_inner()
        .status();
    assert_eq!(status, ServingStatus::Serving);
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_burst_past_the_call_limit_is_shed_and_health_still_answers() {
    let server = Running::start(
        Config {
            max_concurrent_calls: 2,
            ..Config::default()
        },
        false,
    )
    .await;
    // A few connections, many calls in flight on each.
    let mut channels = Vec::new();
    for _ in 0..4 {
        channels.push(channel(server.uri()).await);
    }
    let request = batch(BURST_ITEMS);
    let mut calls = tokio::task::JoinSet::new();
    for i in 0..BURST_CALLS {
        let mut client = DissociationServiceClient::new(channels[i % channels.len()].clone());
        let request = request.clone();
        calls.spawn(async move {
            match client.batch_saturation_from_tension(request).await {
                Ok(response) => {
                    assert_eq!(response.into_inner().results.len(), BURST_ITEMS);
                    Code::Ok
                }
                Err(status) => status.code(),
            }
        });
    }
    // Health, on the same listener, is exempt from the limit.
    let health_channel = channels[0].clone();
    let health = tokio::spawn(async move {
        let mut client = HealthClient::new(health_channel);
        let mut answered = 0;
        for _ in 0..HEALTH_CHECKS_DURING_BURST {
            let status = client
                .check(HealthCheckRequest::default())
                .await
                .expect("health answers during the burst")
                .into_inner()
                .status();
            assert_eq!(status, ServingStatus::Serving);
            answered += 1;
        }
        answered
    });

    let (mut ok, mut shed) = (0, 0);
    while let Some(code) = calls.join_next().await {
        match code.expect("call task") {
            Code::Ok => ok += 1,
            Code::ResourceExhausted => shed += 1,
            other => panic!("a call got {other:?}; only OK or RESOURCE_EXHAUSTED are allowed"),
        }
    }
    assert_eq!(
        health.await.expect("health task"),
        HEALTH_CHECKS_DURING_BURST
    );
    assert_eq!(ok + shed, BURST_CALLS);
    assert!(
        ok >= 1,
        "some calls must get through (ok {ok}, shed {shed})"
    );
    assert!(
        shed >= 1,
        "a burst of {BURST_CALLS} past a limit of 2 must shed some"
    );

    // After the burst every call is served again.
    let mut client = DissociationServiceClient::new(channels[1].clone());
    client
        .saturation_from_tension(saturation_request(60.0, 7.40))
        .await
        .expect("served after the burst");
    server.stop().await;
}

#[tokio::test]
async fn an_oversize_request_message_gets_resource_exhausted() {
    let server = Running::start(
        Config {
            max_decoded_message_bytes: 1024,
            ..Config::default()
        },
        false,
    )
    .await;
    let channel = channel(server.uri()).await;
    let mut client = DissociationServiceClient::new(channel.clone());
    let status = client
        .batch_saturation_from_tension(batch(200))
        .await
        .expect_err("a 200-item batch is far over 1 KiB");
    assert_eq!(status.code(), Code::ResourceExhausted, "{status:?}");
    // A small call still works.
    client
        .batch_saturation_from_tension(batch(2))
        .await
        .expect("a small batch fits");
    assert_serving(channel).await;
    server.stop().await;
}

#[tokio::test]
async fn an_oversize_response_message_gets_resource_exhausted() {
    let server = Running::start(
        Config {
            max_encoded_message_bytes: 512,
            ..Config::default()
        },
        false,
    )
    .await;
    let channel = channel(server.uri()).await;
    let mut client = DissociationServiceClient::new(channel.clone());
    let status = client
        .sample_curve(SampleCurveRequest {
            po2_min: q(1.0, "mm[Hg]"),
            po2_max: q(150.0, "mm[Hg]"),
            point_count: 200,
            ..Default::default()
        })
        .await
        .expect_err("200 curve points do not fit in 512 bytes");
    assert_eq!(status.code(), Code::ResourceExhausted, "{status:?}");
    assert_serving(channel).await;
    server.stop().await;
}

#[tokio::test]
async fn a_batch_past_the_item_limit_is_refused_naming_the_field() {
    let server = Running::start(
        Config {
            max_batch_items: 10,
            ..Config::default()
        },
        false,
    )
    .await;
    let mut client = DissociationServiceClient::new(channel(server.uri()).await);
    let status = client
        .batch_saturation_from_tension(batch(11))
        .await
        .expect_err("11 items past a limit of 10");
    // The API layer refuses an oversize batch as INVALID_ARGUMENT with a
    // BadRequest violation on `requests` (reason BATCH_TOO_LARGE).
    assert_eq!(status.code(), Code::InvalidArgument, "{status:?}");
    assert!(status.message().contains("10"), "{status:?}");
    client
        .batch_saturation_from_tension(batch(10))
        .await
        .expect("10 items are within the limit");
    server.stop().await;
}

/// Send one unary gRPC call by hand over HTTP/2 with the given extra
/// headers, and return its `grpc-status` (from the headers of a trailers-only
/// response, or from the trailers). tonic's own client enforces
/// `grpc-timeout` locally, so it cannot show what the server answers.
async fn raw_unary_status(
    address: std::net::SocketAddr,
    path: &str,
    message: &impl prost::Message,
    headers: &[(&'static str, &'static str)],
) -> i32 {
    let tcp = tokio::net::TcpStream::connect(address)
        .await
        .expect("connect");
    let (mut client, connection) = h2::client::handshake(tcp).await.expect("h2 handshake");
    tokio::spawn(connection);
    let mut builder = http::Request::builder()
        .method("POST")
        .uri(format!("http://{address}{path}"))
        .header("content-type", "application/grpc")
        .header("te", "trailers");
    for (name, value) in headers {
        builder = builder.header(*name, *value);
    }
    let body = message.encode_to_vec();
    let mut frame = Vec::with_capacity(5 + body.len());
    frame.push(0);
    frame.extend_from_slice(&(body.len() as u32).to_be_bytes());
    frame.extend_from_slice(&body);
    let (response, mut send) = client
        .send_request(builder.body(()).unwrap(), false)
        .expect("send headers");
    send.send_data(frame.into(), true).expect("send body");
    let response = response.await.expect("response headers");
    let status_of = |map: &http::HeaderMap| {
        map.get("grpc-status")
            .map(|v| v.to_str().unwrap().parse::<i32>().unwrap())
    };
    if let Some(code) = status_of(response.headers()) {
        return code;
    }
    let mut body = response.into_body();
    while let Some(chunk) = body.data().await {
        let chunk = chunk.expect("body chunk");
        let _ = body.flow_control().release_capacity(chunk.len());
    }
    let trailers = body
        .trailers()
        .await
        .expect("trailers")
        .expect("some trailers");
    status_of(&trailers).expect("grpc-status in the trailers")
}

#[tokio::test]
async fn a_tiny_deadline_gets_deadline_exceeded_and_the_server_stays_healthy() {
    let server = Running::start(Config::default(), false).await;
    let path = "/oxbind.v1.DissociationService/SaturationFromTension";
    let request = saturation_request(60.0, 7.40);
    let code = raw_unary_status(server.address, path, &request, &[("grpc-timeout", "1n")]).await;
    assert_eq!(Code::from_i32(code), Code::DeadlineExceeded);
    // A generous deadline is met.
    let code = raw_unary_status(server.address, path, &request, &[("grpc-timeout", "5S")]).await;
    assert_eq!(Code::from_i32(code), Code::Ok);

    // tonic's client gives up on its own with a tiny deadline, and the
    // server stays healthy.
    let channel = channel(server.uri()).await;
    let mut client = DissociationServiceClient::new(channel.clone());
    let mut tiny = Request::new(request.clone());
    tiny.set_timeout(Duration::from_nanos(1));
    assert!(client.saturation_from_tension(tiny).await.is_err());
    assert_serving(channel.clone()).await;
    client
        .saturation_from_tension(request)
        .await
        .expect("served after the deadline");
    server.stop().await;
}

#[tokio::test]
async fn the_configured_call_timeout_applies_when_the_caller_sets_none() {
    let server = Running::start(
        Config {
            call_timeout: Duration::from_nanos(1),
            ..Config::default()
        },
        false,
    )
    .await;
    let channel = channel(server.uri()).await;
    let mut client = DissociationServiceClient::new(channel.clone());
    let status = client
        .saturation_from_tension(saturation_request(60.0, 7.40))
        .await
        .expect_err("a 1 ns call timeout cannot be met");
    assert_eq!(status.code(), Code::DeadlineExceeded, "{status:?}");
    server.stop().await;
}

#[tokio::test]
async fn the_request_id_is_echoed_or_generated() {
    let server = Running::start(Config::default(), false).await;
    let mut client = DissociationServiceClient::new(channel(server.uri()).await);

    let mut request = Request::new(saturation_request(60.0, 7.40));
    request
        .metadata_mut()
        .insert("x-request-id", "lab-run-0007".parse().unwrap());
    let response = client.saturation_from_tension(request).await.expect("ok");
    assert_eq!(
        response.metadata().get("x-request-id").unwrap(),
        "lab-run-0007"
    );

    let response = client
        .saturation_from_tension(saturation_request(60.0, 7.40))
        .await
        .expect("ok");
    let generated = response
        .metadata()
        .get("x-request-id")
        .expect("a generated id")
        .to_str()
        .unwrap()
        .to_owned();
    assert_eq!(generated.len(), 36, "a UUID: {generated}");

    // Refusals carry it too.
    let mut request = Request::new(saturation_request(60.0, 99.0));
    request
        .metadata_mut()
        .insert("x-request-id", "lab-run-0008".parse().unwrap());
    let status = client.saturation_from_tension(request).await.unwrap_err();
    assert_eq!(status.code(), Code::InvalidArgument);
    assert_eq!(
        status.metadata().get("x-request-id").unwrap(),
        "lab-run-0008"
    );
    server.stop().await;
}
