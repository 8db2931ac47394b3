//! A health prober, as a kubelet or a load balancer would be: one
//! `grpc.health.v1.Health/Check` after another on its own connection, each
//! with a deadline, timed. It runs on a thread and runtime of its own, so
//! that the attack's own traffic (on the attacker's runtime) does not delay
//! it; on a shared machine the operating system still may.

use std::{
    sync::{
        atomic::{AtomicBool, Ordering},
        Arc,
    },
    thread::JoinHandle,
    time::{Duration, Instant},
};

use hdrhistogram::Histogram;
use oxbind_client::health::{
    health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
};
use serde::Serialize;

/// Pause between two checks.
pub const PROBE_INTERVAL: Duration = Duration::from_millis(10);
/// Deadline of one check; a check that takes longer counts as failed.
pub const PROBE_DEADLINE: Duration = Duration::from_secs(2);
/// The latency the issue holds health to, at the 99th percentile.
pub const HEALTH_TARGET: Duration = Duration::from_millis(100);

/// What the prober saw.
#[derive(Debug, Clone, Default, Serialize)]
pub struct HealthFigures {
    /// Checks answered SERVING.
    pub serving: u64,
    /// Checks answered otherwise, failed or past their deadline.
    pub failed: u64,
    /// Median latency, ms.
    pub p50_ms: f64,
    /// 99th percentile latency, ms.
    pub p99_ms: f64,
    /// Slowest check, ms.
    pub max_ms: f64,
    /// Checks slower than 100 ms.
    pub over_100ms: u64,
}

/// A running prober.
pub struct HealthProbe {
    stop: Arc<AtomicBool>,
    thread: JoinHandle<HealthFigures>,
}

impl HealthProbe {
    /// Start probing `uri` (health of the whole server, `""`); returns once
    /// the prober is connected.
    pub async fn start(uri: String) -> Self {
        let stop = Arc::new(AtomicBool::new(false));
        let stopping = stop.clone();
        let (connected_tx, connected_rx) = tokio::sync::oneshot::channel::<()>();
        let thread = std::thread::spawn(move || {
            tokio::runtime::Builder::new_current_thread()
                .enable_all()
                .build()
                .expect("prober runtime")
                .block_on(probe(uri, stopping, connected_tx))
        });
        let _ = connected_rx.await;
        Self { stop, thread }
    }

    /// Stop and report.
    pub async fn finish(self) -> HealthFigures {
        self.stop.store(true, Ordering::Relaxed);
        let thread = self.thread;
        tokio::task::spawn_blocking(move || thread.join().expect("prober thread"))
            .await
            .expect("join")
    }
}

/// Check `uri` until `stopping`; say when connected.
async fn probe(
    uri: String,
    stopping: Arc<AtomicBool>,
    connected: tokio::sync::oneshot::Sender<()>,
) -> HealthFigures {
    let channel = oxbind_client::connect(uri)
        .await
        .expect("health connection");
    let _ = connected.send(());
    let mut client = HealthClient::new(channel);
    let mut latency = Histogram::<u64>::new(3).expect("histogram");
    let mut figures = HealthFigures::default();
    while !stopping.load(Ordering::Relaxed) {
        let start = Instant::now();
        let answer =
            tokio::time::timeout(PROBE_DEADLINE, client.check(HealthCheckRequest::default())).await;
        let elapsed = start.elapsed();
        let _ = latency.record(elapsed.as_micros() as u64);
        if elapsed > HEALTH_TARGET {
            figures.over_100ms += 1;
        }
        match answer {
            Ok(Ok(r)) if r.get_ref().status() == ServingStatus::Serving => figures.serving += 1,
            _ => figures.failed += 1,
        }
        tokio::time::sleep(PROBE_INTERVAL).await;
    }
    let ms = |micros: u64| micros as f64 / 1000.0;
    figures.p50_ms = ms(latency.value_at_quantile(0.50));
    figures.p99_ms = ms(latency.value_at_quantile(0.99));
    figures.max_ms = ms(latency.max());
    figures
}
