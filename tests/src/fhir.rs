//! Talking to the FHIR door in tests, and keeping every answer for the
//! independent validators (`tests/fhir/run.sh`).
//!
//! Each answer body is written to the directory named by
//! `OXBIND_FHIR_RESPONSES` (default `target/fhir-responses`), one file per
//! answer, so the validators check every response the tests produced.

use std::{
    path::PathBuf,
    sync::atomic::{AtomicUsize, Ordering},
};

use http::{HeaderMap, HeaderValue, Method};
use oxbind_service::http::fhir::{self, FhirRequest};
use serde_json::Value;

/// The operation's path.
pub const OPERATION: &str = "/fhir/r4/$derive-oxygen-values";

/// The example ICU panel from the invented hospital (a Parameters).
pub const LARCHMERE_PANEL: &str = include_str!("../../client/assets/fhir/larchmere-icu-panel.json");

/// The same Observations as a Bundle.
pub const LARCHMERE_BUNDLE: &str =
    include_str!("../../client/assets/fhir/larchmere-icu-bundle.json");

/// One answer of the door.
#[derive(Debug, Clone)]
pub struct FhirAnswer {
    /// HTTP status.
    pub status: u16,
    /// The `content-type` header.
    pub content_type: String,
    /// The `allow` header, if any.
    pub allow: Option<String>,
    /// The body as JSON.
    pub body: Value,
    /// The body as sent.
    pub raw: Vec<u8>,
}

impl FhirAnswer {
    /// The issues of an OperationOutcome body (or of a Parameters' outcome).
    pub fn issues(&self) -> Vec<Value> {
        let outcome = if self.body["resourceType"] == "OperationOutcome" {
            Some(&self.body)
        } else {
            self.parameters("outcome").into_iter().next()
        };
        outcome
            .and_then(|o| o["issue"].as_array())
            .cloned()
            .unwrap_or_default()
    }

    /// The resources of every output parameter named `name`.
    pub fn parameters(&self, name: &str) -> Vec<&Value> {
        self.body["parameter"]
            .as_array()
            .map(|ps| {
                ps.iter()
                    .filter(|p| p["name"] == name)
                    .map(|p| &p["resource"])
                    .collect()
            })
            .unwrap_or_default()
    }

    /// The derived Observation coded `code` (LOINC or own).
    pub fn derived(&self, code: &str) -> Option<&Value> {
        self.parameters("observation")
            .into_iter()
            .find(|o| o["code"]["coding"][0]["code"] == code)
    }
}

static SAVED: AtomicUsize = AtomicUsize::new(0);

/// Where answers are kept for the validators.
pub fn responses_dir() -> PathBuf {
    std::env::var_os("OXBIND_FHIR_RESPONSES")
        .map(PathBuf::from)
        .unwrap_or_else(|| {
            PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../target/fhir-responses")
        })
}

fn keep(label: &str, body: &[u8]) {
    let dir = responses_dir();
    if std::fs::create_dir_all(&dir).is_err() {
        return;
    }
    let n = SAVED.fetch_add(1, Ordering::Relaxed);
    let safe: String = label
        .chars()
        .map(|c| if c.is_ascii_alphanumeric() { c } else { '-' })
        .collect();
    let name = format!("{safe}-{}-{n}.json", std::process::id());
    std::fs::write(dir.join(name), body).expect("write a FHIR answer for the validators");
}

/// Send one request to the door and keep the answer under `label`.
pub fn call(
    label: &str,
    method: Method,
    path: &str,
    content_type: Option<&str>,
    body: &[u8],
) -> FhirAnswer {
    let mut headers = HeaderMap::new();
    if let Some(t) = content_type {
        headers.insert(
            http::header::CONTENT_TYPE,
            HeaderValue::from_str(t).unwrap(),
        );
    }
    let (path, query) = match path.split_once('?') {
        Some((p, q)) => (p, Some(q)),
        None => (path, None),
    };
    let response = fhir::handle(&FhirRequest {
        method: &method,
        path,
        query,
        headers: &headers,
        body,
    });
    keep(label, &response.body);
    let header = |name| {
        response
            .headers
            .get(name)
            .and_then(|v| v.to_str().ok())
            .map(str::to_owned)
    };
    FhirAnswer {
        status: response.status.as_u16(),
        content_type: header(http::header::CONTENT_TYPE).unwrap_or_default(),
        allow: header(http::header::ALLOW),
        body: serde_json::from_slice(&response.body).expect("the door answers JSON"),
        raw: response.body,
    }
}

/// POST a Parameters to the operation.
pub fn derive(label: &str, parameters: &Value) -> FhirAnswer {
    call(
        label,
        Method::POST,
        OPERATION,
        Some(fhir::FHIR_JSON),
        &serde_json::to_vec(parameters).unwrap(),
    )
}

/// A Parameters holding `observations`.
pub fn parameters(observations: &[Value]) -> Value {
    serde_json::json!({
        "resourceType": "Parameters",
        "parameter": observations
            .iter()
            .map(|o| serde_json::json!({"name": "observation", "resource": o}))
            .collect::<Vec<_>>(),
    })
}

/// An input Observation: `id`, LOINC `code`, value in UCUM `unit`, for the
/// invented patient of the tests.
pub fn observation(id: &str, code: &str, value: f64, unit: &str) -> Value {
    serde_json::json!({
        "resourceType": "Observation",
        "id": id,
        "status": "final",
        "code": {"coding": [{"system": "http://loinc.org", "code": code}]},
        "subject": {"reference": "Patient/lvi-test-0001"},
        "valueQuantity": {
            "value": value,
            "unit": unit,
            "system": "http://unitsofmeasure.org",
            "code": unit,
        },
    })
}

/// Over the wire: the same requests through a real server.
pub mod wire {
    use super::{keep, FhirAnswer};
    use http::Method;
    use http_body_util::{BodyExt, Full};
    use tokio::io::{AsyncReadExt, AsyncWriteExt};
    use tonic::{
        body::Body,
        codegen::{Bytes, Service},
        transport::Channel,
    };

    fn answer(label: &str, status: u16, headers: &http::HeaderMap, body: Vec<u8>) -> FhirAnswer {
        keep(label, &body);
        let header = |name: http::header::HeaderName| {
            headers
                .get(name)
                .and_then(|v| v.to_str().ok())
                .map(str::to_owned)
        };
        FhirAnswer {
            status,
            content_type: header(http::header::CONTENT_TYPE).unwrap_or_default(),
            allow: header(http::header::ALLOW),
            body: serde_json::from_slice(&body).expect("the door answers JSON"),
            raw: body,
        }
    }

    /// One HTTP/2 request over `channel` (plaintext or TLS); also gives the
    /// `x-request-id` the per-call layer echoed.
    pub async fn http2(
        label: &str,
        channel: &mut Channel,
        origin: &str,
        method: Method,
        path: &str,
        body: &[u8],
    ) -> (FhirAnswer, Option<String>) {
        let request = http::Request::builder()
            .method(method)
            .uri(format!("{origin}{path}"))
            .header(http::header::CONTENT_TYPE, "application/fhir+json")
            .header("x-request-id", "lvi-fhir-test-1")
            .body(Body::new(Full::new(Bytes::from(body.to_vec()))))
            .unwrap();
        std::future::poll_fn(|cx| channel.poll_ready(cx))
            .await
            .unwrap();
        let response = channel.call(request).await.expect("an HTTP/2 answer");
        let status = response.status().as_u16();
        let headers = response.headers().clone();
        let body = response.into_body().collect().await.unwrap().to_bytes();
        let id = headers
            .get("x-request-id")
            .and_then(|v| v.to_str().ok())
            .map(str::to_owned);
        (answer(label, status, &headers, body.to_vec()), id)
    }

    /// One HTTP/1.1 request on a fresh plaintext connection to `address`.
    pub async fn http1(
        label: &str,
        address: std::net::SocketAddr,
        method: &str,
        path: &str,
        body: &[u8],
    ) -> FhirAnswer {
        http1_declaring(label, address, method, path, body.len(), body).await
    }

    /// Like [`http1`], with a `content-length` of `declared` whatever the
    /// `body` sent: a client that sends less than it declared and waits.
    pub async fn http1_declaring(
        label: &str,
        address: std::net::SocketAddr,
        method: &str,
        path: &str,
        declared: usize,
        body: &[u8],
    ) -> FhirAnswer {
        let mut stream = tokio::net::TcpStream::connect(address).await.unwrap();
        let head = format!(
            "{method} {path} HTTP/1.1\r\nhost: {address}\r\ncontent-type: application/fhir+json\r\n\
content-length: {declared}\r\nconnection: close\r\n\r\n"
        );
        stream.write_all(head.as_bytes()).await.unwrap();
        stream.write_all(body).await.unwrap();
        let mut raw = Vec::new();
        stream.read_to_end(&mut raw).await.unwrap();
        let split = raw
            .windows(4)
            .position(|w| w == b"\r\n\r\n")
            .expect("an HTTP/1.1 head");
        let head = String::from_utf8_lossy(&raw[..split]).into_owned();
        let mut lines = head.split("\r\n");
        let status: u16 = lines
            .next()
            .and_then(|l| l.split(' ').nth(1))
            .and_then(|s| s.parse().ok())
            .expect("a status line");
        let mut headers = http::HeaderMap::new();
        let mut chunked = false;
        for line in lines {
            if let Some((name, value)) = line.split_once(':') {
                let name: http::header::HeaderName = name.trim().parse().unwrap();
                let value = value.trim();
                chunked |= name == http::header::TRANSFER_ENCODING && value == "chunked";
                headers.insert(name, value.parse().unwrap());
            }
        }
        let mut body = raw[split + 4..].to_vec();
        if chunked {
            body = dechunk(&body);
        }
        answer(label, status, &headers, body)
    }

    fn dechunk(mut data: &[u8]) -> Vec<u8> {
        let mut out = Vec::new();
        loop {
            let line_end = data.windows(2).position(|w| w == b"\r\n").unwrap();
            let size =
                usize::from_str_radix(std::str::from_utf8(&data[..line_end]).unwrap().trim(), 16)
                    .unwrap();
            data = &data[line_end + 2..];
            if size == 0 {
                return out;
            }
            out.extend_from_slice(&data[..size]);
            data = &data[size + 2..];
        }
    }
}
