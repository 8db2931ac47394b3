//! The one place that puts a status in the Connect protocol's error shape.
//!
//! Every status a Connect call ends with arrives here as a `tonic::Status`:
//! a refusal from the API (`InvalidRequest::into_status`, with its
//! `google.rpc.BadRequest` and `ErrorInfo`), one made by this door (a body
//! that does not decode, an unknown procedure), or one made by the per-call
//! layer (load shed, deadline passed). The answer is the protocol's: the
//! HTTP status its table gives the code, `content-type: application/json`,
//! and `{"code", "message", "details"}`, each detail with its `type`, its
//! `value` (the binary message, base64 without padding) and its `debug` JSON
//! form, so a curl user reads the field path (Connect protocol reference,
//! "Error Codes" and "Error and EndStreamResponse",
//! <https://connectrpc.com/docs/protocol>).

use base64::Engine as _;
use http::{header, HeaderValue, Response, StatusCode};
use oxbind_proto::google::rpc::Status as RpcStatus;
use prost::Message;
use serde::Serialize;
use serde_json::{json, Map, Value};
use tonic::{body::Body, codegen::Bytes, Code, Status};

/// The Connect code name of a status code.
pub fn code_name(code: Code) -> &'static str {
    match code {
        Code::Ok => "ok",
        Code::Cancelled => "canceled",
        Code::Unknown => "unknown",
        Code::InvalidArgument => "invalid_argument",
        Code::DeadlineExceeded => "deadline_exceeded",
        Code::NotFound => "not_found",
        Code::AlreadyExists => "already_exists",
        Code::PermissionDenied => "permission_denied",
        Code::ResourceExhausted => "resource_exhausted",
        Code::FailedPrecondition => "failed_precondition",
        Code::Aborted => "aborted",
        Code::OutOfRange => "out_of_range",
        Code::Unimplemented => "unimplemented",
        Code::Internal => "internal",
        Code::Unavailable => "unavailable",
        Code::DataLoss => "data_loss",
        Code::Unauthenticated => "unauthenticated",
    }
}

/// The HTTP status the Connect protocol gives a code.
pub fn http_status(code: Code) -> StatusCode {
    match code {
        Code::Ok => StatusCode::OK,
        // 499 Client Closed Request: not in the `http` crate's list.
        Code::Cancelled => StatusCode::from_u16(499).unwrap_or(StatusCode::BAD_REQUEST),
        Code::Unknown | Code::Internal | Code::DataLoss => StatusCode::INTERNAL_SERVER_ERROR,
        Code::InvalidArgument | Code::FailedPrecondition | Code::OutOfRange => {
            StatusCode::BAD_REQUEST
        }
        Code::DeadlineExceeded => StatusCode::GATEWAY_TIMEOUT,
        Code::NotFound => StatusCode::NOT_FOUND,
        Code::AlreadyExists | Code::Aborted => StatusCode::CONFLICT,
        Code::PermissionDenied => StatusCode::FORBIDDEN,
        Code::ResourceExhausted => StatusCode::TOO_MANY_REQUESTS,
        Code::Unimplemented => StatusCode::NOT_IMPLEMENTED,
        Code::Unavailable => StatusCode::SERVICE_UNAVAILABLE,
        Code::Unauthenticated => StatusCode::UNAUTHORIZED,
    }
}

/// The error JSON of a status, in the protocol's order: `code`, then
/// `message` (when not empty), then `details` (when there are any).
#[derive(Debug, Serialize)]
struct ErrorBody<'a> {
    code: &'static str,
    #[serde(skip_serializing_if = "str::is_empty")]
    message: &'a str,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    details: Vec<Detail>,
}

/// One error detail: the packed message's full name, its binary encoding
/// (standard base64 without padding) and its JSON form.
#[derive(Debug, Serialize)]
struct Detail {
    #[serde(rename = "type")]
    type_name: String,
    value: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    debug: Option<Map<String, Value>>,
}

/// The error body of `status`.
fn error_body(status: &Status) -> ErrorBody<'_> {
    ErrorBody {
        code: code_name(status.code()),
        message: status.message(),
        details: details(status.details()),
    }
}

/// The error JSON of `status`.
pub fn error_json(status: &Status) -> Value {
    serde_json::to_value(error_body(status))
        .unwrap_or_else(|_| json!({"code": code_name(status.code())}))
}

/// Each detail of the `google.rpc.Status` encoded in `details` (a status's
/// `grpc-status-details-bin`), as Connect writes it.
fn details(details: &[u8]) -> Vec<Detail> {
    if details.is_empty() {
        return Vec::new();
    }
    let Ok(rpc) = RpcStatus::decode(details) else {
        tracing::error!("a status carried details that do not decode; sent without them");
        return Vec::new();
    };
    rpc.details
        .iter()
        .map(|any| Detail {
            type_name: any.type_name().to_owned(),
            value: base64::engine::general_purpose::STANDARD_NO_PAD.encode(&any.value),
            debug: any.message_json().ok(),
        })
        .collect()
}

/// The Connect error response for `status` (not OK).
pub fn error_response(status: &Status) -> Response<Body> {
    let body = serde_json::to_vec(&error_body(status)).unwrap_or_else(|_| {
        // A JSON value of strings always serialises; keep a valid answer
        // regardless.
        br#"{"code":"internal"}"#.to_vec()
    });
    let mut response = Response::new(Body::new(http_body_util::Full::new(Bytes::from(body))));
    *response.status_mut() = http_status(status.code());
    response.headers_mut().insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("application/json"),
    );
    response
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::api::{
        field_path::FieldPath,
        status::{InvalidRequest, Violation},
    };

    #[test]
    fn every_code_has_the_protocols_http_status() {
        // Connect protocol reference, "Error Codes".
        let table = [
            (Code::Cancelled, 499, "canceled"),
            (Code::Unknown, 500, "unknown"),
            (Code::InvalidArgument, 400, "invalid_argument"),
            (Code::DeadlineExceeded, 504, "deadline_exceeded"),
            (Code::NotFound, 404, "not_found"),
            (Code::AlreadyExists, 409, "already_exists"),
            (Code::PermissionDenied, 403, "permission_denied"),
            (Code::ResourceExhausted, 429, "resource_exhausted"),
            (Code::FailedPrecondition, 400, "failed_precondition"),
            (Code::Aborted, 409, "aborted"),
            (Code::OutOfRange, 400, "out_of_range"),
            (Code::Unimplemented, 501, "unimplemented"),
            (Code::Internal, 500, "internal"),
            (Code::Unavailable, 503, "unavailable"),
            (Code::DataLoss, 500, "data_loss"),
            (Code::Unauthenticated, 401, "unauthenticated"),
        ];
        for (code, http, name) in table {
            assert_eq!(http_status(code).as_u16(), http, "{code:?}");
            assert_eq!(code_name(code), name);
        }
    }

    #[test]
    fn a_refusal_carries_its_details_in_binary_and_debug_form() {
        let status =
            InvalidRequest::one(Violation::required(&FieldPath::ROOT.field("po2"))).into_status();
        let json = error_json(&status);
        assert_eq!(json["code"], "invalid_argument");
        assert_eq!(json["message"], "po2 is required");
        let details = json["details"].as_array().unwrap();
        assert_eq!(details[0]["type"], "google.rpc.BadRequest");
        assert_eq!(details[0]["debug"]["fieldViolations"][0]["field"], "po2");
        assert_eq!(details[1]["type"], "google.rpc.ErrorInfo");
        assert_eq!(details[1]["debug"]["domain"], "oxbind.v1");
        let value = details[0]["value"].as_str().unwrap();
        assert!(!value.ends_with('='), "unpadded: {value}");
        let bytes = base64::engine::general_purpose::STANDARD_NO_PAD
            .decode(value)
            .unwrap();
        let bad = oxbind_proto::google::rpc::BadRequest::decode(bytes.as_slice()).unwrap();
        assert_eq!(bad.field_violations[0].reason, "FIELD_REQUIRED");
    }

    #[test]
    fn a_status_without_details_or_message_is_just_its_code() {
        let json = error_json(&Status::new(Code::Unavailable, ""));
        assert_eq!(json, json!({"code": "unavailable"}));
    }
}
