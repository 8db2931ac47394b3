//! The log off the request path, end to end: the built server writes its log
//! to a pipe that nobody reads, as a stuck log collector would leave it. Every
//! call is still answered; the lines that did not fit are dropped, counted in
//! the metric `oxbind.server.log.dropped_lines` (read by an in-process OTLP
//! receiver) and warned of; and once the pipe is read again, the server
//! writes out its queue on SIGTERM and exits 0.

use std::{
    io::{BufRead, BufReader},
    process::{Command, Stdio},
    sync::{Arc, Mutex},
    time::Duration,
};

use nix::{
    sys::signal::{kill, Signal},
    unistd::Pid,
};
use opentelemetry_proto::tonic::{
    collector::metrics::v1::{
        metrics_service_server::{MetricsService, MetricsServiceServer},
        ExportMetricsServiceRequest, ExportMetricsServiceResponse,
    },
    metrics::v1::{metric::Data, number_data_point},
};
use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient, BloodConditions, Quantity,
    SaturationFromTensionRequest,
};
use tonic::{Request, Response, Status};

/// Calls made while nothing reads the log: about 250 bytes of log each, many
/// times what a pipe (64 KiB on Linux) and the queue below hold.
const CALLS: usize = 3_000;
/// Calls in flight at once: fewer than the server's streams per connection
/// (16), which a client learns only with the server's first SETTINGS frame.
const IN_FLIGHT: usize = 8;
/// The server's log queue, in lines.
const QUEUE_LINES: &str = "16";
const DROPPED_METRIC: &str = "oxbind.server.log.dropped_lines";

#[derive(Default, Clone)]
struct Received {
    metrics: Arc<Mutex<Vec<ExportMetricsServiceRequest>>>,
}

#[tonic::async_trait]
impl MetricsService for Received {
    async fn export(
        &self,
        request: Request<ExportMetricsServiceRequest>,
    ) -> Result<Response<ExportMetricsServiceResponse>, Status> {
        self.metrics.lock().unwrap().push(request.into_inner());
        Ok(Response::new(ExportMetricsServiceResponse::default()))
    }
}

impl Received {
    /// The largest value the dropped-lines counter has reported (it is
    /// cumulative), if it has reported.
    fn dropped_lines(&self) -> Option<i64> {
        let metrics = self.metrics.lock().unwrap();
        metrics
            .iter()
            .flat_map(|m| &m.resource_metrics)
            .flat_map(|r| &r.scope_metrics)
            .flat_map(|s| &s.metrics)
            .filter(|m| m.name == DROPPED_METRIC)
            .filter_map(|m| match &m.data {
                Some(Data::Sum(sum)) => Some(sum),
                _ => None,
            })
            .flat_map(|sum| &sum.data_points)
            .filter_map(|p| match p.value {
                Some(number_data_point::Value::AsInt(v)) => Some(v),
                Some(number_data_point::Value::AsDouble(v)) => Some(v as i64),
                None => None,
            })
            .max()
    }
}

fn request(i: usize) -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2: Some(Quantity::mm_hg(40.0 + (i % 60) as f64)),
        conditions: Some(
            BloodConditions::standard()
                .with_ph(7.35)
                .with_pco2(Quantity::mm_hg(44.0))
                .with_temperature(Quantity::celsius(37.5)),
        ),
        ..Default::default()
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_log_nobody_reads_stalls_no_call_and_the_lost_lines_are_counted() {
    let received = Received::default();
    let listener = tokio::net::TcpListener::bind("127.0.0.1:0").await.unwrap();
    let collector = listener.local_addr().unwrap();
    let receiver = tokio::spawn(
        tonic::transport::Server::builder()
            .add_service(MetricsServiceServer::new(received.clone()))
            .serve_with_incoming(tonic::transport::server::TcpIncoming::from(listener)),
    );

    let mut child = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--listen", "127.0.0.1:0", "--log-format", "json"])
        .args(["--log-queue-lines", QUEUE_LINES])
        .env_remove("OXBIND_LISTEN")
        .env_remove("OXBIND_LOG_FILTER")
        .env("OTEL_EXPORTER_OTLP_ENDPOINT", format!("http://{collector}"))
        .env("OTEL_TRACES_EXPORTER", "none")
        .env("OTEL_METRIC_EXPORT_INTERVAL", "200")
        .stderr(Stdio::piped())
        .stdout(Stdio::null())
        .spawn()
        .expect("start oxbind-server");
    // Read the log up to the serving line, then read nothing more.
    let mut log = BufReader::new(child.stderr.take().unwrap()).lines();
    let mut printed = Vec::new();
    let address = loop {
        let line = log.next().expect("serving before exit").expect("line");
        printed.push(line.clone());
        let Ok(event) = serde_json::from_str::<serde_json::Value>(&line) else {
            continue;
        };
        if event["message"] == "serving" {
            break event["address"].as_str().unwrap().to_owned();
        }
    };

    // Every call is answered although the log's pipe is full.
    let channel = oxbind_client::connect(format!("http://{address}"))
        .await
        .unwrap();
    let client = DissociationServiceClient::new(channel);
    // One call first, so the connection's settings are exchanged.
    client
        .clone()
        .saturation_from_tension(request(0))
        .await
        .expect("the first call was served");
    let calls = async {
        let mut served = 0;
        for chunk in (1..CALLS).collect::<Vec<_>>().chunks(IN_FLIGHT) {
            let mut set = tokio::task::JoinSet::new();
            for &i in chunk {
                let mut client = client.clone();
                set.spawn(async move { client.saturation_from_tension(request(i)).await });
            }
            while let Some(answer) = set.join_next().await {
                let answer = answer.unwrap().expect("the call was served");
                let saturation = answer.into_inner().saturation_fraction;
                assert!(saturation > 0.0 && saturation < 1.0, "{saturation}");
                served += 1;
            }
        }
        served + 1
    };
    let served = tokio::time::timeout(Duration::from_secs(120), calls)
        .await
        .expect("calls waited for a log that nobody reads");
    assert_eq!(served, CALLS);

    // The lost lines reach the metric while the pipe is still full.
    let mut counted = None;
    for _ in 0..100 {
        counted = received.dropped_lines().filter(|&n| n > 0);
        if counted.is_some() {
            break;
        }
        tokio::time::sleep(Duration::from_millis(200)).await;
    }
    let counted = counted.expect("the dropped lines were counted in the metric");

    // Read the log again; SIGTERM: the queue is written out, exit 0.
    let rest = std::thread::spawn(move || log.map_while(Result::ok).collect::<Vec<_>>());
    tokio::time::sleep(Duration::from_millis(500)).await;
    kill(Pid::from_raw(child.id() as i32), Signal::SIGTERM).unwrap();
    let exit = tokio::time::timeout(
        Duration::from_secs(30),
        tokio::task::spawn_blocking(move || child.wait()),
    )
    .await
    .expect("the server exited")
    .unwrap()
    .unwrap();
    assert_eq!(exit.code(), Some(0), "{exit:?}");
    printed.extend(rest.join().unwrap());
    receiver.abort();

    let events: Vec<serde_json::Value> = printed
        .iter()
        .filter_map(|l| serde_json::from_str(l).ok())
        .collect();
    let access_lines = events.iter().filter(|e| e["message"] == "call").count();
    let warned_total = events
        .iter()
        .filter_map(|e| e["dropped_total"].as_u64())
        .max()
        .expect("a warning said how many lines were dropped");
    assert!(
        access_lines < CALLS,
        "some access lines were lost: {access_lines}"
    );
    assert!(
        access_lines + warned_total as usize >= CALLS,
        "every access line was written or counted: {access_lines} written, {warned_total} dropped"
    );
    assert!(
        counted as u64 <= warned_total,
        "the metric ({counted}) never runs ahead of the last warning ({warned_total})"
    );
}
