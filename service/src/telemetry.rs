//! Logs, traces and metrics: one subscriber for the process, plain or JSON,
//! with an `EnvFilter`; OpenTelemetry traces and metrics exported by OTLP over
//! gRPC when the standard `OTEL_*` variables name an endpoint.
//!
//! Patient values never reach logs at info level or above, nor any span or
//! metric: the service records methods, statuses, latencies, request and trace
//! ids, model ids, warning codes and field paths, never request or response
//! bodies. Only the per-call server span (target [`CALL_SPAN_TARGET`]) goes to
//! the trace exporter; events logged inside a call never do.

use opentelemetry::{trace::TracerProvider as _, KeyValue};
use opentelemetry_sdk::{metrics::SdkMeterProvider, trace::SdkTracerProvider, Resource};
use tracing_appender::non_blocking::NonBlocking;
use tracing_subscriber::{
    filter::{filter_fn, FilterExt},
    layer::SubscriberExt,
    registry::LookupSpan,
    util::SubscriberInitExt,
    EnvFilter, Layer,
};

pub use crate::instruments::{
    record_batch_items, record_model, record_refused_input, record_warnings, traces_exported,
    without_indices, CALL_LOG_TARGET, CALL_SPAN_TARGET, DURATION_BUCKETS_S, INSTRUMENTATION_SCOPE,
};
use crate::{config::LogFormat, log_queue::LogQueue};

/// `service.name` when `OTEL_SERVICE_NAME` does not set one.
pub const DEFAULT_SERVICE_NAME: &str = "oxbind-server";

/// The log queue and the exporters [`init`] started; call
/// [`Telemetry::shutdown`] before the process exits so the last log lines,
/// spans and metrics are written and sent.
#[derive(Debug, Default)]
pub struct Telemetry {
    log_queue: Option<LogQueue>,
    tracer_provider: Option<SdkTracerProvider>,
    meter_provider: Option<SdkMeterProvider>,
}

impl Telemetry {
    /// Record the last count of dropped log lines, flush and stop the
    /// exporters, then write out the log queue. Blocks while the last batch
    /// is sent: call it from a blocking thread (e.g.
    /// `tokio::task::spawn_blocking`).
    pub fn shutdown(mut self) {
        if let Some(queue) = self.log_queue.as_mut() {
            queue.report_last();
        }
        if let Some(provider) = self.tracer_provider {
            if let Err(error) = provider.shutdown() {
                tracing::warn!(%error, "trace exporter did not shut down cleanly");
            }
        }
        if let Some(provider) = self.meter_provider {
            if let Err(error) = provider.shutdown() {
                tracing::warn!(%error, "metric exporter did not shut down cleanly");
            }
        }
        if let Some(queue) = self.log_queue {
            queue.close();
        }
    }
}

/// What the `OTEL_*` environment asks for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct ExportPlan {
    traces: bool,
    metrics: bool,
}

impl ExportPlan {
    /// Read the plan from an environment lookup (`OTEL_SDK_DISABLED`, the
    /// endpoint variables, and `OTEL_{TRACES,METRICS}_EXPORTER=none`).
    fn from_env(var: impl Fn(&str) -> Option<String>) -> Self {
        let set = |name: &str| var(name).is_some_and(|v| !v.trim().is_empty());
        if var("OTEL_SDK_DISABLED").is_some_and(|v| v.trim().eq_ignore_ascii_case("true")) {
            return Self {
                traces: false,
                metrics: false,
            };
        }
        let not_none = |name: &str| var(name).is_none_or(|v| v.trim() != "none");
        let any_endpoint = set("OTEL_EXPORTER_OTLP_ENDPOINT");
        Self {
            traces: (any_endpoint || set("OTEL_EXPORTER_OTLP_TRACES_ENDPOINT"))
                && not_none("OTEL_TRACES_EXPORTER"),
            metrics: (any_endpoint || set("OTEL_EXPORTER_OTLP_METRICS_ENDPOINT"))
                && not_none("OTEL_METRICS_EXPORTER"),
        }
    }
}

/// Install the global tracing subscriber, writing to standard error through
/// a queue of at most `log_queue_lines` lines ([`crate::log_queue`]), and,
/// when the `OTEL_*` variables name an OTLP endpoint, the trace and metric
/// exporters.
///
/// Call once, from the binary, inside the Tokio runtime. The filter has been
/// validated by the config parser; should it still fail here, the default
/// filter is used. Exporter set-up failures are logged and leave that signal
/// off; they never stop the service.
pub fn init(format: LogFormat, filter: &str, log_queue_lines: usize) -> Telemetry {
    let plan = ExportPlan::from_env(|name| std::env::var(name).ok());
    let resource = plan
        .traces
        .then(resource)
        .or_else(|| plan.metrics.then(resource));

    let mut problems = Vec::new();
    let tracer_provider = match (&resource, plan.traces) {
        (Some(resource), true) => match opentelemetry_otlp::SpanExporter::builder()
            .with_tonic()
            .build()
        {
            Ok(exporter) => Some(
                SdkTracerProvider::builder()
                    .with_batch_exporter(exporter)
                    .with_resource(resource.clone())
                    .build(),
            ),
            Err(error) => {
                problems.push(format!("trace exporter: {error}"));
                None
            }
        },
        _ => None,
    };
    let meter_provider = match (&resource, plan.metrics) {
        (Some(resource), true) => match opentelemetry_otlp::MetricExporter::builder()
            .with_tonic()
            .build()
        {
            Ok(exporter) => Some(
                SdkMeterProvider::builder()
                    .with_periodic_exporter(exporter)
                    .with_resource(resource.clone())
                    .build(),
            ),
            Err(error) => {
                problems.push(format!("metric exporter: {error}"));
                None
            }
        },
        _ => None,
    };

    let (writer, mut log_queue) = LogQueue::new(std::io::stderr(), log_queue_lines);
    log_queue.watch();

    // The log does not take the per-call span: its fields are on the call's
    // own log line, and a span the log took would be formatted on every call
    // (and again on every field recorded) for lines that almost never come.
    match &tracer_provider {
        // Without trace export nobody takes the span, so one filter for the
        // whole process turns it off with everything the level filter drops:
        // those callsites are then off for good, and cost nothing per call.
        None => tracing_subscriber::registry()
            .with(log_filter(filter, false))
            .with(fmt_layer(format, writer))
            .init(),
        // Only the per-call span is exported: events (which might one day
        // carry a value at debug level) and other spans stay out of the
        // traces.
        Some(provider) => {
            let not_call_span =
                filter_fn(|meta| !(meta.is_span() && meta.target() == CALL_SPAN_TARGET));
            let otel_layer = tracing_opentelemetry::layer()
                .with_tracer(provider.tracer(INSTRUMENTATION_SCOPE))
                .with_location(false)
                .with_threads(false)
                .with_level(false)
                .with_target(false)
                .with_filter(filter_fn(|meta| {
                    meta.is_span() && meta.target() == CALL_SPAN_TARGET
                }));
            tracing_subscriber::registry()
                .with(
                    fmt_layer(format, writer)
                        .with_filter(log_filter(filter, true).and(not_call_span)),
                )
                .with(otel_layer)
                .init();
        }
    }

    if let Some(provider) = &meter_provider {
        opentelemetry::global::set_meter_provider(provider.clone());
    }
    crate::instruments::set_traces_exported(tracer_provider.is_some());

    for problem in problems {
        tracing::error!(%problem, "cannot set up OpenTelemetry export; that signal is off");
    }
    match (tracer_provider.is_some(), meter_provider.is_some()) {
        (false, false) => tracing::info!(
            "no OTLP endpoint configured (OTEL_EXPORTER_OTLP_ENDPOINT); traces and metrics are not exported"
        ),
        (traces, metrics) => tracing::info!(traces, metrics, "exporting telemetry by OTLP/gRPC"),
    }

    Telemetry {
        log_queue: Some(log_queue),
        tracer_provider,
        meter_provider,
    }
}

/// The log's level filter from `--log-filter` (validated by the config
/// parser; should it still fail here, the default), with the per-call span
/// turned off unless `keep_call_span` (for the trace exporter).
fn log_filter(filter: &str, keep_call_span: bool) -> EnvFilter {
    let filter = EnvFilter::try_new(filter)
        .unwrap_or_else(|_| EnvFilter::new(crate::config::DEFAULT_LOG_FILTER));
    if keep_call_span {
        filter
    } else {
        let off = format!("{CALL_SPAN_TARGET}=off")
            .parse()
            .expect("a target directive parses");
        filter.add_directive(off)
    }
}

/// The log line formatter, plain or JSON, writing to `writer`.
fn fmt_layer<S>(format: LogFormat, writer: NonBlocking) -> Box<dyn Layer<S> + Send + Sync>
where
    S: tracing::Subscriber + for<'a> LookupSpan<'a>,
{
    match format {
        LogFormat::Plain => tracing_subscriber::fmt::layer()
            .with_writer(writer)
            .with_ansi(colour_on_stderr())
            .boxed(),
        LogFormat::Json => tracing_subscriber::fmt::layer()
            .json()
            .flatten_event(true)
            .with_writer(writer)
            .boxed(),
    }
}

/// Whether plain log lines may carry ANSI colour codes: only when standard
/// error is a terminal, so a file, a pipe or a log collector gets plain text.
fn colour_on_stderr() -> bool {
    use std::io::IsTerminal;
    std::io::stderr().is_terminal()
}

/// The service's resource: `OTEL_SERVICE_NAME` and `OTEL_RESOURCE_ATTRIBUTES`
/// as the SDK reads them, `service.name` defaulting to
/// [`DEFAULT_SERVICE_NAME`], and `service.version`.
fn resource() -> Resource {
    let builder = Resource::builder();
    let builder = if std::env::var_os("OTEL_SERVICE_NAME").is_some() {
        builder
    } else {
        builder.with_service_name(DEFAULT_SERVICE_NAME)
    };
    builder
        .with_attribute(KeyValue::new(
            "service.version",
            crate::identity::SERVICE_VERSION,
        ))
        .build()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn env<'a>(pairs: &'a [(&'a str, &'a str)]) -> impl Fn(&str) -> Option<String> + 'a {
        move |name| {
            pairs
                .iter()
                .find(|(k, _)| *k == name)
                .map(|(_, v)| (*v).to_owned())
        }
    }

    #[test]
    fn no_endpoint_exports_nothing() {
        let plan = ExportPlan::from_env(env(&[]));
        assert_eq!(
            plan,
            ExportPlan {
                traces: false,
                metrics: false
            }
        );
    }

    #[test]
    fn the_common_endpoint_turns_on_both_signals_unless_disabled() {
        let endpoint = ("OTEL_EXPORTER_OTLP_ENDPOINT", "http://collector:4317");
        let plan = ExportPlan::from_env(env(&[endpoint]));
        assert!(plan.traces && plan.metrics);
        let plan = ExportPlan::from_env(env(&[endpoint, ("OTEL_SDK_DISABLED", "TRUE")]));
        assert!(!plan.traces && !plan.metrics);
        let plan = ExportPlan::from_env(env(&[endpoint, ("OTEL_METRICS_EXPORTER", "none")]));
        assert!(plan.traces && !plan.metrics);
    }

    #[test]
    fn a_signal_endpoint_turns_on_only_that_signal() {
        let plan = ExportPlan::from_env(env(&[(
            "OTEL_EXPORTER_OTLP_TRACES_ENDPOINT",
            "http://collector:4317",
        )]));
        assert!(plan.traces && !plan.metrics);
    }
}
