//! A plain HTTP client for the doors beside gRPC (the Connect protocol):
//! one request per fresh connection, over HTTP/1.1 or HTTP/2 (prior
//! knowledge on plaintext), with hyper's own client connections.

use std::net::SocketAddr;

use http::{header, HeaderMap, HeaderValue, Method, Request};
use http_body_util::{BodyExt, Full};
use hyper_util::rt::{TokioExecutor, TokioIo};
use serde_json::Value;
use tokio::{
    io::{AsyncRead, AsyncWrite},
    net::TcpStream,
};
use tonic::codegen::Bytes;

/// The HTTP version of a call.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Version {
    /// HTTP/1.1.
    Http1,
    /// HTTP/2 (on plaintext, with prior knowledge: `h2c`).
    Http2,
}

/// Both versions, for tests that run over each.
pub const VERSIONS: [Version; 2] = [Version::Http1, Version::Http2];

/// An HTTP answer, read whole.
#[derive(Debug, Clone)]
pub struct Answer {
    /// The status code.
    pub status: u16,
    /// The response headers.
    pub headers: HeaderMap,
    /// The body.
    pub body: Bytes,
}

impl Answer {
    /// The body as JSON; panics (naming the body) when it is not.
    pub fn json(&self) -> Value {
        serde_json::from_slice(&self.body).unwrap_or_else(|e| {
            panic!(
                "body is not JSON ({e}): {}",
                String::from_utf8_lossy(&self.body)
            )
        })
    }

    /// A header's value as text, or "" when absent.
    pub fn header(&self, name: &str) -> &str {
        self.headers
            .get(name)
            .and_then(|v| v.to_str().ok())
            .unwrap_or_default()
    }
}

/// A request for `path_and_query` with `method`, `headers` and `body`.
pub fn request(
    method: Method,
    path_and_query: &str,
    headers: &[(&str, &str)],
    body: impl Into<Bytes>,
) -> Request<Full<Bytes>> {
    let mut builder = Request::builder().method(method).uri(path_and_query);
    for (name, value) in headers {
        builder = builder.header(*name, *value);
    }
    builder
        .body(Full::new(body.into()))
        .expect("a well-formed request")
}

/// A Connect unary POST of `body` to `path` with `content_type`.
pub fn connect_post(
    path: &str,
    content_type: &str,
    body: impl Into<Bytes>,
) -> Request<Full<Bytes>> {
    request(
        Method::POST,
        path,
        &[
            ("content-type", content_type),
            ("connect-protocol-version", "1"),
        ],
        body,
    )
}

/// Send `request` on a fresh plaintext connection to `address`.
pub async fn send(address: SocketAddr, version: Version, request: Request<Full<Bytes>>) -> Answer {
    let stream = TcpStream::connect(address).await.expect("connect");
    stream.set_nodelay(true).expect("TCP_NODELAY");
    send_over(stream, &address.to_string(), version, request).await
}

/// Send `request` over `io`, an open connection (plaintext or TLS) to the
/// server named `authority`.
pub async fn send_over<IO>(
    io: IO,
    authority: &str,
    version: Version,
    mut request: Request<Full<Bytes>>,
) -> Answer
where
    IO: AsyncRead + AsyncWrite + Unpin + Send + 'static,
{
    let io = TokioIo::new(io);
    let response = match version {
        Version::Http1 => {
            request.headers_mut().insert(
                header::HOST,
                HeaderValue::from_str(authority).expect("an authority"),
            );
            let (mut sender, connection) = hyper::client::conn::http1::handshake(io)
                .await
                .expect("HTTP/1.1 handshake");
            tokio::spawn(connection);
            sender.send_request(request).await
        }
        Version::Http2 => {
            let uri = format!("http://{authority}{}", request.uri());
            *request.uri_mut() = uri.parse().expect("an absolute URI");
            let (mut sender, connection) =
                hyper::client::conn::http2::handshake(TokioExecutor::new(), io)
                    .await
                    .expect("HTTP/2 handshake");
            tokio::spawn(connection);
            sender.send_request(request).await
        }
    }
    .expect("the server answers");
    let status = response.status().as_u16();
    let headers = response.headers().clone();
    let body = response
        .into_body()
        .collect()
        .await
        .expect("the whole body arrives")
        .to_bytes();
    Answer {
        status,
        headers,
        body,
    }
}

/// `text` percent-encoded for a URL query, every byte but the unreserved
/// ones (RFC 3986 section 2.3), as curl's `--data-urlencode` does.
pub fn percent_encode(text: &str) -> String {
    text.bytes()
        .map(|b| match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'.' | b'_' | b'~' => {
                (b as char).to_string()
            }
            _ => format!("%{b:02X}"),
        })
        .collect()
}
