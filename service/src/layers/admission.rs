//! Admission: what a call must be given before its handler runs, so that no
//! caller can hold what others need and the server's memory stays bounded.
//!
//! - **Request bytes** ([`Admission::reserve_bytes`]), reserved as a unary
//!   call's request arrives and held until its answer ends: at most
//!   `--max-request-bytes-in-flight` at once.
//! - **A call slot**: at most `--max-concurrent-calls` calls computed or
//!   answered at once, taken only once the whole request is in (a stream
//!   that sends headers and waits holds none).
//! - **Its connection's fair share** of the slots: a connection may hold at
//!   most `max_concurrent_calls / max(n, 2)` of them, where `n` is the
//!   number of connections holding slots (counting its own): half the slots
//!   when it is alone, an equal share when others want them too.
//! - **Work**, in items ([`super::work`]): at most `--max-items-in-flight`
//!   admitted at once, so that the memory of the calls in progress has a
//!   bound whatever their mix (RELIABILITY.md derives it).
//!
//! Every refusal is immediate (RESOURCE_EXHAUSTED): nothing queues, so
//! nothing waits holding memory. Health checks never come here.
//!
//! Protocol-neutral: the gRPC request gate calls it, and so can another
//! door (Connect, FHIR) once it has read its request and knows its work.

use std::sync::{
    atomic::{AtomicUsize, Ordering},
    Arc,
};

use tokio::sync::{OwnedSemaphorePermit, Semaphore};
use tonic::Status;

use super::{connections::ConnectionState, statuses};

/// A connection alone may hold at most this fraction (one over it) of the
/// call slots, so that a newcomer always finds some free.
pub const FAIR_SHARE_MIN_CONNECTIONS: usize = 2;

/// The server's admission limits; clones share them.
#[derive(Debug, Clone)]
pub struct Admission {
    inner: Arc<Inner>,
}

#[derive(Debug)]
struct Inner {
    calls: Arc<Semaphore>,
    max_calls: usize,
    items: Arc<Semaphore>,
    max_items: usize,
    bytes: Arc<Semaphore>,
    /// Connections holding at least one call slot.
    connections_holding: AtomicUsize,
}

/// What an admitted call holds until its answer ends.
#[derive(Debug)]
pub struct Admitted {
    _call: OwnedSemaphorePermit,
    _items: Option<OwnedSemaphorePermit>,
    _share: ShareGuard,
}

impl Admission {
    /// Limits: `max_calls` call slots, `max_items` items of work,
    /// `max_request_bytes` request bytes in flight.
    pub fn new(max_calls: usize, max_items: usize, max_request_bytes: usize) -> Self {
        Self {
            inner: Arc::new(Inner {
                calls: Arc::new(Semaphore::new(max_calls)),
                max_calls,
                items: Arc::new(Semaphore::new(max_items)),
                max_items,
                bytes: Arc::new(Semaphore::new(max_request_bytes)),
                connections_holding: AtomicUsize::new(0),
            }),
        }
    }

    /// Reserve `bytes` more request bytes, if that many are free.
    pub fn reserve_bytes(&self, bytes: usize) -> Result<OwnedSemaphorePermit, Status> {
        let count = u32::try_from(bytes).map_err(|_| statuses::request_bytes_limit())?;
        self.inner
            .bytes
            .clone()
            .try_acquire_many_owned(count)
            .map_err(|_| statuses::request_bytes_limit())
    }

    /// Refuse at once if no call slot or no item of work is free now, before
    /// a request is read any further (a hint, not a reservation: the call is
    /// admitted, or not, by [`Admission::admit`] once its request is in).
    pub fn precheck(&self) -> Result<(), Status> {
        if self.inner.calls.available_permits() == 0 {
            return Err(statuses::call_limit());
        }
        if self.inner.items.available_permits() == 0 {
            return Err(statuses::work_limit());
        }
        Ok(())
    }

    /// Admit a call of `items` items of work from `connection` (`None` for a
    /// request that came through no connection loop), or refuse it.
    pub fn admit(
        &self,
        connection: Option<&Arc<ConnectionState>>,
        items: u64,
    ) -> Result<Admitted, Status> {
        let inner = &self.inner;
        if items > inner.max_items as u64 {
            return Err(statuses::work_too_large(items, inner.max_items));
        }
        let share = ShareGuard::take(inner.clone(), connection)?;
        let call = inner
            .calls
            .clone()
            .try_acquire_owned()
            .map_err(|_| statuses::call_limit())?;
        let items = match u32::try_from(items) {
            Ok(0) => None,
            Ok(count) => Some(
                inner
                    .items
                    .clone()
                    .try_acquire_many_owned(count)
                    .map_err(|_| statuses::work_limit())?,
            ),
            Err(_) => return Err(statuses::work_too_large(items, inner.max_items)),
        };
        Ok(Admitted {
            _call: call,
            _items: items,
            _share: share,
        })
    }

    /// Call slots free now (for tests and figures).
    pub fn free_calls(&self) -> usize {
        self.inner.calls.available_permits()
    }

    /// Items of work free now (for tests and figures).
    pub fn free_items(&self) -> usize {
        self.inner.items.available_permits()
    }

    /// Request bytes free now (for tests and figures).
    pub fn free_request_bytes(&self) -> usize {
        self.inner.bytes.available_permits()
    }
}

/// One slot counted against a connection's fair share, until dropped.
#[derive(Debug)]
struct ShareGuard {
    inner: Arc<Inner>,
    connection: Option<Arc<ConnectionState>>,
}

impl ShareGuard {
    /// Count one more slot for `connection`, if its share allows.
    fn take(inner: Arc<Inner>, connection: Option<&Arc<ConnectionState>>) -> Result<Self, Status> {
        let Some(connection) = connection else {
            return Ok(Self {
                inner,
                connection: None,
            });
        };
        let held_before = connection.slots_held.fetch_add(1, Ordering::AcqRel);
        if held_before == 0 {
            inner.connections_holding.fetch_add(1, Ordering::AcqRel);
        }
        let guard = Self {
            inner: inner.clone(),
            connection: Some(connection.clone()),
        };
        let holding = inner.connections_holding.load(Ordering::Acquire);
        let share = fair_share(inner.max_calls, holding);
        if held_before + 1 > share {
            // Dropping the guard gives the slot back.
            return Err(statuses::connection_share(share));
        }
        Ok(guard)
    }
}

impl Drop for ShareGuard {
    fn drop(&mut self) {
        if let Some(connection) = &self.connection {
            if connection.slots_held.fetch_sub(1, Ordering::AcqRel) == 1 {
                self.inner
                    .connections_holding
                    .fetch_sub(1, Ordering::AcqRel);
            }
        }
    }
}

/// The slots one connection may hold when `holding` connections hold some.
pub fn fair_share(max_calls: usize, holding: usize) -> usize {
    (max_calls / holding.max(FAIR_SHARE_MIN_CONNECTIONS)).max(1)
}

#[cfg(test)]
mod tests {
    use super::*;
    use tonic::Code;

    #[test]
    fn a_lone_connection_gets_half_and_many_share_equally() {
        assert_eq!(fair_share(64, 1), 32);
        assert_eq!(fair_share(64, 2), 32);
        assert_eq!(fair_share(64, 4), 16);
        assert_eq!(fair_share(64, 100), 1);
        assert_eq!(fair_share(1, 1), 1);
    }

    #[test]
    fn one_connection_cannot_take_every_slot() {
        let admission = Admission::new(8, 1_000, 1 << 20);
        let greedy = ConnectionState::detached();
        let held: Vec<_> = (0..4)
            .map(|_| admission.admit(Some(&greedy), 1).expect("within its share"))
            .collect();
        let refused = admission.admit(Some(&greedy), 1).unwrap_err();
        assert_eq!(refused.code(), Code::ResourceExhausted);
        assert!(refused.message().contains("share"), "{refused:?}");
        // A second connection still gets slots.
        let other = ConnectionState::detached();
        let _theirs = admission
            .admit(Some(&other), 1)
            .expect("a newcomer is served");
        drop(held);
        assert_eq!(admission.free_calls(), 7);
    }

    #[test]
    fn work_is_counted_and_given_back() {
        let admission = Admission::new(8, 100, 1 << 20);
        let batch = admission.admit(None, 60).expect("60 of 100 items");
        assert_eq!(admission.free_items(), 40);
        let refused = admission.admit(None, 50).unwrap_err();
        assert!(
            refused.message().contains("computing as many items"),
            "{refused:?}"
        );
        let too_large = admission.admit(None, 101).unwrap_err();
        assert!(too_large.message().contains("101 items"), "{too_large:?}");
        drop(batch);
        assert_eq!(admission.free_items(), 100);
        assert_eq!(admission.free_calls(), 8);
    }

    #[test]
    fn request_bytes_are_reserved_up_to_the_limit() {
        let admission = Admission::new(8, 100, 1000);
        let first = admission.reserve_bytes(700).expect("700 of 1000");
        assert!(admission.reserve_bytes(400).is_err());
        drop(first);
        assert_eq!(admission.free_request_bytes(), 1000);
    }
}
