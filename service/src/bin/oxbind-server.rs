//! `oxbind-server`: parse config, set up logging and telemetry export, bind,
//! and serve until SIGTERM or SIGINT.

use oxbind_service::{
    config::{Config, EXIT_CONFIG_INVALID},
    layers::{connections::ensure_open_file_limit, panic},
    serve_on,
    shutdown::shutdown_signal,
    telemetry, ServeError,
};

/// The process allocator: mimalloc, whose thread-local free lists cost far
/// less than the system allocator for the many small, short-lived blocks of
/// decoded requests and built answers (see BENCHMARKS.md, "Where the time
/// goes").
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

#[tokio::main]
async fn main() {
    let config = Config::from_env_and_args();
    let connections = (config.max_connections + config.max_health_connections) as u64;
    if let Err(reason) = ensure_open_file_limit(connections) {
        eprintln!("error: {reason}");
        std::process::exit(EXIT_CONFIG_INVALID);
    }
    let telemetry = telemetry::init(config.log_format, &config.log_filter);
    panic::install_hook();
    // Install the signal handlers before anything can report "serving".
    let shutdown = shutdown_signal();

    let listener = match tokio::net::TcpListener::bind(config.listen).await {
        Ok(listener) => listener,
        Err(error) => {
            tracing::error!(listen = %config.listen, %error, "cannot bind the listen address");
            std::process::exit(1);
        }
    };
    let health_listener = match config.health_listen {
        Some(address) => match tokio::net::TcpListener::bind(address).await {
            Ok(listener) => Some(listener),
            Err(error) => {
                tracing::error!(health_listen = %address, %error, "cannot bind the health listen address");
                std::process::exit(1);
            }
        },
        None => None,
    };

    let result = serve_on(listener, health_listener, config, shutdown).await;
    // Send the last spans and metrics before exiting.
    let _ = tokio::task::spawn_blocking(move || telemetry.shutdown()).await;
    match result {
        Ok(()) => {}
        Err(error @ ServeError::Tls(_)) => {
            tracing::error!(%error, "invalid TLS configuration");
            std::process::exit(EXIT_CONFIG_INVALID);
        }
        Err(error) => {
            tracing::error!(%error, "server failed");
            std::process::exit(1);
        }
    }
}
