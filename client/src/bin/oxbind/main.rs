//! `oxbind`: the command line for integrators.
//!
//! Every v1 RPC as a subcommand, with human-readable tables by default and
//! protobuf JSON with `--json`; CSV batches; SVG curve plots; a demo.
//! Exit statuses are listed in [`failure`] and in `--help`.

mod args;
mod batch;
mod check;
mod check_batch;
mod columns;
mod commands;
mod demo;
mod failure;
mod fhir;
mod fields;
#[path = "../common/model_arg.rs"]
mod model_arg;
mod output;
mod plot;
mod uncertainty;
mod verify;

use std::{path::PathBuf, time::Duration};

use args::UnitSystemArg;
use clap::{parser::ValueSource, ArgMatches, CommandFactory, FromArgMatches, Parser, Subcommand};
use failure::{Failure, Reporting};
use fields::FieldNames;
use model_arg::ModelArg;
use oxbind_client::{v1::UnitSystem, OxbindClient, DEFAULT_SERVER};

/// The one rule for units, as `--help` states it.
const UNITS_HELP: &str = "Units: a number may carry a UCUM code straight after it (`48mm[Hg]`, \
`6.4kPa`, `38.5Cel`, `12%`); quote codes with brackets in a shell ('48mm[Hg]'). A bare number is \
in the unit each flag's help names. For every fraction (saturations, FiO2, COHb, MetHb, HbF) a \
bare number is the fraction itself, 0 to 1, as in the contract: write per cent with `%` (`--cohb \
12%`); a bare number above 1 is refused with that spelling. The same rule holds for CSV cells in \
`oxbind batch`.";

/// The heading of the flags every command takes.
const GLOBAL: &str = "Global options";

/// What each subcommand's help says first.
const SUBCOMMAND_HELP: &str =
    "Units (a bare fraction is the fraction; per cent takes `%`) and exit statuses: see `oxbind --help`.";

/// Command line for the Oxbind oxygen-dissociation service.
///
/// Results support, and never replace, measured co-oximetry and the
/// judgement of licensed clinicians; local laboratory policy decides which
/// values are reported.
#[derive(Debug, Parser)]
#[command(name = "oxbind", version, before_help = UNITS_HELP, after_help = failure::EXIT_HELP)]
pub(crate) struct Cli {
    /// Server address: `http://HOST:PORT`, or `https://HOST:PORT` for TLS.
    #[arg(long, global = true, help_heading = GLOBAL, env = "OXBIND_SERVER", default_value = DEFAULT_SERVER)]
    server: String,

    /// Units of the answers (the server's default is conventional).
    #[arg(long, global = true, help_heading = GLOBAL, value_enum)]
    unit_system: Option<UnitSystemArg>,

    /// Dissociation model (the server's default is severinghaus-1979).
    #[arg(long, global = true, help_heading = GLOBAL, value_enum)]
    model: Option<ModelArg>,

    /// Print protobuf JSON (lowerCamelCase names, enums as names) instead of
    /// a table; a refusal is then one JSON object on standard error, with
    /// the contract's field paths. (`oxbind verify --json FILE` writes its
    /// JSON report to FILE instead.)
    // A value-less flag whose value, when given, is empty: `verify` defines
    // its own `--json FILE` under the same id, which clap then does not
    // propagate here, and both read as text.
    #[arg(long, global = true, help_heading = GLOBAL, num_args = 0, default_missing_value = "",
          value_name = "")]
    json: Option<String>,

    /// PEM bundle of CA certificates to trust (turns on TLS).
    #[arg(long, global = true, help_heading = GLOBAL, env = "OXBIND_CA_CERT", value_name = "FILE")]
    ca_cert: Option<PathBuf>,

    /// Client certificate (PEM) for mutual TLS; needs --client-key.
    #[arg(
        long,
        global = true,
        help_heading = GLOBAL,
        env = "OXBIND_CLIENT_CERT",
        value_name = "FILE",
        requires = "client_key"
    )]
    client_cert: Option<PathBuf>,

    /// Client private key (PEM) for mutual TLS.
    #[arg(
        long,
        global = true,
        help_heading = GLOBAL,
        env = "OXBIND_CLIENT_KEY",
        value_name = "FILE",
        requires = "client_cert"
    )]
    client_key: Option<PathBuf>,

    /// Deadline of each call: `10s`, `1500ms`, `1m`; a bare number is seconds.
    #[arg(long, global = true, help_heading = GLOBAL, default_value = "10s", value_parser = model_arg::duration, value_name = "DURATION")]
    timeout: Duration,

    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Oxygen saturation from oxygen tension.
    Saturation(commands::SaturationArgs),
    /// Oxygen tension from saturation.
    Tension(commands::TensionArgs),
    /// Sampled dissociation curves: the standard one, and one for the given
    /// conditions if any condition flag is set; `--svg` draws them.
    Curve(commands::CurveArgs),
    /// How far the conditions move P50, and each factor's share.
    Shift(commands::ShiftArgs),
    /// P50 from measured PO2:SO2 pairs.
    P50(commands::P50Args),
    /// Blood-gas values measured at one temperature, corrected to another.
    Temperature(commands::TemperatureArgs),
    /// Oxygen content, arteriovenous difference, delivery and consumption.
    Content(commands::ContentArgs),
    /// Alveolar gas, gradients, oxygenation ratios and shunt.
    GasExchange(commands::GasExchangeArgs),
    /// The models the server offers, what each takes into account, and the
    /// cautions.
    Models,
    /// Each service's health; exit 0 only if all are SERVING.
    Health,
    /// Saturations (or tensions) for every row of a CSV file, through the
    /// batch RPCs.
    Batch(batch::BatchArgs),
    /// Consistency checks of one blood-gas sample before release (or, with
    /// --input, of every row of a CSV file): one finding per check. Findings
    /// support the laboratory's review and do not reject results.
    Check(check::CheckArgs),
    /// An invented scenario at a fictional hospital (`--svg` draws its curves).
    Demo(demo::DemoArgs),
    /// Derived Observations from a FHIR R4 Parameters or Bundle of
    /// LOINC-coded Observations (the server's $derive-oxygen-values).
    Fhir(fhir::FhirArgs),
    /// Run every published check case through the server, through each
    /// door it answers on, and write a report a laboratory can file
    /// (`--report` HTML, `--json` JSON); exit 0 only if every case passed.
    #[command(after_help = verify::AFTER_HELP)]
    Verify(verify::VerifyArgs),
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

impl Context {
    /// The pressure unit of the answers (the contract's unit systems).
    pub(crate) fn pressure_unit(&self) -> &'static str {
        if self.unit_system == UnitSystem::Si as i32 {
            "kPa"
        } else {
            "mm[Hg]"
        }
    }
}

/// How the user gave a flag that has an environment variable: `--server` or
/// `OXBIND_SERVER`, so a message names what they actually set.
fn source_name(matches: &ArgMatches, id: &str, flag: &str, variable: &str) -> String {
    let source = matches
        .subcommand()
        .and_then(|(_, sub)| sub.value_source(id))
        .or_else(|| matches.value_source(id));
    match source {
        Some(ValueSource::EnvVariable) => variable.to_owned(),
        _ => flag.to_owned(),
    }
}

async fn connect(cli: &Cli, server_name: &str) -> Result<OxbindClient, Failure> {
    let mut builder = OxbindClient::builder(cli.server.clone())
        .call_timeout(cli.timeout)
        .user_agent(concat!("oxbind-cli/", env!("CARGO_PKG_VERSION")));
    if let Some(ca) = &cli.ca_cert {
        builder = builder.ca_certificate_file(ca).map_err(usage)?;
    }
    if let (Some(cert), Some(key)) = (&cli.client_cert, &cli.client_key) {
        builder = builder.client_identity_files(cert, key).map_err(usage)?;
    }
    builder.connect().await.map_err(|e| match e {
        oxbind_client::ClientError::InvalidEndpoint { endpoint, reason } => {
            Failure::Usage(format!("{server_name} {endpoint}: {reason}"))
        }
        oxbind_client::ClientError::Tls(_) => usage(e),
        other => Failure::Client(Box::new(other)),
    })
}

fn usage(error: impl std::fmt::Display) -> Failure {
    Failure::Usage(error.to_string())
}

/// How the command's flags name its request's fields.
fn names_for(command: &Command) -> FieldNames {
    match command {
        Command::Saturation(a) => a.uncertainty.names(commands::curve_point_names()),
        Command::Tension(a) => a.uncertainty.names(commands::curve_point_names()),
        Command::Shift(a) => a.uncertainty.names(commands::curve_point_names()),
        Command::Curve(a) => a
            .uncertainty
            .names(commands::curve_names(commands::curve_sets(a).0.len() - 1)),
        Command::P50(a) => commands::p50_names(a.pairs_len()),
        Command::Temperature(_) => commands::temperature_names(),
        Command::Content(a) => a.uncertainty.names(commands::content_names()),
        Command::GasExchange(a) => a.uncertainty.names(commands::gas_exchange_names()),
        Command::Demo(_) => commands::curve_point_names(),
        Command::Check(a) => check::check_names(&a.figures),
        _ => FieldNames::new(),
    }
}

/// Flags that the chosen command would not use are refused, not ignored.
fn check_combinations(cli: &Cli) -> Result<(), Failure> {
    let hill = match &cli.command {
        Command::Saturation(a) => Some(&a.hill),
        Command::Tension(a) => Some(&a.hill),
        Command::Curve(a) => Some(&a.hill),
        Command::Content(a) => Some(&a.hill),
        Command::GasExchange(a) => Some(&a.hill),
        Command::Batch(a) => Some(&a.hill),
        _ => None,
    };
    if hill.is_some_and(|h| h.is_given()) && cli.model != Some(ModelArg::Hill) {
        return Err(Failure::Usage(
            "--hill-p50, --hill-n and --hill-preset are used only with --model hill".into(),
        ));
    }
    if let Command::Batch(a) = &cli.command {
        if cli.model == Some(ModelArg::Hill) && !a.hill.is_given() {
            return Err(Failure::Usage(
                "--model hill with batch needs --hill-preset, or --hill-p50 and --hill-n: the output has no column to say which parameters were used".into(),
            ));
        }
    }
    let unused = |flag: &str, command: &str| {
        Err(Failure::Usage(format!(
            "{flag} has no effect on `oxbind {command}`; leave it out"
        )))
    };
    match &cli.command {
        Command::Batch(_) if cli.json.is_some() => unused("--json", "batch (it writes CSV)"),
        Command::Check(a) if cli.json.is_some() && a.input.is_some() => {
            unused("--json", "check --input (it writes CSV)")
        }
        Command::Demo(_) if cli.json.is_some() => unused("--json", "demo"),
        Command::Fhir(_) if cli.json.is_some() => unused("--json", "fhir (it prints FHIR JSON)"),
        Command::Health | Command::Models | Command::Completions { .. } | Command::Verify(_)
            if cli.model.is_some() =>
        {
            unused("--model", "health, models, verify or completions")
        }
        Command::Health | Command::Models | Command::Completions { .. } | Command::Verify(_)
            if cli.unit_system.is_some() =>
        {
            unused("--unit-system", "health, models, verify or completions")
        }
        _ => Ok(()),
    }
}

async fn run(cli: &Cli, matches: &ArgMatches) -> Result<(), Failure> {
    check_combinations(cli)?;
    if let Command::Completions { shell } = &cli.command {
        let mut script = Vec::new();
        clap_complete::generate(*shell, &mut Cli::command(), "oxbind", &mut script);
        return output::line(String::from_utf8_lossy(&script).trim_end());
    }
    if let Command::Fhir(args) = &cli.command {
        return fhir::run(cli, args).await;
    }
    let model = cli
        .model
        .map(|m| oxbind_client::v1::Model::from(m) as i32)
        .unwrap_or(0);
    let unit_system = cli
        .unit_system
        .map(|u| UnitSystem::from(u) as i32)
        .unwrap_or(0);
    // A batch file is read and checked before anything is sent.
    let prepared = match &cli.command {
        Command::Batch(args) => Some(batch::prepare(args, model, unit_system)?),
        _ => None,
    };
    let prepared_checks = match &cli.command {
        Command::Check(args) if args.input.is_some() => {
            Some(check_batch::prepare(args, model, unit_system)?)
        }
        _ => None,
    };
    let server_name = source_name(matches, "server", "--server", "OXBIND_SERVER");
    if let Command::Verify(args) = &cli.command {
        let connection = verify::Connection {
            server: &cli.server,
            server_name: &server_name,
            ca_cert: cli.ca_cert.as_ref(),
            identity: cli.client_cert.as_ref().zip(cli.client_key.as_ref()),
            timeout: cli.timeout,
        };
        return verify::run(args, &connection).await;
    }
    let ctx = Context {
        client: connect(cli, &server_name).await?,
        model,
        unit_system,
        json: cli.json.is_some(),
    };
    match &cli.command {
        Command::Saturation(a) => commands::saturation(&ctx, a).await,
        Command::Tension(a) => commands::tension(&ctx, a).await,
        Command::Curve(a) => commands::curve(&ctx, a).await,
        Command::Shift(a) => commands::shift(&ctx, a).await,
        Command::P50(a) => commands::p50(&ctx, a).await,
        Command::Temperature(a) => commands::temperature(&ctx, a).await,
        Command::Content(a) => commands::content(&ctx, a).await,
        Command::GasExchange(a) => commands::gas_exchange(&ctx, a).await,
        Command::Models => commands::models(&ctx).await,
        Command::Health => commands::health(&ctx).await,
        Command::Batch(a) => match prepared {
            Some(prepared) => batch::run(&ctx, a, prepared).await,
            None => Ok(()),
        },
        Command::Check(a) => match prepared_checks {
            Some(prepared) => check_batch::run(&ctx, a, prepared).await,
            None => check::check(&ctx, a).await,
        },
        Command::Demo(a) => demo::run(&ctx, a).await,
        Command::Completions { .. } | Command::Fhir(_) | Command::Verify(_) => Ok(()),
    }
}

#[tokio::main]
async fn main() {
    // Negative numbers (a base excess of -21, a refused PO2 of -5) are
    // values, not flags, in every subcommand.
    let matches = Cli::command()
        .mut_subcommands(|sub| {
            sub.allow_negative_numbers(true)
                .before_help(SUBCOMMAND_HELP)
        })
        .get_matches();
    let cli = match Cli::from_arg_matches(&matches) {
        Ok(cli) => cli,
        Err(error) => error.exit(),
    };
    let timeout = matches
        .get_raw("timeout")
        .and_then(|mut v| v.next())
        .map(|v| v.to_string_lossy().into_owned())
        .unwrap_or_default();
    let code = match run(&cli, &matches).await {
        Ok(()) => failure::EXIT_OK,
        Err(failure) => failure.report(&Reporting {
            names: &names_for(&cli.command),
            json: cli.json.is_some() && !matches!(cli.command, Command::Verify(_)),
            timeout: &timeout,
        }),
    };
    std::process::exit(code);
}
