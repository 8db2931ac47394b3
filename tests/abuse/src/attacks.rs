//! The attacks of issue 19, each against a running server, each returning
//! its figures: what the attacker held, what honest callers got meanwhile
//! (calls served and refused, by status), what health did, and what the
//! server's memory and file descriptors did.
//!
//! Every attack is bounded in count and time and talks only to loopback.

use std::{
    collections::BTreeMap,
    net::SocketAddr,
    sync::{Arc, Mutex},
    time::{Duration, Instant},
};

use oxbind_client::{
    health::{
        health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
    },
    v1::{model_catalog_service_client::ModelCatalogServiceClient, ListModelsRequest},
};
use prost::bytes::Bytes;
use serde::Serialize;
use tokio::{io::AsyncReadExt, net::TcpStream, task::JoinSet};

use crate::{
    inputs,
    probe::{HealthFigures, HealthProbe},
    server::{Memory, ServerProcess},
    wire::{self, Answer},
};

/// Calls counted by their status (`OK`, `RESOURCE_EXHAUSTED`, ...; `RESET`
/// when the stream was reset, `HTTP_<n>` when there was no gRPC status).
#[derive(Debug, Clone, Default, Serialize, PartialEq, Eq)]
pub struct Tally(pub BTreeMap<String, u64>);

impl Tally {
    /// Count one answer.
    pub fn add(&mut self, label: impl Into<String>) {
        *self.0.entry(label.into()).or_default() += 1;
    }

    /// How many got `label`.
    pub fn get(&self, label: &str) -> u64 {
        self.0.get(label).copied().unwrap_or(0)
    }

    /// How many in all.
    pub fn total(&self) -> u64 {
        self.0.values().sum()
    }

    /// Every label other than those in `allowed`.
    pub fn others(&self, allowed: &[&str]) -> Vec<String> {
        self.0
            .keys()
            .filter(|k| !allowed.contains(&k.as_str()))
            .cloned()
            .collect()
    }
}

/// Milliseconds, for the figures.
pub(crate) fn ms(duration: Duration) -> f64 {
    (duration.as_secs_f64() * 1e4).round() / 10.0
}

/// `calls` SaturationFromTension calls at once on a fresh connection, each
/// with `deadline`; their statuses.
pub(crate) async fn honest_calls(address: SocketAddr, calls: usize, deadline: Duration) -> Tally {
    let mut tally = Tally::default();
    let send = match tokio::time::timeout(deadline, wire::h2_connect(address)).await {
        Ok(Ok(send)) => send,
        _ => {
            tally.add("NO_CONNECTION");
            return tally;
        }
    };
    let message = wire::grpc_frame(&inputs::blood_gas(7));
    // One call first, as on a connection already in use: the server's
    // SETTINGS (its stream limit) are known before the burst.
    let request = wire::grpc_request(address, wire::SATURATION_PATH, &[]);
    let first = wire::exchange(&mut send.clone(), request, Some(message.clone()), true).await;
    tally.add(first.label());
    let mut set = JoinSet::new();
    for _ in 1..calls {
        let mut send = send.clone();
        let message = message.clone();
        set.spawn(async move {
            let request = wire::grpc_request(address, wire::SATURATION_PATH, &[]);
            match tokio::time::timeout(
                deadline,
                wire::exchange(&mut send, request, Some(message), true),
            )
            .await
            {
                Ok(answer) => answer.label(),
                Err(_) => "NO_ANSWER_IN_TIME".to_owned(),
            }
        });
    }
    while let Some(label) = set.join_next().await {
        tally.add(label.expect("call task"));
    }
    tally
}

/// Streams an attacker opened and left open, and how they ended.
#[derive(Debug, Clone, Default, Serialize)]
pub struct HeldStreams {
    /// Streams opened.
    pub opened: usize,
    /// Streams the server answered within 100 ms of opening (refused at
    /// once), by status.
    pub refused_at_once: Tally,
    /// Streams the server ended later, within the observation time, by
    /// status.
    pub ended_later: Tally,
    /// When the last of those ended, ms after opening.
    pub last_end_ms: Option<f64>,
    /// Streams still open when the observation ended.
    pub still_open: usize,
}

/// Figures of an attack by held streams.
#[derive(Debug, Clone, Default, Serialize)]
pub struct StreamsFigures {
    /// The attacker's streams.
    pub streams: HeldStreams,
    /// Honest SaturationFromTension calls made while the streams were held,
    /// by status.
    pub honest_calls: Tally,
    /// Health during the attack.
    pub health: HealthFigures,
    /// The server's memory after.
    pub memory: Memory,
}

/// How an attacker holds streams open.
#[derive(Debug, Clone, Copy)]
pub struct StreamHold {
    /// Streams to open.
    pub streams: usize,
    /// Connections to spread them over.
    pub connections: usize,
    /// Bytes of padding metadata on each stream (0: none).
    pub header_bytes: usize,
}

impl StreamHold {
    /// `streams` streams on one connection, no padding.
    pub fn on_one_connection(streams: usize) -> Self {
        Self {
            streams,
            connections: 1,
            header_bytes: 0,
        }
    }
}

/// Open `hold.streams` streams to `path` over `hold.connections`
/// connections, sending `first` (if any) and never ending the request; then
/// make `calls` honest calls on another connection; then watch the held
/// streams for `observe`.
async fn hold_streams(
    server: &ServerProcess,
    path: &'static str,
    first: Option<Bytes>,
    hold: StreamHold,
    calls: usize,
    observe: Duration,
) -> StreamsFigures {
    let probe = HealthProbe::start(server.health_uri()).await;
    let address = server.address;
    let mut sends = Vec::new();
    for _ in 0..hold.connections.max(1) {
        sends.push(
            wire::h2_connect(address)
                .await
                .expect("attacker connection"),
        );
    }
    let padding = "p".repeat(hold.header_bytes);
    let ends: Arc<Mutex<Vec<(Duration, Answer)>>> = Arc::default();
    let opened_at = Instant::now();
    let mut held = Vec::new();
    for i in 0..hold.streams {
        let send = sends[i % sends.len()].clone();
        // A connection at its stream limit makes the attacker wait: stop.
        let Ok(Ok(mut ready)) = tokio::time::timeout(Duration::from_secs(1), send.ready()).await
        else {
            break;
        };
        let extra: Vec<(&str, &str)> = if padding.is_empty() {
            Vec::new()
        } else {
            vec![("x-padding", padding.as_str())]
        };
        let request = wire::grpc_request(address, path, &extra);
        let Ok((response, mut body)) = ready.send_request(request, false) else {
            break;
        };
        if let Some(first) = &first {
            let _ = body.send_data(first.clone(), false);
        }
        let ends = ends.clone();
        held.push(tokio::spawn(async move {
            let answer = wire::read_answer(response).await;
            ends.lock().unwrap().push((opened_at.elapsed(), answer));
            drop(body);
        }));
    }
    let opened = held.len();
    // Let the server take the streams in before the honest calls.
    tokio::time::sleep(Duration::from_millis(200)).await;
    let honest = honest_calls(address, calls, Duration::from_secs(5)).await;
    let until = opened_at + observe;
    while Instant::now() < until && ends.lock().unwrap().len() < opened {
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
    let mut figures = HeldStreams {
        opened,
        ..HeldStreams::default()
    };
    for (at, answer) in ends.lock().unwrap().iter() {
        if *at <= Duration::from_millis(100) {
            figures.refused_at_once.add(answer.label());
        } else {
            figures.ended_later.add(answer.label());
            figures.last_end_ms = Some(figures.last_end_ms.unwrap_or(0.0).max(ms(*at)));
        }
    }
    figures.still_open = opened - ends.lock().unwrap().len();
    for task in held {
        task.abort();
    }
    StreamsFigures {
        streams: figures,
        honest_calls: honest,
        health: probe.finish().await,
        memory: server.memory(),
    }
}

/// Finding 1a: idle server-reflection streams (opened, nothing sent).
pub async fn idle_reflection_streams(
    server: &ServerProcess,
    hold: StreamHold,
    calls: usize,
    observe: Duration,
) -> StreamsFigures {
    hold_streams(server, wire::REFLECTION_PATH, None, hold, calls, observe).await
}

/// Finding 1b: unary calls that send their headers and never their message.
pub async fn headers_only_streams(
    server: &ServerProcess,
    hold: StreamHold,
    calls: usize,
    observe: Duration,
) -> StreamsFigures {
    hold_streams(server, wire::SATURATION_PATH, None, hold, calls, observe).await
}

/// Finding 1b, a variant: a unary call's message sent but the request never
/// ended.
pub async fn unended_requests(
    server: &ServerProcess,
    hold: StreamHold,
    calls: usize,
    observe: Duration,
) -> StreamsFigures {
    let message = wire::grpc_frame(&inputs::blood_gas(3));
    hold_streams(
        server,
        wire::SATURATION_PATH,
        Some(message),
        hold,
        calls,
        observe,
    )
    .await
}

/// Figures of the attack by clients that never read their answers.
#[derive(Debug, Clone, Default, Serialize)]
pub struct StalledFigures {
    /// Calls the stalled clients sent (single calls and batches), by how
    /// the server first answered them (`STALLED`: headers, then no data).
    pub stalled_calls: Tally,
    /// Honest calls made meanwhile, by status.
    pub honest_calls: Tally,
    /// Honest batches of 1,000 items made meanwhile, by status.
    pub honest_batches: Tally,
    /// Stalled connections the server closed within the observation time.
    pub connections_closed: usize,
    /// When the last of those closed, ms after the calls were sent.
    pub last_close_ms: Option<f64>,
    /// Honest calls made after the stalled connections were closed.
    pub honest_calls_after: Tally,
}

/// Clients that send calls and never read a byte of the answers (HTTP/2
/// stream window 0): `singles` single calls on one connection and `batches`
/// batches of `items` on another. Honest callers call meanwhile; the
/// stalled connections are watched for `observe`.
pub async fn stalled_readers(
    server: &ServerProcess,
    singles: usize,
    batches: usize,
    items: usize,
    observe: Duration,
) -> StalledFigures {
    let address = server.address;
    let started = Instant::now();
    let mut figures = StalledFigures::default();
    let mut watched = Vec::new();
    let stalled: Arc<Mutex<Tally>> = Arc::default();
    for (count, message, path) in [
        (
            singles,
            wire::grpc_frame(&inputs::blood_gas(1)),
            wire::SATURATION_PATH,
        ),
        (
            batches,
            wire::grpc_frame(&inputs::batch(items)),
            wire::BATCH_SATURATION_PATH,
        ),
    ] {
        let (send, done) = wire::h2_connect_with_window(address, 0)
            .await
            .expect("stalled connection");
        for _ in 0..count {
            let Ok(Ok(mut ready)) =
                tokio::time::timeout(Duration::from_secs(1), send.clone().ready()).await
            else {
                break;
            };
            let request = wire::grpc_request(address, path, &[]);
            let Ok((response, mut body)) = ready.send_request(request, false) else {
                break;
            };
            let _ = body.send_data(message.clone(), true);
            let stalled = stalled.clone();
            tokio::spawn(async move {
                // Look at the headers only; never release any window.
                let label = match response.await {
                    Ok(head) => match head.headers().get("grpc-status") {
                        Some(code) => code
                            .to_str()
                            .ok()
                            .and_then(|c| c.parse().ok())
                            .map(|c| oxbind_client::code_name(tonic::Code::from_i32(c)).to_owned())
                            .unwrap_or_else(|| "HTTP".to_owned()),
                        None => "STALLED".to_owned(),
                    },
                    Err(_) => "RESET".to_owned(),
                };
                stalled.lock().unwrap().add(label);
                let _keep = body;
                std::future::pending::<()>().await;
            });
        }
        watched.push((send, done));
    }
    tokio::time::sleep(Duration::from_millis(500)).await;
    figures.honest_calls = honest_calls(address, 20, Duration::from_secs(5)).await;
    let honest_batch = wire::grpc_frame(&inputs::batch(1_000));
    let mut send = wire::h2_connect(address).await.expect("honest connection");
    for _ in 0..4 {
        let request = wire::grpc_request(address, wire::BATCH_SATURATION_PATH, &[]);
        let answer = wire::exchange(&mut send, request, Some(honest_batch.clone()), true).await;
        figures.honest_batches.add(answer.label());
    }
    let until = started + observe;
    let mut closes = Vec::new();
    for (_, done) in &mut watched {
        let left = until.saturating_duration_since(Instant::now());
        if tokio::time::timeout(left, done).await.is_ok() {
            closes.push(started.elapsed());
        }
    }
    figures.connections_closed = closes.len();
    figures.last_close_ms = closes.iter().max().map(|d| ms(*d));
    figures.stalled_calls = stalled.lock().unwrap().clone();
    figures.honest_calls_after = honest_calls(address, 20, Duration::from_secs(5)).await;
    figures
}

/// How calls spread over replicas.
#[derive(Debug, Clone, Default, Serialize)]
pub struct SpreadFigures {
    /// Calls made in all (all must be OK).
    pub calls: usize,
    /// Calls that were not OK.
    pub failed: usize,
    /// Calls each replica logged, by its address.
    pub per_replica: BTreeMap<String, u64>,
    /// The largest departure of a replica's share from an even share, in
    /// percent of the even share.
    pub max_departure_percent: f64,
}

/// `calls` SaturationFromTension calls, `in_flight` at once, through one
/// balancing client that resolves a made-up name to every replica's
/// address (as a headless Service's DNS record would); the replicas' access
/// logs say who served what.
pub async fn spread(replicas: &[ServerProcess], calls: usize, in_flight: usize) -> SpreadFigures {
    let addresses: Vec<SocketAddr> = replicas.iter().map(|r| r.address).collect();
    let port = addresses[0].port();
    let resolved = addresses.clone();
    let client = oxbind_client::OxbindClient::builder(format!(
        "http://replicas.larchmere-valley.test:{port}"
    ))
    .balance_with_resolver(move |_host, _port| {
        let resolved = resolved.clone();
        async move { Ok(resolved) }
    })
    .connect()
    .await
    .expect("balanced client");
    let before: Vec<usize> = replicas.iter().map(|r| r.call_lines().len()).collect();
    let next = Arc::new(std::sync::atomic::AtomicUsize::new(0));
    let failed = Arc::new(std::sync::atomic::AtomicUsize::new(0));
    let mut set = JoinSet::new();
    for _ in 0..in_flight {
        let client = client.clone();
        let next = next.clone();
        let failed = failed.clone();
        set.spawn(async move {
            while next.fetch_add(1, std::sync::atomic::Ordering::Relaxed) < calls {
                if client
                    .saturation_from_tension(inputs::blood_gas(3))
                    .await
                    .is_err()
                {
                    failed.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                }
            }
        });
    }
    while set.join_next().await.is_some() {}
    // The access lines reach the logs a moment after the answers.
    let counted = |replica: &ServerProcess, skip: usize| {
        replica
            .call_lines()
            .iter()
            .skip(skip)
            .filter(|l| l["method"] == "oxbind.v1.DissociationService/SaturationFromTension")
            .count() as u64
    };
    let deadline = Instant::now() + Duration::from_secs(10);
    let per_replica = loop {
        let per_replica: BTreeMap<String, u64> = replicas
            .iter()
            .zip(&before)
            .map(|(r, skip)| (r.address.to_string(), counted(r, *skip)))
            .collect();
        if per_replica.values().sum::<u64>() >= calls as u64 || Instant::now() > deadline {
            break per_replica;
        }
        tokio::time::sleep(Duration::from_millis(50)).await;
    };
    let even = calls as f64 / replicas.len() as f64;
    let max_departure_percent = per_replica
        .values()
        .map(|&n| ((n as f64 - even).abs() / even * 1000.0).round() / 10.0)
        .fold(0.0, f64::max);
    SpreadFigures {
        calls,
        failed: failed.load(std::sync::atomic::Ordering::Relaxed),
        per_replica,
        max_departure_percent,
    }
}

/// How an honest client is made for the socket attacks.
#[derive(Clone)]
pub enum HonestClient {
    /// Plaintext.
    Plain(String),
    /// Mutual TLS with a certificate from the CA the server trusts.
    MutualTls {
        /// `https://localhost:PORT`.
        uri: String,
        /// The CA (trusted for the server's certificate).
        ca_pem: String,
        /// The client's certificate and key.
        identity: (String, String),
    },
}

impl HonestClient {
    /// One ListModels call on a fresh connection.
    async fn call(&self) -> Result<(), String> {
        self.connected().await.map(|_| ())
    }

    /// A fresh connection that has made one ListModels call.
    async fn connected(&self) -> Result<oxbind_client::OxbindClient, String> {
        let builder = match self {
            HonestClient::Plain(uri) => oxbind_client::OxbindClient::builder(uri.clone()),
            HonestClient::MutualTls {
                uri,
                ca_pem,
                identity,
            } => oxbind_client::OxbindClient::builder(uri.clone())
                .ca_certificate_pem(ca_pem.clone())
                .client_identity_pem(identity.0.clone(), identity.1.clone())
                .tls_domain_name("localhost"),
        };
        let client = builder
            .connect_timeout(Duration::from_secs(60))
            .call_timeout(Duration::from_secs(60))
            .retry(oxbind_client::RetryPolicy::none())
            .connect()
            .await
            .map_err(|e| e.to_string())?;
        client
            .list_models(ListModelsRequest::default())
            .await
            .map_err(|e| e.to_string())?;
        Ok(client)
    }
}

/// Figures of an attack by idle sockets.
#[derive(Debug, Clone, Default, Serialize)]
pub struct SocketsFigures {
    /// Sockets opened (TCP connected; nothing sent).
    pub sockets: usize,
    /// Whether an honest client was served while they were held.
    pub honest_served: bool,
    /// How long the honest client waited, ms (up to the limit given).
    pub honest_wait_ms: f64,
    /// The honest client's error, when it was not served.
    pub honest_error: Option<String>,
    /// Sockets the server closed within the observation time.
    pub closed_by_server: usize,
    /// When the last of those closed, ms after opening.
    pub last_close_ms: Option<f64>,
    /// The server's open file descriptors at their highest (sampled).
    pub server_fds_peak: usize,
    /// Health during the attack.
    pub health: HealthFigures,
    /// The server's memory after.
    pub memory: Memory,
}

/// Findings 2 and 3: `sockets` TCP connections to `target` that never send
/// a byte (no HTTP/2 preface, no TLS hello); meanwhile an honest client
/// tries for up to `honest_limit`; the sockets are watched for `observe`.
pub async fn idle_sockets(
    server: &ServerProcess,
    target: SocketAddr,
    sockets: usize,
    honest: HonestClient,
    honest_limit: Duration,
    observe: Duration,
) -> SocketsFigures {
    let probe = HealthProbe::start(server.health_uri()).await;
    let opened_at = Instant::now();
    let closes: Arc<Mutex<Vec<Duration>>> = Arc::default();
    let mut held = Vec::new();
    for _ in 0..sockets {
        let Ok(Ok(mut tcp)) =
            tokio::time::timeout(Duration::from_secs(2), TcpStream::connect(target)).await
        else {
            break;
        };
        let closes = closes.clone();
        held.push(tokio::spawn(async move {
            let mut buf = [0u8; 256];
            loop {
                match tcp.read(&mut buf).await {
                    Ok(0) | Err(_) => break,
                    Ok(_) => {}
                }
            }
            closes.lock().unwrap().push(opened_at.elapsed());
        }));
    }
    let opened = held.len();
    let mut fds_peak = server.open_fds();
    let honest_start = Instant::now();
    let honest_result = tokio::time::timeout(honest_limit, honest.call()).await;
    let honest_wait = honest_start.elapsed();
    let (honest_served, honest_error) = match honest_result {
        Ok(Ok(())) => (true, None),
        Ok(Err(e)) => (false, Some(e)),
        Err(_) => (false, Some(format!("no answer within {honest_limit:?}"))),
    };
    let until = opened_at + observe;
    while Instant::now() < until && closes.lock().unwrap().len() < opened {
        fds_peak = fds_peak.max(server.open_fds());
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
    fds_peak = fds_peak.max(server.open_fds());
    let closes = closes.lock().unwrap().clone();
    for task in held {
        task.abort();
    }
    SocketsFigures {
        sockets: opened,
        honest_served,
        honest_wait_ms: ms(honest_wait),
        honest_error,
        closed_by_server: closes.len(),
        last_close_ms: closes.iter().max().map(|d| ms(*d)),
        server_fds_peak: fds_peak,
        health: probe.finish().await,
        memory: server.memory(),
    }
}

/// Figures of the attack by idle, ping-answering connections.
#[derive(Debug, Clone, Default, Serialize)]
pub struct IdleConnectionsFigures {
    /// HTTP/2 connections opened (preface and settings sent, no stream).
    pub connections: usize,
    /// Connections the server closed within the observation time.
    pub closed_by_server: usize,
    /// When the last of those closed, ms after opening.
    pub last_close_ms: Option<f64>,
    /// The server's memory once they were all open.
    pub memory_with_all_open: Memory,
}

/// Finding 2, second part: HTTP/2 connections that complete the handshake,
/// open no stream and answer every keepalive ping.
pub async fn idle_connections(
    server: &ServerProcess,
    connections: usize,
    observe: Duration,
) -> IdleConnectionsFigures {
    let opened_at = Instant::now();
    let mut watched = Vec::new();
    for _ in 0..connections {
        if let Ok((send, done)) = wire::h2_connect_watched(server.address).await {
            watched.push((send, done));
        }
    }
    let opened = watched.len();
    tokio::time::sleep(Duration::from_millis(300)).await;
    let memory_with_all_open = server.memory();
    let closes: Arc<Mutex<Vec<Duration>>> = Arc::default();
    let mut waiters = Vec::new();
    let mut senders = Vec::new();
    for (send, done) in watched {
        senders.push(send);
        let closes = closes.clone();
        waiters.push(tokio::spawn(async move {
            let _ = done.await;
            closes.lock().unwrap().push(opened_at.elapsed());
        }));
    }
    let until = opened_at + observe;
    while Instant::now() < until && closes.lock().unwrap().len() < opened {
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
    let closes = closes.lock().unwrap().clone();
    for waiter in waiters {
        waiter.abort();
    }
    drop(senders);
    IdleConnectionsFigures {
        connections: opened,
        closed_by_server: closes.len(),
        last_close_ms: closes.iter().max().map(|d| ms(*d)),
        memory_with_all_open,
    }
}

/// Memory of `connections` idle mutual-TLS connections (each a client that
/// connected and made one call), once all are open.
pub async fn idle_tls_connections(
    server: &ServerProcess,
    honest: &HonestClient,
    connections: usize,
) -> (usize, Memory) {
    let mut held = Vec::new();
    for _ in 0..connections {
        match honest.connected().await {
            Ok(client) => held.push(client),
            Err(_) => break,
        }
    }
    tokio::time::sleep(Duration::from_millis(300)).await;
    (held.len(), server.memory())
}

/// Figures of a flood of calls.
#[derive(Debug, Clone, Default, Serialize)]
pub struct LoadFigures {
    /// Calls sent.
    pub calls: usize,
    /// Their statuses.
    pub answers: Tally,
    /// Batch items computed (in OK answers).
    pub items_computed: u64,
    /// Wall time of the whole flood, ms.
    pub elapsed_ms: f64,
    /// Health during it.
    pub health: HealthFigures,
    /// Server memory after it (`peak_rss_mib` is the peak over the process's
    /// life, so over the flood when the server was fresh).
    pub memory: Memory,
}

/// `connections` connections, each used for one call first, as a
/// connection already in use would have been: the client then knows the
/// server's stream limit and queues calls past it instead of opening
/// streams the server must refuse (REFUSED_STREAM, which gRPC clients retry
/// on their own).
pub(crate) async fn warm_connections(
    address: SocketAddr,
    connections: usize,
) -> Vec<h2::client::SendRequest<Bytes>> {
    let mut sends = Vec::new();
    for _ in 0..connections {
        let mut send = wire::h2_connect(address).await.expect("connection");
        let request = wire::grpc_request(address, wire::HEALTH_CHECK_PATH, &[]);
        let empty = wire::grpc_frame(&oxbind_client::health::HealthCheckRequest::default());
        let _ = wire::exchange(&mut send, request, Some(empty), true).await;
        sends.push(send);
    }
    sends
}

/// Send `messages` (path, encoded message, items) round-robin over
/// `connections` connections, `in_flight` at once, `rounds` times over.
async fn flood(
    server: &ServerProcess,
    messages: Vec<(&'static str, Bytes, u64)>,
    connections: usize,
    rounds: usize,
    deadline: Duration,
) -> LoadFigures {
    let probe = HealthProbe::start(server.health_uri()).await;
    let address = server.address;
    let sends = warm_connections(address, connections).await;
    let start = Instant::now();
    let mut answers = Tally::default();
    let mut items_computed = 0;
    for _ in 0..rounds {
        let mut set = JoinSet::new();
        for (i, (path, message, items)) in messages.iter().enumerate() {
            let mut send = sends[i % sends.len()].clone();
            let (path, message, items) = (*path, message.clone(), *items);
            set.spawn(async move {
                let timeout = format!("{}m", deadline.as_millis());
                let request =
                    wire::grpc_request(address, path, &[("grpc-timeout", timeout.as_str())]);
                let answer = tokio::time::timeout(
                    deadline + Duration::from_secs(5),
                    wire::exchange(&mut send, request, Some(message), true),
                )
                .await;
                match answer {
                    Ok(answer) => (answer.label(), if answer.is_grpc_ok() { items } else { 0 }),
                    Err(_) => ("NO_ANSWER_IN_TIME".to_owned(), 0),
                }
            });
        }
        while let Some(result) = set.join_next().await {
            let (label, items) = result.expect("call task");
            answers.add(label);
            items_computed += items;
        }
    }
    LoadFigures {
        calls: messages.len() * rounds,
        answers,
        items_computed,
        elapsed_ms: ms(start.elapsed()),
        health: probe.finish().await,
        memory: server.memory(),
    }
}

/// Pause of a batch task after a refusal before it sends again (a client
/// backing off a little).
pub(crate) const BATCH_RETRY_PAUSE: Duration = Duration::from_millis(20);

/// Findings 4 and 5: `concurrent` callers each sending batches of `items`
/// blood gases (provenance on each item, the heaviest answer) one after
/// another over `connections` connections for `duration`, pausing briefly
/// after a refusal.
pub async fn batch_flood(
    server: &ServerProcess,
    concurrent: usize,
    items: usize,
    connections: usize,
    duration: Duration,
) -> LoadFigures {
    let probe = HealthProbe::start(server.health_uri()).await;
    let address = server.address;
    let message = wire::grpc_frame(&inputs::batch(items));
    let sends = warm_connections(address, connections).await;
    let start = Instant::now();
    let until = start + duration;
    let mut set = JoinSet::new();
    for i in 0..concurrent {
        let mut send = sends[i % sends.len()].clone();
        let message = message.clone();
        set.spawn(async move {
            let mut answers = Tally::default();
            let mut calls = 0;
            while Instant::now() < until {
                let request = wire::grpc_request(
                    address,
                    wire::BATCH_SATURATION_PATH,
                    &[("grpc-timeout", "60S")],
                );
                let answer = wire::exchange(&mut send, request, Some(message.clone()), true).await;
                calls += 1;
                answers.add(answer.label());
                if !answer.is_grpc_ok() {
                    tokio::time::sleep(BATCH_RETRY_PAUSE).await;
                }
            }
            (calls, answers)
        });
    }
    let mut answers = Tally::default();
    let mut calls = 0;
    while let Some(result) = set.join_next().await {
        let (task_calls, task_answers) = result.expect("batch task");
        calls += task_calls;
        for (label, count) in task_answers.0 {
            *answers.0.entry(label).or_default() += count;
        }
    }
    LoadFigures {
        calls,
        items_computed: answers.get("OK") * items as u64,
        answers,
        elapsed_ms: ms(start.elapsed()),
        health: probe.finish().await,
        memory: server.memory(),
    }
}

/// The 10x overload: `calls` at once, most single SaturationFromTension
/// calls and every eighth a 500-item batch, over `connections` connections.
pub async fn overload(server: &ServerProcess, calls: usize, connections: usize) -> LoadFigures {
    let single = wire::grpc_frame(&inputs::blood_gas(11));
    let batch = wire::grpc_frame(&inputs::batch(500));
    let messages = (0..calls)
        .map(|i| {
            if i % 8 == 7 {
                (wire::BATCH_SATURATION_PATH, batch.clone(), 500)
            } else {
                (wire::SATURATION_PATH, single.clone(), 0)
            }
        })
        .collect();
    flood(server, messages, connections, 1, Duration::from_secs(20)).await
}

/// The heaviest mix the limits allow, all at once.
#[derive(Debug, Clone, Copy)]
pub struct WorstMix {
    /// Connections that each keep `streams_per_connection` unary streams
    /// waiting for their request (headers only), reopening each as the
    /// server ends it.
    pub pending_connections: usize,
    /// Streams each of those keeps open (the server's per-connection
    /// stream limit).
    pub streams_per_connection: usize,
    /// Padding metadata on each of those streams, bytes.
    pub header_bytes: usize,
    /// Streaming calls (reflection) that ask for large answers and never
    /// read them.
    pub streaming_calls: usize,
    /// Callers sending full batches one after another.
    pub batch_callers: usize,
    /// Connections the batch callers share.
    pub batch_connections: usize,
    /// Items per batch.
    pub items: usize,
    /// How long the mix runs.
    pub duration: Duration,
}

/// Figures of the heaviest mix.
#[derive(Debug, Clone, Default, Serialize)]
pub struct WorstMixFigures {
    /// Server memory once started, before the mix.
    pub memory_at_start: Memory,
    /// Waiting streams opened in all (each reopened as it was ended).
    pub pending_streams_opened: u64,
    /// How the waiting streams ended, by status.
    pub pending_streams_ended: Tally,
    /// Streaming calls opened.
    pub streaming_opened: usize,
    /// The batch callers' answers and the health prober's figures.
    pub batches: LoadFigures,
}

/// Everything at once: every connection but a few holding waiting streams
/// with large headers, streaming calls that never read, and batch callers
/// filling the work and request-byte limits; `peak_rss_mib` in the batch
/// figures is the server's peak over the whole mix.
pub async fn worst_mix(server: &ServerProcess, mix: WorstMix) -> WorstMixFigures {
    let memory_at_start = server.memory();
    let address = server.address;
    let until = Instant::now() + mix.duration;
    let opened = Arc::new(std::sync::atomic::AtomicU64::new(0));
    let padding = Arc::new("p".repeat(mix.header_bytes));
    let ended: Arc<Mutex<Tally>> = Arc::default();
    let mut holders = JoinSet::new();
    for _ in 0..mix.pending_connections {
        let Ok(send) = wire::h2_connect(address).await else {
            break;
        };
        let opened = opened.clone();
        let padding = padding.clone();
        let ended = ended.clone();
        // h2 queues streams past the server's limit on the client side: keep
        // exactly the limit open, reopening each as the server ends it.
        let open = Arc::new(tokio::sync::Semaphore::new(mix.streams_per_connection));
        holders.spawn(async move {
            while Instant::now() < until {
                let Ok(Ok(slot)) =
                    tokio::time::timeout_at(until.into(), open.clone().acquire_owned()).await
                else {
                    break;
                };
                let Ok(Ok(mut ready)) =
                    tokio::time::timeout_at(until.into(), send.clone().ready()).await
                else {
                    break;
                };
                let extra = [("x-padding", padding.as_str())];
                let request = wire::grpc_request(address, wire::SATURATION_PATH, &extra);
                let Ok((response, body)) = ready.send_request(request, false) else {
                    break;
                };
                opened.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                let ended = ended.clone();
                tokio::spawn(async move {
                    let answer = wire::read_answer(response).await;
                    ended.lock().unwrap().add(answer.label());
                    drop(body);
                    drop(slot);
                });
            }
        });
    }
    let streaming_opened = hold_unread_reflection(address, mix.streaming_calls, until).await;
    let (batches, ()) = tokio::join!(
        batch_flood(
            server,
            mix.batch_callers,
            mix.items,
            mix.batch_connections,
            mix.duration,
        ),
        tokio::time::sleep_until(until.into()),
    );
    holders.abort_all();
    let pending_streams_ended = ended.lock().unwrap().clone();
    WorstMixFigures {
        memory_at_start,
        pending_streams_opened: opened.load(std::sync::atomic::Ordering::Relaxed),
        pending_streams_ended,
        streaming_opened,
        batches,
    }
}

/// Open `streams` reflection streams on one connection, each asking for the
/// whole contract again and again and never reading an answer, until
/// `until`. Returns how many the server let open.
async fn hold_unread_reflection(address: SocketAddr, streams: usize, until: Instant) -> usize {
    use tonic_reflection::pb::v1::{
        server_reflection_request::MessageRequest, ServerReflectionRequest,
    };
    // A stream window of 0: the server can send no answer's data at all.
    let Ok((send, _done)) = wire::h2_connect_with_window(address, 0).await else {
        return 0;
    };
    let ask = wire::grpc_frame(&ServerReflectionRequest {
        host: String::new(),
        message_request: Some(MessageRequest::FileContainingSymbol(
            "oxbind.v1.DissociationService".to_owned(),
        )),
    });
    let mut opened = 0;
    for _ in 0..streams {
        let Ok(Ok(mut ready)) =
            tokio::time::timeout(Duration::from_secs(1), send.clone().ready()).await
        else {
            break;
        };
        let request = wire::grpc_request(address, wire::REFLECTION_PATH, &[]);
        let Ok((response, mut body)) = ready.send_request(request, false) else {
            break;
        };
        opened += 1;
        let ask = ask.clone();
        tokio::spawn(async move {
            // Never read the response: keep it, unpolled, until the end.
            let _response = response;
            while Instant::now() < until {
                body.reserve_capacity(ask.len());
                if body.send_data(ask.clone(), false).is_err() {
                    break;
                }
                tokio::time::sleep(Duration::from_millis(5)).await;
            }
        });
    }
    opened
}

/// Figures of SIGTERM with a health Watch stream open.
#[derive(Debug, Clone, Default, Serialize)]
pub struct ShutdownFigures {
    /// Time from SIGTERM to the process's exit, ms (none: not within the
    /// limit).
    pub exit_ms: Option<f64>,
    /// The exit status.
    pub exit_code: Option<i32>,
    /// Whether the Watch stream saw NOT_SERVING before it ended.
    pub watch_saw_not_serving: bool,
    /// How the Watch stream ended (status), if it did.
    pub watch_end: Option<String>,
}

/// Finding 6: a Watch stream open (on the main listener) when SIGTERM
/// arrives; wait up to `limit` for the exit.
pub async fn shutdown_with_watch(server: &mut ServerProcess, limit: Duration) -> ShutdownFigures {
    let channel = oxbind_client::connect(server.uri()).await.expect("connect");
    let mut health = HealthClient::new(channel);
    let mut watch = health
        .watch(HealthCheckRequest::default())
        .await
        .expect("watch starts")
        .into_inner();
    let first = watch
        .message()
        .await
        .expect("first status")
        .expect("a status");
    assert_eq!(first.status(), ServingStatus::Serving);
    let saw: Arc<Mutex<(bool, Option<String>)>> = Arc::default();
    let seen = saw.clone();
    let reader = tokio::spawn(async move {
        loop {
            match watch.message().await {
                Ok(Some(update)) => {
                    if update.status() == ServingStatus::NotServing {
                        seen.lock().unwrap().0 = true;
                    }
                }
                Ok(None) => {
                    seen.lock().unwrap().1 = Some("OK".to_owned());
                    break;
                }
                Err(status) => {
                    seen.lock().unwrap().1 =
                        Some(oxbind_client::code_name(status.code()).to_owned());
                    break;
                }
            }
        }
    });
    let signalled = Instant::now();
    server.terminate();
    let exit = tokio::task::block_in_place(|| server.wait_exit(limit));
    let elapsed = signalled.elapsed();
    let _ = tokio::time::timeout(Duration::from_secs(1), reader).await;
    let (saw_not_serving, end) = saw.lock().unwrap().clone();
    ShutdownFigures {
        exit_ms: exit.map(|_| ms(elapsed)),
        exit_code: exit.and_then(|s| s.code()),
        watch_saw_not_serving: saw_not_serving,
        watch_end: end,
    }
}

/// One protocol probe's outcome.
#[derive(Debug, Clone, Serialize)]
pub struct ProtocolProbe {
    /// What was sent.
    pub sent: &'static str,
    /// HTTP status of the answer.
    pub http_status: u16,
    /// gRPC status (name), if any.
    pub grpc_status: Option<String>,
    /// Whether the server computed it and answered OK as gRPC.
    pub answered_ok: bool,
}

fn probe_of(sent: &'static str, answer: &Answer) -> ProtocolProbe {
    ProtocolProbe {
        sent,
        http_status: answer.http_status,
        grpc_status: answer
            .grpc_status
            .map(|c| oxbind_client::code_name(tonic::Code::from_i32(c)).to_owned()),
        answered_ok: answer.is_grpc_ok(),
    }
}

/// What a protocol probe sends: its description, the method and the headers
/// that replace the gRPC ones (an empty value removes the header).
type ProtocolCase = (
    &'static str,
    &'static str,
    &'static [(&'static str, &'static str)],
);

/// Finding 7 over HTTP/2: content types, methods, two messages on a unary
/// call. Each probe on its own stream of one connection.
pub async fn protocol_http2(server: &ServerProcess) -> Vec<ProtocolProbe> {
    let address = server.address;
    let mut send = wire::h2_connect(address).await.expect("connection");
    let message = wire::grpc_frame(&inputs::blood_gas(5));
    let mut probes = Vec::new();
    let cases: [ProtocolCase; 7] = [
        ("POST application/grpc (control)", "POST", &[]),
        (
            "POST content-type text/plain",
            "POST",
            &[("content-type", "text/plain")],
        ),
        (
            "POST content-type application/json, gRPC-framed body",
            "POST",
            &[("content-type", "application/json")],
        ),
        ("POST with no content-type", "POST", &[("content-type", "")]),
        (
            "POST content-type application/grpc+json",
            "POST",
            &[("content-type", "application/grpc+json")],
        ),
        ("PUT application/grpc", "PUT", &[]),
        ("GET application/grpc", "GET", &[]),
    ];
    for (sent, method, headers) in cases {
        let mut request = wire::grpc_request(address, wire::SATURATION_PATH, headers);
        *request.method_mut() = method.parse().expect("method");
        let body = (method != "GET").then(|| message.clone());
        let end = true;
        let answer = wire::exchange(&mut send, request, body, end).await;
        probes.push(probe_of(sent, &answer));
    }
    let mut two = message.to_vec();
    two.extend_from_slice(&message);
    let request = wire::grpc_request(address, wire::SATURATION_PATH, &[]);
    let answer = wire::exchange(&mut send, request, Some(two.into()), true).await;
    probes.push(probe_of("two messages on a unary call", &answer));
    probes
}

/// grpc-web over HTTP/1.1 from `origin` (the server must run with
/// `--grpc-web`): the HTTP status and whether it was computed.
pub async fn grpc_web_from_origin(server: &ServerProcess, origin: &str) -> (u16, bool) {
    let mut request = format!(
        "POST {} HTTP/1.1\r\nhost: localhost\r\ncontent-type: application/grpc-web+proto\r\n\
         x-grpc-web: 1\r\norigin: {origin}\r\ncontent-length: 5\r\nconnection: close\r\n\r\n",
        wire::LIST_MODELS_PATH
    )
    .into_bytes();
    request.extend_from_slice(&[0, 0, 0, 0, 0]);
    let response = wire::http1_exchange(server.address, &request).await;
    let computed = response.contains("grpc-status:0") || response.contains("grpc-status: 0");
    (wire::http1_status(&response), computed)
}

/// What the access log said of calls the client abandoned.
#[derive(Debug, Clone, Default, Serialize)]
pub struct AbandonedFigures {
    /// Logged status of a call reset while its message was half sent.
    pub reset_mid_request: Option<String>,
    /// Logged status of a batch reset while the server computed it.
    pub reset_mid_compute: Option<String>,
}

/// Finding 7, last part: calls the client abandons (RST_STREAM CANCEL), as
/// the server's access log records them.
pub async fn abandoned_calls(server: &ServerProcess) -> AbandonedFigures {
    let address = server.address;
    let send = wire::h2_connect(address).await.expect("connection");
    let message = wire::grpc_frame(&inputs::batch(2_000));

    let half = message.slice(..message.len() / 2);
    let mut ready = send.clone().ready().await.expect("ready");
    let request = wire::grpc_request(
        address,
        wire::BATCH_SATURATION_PATH,
        &[("x-request-id", "abandoned-mid-request")],
    );
    let (_response, mut body) = ready.send_request(request, false).expect("send");
    let _ = body.send_data(half, false);
    tokio::time::sleep(Duration::from_millis(200)).await;
    body.send_reset(h2::Reason::CANCEL);

    let big = wire::grpc_frame(&inputs::batch(10_000));
    let mut ready = send.clone().ready().await.expect("ready");
    let request = wire::grpc_request(
        address,
        wire::BATCH_SATURATION_PATH,
        &[("x-request-id", "abandoned-mid-compute")],
    );
    let (_response, mut body) = ready.send_request(request, false).expect("send");
    let _ = body.send_data(big, true);
    tokio::time::sleep(Duration::from_millis(5)).await;
    body.send_reset(h2::Reason::CANCEL);

    let logged = |id: &str| {
        server
            .call_lines()
            .iter()
            .find(|l| l["request_id"] == id)
            .and_then(|l| l["status"].as_str().map(str::to_owned))
    };
    let deadline = Instant::now() + Duration::from_secs(15);
    while Instant::now() < deadline
        && (logged("abandoned-mid-request").is_none() || logged("abandoned-mid-compute").is_none())
    {
        tokio::time::sleep(Duration::from_millis(50)).await;
    }
    AbandonedFigures {
        reset_mid_request: logged("abandoned-mid-request"),
        reset_mid_compute: logged("abandoned-mid-compute"),
    }
}

/// One honest ListModels call through the main listener on a fresh
/// connection (a server still serves after an attack).
pub async fn still_serves(server: &ServerProcess) -> bool {
    let Ok(channel) = oxbind_client::connect(server.uri()).await else {
        return false;
    };
    ModelCatalogServiceClient::new(channel)
        .list_models(ListModelsRequest::default())
        .await
        .is_ok()
}
