//! `oxbind-load`: the load generator behind BENCHMARKS.md, a tool for
//! measuring a deployment, not an integrator's command (that is `oxbind`).
//!
//! It drives one RPC with many calls in flight over plaintext HTTP/2, as gRPC
//! calls or (`--protocol connect`) as Connect calls in JSON or binary
//! protobuf, and reports calls/s, latency quantiles and errors, as a table
//! or as JSON.
//! Exit status: 0 success, 1 no call succeeded (or another failure), 2 usage
//! error.

mod load;
mod load_connect;
mod load_json;
mod load_wire;
#[path = "../common/model_arg.rs"]
mod model_arg;

use std::time::Duration;

use clap::Parser;
use model_arg::{duration, ModelArg};
use oxbind_client::{v1::Model, DEFAULT_SERVER};

/// Load generator for an Oxbind server: drive one RPC with many calls in
/// flight, over gRPC or the Connect protocol, and report calls/s, latency
/// quantiles and errors (plaintext HTTP/2 only; the figures are the
/// service's, not TLS's).
#[derive(Debug, Parser)]
#[command(name = "oxbind-load", version)]
struct Cli {
    /// Server address (`http://HOST:PORT`).
    #[arg(long, env = "OXBIND_SERVER", default_value = DEFAULT_SERVER)]
    server: String,

    /// Dissociation model of the generated requests (the server's default
    /// is severinghaus-1979).
    #[arg(long, value_enum)]
    model: Option<ModelArg>,

    /// Print the report as JSON instead of a table.
    #[arg(long)]
    json: bool,

    /// Deadline of each call: `30s`, `1500ms`; a bare number is seconds.
    #[arg(long, default_value = "10s", value_parser = duration, value_name = "DURATION")]
    timeout: Duration,

    #[command(flatten)]
    load: load::LoadArgs,
}

/// Why a run did not succeed.
#[derive(Debug)]
pub(crate) enum Failure {
    /// The settings were unusable (exit 2).
    Usage(String),
    /// Anything else: no call succeeded, no connection (exit 1).
    Other(String),
}

/// Print labelled rows, the labels padded to one width.
pub(crate) fn print_rows(rows: &[(String, String)]) {
    use std::io::Write;
    let width = rows
        .iter()
        .map(|(l, _)| l.chars().count())
        .max()
        .unwrap_or(0);
    let mut out = std::io::stdout().lock();
    for (label, value) in rows {
        // A closed standard output (`| head`) ends the report quietly.
        if writeln!(out, "{label:<width$}  {value}").is_err() {
            return;
        }
    }
}

#[tokio::main]
async fn main() {
    let cli = Cli::parse();
    let ctx = load::LoadContext {
        server: cli.server.clone(),
        model: cli.model.map(|m| Model::from(m) as i32).unwrap_or(0),
        json: cli.json,
        timeout: cli.timeout,
    };
    let code = match load::run(&ctx, &cli.load).await {
        Ok(()) => 0,
        Err(Failure::Usage(message)) => {
            eprintln!("oxbind-load: {message}");
            2
        }
        Err(Failure::Other(message)) => {
            eprintln!("oxbind-load: {message}");
            1
        }
    };
    std::process::exit(code);
}
