//! `oxbind verify` against real servers in this process (the one test-server
//! helper, `oxbind_tests::TestServer`): every case passes against the real
//! service on its gRPC, Connect and FHIR doors, two runs with the same
//! `--as-of` give identical bytes, and the uncertainty section lists the
//! server's own profiles with the uncertainty cases; a stand-in server with
//! one answer altered is caught, named and refused; and the HTML report is
//! rendered by headless Chromium, so that it is known to print.

use std::{
    collections::BTreeSet,
    path::{Path, PathBuf},
    process::Output,
    time::Duration,
};

use oxbind_client::v1::{
    consistency_service_server::ConsistencyServiceServer,
    dissociation_service_server::{DissociationService, DissociationServiceServer},
    model_catalog_service_client::ModelCatalogServiceClient,
    model_catalog_service_server::ModelCatalogServiceServer,
    oxygen_transport_service_server::OxygenTransportServiceServer,
    BatchSaturationFromTensionRequest, BatchSaturationFromTensionResponse,
    BatchTensionFromSaturationRequest, BatchTensionFromSaturationResponse,
    CorrectForTemperatureRequest, CorrectForTemperatureResponse, EstimateP50Request,
    EstimateP50Response, ListModelsRequest, Model, ProfileVerification, SampleCurveRequest,
    SampleCurveResponse, SaturationFromTensionRequest, SaturationFromTensionResponse,
    ShiftFactorsRequest, ShiftFactorsResponse, TensionFromSaturationRequest,
    TensionFromSaturationResponse,
};
use oxbind_service::{
    grpc::{CatalogApi, ConsistencyApi, DissociationApi, TransportApi},
    Config,
};
use oxbind_tests::TestServer;
use serde_json::Value;
use tonic::{transport::server::TcpIncoming, Request, Response, Status};

/// The time every report here is made at.
const AS_OF: &str = "2026-12-03T09:00:00Z";

/// The exit status of a run that wrote its reports but is not verified.
const EXIT_NOT_VERIFIED: i32 = 6;

/// How much the stand-in adds to every saturation Kelman 1966 gives: far
/// above every Kelman case's tolerance (at most 1e-6).
const KELMAN_SATURATION_ERROR: f64 = 0.002;

/// The longest a Chromium run may take before it is stopped.
const CHROMIUM_DEADLINE: Duration = Duration::from_secs(120);

/// Run `oxbind verify` against `server` with `args`, writing both reports
/// into `dir` under `name`.
async fn verify(server: &str, dir: &Path, name: &str, args: &[&str]) -> (Output, PathBuf, PathBuf) {
    let html = dir.join(format!("{name}.html"));
    let json = dir.join(format!("{name}.json"));
    let mut command = std::process::Command::new(env!("CARGO_BIN_EXE_oxbind"));
    for variable in [
        "OXBIND_SERVER",
        "OXBIND_CA_CERT",
        "OXBIND_CLIENT_CERT",
        "OXBIND_CLIENT_KEY",
    ] {
        command.env_remove(variable);
    }
    command
        .args(["verify", "--server", server, "--as-of", AS_OF])
        .arg("--report")
        .arg(&html)
        .arg("--json")
        .arg(&json)
        .args(args);
    let output = tokio::task::spawn_blocking(move || command.output().expect("run oxbind"))
        .await
        .expect("the command's thread");
    (output, html, json)
}

fn read_json(path: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(path).expect("the JSON report")).expect("JSON")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn every_case_passes_against_the_service_and_two_runs_are_byte_identical() {
    let server = TestServer::start().await;
    let dir = tempfile::tempdir().unwrap();
    let (first, html_1, json_1) = verify(&server.uri(), dir.path(), "first", &[]).await;
    assert_eq!(
        first.status.code(),
        Some(0),
        "stdout: {}\nstderr: {}",
        text(&first.stdout),
        text(&first.stderr)
    );
    let report = read_json(&json_1);
    let totals = &report["totals"];
    assert_eq!(totals["verified"], true);
    assert_eq!(totals["failed"], 0);
    assert!(totals["cases"].as_u64().unwrap() >= 200, "{totals}");
    assert_eq!(report["coverage"]["gaps"].as_array().unwrap().len(), 0);
    assert_eq!(report["server"]["apiVersion"], "v1");
    assert_eq!(report["server"]["identitySource"], "GetServerSettings");
    assert_eq!(report["settings"]["reported"], true);
    assert_eq!(report["asOf"], AS_OF);
    // The in-process server answers on gRPC and Connect alike; every case
    // runs through both.
    let surfaces = report["surfaces"].as_array().unwrap();
    let door = |key: &str| surfaces.iter().find(|s| s["key"] == key).unwrap();
    assert_eq!(door("grpc")["answered"], true);
    assert_eq!(door("connect-json")["answered"], true);
    assert_eq!(door("connect-json")["cases"], door("grpc")["cases"]);
    // The FHIR door carries the cases it can write as Observations.
    assert_eq!(door("fhir-r4")["answered"], true);
    assert!(
        door("fhir-r4")["cases"].as_u64().unwrap() >= 50,
        "{}",
        door("fhir-r4")
    );
    assert_eq!(report["reverification"]["dueBy"], "2027-06-03");
    let families: BTreeSet<&str> = report["cases"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|c| c["family"].as_str())
        .collect();
    assert_eq!(
        families,
        BTreeSet::from(["api-example", "reference-table", "shared-vector"])
    );
    let page = std::fs::read_to_string(&html_1).unwrap();
    the_uncertainty_section_lists_the_servers_profiles_and_cases(&server, &report, &page).await;

    let (second, html_2, json_2) = verify(
        &server.uri(),
        dir.path(),
        "second",
        &["--compare", json_1.to_str().unwrap()],
    )
    .await;
    assert_eq!(second.status.code(), Some(0), "{}", text(&second.stderr));
    for (first, second) in [(&html_1, &html_2), (&json_1, &json_2)] {
        let (a, b) = (
            std::fs::read(first).unwrap(),
            std::fs::read(second).unwrap(),
        );
        if let Some(at) = a.iter().zip(&b).position(|(x, y)| x != y) {
            panic!(
                "{} and {} differ at byte {at}: {:?} / {:?}",
                first.display(),
                second.display(),
                text(&a[at.saturating_sub(80)..(at + 80).min(a.len())]),
                text(&b[at.saturating_sub(80)..(at + 80).min(b.len())]),
            );
        }
        assert_eq!(
            a.len(),
            b.len(),
            "{} and {}",
            first.display(),
            second.display()
        );
    }
    assert!(
        text(&second.stdout).contains("compared with the previous report: nothing changed"),
        "{}",
        text(&second.stdout)
    );
    server.stop().await;
}

/// The report's uncertainty section states what the server publishes: every
/// built-in profile of its ListModels answer, in its order, with its figure,
/// citation and verification; the two methods with the cases that asked for
/// each; and the uncertainty cases, every one passed, on the gRPC and
/// Connect doors (the FHIR operation takes no uncertainty request), each
/// Monte Carlo one with a fixed seed.
async fn the_uncertainty_section_lists_the_servers_profiles_and_cases(
    server: &TestServer,
    report: &Value,
    page: &str,
) {
    let published = ModelCatalogServiceClient::new(server.channel().await)
        .list_models(ListModelsRequest {})
        .await
        .unwrap()
        .into_inner()
        .uncertainty_profiles;
    assert!(published.len() >= 5, "{published:?}");
    let section = &report["uncertainty"];
    assert_eq!(section["offered"], true);
    assert!(section["profilesSha256"].as_str().unwrap().len() == 64);
    let listed = section["profiles"].as_array().unwrap();
    assert_eq!(listed.len(), published.len());
    for (profile, listed) in published.iter().zip(listed) {
        assert_eq!(listed["profileId"], profile.profile_id.as_str());
        assert_eq!(listed["profileSet"], profile.profile_set.as_str());
        assert_eq!(listed["input"], profile.input.as_str());
        assert_eq!(listed["source"], profile.source.as_str());
        assert_eq!(listed["conversion"], profile.conversion.as_str());
        assert_eq!(
            listed["verificationNote"],
            profile.verification_note.as_str()
        );
        let verification = ProfileVerification::try_from(profile.verification).unwrap();
        assert_eq!(listed["verification"], verification.as_str_name());
        assert!(
            listed["figure"]["standardUncertainty"].is_object()
                || listed["figure"]["bound"].is_object(),
            "{listed}"
        );
        assert!(page.contains(&profile.profile_id), "{}", profile.profile_id);
    }
    // The figures in words, as the server gave them (profiles.csv).
    let figure = |id: &str| {
        listed
            .iter()
            .find(|p| p["profileId"] == id)
            .and_then(|p| p["figureText"].as_str())
            .unwrap()
            .to_owned()
    };
    assert_eq!(
        figure("pulse-oximeter-fda-2013-transmittance-spo2"),
        "standard uncertainty 0.03 (unit 1)"
    );
    assert_eq!(
        figure("clia-2024-po2"),
        "bound \u{b1} 15 mm[Hg] or 0.15 of the value, whichever is greater; normal, covering 0.95"
    );
    assert!(page.contains("Built-in profiles the server publishes"));
    assert!(page.contains("JCGM 100:2008, clause 5.1.2"));
    assert!(page.contains("JCGM 101:2008"));

    let methods = section["methods"].as_array().unwrap();
    let names: Vec<&str> = methods
        .iter()
        .filter_map(|m| m["method"].as_str())
        .collect();
    assert_eq!(
        names,
        [
            "UNCERTAINTY_METHOD_FIRST_ORDER",
            "UNCERTAINTY_METHOD_MONTE_CARLO"
        ]
    );
    for method in methods {
        assert!(method["cases"].as_u64().unwrap() >= 2, "{method}");
        assert_eq!(method["passed"], method["cases"], "{method}");
    }
    let cases = section["cases"].as_array().unwrap();
    let doors: BTreeSet<&str> = cases.iter().filter_map(|c| c["surface"].as_str()).collect();
    assert_eq!(doors, BTreeSet::from(["connect-json", "grpc"]));
    assert!(cases.len() >= 30, "{} uncertainty cases", cases.len());
    assert!(cases.iter().all(|c| c["passed"] == true));
    // Every Monte Carlo result is asked for with a fixed seed (a request
    // that must be refused gives none); section 10's examples are labelled
    // as the service's own output.
    for record in report["cases"].as_array().unwrap() {
        let asked = &record["inputs"]["uncertainty"];
        let refused = record["checks"][0]["what"] == "refusal";
        if asked["method"] == "UNCERTAINTY_METHOD_MONTE_CARLO" && !refused {
            assert!(asked["seed"].is_string(), "{}", record["id"]);
        }
        if record["id"].as_str().unwrap().contains("section-10.") {
            assert!(
                record["source"]
                    .as_str()
                    .unwrap()
                    .starts_with("regression values"),
                "{}",
                record["id"]
            );
        }
    }
    let unchecked: Vec<&str> = section["unchecked"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(Value::as_str)
        .collect();
    assert!(
        !unchecked.contains(&"oxbind.v1.DissociationService/SaturationFromTension"),
        "{unchecked:?}"
    );
}

/// The real dissociation service, but every Kelman 1966 saturation of
/// SaturationFromTension is [`KELMAN_SATURATION_ERROR`] too high: a test
/// double for a deployment with one coefficient wrong.
struct KelmanOff(DissociationApi);

#[tonic::async_trait]
impl DissociationService for KelmanOff {
    async fn saturation_from_tension(
        &self,
        request: Request<SaturationFromTensionRequest>,
    ) -> Result<Response<SaturationFromTensionResponse>, Status> {
        let kelman = request.get_ref().model == Model::Kelman1966 as i32;
        let mut response = self.0.saturation_from_tension(request).await?;
        if kelman {
            response.get_mut().saturation_fraction += KELMAN_SATURATION_ERROR;
        }
        Ok(response)
    }

    async fn tension_from_saturation(
        &self,
        request: Request<TensionFromSaturationRequest>,
    ) -> Result<Response<TensionFromSaturationResponse>, Status> {
        self.0.tension_from_saturation(request).await
    }

    async fn sample_curve(
        &self,
        request: Request<SampleCurveRequest>,
    ) -> Result<Response<SampleCurveResponse>, Status> {
        self.0.sample_curve(request).await
    }

    async fn shift_factors(
        &self,
        request: Request<ShiftFactorsRequest>,
    ) -> Result<Response<ShiftFactorsResponse>, Status> {
        self.0.shift_factors(request).await
    }

    async fn estimate_p50(
        &self,
        request: Request<EstimateP50Request>,
    ) -> Result<Response<EstimateP50Response>, Status> {
        self.0.estimate_p50(request).await
    }

    async fn correct_for_temperature(
        &self,
        request: Request<CorrectForTemperatureRequest>,
    ) -> Result<Response<CorrectForTemperatureResponse>, Status> {
        self.0.correct_for_temperature(request).await
    }

    async fn batch_saturation_from_tension(
        &self,
        request: Request<BatchSaturationFromTensionRequest>,
    ) -> Result<Response<BatchSaturationFromTensionResponse>, Status> {
        self.0.batch_saturation_from_tension(request).await
    }

    async fn batch_tension_from_saturation(
        &self,
        request: Request<BatchTensionFromSaturationRequest>,
    ) -> Result<Response<BatchTensionFromSaturationResponse>, Status> {
        self.0.batch_tension_from_saturation(request).await
    }
}

/// The stand-in: the real transport and catalog services beside
/// [`KelmanOff`].
async fn start_stand_in() -> TestServer {
    TestServer::start_serving(|listener, shutdown| async move {
        let config = Config::default();
        tonic::transport::Server::builder()
            .add_service(DissociationServiceServer::new(KelmanOff(
                DissociationApi::new(config.max_batch_items),
            )))
            .add_service(OxygenTransportServiceServer::new(TransportApi::new()))
            .add_service(ModelCatalogServiceServer::new(CatalogApi::from_config(
                &config,
            )))
            .add_service(ConsistencyServiceServer::new(ConsistencyApi::new(
                config.max_batch_items,
            )))
            .serve_with_incoming_shutdown(TcpIncoming::from(listener), shutdown)
            .await
    })
    .await
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_stand_in_with_one_answer_altered_fails_exactly_those_cases_and_names_them() {
    let server = start_stand_in().await;
    let dir = tempfile::tempdir().unwrap();
    let (output, html, json) = verify(&server.uri(), dir.path(), "double", &[]).await;
    let stdout = text(&output.stdout);
    assert_eq!(
        output.status.code(),
        Some(EXIT_NOT_VERIFIED),
        "stdout: {stdout}\nstderr: {}",
        text(&output.stderr)
    );
    let report = read_json(&json);
    assert_eq!(report["totals"]["verified"], false);
    let cases = report["cases"].as_array().unwrap();
    // The cases the alteration must fail: a computed Kelman 1966 saturation
    // from SaturationFromTension. Every other case must still pass.
    let altered: BTreeSet<&str> = cases
        .iter()
        .filter(|c| {
            c["rpc"] == "oxbind.v1.DissociationService/SaturationFromTension"
                && c["models"] == serde_json::json!(["kelman-1966"])
                && c["checks"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .any(|check| check["what"] == "saturationFraction")
        })
        .filter_map(|c| c["id"].as_str())
        .collect();
    let failed: BTreeSet<&str> = cases
        .iter()
        .filter(|c| c["passed"] == false)
        .filter_map(|c| c["id"].as_str())
        .collect();
    assert!(altered.len() >= 10, "{altered:?}");
    assert_eq!(failed, altered);
    let page = std::fs::read_to_string(&html).unwrap();
    assert!(page.contains("Outcome: not verified."));
    for id in &failed {
        assert!(
            stdout.contains(&format!("FAILED {id} on grpc")),
            "{id}: {stdout}"
        );
        assert!(page.contains(id), "{id} is not named in the HTML report");
    }
    // The failed checks show how far off the answer was.
    let kelman_40 = cases
        .iter()
        .find(|c| c["id"] == "dissociation.json/kelman_standard_40")
        .expect("the Kelman vector");
    let check = &kelman_40["checks"][0];
    assert_eq!(check["passed"], false);
    let difference = check["difference"].as_f64().unwrap();
    assert!(
        (difference - KELMAN_SATURATION_ERROR).abs() < 1e-5,
        "{check}"
    );
    server.stop().await;
}

/// The Chromium binary: `OXBIND_CHROMIUM`, else `chromium` or
/// `chromium-browser` on the PATH.
fn chromium() -> PathBuf {
    if let Some(path) = std::env::var_os("OXBIND_CHROMIUM") {
        return PathBuf::from(path);
    }
    let path = std::env::var_os("PATH").unwrap_or_default();
    for dir in std::env::split_paths(&path) {
        for name in ["chromium", "chromium-browser"] {
            let candidate = dir.join(name);
            if candidate.is_file() {
                return candidate;
            }
        }
    }
    panic!(
        "headless Chromium is needed to check that the report prints: `bash tests/run-all.sh` \
         installs it (apt-get install chromium), or set OXBIND_CHROMIUM"
    );
}

/// Run Chromium headless on `page` with `args`, within [`CHROMIUM_DEADLINE`].
fn render(page: &Path, profile: &Path, args: &[String]) {
    let mut child = std::process::Command::new(chromium())
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(args)
        .arg(format!("file://{}", page.display()))
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("start chromium");
    let started = std::time::Instant::now();
    loop {
        if let Some(status) = child.try_wait().expect("wait for chromium") {
            assert!(status.success(), "chromium exited {status}");
            return;
        }
        if started.elapsed() > CHROMIUM_DEADLINE {
            let _ = child.kill();
            let _ = child.wait();
            panic!("chromium took longer than {CHROMIUM_DEADLINE:?}");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_html_report_prints_to_pdf_and_renders_to_png_in_headless_chromium() {
    let server = TestServer::start().await;
    let dir = tempfile::tempdir().unwrap();
    let (output, html, _) = verify(&server.uri(), dir.path(), "print", &[]).await;
    assert_eq!(output.status.code(), Some(0), "{}", text(&output.stderr));
    server.stop().await;

    let page = std::fs::read_to_string(&html).unwrap();
    assert!(!page.contains("<script"), "the report needs no JavaScript");
    assert!(
        !page.contains("src=\"http"),
        "the report loads nothing from outside"
    );
    assert!(
        !page.contains("href=\"http"),
        "the report links nothing outside"
    );
    assert!(page.contains("@page") && page.contains("A4"), "print rules");

    let pdf = dir.path().join("report.pdf");
    let png = dir.path().join("report.png");
    let (html_for_pdf, html_for_png, pdf_arg, png_arg) = (
        html.clone(),
        html.clone(),
        format!("--print-to-pdf={}", pdf.display()),
        format!("--screenshot={}", png.display()),
    );
    let (profile_pdf, profile_png) = (
        dir.path().join("profile-pdf"),
        dir.path().join("profile-png"),
    );
    tokio::task::spawn_blocking(move || {
        render(
            &html_for_pdf,
            &profile_pdf,
            &[pdf_arg, "--no-pdf-header-footer".to_owned()],
        );
        render(
            &html_for_png,
            &profile_png,
            &[png_arg, "--window-size=1240,1754".to_owned()],
        );
    })
    .await
    .expect("the rendering thread");

    let pdf_bytes = std::fs::read(&pdf).expect("chromium wrote the PDF");
    assert!(pdf_bytes.starts_with(b"%PDF-"), "not a PDF");
    // Each page object is `/Type /Page`; the page tree's nodes are
    // `/Type /Pages`.
    let marker = b"/Type /Page";
    let pages = pdf_bytes
        .windows(marker.len() + 1)
        .filter(|w| w.starts_with(marker) && w[marker.len()] != b's')
        .count();
    assert!(
        pdf_bytes.len() > 50_000 && pages >= 5,
        "{} bytes, about {pages} pages: the report should print over several A4 pages",
        pdf_bytes.len()
    );
    let png_bytes = std::fs::read(&png).expect("chromium wrote the PNG");
    assert!(png_bytes.starts_with(b"\x89PNG\r\n\x1a\n"), "not a PNG");
    assert!(png_bytes.len() > 10_000, "a blank screenshot");
    if let Some(keep) = std::env::var_os("OXBIND_KEEP_REPORT_DIR") {
        let keep = PathBuf::from(keep);
        std::fs::create_dir_all(&keep).unwrap();
        for file in [&html, &pdf, &png] {
            std::fs::copy(file, keep.join(file.file_name().unwrap())).unwrap();
        }
    }
}

/// A certificate authority made for one test (rcgen).
struct Authority {
    issuer: rcgen::CertifiedIssuer<'static, rcgen::KeyPair>,
}

impl Authority {
    fn new(name: &str) -> Self {
        use rcgen::{BasicConstraints, CertificateParams, DnType, IsCa, KeyPair};
        let mut params = CertificateParams::new(Vec::<String>::new()).unwrap();
        params.is_ca = IsCa::Ca(BasicConstraints::Unconstrained);
        params.distinguished_name.push(DnType::CommonName, name);
        let issuer =
            rcgen::CertifiedIssuer::self_signed(params, KeyPair::generate().unwrap()).unwrap();
        Self { issuer }
    }

    /// A leaf certificate and key (PEM) for `name`.
    fn leaf(&self, name: &str, purpose: rcgen::ExtendedKeyUsagePurpose) -> (String, String) {
        use rcgen::{CertificateParams, DnType, KeyPair};
        let mut params = CertificateParams::new(vec![name.to_owned()]).unwrap();
        params.distinguished_name.push(DnType::CommonName, name);
        params.extended_key_usages = vec![purpose];
        let key = KeyPair::generate().unwrap();
        let cert = params.signed_by(&key, &self.issuer).unwrap();
        (cert.pem(), key.serialize_pem())
    }
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn verify_speaks_mutual_tls_on_every_door_with_the_tls_flags() {
    use rcgen::ExtendedKeyUsagePurpose::{ClientAuth, ServerAuth};
    let dir = tempfile::tempdir().unwrap();
    let write = |name: &str, text: &str| {
        let path = dir.path().join(name);
        std::fs::write(&path, text).unwrap();
        path
    };
    let servers = Authority::new("Larchmere Valley Infirmary test server CA");
    let clients = Authority::new("Larchmere Valley Infirmary test client CA");
    let (cert, key) = servers.leaf("localhost", ServerAuth);
    let (client_cert, client_key) = clients.leaf("laboratory-verification", ClientAuth);
    let server = TestServer::start_with(Config {
        tls_cert: Some(write("server.pem", &cert)),
        tls_key: Some(write("server.key", &key)),
        client_ca: Some(write("clients-ca.pem", &clients.issuer.pem())),
        ..Config::default()
    })
    .await;
    let ca = write("servers-ca.pem", &servers.issuer.pem());
    let client_cert = write("client.pem", &client_cert);
    let client_key = write("client.key", &client_key);
    let address = format!("https://localhost:{}", server.address().port());
    let (output, _, json) = verify(
        &address,
        dir.path(),
        "tls",
        &[
            "--ca-cert",
            ca.to_str().unwrap(),
            "--client-cert",
            client_cert.to_str().unwrap(),
            "--client-key",
            client_key.to_str().unwrap(),
        ],
    )
    .await;
    assert_eq!(
        output.status.code(),
        Some(0),
        "stdout: {}\nstderr: {}",
        text(&output.stdout),
        text(&output.stderr)
    );
    let report = read_json(&json);
    let surfaces = report["surfaces"].as_array().unwrap();
    for key in ["grpc", "connect-json"] {
        let door = surfaces.iter().find(|s| s["key"] == key).unwrap();
        assert_eq!(door["answered"], true, "{door}");
        assert_eq!(door["passed"], door["cases"], "{door}");
    }
    let setting = |name: &str| {
        report["settings"]["items"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["name"] == name)
            .map(|s| s["value"].clone())
    };
    assert_eq!(setting("tls"), Some(Value::from("on")));
    assert_eq!(setting("mutual-tls"), Some(Value::from("on")));
    server.stop().await;
}
