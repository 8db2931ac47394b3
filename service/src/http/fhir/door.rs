//! The FHIR door on the main listener: the dispatch
//! ([`crate::http::DispatchLayer`]) sends every request under
//! [`super::BASE_PATH`] to [`FhirDoor`], which runs it through its own copy
//! of the per-call layer (request id, span, deadline, load shedding, metrics
//! and the call's log line, sharing the server's call limit) to
//! [`super::handle`]. TLS, mutual TLS and the connection limits are the
//! listener's, so they are the same as for gRPC.
//!
//! The per-call layer reads a `grpc-status`: the door sets one from the
//! HTTP status for it and removes it at the edge, and turns the layer's own
//! answers (load shed, deadline passed) into OperationOutcomes. The request
//! body is read up to the server's message size limit.

use std::{
    convert::Infallible,
    future::Future,
    pin::Pin,
    task::{Context, Poll},
};

use http::{header, HeaderName, HeaderValue, Request, Response, StatusCode};
use http_body_util::{BodyExt, Full, Limited};
use tonic::{body::Body, codegen::Bytes, Code, Status};
use tower::{Layer, Service};

use super::{
    outcome::{error, issue_type, Refusal},
    FhirRequest, FhirResponse, BASE_PATH, RESPONSE_CONTENT_TYPE,
};

/// The gRPC status header the per-call layer reads.
const GRPC_STATUS: HeaderName = HeaderName::from_static("grpc-status");

/// The gRPC timeout header the per-call layer reads.
const GRPC_TIMEOUT: HeaderName = HeaderName::from_static("grpc-timeout");

/// Whether `path` is under [`BASE_PATH`].
pub fn is_fhir_path(path: &str) -> bool {
    path == BASE_PATH
        || path
            .strip_prefix(BASE_PATH)
            .is_some_and(|rest| rest.starts_with('/'))
}

/// The FHIR door around `call_layer`'s per-call service, reading bodies of
/// at most `max_request_bytes`; the dispatch ([`crate::http::DispatchLayer`])
/// sends it every request under [`BASE_PATH`].
pub fn door<L>(call_layer: &L, max_request_bytes: usize) -> FhirDoor<L::Service>
where
    L: Layer<Endpoint>,
{
    FhirDoor {
        inner: call_layer.layer(Endpoint { max_request_bytes }),
    }
}

/// The edge of the FHIR door (see the module documentation).
#[derive(Debug, Clone)]
pub struct FhirDoor<S> {
    inner: S,
}

impl<S> Service<Request<Body>> for FhirDoor<S>
where
    S: Service<Request<Body>, Response = Response<Body>, Error = Infallible>
        + Clone
        + Send
        + 'static,
    S::Future: Send + 'static,
{
    type Response = Response<Body>;
    type Error = Infallible;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, Infallible>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Infallible>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, mut request: Request<Body>) -> Self::Future {
        // The deadline is the server's call timeout: FHIR has no timeout
        // header, so a caller's `grpc-timeout` is not honoured here.
        request.headers_mut().remove(GRPC_TIMEOUT);
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        Box::pin(async move {
            let response = inner.call(request).await?;
            Ok(at_the_edge(response))
        })
    }
}

/// Remove the door's `grpc-status`, or turn an answer of the per-call layer
/// (a shed call, a passed deadline) into an OperationOutcome.
fn at_the_edge(mut response: Response<Body>) -> Response<Body> {
    let ours = response
        .headers()
        .get(header::CONTENT_TYPE)
        .is_some_and(|v| v == RESPONSE_CONTENT_TYPE);
    if ours {
        response.headers_mut().remove(GRPC_STATUS);
        return response;
    }
    let code = Status::from_header_map(response.headers()).map_or(Code::Unknown, |s| s.code());
    let (status, kind, text) = match code {
        Code::ResourceExhausted => (
            StatusCode::SERVICE_UNAVAILABLE,
            issue_type::TRANSIENT,
            "the server is at its concurrent call limit; retry with backoff",
        ),
        Code::DeadlineExceeded => (
            StatusCode::GATEWAY_TIMEOUT,
            issue_type::TIMEOUT,
            "the call's deadline passed",
        ),
        _ => (
            StatusCode::INTERNAL_SERVER_ERROR,
            issue_type::EXCEPTION,
            "the server failed to answer; this is a fault of the server",
        ),
    };
    let refusal = Refusal::with(status, vec![error(kind, text, "Parameters".to_owned())]);
    let mut edge = into_http(FhirResponse::refused(&refusal));
    for name in ["x-request-id"] {
        if let Some(value) = response.headers().get(name) {
            edge.headers_mut().insert(name, value.clone());
        }
    }
    edge
}

fn into_http(answer: FhirResponse) -> Response<Body> {
    let mut response = Response::new(Body::new(Full::new(Bytes::from(answer.body))));
    *response.status_mut() = answer.status;
    *response.headers_mut() = answer.headers;
    response
}

/// The gRPC code the per-call layer records for an HTTP status of the door.
fn code_for(status: StatusCode) -> Code {
    match status.as_u16() {
        200..=299 => Code::Ok,
        400 | 422 => Code::InvalidArgument,
        404 => Code::NotFound,
        405 | 406 | 415 => Code::Unimplemented,
        413 => Code::ResourceExhausted,
        _ => Code::Internal,
    }
}

/// Inside the per-call layer: read the body, answer with [`super::handle`].
#[derive(Debug, Clone)]
pub struct Endpoint {
    max_request_bytes: usize,
}

impl Service<Request<Body>> for Endpoint {
    type Response = Response<Body>;
    type Error = Infallible;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, Infallible>> + Send>>;

    fn poll_ready(&mut self, _cx: &mut Context<'_>) -> Poll<Result<(), Infallible>> {
        Poll::Ready(Ok(()))
    }

    fn call(&mut self, request: Request<Body>) -> Self::Future {
        let limit = self.max_request_bytes;
        Box::pin(async move {
            let (parts, body) = request.into_parts();
            let answer = match Limited::new(body, limit).collect().await {
                Ok(collected) => {
                    let body = collected.to_bytes();
                    super::handle(&FhirRequest {
                        method: &parts.method,
                        path: parts.uri.path(),
                        query: parts.uri.query(),
                        headers: &parts.headers,
                        body: &body,
                    })
                }
                Err(_) => FhirResponse::refused(&Refusal::with(
                    StatusCode::PAYLOAD_TOO_LARGE,
                    vec![error(
                        issue_type::TOO_COSTLY,
                        format!(
                            "the body is larger than the server's limit of {limit} bytes (or \
could not be read)"
                        ),
                        "Parameters".to_owned(),
                    )],
                )),
            };
            let code = code_for(answer.status);
            let mut response = into_http(answer);
            response
                .headers_mut()
                .insert(GRPC_STATUS, HeaderValue::from(code as i32));
            Ok(response)
        })
    }
}
