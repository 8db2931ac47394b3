//! The attacks of issue 19 through the doors beside gRPC: the Connect
//! protocol (JSON, over HTTP/1.1 and HTTP/2) and the FHIR door, which share
//! the main listener's connection loop and the server's admission. Each
//! returns the same figures as its gRPC counterpart in [`crate::attacks`].
//!
//! - [`http1_sockets`]: HTTP/1.1 connections beyond the connection cap that
//!   made one Connect call and sit idle (keep-alive), or that send half a
//!   request head and stall: the idle timeout and the preface deadline
//!   close them, and a new client is served.
//! - [`unsent_bodies`]: Connect POSTs that declare a body and never send
//!   it: they hold no call slot and are answered at the request arrival
//!   timeout.
//! - [`overload`]: ten times the call limit at once, Connect singles and
//!   batches and FHIR panels: only OK or RESOURCE_EXHAUSTED.

use std::{
    net::SocketAddr,
    sync::{Arc, Mutex},
    time::{Duration, Instant},
};

use http::{Method, Request};
use prost::bytes::Bytes;
use serde::Serialize;
use serde_json::{json, Value};
use tokio::{
    io::{AsyncReadExt, AsyncWriteExt},
    net::TcpStream,
    task::JoinSet,
};

use crate::{
    attacks::{
        honest_calls, ms, warm_connections, LoadFigures, SocketsFigures, Tally, BATCH_RETRY_PAUSE,
    },
    probe::{HealthFigures, HealthProbe},
    server::{Memory, ServerProcess},
    wire,
};

/// The FHIR operation's path.
pub const FHIR_OPERATION_PATH: &str = "/fhir/r4/$derive-oxygen-values";

/// The example panel from the invented hospital (a FHIR Parameters).
pub const FHIR_PANEL: &str = include_str!("../../../client/assets/fhir/larchmere-icu-panel.json");

/// One Connect JSON request: a blood gas.
fn single_json(i: usize) -> String {
    json!({
        "po2": {"value": 40.0 + (i % 60) as f64, "unit": "mm[Hg]"},
        "conditions": {"ph": 7.35, "pco2": {"value": 42, "unit": "mm[Hg]"}},
    })
    .to_string()
}

/// A Connect JSON batch of `items` blood gases.
fn batch_json(items: usize) -> String {
    let requests: Vec<Value> = (0..items)
        .map(|i| serde_json::from_str(&single_json(i)).expect("JSON"))
        .collect();
    json!({ "requests": requests }).to_string()
}

/// A Connect POST over HTTP/1.1 as bytes (keep-alive unless `close`).
fn http1_connect_post(path: &str, body: &str, close: bool) -> Vec<u8> {
    let connection = if close { "connection: close\r\n" } else { "" };
    format!(
        "POST {path} HTTP/1.1\r\nhost: oxbind\r\ncontent-type: application/json\r\n\
         connect-protocol-version: 1\r\ncontent-length: {}\r\n{connection}\r\n{body}",
        body.len()
    )
    .into_bytes()
}

/// An HTTP/1.1 answer, read whole (head and `content-length` bytes).
#[derive(Debug, Clone, Default)]
struct Http1Answer {
    status: u16,
    body: Vec<u8>,
}

/// Send `request` on `tcp` and read one answer, leaving the connection
/// open. `None` when the server closed it first.
async fn http1_call(tcp: &mut TcpStream, request: &[u8]) -> Option<Http1Answer> {
    tcp.write_all(request).await.ok()?;
    let mut buffer = Vec::new();
    let mut chunk = [0u8; 8192];
    loop {
        if let Some(end) = buffer.windows(4).position(|w| w == b"\r\n\r\n") {
            let head = String::from_utf8_lossy(&buffer[..end]).to_lowercase();
            let status = wire::http1_status(&head);
            let length: usize = head
                .lines()
                .find_map(|l| l.strip_prefix("content-length:"))
                .and_then(|v| v.trim().parse().ok())
                .unwrap_or(0);
            if buffer.len() >= end + 4 + length {
                return Some(Http1Answer {
                    status,
                    body: buffer[end + 4..end + 4 + length].to_vec(),
                });
            }
        }
        let read = tcp.read(&mut chunk).await.ok()?;
        if read == 0 {
            return None;
        }
        buffer.extend_from_slice(&chunk[..read]);
    }
}

/// The status an answer of a door stands for: `OK`, a Connect error's code
/// in capitals (`RESOURCE_EXHAUSTED`), `RESOURCE_EXHAUSTED` for the FHIR
/// door's 503 `transient` OperationOutcome, else `HTTP_<n>`.
fn door_label(status: u16, body: &[u8]) -> String {
    if status == 200 {
        return "OK".to_owned();
    }
    let json: Value = serde_json::from_slice(body).unwrap_or(Value::Null);
    if let Some(code) = json["code"].as_str() {
        return code.to_uppercase();
    }
    if status == 503 && json["issue"][0]["code"] == "transient" {
        return "RESOURCE_EXHAUSTED".to_owned();
    }
    format!("HTTP_{status}")
}

/// How the attacker holds its HTTP/1.1 connections.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Http1Hold {
    /// One Connect call (answered; the connection kept alive), then
    /// nothing.
    IdleAfterACall,
    /// Half a Connect request head (more than the 24 bytes of an HTTP/2
    /// preface), then nothing.
    UnfinishedHead,
}

/// `sockets` HTTP/1.1 connections to the main listener held as `hold`
/// says; meanwhile an honest Connect client (HTTP/1.1, a fresh connection)
/// tries for up to `honest_limit`; the sockets are watched for `observe`.
pub async fn http1_sockets(
    server: &ServerProcess,
    hold: Http1Hold,
    sockets: usize,
    honest_limit: Duration,
    observe: Duration,
) -> SocketsFigures {
    let probe = HealthProbe::start(server.health_uri()).await;
    let target = server.address;
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
            match hold {
                Http1Hold::IdleAfterACall => {
                    let request = http1_connect_post(wire::LIST_MODELS_PATH, "{}", false);
                    let _ = http1_call(&mut tcp, &request).await;
                }
                Http1Hold::UnfinishedHead => {
                    let head = format!(
                        "POST {} HTTP/1.1\r\nhost: oxbind\r\ncontent-type: application/json\r\n",
                        wire::LIST_MODELS_PATH
                    );
                    let _ = tcp.write_all(head.as_bytes()).await;
                }
            }
            let mut buffer = [0u8; 256];
            loop {
                match tcp.read(&mut buffer).await {
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
    let honest = async {
        let mut tcp = TcpStream::connect(target)
            .await
            .map_err(|e| e.to_string())?;
        let request = http1_connect_post(wire::LIST_MODELS_PATH, "{}", true);
        match http1_call(&mut tcp, &request).await {
            Some(answer) if answer.status == 200 => Ok(()),
            Some(answer) => Err(format!("HTTP {}", answer.status)),
            None => Err("closed without an answer".to_owned()),
        }
    };
    let honest_result = tokio::time::timeout(honest_limit, honest).await;
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

/// Figures of the attack by Connect requests whose bodies never come.
#[derive(Debug, Clone, Default, Serialize)]
pub struct UnsentBodiesFigures {
    /// Requests sent (each on its own HTTP/1.1 connection: the head, a
    /// `content-length`, no body).
    pub requests: usize,
    /// How the server answered them, by status, within the observation
    /// time.
    pub answered: Tally,
    /// When the last of them was answered, ms after sending.
    pub last_answer_ms: Option<f64>,
    /// Requests not answered when the observation ended.
    pub unanswered: usize,
    /// Honest gRPC SaturationFromTension calls made meanwhile, by status.
    pub honest_calls: Tally,
    /// Health during the attack.
    pub health: HealthFigures,
    /// The server's memory after.
    pub memory: Memory,
}

/// Finding 1 through the Connect door: `requests` Connect POSTs over
/// HTTP/1.1 that declare a body of `declared` bytes and never send it; then
/// `calls` honest gRPC calls; the held requests are watched for `observe`.
pub async fn unsent_bodies(
    server: &ServerProcess,
    requests: usize,
    declared: usize,
    calls: usize,
    observe: Duration,
) -> UnsentBodiesFigures {
    let probe = HealthProbe::start(server.health_uri()).await;
    let address = server.address;
    let answers: Arc<Mutex<Vec<(Duration, String)>>> = Arc::default();
    let sent_at = Instant::now();
    let mut held = Vec::new();
    for _ in 0..requests {
        let Ok(Ok(mut tcp)) =
            tokio::time::timeout(Duration::from_secs(2), TcpStream::connect(address)).await
        else {
            break;
        };
        let head = format!(
            "POST {} HTTP/1.1\r\nhost: oxbind\r\ncontent-type: application/json\r\n\
             content-length: {declared}\r\n\r\n",
            wire::SATURATION_PATH
        );
        let answers = answers.clone();
        held.push(tokio::spawn(async move {
            let label = match http1_call(&mut tcp, head.as_bytes()).await {
                Some(answer) => door_label(answer.status, &answer.body),
                None => "CLOSED".to_owned(),
            };
            answers.lock().unwrap().push((sent_at.elapsed(), label));
        }));
    }
    let sent = held.len();
    // Let the server take the requests in before the honest calls.
    tokio::time::sleep(Duration::from_millis(200)).await;
    let honest = honest_calls(address, calls, Duration::from_secs(5)).await;
    let until = sent_at + observe;
    while Instant::now() < until && answers.lock().unwrap().len() < sent {
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
    let mut answered = Tally::default();
    let mut last: Option<Duration> = None;
    for (at, label) in answers.lock().unwrap().iter() {
        answered.add(label.clone());
        last = Some(last.map_or(*at, |l| l.max(*at)));
    }
    let unanswered = sent - answered.total() as usize;
    for task in held {
        task.abort();
    }
    UnsentBodiesFigures {
        requests: sent,
        answered,
        last_answer_ms: last.map(ms),
        unanswered,
        honest_calls: honest,
        health: probe.finish().await,
        memory: server.memory(),
    }
}

/// An HTTP/2 request to a door (prior knowledge), with `content_type`.
fn door_request(address: SocketAddr, path: &str, content_type: &str) -> Request<()> {
    Request::builder()
        .method(Method::POST)
        .uri(format!("http://{address}{path}"))
        .header("content-type", content_type)
        .header("connect-timeout-ms", "20000")
        .body(())
        .expect("request")
}

/// Send `request` with `body` and read the whole answer: its status and
/// body.
async fn door_exchange(
    send: &mut h2::client::SendRequest<Bytes>,
    request: Request<()>,
    body: Bytes,
) -> (u16, Vec<u8>) {
    let Ok(mut ready) = send.clone().ready().await else {
        return (0, Vec::new());
    };
    let Ok((response, mut stream)) = ready.send_request(request, false) else {
        return (0, Vec::new());
    };
    let _ = stream.send_data(body, true);
    let Ok(response) = response.await else {
        return (0, Vec::new());
    };
    let status = response.status().as_u16();
    let mut body = response.into_body();
    let mut bytes = Vec::new();
    while let Some(chunk) = body.data().await {
        let Ok(chunk) = chunk else {
            return (0, bytes);
        };
        let _ = body.flow_control().release_capacity(chunk.len());
        bytes.extend_from_slice(&chunk);
    }
    (status, bytes)
}

/// The 10x overload through the doors beside gRPC: `calls` at once over
/// `connections` HTTP/2 connections: Connect JSON SaturationFromTension
/// calls, every eighth a 500-item Connect JSON batch (computed on the
/// compute pool) and every eighth a FHIR panel.
pub async fn overload(server: &ServerProcess, calls: usize, connections: usize) -> LoadFigures {
    const BATCH_ITEMS: usize = 500;
    let probe = HealthProbe::start(server.health_uri()).await;
    let address = server.address;
    let sends = warm_connections(address, connections).await;
    let batch = Bytes::from(batch_json(BATCH_ITEMS));
    let panel = Bytes::from_static(FHIR_PANEL.as_bytes());
    let start = Instant::now();
    let mut set = JoinSet::new();
    for i in 0..calls {
        let mut send = sends[i % sends.len()].clone();
        let (request, body, items) = match i % 8 {
            7 => (
                door_request(address, wire::BATCH_SATURATION_PATH, "application/json"),
                batch.clone(),
                BATCH_ITEMS as u64,
            ),
            3 => (
                door_request(address, FHIR_OPERATION_PATH, "application/fhir+json"),
                panel.clone(),
                0,
            ),
            _ => (
                door_request(address, wire::SATURATION_PATH, "application/json"),
                Bytes::from(single_json(i)),
                0,
            ),
        };
        set.spawn(async move {
            let answer = tokio::time::timeout(
                Duration::from_secs(30),
                door_exchange(&mut send, request, body),
            )
            .await;
            match answer {
                Ok((status, body)) => {
                    let label = door_label(status, &body);
                    let computed = if label == "OK" { items } else { 0 };
                    (label, computed)
                }
                Err(_) => ("NO_ANSWER_IN_TIME".to_owned(), 0),
            }
        });
    }
    let mut answers = Tally::default();
    let mut items_computed = 0;
    while let Some(result) = set.join_next().await {
        let (label, items) = result.expect("call task");
        answers.add(label);
        items_computed += items;
    }
    LoadFigures {
        calls,
        answers,
        items_computed,
        elapsed_ms: ms(start.elapsed()),
        health: probe.finish().await,
        memory: server.memory(),
    }
}

/// Findings 4 and 5 through the Connect door: `concurrent` callers each
/// sending Connect JSON batches of `items` blood gases (provenance on each
/// item, the heaviest answer, about 1.7 KB an item in JSON) one after
/// another over `connections` HTTP/2 connections for `duration`, pausing
/// briefly after a refusal.
pub async fn batch_flood(
    server: &ServerProcess,
    concurrent: usize,
    items: usize,
    connections: usize,
    duration: Duration,
) -> LoadFigures {
    let probe = HealthProbe::start(server.health_uri()).await;
    let address = server.address;
    let batch = Bytes::from(batch_json(items));
    let sends = warm_connections(address, connections).await;
    let start = Instant::now();
    let until = start + duration;
    let mut set = JoinSet::new();
    for i in 0..concurrent {
        let mut send = sends[i % sends.len()].clone();
        let batch = batch.clone();
        set.spawn(async move {
            let mut answers = Tally::default();
            let mut calls = 0;
            while Instant::now() < until {
                let request =
                    door_request(address, wire::BATCH_SATURATION_PATH, "application/json");
                let (status, body) = door_exchange(&mut send, request, batch.clone()).await;
                let label = door_label(status, &body);
                calls += 1;
                if label != "OK" {
                    tokio::time::sleep(BATCH_RETRY_PAUSE).await;
                }
                answers.add(label);
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
