//! grpc-web for browsers (the `tonic-web` layer) and the CORS policy in front
//! of it and of the Connect protocol (`tower-http`): only the configured
//! origins may call, only with POST (and GET, Connect's form for calls
//! without side effects), and only the gRPC and Connect headers pass.

use std::time::Duration;

use http::{header::HeaderName, HeaderValue, Method};
use tower_http::cors::{AllowOrigin, CorsLayer};

/// How long a browser may cache a preflight answer.
pub const PREFLIGHT_MAX_AGE: Duration = Duration::from_secs(3600);

/// Request headers a grpc-web or Connect caller may send (Connect's from
/// <https://connectrpc.com/docs/cors>).
const ALLOWED_HEADERS: [&str; 10] = [
    "content-type",
    "x-grpc-web",
    "x-user-agent",
    "grpc-timeout",
    "connect-protocol-version",
    "connect-timeout-ms",
    "x-request-id",
    "traceparent",
    "tracestate",
    "authorization",
];

/// Response headers a browser script may read.
const EXPOSED_HEADERS: [&str; 4] = [
    "grpc-status",
    "grpc-message",
    "grpc-status-details-bin",
    "x-request-id",
];

/// The CORS policy: `origins` (already validated as `scheme://host[:port]`)
/// and nothing else. With no origins, no cross-origin call is allowed.
pub fn cors_layer(origins: &[String]) -> CorsLayer {
    let origins: Vec<HeaderValue> = origins
        .iter()
        .filter_map(|origin| HeaderValue::from_str(origin).ok())
        .collect();
    CorsLayer::new()
        .allow_origin(AllowOrigin::list(origins))
        .allow_methods([Method::POST, Method::GET, Method::OPTIONS])
        .allow_headers(ALLOWED_HEADERS.map(HeaderName::from_static))
        .expose_headers(EXPOSED_HEADERS.map(HeaderName::from_static))
        .max_age(PREFLIGHT_MAX_AGE)
}

/// The grpc-web translation layer.
pub fn grpc_web_layer() -> tonic_web::GrpcWebLayer {
    tonic_web::GrpcWebLayer::new()
}
