//! Server configuration: one typed struct, parsed once from flags and
//! `OXBIND_*` environment variables, each with a named, typed default.
//!
//! Invalid configuration is refused before anything binds; the binary exits
//! with [`EXIT_CONFIG_INVALID`] and a message that names the setting.

use std::{net::SocketAddr, path::PathBuf, time::Duration};

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

/// Default largest request message accepted after decompression, in bytes
/// (4 MiB, tonic's own default). A full batch of [`DEFAULT_MAX_BATCH_ITEMS`]
/// items is well under it.
pub const DEFAULT_MAX_DECODED_MESSAGE_BYTES: usize = 4 * 1024 * 1024;

/// Default largest response message the server sends, in bytes (32 MiB: room
/// for a full batch's results with their provenance).
pub const DEFAULT_MAX_ENCODED_MESSAGE_BYTES: usize = 32 * 1024 * 1024;

/// Default longest time a call may take; a shorter `grpc-timeout` from the
/// caller wins.
pub const DEFAULT_CALL_TIMEOUT: Duration = Duration::from_secs(10);

/// Default largest number of concurrent HTTP/2 streams (calls) on one
/// connection; gRPC clients queue further calls themselves. With
/// [`DEFAULT_MAX_CONNECTIONS`] it bounds what streams still waiting for their
/// request can hold (RELIABILITY.md, "Memory bound"), and it keeps one
/// connection to a quarter of [`DEFAULT_MAX_CONCURRENT_CALLS`].
pub const DEFAULT_MAX_CONCURRENT_STREAMS: u32 = 16;

/// Default largest number of calls in progress across the whole server; calls
/// past it are refused at once with RESOURCE_EXHAUSTED. Health checks are not
/// counted.
pub const DEFAULT_MAX_CONCURRENT_CALLS: usize = 64;

/// Default largest number of open client connections on the main listener;
/// further connections wait in the kernel's accept queue. A replica serves a
/// few integration engines, each with a few connections; more callers call
/// for more replicas. With [`DEFAULT_MAX_CONCURRENT_STREAMS`] it bounds the
/// streams the server holds (RELIABILITY.md, "Memory bound").
pub const DEFAULT_MAX_CONNECTIONS: usize = 256;

/// Default interval between HTTP/2 keepalive pings on an idle connection.
pub const DEFAULT_KEEPALIVE_INTERVAL: Duration = Duration::from_secs(30);

/// Default time to wait for a keepalive ping's answer before closing the
/// connection.
pub const DEFAULT_KEEPALIVE_TIMEOUT: Duration = Duration::from_secs(10);

/// Default time a client has to finish the TLS handshake after its TCP
/// connection is accepted; past it the connection is closed.
pub const DEFAULT_TLS_HANDSHAKE_TIMEOUT: Duration = Duration::from_secs(5);

/// Default time a client has, once connected (and past TLS), to send the
/// HTTP/2 connection preface (or, where HTTP/1.1 is spoken, its first request
/// head); past it the connection is closed.
pub const DEFAULT_PREFACE_TIMEOUT: Duration = Duration::from_secs(5);

/// Default time a connection may stay open with no call in progress before
/// the server closes it with a graceful GOAWAY. Keepalive pings do not count
/// as calls.
pub const DEFAULT_IDLE_TIMEOUT: Duration = Duration::from_secs(60);

/// Default longest life of a connection: past it (give or take a tenth, so
/// that connections opened together do not all close together) the server
/// sends a graceful GOAWAY, and the client reconnects, possibly to another
/// replica.
pub const DEFAULT_MAX_CONNECTION_AGE: Duration = Duration::from_secs(5 * 60);

/// Default time calls in progress on a connection get to finish after its
/// maximum age's GOAWAY; then the connection is closed.
pub const DEFAULT_MAX_CONNECTION_AGE_GRACE: Duration = Duration::from_secs(30);

/// Default largest number of open connections on the plaintext health
/// listener (a kubelet probe opens one per check and closes it).
pub const DEFAULT_MAX_HEALTH_CONNECTIONS: usize = 64;

/// Default largest number of streaming calls (server reflection, health
/// Watch) in progress at once; they never take the unary call slots.
pub const DEFAULT_MAX_STREAMING_CALLS: usize = 8;

/// Default time a streaming call may pass no message either way before the
/// server ends it.
pub const DEFAULT_STREAMING_IDLE_TIMEOUT: Duration = Duration::from_secs(30);

/// Default time a unary call's request (its headers, its one message and the
/// end of the stream) has to arrive; past it the call ends with
/// DEADLINE_EXCEEDED. A call takes no call slot until its request is in.
pub const DEFAULT_REQUEST_ARRIVAL_TIMEOUT: Duration = Duration::from_secs(5);

/// Default largest number of request bytes the server holds at once for
/// calls whose request is arriving or in progress (16 MiB: four requests at
/// the message limit). Past it a call is refused at once with
/// RESOURCE_EXHAUSTED.
pub const DEFAULT_MAX_REQUEST_BYTES_IN_FLIGHT: usize = 16 * 1024 * 1024;

/// Default largest amount of work admitted at once, in items: a batch counts
/// its items, EstimateP50 its pairs, SampleCurve one per 100 points, any
/// other call one. 40,000 is four full batches at the default batch limit.
pub const DEFAULT_MAX_ITEMS_IN_FLIGHT: usize = 40_000;

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
/// Environment variable for [`Config::tls_cert`].
pub const ENV_TLS_CERT: &str = "OXBIND_TLS_CERT";
/// Environment variable for [`Config::tls_key`].
pub const ENV_TLS_KEY: &str = "OXBIND_TLS_KEY";
/// Environment variable for [`Config::client_ca`].
pub const ENV_CLIENT_CA: &str = "OXBIND_CLIENT_CA";
/// Environment variable for [`Config::health_listen`].
pub const ENV_HEALTH_LISTEN: &str = "OXBIND_HEALTH_LISTEN";
/// Environment variable for [`Config::no_reflection`].
pub const ENV_NO_REFLECTION: &str = "OXBIND_NO_REFLECTION";
/// Environment variable for [`Config::max_decoded_message_bytes`].
pub const ENV_MAX_DECODED_MESSAGE_BYTES: &str = "OXBIND_MAX_DECODED_MESSAGE_BYTES";
/// Environment variable for [`Config::max_encoded_message_bytes`].
pub const ENV_MAX_ENCODED_MESSAGE_BYTES: &str = "OXBIND_MAX_ENCODED_MESSAGE_BYTES";
/// Environment variable for [`Config::call_timeout`].
pub const ENV_CALL_TIMEOUT: &str = "OXBIND_CALL_TIMEOUT";
/// Environment variable for [`Config::max_concurrent_streams`].
pub const ENV_MAX_CONCURRENT_STREAMS: &str = "OXBIND_MAX_CONCURRENT_STREAMS";
/// Environment variable for [`Config::max_concurrent_calls`].
pub const ENV_MAX_CONCURRENT_CALLS: &str = "OXBIND_MAX_CONCURRENT_CALLS";
/// Environment variable for [`Config::max_connections`].
pub const ENV_MAX_CONNECTIONS: &str = "OXBIND_MAX_CONNECTIONS";
/// Environment variable for [`Config::keepalive_interval`].
pub const ENV_KEEPALIVE_INTERVAL: &str = "OXBIND_KEEPALIVE_INTERVAL";
/// Environment variable for [`Config::keepalive_timeout`].
pub const ENV_KEEPALIVE_TIMEOUT: &str = "OXBIND_KEEPALIVE_TIMEOUT";
/// Environment variable for [`Config::grpc_web`].
pub const ENV_GRPC_WEB: &str = "OXBIND_GRPC_WEB";
/// Environment variable for [`Config::cors_allowed_origins`].
pub const ENV_CORS_ALLOWED_ORIGINS: &str = "OXBIND_CORS_ALLOWED_ORIGINS";
/// Environment variable for [`Config::tls_handshake_timeout`].
pub const ENV_TLS_HANDSHAKE_TIMEOUT: &str = "OXBIND_TLS_HANDSHAKE_TIMEOUT";
/// Environment variable for [`Config::preface_timeout`].
pub const ENV_PREFACE_TIMEOUT: &str = "OXBIND_PREFACE_TIMEOUT";
/// Environment variable for [`Config::idle_timeout`].
pub const ENV_IDLE_TIMEOUT: &str = "OXBIND_IDLE_TIMEOUT";
/// Environment variable for [`Config::max_connection_age`].
pub const ENV_MAX_CONNECTION_AGE: &str = "OXBIND_MAX_CONNECTION_AGE";
/// Environment variable for [`Config::max_connection_age_grace`].
pub const ENV_MAX_CONNECTION_AGE_GRACE: &str = "OXBIND_MAX_CONNECTION_AGE_GRACE";
/// Environment variable for [`Config::max_health_connections`].
pub const ENV_MAX_HEALTH_CONNECTIONS: &str = "OXBIND_MAX_HEALTH_CONNECTIONS";
/// Environment variable for [`Config::max_streaming_calls`].
pub const ENV_MAX_STREAMING_CALLS: &str = "OXBIND_MAX_STREAMING_CALLS";
/// Environment variable for [`Config::streaming_idle_timeout`].
pub const ENV_STREAMING_IDLE_TIMEOUT: &str = "OXBIND_STREAMING_IDLE_TIMEOUT";
/// Environment variable for [`Config::request_arrival_timeout`].
pub const ENV_REQUEST_ARRIVAL_TIMEOUT: &str = "OXBIND_REQUEST_ARRIVAL_TIMEOUT";
/// Environment variable for [`Config::max_request_bytes_in_flight`].
pub const ENV_MAX_REQUEST_BYTES_IN_FLIGHT: &str = "OXBIND_MAX_REQUEST_BYTES_IN_FLIGHT";
/// Environment variable for [`Config::max_items_in_flight`].
pub const ENV_MAX_ITEMS_IN_FLIGHT: &str = "OXBIND_MAX_ITEMS_IN_FLIGHT";
/// Environment variable for [`Config::compute_threads`].
pub const ENV_COMPUTE_THREADS: &str = "OXBIND_COMPUTE_THREADS";

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

    /// PEM certificate chain the server presents; turns on TLS (needs `--tls-key`).
    #[arg(long, env = ENV_TLS_CERT, value_name = "FILE", requires = "tls_key")]
    pub tls_cert: Option<PathBuf>,

    /// PEM private key for `--tls-cert`.
    #[arg(long, env = ENV_TLS_KEY, value_name = "FILE", requires = "tls_cert")]
    pub tls_key: Option<PathBuf>,

    /// PEM CA certificate(s); turns on mutual TLS: a client without a
    /// certificate signed by one of them is refused during the handshake.
    #[arg(long, env = ENV_CLIENT_CA, value_name = "FILE", requires = "tls_cert")]
    pub client_ca: Option<PathBuf>,

    /// Second, plaintext listener serving only `grpc.health.v1` (for
    /// Kubernetes' gRPC probes, which do not speak TLS). Off when absent.
    #[arg(long, env = ENV_HEALTH_LISTEN, value_name = "ADDR")]
    pub health_listen: Option<SocketAddr>,

    /// Do not serve gRPC server reflection on the main listener (it is never
    /// served on the health listener).
    #[arg(long, env = ENV_NO_REFLECTION)]
    pub no_reflection: bool,

    /// Largest request message accepted, in bytes; larger ones get
    /// RESOURCE_EXHAUSTED.
    #[arg(long, env = ENV_MAX_DECODED_MESSAGE_BYTES, value_name = "BYTES",
          default_value_t = DEFAULT_MAX_DECODED_MESSAGE_BYTES, value_parser = parse_positive)]
    pub max_decoded_message_bytes: usize,

    /// Largest response message sent, in bytes; a larger one gets
    /// RESOURCE_EXHAUSTED.
    #[arg(long, env = ENV_MAX_ENCODED_MESSAGE_BYTES, value_name = "BYTES",
          default_value_t = DEFAULT_MAX_ENCODED_MESSAGE_BYTES, value_parser = parse_positive)]
    pub max_encoded_message_bytes: usize,

    /// Longest time one call may take (a shorter `grpc-timeout` wins); past it
    /// the call gets DEADLINE_EXCEEDED.
    #[arg(long, env = ENV_CALL_TIMEOUT, default_value = "10s", value_name = "DURATION",
          value_parser = parse_duration)]
    pub call_timeout: Duration,

    /// Largest number of concurrent calls (HTTP/2 streams) on one connection.
    #[arg(long, env = ENV_MAX_CONCURRENT_STREAMS, value_name = "COUNT",
          default_value_t = DEFAULT_MAX_CONCURRENT_STREAMS, value_parser = parse_positive_u32)]
    pub max_concurrent_streams: u32,

    /// Largest number of calls in progress on the whole server; past it calls
    /// are refused at once with RESOURCE_EXHAUSTED. Health checks are exempt.
    #[arg(long, env = ENV_MAX_CONCURRENT_CALLS, value_name = "COUNT",
          default_value_t = DEFAULT_MAX_CONCURRENT_CALLS, value_parser = parse_positive)]
    pub max_concurrent_calls: usize,

    /// Largest number of open connections on the main listener; more wait in
    /// the kernel's accept queue.
    #[arg(long, env = ENV_MAX_CONNECTIONS, value_name = "COUNT",
          default_value_t = DEFAULT_MAX_CONNECTIONS, value_parser = parse_positive)]
    pub max_connections: usize,

    /// Interval between HTTP/2 keepalive pings on a connection.
    #[arg(long, env = ENV_KEEPALIVE_INTERVAL, default_value = "30s", value_name = "DURATION",
          value_parser = parse_duration)]
    pub keepalive_interval: Duration,

    /// Time a keepalive ping may go unanswered before the connection is closed.
    #[arg(long, env = ENV_KEEPALIVE_TIMEOUT, default_value = "10s", value_name = "DURATION",
          value_parser = parse_duration)]
    pub keepalive_timeout: Duration,

    /// Also accept grpc-web (HTTP/1.1 and HTTP/2) for the unary calls, so a
    /// browser can call the service.
    #[arg(long, env = ENV_GRPC_WEB)]
    pub grpc_web: bool,

    /// Origins a browser may call from, with grpc-web or the Connect protocol
    /// (comma-separated, e.g. `https://dashboard.example.org`); none by
    /// default.
    #[arg(long, env = ENV_CORS_ALLOWED_ORIGINS, value_name = "ORIGINS", value_delimiter = ',',
          value_parser = parse_origin)]
    pub cors_allowed_origins: Vec<String>,

    /// Time a client has to finish the TLS handshake; past it the connection
    /// is closed.
    #[arg(long, env = ENV_TLS_HANDSHAKE_TIMEOUT, default_value = "5s", value_name = "DURATION",
          value_parser = parse_nonzero_duration)]
    pub tls_handshake_timeout: Duration,

    /// Time a client has, once connected, to send the HTTP/2 connection
    /// preface (or its first HTTP/1.1 request head); past it the connection
    /// is closed.
    #[arg(long, env = ENV_PREFACE_TIMEOUT, default_value = "5s", value_name = "DURATION",
          value_parser = parse_nonzero_duration)]
    pub preface_timeout: Duration,

    /// Time a connection may stay open with no call in progress (keepalive
    /// pings do not count) before the server closes it with a GOAWAY.
    #[arg(long, env = ENV_IDLE_TIMEOUT, default_value = "60s", value_name = "DURATION",
          value_parser = parse_nonzero_duration)]
    pub idle_timeout: Duration,

    /// Longest life of a connection (give or take a tenth); then a graceful
    /// GOAWAY, and the client reconnects, possibly to another replica.
    #[arg(long, env = ENV_MAX_CONNECTION_AGE, default_value = "5m", value_name = "DURATION",
          value_parser = parse_nonzero_duration)]
    pub max_connection_age: Duration,

    /// Time calls in progress get after a connection's maximum-age GOAWAY;
    /// then the connection is closed.
    #[arg(long, env = ENV_MAX_CONNECTION_AGE_GRACE, default_value = "30s",
          value_name = "DURATION", value_parser = parse_duration)]
    pub max_connection_age_grace: Duration,

    /// Largest number of open connections on the health listener; more wait
    /// in the kernel's accept queue.
    #[arg(long, env = ENV_MAX_HEALTH_CONNECTIONS, value_name = "COUNT",
          default_value_t = DEFAULT_MAX_HEALTH_CONNECTIONS, value_parser = parse_positive)]
    pub max_health_connections: usize,

    /// Largest number of streaming calls (server reflection, health Watch)
    /// at once; past it they are refused with RESOURCE_EXHAUSTED. They never
    /// take the unary call slots.
    #[arg(long, env = ENV_MAX_STREAMING_CALLS, value_name = "COUNT",
          default_value_t = DEFAULT_MAX_STREAMING_CALLS, value_parser = parse_positive)]
    pub max_streaming_calls: usize,

    /// Time a streaming call may pass no message either way before the
    /// server ends it (DEADLINE_EXCEEDED).
    #[arg(long, env = ENV_STREAMING_IDLE_TIMEOUT, default_value = "30s",
          value_name = "DURATION", value_parser = parse_nonzero_duration)]
    pub streaming_idle_timeout: Duration,

    /// Time a unary call's request (headers, its one message, end of stream)
    /// has to arrive; past it the call ends with DEADLINE_EXCEEDED. No call
    /// slot is taken until the request is in.
    #[arg(long, env = ENV_REQUEST_ARRIVAL_TIMEOUT, default_value = "5s",
          value_name = "DURATION", value_parser = parse_nonzero_duration)]
    pub request_arrival_timeout: Duration,

    /// Largest number of request bytes held at once for calls whose request
    /// is arriving or in progress; past it a call is refused with
    /// RESOURCE_EXHAUSTED.
    #[arg(long, env = ENV_MAX_REQUEST_BYTES_IN_FLIGHT, value_name = "BYTES",
          default_value_t = DEFAULT_MAX_REQUEST_BYTES_IN_FLIGHT, value_parser = parse_positive)]
    pub max_request_bytes_in_flight: usize,

    /// Largest amount of work admitted at once, in items (a batch counts its
    /// items, EstimateP50 its pairs, SampleCurve one per 100 points, any
    /// other call one); past it a call is refused with RESOURCE_EXHAUSTED.
    #[arg(long, env = ENV_MAX_ITEMS_IN_FLIGHT, value_name = "ITEMS",
          default_value_t = DEFAULT_MAX_ITEMS_IN_FLIGHT, value_parser = parse_positive)]
    pub max_items_in_flight: usize,

    /// Threads of the pool that computes batches and other large calls, off
    /// the threads that answer health. Default: one per available core.
    #[arg(long, env = ENV_COMPUTE_THREADS, value_name = "COUNT", value_parser = parse_positive)]
    pub compute_threads: Option<usize>,
}

impl Config {
    /// Parse from the process's arguments and environment.
    ///
    /// `--help` and `--version` print and exit 0; anything invalid prints the
    /// reason (naming the setting) and exits with [`EXIT_CONFIG_INVALID`].
    pub fn from_env_and_args() -> Self {
        match Self::try_parse() {
            Ok(config) => match config.check_files().and_then(|()| config.check_limits()) {
                Ok(()) => config,
                Err(reason) => {
                    eprintln!("error: {reason}");
                    std::process::exit(EXIT_CONFIG_INVALID);
                }
            },
            Err(error) => {
                use clap::error::ErrorKind;
                if matches!(
                    error.kind(),
                    ErrorKind::DisplayHelp | ErrorKind::DisplayVersion
                ) {
                    error.exit();
                }
                match from_environment(&error) {
                    Some(message) => eprintln!("error: {message}"),
                    None => {
                        let _ = error.print();
                    }
                }
                std::process::exit(EXIT_CONFIG_INVALID);
            }
        }
    }
}

/// When `error` is about a value that came from an `OXBIND_*` environment
/// variable rather than from the command line, the message naming that
/// variable (clap's own names the flag, which nobody typed).
fn from_environment(error: &clap::Error) -> Option<String> {
    use clap::{
        error::{ContextKind, ContextValue},
        CommandFactory,
    };
    let Some(ContextValue::String(arg)) = error.get(ContextKind::InvalidArg) else {
        return None;
    };
    // `--listen <ADDR>` -> `listen`.
    let long = arg.trim_start_matches("--").split(' ').next()?;
    let command = Config::command();
    let flag = command
        .get_arguments()
        .find(|a| a.get_long() == Some(long))?;
    let variable = flag.get_env()?.to_str()?;
    let on_command_line = std::env::args_os().skip(1).any(|a| {
        a.to_str()
            .is_some_and(|a| a == format!("--{long}") || a.starts_with(&format!("--{long}=")))
    });
    let value = std::env::var(variable).ok()?;
    if on_command_line {
        return None;
    }
    let why = error
        .get(ContextKind::Custom)
        .map(|c| c.to_string())
        .or_else(|| {
            // clap's rendered message ends with the parser's reason.
            error
                .render()
                .to_string()
                .lines()
                .next()
                .and_then(|l| l.rsplit_once(": "))
                .map(|(_, why)| why.to_owned())
        })
        .unwrap_or_default();
    Some(format!(
        "invalid value '{value}' in the environment variable {variable} (the setting --{long}): {why}"
    ))
}

impl Config {
    /// Check that every file the configuration names can be read, naming the
    /// flag of the first that cannot.
    pub fn check_files(&self) -> Result<(), String> {
        let files = [
            ("--tls-cert", &self.tls_cert),
            ("--tls-key", &self.tls_key),
            ("--client-ca", &self.client_ca),
        ];
        for (flag, path) in files {
            if let Some(path) = path {
                std::fs::metadata(path).map_err(|e| {
                    format!("{flag} {}: cannot read the file ({e})", path.display())
                })?;
            }
        }
        Ok(())
    }
}

impl Config {
    /// Check that the limits fit together: every request the message limit
    /// allows must fit in the request bytes in flight, and every batch the
    /// batch limit allows must fit in the items in flight, or such calls
    /// could never be admitted.
    pub fn check_limits(&self) -> Result<(), String> {
        let largest_request = self
            .max_decoded_message_bytes
            .saturating_add(GRPC_FRAME_PREFIX_BYTES);
        if self.max_request_bytes_in_flight < largest_request {
            return Err(format!(
                "--max-request-bytes-in-flight {} is below --max-decoded-message-bytes {} \
                 (plus {GRPC_FRAME_PREFIX_BYTES} bytes of framing): a request at the message \
                 limit could never be admitted",
                self.max_request_bytes_in_flight, self.max_decoded_message_bytes
            ));
        }
        if self.max_items_in_flight < self.max_batch_items {
            return Err(format!(
                "--max-items-in-flight {} is below --max-batch-items {}: a batch at the \
                 batch limit could never be admitted",
                self.max_items_in_flight, self.max_batch_items
            ));
        }
        Ok(())
    }

    /// Threads of the compute pool: the setting, or one per available core.
    pub fn compute_threads(&self) -> usize {
        self.compute_threads.unwrap_or_else(|| {
            std::thread::available_parallelism().map_or(DEFAULT_COMPUTE_THREADS, usize::from)
        })
    }
}

/// Bytes of the gRPC length prefix in front of every message (a flag byte
/// and a four-byte length; gRPC over HTTP/2 protocol).
pub const GRPC_FRAME_PREFIX_BYTES: usize = 5;

/// Compute threads when the number of cores cannot be read.
pub const DEFAULT_COMPUTE_THREADS: usize = 2;

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
            tls_cert: None,
            tls_key: None,
            client_ca: None,
            health_listen: None,
            no_reflection: false,
            max_decoded_message_bytes: DEFAULT_MAX_DECODED_MESSAGE_BYTES,
            max_encoded_message_bytes: DEFAULT_MAX_ENCODED_MESSAGE_BYTES,
            call_timeout: DEFAULT_CALL_TIMEOUT,
            max_concurrent_streams: DEFAULT_MAX_CONCURRENT_STREAMS,
            max_concurrent_calls: DEFAULT_MAX_CONCURRENT_CALLS,
            max_connections: DEFAULT_MAX_CONNECTIONS,
            keepalive_interval: DEFAULT_KEEPALIVE_INTERVAL,
            keepalive_timeout: DEFAULT_KEEPALIVE_TIMEOUT,
            grpc_web: false,
            cors_allowed_origins: Vec::new(),
            tls_handshake_timeout: DEFAULT_TLS_HANDSHAKE_TIMEOUT,
            preface_timeout: DEFAULT_PREFACE_TIMEOUT,
            idle_timeout: DEFAULT_IDLE_TIMEOUT,
            max_connection_age: DEFAULT_MAX_CONNECTION_AGE,
            max_connection_age_grace: DEFAULT_MAX_CONNECTION_AGE_GRACE,
            max_health_connections: DEFAULT_MAX_HEALTH_CONNECTIONS,
            max_streaming_calls: DEFAULT_MAX_STREAMING_CALLS,
            streaming_idle_timeout: DEFAULT_STREAMING_IDLE_TIMEOUT,
            request_arrival_timeout: DEFAULT_REQUEST_ARRIVAL_TIMEOUT,
            max_request_bytes_in_flight: DEFAULT_MAX_REQUEST_BYTES_IN_FLIGHT,
            max_items_in_flight: DEFAULT_MAX_ITEMS_IN_FLIGHT,
            compute_threads: None,
        }
    }
}

fn parse_duration(text: &str) -> Result<Duration, String> {
    humantime::parse_duration(text).map_err(|e| format!("not a duration such as `10s` ({e})"))
}

fn parse_nonzero_duration(text: &str) -> Result<Duration, String> {
    match parse_duration(text)? {
        Duration::ZERO => Err("must be longer than zero".to_owned()),
        duration => Ok(duration),
    }
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

fn parse_positive(text: &str) -> Result<usize, String> {
    match text.parse::<usize>() {
        Ok(0) => Err("must be at least 1".to_owned()),
        Ok(value) => Ok(value),
        Err(e) => Err(format!("not a whole number ({e})")),
    }
}

fn parse_positive_u32(text: &str) -> Result<u32, String> {
    match text.parse::<u32>() {
        Ok(0) => Err("must be at least 1".to_owned()),
        Ok(value) => Ok(value),
        Err(e) => Err(format!("not a whole number up to {} ({e})", u32::MAX)),
    }
}

/// A CORS origin: `http://` or `https://`, a host, an optional port, no path.
fn parse_origin(text: &str) -> Result<String, String> {
    let rest = text
        .strip_prefix("https://")
        .or_else(|| text.strip_prefix("http://"))
        .ok_or_else(|| {
            format!("`{text}` is not an origin such as `https://dashboard.example.org`")
        })?;
    let valid = !rest.is_empty()
        && rest
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | ':' | '[' | ']'));
    if !valid {
        return Err(format!(
            "`{text}` is not an origin (scheme, host and optional port, no path)"
        ));
    }
    Ok(text.to_owned())
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
        assert_eq!(parsed.call_timeout, DEFAULT_CALL_TIMEOUT);
        assert_eq!(parsed.max_concurrent_calls, DEFAULT_MAX_CONCURRENT_CALLS);
        assert_eq!(
            parsed.max_concurrent_streams,
            DEFAULT_MAX_CONCURRENT_STREAMS
        );
        assert_eq!(parsed.max_connections, DEFAULT_MAX_CONNECTIONS);
        assert_eq!(parsed.keepalive_interval, DEFAULT_KEEPALIVE_INTERVAL);
        assert_eq!(parsed.keepalive_timeout, DEFAULT_KEEPALIVE_TIMEOUT);
        assert_eq!(
            parsed.max_decoded_message_bytes,
            DEFAULT_MAX_DECODED_MESSAGE_BYTES
        );
        assert_eq!(
            parsed.max_encoded_message_bytes,
            DEFAULT_MAX_ENCODED_MESSAGE_BYTES
        );
        assert_eq!(parsed.tls_cert, default.tls_cert);
        assert!(!parsed.no_reflection && !parsed.grpc_web);
        assert!(parsed.health_listen.is_none());
    }

    #[test]
    fn the_connection_and_admission_defaults_match_the_named_constants() {
        let parsed = Config::try_parse_from(["oxbind-server"]).unwrap();
        assert_eq!(parsed.tls_handshake_timeout, DEFAULT_TLS_HANDSHAKE_TIMEOUT);
        assert_eq!(parsed.preface_timeout, DEFAULT_PREFACE_TIMEOUT);
        assert_eq!(parsed.idle_timeout, DEFAULT_IDLE_TIMEOUT);
        assert_eq!(parsed.max_connection_age, DEFAULT_MAX_CONNECTION_AGE);
        assert_eq!(
            parsed.max_connection_age_grace,
            DEFAULT_MAX_CONNECTION_AGE_GRACE
        );
        assert_eq!(
            parsed.max_health_connections,
            DEFAULT_MAX_HEALTH_CONNECTIONS
        );
        assert_eq!(parsed.max_streaming_calls, DEFAULT_MAX_STREAMING_CALLS);
        assert_eq!(
            parsed.streaming_idle_timeout,
            DEFAULT_STREAMING_IDLE_TIMEOUT
        );
        assert_eq!(
            parsed.request_arrival_timeout,
            DEFAULT_REQUEST_ARRIVAL_TIMEOUT
        );
        assert_eq!(
            parsed.max_request_bytes_in_flight,
            DEFAULT_MAX_REQUEST_BYTES_IN_FLIGHT
        );
        assert_eq!(parsed.max_items_in_flight, DEFAULT_MAX_ITEMS_IN_FLIGHT);
        assert_eq!(parsed.compute_threads, None);
        assert!(parsed.compute_threads() >= 1);
        parsed.check_limits().expect("the defaults fit together");
    }

    #[test]
    fn limits_that_could_never_admit_a_valid_request_are_refused() {
        let config = Config::try_parse_from([
            "oxbind-server",
            "--max-items-in-flight",
            "500",
            "--max-batch-items",
            "1000",
        ])
        .unwrap();
        let reason = config.check_limits().unwrap_err();
        assert!(reason.contains("--max-items-in-flight"), "{reason}");
        let config =
            Config::try_parse_from(["oxbind-server", "--max-request-bytes-in-flight", "1048576"])
                .unwrap();
        let reason = config.check_limits().unwrap_err();
        assert!(reason.contains("--max-request-bytes-in-flight"), "{reason}");
    }

    #[test]
    fn a_zero_timeout_is_refused_naming_the_flag() {
        let error =
            Config::try_parse_from(["oxbind-server", "--preface-timeout", "0s"]).unwrap_err();
        assert!(error.to_string().contains("--preface-timeout"), "{error}");
        assert!(error.to_string().contains("longer than zero"), "{error}");
    }

    #[test]
    fn a_tls_certificate_without_its_key_is_refused() {
        let error =
            Config::try_parse_from(["oxbind-server", "--tls-cert", "server.pem"]).unwrap_err();
        assert!(error.to_string().contains("--tls-key"), "{error}");
    }

    #[test]
    fn a_client_ca_without_tls_is_refused() {
        let error = Config::try_parse_from(["oxbind-server", "--client-ca", "ca.pem"]).unwrap_err();
        assert!(error.to_string().contains("--tls-cert"), "{error}");
    }

    #[test]
    fn cors_origins_must_be_origins_and_serve_connect_without_grpc_web() {
        let parsed = Config::try_parse_from([
            "oxbind-server",
            "--cors-allowed-origins",
            "https://a.example",
        ])
        .unwrap();
        assert!(!parsed.grpc_web);
        assert_eq!(parsed.cors_allowed_origins, ["https://a.example"]);
        let error = Config::try_parse_from([
            "oxbind-server",
            "--grpc-web",
            "--cors-allowed-origins",
            "https://a.example/path",
        ])
        .unwrap_err();
        assert!(error.to_string().contains("not an origin"), "{error}");
        let parsed = Config::try_parse_from([
            "oxbind-server",
            "--grpc-web",
            "--cors-allowed-origins",
            "https://a.example,http://localhost:8080",
        ])
        .unwrap();
        assert_eq!(
            parsed.cors_allowed_origins,
            ["https://a.example", "http://localhost:8080"]
        );
    }

    #[test]
    fn a_zero_call_limit_is_refused() {
        let error =
            Config::try_parse_from(["oxbind-server", "--max-concurrent-calls", "0"]).unwrap_err();
        assert!(error.to_string().contains("at least 1"), "{error}");
    }

    #[test]
    fn a_missing_certificate_file_is_named() {
        let config = Config::try_parse_from([
            "oxbind-server",
            "--tls-cert",
            "/nonexistent/server.pem",
            "--tls-key",
            "/nonexistent/server.key",
        ])
        .unwrap();
        let reason = config.check_files().unwrap_err();
        assert!(reason.contains("--tls-cert"), "{reason}");
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
