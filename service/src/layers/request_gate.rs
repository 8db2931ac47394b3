//! The gRPC request gate for unary calls: a call's handler runs only once
//! its whole request is in and the call is admitted.
//!
//! For each unary call (health checks included, streaming calls not):
//!
//! 1. Read the request: its one length-prefixed message and the end of the
//!    stream, within `--request-arrival-timeout` of the headers (else
//!    DEADLINE_EXCEEDED). A stream that sends headers and waits holds no call
//!    slot, only its own HTTP/2 stream, and only until then.
//! 2. Refuse, as soon as they show: a message over the size limit
//!    (RESOURCE_EXHAUSTED), a compressed one (UNIMPLEMENTED), a second
//!    message (INTERNAL, as gRPC's own servers answer it), more request
//!    bytes than the server holds at once (RESOURCE_EXHAUSTED; reserved
//!    frame by frame as they arrive), a client that resets the stream
//!    (logged as CANCELLED).
//!    When its message's length is known and no call slot or no work is
//!    free at that moment, the call is refused at once rather than read.
//! 3. Count the request's work ([`super::work`]) from the encoded message
//!    and ask [`Admission`] for a call slot, the connection's share and the
//!    work; refuse at once if any is short.
//! 4. Hand the buffered request to the handler; the slot, the work and the
//!    bytes are held until the answer ends.
//!
//! Health checks go through steps 1 and 2 with a small size limit of their
//! own, and are never refused for load. Work past
//! [`super::compute::OFFLOAD_MIN_ITEMS`] is marked in the request's
//! extensions for the compute pool.

use std::{
    future::Future,
    pin::Pin,
    sync::Arc,
    task::{Context, Poll},
    time::Duration,
};

use http::{HeaderMap, Request, Response};
use http_body_util::BodyExt;
use tokio::sync::OwnedSemaphorePermit;
use tonic::{body::Body, codegen::Bytes, Status};
use tower::{Layer, Service};

use super::{
    admission::Admission,
    body::{Buffered, Holding},
    connections::ConnectionHandle,
    protocol::{call_kind, CallKind},
    statuses, work,
};
use crate::config::GRPC_FRAME_PREFIX_BYTES;

/// Largest health-check request message, in bytes: a health request holds
/// one service name.
pub const MAX_HEALTH_MESSAGE_BYTES: usize = 1024;

/// The work of a call, in items, as the gate counted it (in the request's
/// extensions for the layers below).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Work(pub u64);

/// The gate's settings.
#[derive(Debug, Clone)]
pub struct RequestGateLayer {
    admission: Admission,
    arrival_timeout: Duration,
    max_message_bytes: usize,
}

impl RequestGateLayer {
    /// Admit by `admission`; requests must arrive within `arrival_timeout`
    /// and hold a message of at most `max_message_bytes`.
    pub fn new(admission: Admission, arrival_timeout: Duration, max_message_bytes: usize) -> Self {
        Self {
            admission,
            arrival_timeout,
            max_message_bytes,
        }
    }
}

impl<S> Layer<S> for RequestGateLayer {
    type Service = RequestGate<S>;

    fn layer(&self, inner: S) -> Self::Service {
        RequestGate {
            inner,
            settings: Arc::new(self.clone()),
        }
    }
}

/// The service [`RequestGateLayer`] makes.
#[derive(Debug, Clone)]
pub struct RequestGate<S> {
    inner: S,
    settings: Arc<RequestGateLayer>,
}

type BoxFuture<T> = Pin<Box<dyn Future<Output = T> + Send>>;

impl<S> Service<Request<Body>> for RequestGate<S>
where
    S: Service<Request<Body>, Response = Response<Body>> + Clone + Send + 'static,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
{
    type Response = Response<Body>;
    type Error = S::Error;
    type Future = BoxFuture<Result<Response<Body>, S::Error>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: Request<Body>) -> Self::Future {
        let kind = call_kind(request.uri().path());
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        if !matches!(kind, CallKind::Unary | CallKind::Health) {
            return Box::pin(inner.call(request));
        }
        let settings = self.settings.clone();
        Box::pin(async move {
            let health = kind == CallKind::Health;
            let (parts, body) = request.into_parts();
            let limit = if health {
                MAX_HEALTH_MESSAGE_BYTES
            } else {
                settings.max_message_bytes
            };
            let reserve = (!health).then_some(&settings.admission);
            let arrival =
                tokio::time::timeout(settings.arrival_timeout, read_request(body, limit, reserve))
                    .await;
            let received = match arrival {
                Ok(Ok(received)) => received,
                Ok(Err(status)) => return Ok(status.into_http()),
                Err(_) => {
                    return Ok(statuses::request_not_arrived(settings.arrival_timeout).into_http())
                }
            };
            let mut request = Request::from_parts(parts, ());
            let admitted = if health {
                None
            } else {
                let items = received
                    .message()
                    .map_or(1, |message| work::items_of(request.uri().path(), message));
                let connection = request
                    .extensions()
                    .get::<ConnectionHandle>()
                    .map(|handle| handle.0.clone());
                match settings.admission.admit(connection.as_ref(), items) {
                    Ok(admitted) => {
                        request.extensions_mut().insert(Work(items));
                        Some(admitted)
                    }
                    Err(status) => return Ok(status.into_http()),
                }
            };
            let Received {
                bytes,
                trailers,
                reserved,
                ..
            } = received;
            let request = request.map(|()| Body::new(Buffered::new(bytes, trailers)));
            let response = inner.call(request).await?;
            Ok(response.map(|body| Body::new(Holding::new(body, (admitted, reserved)))))
        })
    }
}

/// A whole unary request, read.
struct Received {
    /// The framed message (prefix and message), or fewer bytes if the
    /// client ended the stream early (the decoder answers that).
    bytes: Bytes,
    /// The request's trailers, if it sent any.
    trailers: Option<HeaderMap>,
    /// The request bytes reserved for it.
    reserved: Option<OwnedSemaphorePermit>,
    /// The message's length from its prefix, once known.
    length: Option<usize>,
}

impl Received {
    /// The encoded message without its prefix, when it is all there.
    fn message(&self) -> Option<&[u8]> {
        let length = self.length?;
        self.bytes
            .get(GRPC_FRAME_PREFIX_BYTES..GRPC_FRAME_PREFIX_BYTES + length)
    }
}

/// Read `body` to its end: at most one message of at most `limit` bytes,
/// reserving each frame's bytes from `admission` when given.
async fn read_request(
    mut body: Body,
    limit: usize,
    admission: Option<&Admission>,
) -> Result<Received, Status> {
    let mut buffer: Vec<u8> = Vec::new();
    let mut received = Received {
        bytes: Bytes::new(),
        trailers: None,
        reserved: None,
        length: None,
    };
    while let Some(frame) = body.frame().await {
        let frame = frame.map_err(|_| statuses::abandoned())?;
        let frame = match frame.into_data() {
            Ok(data) => data,
            Err(frame) => {
                if let Ok(trailers) = frame.into_trailers() {
                    received.trailers = Some(trailers);
                }
                continue;
            }
        };
        if frame.is_empty() {
            continue;
        }
        if let Some(admission) = admission {
            let permit = admission.reserve_bytes(frame.len())?;
            match &mut received.reserved {
                Some(held) => held.merge(permit),
                None => received.reserved = Some(permit),
            }
        }
        if received
            .length
            .is_some_and(|length| buffer.len() >= GRPC_FRAME_PREFIX_BYTES + length)
        {
            return Err(statuses::second_message());
        }
        buffer.extend_from_slice(&frame);
        if received.length.is_none() && buffer.len() >= GRPC_FRAME_PREFIX_BYTES {
            if buffer[0] != 0 {
                return Err(statuses::compressed_message());
            }
            let length = u32::from_be_bytes([buffer[1], buffer[2], buffer[3], buffer[4]]) as usize;
            if length > limit {
                return Err(statuses::message_too_large(length, limit));
            }
            // The server is full now: refuse before reading the rest.
            if let Some(admission) = admission {
                admission.precheck()?;
            }
            buffer.reserve_exact((GRPC_FRAME_PREFIX_BYTES + length).saturating_sub(buffer.len()));
            received.length = Some(length);
        }
        if let Some(length) = received.length {
            if buffer.len() > GRPC_FRAME_PREFIX_BYTES + length {
                return Err(statuses::second_message());
            }
        }
    }
    received.bytes = Bytes::from(buffer);
    Ok(received)
}

#[cfg(test)]
mod tests {
    use super::*;
    use http_body::Frame;
    use tonic::Code;

    fn frame(message: &[u8]) -> Vec<u8> {
        let mut out = vec![0];
        out.extend_from_slice(&(message.len() as u32).to_be_bytes());
        out.extend_from_slice(message);
        out
    }

    fn body_of(chunks: Vec<Vec<u8>>) -> Body {
        let stream = tokio_stream::iter(
            chunks
                .into_iter()
                .map(|c| Ok::<_, Status>(Frame::data(Bytes::from(c)))),
        );
        Body::new(http_body_util::StreamBody::new(stream))
    }

    #[tokio::test]
    async fn one_message_in_pieces_is_read_whole() {
        let framed = frame(b"hello");
        let body = body_of(vec![framed[..3].to_vec(), framed[3..].to_vec()]);
        let admission = Admission::new(4, 10, 1024);
        let received = read_request(body, 100, Some(&admission)).await.unwrap();
        assert_eq!(received.message(), Some(&b"hello"[..]));
        assert_eq!(admission.free_request_bytes(), 1024 - framed.len());
        drop(received);
        assert_eq!(admission.free_request_bytes(), 1024);
    }

    #[tokio::test]
    async fn a_second_message_is_refused() {
        let mut two = frame(b"one");
        two.extend_from_slice(&frame(b"two"));
        let status = read_request(body_of(vec![two]), 100, None)
            .await
            .err()
            .unwrap();
        assert_eq!(status.code(), Code::Internal);
        let status = read_request(body_of(vec![frame(b"one"), frame(b"two")]), 100, None)
            .await
            .err()
            .unwrap();
        assert_eq!(status.code(), Code::Internal);
    }

    #[tokio::test]
    async fn an_oversize_or_compressed_message_is_refused_from_its_prefix() {
        let status = read_request(body_of(vec![frame(&[7u8; 200])[..5].to_vec()]), 100, None)
            .await
            .err()
            .unwrap();
        assert_eq!(status.code(), Code::ResourceExhausted);
        let mut compressed = frame(b"zz");
        compressed[0] = 1;
        let status = read_request(body_of(vec![compressed]), 100, None)
            .await
            .err()
            .unwrap();
        assert_eq!(status.code(), Code::Unimplemented);
    }

    #[tokio::test]
    async fn request_bytes_past_the_limit_are_refused() {
        let admission = Admission::new(4, 10, 8);
        let status = read_request(body_of(vec![frame(b"too long")]), 100, Some(&admission))
            .await
            .err()
            .unwrap();
        assert_eq!(status.code(), Code::ResourceExhausted);
        assert_eq!(admission.free_request_bytes(), 8);
    }
}
