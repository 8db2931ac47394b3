//! gRPC by hand over HTTP/2 (the `h2` crate) and HTTP/1.1 (plain bytes), so
//! an attack can send what no well-behaved client would: headers and no
//! message, two messages on a unary call, a wrong content type or method,
//! streams it never reads, resets in the middle of a call.

use std::{net::SocketAddr, time::Duration};

use h2::client::SendRequest;
use http::{HeaderMap, Method, Request};
use prost::bytes::Bytes;
use tokio::{
    io::{AsyncReadExt, AsyncWriteExt},
    net::TcpStream,
};

/// Path of SaturationFromTension.
pub const SATURATION_PATH: &str = "/oxbind.v1.DissociationService/SaturationFromTension";
/// Path of BatchSaturationFromTension.
pub const BATCH_SATURATION_PATH: &str = "/oxbind.v1.DissociationService/BatchSaturationFromTension";
/// Path of ListModels.
pub const LIST_MODELS_PATH: &str = "/oxbind.v1.ModelCatalogService/ListModels";
/// Path of the v1 reflection stream.
pub const REFLECTION_PATH: &str = "/grpc.reflection.v1.ServerReflection/ServerReflectionInfo";
/// Path of health Check.
pub const HEALTH_CHECK_PATH: &str = "/grpc.health.v1.Health/Check";
/// Path of health Watch.
pub const HEALTH_WATCH_PATH: &str = "/grpc.health.v1.Health/Watch";

/// One message in the gRPC length-prefixed framing (uncompressed).
pub fn grpc_frame(message: &impl prost::Message) -> Bytes {
    let body = message.encode_to_vec();
    let mut frame = Vec::with_capacity(5 + body.len());
    frame.push(0);
    frame.extend_from_slice(&(body.len() as u32).to_be_bytes());
    frame.extend_from_slice(&body);
    frame.into()
}

/// Open an HTTP/2 connection (prior knowledge, plaintext) and drive it in
/// the background; the driver answers the server's pings.
pub async fn h2_connect(address: SocketAddr) -> std::io::Result<SendRequest<Bytes>> {
    let (send, _done) = h2_connect_watched(address).await?;
    Ok(send)
}

/// Like [`h2_connect`], also returning a handle that finishes when the
/// server closes the connection.
pub async fn h2_connect_watched(
    address: SocketAddr,
) -> std::io::Result<(SendRequest<Bytes>, tokio::task::JoinHandle<()>)> {
    h2_connect_with_window(address, 8 * 1024 * 1024).await
}

/// Like [`h2_connect_watched`], offering the server a stream window of
/// `window` bytes (0: a client that never lets an answer's data through).
pub async fn h2_connect_with_window(
    address: SocketAddr,
    window: u32,
) -> std::io::Result<(SendRequest<Bytes>, tokio::task::JoinHandle<()>)> {
    let tcp = TcpStream::connect(address).await?;
    let _ = tcp.set_nodelay(true);
    let (send, connection) = h2::client::Builder::new()
        .initial_window_size(window)
        .initial_connection_window_size(64 * 1024 * 1024)
        .handshake(tcp)
        .await
        .map_err(std::io::Error::other)?;
    let done = tokio::spawn(async move {
        let _ = connection.await;
    });
    Ok((send, done))
}

/// A gRPC-shaped request: POST, `application/grpc`, `te: trailers`, plus
/// `extra` headers (which replace those).
pub fn grpc_request(address: SocketAddr, path: &str, extra: &[(&str, &str)]) -> Request<()> {
    let mut builder = Request::builder()
        .method(Method::POST)
        .uri(format!("http://{address}{path}"))
        .header("content-type", "application/grpc")
        .header("te", "trailers");
    for (name, value) in extra {
        let headers = builder.headers_mut().expect("valid so far");
        let name = http::header::HeaderName::from_bytes(name.as_bytes()).expect("header name");
        headers.remove(&name);
        if !value.is_empty() {
            headers.insert(name, value.parse().expect("header value"));
        }
    }
    builder.body(()).expect("request")
}

/// What came back for one request.
#[derive(Debug, Clone, Default, serde::Serialize)]
pub struct Answer {
    /// HTTP status.
    pub http_status: u16,
    /// `content-type` of the answer.
    pub content_type: Option<String>,
    /// `grpc-status`, from the headers (trailers-only) or the trailers.
    pub grpc_status: Option<i32>,
    /// `grpc-message`, percent-decoding left undone.
    pub grpc_message: Option<String>,
    /// Body bytes received.
    pub body_bytes: usize,
    /// The stream or connection failed before the answer ended (reset, GOAWAY).
    pub reset: Option<String>,
}

impl Answer {
    /// Whether this is a gRPC OK answer.
    pub fn is_grpc_ok(&self) -> bool {
        self.http_status == 200 && self.grpc_status == Some(0)
    }

    /// The gRPC status code's name, or what stood in for it.
    pub fn label(&self) -> String {
        match (self.grpc_status, &self.reset) {
            (Some(code), _) => oxbind_client::code_name(tonic::Code::from_i32(code)).to_owned(),
            (None, Some(_)) => "RESET".to_owned(),
            (None, None) => format!("HTTP_{}", self.http_status),
        }
    }
}

fn grpc_status_of(headers: &HeaderMap) -> (Option<i32>, Option<String>) {
    let status = headers
        .get("grpc-status")
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.parse().ok());
    let message = headers
        .get("grpc-message")
        .and_then(|v| v.to_str().ok())
        .map(str::to_owned);
    (status, message)
}

/// Send `request` with `body` (then end the stream if `end`), and read the
/// whole answer, discarding the body as it comes.
pub async fn exchange(
    send: &mut SendRequest<Bytes>,
    request: Request<()>,
    body: Option<Bytes>,
    end: bool,
) -> Answer {
    let ready = match send.clone().ready().await {
        Ok(ready) => ready,
        Err(e) => {
            return Answer {
                reset: Some(e.to_string()),
                ..Answer::default()
            }
        }
    };
    let mut ready = ready;
    let no_body = body.is_none() && end;
    let (response, mut stream) = match ready.send_request(request, no_body) {
        Ok(pair) => pair,
        Err(e) => {
            return Answer {
                reset: Some(e.to_string()),
                ..Answer::default()
            }
        }
    };
    if let Some(body) = body {
        let _ = stream.send_data(body, end);
    } else if !end {
        // Headers only: keep the request open.
    }
    let answer = read_answer(response).await;
    drop(stream);
    answer
}

/// Read a response to the end.
pub async fn read_answer(response: h2::client::ResponseFuture) -> Answer {
    let response = match response.await {
        Ok(response) => response,
        Err(e) => {
            return Answer {
                reset: Some(e.to_string()),
                ..Answer::default()
            }
        }
    };
    let mut answer = Answer {
        http_status: response.status().as_u16(),
        content_type: response
            .headers()
            .get("content-type")
            .and_then(|v| v.to_str().ok())
            .map(str::to_owned),
        ..Answer::default()
    };
    let (status, message) = grpc_status_of(response.headers());
    answer.grpc_status = status;
    answer.grpc_message = message;
    let mut body = response.into_body();
    while let Some(chunk) = body.data().await {
        match chunk {
            Ok(chunk) => {
                answer.body_bytes += chunk.len();
                let _ = body.flow_control().release_capacity(chunk.len());
            }
            Err(e) => {
                answer.reset = Some(e.to_string());
                return answer;
            }
        }
    }
    match body.trailers().await {
        Ok(Some(trailers)) => {
            let (status, message) = grpc_status_of(&trailers);
            if status.is_some() {
                answer.grpc_status = status;
                answer.grpc_message = message;
            }
        }
        Ok(None) => {}
        Err(e) => answer.reset = Some(e.to_string()),
    }
    answer
}

/// Send raw HTTP/1.1 bytes (which should ask to close the connection) and
/// read the whole response as lower-case text.
pub async fn http1_exchange(address: SocketAddr, request: &[u8]) -> String {
    let Ok(mut tcp) = TcpStream::connect(address).await else {
        return String::new();
    };
    if tcp.write_all(request).await.is_err() {
        return String::new();
    }
    let mut response = Vec::new();
    let _ = tokio::time::timeout(Duration::from_secs(10), tcp.read_to_end(&mut response)).await;
    String::from_utf8_lossy(&response).to_lowercase()
}

/// The HTTP status of a raw HTTP/1.1 response (0 when there is none).
pub fn http1_status(response: &str) -> u16 {
    response
        .split_whitespace()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(0)
}
