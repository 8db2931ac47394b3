//! A panic in a handler becomes an INTERNAL answer, not a lost call:
//! tower-http's `CatchPanic` catches it (in the handler's future, wherever
//! it runs: the compute pool carries its panics back), and the answer is a
//! gRPC INTERNAL with a fixed message that echoes nothing. The panic is
//! logged at error level, without its message (which could hold a value),
//! and counted (`oxbind.server.panics`).
//!
//! The process's panic hook ([`install_hook`]) likewise reports only where
//! a panic happened, never its message, so no panic anywhere writes a
//! patient value to the log.

use std::{
    any::Any,
    sync::atomic::{AtomicU64, Ordering},
};

use http::Response;
use tonic::body::Body;
use tower_http::catch_panic::{CatchPanicLayer, ResponseForPanic};

use super::statuses;
use crate::instruments;

/// Panics caught since the process started.
static PANICS_CAUGHT: AtomicU64 = AtomicU64::new(0);

/// How many handler panics were caught and answered INTERNAL so far.
pub fn panics_caught() -> u64 {
    PANICS_CAUGHT.load(Ordering::Relaxed)
}

/// The layer: catch a handler's panic, answer INTERNAL.
pub fn catch_panic_layer() -> CatchPanicLayer<InternalOnPanic> {
    CatchPanicLayer::custom(InternalOnPanic)
}

/// Answers a caught panic with INTERNAL; logs and counts it.
#[derive(Debug, Clone, Copy, Default)]
pub struct InternalOnPanic;

impl ResponseForPanic for InternalOnPanic {
    type ResponseBody = Body;

    fn response_for_panic(&mut self, _payload: Box<dyn Any + Send + 'static>) -> Response<Body> {
        PANICS_CAUGHT.fetch_add(1, Ordering::Relaxed);
        instruments::record_panic();
        tracing::error!("a handler panicked; the call was answered INTERNAL");
        statuses::panicked().into_http()
    }
}

/// Replace the process's panic hook with one that logs where a panic
/// happened and nothing of its message.
pub fn install_hook() {
    std::panic::set_hook(Box::new(|info| {
        let location = info
            .location()
            .map(|l| format!("{}:{}", l.file(), l.line()))
            .unwrap_or_default();
        let thread = std::thread::current();
        tracing::error!(
            location,
            thread = thread.name().unwrap_or("unnamed"),
            "panic (its message is not logged, as it could hold a value)"
        );
    }));
}

#[cfg(test)]
mod tests {
    use super::*;
    use http::Request;
    use tower::{Layer, Service, ServiceExt};

    /// A handler that panics with a value in its message.
    async fn panicking_handler(
        _request: Request<Body>,
    ) -> Result<Response<Body>, std::convert::Infallible> {
        panic!("po2 was 61.2345 mm[Hg]");
    }

    #[tokio::test]
    async fn a_panicking_handler_is_answered_internal_with_a_fixed_message() {
        let before = panics_caught();
        let mut service = catch_panic_layer().layer(tower::service_fn(panicking_handler));
        let response = service
            .ready()
            .await
            .unwrap()
            .call(Request::new(Body::empty()))
            .await
            .expect("a response, not a lost call");
        assert_eq!(response.status(), http::StatusCode::OK);
        assert_eq!(response.headers()["grpc-status"], "13");
        let message = response.headers()["grpc-message"].to_str().unwrap();
        assert_eq!(message, "internal%20error");
        assert!(!message.contains("61.2345"));
        assert!(panics_caught() > before, "the panic is counted");
    }
}
