//! The server answers health probes for itself and each v1 service, and lists
//! its services through reflection.

use oxbind_client::health::{
    health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
};
use oxbind_tests::TestServer;
use tokio_stream::StreamExt;
use tonic_reflection::pb::v1::{
    server_reflection_client::ServerReflectionClient, server_reflection_request::MessageRequest,
    server_reflection_response::MessageResponse, ServerReflectionRequest,
};

/// Names health checking must report SERVING once the server is ready
/// (grpc.health.v1 convention: "" is the whole server).
const EXPECTED_SERVING: [&str; 5] = [
    "",
    "oxbind.v1.DissociationService",
    "oxbind.v1.OxygenTransportService",
    "oxbind.v1.ModelCatalogService",
    "oxbind.v1.ConsistencyService",
];

#[tokio::test]
async fn health_reports_serving_for_the_server_and_each_v1_service() {
    let server = TestServer::start().await;
    let mut health = HealthClient::new(server.channel().await);
    for name in EXPECTED_SERVING {
        let response = health
            .check(HealthCheckRequest {
                service: name.to_owned(),
            })
            .await
            .unwrap_or_else(|status| panic!("health check of {name:?} failed: {status}"));
        assert_eq!(
            response.into_inner().status(),
            ServingStatus::Serving,
            "service {name:?}"
        );
    }
    server.stop().await;
}

#[tokio::test]
async fn health_answers_not_found_for_an_unknown_service() {
    let server = TestServer::start().await;
    let mut health = HealthClient::new(server.channel().await);
    let status = health
        .check(HealthCheckRequest {
            service: "oxbind.v1.NoSuchService".to_owned(),
        })
        .await
        .expect_err("an unknown name is not a known service");
    // grpc.health.v1: an unknown service name gets NOT_FOUND.
    assert_eq!(status.code(), tonic::Code::NotFound);
    server.stop().await;
}

#[tokio::test]
async fn reflection_lists_every_service() {
    let server = TestServer::start().await;
    let mut reflection = ServerReflectionClient::new(server.channel().await);
    let request = ServerReflectionRequest {
        host: String::new(),
        message_request: Some(MessageRequest::ListServices(String::new())),
    };
    let mut responses = reflection
        .server_reflection_info(tokio_stream::iter([request]))
        .await
        .expect("reflection answers")
        .into_inner();
    let response = responses
        .next()
        .await
        .expect("one response")
        .expect("not an error");
    let Some(MessageResponse::ListServicesResponse(list)) = response.message_response else {
        panic!(
            "expected a list of services, got {:?}",
            response.message_response
        );
    };
    let mut names: Vec<String> = list.service.into_iter().map(|s| s.name).collect();
    names.sort();
    for expected in [
        "grpc.health.v1.Health",
        "grpc.reflection.v1.ServerReflection",
        "oxbind.v1.ConsistencyService",
        "oxbind.v1.DissociationService",
        "oxbind.v1.ModelCatalogService",
        "oxbind.v1.OxygenTransportService",
    ] {
        assert!(
            names.iter().any(|n| n == expected),
            "{expected} missing from {names:?}"
        );
    }
    server.stop().await;
}

#[tokio::test]
async fn stopping_turns_health_not_serving_before_the_drain() {
    let server = TestServer::start().await;
    let mut health = HealthClient::new(server.channel().await);
    let mut watch = health
        .watch(HealthCheckRequest {
            service: String::new(),
        })
        .await
        .expect("watch starts")
        .into_inner();
    let first = watch.next().await.expect("a first status").expect("ok");
    assert_eq!(first.status(), ServingStatus::Serving);

    let stopping = tokio::spawn(server.stop());
    let next = watch.next().await.expect("a status change").expect("ok");
    assert_eq!(next.status(), ServingStatus::NotServing);
    drop(watch);
    drop(health);
    stopping.await.expect("the server stopped cleanly");
}
