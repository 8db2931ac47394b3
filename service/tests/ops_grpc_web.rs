//! grpc-web behind `--grpc-web`: a browser-style HTTP/1.1 call is served,
//! CORS admits only the configured origin, and without the flag a grpc-web
//! call is refused as a content type not served (the listener speaks
//! HTTP/1.1 for the Connect protocol either way). Plain HTTP/1.1 written by
//! hand over loopback TCP.

mod ops_support;

use ops_support::Running;
use oxbind_service::Config;
use tokio::io::{AsyncReadExt, AsyncWriteExt};

const DASHBOARD: &str = "https://dashboard.example.org";

/// Send `request` and read the whole response (the request asks the server
/// to close the connection).
async fn exchange(address: std::net::SocketAddr, request: &[u8]) -> String {
    let mut tcp = tokio::net::TcpStream::connect(address)
        .await
        .expect("connect");
    tcp.write_all(request).await.expect("write");
    let mut response = Vec::new();
    let _ = tokio::time::timeout(
        std::time::Duration::from_secs(5),
        tcp.read_to_end(&mut response),
    )
    .await;
    String::from_utf8_lossy(&response).to_lowercase()
}

fn grpc_web_call(origin: &str) -> Vec<u8> {
    let mut request = format!(
        "POST /oxbind.v1.ModelCatalogService/ListModels HTTP/1.1\r\nhost: localhost\r\n\
         content-type: application/grpc-web+proto\r\nx-grpc-web: 1\r\norigin: {origin}\r\n\
         content-length: 5\r\nconnection: close\r\n\r\n"
    )
    .into_bytes();
    // One gRPC frame: uncompressed, zero length (an empty ListModelsRequest).
    request.extend_from_slice(&[0, 0, 0, 0, 0]);
    request
}

fn preflight(origin: &str) -> Vec<u8> {
    format!(
        "OPTIONS /oxbind.v1.ModelCatalogService/ListModels HTTP/1.1\r\nhost: localhost\r\n\
         origin: {origin}\r\naccess-control-request-method: POST\r\n\
         access-control-request-headers: content-type,x-grpc-web\r\nconnection: close\r\n\r\n"
    )
    .into_bytes()
}

#[tokio::test]
async fn a_browser_call_is_served_and_cors_admits_only_the_configured_origin() {
    let server = Running::start(
        Config {
            grpc_web: true,
            cors_allowed_origins: vec![DASHBOARD.to_owned()],
            ..Config::default()
        },
        false,
    )
    .await;

    let response = exchange(server.address, &grpc_web_call(DASHBOARD)).await;
    assert!(response.starts_with("http/1.1 200"), "{response}");
    assert!(
        response.contains("content-type: application/grpc-web"),
        "{response}"
    );
    assert!(
        response.contains(&format!("access-control-allow-origin: {DASHBOARD}")),
        "{response}"
    );
    assert!(
        response.contains("grpc-status:0"),
        "OK in the trailer frame: {response}"
    );
    assert!(response.contains("x-request-id"), "{response}");

    let allowed = exchange(server.address, &preflight(DASHBOARD)).await;
    assert!(allowed.starts_with("http/1.1 200"), "{allowed}");
    assert!(
        allowed.contains(&format!("access-control-allow-origin: {DASHBOARD}")),
        "{allowed}"
    );
    let refused = exchange(server.address, &preflight("https://elsewhere.example.net")).await;
    assert!(
        !refused.contains("access-control-allow-origin"),
        "another origin is not admitted: {refused}"
    );
    server.stop().await;
}

#[tokio::test]
async fn without_the_flag_grpc_web_is_not_served() {
    let server = Running::start(Config::default(), false).await;
    let response = exchange(server.address, &grpc_web_call(DASHBOARD)).await;
    assert!(!response.contains("grpc-status:0"), "{response}");
    assert!(
        response.starts_with("http/1.1 415"),
        "unsupported media type: {response}"
    );
    server.stop().await;
}
