//! The Connect protocol's side of `oxbind-load`: unary calls as
//! `POST /oxbind.v1.<Service>/<Method>` with a bare `application/json` or
//! `application/proto` body and `connect-protocol-version: 1`, as API.md
//! section 8 and the Connect protocol reference
//! (<https://connectrpc.com/docs/protocol>, "Unary-Request") describe them.
//!
//! Each connection is one `reqwest` client that speaks HTTP/2 with prior
//! knowledge (h2c, plaintext), so `--connections N` means N HTTP/2
//! connections, as it does for gRPC. A non-200 answer is an error counted
//! under the gRPC name of its Connect `code` (`invalid_argument` is counted
//! as `INVALID_ARGUMENT`, as a gRPC caller would count it); an error answer
//! without a Connect error body is counted under the code its HTTP status
//! stands for.

use std::time::Duration;

use oxbind_client::{code_name, Code};
use prost::bytes::Bytes;
use reqwest::{
    header::{HeaderValue, CONTENT_TYPE},
    StatusCode,
};
use serde::Deserialize;

use crate::{load::Encoding, load_wire::BadAnswer, Failure};

/// The Connect protocol version header and its one value.
const PROTOCOL_VERSION: (&str, &str) = ("connect-protocol-version", "1");

/// The header that carries the call's deadline in milliseconds.
const TIMEOUT_HEADER: &str = "connect-timeout-ms";

/// Largest `connect-timeout-ms` the protocol allows (at most 10 digits).
const MAX_TIMEOUT_MS: u128 = 9_999_999_999;

/// The call each connection makes once before the first measured call, to
/// open it and to learn that the server speaks Connect: a v1 RPC every
/// server serves, whose request is empty.
const OPENING_PATH: &str = "/oxbind.v1.ModelCatalogService/ListModels";

/// How long opening a connection may take.
const CONNECT_TIMEOUT: Duration = Duration::from_secs(5);

/// Open `count` HTTP/2 connections to `server` (one client each), each
/// checked with one Connect call in `encoding`.
pub(crate) async fn open_clients(
    server: &str,
    count: u32,
    encoding: Encoding,
    opening_body: Bytes,
) -> Result<Vec<reqwest::Client>, Failure> {
    let url = format!("{}{OPENING_PATH}", server.trim_end_matches('/'));
    let mut clients = Vec::with_capacity(count as usize);
    for _ in 0..count {
        let client = reqwest::Client::builder()
            .http2_prior_knowledge()
            .tcp_nodelay(true)
            .connect_timeout(CONNECT_TIMEOUT)
            .user_agent(concat!("oxbind-load/", env!("CARGO_PKG_VERSION")))
            .build()
            .map_err(|e| Failure::Other(format!("HTTP client: {e}")))?;
        let response = client
            .post(&url)
            .header(CONTENT_TYPE, encoding.content_type())
            .header(PROTOCOL_VERSION.0, PROTOCOL_VERSION.1)
            .timeout(CONNECT_TIMEOUT)
            .body(opening_body.clone())
            .send()
            .await
            .map_err(|e| Failure::Other(format!("cannot connect to {server}: {e}")))?;
        let status = response.status();
        // The answer is read whole, so that the connection is free again.
        let _ = response.bytes().await;
        if status != StatusCode::OK {
            return Err(Failure::Other(format!(
                "{server} did not answer a Connect call (POST {OPENING_PATH}, {}): HTTP {status}",
                encoding.content_type()
            )));
        }
        clients.push(client);
    }
    Ok(clients)
}

/// One task's caller of one RPC over one connection.
#[derive(Debug, Clone)]
pub(crate) struct Caller {
    client: reqwest::Client,
    url: String,
    encoding: Encoding,
    timeout: Duration,
    timeout_ms: HeaderValue,
}

impl Caller {
    /// A caller of the RPC at `path` on `server`, through `client`.
    pub(crate) fn new(
        client: reqwest::Client,
        server: &str,
        path: &str,
        encoding: Encoding,
        timeout: Duration,
    ) -> Self {
        let millis = timeout.as_millis().clamp(1, MAX_TIMEOUT_MS);
        Self {
            client,
            url: format!("{}{path}", server.trim_end_matches('/')),
            encoding,
            timeout,
            timeout_ms: HeaderValue::from(millis as u64),
        }
    }

    /// Send one request body; the answer's body, or the label of the error
    /// it is counted under. The whole call, answer read included, is bounded
    /// by the timeout: past it, the call is DEADLINE_EXCEEDED.
    pub(crate) async fn call(&self, body: Bytes) -> Result<Bytes, &'static str> {
        tokio::time::timeout(self.timeout, self.exchange(body))
            .await
            .unwrap_or(Err(code_name(Code::DeadlineExceeded)))
    }

    async fn exchange(&self, body: Bytes) -> Result<Bytes, &'static str> {
        let response = self
            .client
            .post(&self.url)
            .header(CONTENT_TYPE, self.encoding.content_type())
            .header(PROTOCOL_VERSION.0, PROTOCOL_VERSION.1)
            .header(TIMEOUT_HEADER, self.timeout_ms.clone())
            .body(body)
            .send()
            .await
            .map_err(transport_error)?;
        let status = response.status();
        let content_type_ok = response
            .headers()
            .get(CONTENT_TYPE)
            .and_then(|v| v.to_str().ok())
            .and_then(|v| v.split(';').next())
            .is_some_and(|media_type| {
                media_type
                    .trim()
                    .eq_ignore_ascii_case(self.encoding.content_type())
            });
        let bytes = response.bytes().await.map_err(transport_error)?;
        if status != StatusCode::OK {
            return Err(error_label(status, &bytes));
        }
        if !content_type_ok {
            return Err(BadAnswer::Malformed.label());
        }
        Ok(bytes)
    }
}

/// A call that got no answer before its deadline: the connection failed.
fn transport_error(_: reqwest::Error) -> &'static str {
    code_name(Code::Unavailable)
}

/// The body of a Connect error answer, as far as it is counted.
#[derive(Deserialize)]
struct ErrorBody {
    code: String,
}

/// The label of a non-200 answer: the gRPC name of its Connect `code`, or,
/// without a Connect error body, of the code its HTTP status stands for.
fn error_label(status: StatusCode, body: &[u8]) -> &'static str {
    let code = serde_json::from_slice::<ErrorBody>(body)
        .ok()
        .and_then(|error| code_from_connect_name(&error.code))
        .unwrap_or_else(|| code_from_http_status(status));
    code_name(code)
}

/// The status code a Connect error `code` names: the gRPC name in lower
/// case, but for `canceled` (Connect protocol reference, "Error Codes").
fn code_from_connect_name(name: &str) -> Option<Code> {
    if name == "canceled" {
        return Some(Code::Cancelled);
    }
    (1..=16)
        .map(Code::from)
        .filter(|code| *code != Code::Cancelled)
        .find(|code| code_name(*code).to_ascii_lowercase() == name)
}

/// The code an HTTP error status stands for when the answer has no Connect
/// error body: the gRPC project's table (grpc/grpc, doc/http-grpc-status-
/// mapping.md), which the Connect protocol adopted for this case (Connect
/// RFC 003, "Amend Connect HTTP codes", 2024).
fn code_from_http_status(status: StatusCode) -> Code {
    match status.as_u16() {
        400 => Code::Internal,
        401 => Code::Unauthenticated,
        403 => Code::PermissionDenied,
        404 => Code::Unimplemented,
        429 | 502 | 503 | 504 => Code::Unavailable,
        _ => Code::Unknown,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_connect_error_is_counted_under_its_grpc_name() {
        let body =
            br#"{"code":"invalid_argument","message":"po2.value must lie in ...","details":[]}"#;
        assert_eq!(
            error_label(StatusCode::BAD_REQUEST, body),
            "INVALID_ARGUMENT"
        );
        assert_eq!(
            error_label(
                StatusCode::TOO_MANY_REQUESTS,
                br#"{"code":"resource_exhausted"}"#
            ),
            "RESOURCE_EXHAUSTED"
        );
        assert_eq!(
            error_label(
                StatusCode::from_u16(499).unwrap(),
                br#"{"code":"canceled"}"#
            ),
            "CANCELLED"
        );
        // Every code's Connect name is read back as that code.
        for number in 1..=16 {
            let code = Code::from(number);
            let name = match code {
                Code::Cancelled => "canceled".to_owned(),
                other => code_name(other).to_ascii_lowercase(),
            };
            assert_eq!(code_from_connect_name(&name), Some(code), "{name}");
        }
    }

    #[test]
    fn an_error_without_a_connect_body_is_counted_by_its_http_status() {
        assert_eq!(
            error_label(StatusCode::BAD_GATEWAY, b"<html>"),
            "UNAVAILABLE"
        );
        assert_eq!(error_label(StatusCode::NOT_FOUND, b""), "UNIMPLEMENTED");
        assert_eq!(
            error_label(StatusCode::BAD_REQUEST, br#"{"code":"no_such_code"}"#),
            "INTERNAL"
        );
        assert_eq!(
            error_label(StatusCode::UNSUPPORTED_MEDIA_TYPE, b""),
            "UNKNOWN"
        );
        // The gRPC spelling is not the Connect name.
        assert_eq!(code_from_connect_name("cancelled"), None);
        assert_eq!(code_from_connect_name("INVALID_ARGUMENT"), None);
    }
}
