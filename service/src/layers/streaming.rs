//! Streaming calls (server reflection, health Watch): their own small cap,
//! an idle timeout, and an end at shutdown.
//!
//! - At most `--max-streaming-calls` at once; past it RESOURCE_EXHAUSTED at
//!   once. They never take a unary call slot, so idle streams cannot lock
//!   the v1 calls out.
//! - A stream that passes no message either way for
//!   `--streaming-idle-timeout` is ended with DEADLINE_EXCEEDED.
//! - When the server begins to drain, each stream passes on what its
//!   handler has ready (a Watch stream's NOT_SERVING) and then ends with
//!   UNAVAILABLE, so an open stream does not hold the drain to its grace
//!   period.
//!
//! Ending a stream also ends its request side for the handler, so a handler
//! task waiting for the client's next message finishes too.

use std::{
    future::Future,
    pin::Pin,
    sync::{
        atomic::{AtomicU64, Ordering},
        Arc,
    },
    task::{Context, Poll},
    time::Duration,
};

use http::{Request, Response};
use http_body::Frame;
use pin_project_lite::pin_project;
use tokio::{
    sync::{OwnedSemaphorePermit, Semaphore},
    time::{Instant, Sleep},
};
use tokio_util::sync::{CancellationToken, WaitForCancellationFutureOwned};
use tonic::{body::Body, codegen::Bytes, Status};
use tower::{Layer, Service};

use super::{
    connections::CallClock,
    protocol::{call_kind, CallKind},
    statuses,
};

/// The streaming limits; clones share one cap.
#[derive(Debug, Clone)]
pub struct StreamingLayer {
    permits: Arc<Semaphore>,
    max_streams: usize,
    idle_timeout: Duration,
    draining: CancellationToken,
}

impl StreamingLayer {
    /// At most `max_streams` streams, each ended after `idle_timeout` with
    /// no message, and all ended when `draining` is cancelled.
    pub fn new(max_streams: usize, idle_timeout: Duration, draining: CancellationToken) -> Self {
        Self {
            permits: Arc::new(Semaphore::new(max_streams)),
            max_streams,
            idle_timeout,
            draining,
        }
    }
}

impl<S> Layer<S> for StreamingLayer {
    type Service = Streaming<S>;

    fn layer(&self, inner: S) -> Self::Service {
        Streaming {
            inner,
            settings: self.clone(),
        }
    }
}

/// The service [`StreamingLayer`] makes.
#[derive(Debug, Clone)]
pub struct Streaming<S> {
    inner: S,
    settings: StreamingLayer,
}

impl<S> Service<Request<Body>> for Streaming<S>
where
    S: Service<Request<Body>, Response = Response<Body>> + Clone + Send + 'static,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
{
    type Response = Response<Body>;
    type Error = S::Error;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, S::Error>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: Request<Body>) -> Self::Future {
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        if call_kind(request.uri().path()) != CallKind::Streaming {
            return Box::pin(inner.call(request));
        }
        let settings = &self.settings;
        let Ok(permit) = settings.permits.clone().try_acquire_owned() else {
            let refusal = statuses::streaming_limit(settings.max_streams).into_http();
            return Box::pin(std::future::ready(Ok(refusal)));
        };
        let clock = request.extensions().get::<CallClock>().cloned();
        let activity = Arc::new(Activity::new(clock, settings.idle_timeout));
        let ended = CancellationToken::new();
        let request = request.map(|body| {
            Body::new(RequestSide {
                inner: body,
                activity: activity.clone(),
                ended: Box::pin(ended.clone().cancelled_owned()),
            })
        });
        let idle_timeout = settings.idle_timeout;
        let draining = settings.draining.clone();
        Box::pin(async move {
            let response = inner.call(request).await?;
            Ok(response.map(|body| {
                Body::new(ResponseSide {
                    inner: body,
                    idle: Box::pin(tokio::time::sleep(idle_timeout)),
                    idle_timeout,
                    activity,
                    draining: Box::pin(draining.cancelled_owned()),
                    ended: ended.drop_guard(),
                    finished: false,
                    _permit: permit,
                })
            }))
        })
    }
}

/// When a stream last passed a message, in ms since it began; each message
/// also moves the call's clock (its connection closes if the stream is
/// stuck past its idle deadline).
#[derive(Debug)]
struct Activity {
    start: Instant,
    last_ms: AtomicU64,
    clock: Option<CallClock>,
    idle_timeout: Duration,
}

impl Activity {
    fn new(clock: Option<CallClock>, idle_timeout: Duration) -> Self {
        let start = Instant::now();
        if let Some(clock) = &clock {
            clock.must_end_by(start + idle_timeout);
        }
        Self {
            start,
            last_ms: AtomicU64::new(0),
            clock,
            idle_timeout,
        }
    }

    fn touch(&self) {
        let now = Instant::now();
        let ms = now.saturating_duration_since(self.start).as_millis() as u64;
        self.last_ms.fetch_max(ms, Ordering::Relaxed);
        if let Some(clock) = &self.clock {
            clock.must_end_by(now + self.idle_timeout);
        }
    }

    fn last(&self) -> Instant {
        self.start + Duration::from_millis(self.last_ms.load(Ordering::Relaxed))
    }
}

pin_project! {
    /// The client's side of a stream: records activity, and ends when the
    /// server's side has ended.
    struct RequestSide {
        #[pin]
        inner: Body,
        activity: Arc<Activity>,
        ended: Pin<Box<WaitForCancellationFutureOwned>>,
    }
}

impl http_body::Body for RequestSide {
    type Data = Bytes;
    type Error = Status;

    fn poll_frame(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Bytes>, Status>>> {
        let this = self.project();
        if this.ended.as_mut().poll(cx).is_ready() {
            return Poll::Ready(None);
        }
        let polled = this.inner.poll_frame(cx);
        if let Poll::Ready(Some(Ok(_))) = &polled {
            this.activity.touch();
        }
        polled
    }

    fn is_end_stream(&self) -> bool {
        self.inner.is_end_stream()
    }
}

pin_project! {
    /// The server's side of a stream: passes the handler's messages, ends
    /// the stream when idle or draining, and holds the stream's permit.
    struct ResponseSide {
        #[pin]
        inner: Body,
        idle: Pin<Box<Sleep>>,
        idle_timeout: Duration,
        activity: Arc<Activity>,
        draining: Pin<Box<WaitForCancellationFutureOwned>>,
        ended: tokio_util::sync::DropGuard,
        finished: bool,
        _permit: OwnedSemaphorePermit,
    }
}

impl http_body::Body for ResponseSide {
    type Data = Bytes;
    type Error = Status;

    fn poll_frame(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Bytes>, Status>>> {
        let this = self.project();
        if *this.finished {
            return Poll::Ready(None);
        }
        match this.inner.poll_frame(cx) {
            Poll::Ready(Some(Ok(frame))) => {
                if frame.is_data() {
                    this.activity.touch();
                }
                return Poll::Ready(Some(Ok(frame)));
            }
            Poll::Ready(other) => {
                *this.finished = true;
                return Poll::Ready(other);
            }
            Poll::Pending => {}
        }
        // Nothing ready from the handler: end the stream if the server is
        // draining or the stream has been idle too long.
        let ending = if this.draining.as_mut().poll(cx).is_ready() {
            Some(statuses::shutting_down())
        } else {
            loop {
                if this.idle.as_mut().poll(cx).is_pending() {
                    break None;
                }
                let due = this.activity.last() + *this.idle_timeout;
                if due <= Instant::now() {
                    break Some(statuses::stream_idle(*this.idle_timeout));
                }
                this.idle.as_mut().reset(due);
            }
        };
        match ending {
            Some(status) => {
                *this.finished = true;
                Poll::Ready(Some(Ok(Frame::trailers(statuses::as_trailers(&status)))))
            }
            None => Poll::Pending,
        }
    }

    fn is_end_stream(&self) -> bool {
        self.finished || self.inner.is_end_stream()
    }
}
