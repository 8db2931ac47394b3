//! `oxbind`: the command line for integrators.
//!
//! Every v1 RPC as a subcommand, with human-readable tables by default and
//! protobuf JSON with `--json`; CSV batches; SVG curve plots; a demo.
//! Exit status: 0 success, 2 usage error, 3 input refused by the server
//! (the field is named on standard error), 4 server unavailable, 1 other.

mod args;
mod batch;
mod commands;
mod demo;
mod failure;
mod load;
mod load_wire;
mod output;
mod plot;

use std::{path::PathBuf, time::Duration};

use args::{ConditionArgs, HillArgs, ModelArg, UnitSystemArg};
use clap::{CommandFactory, FromArgMatches, Parser, Subcommand};
use failure::Failure;
use oxbind_client::{v1::Quantity, OxbindClient, DEFAULT_SERVER};

/// Command line for the Oxbind oxygen-dissociation service.
///
/// Quantities take a UCUM unit code written straight after the number
/// (`48mm[Hg]`, `6.4kPa`, `38.5Cel`, `12%`); a bare number is in the
/// default unit each flag's help names. Results support, and never
/// replace, measured co-oximetry and the judgement of licensed clinicians.
#[derive(Debug, Parser)]
#[command(name = "oxbind", version, after_help = EXIT_HELP)]
pub(crate) struct Cli {
    /// Server address (http:// or https://).
    #[arg(long, global = true, env = "OXBIND_SERVER", default_value = DEFAULT_SERVER)]
    server: String,

    /// Units of the answers (the server's default is conventional).
    #[arg(long, global = true, value_enum)]
    unit_system: Option<UnitSystemArg>,

    /// Dissociation model (the server's default is severinghaus-1979).
    #[arg(long, global = true, value_enum)]
    model: Option<ModelArg>,

    /// Print protobuf JSON (lowerCamelCase names, enums as names) instead of a table.
    #[arg(long, global = true)]
    json: bool,

    /// PEM bundle of CA certificates to trust (turns on TLS).
    #[arg(long, global = true, env = "OXBIND_CA_CERT", value_name = "FILE")]
    ca_cert: Option<PathBuf>,

    /// Client certificate (PEM) for mutual TLS; needs --client-key.
    #[arg(
        long,
        global = true,
        env = "OXBIND_CLIENT_CERT",
        value_name = "FILE",
        requires = "client_key"
    )]
    client_cert: Option<PathBuf>,

    /// Client private key (PEM) for mutual TLS.
    #[arg(
        long,
        global = true,
        env = "OXBIND_CLIENT_KEY",
        value_name = "FILE",
        requires = "client_cert"
    )]
    client_key: Option<PathBuf>,

    /// Deadline of each call, in seconds.
    #[arg(long, global = true, default_value_t = 10.0, value_name = "SECONDS")]
    timeout: f64,

    #[command(subcommand)]
    command: Command,
}

const EXIT_HELP: &str = "Exit status: 0 success, 1 other failure, 2 usage error, \
3 input refused by the server (field named on standard error), 4 server unavailable.";

#[derive(Debug, Subcommand)]
enum Command {
    /// Oxygen saturation from oxygen tension.
    Saturation {
        /// PO2; a bare number is mm[Hg].
        #[arg(long, value_parser = args::pressure, value_name = "PRESSURE")]
        po2: Quantity,
        #[command(flatten)]
        conditions: ConditionArgs,
        #[command(flatten)]
        hill: HillArgs,
    },
    /// Oxygen tension from saturation.
    Tension {
        /// Saturation as a fraction (`0.93`) or percent (`93%`).
        #[arg(long, value_parser = args::saturation, value_name = "FRACTION")]
        saturation: f64,
        #[command(flatten)]
        conditions: ConditionArgs,
        #[command(flatten)]
        hill: HillArgs,
    },
    /// Sampled dissociation curves: the standard one, and one for the given
    /// conditions if any condition flag is set; `--svg` draws them.
    Curve(commands::CurveArgs),
    /// How far the conditions move P50, and each factor's share.
    Shift {
        #[command(flatten)]
        conditions: ConditionArgs,
    },
    /// P50 from measured PO2:SO2 pairs.
    P50 {
        /// A measured pair PO2:SO2, e.g. `30mm[Hg]:0.57`; repeat for more.
        #[arg(long = "pair", value_parser = args::pair, required = true, value_name = "PO2:SO2")]
        pairs: Vec<(Quantity, f64)>,
        #[command(flatten)]
        conditions: ConditionArgs,
    },
    /// Blood-gas values measured at one temperature, corrected to another.
    Temperature(commands::TemperatureArgs),
    /// Oxygen content, arteriovenous difference, delivery and consumption.
    Content(commands::ContentArgs),
    /// Alveolar gas, gradients, oxygenation ratios and shunt.
    GasExchange(commands::GasExchangeArgs),
    /// The models the server offers, with the cautions.
    Models,
    /// Each service's health; exit 0 only if all are SERVING.
    Health,
    /// Saturations for every row of a CSV file, through the batch RPC.
    Batch(batch::BatchArgs),
    /// Drive one RPC with many calls in flight and report calls/s,
    /// latency quantiles and errors (plaintext HTTP/2 only).
    Load(load::LoadArgs),
    /// An invented scenario at a fictional hospital, with an SVG of its curves.
    Demo(demo::DemoArgs),
    /// Print a shell completion script.
    Completions {
        /// The shell.
        shell: clap_complete::Shell,
    },
}

/// The settings every RPC command shares.
pub(crate) struct Context {
    pub(crate) client: OxbindClient,
    pub(crate) model: i32,
    pub(crate) unit_system: i32,
    pub(crate) json: bool,
}

async fn connect(cli: &Cli) -> Result<OxbindClient, Failure> {
    if !(cli.timeout.is_finite() && cli.timeout > 0.0) {
        return Err(Failure::Usage(
            "--timeout must be a positive number of seconds".into(),
        ));
    }
    let mut builder = OxbindClient::builder(cli.server.clone())
        .call_timeout(Duration::from_secs_f64(cli.timeout))
        .user_agent(concat!("oxbind-cli/", env!("CARGO_PKG_VERSION")));
    if let Some(ca) = &cli.ca_cert {
        builder = builder.ca_certificate_file(ca).map_err(usage)?;
    }
    if let (Some(cert), Some(key)) = (&cli.client_cert, &cli.client_key) {
        builder = builder.client_identity_files(cert, key).map_err(usage)?;
    }
    builder.connect().await.map_err(|e| match e {
        oxbind_client::ClientError::InvalidEndpoint { .. } | oxbind_client::ClientError::Tls(_) => {
            usage(e)
        }
        other => Failure::Client(Box::new(other)),
    })
}

fn usage(error: impl std::fmt::Display) -> Failure {
    Failure::Usage(error.to_string())
}

async fn run(cli: Cli) -> Result<(), Failure> {
    if let Command::Completions { shell } = &cli.command {
        clap_complete::generate(
            *shell,
            &mut Cli::command(),
            "oxbind",
            &mut std::io::stdout(),
        );
        return Ok(());
    }
    if let Command::Load(args) = &cli.command {
        if !(cli.timeout.is_finite() && cli.timeout > 0.0) {
            return Err(Failure::Usage(
                "--timeout must be a positive number of seconds".into(),
            ));
        }
        let ctx = load::LoadContext {
            server: cli.server.clone(),
            model: cli
                .model
                .map(|m| oxbind_client::v1::Model::from(m) as i32)
                .unwrap_or(0),
            json: cli.json,
            timeout: Duration::from_secs_f64(cli.timeout),
        };
        return load::run(&ctx, args).await;
    }
    let ctx = Context {
        client: connect(&cli).await?,
        model: cli
            .model
            .map(|m| oxbind_client::v1::Model::from(m) as i32)
            .unwrap_or(0),
        unit_system: cli
            .unit_system
            .map(|u| oxbind_client::v1::UnitSystem::from(u) as i32)
            .unwrap_or(0),
        json: cli.json,
    };
    match cli.command {
        Command::Saturation {
            po2,
            conditions,
            hill,
        } => commands::saturation(&ctx, po2, &conditions, &hill).await,
        Command::Tension {
            saturation,
            conditions,
            hill,
        } => commands::tension(&ctx, saturation, &conditions, &hill).await,
        Command::Curve(args) => commands::curve(&ctx, &args).await,
        Command::Shift { conditions } => commands::shift(&ctx, &conditions).await,
        Command::P50 { pairs, conditions } => commands::p50(&ctx, pairs, &conditions).await,
        Command::Temperature(args) => commands::temperature(&ctx, &args).await,
        Command::Content(args) => commands::content(&ctx, &args).await,
        Command::GasExchange(args) => commands::gas_exchange(&ctx, &args).await,
        Command::Models => commands::models(&ctx).await,
        Command::Health => commands::health(&ctx).await,
        Command::Batch(args) => batch::run(&ctx, &args).await,
        Command::Demo(args) => demo::run(&ctx, &args).await,
        Command::Completions { .. } | Command::Load(_) => Ok(()),
    }
}

#[tokio::main]
async fn main() {
    // Negative numbers (a base excess of -21, a refused PO2 of -5) are
    // values, not flags, in every subcommand.
    let matches = Cli::command()
        .mut_subcommands(|sub| sub.allow_negative_numbers(true))
        .get_matches();
    let cli = match Cli::from_arg_matches(&matches) {
        Ok(cli) => cli,
        Err(error) => error.exit(),
    };
    let code = match run(cli).await {
        Ok(()) => failure::EXIT_OK,
        Err(failure) => failure.report(),
    };
    std::process::exit(code);
}
