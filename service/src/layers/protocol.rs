//! The one place that decides, from a request's headers and path, which
//! protocol it speaks and what kind of call it is, and whether a listener
//! speaks HTTP/1.1 at all.
//!
//! - [`MAIN_ACCEPTS_HTTP1`]: the main listener speaks HTTP/1.1 beside
//!   HTTP/2, for the Connect protocol, the FHIR door and grpc-web; the
//!   health listener speaks HTTP/2 only.
//! - [`grpc_content_type`]: whether a content type is gRPC's or grpc-web's.
//!   The dispatch in front of every door (`http::DispatchLayer`) sends
//!   these, and only these (with requests for no door at all), to the
//!   gRPC stack, whose strict layer ([`super::grpc_strict`]) refuses
//!   anything else with HTTP 415. The Connect door's own content types
//!   (`application/json`, `application/proto`) are its codec's
//!   (`http::connect::Codec`); the FHIR door is chosen by path.
//! - [`call_kind`]: health, streaming, unary or unknown, by path; the layers
//!   that count calls and slots treat each kind differently.

use http::{header::CONTENT_TYPE, HeaderMap};

/// Whether the main listener speaks HTTP/1.1 beside HTTP/2 (in the
/// connection loop and in TLS's ALPN offer): always. gRPC itself needs
/// HTTP/2, but the Connect protocol (issue 17), the FHIR door (issue 12)
/// and grpc-web are carried over HTTP/1.1 too, and a plain gRPC request
/// over HTTP/1.1 is refused by the strict layer (HTTP 505).
pub const MAIN_ACCEPTS_HTTP1: bool = true;

/// The gRPC content types a request may carry.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GrpcContentType {
    /// `application/grpc` or `application/grpc+proto`.
    Grpc,
    /// `application/grpc-web`, `application/grpc-web+proto`,
    /// `application/grpc-web-text` or `application/grpc-web-text+proto`.
    GrpcWeb,
}

/// Media types of gRPC (gRPC over HTTP/2 protocol, "Content-Type"): the
/// server has only the protobuf codec, so `+json` and other subtypes are not
/// among them.
const GRPC_MEDIA_TYPES: [&str; 2] = ["application/grpc", "application/grpc+proto"];

/// Media types of grpc-web (gRPC-Web protocol, "Content-Type").
const GRPC_WEB_MEDIA_TYPES: [&str; 4] = [
    "application/grpc-web",
    "application/grpc-web+proto",
    "application/grpc-web-text",
    "application/grpc-web-text+proto",
];

/// The request's gRPC content type, if it has one (the media type before
/// any `;` parameter, compared without regard to case).
pub fn grpc_content_type(headers: &HeaderMap) -> Option<GrpcContentType> {
    let value = headers.get(CONTENT_TYPE)?.to_str().ok()?;
    let media_type = value.split(';').next().unwrap_or("").trim();
    let is = |types: &[&str]| types.iter().any(|t| t.eq_ignore_ascii_case(media_type));
    if is(&GRPC_MEDIA_TYPES) {
        Some(GrpcContentType::Grpc)
    } else if is(&GRPC_WEB_MEDIA_TYPES) {
        Some(GrpcContentType::GrpcWeb)
    } else {
        None
    }
}

/// What kind of call a request path names.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CallKind {
    /// `grpc.health.v1.Health/Check` and `/List`: never refused for load.
    Health,
    /// A streaming RPC (server reflection, health Watch): its own small cap
    /// and idle timeout, never a unary call slot.
    Streaming,
    /// Any other method the server serves: one request message, admitted
    /// by call slots and work.
    Unary,
    /// Not a method the server serves (answered UNIMPLEMENTED at once).
    Unknown,
}

/// Streaming methods, by path.
const STREAMING_PATHS: [&str; 3] = [
    "/grpc.health.v1.Health/Watch",
    "/grpc.reflection.v1.ServerReflection/ServerReflectionInfo",
    "/grpc.reflection.v1alpha.ServerReflection/ServerReflectionInfo",
];

/// Unary health methods, by path.
const HEALTH_PATHS: [&str; 2] = [
    "/grpc.health.v1.Health/Check",
    "/grpc.health.v1.Health/List",
];

/// The kind of call `path` names.
pub fn call_kind(path: &str) -> CallKind {
    if HEALTH_PATHS.contains(&path) {
        CallKind::Health
    } else if STREAMING_PATHS.contains(&path) {
        CallKind::Streaming
    } else if super::call::method_name(path) != super::call::OTHER_METHOD {
        CallKind::Unary
    } else {
        CallKind::Unknown
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use http::HeaderValue;

    fn with_type(value: &'static str) -> HeaderMap {
        let mut headers = HeaderMap::new();
        headers.insert(CONTENT_TYPE, HeaderValue::from_static(value));
        headers
    }

    #[test]
    fn grpc_and_grpc_web_content_types_are_recognised_and_nothing_else() {
        for value in [
            "application/grpc",
            "application/grpc+proto",
            "Application/GRPC",
        ] {
            assert_eq!(
                grpc_content_type(&with_type(value)),
                Some(GrpcContentType::Grpc),
                "{value}"
            );
        }
        for value in [
            "application/grpc-web",
            "application/grpc-web+proto",
            "application/grpc-web-text",
            "application/grpc-web-text+proto; charset=utf-8",
        ] {
            assert_eq!(
                grpc_content_type(&with_type(value)),
                Some(GrpcContentType::GrpcWeb),
                "{value}"
            );
        }
        for value in [
            "text/plain",
            "application/json",
            "application/proto",
            "application/grpc+json",
            "application/grpcx",
            "",
        ] {
            assert_eq!(grpc_content_type(&with_type(value)), None, "{value}");
        }
        assert_eq!(grpc_content_type(&HeaderMap::new()), None);
    }

    #[test]
    fn calls_are_sorted_by_kind() {
        assert_eq!(call_kind("/grpc.health.v1.Health/Check"), CallKind::Health);
        assert_eq!(
            call_kind("/grpc.health.v1.Health/Watch"),
            CallKind::Streaming
        );
        assert_eq!(
            call_kind("/grpc.reflection.v1alpha.ServerReflection/ServerReflectionInfo"),
            CallKind::Streaming
        );
        assert_eq!(
            call_kind("/oxbind.v1.DissociationService/BatchSaturationFromTension"),
            CallKind::Unary
        );
        assert_eq!(call_kind("/acme.Other/Thing"), CallKind::Unknown);
    }
}
