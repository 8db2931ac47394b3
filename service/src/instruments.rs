//! The service's instruments: the names of the per-call span and log line,
//! the metric instruments, and the hooks that record on them.
//!
//! This module sits at the bottom of the crate: `api`, `layers`, `http` and
//! `telemetry` use it, and it uses nothing of theirs. [`crate::telemetry`]
//! installs the exporters these instruments report to (a no-op meter until
//! then), and re-exports everything here under its old paths.
//!
//! What is recorded is fixed names only: methods, statuses, model ids,
//! warning codes and field paths, never a request or response value.

use std::sync::{
    atomic::{AtomicBool, Ordering},
    OnceLock,
};

use opentelemetry::{
    metrics::{Counter, Histogram},
    KeyValue,
};

/// The `tracing` target of the one server span each call gets; the only spans
/// exported as OpenTelemetry traces.
pub const CALL_SPAN_TARGET: &str = "oxbind::call";

/// The `tracing` target of the one log line each call gets.
pub const CALL_LOG_TARGET: &str = "oxbind::access";

/// Instrumentation scope name of the service's tracer and meter.
pub const INSTRUMENTATION_SCOPE: &str = "oxbind";

/// Histogram bucket boundaries for `rpc.server.call.duration`, in seconds: the
/// boundaries the OpenTelemetry RPC semantic conventions advise.
pub const DURATION_BUCKETS_S: [f64; 14] = [
    0.005, 0.01, 0.025, 0.05, 0.075, 0.1, 0.25, 0.5, 0.75, 1.0, 2.5, 5.0, 7.5, 10.0,
];

/// Whether OpenTelemetry traces are exported (set once by
/// `telemetry::init`).
static TRACES_EXPORTED: AtomicBool = AtomicBool::new(false);

/// Whether `telemetry::init` installed an OpenTelemetry trace layer, so
/// per-call spans should join the caller's trace.
pub fn traces_exported() -> bool {
    TRACES_EXPORTED.load(Ordering::Relaxed)
}

/// Record whether traces are exported (`telemetry::init` calls it once).
pub(crate) fn set_traces_exported(exported: bool) {
    TRACES_EXPORTED.store(exported, Ordering::Relaxed);
}

/// The service's metric instruments, created once from the global meter (a
/// no-op meter when metrics are not exported).
pub(crate) struct Instruments {
    /// `rpc.server.call.duration`, seconds.
    pub(crate) call_duration: Histogram<f64>,
    /// `oxbind.server.calls`: calls by method and status.
    pub(crate) calls: Counter<u64>,
    /// `oxbind.batch.items`: batch items computed.
    pub(crate) batch_items: Counter<u64>,
    /// `oxbind.warnings`: warnings returned, by code.
    pub(crate) warnings: Counter<u64>,
    /// `oxbind.refused_inputs`: refused inputs, by field path.
    pub(crate) refused_inputs: Counter<u64>,
    /// `oxbind.server.panics`: handler panics answered INTERNAL.
    pub(crate) panics: Counter<u64>,
    /// `oxbind.server.connections.closed`: connections the server closed,
    /// by listener and reason.
    pub(crate) connections_closed: Counter<u64>,
}

/// The instruments; created on first use, after `telemetry::init` set the provider.
pub(crate) fn instruments() -> &'static Instruments {
    static INSTRUMENTS: OnceLock<Instruments> = OnceLock::new();
    INSTRUMENTS.get_or_init(|| {
        let meter = opentelemetry::global::meter(INSTRUMENTATION_SCOPE);
        Instruments {
            call_duration: meter
                .f64_histogram("rpc.server.call.duration")
                .with_unit("s")
                .with_description("Duration of server calls, from request headers to response end")
                .with_boundaries(DURATION_BUCKETS_S.to_vec())
                .build(),
            calls: meter
                .u64_counter("oxbind.server.calls")
                .with_unit("{call}")
                .with_description("Server calls by method and status")
                .build(),
            batch_items: meter
                .u64_counter("oxbind.batch.items")
                .with_unit("{item}")
                .with_description("Batch items computed, by method")
                .build(),
            warnings: meter
                .u64_counter("oxbind.warnings")
                .with_unit("{warning}")
                .with_description("Warnings returned, by warning code")
                .build(),
            refused_inputs: meter
                .u64_counter("oxbind.refused_inputs")
                .with_unit("{input}")
                .with_description("Inputs refused as invalid, by field path (never the value)")
                .build(),
            panics: meter
                .u64_counter("oxbind.server.panics")
                .with_unit("{panic}")
                .with_description("Handler panics caught and answered INTERNAL")
                .build(),
            connections_closed: meter
                .u64_counter("oxbind.server.connections.closed")
                .with_unit("{connection}")
                .with_description(
                    "Connections the server closed, by listener and reason (deadline, idle, age)",
                )
                .build(),
        }
    })
}

/// Count `items` batch items computed by `method` (the fully qualified gRPC
/// method, e.g. `oxbind.v1.DissociationService/BatchSaturationFromTension`).
///
/// A hook for the API layer; cheap (one counter add).
pub fn record_batch_items(method: &'static str, items: u64) {
    instruments()
        .batch_items
        .add(items, &[KeyValue::new("rpc.method", method)]);
}

/// Count the warnings a call returns, by code (the proto enum names, e.g.
/// `WARNING_CODE_OUTSIDE_VALIDATED_RANGE`), and put the codes on the current
/// call's span (attribute `oxbind.warning_codes`, comma-separated).
///
/// A hook for the API layer; codes are fixed names, never values.
pub fn record_warnings(codes: &[&'static str]) {
    if codes.is_empty() {
        return;
    }
    let instruments = instruments();
    for code in codes {
        instruments
            .warnings
            .add(1, &[KeyValue::new("oxbind.warning.code", *code)]);
    }
    tracing::Span::current().record("oxbind.warning_codes", codes.join(",").as_str());
}

/// Record the model a call used on the current call's span (attribute
/// `oxbind.model_id`).
///
/// A hook for the API layer; the model id is a fixed catalog name, never a
/// value.
pub fn record_model(model_id: &'static str) {
    tracing::Span::current().record("oxbind.model_id", model_id);
}

/// Count one handler panic caught and answered INTERNAL.
pub fn record_panic() {
    instruments().panics.add(1, &[]);
}

/// Count one connection the server closed on `listener` (`main`, `health`)
/// for `reason` (`preface_timeout`, `idle`, `max_age`, ...).
pub fn record_connection_closed(listener: &'static str, reason: &'static str) {
    instruments().connections_closed.add(
        1,
        &[
            KeyValue::new("oxbind.listener", listener),
            KeyValue::new("oxbind.reason", reason),
        ],
    );
}

/// Count one refused input at `field_path`; list indices are dropped
/// (`requests[3].po2` counts as `requests[].po2`) so the metric's cardinality
/// stays bounded. The value is never recorded.
pub fn record_refused_input(field_path: &str) {
    instruments().refused_inputs.add(
        1,
        &[KeyValue::new("oxbind.field", without_indices(field_path))],
    );
}

/// `field_path` with every list index removed: `a[12].b` becomes `a[].b`.
pub fn without_indices(field_path: &str) -> String {
    let mut out = String::with_capacity(field_path.len());
    let mut in_index = false;
    for c in field_path.chars() {
        match c {
            '[' => {
                in_index = true;
                out.push('[');
            }
            ']' => {
                in_index = false;
                out.push(']');
            }
            _ if in_index => {}
            _ => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn field_paths_lose_their_indices() {
        assert_eq!(without_indices("requests[3].po2"), "requests[].po2");
        assert_eq!(
            without_indices("condition_sets[12].ph"),
            "condition_sets[].ph"
        );
        assert_eq!(without_indices("po2"), "po2");
    }
}
