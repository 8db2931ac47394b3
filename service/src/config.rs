//! Server configuration: one typed struct, parsed once from flags and
//! `OXBIND_*` environment variables, each with a named, typed default.
//!
//! Invalid configuration is refused before anything binds; the binary exits
//! with [`EXIT_CONFIG_INVALID`] and a message that names the setting.

use std::{net::SocketAddr, time::Duration};

use clap::{Parser, ValueEnum};

/// Exit status for invalid configuration (`EX_USAGE` from BSD `sysexits.h`).
pub const EXIT_CONFIG_INVALID: i32 = 64;

/// Default listen address: loopback only, so a bare start exposes nothing.
pub const DEFAULT_LISTEN: &str = "127.0.0.1:50051";

/// Default log filter (`tracing-subscriber` `EnvFilter` syntax).
pub const DEFAULT_LOG_FILTER: &str = "info";

/// Default time calls in flight get to finish after a shutdown signal.
pub const DEFAULT_SHUTDOWN_GRACE: Duration = Duration::from_secs(10);

/// Default largest number of items in one batch request.
pub const DEFAULT_MAX_BATCH_ITEMS: usize = 10_000;

/// Environment variable for [`Config::listen`].
pub const ENV_LISTEN: &str = "OXBIND_LISTEN";
/// Environment variable for [`Config::log_format`].
pub const ENV_LOG_FORMAT: &str = "OXBIND_LOG_FORMAT";
/// Environment variable for [`Config::log_filter`].
pub const ENV_LOG_FILTER: &str = "OXBIND_LOG_FILTER";
/// Environment variable for [`Config::shutdown_grace`].
pub const ENV_SHUTDOWN_GRACE: &str = "OXBIND_SHUTDOWN_GRACE";
/// Environment variable for [`Config::max_batch_items`].
pub const ENV_MAX_BATCH_ITEMS: &str = "OXBIND_MAX_BATCH_ITEMS";

/// How log lines are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum LogFormat {
    /// Human-readable lines.
    Plain,
    /// One JSON object per line.
    Json,
}

/// The server's configuration.
#[derive(Debug, Clone, Parser)]
#[command(
    name = "oxbind-server",
    version,
    about = "Oxbind: oxygen-haemoglobin dissociation calculations over gRPC (decision support only)"
)]
pub struct Config {
    /// Address and port to listen on.
    #[arg(long, env = ENV_LISTEN, default_value = DEFAULT_LISTEN, value_name = "ADDR")]
    pub listen: SocketAddr,

    /// Log line format.
    #[arg(long, env = ENV_LOG_FORMAT, value_enum, default_value_t = LogFormat::Plain)]
    pub log_format: LogFormat,

    /// Log filter, e.g. `info` or `oxbind_service=debug,info`.
    #[arg(long, env = ENV_LOG_FILTER, default_value = DEFAULT_LOG_FILTER, value_name = "FILTER",
          value_parser = parse_log_filter)]
    pub log_filter: String,

    /// Time calls in flight get to finish after SIGTERM or SIGINT (e.g. `10s`, `500ms`).
    #[arg(long, env = ENV_SHUTDOWN_GRACE, default_value = "10s", value_name = "DURATION",
          value_parser = parse_duration)]
    pub shutdown_grace: Duration,

    /// Largest number of items accepted in one batch request.
    #[arg(long, env = ENV_MAX_BATCH_ITEMS, default_value_t = DEFAULT_MAX_BATCH_ITEMS,
          value_name = "COUNT", value_parser = parse_batch_limit)]
    pub max_batch_items: usize,
}

impl Config {
    /// Parse from the process's arguments and environment.
    ///
    /// `--help` and `--version` print and exit 0; anything invalid prints the
    /// reason (naming the setting) and exits with [`EXIT_CONFIG_INVALID`].
    pub fn from_env_and_args() -> Self {
        match Self::try_parse() {
            Ok(config) => config,
            Err(error) => {
                use clap::error::ErrorKind;
                if matches!(
                    error.kind(),
                    ErrorKind::DisplayHelp | ErrorKind::DisplayVersion
                ) {
                    error.exit();
                }
                let _ = error.print();
                std::process::exit(EXIT_CONFIG_INVALID);
            }
        }
    }
}

impl Default for Config {
    fn default() -> Self {
        Self {
            listen: DEFAULT_LISTEN
                .parse()
                .expect("the default listen address parses"),
            log_format: LogFormat::Plain,
            log_filter: DEFAULT_LOG_FILTER.to_owned(),
            shutdown_grace: DEFAULT_SHUTDOWN_GRACE,
            max_batch_items: DEFAULT_MAX_BATCH_ITEMS,
        }
    }
}

fn parse_duration(text: &str) -> Result<Duration, String> {
    humantime::parse_duration(text).map_err(|e| format!("not a duration such as `10s` ({e})"))
}

fn parse_log_filter(text: &str) -> Result<String, String> {
    tracing_subscriber::EnvFilter::try_new(text)
        .map(|_| text.to_owned())
        .map_err(|e| format!("not a log filter ({e})"))
}

fn parse_batch_limit(text: &str) -> Result<usize, String> {
    let limit: usize = text
        .parse()
        .map_err(|e| format!("not a whole number ({e})"))?;
    if limit == 0 {
        return Err("must be at least 1".to_owned());
    }
    Ok(limit)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_match_the_named_constants() {
        let parsed = Config::try_parse_from(["oxbind-server"]).unwrap();
        let default = Config::default();
        assert_eq!(parsed.listen, default.listen);
        assert_eq!(parsed.shutdown_grace, DEFAULT_SHUTDOWN_GRACE);
        assert_eq!(parsed.max_batch_items, DEFAULT_MAX_BATCH_ITEMS);
        assert_eq!(parsed.log_format, LogFormat::Plain);
    }

    #[test]
    fn a_bad_listen_address_is_refused_naming_the_flag() {
        let error = Config::try_parse_from(["oxbind-server", "--listen", "nowhere"]).unwrap_err();
        assert!(error.to_string().contains("--listen"), "{error}");
    }

    #[test]
    fn grace_period_parses_human_durations() {
        let parsed =
            Config::try_parse_from(["oxbind-server", "--shutdown-grace", "1500ms"]).unwrap();
        assert_eq!(parsed.shutdown_grace, Duration::from_millis(1500));
    }
}
