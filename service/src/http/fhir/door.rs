//! The FHIR door on the main listener: the dispatch
//! ([`crate::http::DispatchLayer`]) sends every request under
//! [`super::BASE_PATH`] to [`FhirDoor`], which runs it through its own copy
//! of the per-call layer (request id, span, deadline, metrics and the
//! call's log line) and panic catching ([`DoorLayers::wrap`]) to
//! [`Endpoint`]: the body is read and the call admitted by the server's
//! admission (call slots, the connection's fair share, request bytes, the
//! arrival timeout; [`DoorLayers`]), then answered by [`super::handle`].
//! TLS, mutual TLS and the connection hygiene are the listener's, so they
//! are the same as for gRPC.
//!
//! Each answer carries its [`CallOutcome`] (the gRPC code for its HTTP
//! status) for the per-call layer; the edge turns the layers' own answers
//! (deadline passed, a panic) into OperationOutcomes. The request body is
//! read up to the server's message size limit.

use std::{
    convert::Infallible,
    future::Future,
    pin::Pin,
    task::{Context, Poll},
};

use http::{header, HeaderName, Request, Response, StatusCode};
use http_body_util::Full;
use tonic::{body::Body, codegen::Bytes, Code, Status};
use tower::Service;

use super::{
    outcome::{error, issue_type, Refusal},
    FhirRequest, FhirResponse, BASE_PATH, RESPONSE_CONTENT_TYPE,
};
use crate::layers::{
    call::CallOutcome,
    door::{DoorLayers, DoorService, NotRead, ReadBody},
};

/// The gRPC timeout header the per-call layer reads.
const GRPC_TIMEOUT: HeaderName = HeaderName::from_static("grpc-timeout");

/// Whether `path` is under [`BASE_PATH`].
pub fn is_fhir_path(path: &str) -> bool {
    path == BASE_PATH
        || path
            .strip_prefix(BASE_PATH)
            .is_some_and(|rest| rest.starts_with('/'))
}

/// The FHIR door behind the layers' copy of the per-call layer and panic
/// catching ([`DoorLayers::wrap`]), reading bodies of at most
/// `max_request_bytes` under the server's admission rules; the dispatch
/// ([`crate::http::DispatchLayer`]) sends it every request under
/// [`BASE_PATH`].
pub fn door(layers: &DoorLayers, max_request_bytes: usize) -> FhirDoor<DoorService> {
    FhirDoor {
        inner: layers.wrap(Endpoint {
            max_request_bytes,
            layers: layers.clone(),
        }),
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

/// Pass the door's own answers on; turn an answer of the per-call layer or
/// of panic catching (a passed deadline, a panic) into an OperationOutcome.
fn at_the_edge(response: Response<Body>) -> Response<Body> {
    let ours = response
        .headers()
        .get(header::CONTENT_TYPE)
        .is_some_and(|v| v == RESPONSE_CONTENT_TYPE);
    if ours {
        return response;
    }
    let code = Status::from_header_map(response.headers()).map_or(Code::Unknown, |s| s.code());
    let (status, kind, text) = match code {
        Code::ResourceExhausted => (
            StatusCode::SERVICE_UNAVAILABLE,
            issue_type::TRANSIENT,
            "the server is at its limits; retry with backoff",
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

/// Inside the per-call layer: read the body and admit the call, as a gRPC
/// call is admitted (one item of work), then answer with [`super::handle`].
#[derive(Debug, Clone)]
pub struct Endpoint {
    max_request_bytes: usize,
    layers: DoorLayers,
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
        let layers = self.layers.clone();
        Box::pin(async move {
            let (parts, body) = request.into_parts();
            let admitted = match layers.read_body(body, limit).await {
                Ok(ReadBody { bytes, reserved }) => layers
                    .admit(&parts.extensions, ITEMS_PER_CALL, reserved)
                    .map(|held| (bytes, held))
                    .map_err(|status| refused_by_the_layers(&status)),
                Err(NotRead::TooLarge) => Err(too_large(limit)),
                Err(NotRead::Refused(status)) => Err(refused_by_the_layers(&status)),
            };
            let (bytes, held) = match admitted {
                Ok(admitted) => admitted,
                Err((answer, code)) => return Ok(answered(answer, code)),
            };
            let answer = super::handle(&FhirRequest {
                method: &parts.method,
                path: parts.uri.path(),
                query: parts.uri.query(),
                headers: &parts.headers,
                body: &bytes,
            });
            let code = code_for(answer.status);
            Ok(DoorLayers::holding(answered(answer, code), held))
        })
    }
}

/// The work of one FHIR call, in items: one panel, or one conformance read.
const ITEMS_PER_CALL: u64 = 1;

/// `answer` as the per-call layer reads it: logged and counted as `code`.
fn answered(answer: FhirResponse, code: Code) -> Response<Body> {
    let mut response = into_http(answer);
    response.extensions_mut().insert(CallOutcome(code));
    response
}

/// A body over the server's message size limit.
fn too_large(limit: usize) -> (FhirResponse, Code) {
    let refusal = Refusal::with(
        StatusCode::PAYLOAD_TOO_LARGE,
        vec![error(
            issue_type::TOO_COSTLY,
            format!("the body is larger than the server's limit of {limit} bytes"),
            "Parameters".to_owned(),
        )],
    );
    (FhirResponse::refused(&refusal), Code::ResourceExhausted)
}

/// A refusal of the layers' admission as an OperationOutcome: the server
/// is full (503, transient: retry with backoff), the body did not arrive in
/// time (408), or the client went away (nobody reads that answer). The
/// message names the limit, never a value.
fn refused_by_the_layers(status: &Status) -> (FhirResponse, Code) {
    let (http, kind) = match status.code() {
        Code::ResourceExhausted => (StatusCode::SERVICE_UNAVAILABLE, issue_type::TRANSIENT),
        Code::DeadlineExceeded => (StatusCode::REQUEST_TIMEOUT, issue_type::TIMEOUT),
        Code::Cancelled => (StatusCode::BAD_REQUEST, issue_type::STRUCTURE),
        _ => (StatusCode::INTERNAL_SERVER_ERROR, issue_type::EXCEPTION),
    };
    let refusal = Refusal::with(
        http,
        vec![error(kind, status.message(), "Parameters".to_owned())],
    );
    (FhirResponse::refused(&refusal), status.code())
}
