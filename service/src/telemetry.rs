//! Log set-up: one subscriber for the process, plain or JSON, with an
//! `EnvFilter`.
//!
//! Patient values never reach logs at info level or above: the service logs
//! methods, statuses and latencies, never request or response bodies.

use tracing_subscriber::{fmt, EnvFilter};

use crate::config::LogFormat;

/// Install the global tracing subscriber, writing to standard error.
///
/// Call once, from the binary. The filter has been validated by the config
/// parser; should it still fail here, the default filter is used.
pub fn init_tracing(format: LogFormat, filter: &str) {
    let filter = EnvFilter::try_new(filter)
        .unwrap_or_else(|_| EnvFilter::new(crate::config::DEFAULT_LOG_FILTER));
    let builder = fmt().with_env_filter(filter).with_writer(std::io::stderr);
    match format {
        LogFormat::Plain => builder.init(),
        LogFormat::Json => builder.json().flatten_event(true).init(),
    }
}
