//! `ModelCatalogService/GetServerSettings`: the server's identity and the
//! settings it runs with, so that a laboratory can record them in its
//! verification report.
//!
//! Only what is safe to tell any caller is reported: limits, timeouts and
//! switches. TLS is reported as on or off, never by its files, and nothing
//! read from the environment for telemetry (endpoints, headers) is reported.

use std::time::Duration;

use oxbind_proto::v1::{GetServerSettingsRequest, GetServerSettingsResponse, ServerSetting};

use super::provenance::API_VERSION;
use crate::{config::Config, BUILD_COMMIT, SERVICE_VERSION};

/// The settings a server reports, fixed when it starts.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ReportedSettings {
    settings: Vec<ServerSetting>,
}

/// The flags of [`Config`] that are not reported by their own name, and why.
/// Every other flag is reported under its own name (a test checks this).
pub const NOT_REPORTED_BY_NAME: [(&str, &str); 4] = [
    ("tls-cert", "a file path: reported as `tls` on or off"),
    (
        "tls-key",
        "a file path to a private key: reported as `tls` on or off",
    ),
    (
        "client-ca",
        "a file path: reported as `mutual-tls` on or off",
    ),
    (
        "no-reflection",
        "reported the other way round, as `reflection` on or off",
    ),
];

impl ReportedSettings {
    /// The settings of `config`, in the order of README's configuration
    /// table.
    pub fn from_config(config: &Config) -> Self {
        let on_off = |on: bool| if on { "on" } else { "off" }.to_owned();
        let duration = |d: Duration| humantime::format_duration(d).to_string();
        let list = |items: &[String]| {
            if items.is_empty() {
                "none".to_owned()
            } else {
                items.join(",")
            }
        };
        let rows: Vec<(&str, String, &str)> = vec![
            (
                "listen",
                config.listen.to_string(),
                "address and port the server listens on",
            ),
            (
                "health-listen",
                config
                    .health_listen
                    .map_or_else(|| "off".to_owned(), |a| a.to_string()),
                "second, plaintext listener serving only grpc.health.v1",
            ),
            (
                "tls",
                on_off(config.tls_cert.is_some()),
                "TLS on the main listener",
            ),
            (
                "mutual-tls",
                on_off(config.tls_cert.is_some() && config.client_ca.is_some()),
                "callers must present a certificate signed by the configured CA",
            ),
            (
                "reflection",
                on_off(!config.no_reflection),
                "gRPC server reflection on the main listener",
            ),
            (
                "log-format",
                format!("{:?}", config.log_format).to_lowercase(),
                "format of the log lines",
            ),
            (
                "log-filter",
                config.log_filter.clone(),
                "which log lines are written",
            ),
            (
                "shutdown-grace",
                duration(config.shutdown_grace),
                "time calls in flight get after SIGTERM or SIGINT",
            ),
            (
                "max-batch-items",
                config.max_batch_items.to_string(),
                "largest batch request accepted",
            ),
            (
                "max-decoded-message-bytes",
                config.max_decoded_message_bytes.to_string(),
                "largest request message accepted, in bytes",
            ),
            (
                "max-encoded-message-bytes",
                config.max_encoded_message_bytes.to_string(),
                "largest response message sent, in bytes",
            ),
            (
                "call-timeout",
                duration(config.call_timeout),
                "longest time a call may take",
            ),
            (
                "max-concurrent-calls",
                config.max_concurrent_calls.to_string(),
                "calls computed or answered at once on the whole server (each connection a fair share)",
            ),
            (
                "max-items-in-flight",
                config.max_items_in_flight.to_string(),
                "work admitted at once, in items",
            ),
            (
                "max-request-bytes-in-flight",
                config.max_request_bytes_in_flight.to_string(),
                "request bytes held at once for calls arriving or in progress",
            ),
            (
                "request-arrival-timeout",
                duration(config.request_arrival_timeout),
                "time a call's request has to arrive; no call slot is held meanwhile",
            ),
            (
                "compute-threads",
                config.compute_threads().to_string(),
                "threads of the pool that computes calls of 32 items or more",
            ),
            (
                "max-streaming-calls",
                config.max_streaming_calls.to_string(),
                "streaming calls (reflection, health Watch) at once, per listener",
            ),
            (
                "streaming-idle-timeout",
                duration(config.streaming_idle_timeout),
                "time a streaming call may pass no message before it is ended",
            ),
            (
                "max-concurrent-streams",
                config.max_concurrent_streams.to_string(),
                "concurrent calls on one connection",
            ),
            (
                "max-connections",
                config.max_connections.to_string(),
                "open connections on the main listener",
            ),
            (
                "max-health-connections",
                config.max_health_connections.to_string(),
                "open connections on the health listener",
            ),
            (
                "tls-handshake-timeout",
                duration(config.tls_handshake_timeout),
                "time a client has to finish the TLS handshake",
            ),
            (
                "preface-timeout",
                duration(config.preface_timeout),
                "time a client has to send the HTTP/2 preface or its first HTTP/1.1 request head",
            ),
            (
                "idle-timeout",
                duration(config.idle_timeout),
                "time a connection with no call in progress stays open",
            ),
            (
                "max-connection-age",
                duration(config.max_connection_age),
                "longest life of a connection before a graceful GOAWAY",
            ),
            (
                "max-connection-age-grace",
                duration(config.max_connection_age_grace),
                "time calls in progress get after a maximum-age or idle GOAWAY",
            ),
            (
                "keepalive-interval",
                duration(config.keepalive_interval),
                "HTTP/2 keepalive ping interval",
            ),
            (
                "keepalive-timeout",
                duration(config.keepalive_timeout),
                "time a keepalive ping may go unanswered",
            ),
            (
                "grpc-web",
                on_off(config.grpc_web),
                "grpc-web accepted for the unary calls",
            ),
            (
                "cors-allowed-origins",
                list(&config.cors_allowed_origins),
                "origins a browser may call from, with grpc-web or the Connect protocol",
            ),
        ];
        Self {
            settings: rows
                .into_iter()
                .map(|(name, value, meaning)| ServerSetting {
                    name: name.to_owned(),
                    value,
                    meaning: meaning.to_owned(),
                })
                .collect(),
        }
    }

    /// The names reported, in order.
    pub fn names(&self) -> impl Iterator<Item = &str> {
        self.settings.iter().map(|s| s.name.as_str())
    }
}

/// The answer to GetServerSettings (the request has no fields).
pub fn compute_get_server_settings(
    _request: &GetServerSettingsRequest,
    settings: &ReportedSettings,
) -> GetServerSettingsResponse {
    GetServerSettingsResponse {
        service_version: SERVICE_VERSION.to_owned(),
        build_commit: BUILD_COMMIT.to_owned(),
        api_version: API_VERSION.to_owned(),
        settings: settings.settings.clone(),
    }
}

#[cfg(test)]
mod tests {
    use std::path::PathBuf;

    use clap::CommandFactory;

    use super::*;

    fn value_of<'a>(response: &'a GetServerSettingsResponse, name: &str) -> &'a str {
        response
            .settings
            .iter()
            .find(|s| s.name == name)
            .map(|s| s.value.as_str())
            .unwrap_or_else(|| panic!("no setting {name}"))
    }

    #[test]
    fn every_flag_is_reported_or_named_as_withheld() {
        let reported = ReportedSettings::from_config(&Config::default());
        let names: Vec<&str> = reported.names().collect();
        for argument in Config::command().get_arguments() {
            let Some(long) = argument.get_long() else {
                continue;
            };
            if matches!(long, "help" | "version") {
                continue;
            }
            let withheld = NOT_REPORTED_BY_NAME.iter().any(|(name, _)| *name == long);
            assert!(
                names.contains(&long) != withheld,
                "--{long}: report it in ReportedSettings::from_config or list it in NOT_REPORTED_BY_NAME"
            );
        }
    }

    #[test]
    fn defaults_are_reported_as_readme_states_them() {
        let response = compute_get_server_settings(
            &GetServerSettingsRequest {},
            &ReportedSettings::from_config(&Config::default()),
        );
        assert_eq!(response.api_version, "v1");
        assert_eq!(value_of(&response, "max-batch-items"), "10000");
        assert_eq!(value_of(&response, "call-timeout"), "10s");
        assert_eq!(value_of(&response, "tls"), "off");
        assert_eq!(value_of(&response, "reflection"), "on");
        assert_eq!(value_of(&response, "cors-allowed-origins"), "none");
        assert_eq!(value_of(&response, "health-listen"), "off");
        assert_eq!(value_of(&response, "max-items-in-flight"), "40000");
        assert_eq!(value_of(&response, "request-arrival-timeout"), "5s");
        assert_eq!(value_of(&response, "max-connections"), "256");
        assert_eq!(value_of(&response, "tls-handshake-timeout"), "5s");
    }

    #[test]
    fn tls_is_reported_as_a_switch_never_by_its_files() {
        let config = Config {
            tls_cert: Some(PathBuf::from("/secret/server.pem")),
            tls_key: Some(PathBuf::from("/secret/server.key")),
            client_ca: Some(PathBuf::from("/secret/ca.pem")),
            ..Config::default()
        };
        let response = compute_get_server_settings(
            &GetServerSettingsRequest {},
            &ReportedSettings::from_config(&config),
        );
        assert_eq!(value_of(&response, "tls"), "on");
        assert_eq!(value_of(&response, "mutual-tls"), "on");
        for setting in &response.settings {
            assert!(!setting.value.contains("/secret"), "{setting:?}");
        }
    }
}
