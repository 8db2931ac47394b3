//! TLS and mutual TLS on the main listener (rustls, through tokio-rustls).
//!
//! tonic's own TLS offers only `h2` by ALPN, so a client that speaks
//! HTTP/1.1 and says so in its ALPN offer (Python's requests and urllib3,
//! Node's fetch, .NET's HttpClient) is refused in the handshake, and the
//! Connect protocol and grpc-web over HTTP/1.1 cannot be reached over TLS.
//! So the handshake is done here, before tonic sees the connection, with the
//! same certificate, the same client verification (WebPKI against the
//! configured CA) and ALPN offering `h2` and then `http/1.1` (RFC 7301).
//! Each handshake runs in its own task, bounded by [`HANDSHAKE_TIMEOUT`],
//! holding its connection's permit, so a slow client delays nobody else.

use std::{
    io,
    path::Path,
    pin::Pin,
    sync::Arc,
    task::{Context, Poll},
    time::Duration,
};

use tokio::{
    io::{AsyncRead, AsyncWrite, ReadBuf},
    sync::mpsc,
};
use tokio_rustls::{
    rustls::{
        self,
        pki_types::{pem::PemObject, CertificateDer, PrivateKeyDer},
        server::WebPkiClientVerifier,
        RootCertStore, ServerConfig,
    },
    server::TlsStream,
    TlsAcceptor,
};
use tokio_stream::{wrappers::ReceiverStream, Stream, StreamExt};
use tonic::transport::server::{Connected, TcpConnectInfo};

use crate::{config::Config, layers::connections::LimitedConnection};

/// Longest a client may take to complete the TLS handshake; past it the
/// connection is closed (and its permit freed).
pub const HANDSHAKE_TIMEOUT: Duration = Duration::from_secs(10);

/// The application protocols offered by ALPN, in order of preference.
pub const ALPN_PROTOCOLS: [&[u8]; 2] = [b"h2", b"http/1.1"];

/// The acceptor `config` asks for: none (plaintext), TLS, or mutual TLS
/// (`--client-ca`). A file that cannot be read or used is named by its flag.
pub fn acceptor(config: &Config) -> Result<Option<TlsAcceptor>, String> {
    let (Some(cert), Some(key)) = (&config.tls_cert, &config.tls_key) else {
        return Ok(None);
    };
    let certificates = read_pem("--tls-cert", cert, |pem| {
        CertificateDer::pem_slice_iter(pem).collect::<Result<Vec<_>, _>>()
    })?;
    let key = read_pem("--tls-key", key, PrivateKeyDer::from_pem_slice)?;
    let provider = Arc::new(rustls::crypto::ring::default_provider());
    let builder = ServerConfig::builder_with_provider(provider.clone())
        .with_safe_default_protocol_versions()
        .map_err(|e| format!("TLS versions: {e}"))?;
    let builder = match &config.client_ca {
        None => builder.with_no_client_auth(),
        Some(ca) => {
            let authorities = read_pem("--client-ca", ca, |pem| {
                CertificateDer::pem_slice_iter(pem).collect::<Result<Vec<_>, _>>()
            })?;
            let mut roots = RootCertStore::empty();
            let (added, _ignored) = roots.add_parsable_certificates(authorities);
            if added == 0 {
                return Err(format!(
                    "--client-ca {}: no usable certificate",
                    ca.display()
                ));
            }
            let verifier = WebPkiClientVerifier::builder_with_provider(roots.into(), provider)
                .build()
                .map_err(|e| format!("--client-ca {}: {e}", ca.display()))?;
            builder.with_client_cert_verifier(verifier)
        }
    };
    let mut server = builder
        .with_single_cert(certificates, key)
        .map_err(|e| format!("--tls-cert and --tls-key: {e}"))?;
    server.alpn_protocols = ALPN_PROTOCOLS.iter().map(|p| p.to_vec()).collect();
    Ok(Some(TlsAcceptor::from(Arc::new(server))))
}

/// Read the PEM file given by `flag` and parse it with `parse`.
fn read_pem<T, E: std::fmt::Display>(
    flag: &str,
    path: &Path,
    parse: impl FnOnce(&[u8]) -> Result<T, E>,
) -> Result<T, String> {
    let pem = std::fs::read(path).map_err(|e| format!("{flag} {}: {e}", path.display()))?;
    parse(&pem).map_err(|e| format!("{flag} {}: {e}", path.display()))
}

/// A connection on the main listener, plaintext or TLS.
#[derive(Debug)]
pub enum ServerIo {
    /// Plaintext.
    Plain(LimitedConnection),
    /// TLS, after a completed handshake.
    Tls(Box<TlsStream<LimitedConnection>>),
}

/// The connections of `plain`, through the TLS handshake when `acceptor` is
/// given, as a stream for `serve_with_incoming_shutdown`. A failed or timed
/// out handshake closes that connection only. The stream ends with `plain`;
/// dropping it stops the task that feeds it.
pub fn incoming<S>(plain: S, acceptor: Option<TlsAcceptor>) -> ReceiverStream<io::Result<ServerIo>>
where
    S: Stream<Item = io::Result<LimitedConnection>> + Send + Unpin + 'static,
{
    let (tx, rx) = mpsc::channel(1);
    tokio::spawn(async move {
        let mut plain = plain;
        loop {
            let next = tokio::select! {
                () = tx.closed() => return,
                next = plain.next() => next,
            };
            let connection = match next {
                Some(Ok(connection)) => connection,
                Some(Err(error)) => {
                    if tx.send(Err(error)).await.is_err() {
                        return;
                    }
                    continue;
                }
                None => return,
            };
            let Some(acceptor) = acceptor.clone() else {
                if tx.send(Ok(ServerIo::Plain(connection))).await.is_err() {
                    return;
                }
                continue;
            };
            let tx = tx.clone();
            tokio::spawn(async move {
                match tokio::time::timeout(HANDSHAKE_TIMEOUT, acceptor.accept(connection)).await {
                    Ok(Ok(stream)) => {
                        let _ = tx.send(Ok(ServerIo::Tls(Box::new(stream)))).await;
                    }
                    Ok(Err(error)) => tracing::debug!(%error, "TLS handshake failed"),
                    Err(_) => tracing::debug!(
                        timeout_ms = HANDSHAKE_TIMEOUT.as_millis() as u64,
                        "TLS handshake timed out"
                    ),
                }
            });
        }
    });
    ReceiverStream::new(rx)
}

impl Connected for ServerIo {
    type ConnectInfo = TcpConnectInfo;

    fn connect_info(&self) -> Self::ConnectInfo {
        match self {
            Self::Plain(connection) => connection.connect_info(),
            Self::Tls(stream) => stream.get_ref().0.connect_info(),
        }
    }
}

impl AsyncRead for ServerIo {
    fn poll_read(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &mut ReadBuf<'_>,
    ) -> Poll<io::Result<()>> {
        match self.get_mut() {
            Self::Plain(connection) => Pin::new(connection).poll_read(cx, buf),
            Self::Tls(stream) => Pin::new(stream.as_mut()).poll_read(cx, buf),
        }
    }
}

impl AsyncWrite for ServerIo {
    fn poll_write(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &[u8],
    ) -> Poll<io::Result<usize>> {
        match self.get_mut() {
            Self::Plain(connection) => Pin::new(connection).poll_write(cx, buf),
            Self::Tls(stream) => Pin::new(stream.as_mut()).poll_write(cx, buf),
        }
    }

    fn poll_flush(self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        match self.get_mut() {
            Self::Plain(connection) => Pin::new(connection).poll_flush(cx),
            Self::Tls(stream) => Pin::new(stream.as_mut()).poll_flush(cx),
        }
    }

    fn poll_shutdown(self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        match self.get_mut() {
            Self::Plain(connection) => Pin::new(connection).poll_shutdown(cx),
            Self::Tls(stream) => Pin::new(stream.as_mut()).poll_shutdown(cx),
        }
    }

    fn poll_write_vectored(
        self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        bufs: &[io::IoSlice<'_>],
    ) -> Poll<io::Result<usize>> {
        match self.get_mut() {
            Self::Plain(connection) => Pin::new(connection).poll_write_vectored(cx, bufs),
            Self::Tls(stream) => Pin::new(stream.as_mut()).poll_write_vectored(cx, bufs),
        }
    }

    fn is_write_vectored(&self) -> bool {
        match self {
            Self::Plain(connection) => connection.is_write_vectored(),
            Self::Tls(stream) => stream.is_write_vectored(),
        }
    }
}
