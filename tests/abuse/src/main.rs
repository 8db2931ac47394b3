//! `oxbind-abuse`: run one attack of the abuse suite against a fresh
//! `oxbind-server` process and print its figures as JSON.
//!
//! ```text
//! oxbind-abuse --server-bin target/release/oxbind-server batch-flood
//! oxbind-abuse --server-bin target/release/oxbind-server --server-arg=--grpc-web protocol
//! ```
//!
//! Each attack starts its own server (so its peak resident memory is the
//! attack's), on loopback port 0, with a plaintext health listener on port 0
//! that the health prober uses, as a kubelet would.

use std::{path::PathBuf, time::Duration};

use clap::{Parser, Subcommand};
use oxbind_abuse::{
    attacks::{self, HonestClient},
    doors::{self, Http1Hold},
    server::{free_port, raise_open_file_limit, server_binary, ServerOptions, ServerProcess},
    tls::MutualTls,
};
use serde_json::json;

/// Run one attack of the abuse suite and print its figures.
#[derive(Debug, Parser)]
#[command(name = "oxbind-abuse", version)]
struct Cli {
    /// The server binary (default: `oxbind-server` beside this one).
    #[arg(long, value_name = "PATH")]
    server_bin: Option<PathBuf>,
    /// An extra argument for the server (repeat for more), e.g.
    /// `--server-arg=--max-connections=64`.
    #[arg(long = "server-arg", value_name = "ARG", allow_hyphen_values = true)]
    server_args: Vec<String>,
    /// Start the server under this open-file limit (`ulimit -n`).
    #[arg(long, value_name = "COUNT")]
    open_file_limit: Option<u64>,
    #[command(subcommand)]
    attack: Attack,
}

#[derive(Debug, Subcommand)]
enum Attack {
    /// Idle server-reflection streams on one connection, then honest calls.
    ReflectionStreams {
        #[command(flatten)]
        hold: HoldArgs,
        #[arg(long, default_value_t = 20)]
        calls: usize,
        #[arg(long, default_value_t = 45.0)]
        observe_s: f64,
    },
    /// Unary calls that send headers and no message, then honest calls.
    HeadersOnly {
        #[command(flatten)]
        hold: HoldArgs,
        #[arg(long, default_value_t = 20)]
        calls: usize,
        #[arg(long, default_value_t = 15.0)]
        observe_s: f64,
    },
    /// Unary calls that send their message and never end the request.
    UnendedRequests {
        #[command(flatten)]
        hold: HoldArgs,
        #[arg(long, default_value_t = 20)]
        calls: usize,
        #[arg(long, default_value_t = 15.0)]
        observe_s: f64,
    },
    /// TCP connections that never send a byte (main listener), then an
    /// honest client; with --mutual-tls the server runs mutual TLS.
    IdleSockets {
        #[arg(long, default_value_t = 1_100)]
        sockets: usize,
        #[arg(long)]
        mutual_tls: bool,
        #[arg(long, default_value_t = 30.0)]
        honest_limit_s: f64,
        #[arg(long, default_value_t = 30.0)]
        observe_s: f64,
    },
    /// Idle mutual-TLS connections (each made one call): the server's memory.
    TlsConnections {
        #[arg(long, default_value_t = 250)]
        connections: usize,
    },
    /// HTTP/2 connections with no stream that answer every ping.
    IdleConnections {
        #[arg(long, default_value_t = 64)]
        connections: usize,
        #[arg(long, default_value_t = 150.0)]
        observe_s: f64,
    },
    /// TCP connections to the health listener that never send a byte.
    HealthSockets {
        #[arg(long, default_value_t = 5_000)]
        sockets: usize,
        #[arg(long, default_value_t = 30.0)]
        honest_limit_s: f64,
        #[arg(long, default_value_t = 20.0)]
        observe_s: f64,
    },
    /// Many callers sending full batches (provenance on each item), one
    /// after another, for a while.
    BatchFlood {
        #[arg(long, default_value_t = 64)]
        concurrent: usize,
        #[arg(long, default_value_t = 10_000)]
        items: usize,
        #[arg(long, default_value_t = 8)]
        connections: usize,
        #[arg(long, default_value_t = 20.0)]
        duration_s: f64,
    },
    /// The heaviest mix the limits allow, all at once (defaults: the
    /// server's default limits).
    WorstMix {
        #[arg(long, default_value_t = 246)]
        pending_connections: usize,
        #[arg(long, default_value_t = 16)]
        streams_per_connection: usize,
        #[arg(long, default_value_t = 7_600)]
        header_bytes: usize,
        #[arg(long, default_value_t = 8)]
        streaming_calls: usize,
        #[arg(long, default_value_t = 64)]
        batch_callers: usize,
        #[arg(long, default_value_t = 8)]
        batch_connections: usize,
        #[arg(long, default_value_t = 10_000)]
        items: usize,
        #[arg(long, default_value_t = 20.0)]
        duration_s: f64,
    },
    /// Clients that send calls and never read the answers.
    StalledReaders {
        #[arg(long, default_value_t = 16)]
        singles: usize,
        #[arg(long, default_value_t = 4)]
        batches: usize,
        #[arg(long, default_value_t = 10_000)]
        items: usize,
        #[arg(long, default_value_t = 20.0)]
        observe_s: f64,
    },
    /// Three replicas on 127.0.0.1, .2 and .3 (one port), one balancing
    /// client: how the calls spread.
    Spread {
        #[arg(long, default_value_t = 3_000)]
        calls: usize,
        #[arg(long, default_value_t = 16)]
        in_flight: usize,
    },
    /// Ten times the call limit at once.
    Overload {
        #[arg(long, default_value_t = 640)]
        calls: usize,
        #[arg(long, default_value_t = 8)]
        connections: usize,
    },
    /// HTTP/1.1 keep-alive connections that each made one Connect call and
    /// sit idle, then an honest Connect client.
    ConnectIdleSockets {
        #[arg(long, default_value_t = 1_100)]
        sockets: usize,
        #[arg(long, default_value_t = 120.0)]
        honest_limit_s: f64,
        #[arg(long, default_value_t = 150.0)]
        observe_s: f64,
    },
    /// HTTP/1.1 connections that send half a request head and stall, then
    /// an honest Connect client.
    Http1UnfinishedHeads {
        #[arg(long, default_value_t = 1_100)]
        sockets: usize,
        #[arg(long, default_value_t = 30.0)]
        honest_limit_s: f64,
        #[arg(long, default_value_t = 30.0)]
        observe_s: f64,
    },
    /// Connect POSTs that declare a body and never send it, then honest
    /// gRPC calls.
    ConnectUnsentBodies {
        #[arg(long, default_value_t = 200)]
        requests: usize,
        #[arg(long, default_value_t = 20)]
        calls: usize,
        #[arg(long, default_value_t = 15.0)]
        observe_s: f64,
    },
    /// Many callers sending full Connect JSON batches, one after another,
    /// for a while.
    ConnectBatchFlood {
        #[arg(long, default_value_t = 64)]
        concurrent: usize,
        #[arg(long, default_value_t = 10_000)]
        items: usize,
        #[arg(long, default_value_t = 8)]
        connections: usize,
        #[arg(long, default_value_t = 20.0)]
        duration_s: f64,
    },
    /// Ten times the call limit at once through the Connect and FHIR doors.
    DoorsOverload {
        #[arg(long, default_value_t = 640)]
        calls: usize,
        #[arg(long, default_value_t = 8)]
        connections: usize,
    },
    /// SIGTERM with a health Watch stream open.
    ShutdownWatch {
        #[arg(long, default_value_t = 30.0)]
        limit_s: f64,
    },
    /// Wrong content types and methods, two messages on a unary call, a
    /// grpc-web call from a disallowed origin (the server gets --grpc-web
    /// and one allowed origin), abandoned calls.
    Protocol,
}

/// How the attacker's streams are held.
#[derive(Debug, clap::Args)]
struct HoldArgs {
    /// Streams to open.
    #[arg(long, default_value_t = 64)]
    streams: usize,
    /// Connections to spread them over.
    #[arg(long, default_value_t = 1)]
    connections: usize,
    /// Bytes of padding metadata on each stream.
    #[arg(long, default_value_t = 0)]
    header_bytes: usize,
}

impl HoldArgs {
    fn hold(&self) -> attacks::StreamHold {
        attacks::StreamHold {
            streams: self.streams,
            connections: self.connections,
            header_bytes: self.header_bytes,
        }
    }
}

/// The origin the protocol attack's server allows.
const ALLOWED_ORIGIN: &str = "https://dashboard.larchmere.example";

#[tokio::main]
async fn main() {
    let cli = Cli::parse();
    raise_open_file_limit();
    let binary = cli.server_bin.clone().unwrap_or_else(server_binary);
    let mut options = ServerOptions::with_args(cli.server_args.clone()).health_listener();
    if let Some(limit) = cli.open_file_limit {
        options = options.open_file_limit(limit);
    }
    let secs = Duration::from_secs_f64;
    let figures = match cli.attack {
        Attack::ReflectionStreams {
            hold,
            calls,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(
                attacks::idle_reflection_streams(&server, hold.hold(), calls, secs(observe_s))
                    .await
            )
        }
        Attack::HeadersOnly {
            hold,
            calls,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(attacks::headers_only_streams(&server, hold.hold(), calls, secs(observe_s)).await)
        }
        Attack::UnendedRequests {
            hold,
            calls,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(attacks::unended_requests(&server, hold.hold(), calls, secs(observe_s)).await)
        }
        Attack::IdleSockets {
            sockets,
            mutual_tls,
            honest_limit_s,
            observe_s,
        } => {
            let dir = std::env::temp_dir().join(format!("oxbind-abuse-{}", std::process::id()));
            let (server, honest) = if mutual_tls {
                let tls = MutualTls::create(&dir);
                options.args.extend(tls.server_args.clone());
                let server = ServerProcess::start(&binary, &options);
                let honest = HonestClient::MutualTls {
                    uri: format!("https://localhost:{}", server.address.port()),
                    ca_pem: tls.ca_pem,
                    identity: tls.client,
                };
                (server, honest)
            } else {
                let server = ServerProcess::start(&binary, &options);
                let honest = HonestClient::Plain(server.uri());
                (server, honest)
            };
            let target = server.address;
            let figures = attacks::idle_sockets(
                &server,
                target,
                sockets,
                honest,
                secs(honest_limit_s),
                secs(observe_s),
            )
            .await;
            let _ = std::fs::remove_dir_all(dir);
            json!(figures)
        }
        Attack::TlsConnections { connections } => {
            let dir = std::env::temp_dir().join(format!("oxbind-abuse-{}", std::process::id()));
            let tls = MutualTls::create(&dir);
            options.args.extend(tls.server_args.clone());
            let server = ServerProcess::start(&binary, &options);
            let idle = server.memory();
            let honest = HonestClient::MutualTls {
                uri: format!("https://localhost:{}", server.address.port()),
                ca_pem: tls.ca_pem,
                identity: tls.client,
            };
            let (open, memory) = attacks::idle_tls_connections(&server, &honest, connections).await;
            let _ = std::fs::remove_dir_all(dir);
            json!({ "memory_at_start": idle, "connections": open, "memory_with_all_open": memory })
        }
        Attack::IdleConnections {
            connections,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(attacks::idle_connections(&server, connections, secs(observe_s)).await)
        }
        Attack::HealthSockets {
            sockets,
            honest_limit_s,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            let target = server.health_address.expect("health listener");
            let honest = HonestClient::Plain(server.uri());
            let figures = attacks::idle_sockets(
                &server,
                target,
                sockets,
                honest,
                secs(honest_limit_s),
                secs(observe_s),
            )
            .await;
            json!({ "attack": figures, "still_serves_after": attacks::still_serves(&server).await })
        }
        Attack::BatchFlood {
            concurrent,
            items,
            connections,
            duration_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(
                attacks::batch_flood(&server, concurrent, items, connections, secs(duration_s))
                    .await
            )
        }
        Attack::WorstMix {
            pending_connections,
            streams_per_connection,
            header_bytes,
            streaming_calls,
            batch_callers,
            batch_connections,
            items,
            duration_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            let mix = attacks::WorstMix {
                pending_connections,
                streams_per_connection,
                header_bytes,
                streaming_calls,
                batch_callers,
                batch_connections,
                items,
                duration: secs(duration_s),
            };
            json!(attacks::worst_mix(&server, mix).await)
        }
        Attack::StalledReaders {
            singles,
            batches,
            items,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(attacks::stalled_readers(&server, singles, batches, items, secs(observe_s)).await)
        }
        Attack::Spread { calls, in_flight } => {
            let port = free_port();
            let replicas: Vec<ServerProcess> = (1..=3)
                .map(|i| {
                    let options = options.clone().listen(format!("127.0.0.{i}:{port}"));
                    ServerProcess::start(&binary, &options)
                })
                .collect();
            json!(attacks::spread(&replicas, calls, in_flight).await)
        }
        Attack::Overload { calls, connections } => {
            let server = ServerProcess::start(&binary, &options);
            json!(attacks::overload(&server, calls, connections).await)
        }
        Attack::ConnectIdleSockets {
            sockets,
            honest_limit_s,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(
                doors::http1_sockets(
                    &server,
                    Http1Hold::IdleAfterACall,
                    sockets,
                    secs(honest_limit_s),
                    secs(observe_s),
                )
                .await
            )
        }
        Attack::Http1UnfinishedHeads {
            sockets,
            honest_limit_s,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(
                doors::http1_sockets(
                    &server,
                    Http1Hold::UnfinishedHead,
                    sockets,
                    secs(honest_limit_s),
                    secs(observe_s),
                )
                .await
            )
        }
        Attack::ConnectUnsentBodies {
            requests,
            calls,
            observe_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(doors::unsent_bodies(&server, requests, 64, calls, secs(observe_s)).await)
        }
        Attack::ConnectBatchFlood {
            concurrent,
            items,
            connections,
            duration_s,
        } => {
            let server = ServerProcess::start(&binary, &options);
            json!(
                doors::batch_flood(&server, concurrent, items, connections, secs(duration_s)).await
            )
        }
        Attack::DoorsOverload { calls, connections } => {
            let server = ServerProcess::start(&binary, &options);
            json!(doors::overload(&server, calls, connections).await)
        }
        Attack::ShutdownWatch { limit_s } => {
            let mut server = ServerProcess::start(&binary, &options);
            json!(attacks::shutdown_with_watch(&mut server, secs(limit_s)).await)
        }
        Attack::Protocol => {
            options.args.extend([
                "--grpc-web".to_owned(),
                format!("--cors-allowed-origins={ALLOWED_ORIGIN}"),
            ]);
            let server = ServerProcess::start(&binary, &options);
            let http2 = attacks::protocol_http2(&server).await;
            let allowed = attacks::grpc_web_from_origin(&server, ALLOWED_ORIGIN).await;
            let other = attacks::grpc_web_from_origin(&server, "https://elsewhere.example").await;
            let abandoned = attacks::abandoned_calls(&server).await;
            json!({
                "http2": http2,
                "grpc_web_allowed_origin": { "http_status": allowed.0, "computed": allowed.1 },
                "grpc_web_disallowed_origin": { "http_status": other.0, "computed": other.1 },
                "abandoned": abandoned,
            })
        }
    };
    println!(
        "{}",
        serde_json::to_string_pretty(&figures).expect("figures serialize")
    );
}
