//! Certificates made for one run (`rcgen`): a CA, a server certificate for
//! `localhost`, and a client certificate from the same CA, written as PEM
//! files for the server's `--tls-cert`, `--tls-key` and `--client-ca`.

use std::path::{Path, PathBuf};

use rcgen::{
    BasicConstraints, CertificateParams, CertifiedIssuer, DnType, ExtendedKeyUsagePurpose, IsCa,
    KeyPair,
};

/// PEM material for mutual TLS on loopback.
pub struct MutualTls {
    /// The CA certificate (trusted by both sides).
    pub ca_pem: String,
    /// A client certificate and key from the CA.
    pub client: (String, String),
    /// Server arguments turning on mutual TLS with these files.
    pub server_args: Vec<String>,
}

impl MutualTls {
    /// Make the certificates and write the server's files under `dir`.
    pub fn create(dir: &Path) -> Self {
        std::fs::create_dir_all(dir).expect("certificate directory");
        let mut params = CertificateParams::new(Vec::<String>::new()).expect("CA params");
        params.is_ca = IsCa::Ca(BasicConstraints::Unconstrained);
        params
            .distinguished_name
            .push(DnType::CommonName, "Oxbind abuse-suite CA");
        let issuer =
            CertifiedIssuer::self_signed(params, KeyPair::generate().expect("key")).expect("CA");
        let leaf = |name: &str, purpose: ExtendedKeyUsagePurpose| {
            let mut params = CertificateParams::new(vec![name.to_owned()]).expect("leaf params");
            params.distinguished_name.push(DnType::CommonName, name);
            params.extended_key_usages = vec![purpose];
            let key = KeyPair::generate().expect("key");
            let cert = params.signed_by(&key, &issuer).expect("signed");
            (cert.pem(), key.serialize_pem())
        };
        let (server_cert, server_key) = leaf("localhost", ExtendedKeyUsagePurpose::ServerAuth);
        let client = leaf("lab-gateway", ExtendedKeyUsagePurpose::ClientAuth);
        let write = |name: &str, text: &str| -> PathBuf {
            let path = dir.join(name);
            std::fs::write(&path, text).expect("write PEM");
            path
        };
        let server_args = vec![
            "--tls-cert".to_owned(),
            write("server.pem", &server_cert).display().to_string(),
            "--tls-key".to_owned(),
            write("server.key", &server_key).display().to_string(),
            "--client-ca".to_owned(),
            write("ca.pem", &issuer.pem()).display().to_string(),
        ];
        Self {
            ca_pem: issuer.pem(),
            client,
            server_args,
        }
    }
}
