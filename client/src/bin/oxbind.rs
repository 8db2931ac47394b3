//! `oxbind`: the command line for integrators.

use clap::{Parser, Subcommand};
use oxbind_client::{
    health::{
        health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
    },
    service_names,
    v1::{model_catalog_service_client::ModelCatalogServiceClient, ListModelsRequest},
    DEFAULT_SERVER,
};

/// Exit status: the server could not be reached.
const EXIT_UNAVAILABLE: i32 = 4;
/// Exit status: the server answered, but not every service is SERVING.
const EXIT_NOT_SERVING: i32 = 1;

#[derive(Debug, Parser)]
#[command(
    name = "oxbind",
    version,
    about = "Command line for the Oxbind oxygen-dissociation service"
)]
struct Cli {
    /// Server address.
    #[arg(long, global = true, env = "OXBIND_SERVER", default_value = DEFAULT_SERVER)]
    server: String,

    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Print each service's health status; exit 0 only if all are SERVING.
    Health,
    /// List the dissociation models the server offers.
    Models,
}

#[tokio::main]
async fn main() {
    let cli = Cli::parse();
    let channel = match oxbind_client::connect(cli.server.clone()).await {
        Ok(channel) => channel,
        Err(error) => {
            eprintln!("oxbind: {error}");
            std::process::exit(EXIT_UNAVAILABLE);
        }
    };
    let code = match cli.command {
        Command::Health => health(channel).await,
        Command::Models => models(channel).await,
    };
    std::process::exit(code);
}

async fn health(channel: tonic::transport::Channel) -> i32 {
    let mut client = HealthClient::new(channel);
    let mut all_serving = true;
    for name in std::iter::once("").chain(service_names::ALL) {
        let label = if name.is_empty() { "(server)" } else { name };
        let status = client
            .check(HealthCheckRequest {
                service: name.to_owned(),
            })
            .await;
        match status {
            Ok(response) => {
                let status = response.into_inner().status();
                all_serving &= status == ServingStatus::Serving;
                println!("{label:<36} {}", status.as_str_name());
            }
            Err(status) if status.code() == tonic::Code::Unavailable => {
                eprintln!("oxbind: server unavailable: {}", status.message());
                return EXIT_UNAVAILABLE;
            }
            Err(status) => {
                all_serving = false;
                println!("{label:<36} {:?}", status.code());
            }
        }
    }
    if all_serving {
        0
    } else {
        EXIT_NOT_SERVING
    }
}

async fn models(channel: tonic::transport::Channel) -> i32 {
    let mut client = ModelCatalogServiceClient::new(channel);
    match client.list_models(ListModelsRequest {}).await {
        Ok(response) => {
            let response = response.into_inner();
            for model in &response.models {
                let marker = if model.is_default { " (default)" } else { "" };
                println!("{:<24} {}{marker}", model.model_id, model.title);
            }
            if !response.cautions.is_empty() {
                println!("\n{}", response.cautions);
            }
            0
        }
        Err(status) => {
            eprintln!("oxbind: {}: {}", status.code(), status.message());
            if status.code() == tonic::Code::Unavailable {
                EXIT_UNAVAILABLE
            } else {
                3
            }
        }
    }
}
