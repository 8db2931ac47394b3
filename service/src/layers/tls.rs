//! TLS and mutual TLS for the main listener (rustls with the ring provider,
//! as tonic's own server used): the server's certificate chain and key, and,
//! with a client CA, a client certificate signed by it is required in the
//! handshake. The handshake is the connection loop's ([`super::connections`]),
//! bounded by `--tls-handshake-timeout`, before any HTTP is spoken.
//!
//! ALPN offers `h2` and then `http/1.1` (RFC 7301) on the main listener
//! ([`super::protocol::MAIN_ACCEPTS_HTTP1`]): tonic's own TLS offered only
//! `h2`, so a client that speaks HTTP/1.1 and says so in its ALPN offer
//! (Python's requests and urllib3, Node's fetch, .NET's HttpClient) was
//! refused in the handshake, and the Connect protocol, the FHIR door and
//! grpc-web over HTTP/1.1 could not be reached over TLS.

use std::sync::Arc;

use tokio_rustls::{
    rustls::{
        self,
        pki_types::{pem::PemObject, CertificateDer, PrivateKeyDer},
        server::WebPkiClientVerifier,
        RootCertStore, ServerConfig,
    },
    TlsAcceptor,
};

/// ALPN name of HTTP/2 (RFC 9113 section 3.2).
const ALPN_HTTP2: &[u8] = b"h2";
/// ALPN name of HTTP/1.1 (RFC 7301 section 6).
const ALPN_HTTP1: &[u8] = b"http/1.1";

/// A TLS acceptor from PEM text: the certificate chain, its private key,
/// and optionally the CA certificates that sign the clients' certificates
/// (mutual TLS). ALPN offers `h2`, and `http/1.1` too when `accept_http1`.
///
/// # Errors
///
/// A message naming the flag whose file is unusable.
pub fn acceptor(
    certificate_chain: &[u8],
    private_key: &[u8],
    client_ca: Option<&[u8]>,
    accept_http1: bool,
) -> Result<TlsAcceptor, String> {
    let provider = Arc::new(rustls::crypto::ring::default_provider());
    let chain = CertificateDer::pem_slice_iter(certificate_chain)
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| format!("--tls-cert: not a PEM certificate chain ({e})"))?;
    if chain.is_empty() {
        return Err("--tls-cert: no certificate in the file".to_owned());
    }
    let key = PrivateKeyDer::from_pem_slice(private_key)
        .map_err(|e| format!("--tls-key: not a PEM private key ({e})"))?;
    let builder = ServerConfig::builder_with_provider(provider.clone())
        .with_safe_default_protocol_versions()
        .map_err(|e| format!("TLS protocol versions: {e}"))?;
    let builder = match client_ca {
        None => builder.with_no_client_auth(),
        Some(pem) => {
            let mut roots = RootCertStore::empty();
            for certificate in CertificateDer::pem_slice_iter(pem) {
                let certificate =
                    certificate.map_err(|e| format!("--client-ca: not a PEM certificate ({e})"))?;
                roots
                    .add(certificate)
                    .map_err(|e| format!("--client-ca: unusable CA certificate ({e})"))?;
            }
            if roots.is_empty() {
                return Err("--client-ca: no certificate in the file".to_owned());
            }
            let verifier = WebPkiClientVerifier::builder_with_provider(Arc::new(roots), provider)
                .build()
                .map_err(|e| format!("--client-ca: {e}"))?;
            builder.with_client_cert_verifier(verifier)
        }
    };
    let mut config = builder
        .with_single_cert(chain, key)
        .map_err(|e| format!("--tls-cert/--tls-key: {e}"))?;
    config.alpn_protocols = vec![ALPN_HTTP2.to_vec()];
    if accept_http1 {
        config.alpn_protocols.push(ALPN_HTTP1.to_vec());
    }
    Ok(TlsAcceptor::from(Arc::new(config)))
}
