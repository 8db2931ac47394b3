//! Every status and HTTP refusal the layers make up, as named constructors:
//! load shedding, deadlines, protocol refusals, shutdown, a panic. None
//! echoes anything the caller sent; each names the limit or setting that
//! applied. (The API's refusals of bad input are `api::status`'s.)

use std::time::Duration;

use http::{header, HeaderValue, Response, StatusCode};
use tonic::{body::Body, Code, Status};

/// The server-wide call limit is reached.
pub fn call_limit() -> Status {
    Status::resource_exhausted("the server is at its concurrent call limit; retry with backoff")
}

/// The caller's connection holds its fair share of the call slots.
pub fn connection_share(share: usize) -> Status {
    Status::resource_exhausted(format!(
        "this connection already holds its share of the server's call slots ({share}); \
         retry with backoff, or spread calls over more connections"
    ))
}

/// The work admitted at once is at its limit.
pub fn work_limit() -> Status {
    Status::resource_exhausted(
        "the server is computing as many items as it admits at once; retry with backoff",
    )
}

/// One request is more work than the server ever admits at once.
pub fn work_too_large(items: u64, limit: usize) -> Status {
    Status::resource_exhausted(format!(
        "the request holds {items} items, more than the {limit} the server admits at once; \
         split it"
    ))
}

/// The request bytes held at once are at their limit.
pub fn request_bytes_limit() -> Status {
    Status::resource_exhausted(
        "the server is receiving as many request bytes as it admits at once; retry with backoff",
    )
}

/// A request message is over the message size limit.
pub fn message_too_large(length: usize, limit: usize) -> Status {
    Status::resource_exhausted(format!(
        "the request message is {length} bytes, more than the limit of {limit} bytes"
    ))
}

/// The streaming calls in progress are at their limit.
pub fn streaming_limit(limit: usize) -> Status {
    Status::resource_exhausted(format!(
        "the server serves at most {limit} streaming calls at once; retry with backoff"
    ))
}

/// A unary call's request did not arrive in time.
pub fn request_not_arrived(timeout: Duration) -> Status {
    Status::deadline_exceeded(format!(
        "the request (one message and the end of the stream) did not arrive within {} ms",
        timeout.as_millis()
    ))
}

/// The call's deadline passed.
pub fn deadline_passed() -> Status {
    Status::deadline_exceeded("the call's deadline passed")
}

/// A streaming call passed no message for too long.
pub fn stream_idle(timeout: Duration) -> Status {
    Status::deadline_exceeded(format!(
        "the stream passed no message for {} ms",
        timeout.as_millis()
    ))
}

/// A unary call carried more than one request message (gRPC's own servers
/// answer INTERNAL to this protocol violation as well).
pub fn second_message() -> Status {
    Status::internal("a unary call carries exactly one request message; a second one arrived")
}

/// A compressed request message (the server offers no compression).
pub fn compressed_message() -> Status {
    Status::unimplemented("compressed request messages are not accepted (no grpc-encoding)")
}

/// The client abandoned the call (reset its stream) before its request was
/// in. Nobody reads this answer; it names the call's outcome in the log.
pub fn abandoned() -> Status {
    Status::cancelled("the client abandoned the call")
}

/// The server is shutting down (the end of a streaming call in the drain).
pub fn shutting_down() -> Status {
    Status::unavailable("the server is shutting down; reconnect")
}

/// A handler panicked. The message is fixed: nothing of the panic, the
/// request or its values is echoed.
pub fn panicked() -> Status {
    Status::internal("internal error")
}

/// A gRPC status as trailers, to end a response body that has already
/// started (`grpc-status`, `grpc-message`).
pub fn as_trailers(status: &Status) -> http::HeaderMap {
    let mut trailers = http::HeaderMap::new();
    trailers.insert("grpc-status", HeaderValue::from(status.code() as i32));
    if let Ok(message) = HeaderValue::from_str(&percent_encode(status.message())) {
        trailers.insert("grpc-message", message);
    }
    trailers
}

/// `grpc-message` is percent-encoded (gRPC over HTTP/2 protocol): the
/// messages here are ASCII, so only `%` and controls need it.
fn percent_encode(message: &str) -> String {
    let mut out = String::with_capacity(message.len());
    for byte in message.bytes() {
        if (0x20..0x7f).contains(&byte) && byte != b'%' {
            out.push(byte as char);
        } else {
            out.push_str(&format!("%{byte:02X}"));
        }
    }
    out
}

/// An HTTP refusal of a request that is not acceptable gRPC: the HTTP
/// status the gRPC over HTTP/2 protocol (or grpc-web's CORS rules) give,
/// with a `grpc-status` so that gRPC clients and the access log see a code,
/// and a one-line text body for everyone else.
fn http_refusal(http: StatusCode, code: Code, message: &'static str) -> Response<Body> {
    let body = http_body_util::Full::new(tonic::codegen::Bytes::from_static(message.as_bytes()));
    let mut response = Response::new(Body::new(body));
    *response.status_mut() = http;
    let headers = response.headers_mut();
    headers.insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("text/plain; charset=utf-8"),
    );
    headers.insert("grpc-status", HeaderValue::from(code as i32));
    headers.insert("grpc-message", HeaderValue::from_static(message));
    response
}

/// 415: the content type is not gRPC's (gRPC over HTTP/2 protocol:
/// "gRPC servers SHOULD respond with HTTP status of 415").
pub fn unsupported_media_type() -> Response<Body> {
    http_refusal(
        StatusCode::UNSUPPORTED_MEDIA_TYPE,
        Code::Internal,
        "unsupported content-type: gRPC needs application/grpc or application/grpc+proto",
    )
}

/// 405 with `Allow: POST`: gRPC calls are POSTs.
pub fn method_not_allowed() -> Response<Body> {
    let mut response = http_refusal(
        StatusCode::METHOD_NOT_ALLOWED,
        Code::Internal,
        "method not allowed: gRPC calls are POST",
    );
    response
        .headers_mut()
        .insert(header::ALLOW, HeaderValue::from_static("POST"));
    response
}

/// 505: plain gRPC over HTTP/1.1. The gRPC over HTTP/2 protocol defines
/// gRPC over HTTP/2 only and names no status for another version; HTTP's
/// own for a major version the server refuses to serve a request in is 505
/// HTTP Version Not Supported (RFC 9110 section 15.6.6). The listener
/// speaks HTTP/1.1 for the Connect protocol, the FHIR door and grpc-web.
pub fn http2_required() -> Response<Body> {
    http_refusal(
        StatusCode::HTTP_VERSION_NOT_SUPPORTED,
        Code::Internal,
        "gRPC needs HTTP/2; over HTTP/1.1 use the Connect protocol (application/json or \
         application/proto) or grpc-web",
    )
}

/// 403: a grpc-web call from a browser origin that is not allowed (the
/// gRPC mapping of HTTP 403 is PERMISSION_DENIED).
pub fn origin_not_allowed() -> Response<Body> {
    http_refusal(
        StatusCode::FORBIDDEN,
        Code::PermissionDenied,
        "this origin may not call the service",
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn trailers_carry_the_code_and_an_encoded_message() {
        let trailers = as_trailers(&Status::deadline_exceeded("50% done\n"));
        assert_eq!(trailers["grpc-status"], "4");
        assert_eq!(trailers["grpc-message"], "50%25 done%0A");
    }

    #[test]
    fn http_refusals_carry_their_status_and_a_grpc_code() {
        let response = unsupported_media_type();
        assert_eq!(response.status(), StatusCode::UNSUPPORTED_MEDIA_TYPE);
        assert_eq!(response.headers()["grpc-status"], "13");
        let response = method_not_allowed();
        assert_eq!(response.status(), StatusCode::METHOD_NOT_ALLOWED);
        assert_eq!(response.headers()["allow"], "POST");
        let response = http2_required();
        assert_eq!(response.status(), StatusCode::HTTP_VERSION_NOT_SUPPORTED);
        assert_eq!(response.headers()["grpc-status"], "13");
        let response = origin_not_allowed();
        assert_eq!(response.status(), StatusCode::FORBIDDEN);
        assert_eq!(response.headers()["grpc-status"], "7");
    }

    #[test]
    fn the_panic_answer_is_fixed() {
        let status = panicked();
        assert_eq!(status.code(), Code::Internal);
        assert_eq!(status.message(), "internal error");
    }
}
