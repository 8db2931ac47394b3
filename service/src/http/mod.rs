//! The doors beside gRPC on the main listener, and the dispatch in front of
//! every route.
//!
//! [`DispatchLayer`] sits in front of every door (see `server.rs`), behind
//! the connection loop and CORS, and sends each request to one door, by
//! path, method and content type ([`door_for`]):
//!
//! | request | door |
//! | --- | --- |
//! | a path under `/fhir/r4` | the FHIR R4 door ([`fhir`]), whatever the content type |
//! | a gRPC or grpc-web content type ([`crate::layers::protocol::grpc_content_type`]) | on to the gRPC stack, whose strict layer refuses grpc-web without `--grpc-web` (415), a method other than POST (405), plain gRPC over HTTP/1.1 (505) and grpc-web from a browser origin not allowed (403) |
//! | `POST` with `application/json` or `application/proto` | the Connect protocol ([`connect`]) |
//! | `GET /oxbind.v1.*` (or any `GET` with Connect's `encoding` query) | Connect's GET form |
//! | anything else for a `/oxbind.v1.` path | refused here: 415, or 405 for a method other than GET and POST |
//! | anything else | on to the gRPC stack (whose strict layer refuses it: 415) |
//!
//! Each door has its own copy of the per-call layer, panic catching and
//! admission (the gRPC stack's, or [`crate::layers::door::DoorLayers`] for
//! Connect and FHIR), so that every call gets the same request id,
//! deadline, log line and limits, and answers in its own protocol's shape.
//! Only gRPC and grpc-web requests (and requests for no door at all) reach
//! the gRPC stack, so gRPC's strictness never sees Connect's
//! `application/json`.

pub mod connect;
pub mod fhir;

use std::{
    convert::Infallible,
    future::Future,
    pin::Pin,
    task::{Context, Poll},
};

use http::{header, HeaderMap, HeaderValue, Method, Request, Response, StatusCode, Version};
use tonic::body::Body;
use tower::{Layer, Service, ServiceExt};

use self::connect::Codec;
use crate::layers::protocol::grpc_content_type;

/// Path prefix of every v1 procedure (`/oxbind.v1.<Service>/<Method>`).
pub const V1_PATH_PREFIX: &str = "/oxbind.v1.";

/// The content types the listener serves, as a 415 lists them.
pub const ACCEPTED_CONTENT_TYPES: &str =
    "application/json, application/proto, application/grpc, application/grpc+proto";

/// The methods a v1 path answers, as a 405 lists them.
pub const ALLOWED_METHODS: &str = "GET, POST";

/// Where a request goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Door {
    /// On to the gRPC stack (gRPC, grpc-web, or no door at all).
    Grpc,
    /// The Connect protocol.
    Connect,
    /// The FHIR R4 door.
    Fhir,
    /// Refused here, with this HTTP status.
    Refuse(StatusCode),
}

/// What the dispatch knows of the request: its method, HTTP version, path,
/// query and headers.
#[derive(Debug, Clone, Copy)]
pub struct RequestHead<'a> {
    /// The method.
    pub method: &'a Method,
    /// The HTTP version.
    pub version: Version,
    /// The path.
    pub path: &'a str,
    /// The query, if any.
    pub query: Option<&'a str>,
    /// The headers.
    pub headers: &'a HeaderMap,
}

impl<'a, B> From<&'a Request<B>> for RequestHead<'a> {
    fn from(request: &'a Request<B>) -> Self {
        Self {
            method: request.method(),
            version: request.version(),
            path: request.uri().path(),
            query: request.uri().query(),
            headers: request.headers(),
        }
    }
}

/// The door for a request.
pub fn door_for(head: RequestHead<'_>) -> Door {
    let RequestHead {
        method,
        path,
        query,
        headers,
        ..
    } = head;
    if fhir::door::is_fhir_path(path) {
        return Door::Fhir;
    }
    // gRPC and grpc-web, over any HTTP version: whether they are served is
    // the gRPC stack's strict layer's to say.
    if grpc_content_type(headers).is_some() {
        return Door::Grpc;
    }
    let content_type = headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok());
    let v1 = path.starts_with(V1_PATH_PREFIX);
    if method == Method::POST {
        return match content_type.map(Codec::from_content_type) {
            Some(Some(_)) => Door::Connect,
            _ if v1 => Door::Refuse(StatusCode::UNSUPPORTED_MEDIA_TYPE),
            _ => Door::Grpc,
        };
    }
    if method == Method::GET {
        return match connect::get_encoding(query) {
            // Connect's GET form names its codec; an unknown one is a 415.
            Some(Some(_)) => Door::Connect,
            Some(None) => Door::Refuse(StatusCode::UNSUPPORTED_MEDIA_TYPE),
            // A GET of a v1 path without the query: Connect says what is
            // missing.
            None if v1 => Door::Connect,
            None => Door::Grpc,
        };
    }
    if v1 {
        Door::Refuse(StatusCode::METHOD_NOT_ALLOWED)
    } else {
        Door::Grpc
    }
}

/// The answer to a request refused by the dispatch: the status, the header
/// naming what is accepted (if any), and one plain sentence.
fn refusal(status: StatusCode) -> Response<Body> {
    let (accepted, text) = match status {
        StatusCode::METHOD_NOT_ALLOWED => (
            Some((header::ALLOW, ALLOWED_METHODS)),
            "this path answers GET and POST only\n",
        ),
        _ => (
            Some((
                header::HeaderName::from_static("accept-post"),
                ACCEPTED_CONTENT_TYPES,
            )),
            "content type not served at this path: send application/json or application/proto \
(the Connect protocol; GET with ?encoding=json or proto) or application/grpc\n",
        ),
    };
    let mut response = Response::new(Body::new(http_body_util::Full::new(
        tonic::codegen::Bytes::from_static(text.as_bytes()),
    )));
    *response.status_mut() = status;
    let headers = response.headers_mut();
    if let Some((name, value)) = accepted {
        headers.insert(name, HeaderValue::from_static(value));
    }
    headers.insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("text/plain; charset=utf-8"),
    );
    response
}

/// The layer that puts the dispatch in front of the gRPC stack.
#[derive(Debug, Clone)]
pub struct DispatchLayer<C, F> {
    connect: C,
    fhir: F,
}

impl<C, F> DispatchLayer<C, F> {
    /// Send Connect requests to `connect` and FHIR requests to `fhir` (each
    /// door with its own copy of the per-call layer); gRPC and grpc-web go
    /// to the wrapped service (the gRPC stack).
    pub fn new(connect: C, fhir: F) -> Self {
        Self { connect, fhir }
    }
}

impl<S, C: Clone, F: Clone> Layer<S> for DispatchLayer<C, F> {
    type Service = Dispatch<S, C, F>;

    fn layer(&self, grpc: S) -> Self::Service {
        Dispatch {
            grpc,
            connect: self.connect.clone(),
            fhir: self.fhir.clone(),
        }
    }
}

/// The service [`DispatchLayer`] makes.
#[derive(Debug, Clone)]
pub struct Dispatch<S, C, F> {
    grpc: S,
    connect: C,
    fhir: F,
}

impl<S, C, F> Service<Request<Body>> for Dispatch<S, C, F>
where
    S: Service<Request<Body>, Response = Response<Body>> + Clone + Send + 'static,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
    C: Service<Request<Body>, Response = Response<Body>, Error = Infallible>
        + Clone
        + Send
        + 'static,
    C::Future: Send + 'static,
    F: Service<Request<Body>, Response = Response<Body>, Error = Infallible>
        + Clone
        + Send
        + 'static,
    F::Future: Send + 'static,
{
    type Response = Response<Body>;
    type Error = S::Error;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, S::Error>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.grpc.poll_ready(cx)
    }

    fn call(&mut self, request: Request<Body>) -> Self::Future {
        let door = door_for(RequestHead::from(&request));
        match door {
            Door::Grpc => {
                // Take the service that was driven to readiness; leave a clone.
                let clone = self.grpc.clone();
                let mut grpc = std::mem::replace(&mut self.grpc, clone);
                Box::pin(grpc.call(request))
            }
            Door::Connect => {
                let connect = self.connect.clone();
                Box::pin(async move {
                    match connect.oneshot(request).await {
                        Ok(response) => Ok(response),
                        Err(never) => match never {},
                    }
                })
            }
            Door::Fhir => {
                let fhir = self.fhir.clone();
                Box::pin(async move {
                    match fhir.oneshot(request).await {
                        Ok(response) => Ok(response),
                        Err(never) => match never {},
                    }
                })
            }
            Door::Refuse(status) => {
                tracing::debug!(
                    method = %request.method(),
                    status = status.as_u16(),
                    "request refused by the dispatch"
                );
                Box::pin(std::future::ready(Ok(refusal(status))))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn door(method: Method, target: &str, content_type: Option<&'static str>) -> Door {
        door_over(Version::HTTP_2, method, target, content_type)
    }

    fn door_over(
        version: Version,
        method: Method,
        target: &str,
        content_type: Option<&'static str>,
    ) -> Door {
        let mut request = Request::builder()
            .method(method)
            .uri(target)
            .version(version);
        if let Some(value) = content_type {
            request = request.header(header::CONTENT_TYPE, value);
        }
        let request = request.body(()).unwrap();
        door_for(RequestHead::from(&request))
    }

    const SATURATION: &str = "/oxbind.v1.DissociationService/SaturationFromTension";

    #[test]
    fn grpc_and_grpc_web_go_on_to_the_grpc_stack_whatever_the_path() {
        for content_type in [
            "application/grpc",
            "application/grpc+proto",
            "application/grpc-web",
            "application/grpc-web-text",
        ] {
            assert_eq!(
                door(Method::POST, SATURATION, Some(content_type)),
                Door::Grpc
            );
            assert_eq!(
                door(
                    Method::POST,
                    "/grpc.health.v1.Health/Check",
                    Some(content_type)
                ),
                Door::Grpc
            );
        }
    }

    #[test]
    fn grpc_over_http1_and_grpc_web_go_on_to_the_grpc_stack_whose_strict_layer_decides() {
        // The strict layer (layers/grpc_strict.rs) refuses plain gRPC over
        // HTTP/1.1 with 505 and grpc-web without --grpc-web with 415.
        for content_type in ["application/grpc", "application/grpc-web+proto"] {
            assert_eq!(
                door_over(
                    Version::HTTP_11,
                    Method::POST,
                    SATURATION,
                    Some(content_type)
                ),
                Door::Grpc,
                "{content_type}"
            );
        }
        // A method other than POST is the strict layer's too (405, Allow:
        // POST), even for a v1 path.
        assert_eq!(
            door(Method::PUT, SATURATION, Some("application/grpc")),
            Door::Grpc
        );
        // Connect over HTTP/1.1 is served with or without grpc-web.
        assert_eq!(
            door_over(
                Version::HTTP_11,
                Method::POST,
                SATURATION,
                Some("application/json")
            ),
            Door::Connect
        );
    }

    #[test]
    fn a_content_type_that_is_neither_grpc_nor_connect_is_refused_for_a_v1_path() {
        // Not a gRPC content type this server serves (only the protobuf
        // codec), nor Connect's.
        assert_eq!(
            door(Method::POST, SATURATION, Some("application/grpc+json")),
            Door::Refuse(StatusCode::UNSUPPORTED_MEDIA_TYPE)
        );
        assert_eq!(
            door(
                Method::POST,
                "/grpc.health.v1.Health/Check",
                Some("application/grpc+json")
            ),
            Door::Grpc
        );
    }

    #[test]
    fn connect_content_types_and_get_forms_go_to_connect() {
        for content_type in [
            "application/json",
            "application/json; charset=utf-8",
            "application/proto",
        ] {
            assert_eq!(
                door(Method::POST, SATURATION, Some(content_type)),
                Door::Connect
            );
        }
        let get = format!("{SATURATION}?encoding=json&message=%7B%7D");
        assert_eq!(door(Method::GET, &get, None), Door::Connect);
        // A GET of a v1 path without the query: Connect explains.
        assert_eq!(door(Method::GET, SATURATION, None), Door::Connect);
        // Connect for a path it does not serve answers "unimplemented".
        assert_eq!(
            door(
                Method::POST,
                "/grpc.health.v1.Health/Check",
                Some("application/json")
            ),
            Door::Connect
        );
    }

    #[test]
    fn anything_else_for_a_v1_path_is_refused() {
        for content_type in [
            None,
            Some("text/plain"),
            Some("application/connect+json"),
            Some("application/xml"),
        ] {
            assert_eq!(
                door(Method::POST, SATURATION, content_type),
                Door::Refuse(StatusCode::UNSUPPORTED_MEDIA_TYPE),
                "{content_type:?}"
            );
        }
        let get = format!("{SATURATION}?encoding=xml&message=x");
        assert_eq!(
            door(Method::GET, &get, None),
            Door::Refuse(StatusCode::UNSUPPORTED_MEDIA_TYPE)
        );
        for method in [Method::PUT, Method::DELETE, Method::PATCH, Method::OPTIONS] {
            assert_eq!(
                door(method, SATURATION, Some("application/json")),
                Door::Refuse(StatusCode::METHOD_NOT_ALLOWED)
            );
        }
    }

    #[test]
    fn other_paths_without_a_connect_content_type_go_on_to_the_grpc_stack() {
        assert_eq!(
            door(Method::POST, "/grpc.health.v1.Health/Check", None),
            Door::Grpc
        );
        assert_eq!(door(Method::GET, "/", None), Door::Grpc);
        assert_eq!(
            door(Method::PUT, "/anything", Some("text/plain")),
            Door::Grpc
        );
    }

    #[test]
    fn every_path_under_fhir_r4_goes_to_the_fhir_door_whatever_its_content_type() {
        for (method, target, content_type) in [
            (Method::GET, "/fhir/r4/metadata", None),
            (
                Method::POST,
                "/fhir/r4/$derive-oxygen-values",
                Some("application/fhir+json"),
            ),
            (
                Method::POST,
                "/fhir/r4/$derive-oxygen-values",
                Some("application/json"),
            ),
            (
                Method::POST,
                "/fhir/r4/$derive-oxygen-values",
                Some("application/grpc"),
            ),
            (Method::PUT, "/fhir/r4/Patient/1", Some("text/plain")),
        ] {
            assert_eq!(door(method, target, content_type), Door::Fhir, "{target}");
        }
        assert_eq!(
            door_over(Version::HTTP_11, Method::GET, "/fhir/r4/metadata", None),
            Door::Fhir
        );
        // Only the path prefix itself, not a look-alike.
        assert_ne!(door(Method::GET, "/fhir/r4x/metadata", None), Door::Fhir);
    }
}
