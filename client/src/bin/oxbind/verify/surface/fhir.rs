//! The FHIR R4 door (`/fhir/r4`). This build probes it by its
//! CapabilityStatement (`GET /fhir/r4/metadata`, FHIR R4 "capabilities"
//! interaction, https://hl7.org/fhir/R4/http.html#capabilities) and records
//! whether it answered; it has no check cases for it yet, so it offers no
//! method. Cases for the FHIR operation join here when the door's own
//! vectors exist.

use prost_reflect::MethodDescriptor;
use reqwest::{header, StatusCode};
use serde_json::Value;

use super::{connect::describe, CallFailure, Pending, Probe, Surface};

/// The FHIR base path on the main listener.
const FHIR_BASE: &str = "/fhir/r4";
/// The FHIR JSON media type.
const FHIR_JSON: &str = "application/fhir+json";

/// The FHIR door of one deployment.
pub(crate) struct FhirR4 {
    client: reqwest::Client,
    base: String,
}

impl FhirR4 {
    /// The door under `base` (the `--server` address), through `client`.
    pub(crate) fn new(client: reqwest::Client, base: &str) -> Self {
        Self {
            client,
            base: format!("{}{FHIR_BASE}", base.trim_end_matches('/')),
        }
    }
}

impl Surface for FhirR4 {
    fn key(&self) -> &'static str {
        "fhir-r4"
    }

    fn title(&self) -> &'static str {
        "FHIR R4 operation"
    }

    fn probe(&self) -> Pending<'_, Probe> {
        Box::pin(async move {
            let asked = format!("GET {FHIR_BASE}/metadata");
            let response = match self
                .client
                .get(format!("{}/metadata", self.base))
                .header(header::ACCEPT, FHIR_JSON)
                .send()
                .await
            {
                Ok(response) => response,
                Err(e) => return Probe::not_offered(format!("{asked}: {}", describe(&e))),
            };
            let status = response.status();
            let body: Option<Value> = response
                .bytes()
                .await
                .ok()
                .and_then(|b| serde_json::from_slice(&b).ok());
            let kind = body
                .as_ref()
                .and_then(|b| b["resourceType"].as_str())
                .unwrap_or_default();
            if status == StatusCode::OK && kind == "CapabilityStatement" {
                let version = body
                    .as_ref()
                    .and_then(|b| b["fhirVersion"].as_str())
                    .unwrap_or("not stated");
                Probe::answered(format!(
                    "{asked} answered a CapabilityStatement (FHIR version {version}); this build \
                     has no check cases for this door yet"
                ))
            } else {
                Probe::not_offered(format!(
                    "{asked} answered HTTP {status} without a CapabilityStatement"
                ))
            }
        })
    }

    fn offers(&self, _rpc: &str) -> bool {
        false
    }

    fn call<'a>(
        &'a self,
        method: &'a MethodDescriptor,
        _request: &'a Value,
    ) -> Pending<'a, Result<Value, CallFailure>> {
        Box::pin(async move {
            Err(CallFailure::no_answer(format!(
                "{} is not offered through the FHIR door by this build",
                method.full_name()
            )))
        })
    }
}
