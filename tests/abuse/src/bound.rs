//! The documented bound on the server's resident memory (RELIABILITY.md,
//! "Memory bound"), as a function of its limits: what each thing the limits
//! allow can hold at most, measured on the release build, summed, plus an
//! allowance for the allocator keeping freed pages of one kind of work while
//! another kind grows.
//!
//! The abuse suite checks the heaviest mix against it; the Kubernetes
//! Deployment's memory request and limit are sized from it.

/// What the limits allow at once.
#[derive(Debug, Clone, Copy)]
pub struct Limits {
    /// `--max-connections`.
    pub max_connections: u64,
    /// `--max-concurrent-streams` (per connection, main listener).
    pub max_concurrent_streams: u64,
    /// `--max-health-connections`.
    pub max_health_connections: u64,
    /// Streams per connection on the health listener (fixed: 8).
    pub health_streams: u64,
    /// `--max-streaming-calls`, for each of the two listeners.
    pub max_streaming_calls: u64,
    /// `--max-request-bytes-in-flight`.
    pub max_request_bytes_in_flight: u64,
    /// `--max-items-in-flight`.
    pub max_items_in_flight: u64,
}

impl Limits {
    /// The server's defaults.
    pub fn defaults() -> Self {
        Self {
            max_connections: 256,
            max_concurrent_streams: 16,
            max_health_connections: 64,
            health_streams: 8,
            max_streaming_calls: 8,
            max_request_bytes_in_flight: 16 * 1024 * 1024,
            max_items_in_flight: 40_000,
        }
    }
}

/// The server at rest, its threads started (measured 15 to 17 MiB).
pub const IDLE_MIB: f64 = 20.0;

/// One open connection with nothing in progress, TLS included (measured:
/// 43 KiB plaintext, 61 KiB with mutual TLS).
pub const PER_CONNECTION_KIB: f64 = 64.0;

/// One stream waiting for its request with the largest headers allowed
/// (8 KiB; measured up to 17 KiB a stream).
pub const PER_WAITING_STREAM_KIB: f64 = 20.0;

/// One streaming call whose client reads nothing: its unread requests up to
/// the HTTP/2 stream window (1 MiB), its queued answer and the send buffer
/// (400 KiB) (measured about 0.9 MiB).
pub const PER_STREAMING_CALL_KIB: f64 = 1_600.0;

/// One admitted item of work, at its heaviest (a blood gas with the
/// provenance on its answer): its decoded request, its result, its share
/// of the encoded answer (in a buffer grown by doubling), and the
/// allocator's keeping of them (measured up to 7.3 KiB, request bytes
/// included).
pub const PER_ITEM_KIB: f64 = 8.0;

/// Allowance over the sum: for the allocator when every kind of work runs
/// at once (the heaviest mix measured came to 1.12 times the sum of its
/// parts measured alone, and to 0.89 times the sum of the rounded-up costs
/// above) and for runs heavier than the ones measured.
pub const MIX_ALLOWANCE: f64 = 1.1;

/// The bound, MiB.
pub fn memory_bound_mib(limits: &Limits) -> f64 {
    let kib = |k: f64| k / 1024.0;
    let connections = (limits.max_connections + limits.max_health_connections) as f64;
    let waiting_streams = (limits.max_connections * limits.max_concurrent_streams
        + limits.max_health_connections * limits.health_streams) as f64;
    let sum = IDLE_MIB
        + connections * kib(PER_CONNECTION_KIB)
        + waiting_streams * kib(PER_WAITING_STREAM_KIB)
        + 2.0 * limits.max_streaming_calls as f64 * kib(PER_STREAMING_CALL_KIB)
        + limits.max_request_bytes_in_flight as f64 / (1024.0 * 1024.0)
        + limits.max_items_in_flight as f64 * kib(PER_ITEM_KIB);
    sum * MIX_ALLOWANCE
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_default_bound_is_the_documented_one() {
        let bound = memory_bound_mib(&Limits::defaults());
        // RELIABILITY.md: 532 MiB at the defaults, under the Deployment's
        // memory request (544 MiB) and limit (704 MiB).
        assert!((bound - 532.0).abs() < 1.0, "{bound}");
    }
}
