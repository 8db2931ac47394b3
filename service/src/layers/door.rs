//! What the layers give a door beside gRPC (the Connect protocol, the FHIR
//! door), so that its calls get what a gRPC call gets from the gRPC stack:
//!
//! - around its handler ([`DoorLayers::wrap`]): its own copy of the
//!   per-call layer ([`super::call`]: request id, span, deadline, metrics,
//!   the log line; the door sets [`super::call::CallOutcome`] on its
//!   answers) and panic
//!   catching ([`super::panic`]);
//! - inside it, once the door knows its request ([`DoorLayers::read_body`],
//!   [`DoorLayers::admit`]): the request gate's rules for a body that is not
//!   gRPC-framed: refused at once when no call slot or no work is free,
//!   read within `--request-arrival-timeout` up to the door's size limit,
//!   each frame's bytes reserved from `--max-request-bytes-in-flight` as it
//!   arrives; then a call slot, the connection's fair share and the
//!   request's items from [`super::admission`];
//! - the compute pool for a call of [`OFFLOAD_MIN_ITEMS`] or more
//!   ([`DoorLayers::compute`]).
//!
//! What the door keeps ([`Held`]) is held until its answer ends
//! ([`DoorLayers::holding`]). The connection loop's hygiene (TLS, preface,
//! idle, age, connection cap, stuck answers) is the listener's, the same
//! for every door.

use std::{convert::Infallible, time::Duration};

use http::{Extensions, Request, Response};
use http_body_util::BodyExt;
use tokio::sync::OwnedSemaphorePermit;
use tonic::{body::Body, codegen::Bytes, Status};
use tower::{
    util::{BoxCloneService, MapResponseLayer},
    Service, ServiceBuilder,
};

use super::{
    admission::{Admission, Admitted},
    body::Holding,
    call::CallLayer,
    compute::{ComputePool, OFFLOAD_MIN_ITEMS},
    connections::ConnectionHandle,
    panic, statuses,
};

/// A door's per-request service, behind its copy of the per-call layer.
pub type DoorService = BoxCloneService<Request<Body>, Response<Body>, Infallible>;

/// The layers' side of a door beside gRPC; clones share every limit with
/// the gRPC stack.
#[derive(Debug, Clone)]
pub struct DoorLayers {
    call: CallLayer,
    admission: Admission,
    arrival_timeout: Duration,
    compute: &'static ComputePool,
}

/// A whole request body, read, with the request bytes it holds.
#[derive(Debug)]
pub struct ReadBody {
    /// The body's bytes.
    pub bytes: Bytes,
    /// The request bytes reserved for it, until the answer ends.
    pub reserved: Option<OwnedSemaphorePermit>,
}

/// Why a body was not read.
#[derive(Debug)]
pub enum NotRead {
    /// More than the door's size limit.
    TooLarge,
    /// Refused by the layers: no call slot or work free, too many request
    /// bytes in flight (RESOURCE_EXHAUSTED), not arrived in time
    /// (DEADLINE_EXCEEDED), or abandoned by the client (CANCELLED).
    Refused(Status),
}

/// What an admitted call holds until its answer ends: its call slot, share
/// and work, and its request bytes.
#[derive(Debug)]
pub struct Held {
    _admitted: Admitted,
    _reserved: Option<OwnedSemaphorePermit>,
}

impl DoorLayers {
    /// The door side of `call`, `admission` and `compute`, with the gRPC
    /// stack's request arrival timeout.
    pub fn new(
        call: CallLayer,
        admission: Admission,
        arrival_timeout: Duration,
        compute: &'static ComputePool,
    ) -> Self {
        Self {
            call,
            admission,
            arrival_timeout,
            compute,
        }
    }

    /// `handler` behind the per-call layer and panic catching, outermost
    /// first.
    pub fn wrap<S>(&self, handler: S) -> DoorService
    where
        S: Service<Request<Body>, Response = Response<Body>, Error = Infallible>
            + Clone
            + Send
            + 'static,
        S::Future: Send + 'static,
    {
        BoxCloneService::new(
            ServiceBuilder::new()
                .layer(self.call.clone())
                .layer(MapResponseLayer::new(|r: Response<_>| r.map(Body::new)))
                .layer(panic::catch_panic_layer())
                .service(handler),
        )
    }

    /// Read `body` whole: refused at once if no call slot or work is free,
    /// within the arrival timeout, at most `max_bytes`, each frame's bytes
    /// reserved as it arrives.
    pub async fn read_body(&self, body: Body, max_bytes: usize) -> Result<ReadBody, NotRead> {
        self.admission.precheck().map_err(NotRead::Refused)?;
        match tokio::time::timeout(self.arrival_timeout, self.read_frames(body, max_bytes)).await {
            Ok(read) => read,
            Err(_) => Err(NotRead::Refused(statuses::request_not_arrived(
                self.arrival_timeout,
            ))),
        }
    }

    async fn read_frames(&self, mut body: Body, max_bytes: usize) -> Result<ReadBody, NotRead> {
        let mut buffer: Vec<u8> = Vec::new();
        let mut reserved: Option<OwnedSemaphorePermit> = None;
        while let Some(frame) = body.frame().await {
            let frame = frame.map_err(|_| NotRead::Refused(statuses::abandoned()))?;
            let Ok(data) = frame.into_data() else {
                continue;
            };
            if buffer.len() + data.len() > max_bytes {
                return Err(NotRead::TooLarge);
            }
            self.reserve(&mut reserved, data.len())
                .map_err(NotRead::Refused)?;
            buffer.extend_from_slice(&data);
        }
        Ok(ReadBody {
            bytes: Bytes::from(buffer),
            reserved,
        })
    }

    /// Reserve `bytes` more request bytes into `reserved` (a door whose
    /// message grows as it is read: a decompressed body).
    ///
    /// # Errors
    ///
    /// RESOURCE_EXHAUSTED when the request bytes in flight are at their
    /// limit.
    pub fn reserve(
        &self,
        reserved: &mut Option<OwnedSemaphorePermit>,
        bytes: usize,
    ) -> Result<(), Status> {
        if bytes == 0 {
            return Ok(());
        }
        let permit = self.admission.reserve_bytes(bytes)?;
        match reserved {
            Some(held) => held.merge(permit),
            None => *reserved = Some(permit),
        }
        Ok(())
    }

    /// Admit a call of `items` items whose request came with `extensions`
    /// (its connection's, for the fair share), holding `reserved` request
    /// bytes.
    ///
    /// # Errors
    ///
    /// RESOURCE_EXHAUSTED, as for a gRPC call: no call slot, the
    /// connection's share or the work limit reached, or more items than the
    /// server ever admits at once.
    pub fn admit(
        &self,
        extensions: &Extensions,
        items: u64,
        reserved: Option<OwnedSemaphorePermit>,
    ) -> Result<Held, Status> {
        let connection = extensions
            .get::<ConnectionHandle>()
            .map(|handle| handle.0.clone());
        let admitted = self.admission.admit(connection.as_ref(), items)?;
        Ok(Held {
            _admitted: admitted,
            _reserved: reserved,
        })
    }

    /// Run `work` for a call of `items` items: on the compute pool from
    /// [`OFFLOAD_MIN_ITEMS`] on, here otherwise.
    ///
    /// # Errors
    ///
    /// UNAVAILABLE when the pool is shutting down.
    pub async fn compute<T: Send + 'static>(
        &self,
        items: u64,
        work: impl FnOnce() -> T + Send + 'static,
    ) -> Result<T, Status> {
        if items >= OFFLOAD_MIN_ITEMS {
            self.compute.run(work).await
        } else {
            Ok(work())
        }
    }

    /// `response` with its body holding `held` until it ends.
    pub fn holding(response: Response<Body>, held: Held) -> Response<Body> {
        response.map(|body| Body::new(Holding::new(body, held)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use http_body::Frame;
    use tonic::Code;

    fn layers(admission: &Admission) -> DoorLayers {
        DoorLayers::new(
            CallLayer::new(Duration::from_secs(5)),
            admission.clone(),
            Duration::from_millis(200),
            ComputePool::shared(1).expect("pool"),
        )
    }

    fn body_of(chunks: &[&'static [u8]]) -> Body {
        let frames: Vec<_> = chunks
            .iter()
            .map(|c| Ok::<_, Status>(Frame::data(Bytes::from_static(c))))
            .collect();
        let stream = tokio_stream::iter(frames);
        Body::new(http_body_util::StreamBody::new(stream))
    }

    #[tokio::test]
    async fn a_body_is_read_whole_with_its_bytes_reserved_until_the_answer_ends() {
        let admission = Admission::new(4, 100, 1000);
        let layers = layers(&admission);
        let read = layers
            .read_body(body_of(&[b"{\"po2\":", b"{}}"]), 100)
            .await
            .expect("read");
        assert_eq!(&read.bytes[..], b"{\"po2\":{}}");
        assert_eq!(admission.free_request_bytes(), 990);
        let held = layers
            .admit(&Extensions::new(), 40, read.reserved)
            .expect("admitted");
        assert_eq!(admission.free_calls(), 3);
        assert_eq!(admission.free_items(), 60);
        let response = DoorLayers::holding(Response::new(Body::empty()), held);
        let _ = response.into_body().collect().await;
        assert_eq!(admission.free_request_bytes(), 1000);
        assert_eq!(admission.free_calls(), 4);
        assert_eq!(admission.free_items(), 100);
    }

    #[tokio::test]
    async fn an_oversize_body_and_a_full_server_are_refused() {
        let admission = Admission::new(1, 100, 1000);
        let layers = layers(&admission);
        assert!(matches!(
            layers.read_body(body_of(&[b"0123456789"]), 5).await,
            Err(NotRead::TooLarge)
        ));
        assert_eq!(admission.free_request_bytes(), 1000);
        let _only = layers.admit(&Extensions::new(), 1, None).expect("one slot");
        match layers.read_body(body_of(&[b"{}"]), 100).await {
            Err(NotRead::Refused(status)) => assert_eq!(status.code(), Code::ResourceExhausted),
            other => panic!("{other:?}"),
        }
        let refused = layers.admit(&Extensions::new(), 1, None).unwrap_err();
        assert_eq!(refused.code(), Code::ResourceExhausted);
    }

    #[tokio::test]
    async fn a_body_that_does_not_arrive_in_time_is_refused() {
        let admission = Admission::new(4, 100, 1000);
        let layers = layers(&admission);
        let (_sender, body) = {
            let (tx, rx) = tokio::sync::mpsc::channel::<Result<Frame<Bytes>, Status>>(1);
            (
                tx,
                Body::new(http_body_util::StreamBody::new(
                    tokio_stream::wrappers::ReceiverStream::new(rx),
                )),
            )
        };
        match layers.read_body(body, 100).await {
            Err(NotRead::Refused(status)) => assert_eq!(status.code(), Code::DeadlineExceeded),
            other => panic!("{other:?}"),
        }
    }

    #[tokio::test]
    async fn heavy_work_runs_on_the_compute_pool_and_light_work_here() {
        let admission = Admission::new(4, 100, 1000);
        let layers = layers(&admission);
        let here = std::thread::current().id();
        let light = layers
            .compute(OFFLOAD_MIN_ITEMS - 1, std::thread::current)
            .await
            .unwrap();
        assert_eq!(light.id(), here);
        let heavy = layers
            .compute(OFFLOAD_MIN_ITEMS, std::thread::current)
            .await
            .unwrap();
        assert_eq!(heavy.name(), Some("oxbind-compute"));
    }
}
