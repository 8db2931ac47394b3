//! One layer for everything a call needs around its handler, kept to a few
//! header lookups, one span and one boxed future per call:
//!
//! - a request id from `x-request-id` (or a fresh UUID), echoed back in the
//!   response metadata;
//! - one server span named by the fully qualified method, joined to the
//!   caller's W3C `traceparent`, with the OpenTelemetry RPC attributes;
//! - the deadline: the configured call timeout or the caller's shorter
//!   `grpc-timeout`, past which the call gets DEADLINE_EXCEEDED. It covers
//!   the whole call, sending the answer included, so a caller that never
//!   reads its answer cannot hold the call open; streaming calls have an
//!   idle timeout instead ([`super::streaming`]);
//! - when the response ends: `rpc.server.call.duration` and the call counter,
//!   refused field paths of an INVALID_ARGUMENT, and one log line with method,
//!   status, latency, request id and trace id. Never a body or a value. A
//!   call the client abandons (resets, or disconnects) is recorded as
//!   CANCELLED.
//!
//! It is protocol-neutral (any request; an answer with a `grpc-status`, or
//! a [`CallOutcome`] set by a door whose answers carry none), so each door
//! behind the dispatch (`http::DispatchLayer`) wraps its calls in a copy of
//! it: the gRPC stack, the Connect door and the FHIR door
//! ([`super::door`]), each of which turns the layer's own answers (a passed
//! deadline) into its protocol's shape. `rpc.system.name` is `grpc` for
//! gRPC and grpc-web, `connect_rpc` for Connect and `fhir` for the FHIR
//! door. Load shedding and admission are the request gate's
//! ([`super::request_gate`]) and the doors' ([`super::admission`]).

use std::{
    future::Future,
    pin::Pin,
    sync::Arc,
    task::{ready, Context, Poll},
    time::{Duration, Instant},
};

use http::{header::HeaderValue, HeaderMap};
use http_body::{Body as HttpBody, Frame, SizeHint};
use opentelemetry::{
    propagation::{Extractor, TextMapPropagator},
    trace::{TraceContextExt, TraceId},
    KeyValue,
};
use opentelemetry_sdk::propagation::TraceContextPropagator;
use tokio::time::Sleep;
use tonic::{body::Body, codegen::Bytes, Code, Status};
use tower::{Layer, Service};
use tracing::{field::Empty, Instrument, Span};
use tracing_opentelemetry::OpenTelemetrySpanExt;

use super::{
    connections::CallClock,
    protocol::{call_kind, CallKind},
    statuses,
};
use crate::instruments::{self, CALL_LOG_TARGET, CALL_SPAN_TARGET};

/// Metadata key of the request id, read from the request and echoed back.
pub const REQUEST_ID_HEADER: &str = "x-request-id";

/// Longest request id accepted from a caller; a longer one is replaced.
pub const MAX_REQUEST_ID_LEN: usize = 128;

/// How much earlier than the deadline our own timer fires, so that it always
/// answers before tonic's built-in `grpc-timeout` timer (which would answer
/// CANCELLED rather than DEADLINE_EXCEEDED).
const TIMER_MARGIN: Duration = Duration::from_millis(1);

/// Path prefix of the health service, logged at debug level only.
const HEALTH_PATH_PREFIX: &str = "/grpc.health.v1.Health/";

/// Every method the server serves, fully qualified as `rpc.method` wants it.
const KNOWN_METHODS: [&str; 23] = [
    "oxbind.v1.DissociationService/SaturationFromTension",
    "oxbind.v1.DissociationService/TensionFromSaturation",
    "oxbind.v1.DissociationService/SampleCurve",
    "oxbind.v1.DissociationService/ShiftFactors",
    "oxbind.v1.DissociationService/EstimateP50",
    "oxbind.v1.DissociationService/CorrectForTemperature",
    "oxbind.v1.DissociationService/BatchSaturationFromTension",
    "oxbind.v1.DissociationService/BatchTensionFromSaturation",
    "oxbind.v1.OxygenTransportService/OxygenContent",
    "oxbind.v1.OxygenTransportService/GasExchange",
    "oxbind.v1.ModelCatalogService/ListModels",
    "oxbind.v1.ModelCatalogService/GetServerSettings",
    "oxbind.v1.ConsistencyService/CheckBloodGas",
    "oxbind.v1.ConsistencyService/BatchCheckBloodGas",
    "grpc.health.v1.Health/Check",
    "grpc.health.v1.Health/Watch",
    "grpc.health.v1.Health/List",
    "grpc.reflection.v1.ServerReflection/ServerReflectionInfo",
    "grpc.reflection.v1alpha.ServerReflection/ServerReflectionInfo",
    // The FHIR door (http/fhir): its operation and conformance reads.
    "fhir/r4/$derive-oxygen-values",
    "fhir/r4/metadata",
    "fhir/r4/OperationDefinition/derive-oxygen-values",
    "fhir/r4/CodeSystem/oxygen-derived-values",
];

/// Path prefix of the FHIR door, whose calls are recorded as [`FHIR_SYSTEM`].
const FHIR_PATH_PREFIX: &str = "/fhir/r4/";

/// `rpc.system.name` of a call to the FHIR door (a name of our own: the
/// semantic conventions name none for FHIR).
const FHIR_SYSTEM: &str = "fhir";

/// `rpc.method` for a method the server does not know (semantic conventions).
pub(crate) const OTHER_METHOD: &str = "_OTHER";

/// The outcome of a call, set as a response extension by a door whose
/// answers carry no `grpc-status` (a Connect or FHIR handler behind a
/// dispatch), so that its calls are logged and counted with their real
/// status rather than as CANCELLED.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CallOutcome(pub Code);

/// The layer; clone it freely.
#[derive(Debug, Clone)]
pub struct CallLayer {
    shared: Arc<Shared>,
}

#[derive(Debug)]
struct Shared {
    call_timeout: Duration,
}

impl CallLayer {
    /// Each call for at most `call_timeout` (or the caller's shorter
    /// deadline).
    pub fn new(call_timeout: Duration) -> Self {
        Self {
            shared: Arc::new(Shared { call_timeout }),
        }
    }
}

impl<S> Layer<S> for CallLayer {
    type Service = CallService<S>;

    fn layer(&self, inner: S) -> Self::Service {
        CallService {
            inner,
            shared: self.shared.clone(),
        }
    }
}

/// The service [`CallLayer`] wraps around the routes.
#[derive(Debug, Clone)]
pub struct CallService<S> {
    inner: S,
    shared: Arc<Shared>,
}

impl<S, B> Service<http::Request<B>> for CallService<S>
where
    S: Service<http::Request<B>, Response = http::Response<Body>> + Clone + Send + 'static,
    S::Future: Send + 'static,
    S::Error: Send + 'static,
    B: Send + 'static,
{
    type Response = http::Response<Body>;
    type Error = S::Error;
    type Future = Pin<Box<dyn Future<Output = Result<Self::Response, Self::Error>> + Send>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, request: http::Request<B>) -> Self::Future {
        let start = Instant::now();
        let path = request.uri().path();
        let method = method_name(path);
        let is_health = path.starts_with(HEALTH_PATH_PREFIX);
        let request_id = request_id_of(request.headers());
        let system = if path.starts_with(FHIR_PATH_PREFIX) {
            FHIR_SYSTEM
        } else {
            rpc_system(request.headers())
        };
        let timeout = parse_grpc_timeout(request.headers()).map_or(self.shared.call_timeout, |t| {
            t.min(self.shared.call_timeout)
        });

        // Health checks are frequent and uninteresting: no span, debug log.
        let parent = TraceContextPropagator::new().extract(&HeaderExtractor(request.headers()));
        let span = if is_health {
            Span::none()
        } else {
            tracing::info_span!(
                target: CALL_SPAN_TARGET,
                "grpc.call",
                otel.name = method,
                otel.kind = "server",
                rpc.system.name = system,
                rpc.method = method,
                rpc.status_code = Empty,
                request_id = %request_id,
                oxbind.model_id = Empty,
                oxbind.warning_codes = Empty,
            )
        };
        let trace_id = if instruments::traces_exported() && !span.is_none() {
            let _ = span.set_parent(parent);
            span.context().span().span_context().trace_id()
        } else {
            parent.span().span_context().trace_id()
        };

        let streaming = call_kind(path) == CallKind::Streaming;
        let mut record = CallRecord {
            start,
            method,
            system,
            request_id,
            trace_id,
            span: span.clone(),
            status: None,
            quiet: is_health,
        };

        // Take the service that was driven to readiness; leave a clone.
        let clone = self.inner.clone();
        let mut inner = std::mem::replace(&mut self.inner, clone);
        let deadline = tokio::time::Instant::from_std(start + timeout.saturating_sub(TIMER_MARGIN));
        if let (false, Some(clock)) = (streaming, request.extensions().get::<CallClock>()) {
            clock.must_end_by(deadline);
        }
        Box::pin(async move {
            let outcome =
                tokio::time::timeout_at(deadline, inner.call(request).instrument(span)).await;
            let response = match outcome {
                Ok(Ok(response)) if start.elapsed() <= timeout => response,
                Ok(Ok(_)) | Err(_) => statuses::deadline_passed().into_http(),
                Ok(Err(error)) => {
                    record.set_status(Code::Internal);
                    return Err(error);
                }
            };
            // A streaming call is bounded by its idle timeout instead.
            let body_deadline = (!streaming).then_some(deadline);
            Ok(record.respond(response, body_deadline))
        })
    }
}

/// What is known about a call until its response ends; dropping it records
/// the call.
struct CallRecord {
    start: Instant,
    method: &'static str,
    system: &'static str,
    request_id: String,
    trace_id: TraceId,
    span: Span,
    status: Option<Code>,
    quiet: bool,
}

impl CallRecord {
    fn set_status(&mut self, code: Code) {
        self.status = Some(code);
    }

    /// Echo the request id, read a trailers-only status, and hand the
    /// response body the record, so the call is recorded when it ends; the
    /// body ends the call at `deadline`, if given.
    fn respond(
        mut self,
        response: http::Response<Body>,
        deadline: Option<tokio::time::Instant>,
    ) -> http::Response<Body> {
        let (mut parts, body) = response.into_parts();
        if let Ok(value) = HeaderValue::from_str(&self.request_id) {
            parts.headers.insert(REQUEST_ID_HEADER, value);
        }
        if let Some(code) = observe_status(&mut parts.headers) {
            self.status = Some(code);
        }
        if let Some(CallOutcome(code)) = parts.extensions.get::<CallOutcome>() {
            self.status = Some(*code);
        }
        let body = Body::new(CallBody {
            inner: body,
            record: Some(self),
            deadline: deadline.map(|at| Box::pin(tokio::time::sleep_until(at))),
            data_sent: false,
            finished: false,
        });
        http::Response::from_parts(parts, body)
    }
}

impl Drop for CallRecord {
    fn drop(&mut self) {
        // No status by the end: the client went away or the stream was reset.
        let code = self.status.unwrap_or(Code::Cancelled);
        let name = code_name(code);
        let elapsed = self.start.elapsed();
        self.span.record("rpc.status_code", name);
        if code != Code::Ok {
            self.span.set_attribute("error.type", name);
        }
        let attributes = [
            KeyValue::new("rpc.system.name", self.system),
            KeyValue::new("rpc.method", self.method),
            KeyValue::new("rpc.status_code", name),
        ];
        let instruments = instruments::instruments();
        instruments
            .call_duration
            .record(elapsed.as_secs_f64(), &attributes);
        instruments.calls.add(1, &attributes);

        // The fields are formatted only if the level filter keeps the line
        // (`%` defers to Display), and then into the log queue, never by a
        // write on this thread (crate::log_queue).
        let latency_ms = elapsed.as_secs_f64() * 1e3;
        let trace_id = LoggedTraceId(self.trace_id);
        if self.quiet {
            tracing::debug!(target: CALL_LOG_TARGET, method = self.method, status = name,
                latency_ms, request_id = %self.request_id, trace_id = %trace_id, "call");
        } else {
            tracing::info!(target: CALL_LOG_TARGET, method = self.method, status = name,
                latency_ms, request_id = %self.request_id, trace_id = %trace_id, "call");
        }
    }
}

/// A trace id as the access line shows it: 32 hex digits, or nothing when
/// the call joined no trace.
struct LoggedTraceId(TraceId);

impl std::fmt::Display for LoggedTraceId {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.0 == TraceId::INVALID {
            Ok(())
        } else {
            write!(f, "{}", self.0)
        }
    }
}

pin_project_lite::pin_project! {
    /// A response body that reads the status from the trailers, ends the
    /// call at its deadline, and records the call when the body ends or is
    /// dropped.
    struct CallBody {
        #[pin]
        inner: Body,
        record: Option<CallRecord>,
        deadline: Option<Pin<Box<Sleep>>>,
        data_sent: bool,
        finished: bool,
    }
}

impl HttpBody for CallBody {
    type Data = Bytes;
    type Error = Status;

    fn poll_frame(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
    ) -> Poll<Option<Result<Frame<Self::Data>, Self::Error>>> {
        let this = self.project();
        if *this.finished {
            return Poll::Ready(None);
        }
        let polled = this.inner.poll_frame(cx);
        if polled.is_pending() {
            let passed = this
                .deadline
                .as_mut()
                .is_some_and(|deadline| deadline.as_mut().poll(cx).is_ready());
            if !passed {
                return Poll::Pending;
            }
            // The deadline passed while the answer was still being sent (a
            // caller that does not read it): end the call here.
            *this.finished = true;
            let status = statuses::deadline_passed();
            if let Some(record) = this.record.as_mut() {
                record.status = Some(status.code());
            }
            return Poll::Ready(Some(if *this.data_sent {
                Err(status)
            } else {
                Ok(Frame::trailers(statuses::as_trailers(&status)))
            }));
        }
        match ready!(polled) {
            Some(Ok(mut frame)) => {
                if frame.is_data() {
                    *this.data_sent = true;
                }
                if let (Some(trailers), Some(record)) = (frame.trailers_mut(), this.record.as_mut())
                {
                    if let Some(code) = observe_status(trailers) {
                        record.status = Some(code);
                    }
                }
                Poll::Ready(Some(Ok(frame)))
            }
            Some(Err(status)) => {
                if let Some(record) = this.record.as_mut() {
                    record.status = Some(status.code());
                }
                Poll::Ready(Some(Err(status)))
            }
            None => {
                *this.finished = true;
                this.record.take();
                Poll::Ready(None)
            }
        }
    }

    fn is_end_stream(&self) -> bool {
        self.finished || self.inner.is_end_stream()
    }

    fn size_hint(&self) -> SizeHint {
        self.inner.size_hint()
    }
}

/// The gRPC status in `headers` (response headers of a trailers-only
/// response, or trailers), after two adjustments:
///
/// - tonic answers an oversize message with OUT_OF_RANGE; gRPC's own
///   implementations and the status-code guide use RESOURCE_EXHAUSTED for a
///   size limit, so the status is rewritten to that;
/// - an INVALID_ARGUMENT's `google.rpc.BadRequest` field paths are counted
///   (the paths only, never the values).
fn observe_status(headers: &mut HeaderMap) -> Option<Code> {
    let code = headers
        .get("grpc-status")
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.parse::<i32>().ok())
        .map(Code::from_i32)?;
    match code {
        Code::OutOfRange if is_size_limit_message(headers) => {
            headers.insert(
                "grpc-status",
                HeaderValue::from_static(RESOURCE_EXHAUSTED_NUMBER),
            );
            Some(Code::ResourceExhausted)
        }
        Code::InvalidArgument => {
            count_refused_fields(headers);
            Some(code)
        }
        _ => Some(code),
    }
}

/// `grpc-status` value of RESOURCE_EXHAUSTED (google/rpc/code.proto).
const RESOURCE_EXHAUSTED_NUMBER: &str = "8";

/// Whether `grpc-message` is tonic's message for a message over the size
/// limit (percent-encoded on the wire, so both spellings are checked).
fn is_size_limit_message(headers: &HeaderMap) -> bool {
    headers
        .get("grpc-message")
        .and_then(|v| v.to_str().ok())
        .is_some_and(|m| {
            m.contains("message length too large") || m.contains("message%20length%20too%20large")
        })
}

/// Count each field path of the `google.rpc.BadRequest` in
/// `grpc-status-details-bin`.
fn count_refused_fields(headers: &HeaderMap) {
    use prost::Message;
    let metadata = tonic::metadata::MetadataMap::from_headers(headers.clone());
    let Some(Ok(bytes)) = metadata
        .get_bin("grpc-status-details-bin")
        .map(|v| v.to_bytes())
    else {
        return;
    };
    let Ok(status) = tonic_types::pb::Status::decode(bytes) else {
        return;
    };
    for detail in status
        .details
        .iter()
        .filter(|d| d.type_url.ends_with("google.rpc.BadRequest"))
    {
        if let Ok(bad) = tonic_types::pb::BadRequest::decode(detail.value.as_slice()) {
            for violation in &bad.field_violations {
                instruments::record_refused_input(&violation.field);
            }
        }
    }
}

/// The fully qualified method (`package.Service/Method`) for a request path,
/// or `_OTHER`.
pub fn method_name(path: &str) -> &'static str {
    let path = path.strip_prefix('/').unwrap_or(path);
    KNOWN_METHODS
        .iter()
        .find(|known| **known == path)
        .copied()
        .unwrap_or(OTHER_METHOD)
}

/// `rpc.system.name` of a call (OpenTelemetry RPC semantic conventions):
/// `grpc` for gRPC and grpc-web, `connect_rpc` for the Connect protocol
/// (the only other door this layer wraps).
pub fn rpc_system(headers: &HeaderMap) -> &'static str {
    let grpc = headers
        .get(http::header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|t| t.starts_with("application/grpc"));
    if grpc {
        "grpc"
    } else {
        "connect_rpc"
    }
}

/// The caller's request id if it is short and made only of letters, digits
/// and `-_.:`; otherwise a fresh UUID (the caller's value is dropped, so an
/// odd header can never carry anything into the logs).
pub fn request_id_of(headers: &HeaderMap) -> String {
    headers
        .get(REQUEST_ID_HEADER)
        .and_then(|v| v.to_str().ok())
        .filter(|id| {
            !id.is_empty()
                && id.len() <= MAX_REQUEST_ID_LEN
                && id
                    .bytes()
                    .all(|b| b.is_ascii_alphanumeric() || matches!(b, b'-' | b'_' | b'.' | b':'))
        })
        .map_or_else(|| uuid::Uuid::new_v4().to_string(), str::to_owned)
}

/// The caller's `grpc-timeout` (up to 8 digits and a unit: `H`, `M`, `S`,
/// `m`, `u`, `n`; gRPC over HTTP/2 protocol), if present and well formed.
pub fn parse_grpc_timeout(headers: &HeaderMap) -> Option<Duration> {
    let text = headers.get("grpc-timeout")?.to_str().ok()?;
    if text.len() < 2 || text.len() > 9 {
        return None;
    }
    let (digits, unit) = text.split_at(text.len() - 1);
    if !digits.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let amount: u64 = digits.parse().ok()?;
    Some(match unit {
        "H" => Duration::from_secs(amount * 3600),
        "M" => Duration::from_secs(amount * 60),
        "S" => Duration::from_secs(amount),
        "m" => Duration::from_millis(amount),
        "u" => Duration::from_micros(amount),
        "n" => Duration::from_nanos(amount),
        _ => return None,
    })
}

/// The status code's name as `rpc.status_code` spells it.
pub fn code_name(code: Code) -> &'static str {
    match code {
        Code::Ok => "OK",
        Code::Cancelled => "CANCELLED",
        Code::Unknown => "UNKNOWN",
        Code::InvalidArgument => "INVALID_ARGUMENT",
        Code::DeadlineExceeded => "DEADLINE_EXCEEDED",
        Code::NotFound => "NOT_FOUND",
        Code::AlreadyExists => "ALREADY_EXISTS",
        Code::PermissionDenied => "PERMISSION_DENIED",
        Code::ResourceExhausted => "RESOURCE_EXHAUSTED",
        Code::FailedPrecondition => "FAILED_PRECONDITION",
        Code::Aborted => "ABORTED",
        Code::OutOfRange => "OUT_OF_RANGE",
        Code::Unimplemented => "UNIMPLEMENTED",
        Code::Internal => "INTERNAL",
        Code::Unavailable => "UNAVAILABLE",
        Code::DataLoss => "DATA_LOSS",
        Code::Unauthenticated => "UNAUTHENTICATED",
    }
}

/// Reads W3C trace context from request headers.
struct HeaderExtractor<'a>(&'a HeaderMap);

impl Extractor for HeaderExtractor<'_> {
    fn get(&self, key: &str) -> Option<&str> {
        self.0.get(key).and_then(|v| v.to_str().ok())
    }

    fn keys(&self) -> Vec<&str> {
        self.0.keys().map(|k| k.as_str()).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::Mutex;
    use tower::ServiceExt;

    /// Log lines written while a test runs.
    #[derive(Clone, Default)]
    struct Captured(Arc<Mutex<Vec<u8>>>);

    impl std::io::Write for Captured {
        fn write(&mut self, bytes: &[u8]) -> std::io::Result<usize> {
            self.0.lock().unwrap().extend_from_slice(bytes);
            Ok(bytes.len())
        }
        fn flush(&mut self) -> std::io::Result<()> {
            Ok(())
        }
    }

    /// The access line of one call answered by `answer`, as logged.
    async fn logged_status(answer: http::Response<Body>) -> String {
        let captured = Captured::default();
        let writer = captured.clone();
        let subscriber = tracing_subscriber::fmt()
            .with_writer(move || writer.clone())
            .with_ansi(false)
            .with_max_level(tracing::Level::INFO)
            .finish();
        let _default = tracing::subscriber::set_default(subscriber);
        let answer = Arc::new(Mutex::new(Some(answer)));
        let inner = tower::service_fn(move |_request: http::Request<Body>| {
            let answer = answer.lock().unwrap().take().expect("one call");
            std::future::ready(Ok::<_, std::convert::Infallible>(answer))
        });
        let mut service = CallLayer::new(Duration::from_secs(5)).layer(inner);
        let request = http::Request::builder()
            .uri("/oxbind.v1.DissociationService/SaturationFromTension")
            .body(Body::empty())
            .unwrap();
        let response = service.ready().await.unwrap().call(request).await.unwrap();
        let _ = http_body_util::BodyExt::collect(response.into_body()).await;
        let text = String::from_utf8(captured.0.lock().unwrap().clone()).unwrap();
        text.lines()
            .find(|l| l.contains("call"))
            .and_then(|l| l.split("status=").nth(1))
            .and_then(|rest| rest.split_whitespace().next())
            .unwrap_or_default()
            .to_owned()
    }

    #[tokio::test]
    async fn a_door_without_grpc_status_sets_the_outcome_it_is_logged_with() {
        let mut answer = http::Response::new(Body::new(http_body_util::Full::new(
            Bytes::from_static(b"{}"),
        )));
        answer
            .extensions_mut()
            .insert(CallOutcome(Code::InvalidArgument));
        assert_eq!(logged_status(answer).await, "\"INVALID_ARGUMENT\"");
        // Without it, an answer that never says its status is an abandoned
        // call.
        let bare = http::Response::new(Body::new(http_body_util::Full::new(Bytes::from_static(
            b"{}",
        ))));
        assert_eq!(logged_status(bare).await, "\"CANCELLED\"");
    }

    fn headers(pairs: &[(&'static str, &'static str)]) -> HeaderMap {
        let mut map = HeaderMap::new();
        for (k, v) in pairs {
            map.insert(*k, HeaderValue::from_static(v));
        }
        map
    }

    #[test]
    fn grpc_timeouts_parse_in_every_unit() {
        let cases = [
            ("1H", Duration::from_secs(3600)),
            ("2M", Duration::from_secs(120)),
            ("3S", Duration::from_secs(3)),
            ("250m", Duration::from_millis(250)),
            ("40u", Duration::from_micros(40)),
            ("12345678n", Duration::from_nanos(12_345_678)),
        ];
        for (text, expected) in cases {
            assert_eq!(
                parse_grpc_timeout(&headers(&[("grpc-timeout", text)])),
                Some(expected),
                "{text}"
            );
        }
    }

    #[test]
    fn malformed_grpc_timeouts_are_ignored() {
        for text in ["", "S", "123456789S", "10x", "-1S", "1.5S"] {
            let mut map = HeaderMap::new();
            map.insert("grpc-timeout", HeaderValue::from_str(text).unwrap());
            assert_eq!(parse_grpc_timeout(&map), None, "{text:?}");
        }
    }

    #[test]
    fn a_well_formed_request_id_is_kept_and_an_odd_one_replaced() {
        let kept = request_id_of(&headers(&[("x-request-id", "order-42.a:b_c")]));
        assert_eq!(kept, "order-42.a:b_c");
        let replaced = request_id_of(&headers(&[("x-request-id", "name with spaces")]));
        assert_ne!(replaced, "name with spaces");
        assert_eq!(replaced.len(), 36, "a UUID: {replaced}");
        let long = "a".repeat(MAX_REQUEST_ID_LEN + 1);
        let mut map = HeaderMap::new();
        map.insert("x-request-id", HeaderValue::from_str(&long).unwrap());
        assert_eq!(request_id_of(&map).len(), 36);
        assert_eq!(request_id_of(&HeaderMap::new()).len(), 36);
    }

    #[test]
    fn grpc_and_grpc_web_calls_are_grpc_and_the_rest_connect() {
        assert_eq!(
            rpc_system(&headers(&[("content-type", "application/grpc")])),
            "grpc"
        );
        assert_eq!(
            rpc_system(&headers(&[("content-type", "application/grpc-web+proto")])),
            "grpc"
        );
        assert_eq!(
            rpc_system(&headers(&[("content-type", "application/json")])),
            "connect_rpc"
        );
        assert_eq!(rpc_system(&HeaderMap::new()), "connect_rpc");
    }

    #[test]
    fn methods_are_named_fully_qualified_or_other() {
        assert_eq!(
            method_name("/oxbind.v1.DissociationService/SaturationFromTension"),
            "oxbind.v1.DissociationService/SaturationFromTension"
        );
        assert_eq!(method_name("/acme.Unknown/Thing"), "_OTHER");
    }

    #[test]
    fn tonic_size_limit_out_of_range_becomes_resource_exhausted() {
        let mut map = headers(&[
            ("grpc-status", "11"),
            (
                "grpc-message",
                "Error,%20decoded%20message%20length%20too%20large",
            ),
        ]);
        assert_eq!(observe_status(&mut map), Some(Code::ResourceExhausted));
        assert_eq!(map["grpc-status"], "8");
        let mut other = headers(&[("grpc-status", "11"), ("grpc-message", "past%20the%20end")]);
        assert_eq!(observe_status(&mut other), Some(Code::OutOfRange));
    }
}
