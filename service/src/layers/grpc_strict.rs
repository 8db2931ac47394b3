//! Strict gRPC: a request bound for the gRPC routes must be a gRPC (or, with
//! `--grpc-web`, a grpc-web) call, or it is refused before anything reads it:
//!
//! - a content type that is not gRPC's: HTTP 415 (gRPC over HTTP/2
//!   protocol, "Content-Type"), with grpc-web's types only when grpc-web is
//!   on;
//! - a method other than POST: HTTP 405 with `Allow: POST`;
//! - plain gRPC over HTTP/1.1: HTTP 505 (gRPC is defined over HTTP/2
//!   only; the listener speaks HTTP/1.1 for Connect, FHIR and grpc-web);
//! - a grpc-web call from a browser `Origin` that is not allowed: HTTP 403,
//!   instead of computing it and leaving out only the CORS header. A call
//!   with no `Origin` (not from a browser) is not affected.
//!
//! This layer sees only the requests that reach the gRPC stack: the
//! dispatch in front of it (`http::DispatchLayer`) sends Connect's and
//! FHIR's requests to their own doors first, so Connect's
//! `application/json` is never refused here. The content type tests are
//! [`super::protocol`]'s. A second message on a unary call is
//! refused by the request gate, which reads the messages.

use std::{
    future::Future,
    pin::Pin,
    sync::Arc,
    task::{Context, Poll},
};

use http::{header::ORIGIN, HeaderValue, Method, Request, Response, Version};
use tonic::body::Body;
use tower::{Layer, Service};

use super::{
    protocol::{grpc_content_type, GrpcContentType},
    statuses,
};

/// The strictness settings.
#[derive(Debug, Clone)]
pub struct GrpcStrictLayer {
    grpc_web: bool,
    allowed_origins: Arc<[HeaderValue]>,
}

impl GrpcStrictLayer {
    /// Accept grpc-web when `grpc_web`, from any of `allowed_origins` (the
    /// CORS setting's origins) or from no browser at all.
    pub fn new(grpc_web: bool, allowed_origins: &[String]) -> Self {
        Self {
            grpc_web,
            allowed_origins: allowed_origins
                .iter()
                .filter_map(|o| HeaderValue::from_str(o).ok())
                .collect(),
        }
    }

    /// What to refuse `request` with, if anything.
    fn refusal<B>(&self, request: &Request<B>) -> Option<Response<Body>> {
        let content_type = grpc_content_type(request.headers());
        let content_type = match content_type {
            Some(GrpcContentType::GrpcWeb) if !self.grpc_web => None,
            other => other,
        };
        let Some(content_type) = content_type else {
            return Some(statuses::unsupported_media_type());
        };
        if request.method() != Method::POST {
            return Some(statuses::method_not_allowed());
        }
        match content_type {
            GrpcContentType::Grpc if request.version() < Version::HTTP_2 => {
                Some(statuses::http2_required())
            }
            GrpcContentType::GrpcWeb => match request.headers().get(ORIGIN) {
                Some(origin) if !self.allowed_origins.contains(origin) => {
                    Some(statuses::origin_not_allowed())
                }
                _ => None,
            },
            GrpcContentType::Grpc => None,
        }
    }
}

impl<S> Layer<S> for GrpcStrictLayer {
    type Service = GrpcStrict<S>;

    fn layer(&self, inner: S) -> Self::Service {
        GrpcStrict {
            inner,
            settings: self.clone(),
        }
    }
}

/// The service [`GrpcStrictLayer`] makes.
#[derive(Debug, Clone)]
pub struct GrpcStrict<S> {
    inner: S,
    settings: GrpcStrictLayer,
}

impl<S, B> Service<Request<B>> for GrpcStrict<S>
where
    S: Service<Request<B>, Response = Response<Body>>,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
{
    type Response = Response<Body>;
    type Error = S::Error;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, S::Error>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: Request<B>) -> Self::Future {
        match self.settings.refusal(&request) {
            Some(refusal) => Box::pin(std::future::ready(Ok(refusal))),
            None => Box::pin(self.inner.call(request)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use http::StatusCode;

    const DASHBOARD: &str = "https://dashboard.example.org";

    fn request(method: Method, content_type: Option<&'static str>) -> Request<()> {
        let mut builder = Request::builder()
            .method(method)
            .version(Version::HTTP_2)
            .uri("/oxbind.v1.ModelCatalogService/ListModels");
        if let Some(value) = content_type {
            builder = builder.header("content-type", value);
        }
        builder.body(()).unwrap()
    }

    fn refused(layer: &GrpcStrictLayer, request: &Request<()>) -> Option<StatusCode> {
        layer.refusal(request).map(|r| r.status())
    }

    #[test]
    fn only_grpc_content_types_pass() {
        let layer = GrpcStrictLayer::new(false, &[]);
        assert_eq!(
            refused(&layer, &request(Method::POST, Some("application/grpc"))),
            None
        );
        for wrong in [Some("text/plain"), Some("application/json"), None] {
            assert_eq!(
                refused(&layer, &request(Method::POST, wrong)),
                Some(StatusCode::UNSUPPORTED_MEDIA_TYPE),
                "{wrong:?}"
            );
        }
        assert_eq!(
            refused(&layer, &request(Method::POST, Some("application/grpc-web"))),
            Some(StatusCode::UNSUPPORTED_MEDIA_TYPE),
            "grpc-web only with the flag"
        );
    }

    #[test]
    fn only_post_passes_and_plain_grpc_needs_http2() {
        let layer = GrpcStrictLayer::new(true, &[]);
        for method in [Method::PUT, Method::GET, Method::DELETE] {
            assert_eq!(
                refused(&layer, &request(method, Some("application/grpc"))),
                Some(StatusCode::METHOD_NOT_ALLOWED)
            );
        }
        let mut http1 = request(Method::POST, Some("application/grpc"));
        *http1.version_mut() = Version::HTTP_11;
        assert_eq!(
            refused(&layer, &http1),
            Some(StatusCode::HTTP_VERSION_NOT_SUPPORTED)
        );
        let mut web = request(Method::POST, Some("application/grpc-web+proto"));
        *web.version_mut() = Version::HTTP_11;
        assert_eq!(refused(&layer, &web), None);
    }

    #[test]
    fn grpc_web_from_a_disallowed_origin_is_forbidden() {
        let layer = GrpcStrictLayer::new(true, &[DASHBOARD.to_owned()]);
        let mut allowed = request(Method::POST, Some("application/grpc-web"));
        allowed
            .headers_mut()
            .insert(ORIGIN, HeaderValue::from_static(DASHBOARD));
        assert_eq!(refused(&layer, &allowed), None);
        let mut other = request(Method::POST, Some("application/grpc-web"));
        other.headers_mut().insert(
            ORIGIN,
            HeaderValue::from_static("https://elsewhere.example"),
        );
        assert_eq!(refused(&layer, &other), Some(StatusCode::FORBIDDEN));
        let no_browser = request(Method::POST, Some("application/grpc-web"));
        assert_eq!(refused(&layer, &no_browser), None);
    }
}
