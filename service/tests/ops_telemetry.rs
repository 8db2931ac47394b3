//! Telemetry end to end: the built server exports to an in-process OTLP
//! receiver (the collector's trace and metrics services), the spans and
//! metrics arrive with the RPC semantic-convention attributes and join the
//! caller's W3C trace, and neither they nor anything the server printed holds
//! a clinical value sent in or computed.

use std::{
    io::{BufRead, BufReader, Read},
    process::{Command, Stdio},
    sync::{Arc, Mutex},
};

use nix::{
    sys::signal::{kill, Signal},
    unistd::Pid,
};
use opentelemetry_proto::tonic::{
    collector::{
        metrics::v1::{
            metrics_service_server::{MetricsService, MetricsServiceServer},
            ExportMetricsServiceRequest, ExportMetricsServiceResponse,
        },
        trace::v1::{
            trace_service_server::{TraceService, TraceServiceServer},
            ExportTraceServiceRequest, ExportTraceServiceResponse,
        },
    },
    common::v1::{any_value::Value, KeyValue},
    metrics::v1::metric::Data,
    trace::v1::span::SpanKind,
};
use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient, BloodConditions, Quantity,
    SaturationFromTensionRequest,
};
use tonic::{Request, Response, Status};

/// The caller's trace: W3C Trace Context's own example ids.
const TRACE_ID: &str = "4bf92f3577b34da6a3ce929d0e0e4736";
const PARENT_SPAN_ID: &str = "00f067aa0ba902b7";
const SATURATION_METHOD: &str = "oxbind.v1.DissociationService/SaturationFromTension";

/// Distinctive inputs (a fictional patient's values), which must never
/// appear in any log line, span or metric.
const PO2_MMHG: f64 = 61.234_567_8;
const PH: f64 = 7.318_765_4;
const PCO2_MMHG: f64 = 43.219_876_5;
const BAD_PH: f64 = 9.876_543_2;

#[derive(Default, Clone)]
struct Received {
    traces: Arc<Mutex<Vec<ExportTraceServiceRequest>>>,
    metrics: Arc<Mutex<Vec<ExportMetricsServiceRequest>>>,
}

#[tonic::async_trait]
impl TraceService for Received {
    async fn export(
        &self,
        request: Request<ExportTraceServiceRequest>,
    ) -> Result<Response<ExportTraceServiceResponse>, Status> {
        self.traces.lock().unwrap().push(request.into_inner());
        Ok(Response::new(ExportTraceServiceResponse::default()))
    }
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

fn string_attr<'a>(attributes: &'a [KeyValue], key: &str) -> Option<&'a str> {
    attributes
        .iter()
        .find(|kv| kv.key == key)
        .and_then(|kv| kv.value.as_ref())
        .and_then(|v| match &v.value {
            Some(Value::StringValue(s)) => Some(s.as_str()),
            _ => None,
        })
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Collect every line a child stream prints.
fn collect(
    stream: impl Read + Send + 'static,
    into: Arc<Mutex<Vec<String>>>,
) -> std::thread::JoinHandle<()> {
    std::thread::spawn(move || {
        for line in BufReader::new(stream).lines() {
            let Ok(line) = line else { break };
            into.lock().unwrap().push(line);
        }
    })
}

fn request(po2_mmhg: f64, ph: f64) -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2: Some(Quantity {
            value: po2_mmhg,
            unit: "mm[Hg]".to_owned(),
        }),
        conditions: Some(BloodConditions {
            ph: Some(ph),
            pco2: Some(Quantity {
                value: PCO2_MMHG,
                unit: "mm[Hg]".to_owned(),
            }),
            ..Default::default()
        }),
        ..Default::default()
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn spans_and_metrics_reach_the_collector_and_nothing_holds_a_clinical_value() {
    // The in-process OTLP receiver.
    let received = Received::default();
    let listener = tokio::net::TcpListener::bind("127.0.0.1:0").await.unwrap();
    let collector = listener.local_addr().unwrap();
    let receiver = tokio::spawn(
        tonic::transport::Server::builder()
            .add_service(TraceServiceServer::new(received.clone()))
            .add_service(MetricsServiceServer::new(received.clone()))
            .serve_with_incoming(tonic::transport::server::TcpIncoming::from(listener)),
    );

    let mut child = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--listen", "127.0.0.1:0", "--log-format", "json"])
        .env_remove("OXBIND_LISTEN")
        .env_remove("OXBIND_LOG_FILTER")
        .env("OTEL_EXPORTER_OTLP_ENDPOINT", format!("http://{collector}"))
        .env("OTEL_SERVICE_NAME", "oxbind-ops-test")
        .env("OTEL_BSP_SCHEDULE_DELAY", "100")
        .env("OTEL_METRIC_EXPORT_INTERVAL", "200")
        .stderr(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .expect("start oxbind-server");
    let printed = Arc::new(Mutex::new(Vec::<String>::new()));
    let out_thread = collect(child.stdout.take().unwrap(), printed.clone());
    // Read stderr until the serving line, then keep collecting.
    let mut stderr = BufReader::new(child.stderr.take().unwrap()).lines();
    let address = loop {
        let line = stderr.next().expect("serving before exit").expect("line");
        printed.lock().unwrap().push(line.clone());
        let Ok(event) = serde_json::from_str::<serde_json::Value>(&line) else {
            continue;
        };
        if event["message"] == "serving" {
            break event["address"].as_str().unwrap().to_owned();
        }
    };
    let err_printed = printed.clone();
    let err_thread = std::thread::spawn(move || {
        for line in stderr {
            let Ok(line) = line else { break };
            err_printed.lock().unwrap().push(line);
        }
    });

    let channel = oxbind_client::connect(format!("http://{address}"))
        .await
        .unwrap();
    let mut client = DissociationServiceClient::new(channel);
    let mut good = Request::new(request(PO2_MMHG, PH));
    good.metadata_mut()
        .insert("x-request-id", "ops-scan-0001".parse().unwrap());
    good.metadata_mut().insert(
        "traceparent",
        format!("00-{TRACE_ID}-{PARENT_SPAN_ID}-01")
            .parse()
            .unwrap(),
    );
    let response = client.saturation_from_tension(good).await.expect("served");
    assert_eq!(
        response.metadata().get("x-request-id").unwrap(),
        "ops-scan-0001"
    );
    let saturation = response.into_inner().saturation_fraction;
    assert!(saturation > 0.5 && saturation < 1.0, "{saturation}");

    let mut bad = Request::new(request(PO2_MMHG, BAD_PH));
    bad.metadata_mut()
        .insert("x-request-id", "ops-scan-0002".parse().unwrap());
    let status = client.saturation_from_tension(bad).await.unwrap_err();
    assert_eq!(status.code(), tonic::Code::InvalidArgument);
    drop(client);

    // SIGTERM: the server drains, flushes its exporters and exits 0.
    kill(Pid::from_raw(child.id() as i32), Signal::SIGTERM).unwrap();
    let exit = tokio::task::spawn_blocking(move || child.wait())
        .await
        .unwrap()
        .unwrap();
    assert_eq!(exit.code(), Some(0), "{exit:?}");
    out_thread.join().unwrap();
    err_thread.join().unwrap();
    receiver.abort();

    // Spans.
    let traces = received.traces.lock().unwrap().clone();
    let resource_spans: Vec<_> = traces.iter().flat_map(|t| &t.resource_spans).collect();
    let resource = resource_spans
        .first()
        .and_then(|r| r.resource.as_ref())
        .expect("spans arrived with a resource");
    assert_eq!(
        string_attr(&resource.attributes, "service.name"),
        Some("oxbind-ops-test")
    );
    let spans: Vec<_> = resource_spans
        .iter()
        .flat_map(|r| &r.scope_spans)
        .flat_map(|s| &s.spans)
        .collect();
    let joined = spans
        .iter()
        .find(|s| string_attr(&s.attributes, "request_id") == Some("ops-scan-0001"))
        .expect("the first call's span arrived");
    assert_eq!(joined.name, SATURATION_METHOD);
    assert_eq!(joined.kind, SpanKind::Server as i32);
    assert_eq!(
        hex(&joined.trace_id),
        TRACE_ID,
        "the span joins the caller's trace"
    );
    assert_eq!(hex(&joined.parent_span_id), PARENT_SPAN_ID);
    assert_eq!(
        string_attr(&joined.attributes, "rpc.system.name"),
        Some("grpc")
    );
    assert_eq!(
        string_attr(&joined.attributes, "rpc.method"),
        Some(SATURATION_METHOD)
    );
    assert_eq!(
        string_attr(&joined.attributes, "rpc.status_code"),
        Some("OK")
    );
    let refused = spans
        .iter()
        .find(|s| string_attr(&s.attributes, "request_id") == Some("ops-scan-0002"))
        .expect("the refused call's span arrived");
    assert_eq!(
        string_attr(&refused.attributes, "rpc.status_code"),
        Some("INVALID_ARGUMENT")
    );
    assert_eq!(
        string_attr(&refused.attributes, "error.type"),
        Some("INVALID_ARGUMENT")
    );
    assert_eq!(
        spans.len(),
        2,
        "one span per call, nothing else: {spans:#?}"
    );

    // Metrics.
    let metrics = received.metrics.lock().unwrap().clone();
    let all_metrics: Vec<_> = metrics
        .iter()
        .flat_map(|m| &m.resource_metrics)
        .flat_map(|r| &r.scope_metrics)
        .flat_map(|s| &s.metrics)
        .collect();
    let duration = all_metrics
        .iter()
        .find(|m| m.name == "rpc.server.call.duration")
        .expect("the duration histogram arrived");
    assert_eq!(duration.unit, "s");
    let Some(Data::Histogram(histogram)) = &duration.data else {
        panic!("rpc.server.call.duration is a histogram: {duration:?}");
    };
    let ok_point = histogram
        .data_points
        .iter()
        .find(|p| string_attr(&p.attributes, "rpc.status_code") == Some("OK"))
        .expect("an OK data point");
    assert_eq!(
        string_attr(&ok_point.attributes, "rpc.method"),
        Some(SATURATION_METHOD)
    );
    assert_eq!(ok_point.count, 1);
    let refused_inputs = all_metrics
        .iter()
        .find(|m| m.name == "oxbind.refused_inputs")
        .expect("refused inputs were counted");
    let Some(Data::Sum(sum)) = &refused_inputs.data else {
        panic!("oxbind.refused_inputs is a sum");
    };
    assert!(sum
        .data_points
        .iter()
        .any(|p| string_attr(&p.attributes, "oxbind.field") == Some("conditions.ph")));

    // Nothing holds a clinical value: not the telemetry, not the logs.
    let printed = printed.lock().unwrap().clone();
    let exported = format!("{traces:?}\n{metrics:?}");
    let forbidden = [
        "61.2345".to_owned(),
        "7.31876".to_owned(),
        "43.2198".to_owned(),
        "9.87654".to_owned(),
        format!("{saturation:.8}"),
    ];
    for value in &forbidden {
        assert!(
            !exported.contains(value.as_str()),
            "exported telemetry holds {value}"
        );
        for line in &printed {
            assert!(
                !line.contains(value.as_str()),
                "the server printed {value}: {line}"
            );
        }
    }

    // One access line per call, with method, status, latency, request id and
    // trace id.
    let calls: Vec<serde_json::Value> = printed
        .iter()
        .filter_map(|l| serde_json::from_str::<serde_json::Value>(l).ok())
        .filter(|e| e["message"] == "call")
        .collect();
    assert_eq!(calls.len(), 2, "{printed:#?}");
    let first = calls
        .iter()
        .find(|e| e["request_id"] == "ops-scan-0001")
        .expect("the first call's line");
    assert_eq!(first["method"], SATURATION_METHOD);
    assert_eq!(first["status"], "OK");
    assert_eq!(first["trace_id"], TRACE_ID);
    assert!(first["latency_ms"].as_f64().unwrap() >= 0.0);
    let second = calls
        .iter()
        .find(|e| e["request_id"] == "ops-scan-0002")
        .expect("the refused call's line");
    assert_eq!(second["status"], "INVALID_ARGUMENT");
}

#[test]
fn without_an_endpoint_nothing_is_exported_and_that_is_logged_once() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_oxbind-server"))
        .args(["--listen", "127.0.0.1:0", "--log-format", "json"])
        .env_remove("OXBIND_LISTEN")
        .env_remove("OTEL_EXPORTER_OTLP_ENDPOINT")
        .env_remove("OTEL_EXPORTER_OTLP_TRACES_ENDPOINT")
        .env_remove("OTEL_EXPORTER_OTLP_METRICS_ENDPOINT")
        .stderr(Stdio::piped())
        .stdout(Stdio::null())
        .spawn()
        .expect("start oxbind-server");
    let mut lines = BufReader::new(child.stderr.take().unwrap()).lines();
    let mut seen = Vec::new();
    loop {
        let line = lines.next().expect("serving before exit").expect("line");
        let serving = line.contains("\"message\":\"serving\"");
        seen.push(line);
        if serving {
            break;
        }
    }
    kill(Pid::from_raw(child.id() as i32), Signal::SIGTERM).unwrap();
    seen.extend(lines.map_while(Result::ok));
    assert_eq!(child.wait().unwrap().code(), Some(0));
    let notices = seen
        .iter()
        .filter(|l| l.contains("no OTLP endpoint configured"))
        .count();
    assert_eq!(notices, 1, "{seen:#?}");
}
