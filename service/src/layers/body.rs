//! Two small response and request bodies the layers share.
//!
//! - [`Buffered`]: a body already in memory (its bytes, then its trailers).
//! - [`Holding`]: another body, plus something kept alive until that body
//!   ends or is dropped (a call slot, a permit, a counter's guard).

use std::{
    pin::Pin,
    task::{Context, Poll},
};

use http::HeaderMap;
use http_body::{Frame, SizeHint};
use pin_project_lite::pin_project;
use tonic::{body::Body, codegen::Bytes, Status};

/// A body that is already in memory: the bytes, then the trailers, if any.
#[derive(Debug)]
pub struct Buffered {
    data: Option<Bytes>,
    trailers: Option<HeaderMap>,
}

impl Buffered {
    /// `data` (none if empty), then `trailers`.
    pub fn new(data: Bytes, trailers: Option<HeaderMap>) -> Self {
        Self {
            data: (!data.is_empty()).then_some(data),
            trailers,
        }
    }
}

impl http_body::Body for Buffered {
    type Data = Bytes;
    type Error = Status;

    fn poll_frame(
        mut self: Pin<&mut Self>,
        _cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Bytes>, Status>>> {
        if let Some(data) = self.data.take() {
            return Poll::Ready(Some(Ok(Frame::data(data))));
        }
        Poll::Ready(self.trailers.take().map(|t| Ok(Frame::trailers(t))))
    }

    fn is_end_stream(&self) -> bool {
        self.data.is_none() && self.trailers.is_none()
    }

    fn size_hint(&self) -> SizeHint {
        SizeHint::with_exact(self.data.as_ref().map_or(0, |d| d.len() as u64))
    }
}

pin_project! {
    /// A body that keeps `held` alive until it ends or is dropped.
    pub struct Holding<T> {
        #[pin]
        inner: Body,
        held: Option<T>,
    }
}

impl<T> Holding<T> {
    /// `inner`, holding `held`.
    pub fn new(inner: Body, held: T) -> Self {
        Self {
            inner,
            held: Some(held),
        }
    }
}

impl<T> http_body::Body for Holding<T> {
    type Data = Bytes;
    type Error = Status;

    fn poll_frame(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Bytes>, Status>>> {
        let this = self.project();
        let polled = this.inner.poll_frame(cx);
        if let Poll::Ready(None) = polled {
            this.held.take();
        }
        polled
    }

    fn is_end_stream(&self) -> bool {
        self.inner.is_end_stream()
    }

    fn size_hint(&self) -> SizeHint {
        self.inner.size_hint()
    }
}
