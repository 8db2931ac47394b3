//! `oxbind fhir`: send a FHIR R4 Parameters (or a Bundle of Observations) to
//! the server's `$derive-oxygen-values` operation and print or write the
//! answer.
//!
//! A Bundle's Observations are wrapped into a Parameters, one `observation`
//! parameter each, in entry order; an entry holding any other resource is
//! refused here (the operation reads Observations only). `--model` and
//! `--unit-system` become the operation's `model` and `unitSystem`
//! parameters. The request goes over the same connection settings as every
//! other command (TLS, mutual TLS, `--timeout`), as HTTP/2.

use std::{path::PathBuf, time::Duration};

use clap::{Args, ValueEnum};
use http_body_util::{BodyExt, Full};
use oxbind_client::{ClientError, Code};
use serde_json::{json, Value};
use tonic::{
    body::Body,
    codegen::{Bytes, Service},
    transport::{Certificate, ClientTlsConfig, Endpoint, Identity},
};

use crate::{failure::Failure, output, Cli};

/// The operation's path on the server.
pub(crate) const OPERATION_PATH: &str = "/fhir/r4/$derive-oxygen-values";

/// The FHIR JSON media type.
const FHIR_JSON: &str = "application/fhir+json";

/// Flags of `oxbind fhir`.
#[derive(Debug, Clone, Args)]
pub(crate) struct FhirArgs {
    /// A FHIR R4 Parameters resource (the operation's input) or a Bundle
    /// whose entries are the input Observations; `-` reads standard input.
    #[arg(value_name = "FILE")]
    pub(crate) input: PathBuf,

    /// Write the answer (a Parameters, or the OperationOutcome of a
    /// refusal) to this file instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub(crate) output: Option<PathBuf>,
}

/// Read the input file as the operation's Parameters.
pub(crate) fn parameters(args: &FhirArgs, cli: &Cli) -> Result<Value, Failure> {
    let name = args.input.display().to_string();
    let text = if name == "-" {
        std::io::read_to_string(std::io::stdin())
    } else {
        std::fs::read_to_string(&args.input)
    }
    .map_err(|e| Failure::Usage(format!("cannot read {name}: {e}")))?;
    let document: Value = serde_json::from_str(&text)
        .map_err(|e| Failure::Usage(format!("{name} is not JSON: {e}")))?;
    let mut parameters = match document["resourceType"].as_str() {
        Some("Parameters") => document,
        Some("Bundle") => from_bundle(&document, &name)?,
        _ => {
            return Err(Failure::Usage(format!(
                "{name} holds neither a FHIR Parameters nor a Bundle (resourceType)"
            )))
        }
    };
    let mut add = |name: &str, code: String| -> Result<(), Failure> {
        let list = parameters["parameter"]
            .as_array_mut()
            .ok_or_else(|| Failure::Usage("the Parameters has no `parameter` list".into()))?;
        if list.iter().any(|p| p["name"] == name) {
            return Err(Failure::Usage(format!(
                "the file already sets `{name}`; leave out the flag or the parameter"
            )));
        }
        list.push(json!({"name": name, "valueCode": code}));
        Ok(())
    };
    if let Some(model) = cli.model {
        add("model", value_name(model))?;
    }
    if let Some(system) = cli.unit_system {
        add("unitSystem", value_name(system))?;
    }
    Ok(parameters)
}

fn value_name(value: impl ValueEnum) -> String {
    value
        .to_possible_value()
        .map(|v| v.get_name().to_owned())
        .unwrap_or_default()
}

/// A Parameters with one `observation` per Observation entry of `bundle`.
fn from_bundle(bundle: &Value, name: &str) -> Result<Value, Failure> {
    let entries = bundle["entry"].as_array().cloned().unwrap_or_default();
    let mut parameter = Vec::with_capacity(entries.len());
    for (index, entry) in entries.iter().enumerate() {
        let resource = &entry["resource"];
        if resource["resourceType"] != "Observation" {
            return Err(Failure::Usage(format!(
                "{name}: Bundle.entry[{index}].resource is not an Observation; the operation \
reads Observations only, so remove that entry"
            )));
        }
        parameter.push(json!({"name": "observation", "resource": resource}));
    }
    if parameter.is_empty() {
        return Err(Failure::Usage(format!("{name}: the Bundle has no entries")));
    }
    Ok(json!({"resourceType": "Parameters", "parameter": parameter}))
}

/// The connection the global flags describe.
fn endpoint(cli: &Cli) -> Result<Endpoint, Failure> {
    let usage = |e: &dyn std::fmt::Display| Failure::Usage(format!("--server {}: {e}", cli.server));
    let mut endpoint = Endpoint::from_shared(cli.server.clone())
        .map_err(|e| usage(&e))?
        .connect_timeout(Duration::from_secs(5))
        .timeout(cli.timeout)
        .user_agent(concat!("oxbind-cli/", env!("CARGO_PKG_VERSION")))
        .map_err(|e| usage(&e))?;
    let https = cli.server.starts_with("https://");
    if https || cli.ca_cert.is_some() || cli.client_cert.is_some() {
        let read = |path: &PathBuf| {
            std::fs::read(path)
                .map_err(|e| Failure::Usage(format!("cannot read {}: {e}", path.display())))
        };
        let mut tls = ClientTlsConfig::new();
        match &cli.ca_cert {
            Some(ca) => tls = tls.ca_certificate(Certificate::from_pem(read(ca)?)),
            None => tls = tls.with_native_roots(),
        }
        if let (Some(cert), Some(key)) = (&cli.client_cert, &cli.client_key) {
            tls = tls.identity(Identity::from_pem(read(cert)?, read(key)?));
        }
        endpoint = endpoint
            .tls_config(tls)
            .map_err(|e| Failure::Usage(format!("TLS: {e}")))?;
    }
    Ok(endpoint)
}

/// Send the Parameters and print or write the answer.
pub(crate) async fn run(cli: &Cli, args: &FhirArgs) -> Result<(), Failure> {
    let parameters = parameters(args, cli)?;
    let mut channel = endpoint(cli)?
        .connect()
        .await
        .map_err(|e| Failure::Client(Box::new(ClientError::Connect(e))))?;
    let body = serde_json::to_vec(&parameters).map_err(|e| Failure::Other(e.to_string()))?;
    let request = http::Request::builder()
        .method(http::Method::POST)
        .uri(format!(
            "{}{OPERATION_PATH}",
            cli.server.trim_end_matches('/')
        ))
        .header(http::header::CONTENT_TYPE, FHIR_JSON)
        .header(http::header::ACCEPT, FHIR_JSON)
        .body(Body::new(Full::new(Bytes::from(body))))
        .map_err(|e| Failure::Other(e.to_string()))?;
    std::future::poll_fn(|cx| channel.poll_ready(cx))
        .await
        .map_err(|e| Failure::Client(Box::new(ClientError::Connect(e))))?;
    let response = channel.call(request).await.map_err(|e| {
        Failure::Client(Box::new(ClientError::from(tonic::Status::unavailable(
            e.to_string(),
        ))))
    })?;
    let status = response.status();
    let bytes = response
        .into_body()
        .collect()
        .await
        .map_err(|e| Failure::Other(format!("reading the answer: {e}")))?
        .to_bytes();
    let answer: Value = serde_json::from_slice(&bytes).map_err(|_| {
        Failure::Other(format!(
            "the server answered HTTP {status} without FHIR JSON (is {OPERATION_PATH} served there?)"
        ))
    })?;
    // The answer as the server wrote it.
    let text = String::from_utf8_lossy(&bytes);
    match &args.output {
        Some(path) => std::fs::write(path, format!("{text}\n"))
            .map_err(|e| Failure::Other(format!("cannot write {}: {e}", path.display())))?,
        None => output::line(&text)?,
    }
    if status.is_success() {
        return Ok(());
    }
    // A refusal: each issue on standard error, element first.
    for issue in answer["issue"].as_array().into_iter().flatten() {
        let at = issue["expression"]
            .as_array()
            .map(|e| {
                e.iter()
                    .filter_map(Value::as_str)
                    .collect::<Vec<_>>()
                    .join(", ")
            })
            .unwrap_or_default();
        output::note(format!(
            "oxbind: {at}: {}",
            issue["diagnostics"].as_str().unwrap_or_default()
        ));
    }
    let code = match status.as_u16() {
        400 | 422 => Code::InvalidArgument,
        503 => Code::Unavailable,
        _ => Code::Unknown,
    };
    Err(Failure::Client(Box::new(ClientError::Status {
        code,
        message: format!("the FHIR operation answered HTTP {status}; its issues are above"),
        violations: Vec::new(),
        info: None,
    })))
}
