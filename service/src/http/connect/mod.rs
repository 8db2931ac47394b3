//! The Connect protocol's unary RPCs (<https://connectrpc.com/docs/protocol>):
//! every v1 RPC as `POST /oxbind.v1.<Service>/<Method>` with an
//! `application/json` (proto3 JSON mapping) or `application/proto` body, and
//! as the GET form `?encoding=json&message=...`, over HTTP/1.1 and HTTP/2,
//! on the main listener with its TLS, limits and per-call layer.
//!
//! - [`ConnectDoor`]: the edge. It hands the per-call layer the caller's
//!   `connect-timeout-ms` (as the `grpc-timeout` that layer reads) and turns
//!   every status the call ends with (the procedures' refusals, and the
//!   layers' own: load shed, deadline passed, a panic) into the Connect
//!   error shape ([`error`], the one place that does).
//! - [`procedures`]: inside the per-call layer and panic catching, the table
//!   of procedures and the service that reads a request ([`request`]) and
//!   admits it as a gRPC call is admitted (call slots, the connection's
//!   fair share, request bytes, items), decodes it ([`Codec`]), calls the
//!   RPC's [`crate::api`] function and encodes the answer, on the compute
//!   pool for a call of many items.
//!
//! A JSON call and a gRPC call with the same input run the same function,
//! so they give the same numbers.

mod codec;
pub mod compression;
pub mod error;
pub mod procedures;
pub mod request;

use std::{
    convert::Infallible,
    future::Future,
    pin::Pin,
    task::{Context, Poll},
};

use http::{header::HeaderName, HeaderValue, Request, Response};
use tonic::{body::Body, Code, Status};
use tower::Service;

use crate::layers::door::{DoorLayers, DoorService};

pub use codec::Codec;
pub use procedures::{Limits, Procedures};
pub use request::get_encoding;

/// The gRPC status header the per-call layer reads.
const GRPC_STATUS: HeaderName = HeaderName::from_static("grpc-status");

/// The gRPC timeout header the per-call layer reads.
const GRPC_TIMEOUT: HeaderName = HeaderName::from_static("grpc-timeout");

/// Largest `grpc-timeout` amount (8 digits; gRPC over HTTP/2 protocol).
const GRPC_TIMEOUT_MAX_AMOUNT: u64 = 99_999_999;

/// The Connect door: the procedures behind the layers' copy of the
/// per-call layer and panic catching ([`DoorLayers::wrap`]), with the same
/// request id, span, deadline, metrics and log line as every gRPC call, and
/// admitted by the same limits ([`Procedures`]).
pub fn door(layers: &DoorLayers, limits: Limits) -> ConnectDoor<DoorService> {
    ConnectDoor {
        inner: layers.wrap(Procedures::new(limits, layers.clone())),
    }
}

/// The edge of the Connect door (see the module documentation).
#[derive(Debug, Clone)]
pub struct ConnectDoor<S> {
    inner: S,
}

impl<S> Service<Request<Body>> for ConnectDoor<S>
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
        // The per-call layer's deadline is the configured call timeout or the
        // caller's shorter one. A malformed `connect-timeout-ms` is refused
        // inside the call (`request::read`), so it is logged as a call.
        request.headers_mut().remove(GRPC_TIMEOUT);
        if let Ok(Some(ms)) = request::timeout_ms(request.headers()) {
            request.headers_mut().insert(GRPC_TIMEOUT, grpc_timeout(ms));
        }
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        Box::pin(async move {
            let response = inner.call(request).await?;
            Ok(in_connect_shape(response))
        })
    }
}

/// `ms` milliseconds as a `grpc-timeout` value (whole seconds when the
/// amount would need more than 8 digits; a timeout that long is clamped by
/// the call timeout anyway).
fn grpc_timeout(ms: u64) -> HeaderValue {
    let text = if ms <= GRPC_TIMEOUT_MAX_AMOUNT {
        format!("{ms}m")
    } else {
        format!("{}S", (ms / 1000).min(GRPC_TIMEOUT_MAX_AMOUNT))
    };
    HeaderValue::from_str(&text).unwrap_or(HeaderValue::from_static("99999999S"))
}

/// The per-call layer's answer in the Connect shape: a success loses its
/// `grpc-status: 0`; a status (the procedures' refusal or the layer's own)
/// becomes the Connect error, keeping the layer's other headers (the
/// request id).
fn in_connect_shape(mut response: Response<Body>) -> Response<Body> {
    match Status::from_header_map(response.headers()) {
        None => response,
        Some(status) if status.code() == Code::Ok => {
            response.headers_mut().remove(GRPC_STATUS);
            response
        }
        Some(status) => {
            let mut error = error::error_response(&status);
            for (name, value) in response.headers() {
                let grpc = name.as_str().starts_with("grpc-");
                if !grpc && name != http::header::CONTENT_TYPE {
                    error.headers_mut().append(name.clone(), value.clone());
                }
            }
            error
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn connect_timeouts_become_grpc_timeouts() {
        assert_eq!(grpc_timeout(2500), "2500m");
        assert_eq!(grpc_timeout(99_999_999), "99999999m");
        assert_eq!(grpc_timeout(9_999_999_999), "9999999S");
    }

    #[test]
    fn a_success_loses_its_grpc_status_and_a_status_becomes_a_connect_error() {
        let mut ok = Response::new(Body::empty());
        ok.headers_mut()
            .insert(GRPC_STATUS, HeaderValue::from_static("0"));
        ok.headers_mut()
            .insert("x-request-id", HeaderValue::from_static("r-1"));
        let ok = in_connect_shape(ok);
        assert_eq!(ok.status(), 200);
        assert!(ok.headers().get(GRPC_STATUS).is_none());

        let mut shed = Status::resource_exhausted("at the limit").into_http::<Body>();
        shed.headers_mut()
            .insert("x-request-id", HeaderValue::from_static("r-2"));
        let shed = in_connect_shape(shed);
        assert_eq!(shed.status(), 429);
        assert_eq!(shed.headers()["content-type"], "application/json");
        assert_eq!(shed.headers()["x-request-id"], "r-2");
        assert!(shed.headers().get(GRPC_STATUS).is_none());
    }
}
