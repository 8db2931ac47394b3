//! TLS and mutual TLS with certificates made here by `rcgen`: a client with a
//! certificate from the configured CA is served; one without a certificate,
//! or with one from another CA, is refused. The plaintext health listener
//! answers health (and nothing else) beside the TLS listener.

mod ops_support;

use std::path::PathBuf;

use ops_support::Running;
use oxbind_client::{
    health::{
        health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
    },
    v1::{model_catalog_service_client::ModelCatalogServiceClient, ListModelsRequest},
};
use oxbind_service::Config;
use rcgen::{
    BasicConstraints, CertificateParams, CertifiedIssuer, DnType, ExtendedKeyUsagePurpose, IsCa,
    KeyPair,
};
use tonic::transport::{Certificate, ClientTlsConfig, Endpoint, Identity};

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

    fn pem(&self) -> String {
        self.issuer.pem()
    }

    /// A leaf certificate and key (PEM) for `name`, for a server or a client.
    fn leaf(&self, name: &str, purpose: ExtendedKeyUsagePurpose) -> (String, String) {
        let mut params = CertificateParams::new(vec![name.to_owned()]).unwrap();
        params.distinguished_name.push(DnType::CommonName, name);
        params.extended_key_usages = vec![purpose];
        let key = KeyPair::generate().unwrap();
        let cert = params.signed_by(&key, &self.issuer).unwrap();
        (cert.pem(), key.serialize_pem())
    }
}

/// A fresh directory for one test's PEM files.
fn scratch_dir(test: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("oxbind-ops-tls-{}-{test}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn write(dir: &std::path::Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

/// Whether a ListModels call over TLS (trusting `server_ca`, presenting
/// `identity` if any) succeeds.
async fn call_over_tls(
    server: &Running,
    server_ca: &str,
    identity: Option<(String, String)>,
) -> Result<(), String> {
    let mut tls = ClientTlsConfig::new()
        .ca_certificate(Certificate::from_pem(server_ca))
        .domain_name("localhost");
    if let Some((cert, key)) = identity {
        tls = tls.identity(Identity::from_pem(cert, key));
    }
    let channel = Endpoint::from_shared(format!("https://localhost:{}", server.address.port()))
        .unwrap()
        .tls_config(tls)
        .map_err(|e| e.to_string())?
        .connect()
        .await
        .map_err(|e| format!("connect: {e}"))?;
    ModelCatalogServiceClient::new(channel)
        .list_models(ListModelsRequest::default())
        .await
        .map(|_| ())
        .map_err(|e| format!("call: {e}"))
}

#[tokio::test]
async fn mutual_tls_serves_clients_of_the_ca_and_refuses_the_rest() {
    let dir = scratch_dir("mtls");
    let ca = Authority::new("Oxbind test CA");
    let other_ca = Authority::new("Some other CA");
    let (server_cert, server_key) = ca.leaf("localhost", ExtendedKeyUsagePurpose::ServerAuth);
    let config = Config {
        tls_cert: Some(write(&dir, "server.pem", &server_cert)),
        tls_key: Some(write(&dir, "server.key", &server_key)),
        client_ca: Some(write(&dir, "client-ca.pem", &ca.pem())),
        ..Config::default()
    };
    let server = Running::start(config, true).await;

    let good = ca.leaf("lab-gateway", ExtendedKeyUsagePurpose::ClientAuth);
    call_over_tls(&server, &ca.pem(), Some(good))
        .await
        .expect("a client with a certificate from the CA is served");

    let refused = call_over_tls(&server, &ca.pem(), None).await;
    assert!(
        refused.is_err(),
        "a client without a certificate must be refused"
    );

    let foreign = other_ca.leaf("intruder", ExtendedKeyUsagePurpose::ClientAuth);
    let refused = call_over_tls(&server, &ca.pem(), Some(foreign)).await;
    assert!(
        refused.is_err(),
        "a certificate from another CA must be refused"
    );

    // Plaintext on the TLS port gets nowhere.
    let plaintext = oxbind_client::connect(server.uri()).await;
    if let Ok(channel) = plaintext {
        assert!(HealthClient::new(channel)
            .check(HealthCheckRequest::default())
            .await
            .is_err());
    }

    // The plaintext health listener answers health, for Kubernetes probes...
    let health_uri = format!("http://{}", server.health_address.unwrap());
    let channel = oxbind_client::connect(health_uri)
        .await
        .expect("health listener");
    let status = HealthClient::new(channel.clone())
        .check(HealthCheckRequest {
            service: "oxbind.v1.DissociationService".to_owned(),
        })
        .await
        .expect("health over plaintext")
        .into_inner()
        .status();
    assert_eq!(status, ServingStatus::Serving);
    // ...and nothing else.
    let status = ModelCatalogServiceClient::new(channel)
        .list_models(ListModelsRequest::default())
        .await
        .expect_err("only health is served on the health listener");
    assert_eq!(status.code(), tonic::Code::Unimplemented);

    server.stop().await;
    let _ = std::fs::remove_dir_all(dir);
}

#[tokio::test]
async fn tls_without_a_client_ca_serves_any_client() {
    let dir = scratch_dir("tls");
    let ca = Authority::new("Oxbind test CA");
    let (server_cert, server_key) = ca.leaf("localhost", ExtendedKeyUsagePurpose::ServerAuth);
    let config = Config {
        tls_cert: Some(write(&dir, "server.pem", &server_cert)),
        tls_key: Some(write(&dir, "server.key", &server_key)),
        ..Config::default()
    };
    let server = Running::start(config, false).await;
    call_over_tls(&server, &ca.pem(), None)
        .await
        .expect("TLS without client authentication");
    // A client that does not trust the server's CA refuses the server.
    let other_ca = Authority::new("Some other CA");
    assert!(call_over_tls(&server, &other_ca.pem(), None).await.is_err());
    server.stop().await;
    let _ = std::fs::remove_dir_all(dir);
}

/// The HTTP status of `GET /fhir/r4/metadata` over TLS (HTTP/2), or why
/// there was none.
async fn fhir_metadata_over_tls(
    server: &Running,
    server_ca: &str,
    identity: Option<(String, String)>,
) -> Result<u16, String> {
    use http_body_util::{BodyExt, Full};
    use tonic::codegen::{Bytes, Service};
    let mut tls = ClientTlsConfig::new()
        .ca_certificate(Certificate::from_pem(server_ca))
        .domain_name("localhost");
    if let Some((cert, key)) = identity {
        tls = tls.identity(Identity::from_pem(cert, key));
    }
    let origin = format!("https://localhost:{}", server.address.port());
    let mut channel = Endpoint::from_shared(origin.clone())
        .unwrap()
        .tls_config(tls)
        .map_err(|e| e.to_string())?
        .connect()
        .await
        .map_err(|e| format!("connect: {e}"))?;
    let request = http::Request::get(format!("{origin}/fhir/r4/metadata"))
        .body(tonic::body::Body::new(Full::new(Bytes::new())))
        .unwrap();
    std::future::poll_fn(|cx| channel.poll_ready(cx))
        .await
        .map_err(|e| e.to_string())?;
    let response = channel.call(request).await.map_err(|e| e.to_string())?;
    let status = response.status().as_u16();
    let body = response
        .into_body()
        .collect()
        .await
        .map_err(|e| e.to_string())?;
    let text = String::from_utf8_lossy(&body.to_bytes()).into_owned();
    assert!(text.contains("CapabilityStatement"), "{text}");
    Ok(status)
}

#[tokio::test]
async fn the_fhir_door_is_served_under_the_same_mutual_tls() {
    let dir = scratch_dir("fhir-mtls");
    let ca = Authority::new("Oxbind test CA");
    let (server_cert, server_key) = ca.leaf("localhost", ExtendedKeyUsagePurpose::ServerAuth);
    let config = Config {
        tls_cert: Some(write(&dir, "server.pem", &server_cert)),
        tls_key: Some(write(&dir, "server.key", &server_key)),
        client_ca: Some(write(&dir, "client-ca.pem", &ca.pem())),
        ..Config::default()
    };
    let server = Running::start(config, false).await;
    let good = ca.leaf(
        "ehr-integration-engine",
        ExtendedKeyUsagePurpose::ClientAuth,
    );
    assert_eq!(
        fhir_metadata_over_tls(&server, &ca.pem(), Some(good)).await,
        Ok(200)
    );
    assert!(
        fhir_metadata_over_tls(&server, &ca.pem(), None)
            .await
            .is_err(),
        "a client without a certificate must be refused"
    );
    server.stop().await;
    let _ = std::fs::remove_dir_all(dir);
}
