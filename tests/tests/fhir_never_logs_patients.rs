//! The patient references that pass through the FHIR door (subject,
//! encounter, specimen) and the values never reach a log line or a span,
//! at any level: every event and span of a real server is captured at
//! TRACE while it answers an accepted and a refused panel.

use std::sync::{Arc, Mutex};

use oxbind_tests::{
    fhir::{self, wire},
    TestServer,
};
use tracing_subscriber::fmt::{format::FmtSpan, MakeWriter};

/// Everything written, kept in memory.
#[derive(Clone, Default)]
struct Captured(Arc<Mutex<Vec<u8>>>);

impl std::io::Write for Captured {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.0.lock().unwrap().extend_from_slice(buf);
        Ok(buf.len())
    }
    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

impl<'a> MakeWriter<'a> for Captured {
    type Writer = Captured;
    fn make_writer(&'a self) -> Captured {
        self.clone()
    }
}

#[tokio::test]
async fn no_patient_reference_or_value_is_logged_at_any_level() {
    let captured = Captured::default();
    let subscriber = tracing_subscriber::fmt()
        .with_max_level(tracing::Level::TRACE)
        .with_span_events(FmtSpan::FULL)
        .with_writer(captured.clone())
        .with_ansi(false)
        .finish();
    tracing::subscriber::set_global_default(subscriber).unwrap();

    let server = TestServer::start().await;
    let address = server.uri().trim_start_matches("http://").parse().unwrap();
    let accepted = wire::http1(
        "logs-accepted",
        address,
        "POST",
        fhir::OPERATION,
        fhir::LARCHMERE_PANEL.as_bytes(),
    )
    .await;
    assert_eq!(accepted.status, 200);
    let refused_panel = fhir::LARCHMERE_PANEL.replace("7.33", "9.87654321");
    let refused = wire::http1(
        "logs-refused",
        address,
        "POST",
        fhir::OPERATION,
        refused_panel.as_bytes(),
    )
    .await;
    assert_eq!(refused.status, 422);
    server.stop().await;

    let log = String::from_utf8(captured.0.lock().unwrap().clone()).unwrap();
    // The capture works: the calls themselves were logged.
    assert!(log.contains("derive-oxygen-values"), "{log}");
    for secret in [
        "lvi-demo-0417",
        "Rowan Ashdown",
        "lvi-icu-2291",
        "lvi-abg-0931",
        "lvi-vbg-0931",
        "9.87654321",
        "7.33",
    ] {
        assert!(!log.contains(secret), "{secret} appeared in the log");
    }
}
