//! `oxbind verify`: runs every published check case through a deployed
//! instance, through each door it answers on, and writes a report a
//! laboratory can file (HTML for people and paper, JSON for machines and
//! for `--compare`).
//!
//! The cases are the data files the tests read (shared vectors, engine
//! reference tables, the API reference's worked examples), embedded at build
//! time: [`sources`]. Each source is read into [`case::Case`]s by one module
//! of [`cases`]; each door is one module of [`surface`]; the report is
//! [`report`], laid out by [`report::html`], and its statement of what the
//! instance offers for the uncertainty of its results is [`uncertainty`].

mod case;
mod cases;
mod check;
mod contract;
mod report;
mod run;
mod schedule;
mod sources;
mod surface;
mod uncertainty;

use std::{path::PathBuf, time::Duration};

use clap::Args;
use oxbind_client::ClientError;

use crate::{failure::Failure, output};
use surface::{connect::ConnectJson, fhir::FhirR4, grpc::Grpc, Surface};

/// What `oxbind verify` says about itself after its flags.
pub(crate) const AFTER_HELP: &str = "Exit status: 0 every case passed (the instance is \
verified); 6 the reports were written but not every case passed, a method or model of the \
server had no case, or a source row could not be read; 4 the server could not be reached; 2 a \
usage error; 1 any other failure (a report file that cannot be written). The report supports, \
and does not replace, the laboratory's own verification procedure and its director's approval.";

/// The flags of `oxbind verify`.
#[derive(Debug, Clone, Args)]
pub(crate) struct VerifyArgs {
    /// Write the HTML report here (self-contained; prints on A4).
    #[arg(long, value_name = "FILE")]
    report: Option<PathBuf>,

    /// Write the JSON report here (the input of a later `--compare`).
    #[arg(long = "json", id = "json", value_name = "FILE")]
    json: Option<String>,

    /// The report's date and time (RFC 3339, e.g. `2026-12-03T09:00:00Z`, or
    /// a date): the same build, cases, server and `--as-of` give identical
    /// reports. Default: now.
    #[arg(long, value_name = "TIME", value_parser = schedule::parse_as_of)]
    as_of: Option<jiff::Timestamp>,

    /// Re-verification interval: `6 months`, `1 year`, `90 days`, `P6M`.
    /// Local laboratory policy decides.
    #[arg(long, value_name = "INTERVAL", default_value = schedule::DEFAULT_INTERVAL,
          value_parser = check_interval)]
    interval: String,

    /// An earlier JSON report: print what changed since (identity, hashes,
    /// settings, doors, and each case whose verdict or observed value
    /// changed).
    #[arg(long, value_name = "PREVIOUS.json")]
    compare: Option<PathBuf>,
}

fn check_interval(text: &str) -> Result<String, String> {
    schedule::parse_interval(text).map(|_| text.to_owned())
}

/// The connection settings `verify` shares with every command.
pub(crate) struct Connection<'a> {
    /// `--server`.
    pub(crate) server: &'a str,
    /// How the user gave it (`--server` or `OXBIND_SERVER`).
    pub(crate) server_name: &'a str,
    /// `--ca-cert`.
    pub(crate) ca_cert: Option<&'a PathBuf>,
    /// `--client-cert` and `--client-key`.
    pub(crate) identity: Option<(&'a PathBuf, &'a PathBuf)>,
    /// `--timeout`.
    pub(crate) timeout: Duration,
}

/// Run `oxbind verify`.
pub(crate) async fn run(args: &VerifyArgs, connection: &Connection<'_>) -> Result<(), Failure> {
    if args.json.as_deref() == Some("") {
        return Err(Failure::Usage(
            "verify --json needs a FILE to write the JSON report to".to_owned(),
        ));
    }
    let previous = match &args.compare {
        Some(path) => Some(read_previous(path)?),
        None => None,
    };
    let as_of = match args.as_of {
        Some(stamp) => stamp,
        None => jiff::Timestamp::now(),
    };
    let schedule = schedule::Schedule::new(as_of, &args.interval).map_err(Failure::Usage)?;
    let grpc = Grpc::new(grpc_channel(connection).await?);
    let http = http_client(connection)?;
    let others: Vec<Box<dyn Surface>> = vec![
        Box::new(ConnectJson::new(
            http.clone(),
            connection.server,
            connection.timeout,
        )),
        Box::new(FhirR4::new(http, connection.server)),
    ];
    let report = run::run(run::RunInput {
        address: connection.server,
        grpc,
        others,
        schedule,
        cases: cases::all(),
    })
    .await
    .map_err(|e| match e {
        run::RunError::Unavailable(why) => Failure::Unavailable(format!(
            "{} {}: {why}",
            connection.server_name, connection.server
        )),
        run::RunError::Server(why) => Failure::Other(why),
    })?;

    if let Some(path) = &args.report {
        write(path, &report::html::render(&report))?;
    }
    if let Some(path) = &args.json {
        write(&PathBuf::from(path), &report.to_json())?;
    }
    summary(&report)?;
    if args.report.is_none() && args.json.is_none() {
        output::line("no report written: give --report FILE (HTML) and --json FILE to keep one")?;
    }
    if let Some(previous) = previous {
        let current: serde_json::Value = serde_json::from_str(&report.to_json())
            .map_err(|e| Failure::Other(format!("the report: {e}")))?;
        let lines = report::compare::changes(&previous, &current).map_err(|why| {
            Failure::Usage(format!(
                "--compare {}: {why}",
                args.compare
                    .as_ref()
                    .map(|p| p.display().to_string())
                    .unwrap_or_default()
            ))
        })?;
        print_changes(&lines)?;
    }
    if report.totals.verified {
        Ok(())
    } else {
        Err(Failure::NotVerified)
    }
}

fn read_previous(path: &PathBuf) -> Result<serde_json::Value, Failure> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Failure::Usage(format!("--compare {}: {e}", path.display())))?;
    serde_json::from_str(&text)
        .map_err(|e| Failure::Usage(format!("--compare {}: not JSON ({e})", path.display())))
}

async fn grpc_channel(connection: &Connection<'_>) -> Result<tonic::transport::Channel, Failure> {
    let mut builder = oxbind_client::OxbindClient::builder(connection.server.to_owned())
        .call_timeout(connection.timeout)
        .user_agent(concat!("oxbind-verify/", env!("CARGO_PKG_VERSION")));
    if let Some(ca) = connection.ca_cert {
        builder = builder
            .ca_certificate_file(ca)
            .map_err(|e| Failure::Usage(e.to_string()))?;
    }
    if let Some((cert, key)) = connection.identity {
        builder = builder
            .client_identity_files(cert, key)
            .map_err(|e| Failure::Usage(e.to_string()))?;
    }
    builder.connect_channel().await.map_err(|e| match e {
        ClientError::InvalidEndpoint { endpoint, reason } => {
            Failure::Usage(format!("{} {endpoint}: {reason}", connection.server_name))
        }
        ClientError::Tls(_) => Failure::Usage(e.to_string()),
        other => Failure::Client(Box::new(other)),
    })
}

/// The HTTP client of the Connect and FHIR doors, with the same trust and
/// identity as the gRPC door.
fn http_client(connection: &Connection<'_>) -> Result<reqwest::Client, Failure> {
    let read = |path: &PathBuf| {
        std::fs::read(path).map_err(|e| Failure::Usage(format!("{}: {e}", path.display())))
    };
    let mut builder = reqwest::Client::builder()
        .use_rustls_tls()
        .timeout(connection.timeout)
        .user_agent(concat!("oxbind-verify/", env!("CARGO_PKG_VERSION")));
    if let Some(ca) = connection.ca_cert {
        for certificate in reqwest::Certificate::from_pem_bundle(&read(ca)?)
            .map_err(|e| Failure::Usage(format!("--ca-cert {}: {e}", ca.display())))?
        {
            builder = builder.add_root_certificate(certificate);
        }
    }
    if let Some((cert, key)) = connection.identity {
        let mut pem = read(cert)?;
        pem.push(b'\n');
        pem.extend(read(key)?);
        let identity = reqwest::Identity::from_pem(&pem)
            .map_err(|e| Failure::Usage(format!("--client-cert/--client-key: {e}")))?;
        builder = builder.identity(identity);
    }
    builder
        .build()
        .map_err(|e| Failure::Usage(format!("HTTP client: {e}")))
}

fn write(path: &PathBuf, text: &str) -> Result<(), Failure> {
    std::fs::write(path, text)
        .map_err(|e| Failure::Other(format!("cannot write {}: {e}", path.display())))
}

/// The summary on standard output: the outcome, each failed case, each gap.
fn summary(report: &report::Report) -> Result<(), Failure> {
    let t = &report.totals;
    for surface in &report.surfaces {
        output::line(format!(
            "door {}: {} ({} cases, {} passed)",
            surface.key,
            if surface.probe.answered {
                "answered"
            } else {
                "not offered"
            },
            surface.cases,
            surface.passed
        ))?;
    }
    for case in report.cases.iter().filter(|c| !c.passed) {
        output::line(format!(
            "FAILED {} on {} ({})",
            case.id, case.surface, case.rpc
        ))?;
    }
    for gap in &report.coverage.gaps {
        output::line(format!("GAP {gap}"))?;
    }
    for problem in &report.source_problems {
        output::line(format!(
            "UNREADABLE {} {}: {}",
            problem.file, problem.location, problem.reason
        ))?;
    }
    output::line(format!(
        "{}: {} of {} cases passed ({} of {} checks); {} source rows not run; re-verify by {}",
        if t.verified {
            "verified"
        } else {
            "NOT VERIFIED"
        },
        t.passed,
        t.cases,
        t.checks_passed,
        t.checks,
        t.not_run,
        report.reverification.due_by
    ))
}

fn print_changes(lines: &[String]) -> Result<(), Failure> {
    if lines.is_empty() {
        return output::line("compared with the previous report: nothing changed");
    }
    output::line(format!(
        "compared with the previous report, {} changes (re-verification is due when the version, build, a hash or a setting changed):",
        lines.len()
    ))?;
    for line in lines {
        output::line(format!("  {line}"))?;
    }
    Ok(())
}
