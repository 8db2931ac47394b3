//! The Connect protocol over the main listener's TLS and mutual TLS, with
//! certificates made here by `rcgen` and a rustls client: the same listener,
//! the same certificates and the same refusal of a client without one as
//! gRPC (service/tests/ops_tls.rs).

use std::sync::Arc;

use oxbind_service::Config;
use oxbind_tests::{
    http::{connect_post, send_over, Version},
    TestServer,
};
use rcgen::{
    BasicConstraints, CertificateParams, CertifiedIssuer, DnType, ExtendedKeyUsagePurpose, IsCa,
    KeyPair,
};
use tokio_rustls::{
    rustls::{
        self,
        pki_types::{pem::PemObject, CertificateDer, PrivateKeyDer, ServerName},
    },
    TlsConnector,
};

const SATURATION: &str = "/oxbind.v1.DissociationService/SaturationFromTension";
const BODY: &str = r#"{"po2":{"value":60,"unit":"mm[Hg]"}}"#;

/// A certificate authority made for one test.
struct Authority {
    issuer: CertifiedIssuer<'static, KeyPair>,
}

impl Authority {
    fn new(name: &str) -> Self {
        let mut params = CertificateParams::new(Vec::<String>::new()).unwrap();
        params.is_ca = IsCa::Ca(BasicConstraints::Unconstrained);
        params.distinguished_name.push(DnType::CommonName, name);
        let issuer = CertifiedIssuer::self_signed(params, KeyPair::generate().unwrap()).unwrap();
        Self { issuer }
    }

    /// A leaf certificate and key (PEM) for `name`.
    fn leaf(&self, name: &str, purpose: ExtendedKeyUsagePurpose) -> (String, String) {
        let mut params = CertificateParams::new(vec![name.to_owned()]).unwrap();
        params.distinguished_name.push(DnType::CommonName, name);
        params.extended_key_usages = vec![purpose];
        let key = KeyPair::generate().unwrap();
        let cert = params.signed_by(&key, &self.issuer).unwrap();
        (cert.pem(), key.serialize_pem())
    }
}

/// A server with TLS from `authority`, and mutual TLS when `client_ca` is
/// given; PEM files go to a scratch directory.
async fn tls_server(
    test: &str,
    authority: &Authority,
    client_ca: Option<&Authority>,
) -> TestServer {
    let dir =
        std::env::temp_dir().join(format!("oxbind-connect-tls-{}-{test}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let write = |name: &str, text: &str| {
        let path = dir.join(name);
        std::fs::write(&path, text).unwrap();
        path
    };
    let (cert, key) = authority.leaf("localhost", ExtendedKeyUsagePurpose::ServerAuth);
    let config = Config {
        tls_cert: Some(write("server.pem", &cert)),
        tls_key: Some(write("server.key", &key)),
        client_ca: client_ca.map(|ca| write("clients-ca.pem", &ca.issuer.pem())),
        ..Config::default()
    };
    TestServer::start_with(config).await
}

/// A Connect JSON call over TLS, trusting `authority`, offering `alpn`, and
/// presenting `identity` when given; the status code, or the TLS or HTTP
/// failure.
async fn call(
    server: &TestServer,
    authority: &Authority,
    alpn: &[&[u8]],
    identity: Option<(String, String)>,
    version: Version,
) -> Result<u16, String> {
    let mut roots = rustls::RootCertStore::empty();
    roots
        .add(CertificateDer::from_pem_slice(authority.issuer.pem().as_bytes()).unwrap())
        .unwrap();
    let builder = rustls::ClientConfig::builder_with_provider(Arc::new(
        rustls::crypto::ring::default_provider(),
    ))
    .with_safe_default_protocol_versions()
    .unwrap()
    .with_root_certificates(roots);
    let mut config = match identity {
        Some((cert, key)) => builder
            .with_client_auth_cert(
                vec![CertificateDer::from_pem_slice(cert.as_bytes()).unwrap()],
                PrivateKeyDer::from_pem_slice(key.as_bytes()).unwrap(),
            )
            .unwrap(),
        None => builder.with_no_client_auth(),
    };
    config.alpn_protocols = alpn.iter().map(|p| p.to_vec()).collect();
    let tcp = tokio::net::TcpStream::connect(server.address())
        .await
        .map_err(|e| e.to_string())?;
    let tls = TlsConnector::from(Arc::new(config))
        .connect(ServerName::try_from("localhost").unwrap(), tcp)
        .await
        .map_err(|e| e.to_string())?;
    let authority = format!("localhost:{}", server.address().port());
    // A refused client certificate shows up on the first read under TLS
    // 1.3, inside hyper: run the call in a task so that it fails as an Err.
    let answer = tokio::spawn(async move {
        send_over(
            tls,
            &authority,
            version,
            connect_post(SATURATION, "application/json", BODY),
        )
        .await
    })
    .await
    .map_err(|e| format!("the call failed: {e}"))?;
    Ok(answer.status)
}

#[tokio::test]
async fn connect_is_served_over_tls_by_http2_and_by_http1_whatever_alpn_offers() {
    let authority = Authority::new("Larchmere Valley Infirmary test CA");
    let server = tls_server("plain", &authority, None).await;
    assert_eq!(
        call(
            &server,
            &authority,
            &[b"h2", b"http/1.1"],
            None,
            Version::Http2
        )
        .await,
        Ok(200)
    );
    // A client that speaks only HTTP/1.1 and says so by ALPN (Python's
    // requests, Node's fetch, .NET's HttpClient do), and one that offers no
    // ALPN protocol at all.
    assert_eq!(
        call(&server, &authority, &[b"http/1.1"], None, Version::Http1).await,
        Ok(200)
    );
    assert_eq!(
        call(&server, &authority, &[], None, Version::Http1).await,
        Ok(200)
    );
    server.stop().await;
}

#[tokio::test]
async fn under_mutual_tls_connect_needs_a_certificate_from_the_client_ca() {
    let authority = Authority::new("Larchmere Valley Infirmary test CA");
    let clients = Authority::new("Larchmere Valley Infirmary interface engines");
    let server = tls_server("mutual", &authority, Some(&clients)).await;
    let engine = clients.leaf("interface-engine", ExtendedKeyUsagePurpose::ClientAuth);
    assert_eq!(
        call(&server, &authority, &[b"h2"], Some(engine), Version::Http2).await,
        Ok(200)
    );
    let refused = call(&server, &authority, &[b"h2"], None, Version::Http2).await;
    assert!(
        refused.is_err(),
        "a client without a certificate was served: {refused:?}"
    );
    let stranger =
        Authority::new("another CA").leaf("stranger", ExtendedKeyUsagePurpose::ClientAuth);
    let refused = call(
        &server,
        &authority,
        &[b"h2"],
        Some(stranger),
        Version::Http2,
    )
    .await;
    assert!(
        refused.is_err(),
        "a client with a foreign certificate was served: {refused:?}"
    );
    server.stop().await;
}
