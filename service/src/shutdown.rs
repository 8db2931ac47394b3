//! The process's shutdown signal: SIGTERM (what Kubernetes sends) or SIGINT
//! (Ctrl-C), whichever comes first.

/// Completes when the process receives SIGTERM or SIGINT.
pub async fn shutdown_signal() {
    let interrupt = async {
        if let Err(error) = tokio::signal::ctrl_c().await {
            tracing::error!(%error, "cannot listen for SIGINT");
            std::future::pending::<()>().await;
        }
    };

    #[cfg(unix)]
    let terminate = async {
        use tokio::signal::unix::{signal, SignalKind};
        match signal(SignalKind::terminate()) {
            Ok(mut stream) => {
                stream.recv().await;
            }
            Err(error) => {
                tracing::error!(%error, "cannot listen for SIGTERM");
                std::future::pending::<()>().await;
            }
        }
    };
    #[cfg(not(unix))]
    let terminate = std::future::pending::<()>();

    tokio::select! {
        () = interrupt => tracing::info!(signal = "SIGINT", "shutdown requested"),
        () = terminate => tracing::info!(signal = "SIGTERM", "shutdown requested"),
    }
}
