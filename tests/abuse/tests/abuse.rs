//! The abuse suite: each finding of issue 19 reproduced against a real
//! `oxbind-server` process on loopback, and what the server must do about
//! it. Small counts and short deadlines keep each test to a few seconds;
//! RELIABILITY.md has the same attacks at the default settings, with
//! figures. Nothing here times the server: where time matters, it is a
//! deadline the server is configured with, and the bounds are generous.
//!
//! The server binary is the one cargo built beside this test
//! (`cargo build -p oxbind-service --bin oxbind-server`), or
//! `OXBIND_SERVER_BIN`.

use std::time::Duration;

use oxbind_abuse::{
    attacks::{self, HonestClient, StreamHold},
    bound::{memory_bound_mib, Limits},
    doors::{self, Http1Hold},
    server::{free_port, raise_open_file_limit, server_binary, ServerOptions, ServerProcess},
    tls::MutualTls,
};

fn start(args: &[&str]) -> ServerProcess {
    raise_open_file_limit();
    let options = ServerOptions::with_args(args.iter().copied()).health_listener();
    ServerProcess::start(&server_binary(), &options)
}

fn secs(s: f64) -> Duration {
    Duration::from_secs_f64(s)
}

/// Finding 1: idle reflection streams hold no unary call slot, are capped,
/// and end when idle.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn idle_reflection_streams_take_no_call_slot_and_end_when_idle() {
    let server = start(&[
        "--streaming-idle-timeout",
        "1s",
        "--max-concurrent-streams",
        "128",
    ]);
    let figures =
        attacks::idle_reflection_streams(&server, StreamHold::on_one_connection(64), 20, secs(6.0))
            .await;
    assert_eq!(figures.honest_calls.get("OK"), 20, "{figures:?}");
    assert_eq!(
        figures.streams.refused_at_once.get("RESOURCE_EXHAUSTED"),
        64 - 8,
        "past the streaming cap of 8: {figures:?}"
    );
    assert_eq!(
        figures.streams.ended_later.get("DEADLINE_EXCEEDED"),
        8,
        "the 8 admitted streams end when idle: {figures:?}"
    );
    assert_eq!(figures.streams.still_open, 0, "{figures:?}");
}

/// Finding 1: unary streams that send headers and no message hold no call
/// slot and end after the request arrival timeout, not the call timeout.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn headers_only_streams_take_no_call_slot_and_end_early() {
    let server = start(&[
        "--request-arrival-timeout",
        "1s",
        "--call-timeout",
        "30s",
        "--max-concurrent-streams",
        "128",
    ]);
    let figures =
        attacks::headers_only_streams(&server, StreamHold::on_one_connection(64), 20, secs(8.0))
            .await;
    assert_eq!(figures.honest_calls.get("OK"), 20, "{figures:?}");
    assert_eq!(
        figures.streams.ended_later.get("DEADLINE_EXCEEDED"),
        64,
        "{figures:?}"
    );
    let last = figures.streams.last_end_ms.expect("they ended");
    assert!(
        last < 6_000.0,
        "ended by the 1 s arrival timeout, not the 30 s call timeout: {figures:?}"
    );
}

/// Finding 1, a variant: the message sent, the request never ended.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn unended_requests_take_no_call_slot_and_end_early() {
    let server = start(&[
        "--request-arrival-timeout",
        "1s",
        "--call-timeout",
        "30s",
        "--max-concurrent-streams",
        "128",
    ]);
    let figures =
        attacks::unended_requests(&server, StreamHold::on_one_connection(64), 20, secs(8.0)).await;
    assert_eq!(figures.honest_calls.get("OK"), 20, "{figures:?}");
    assert_eq!(
        figures.streams.ended_later.get("DEADLINE_EXCEEDED"),
        64,
        "{figures:?}"
    );
}

/// Finding 2: sockets that never send the HTTP/2 preface, beyond the
/// connection cap, are closed at the preface deadline and a new client is
/// served.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn idle_sockets_beyond_the_cap_are_closed_and_a_new_client_is_served() {
    let server = start(&["--max-connections", "32", "--preface-timeout", "500ms"]);
    let honest = HonestClient::Plain(server.uri());
    let figures =
        attacks::idle_sockets(&server, server.address, 64, honest, secs(10.0), secs(8.0)).await;
    assert!(figures.honest_served, "{figures:?}");
    assert_eq!(figures.closed_by_server, 64, "{figures:?}");
}

/// Finding 2 under mutual TLS: sockets that never send a TLS hello are
/// closed at the handshake deadline; a client with the right certificate
/// is served.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn silent_tls_sockets_are_closed_and_a_client_with_a_certificate_is_served() {
    let dir = std::env::temp_dir().join(format!("oxbind-abuse-test-{}", std::process::id()));
    let tls = MutualTls::create(&dir);
    let mut args = vec![
        "--max-connections",
        "32",
        "--tls-handshake-timeout",
        "500ms",
    ];
    args.extend(tls.server_args.iter().map(String::as_str));
    let server = start(&args);
    let honest = HonestClient::MutualTls {
        uri: format!("https://localhost:{}", server.address.port()),
        ca_pem: tls.ca_pem.clone(),
        identity: tls.client.clone(),
    };
    let figures =
        attacks::idle_sockets(&server, server.address, 64, honest, secs(10.0), secs(8.0)).await;
    let _ = std::fs::remove_dir_all(dir);
    assert!(figures.honest_served, "{figures:?}");
    assert_eq!(figures.closed_by_server, 64, "{figures:?}");
}

/// Finding 2, second part: connections that answer every ping but open no
/// stream are closed at the idle timeout.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn idle_connections_answering_pings_are_closed() {
    let server = start(&["--idle-timeout", "1s", "--keepalive-interval", "200ms"]);
    let figures = attacks::idle_connections(&server, 16, secs(6.0)).await;
    assert_eq!(figures.closed_by_server, 16, "{figures:?}");
}

/// Finding 2 through the Connect door over HTTP/1.1: keep-alive
/// connections beyond the connection cap that made one Connect call and sit
/// idle are closed at the idle timeout, and a new Connect client is served.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn idle_connect_keepalive_connections_beyond_the_cap_are_closed_and_a_new_client_is_served() {
    let server = start(&["--max-connections", "32", "--idle-timeout", "1s"]);
    let figures = doors::http1_sockets(
        &server,
        Http1Hold::IdleAfterACall,
        64,
        secs(10.0),
        secs(8.0),
    )
    .await;
    assert!(figures.honest_served, "{figures:?}");
    assert_eq!(figures.closed_by_server, 64, "{figures:?}");
    assert_eq!(figures.health.failed, 0, "{figures:?}");
}

/// Finding 2 over HTTP/1.1 (which the listener speaks for Connect, FHIR
/// and grpc-web): connections beyond the cap that send half a request head
/// and stall are closed at the preface deadline, and a new client is
/// served.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn unfinished_http1_request_heads_beyond_the_cap_are_closed_at_the_preface_deadline() {
    let server = start(&["--max-connections", "32", "--preface-timeout", "500ms"]);
    let figures = doors::http1_sockets(
        &server,
        Http1Hold::UnfinishedHead,
        64,
        secs(10.0),
        secs(8.0),
    )
    .await;
    assert!(figures.honest_served, "{figures:?}");
    assert_eq!(figures.closed_by_server, 64, "{figures:?}");
}

/// Finding 1 through the Connect door: requests that declare a body and
/// never send it hold no call slot (more of them than there are slots, and
/// honest calls are all served) and are answered at the request arrival
/// timeout, not the call timeout.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn connect_bodies_never_sent_take_no_call_slot_and_end_early() {
    let server = start(&["--request-arrival-timeout", "1s", "--call-timeout", "30s"]);
    let figures = doors::unsent_bodies(&server, 100, 64, 20, secs(8.0)).await;
    assert_eq!(figures.honest_calls.get("OK"), 20, "{figures:?}");
    assert_eq!(
        figures.answered.get("DEADLINE_EXCEEDED"),
        100,
        "{figures:?}"
    );
    let last = figures.last_answer_ms.expect("answered");
    assert!(
        last < 6_000.0,
        "ended by the 1 s arrival timeout, not the 30 s call timeout: {figures:?}"
    );
}

/// Overload through the Connect and FHIR doors (singles, 500-item batches,
/// FHIR panels, 640 at once over 8 connections): their calls are admitted
/// by the same call slots, fair shares and work limit as gRPC's. With 8
/// call slots (one per connection) and room for two batches, many are
/// refused at once; every answer is OK or RESOURCE_EXHAUSTED, and health
/// answers throughout.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn overload_through_connect_and_fhir_is_admitted_by_the_same_limits() {
    let server = start(&[
        "--max-concurrent-calls",
        "8",
        "--max-batch-items",
        "500",
        "--max-items-in-flight",
        "1000",
    ]);
    let figures = doors::overload(&server, 640, 8).await;
    assert_eq!(figures.answers.total(), 640, "{figures:?}");
    assert!(
        figures
            .answers
            .others(&["OK", "RESOURCE_EXHAUSTED"])
            .is_empty(),
        "{figures:?}"
    );
    assert!(figures.answers.get("OK") > 0, "{figures:?}");
    assert!(
        figures.answers.get("RESOURCE_EXHAUSTED") > 0,
        "more than the limits admit: {figures:?}"
    );
    assert_eq!(figures.health.failed, 0, "{figures:?}");
    assert!(figures.health.serving > 0, "{figures:?}");
}

/// Finding 3: the health listener has a connection cap, so sockets held
/// open on it cannot use up the descriptors the main listener needs.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_health_listener_cap_keeps_descriptors_for_the_main_listener() {
    raise_open_file_limit();
    let options = ServerOptions::with_args([
        "--max-connections",
        "64",
        "--max-health-connections",
        "16",
        "--preface-timeout",
        "1s",
    ])
    .health_listener()
    .open_file_limit(512);
    let server = ServerProcess::start(&server_binary(), &options);
    let honest = HonestClient::Plain(server.uri());
    let target = server.health_address.expect("health listener");
    let figures = attacks::idle_sockets(&server, target, 600, honest, secs(10.0), secs(1.0)).await;
    assert!(figures.honest_served, "{figures:?}");
    assert!(
        figures.server_fds_peak < 200,
        "16 health connections, not 600: {figures:?}"
    );
    assert!(attacks::still_serves(&server).await);
}

/// A server started with caps its open-file limit cannot hold refuses to
/// start, naming the settings.
#[test]
fn caps_beyond_the_open_file_limit_are_refused_at_start() {
    let output = std::process::Command::new("sh")
        .arg("-c")
        .arg("ulimit -n 256 && exec \"$0\" --listen 127.0.0.1:0 --max-connections 1000")
        .arg(server_binary())
        .output()
        .expect("run oxbind-server");
    assert_eq!(output.status.code(), Some(64), "{output:?}");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("--max-connections"), "{stderr}");
}

/// Clients that never read their answers hold their call slots only until
/// their deadline: then their connections are closed. Others are served
/// meanwhile.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn clients_that_never_read_are_closed_at_their_deadline() {
    let server = start(&["--call-timeout", "2s"]);
    let figures = attacks::stalled_readers(&server, 16, 2, 1_000, secs(10.0)).await;
    assert_eq!(figures.connections_closed, 2, "{figures:?}");
    assert_eq!(figures.honest_calls.get("OK"), 20, "{figures:?}");
    assert_eq!(figures.honest_calls_after.get("OK"), 20, "{figures:?}");
}

/// Ten times the call limit at once: only OK or RESOURCE_EXHAUSTED, and
/// health answers throughout.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn ten_times_overload_gets_only_ok_or_resource_exhausted_and_health_answers() {
    let server = start(&[]);
    let figures = attacks::overload(&server, 640, 8).await;
    assert_eq!(figures.answers.total(), 640, "{figures:?}");
    assert!(
        figures
            .answers
            .others(&["OK", "RESOURCE_EXHAUSTED"])
            .is_empty(),
        "{figures:?}"
    );
    assert!(figures.answers.get("OK") > 0, "{figures:?}");
    assert_eq!(figures.health.failed, 0, "{figures:?}");
    assert!(figures.health.serving > 0, "{figures:?}");
}

/// Findings 4 and 5: the heaviest mix the default limits allow (every
/// connection holding waiting streams with the largest headers, streaming
/// calls that read nothing, batch callers filling the work and request-byte
/// limits) stays under the documented memory bound; batches get only OK or
/// RESOURCE_EXHAUSTED, and health answers throughout.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_heaviest_mix_stays_under_the_memory_bound_and_health_answers() {
    // The default limits; only the call and request-arrival timeouts are
    // raised, as this debug build receives and computes a 10,000-item batch
    // many times slower than a release build does (neither plays a part in
    // the bound).
    let server = start(&["--call-timeout", "60s", "--request-arrival-timeout", "30s"]);
    let mix = attacks::WorstMix {
        pending_connections: 246,
        streams_per_connection: 16,
        header_bytes: 7_600,
        streaming_calls: 8,
        batch_callers: 64,
        batch_connections: 8,
        items: 10_000,
        duration: secs(10.0),
    };
    let figures = attacks::worst_mix(&server, mix).await;
    let bound = memory_bound_mib(&Limits::defaults());
    let peak = figures.batches.memory.peak_rss_mib;
    assert!(
        peak < bound,
        "peak resident {peak:.0} MiB over the bound {bound:.0} MiB: {figures:?}"
    );
    assert!(figures.batches.answers.get("OK") > 0, "{figures:?}");
    assert!(
        figures
            .batches
            .answers
            .others(&["OK", "RESOURCE_EXHAUSTED"])
            .is_empty(),
        "{figures:?}"
    );
    assert_eq!(figures.batches.health.failed, 0, "{figures:?}");
}

/// Finding 6: SIGTERM with a health Watch stream open: the stream sees
/// NOT_SERVING, then ends, and the process exits well within its grace
/// period.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn sigterm_with_a_watch_stream_open_exits_well_within_the_grace_period() {
    let mut server = start(&["--shutdown-grace", "10s"]);
    let figures = attacks::shutdown_with_watch(&mut server, secs(15.0)).await;
    assert_eq!(figures.exit_code, Some(0), "{figures:?}");
    let exit_ms = figures.exit_ms.expect("it exited");
    assert!(exit_ms < 3_000.0, "{figures:?}");
    assert!(figures.watch_saw_not_serving, "{figures:?}");
    assert_eq!(
        figures.watch_end.as_deref(),
        Some("UNAVAILABLE"),
        "{figures:?}"
    );
}

/// Finding 7: wrong content types, methods and a second message are
/// refused as the gRPC over HTTP/2 protocol says, never computed.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn non_grpc_requests_are_refused_not_computed() {
    let server = start(&[]);
    let probes = attacks::protocol_http2(&server).await;
    let find = |sent: &str| {
        probes
            .iter()
            .find(|p| p.sent.starts_with(sent))
            .unwrap_or_else(|| panic!("no probe {sent}: {probes:?}"))
    };
    assert!(find("POST application/grpc (control)").answered_ok);
    for content_type in [
        "POST content-type text/plain",
        "POST with no content-type",
        "POST content-type application/grpc+json",
    ] {
        assert_eq!(find(content_type).http_status, 415, "{probes:?}");
    }
    // Once a Connect door takes application/json in front of the gRPC
    // stack, it answers this one; either way it is not computed as gRPC.
    assert!(!find("POST content-type application/json").answered_ok);
    assert_eq!(find("PUT").http_status, 405, "{probes:?}");
    assert_eq!(find("GET").http_status, 405, "{probes:?}");
    let two = find("two messages");
    assert!(!two.answered_ok, "{probes:?}");
    assert_eq!(two.grpc_status.as_deref(), Some("INTERNAL"), "{probes:?}");
}

/// Finding 7: a grpc-web call from an origin that is not allowed gets 403
/// and is not computed; one from the allowed origin is.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn grpc_web_from_a_disallowed_origin_is_forbidden() {
    let allowed = "https://dashboard.larchmere.example";
    let origins = format!("--cors-allowed-origins={allowed}");
    let server = start(&["--grpc-web", &origins]);
    let (status, computed) =
        attacks::grpc_web_from_origin(&server, "https://elsewhere.example").await;
    assert_eq!((status, computed), (403, false));
    let (status, computed) = attacks::grpc_web_from_origin(&server, allowed).await;
    assert_eq!((status, computed), (200, true));
}

/// Finding 7: calls the client abandons are logged as CANCELLED.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn abandoned_calls_are_logged_as_cancelled() {
    let server = start(&[]);
    let figures = attacks::abandoned_calls(&server).await;
    assert_eq!(
        figures.reset_mid_request.as_deref(),
        Some("CANCELLED"),
        "{figures:?}"
    );
    assert_eq!(
        figures.reset_mid_compute.as_deref(),
        Some("CANCELLED"),
        "{figures:?}"
    );
}

/// Scale-out: three replicas on one port of 127.0.0.1, .2 and .3, a
/// balancing client resolving one name to all three: each replica serves
/// within 20 % of an even share.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn calls_spread_over_three_replicas_within_twenty_percent() {
    raise_open_file_limit();
    let port = free_port();
    let replicas: Vec<ServerProcess> = (1..=3)
        .map(|i| {
            let options = ServerOptions::default().listen(format!("127.0.0.{i}:{port}"));
            ServerProcess::start(&server_binary(), &options)
        })
        .collect();
    let figures = attacks::spread(&replicas, 600, 8).await;
    assert_eq!(figures.failed, 0, "{figures:?}");
    assert_eq!(
        figures.per_replica.values().sum::<u64>(),
        600,
        "{figures:?}"
    );
    assert!(figures.max_departure_percent <= 20.0, "{figures:?}");
}

/// Callers that do not balance: the maximum connection age replaces their
/// connection with a graceful GOAWAY (two-phase, so no call in progress is
/// cut off), and every call is answered.
///
/// A tonic client can still lose the race in which it sends a call on a
/// connection whose GOAWAY has just arrived: h2 refuses it before it leaves
/// the client, and tonic reports INTERNAL "h2 protocol error" instead of
/// retrying it (gRPC's transparent retry, which grpc-go and grpc-java do).
/// Such a call never reached the server, so this caller sends it again,
/// once; the server must answer every call it received.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_maximum_age_replaces_a_connection_without_failing_a_call() {
    raise_open_file_limit();
    let options = ServerOptions::with_args([
        "--max-connection-age",
        "500ms",
        "--max-connection-age-grace",
        "1s",
    ])
    .log_filter("info,oxbind_service::layers::connections=debug");
    let server = ServerProcess::start(&server_binary(), &options);
    let client = oxbind_client::OxbindClient::builder(server.uri())
        .retry(oxbind_client::RetryPolicy::none())
        .connect()
        .await
        .expect("connect");
    let until = std::time::Instant::now() + secs(3.0);
    let (mut calls, mut sent_again) = (0, 0);
    while std::time::Instant::now() < until {
        let request = oxbind_abuse::inputs::blood_gas(calls);
        if let Err(error) = client.saturation_from_tension(request.clone()).await {
            let refused_before_sending = error.code() == tonic::Code::Internal
                && error.to_string().contains("h2 protocol error");
            assert!(refused_before_sending, "a call failed: {error}");
            sent_again += 1;
            client
                .saturation_from_tension(request)
                .await
                .expect("answered when sent again on the new connection");
        }
        calls += 1;
        tokio::time::sleep(Duration::from_millis(20)).await;
    }
    let replaced = server
        .logs()
        .iter()
        .filter(|l| l["reason"] == "max_age")
        .count();
    assert!(replaced >= 2, "{replaced} connections aged out in 3 s");
    assert!(
        sent_again <= replaced,
        "at most one call per GOAWAY races it: {sent_again} of {calls}"
    );
    let logged_failures = server
        .call_lines()
        .iter()
        .filter(|l| l["status"] != "OK")
        .count();
    assert_eq!(logged_failures, 0, "the server answered every call it got");
}
