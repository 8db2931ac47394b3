//! `oxbind-server`: parse config, set up logging, bind, and serve until
//! SIGTERM or SIGINT.

use oxbind_service::{config::Config, serve, shutdown::shutdown_signal, telemetry};

#[tokio::main]
async fn main() {
    let config = Config::from_env_and_args();
    telemetry::init_tracing(config.log_format, &config.log_filter);

    let listener = match tokio::net::TcpListener::bind(config.listen).await {
        Ok(listener) => listener,
        Err(error) => {
            tracing::error!(listen = %config.listen, %error, "cannot bind the listen address");
            std::process::exit(1);
        }
    };

    if let Err(error) = serve(listener, config, shutdown_signal()).await {
        tracing::error!(%error, "server failed");
        std::process::exit(1);
    }
}
