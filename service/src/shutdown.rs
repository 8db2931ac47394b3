//! The process's shutdown signal: SIGTERM (what Kubernetes sends) or SIGINT
//! (Ctrl-C), whichever comes first.

use std::future::Future;

/// Completes when the process receives SIGTERM or SIGINT.
///
/// The signal handlers are installed when this function is called, not when
/// the future is first polled, so a signal that arrives between start-up and
/// the server's first poll still ends in a clean drain rather than the default
/// action (which would kill the process). Call it inside the Tokio runtime.
pub fn shutdown_signal() -> impl Future<Output = ()> + Send + 'static {
    #[cfg(unix)]
    {
        use tokio::signal::unix::{signal, SignalKind};
        let interrupt = signal(SignalKind::interrupt());
        let terminate = signal(SignalKind::terminate());
        async move {
            let interrupt = async {
                match interrupt {
                    Ok(mut stream) => {
                        stream.recv().await;
                    }
                    Err(error) => {
                        tracing::error!(%error, "cannot listen for SIGINT");
                        std::future::pending::<()>().await;
                    }
                }
            };
            let terminate = async {
                match terminate {
                    Ok(mut stream) => {
                        stream.recv().await;
                    }
                    Err(error) => {
                        tracing::error!(%error, "cannot listen for SIGTERM");
                        std::future::pending::<()>().await;
                    }
                }
            };
            tokio::select! {
                () = interrupt => tracing::info!(signal = "SIGINT", "shutdown requested"),
                () = terminate => tracing::info!(signal = "SIGTERM", "shutdown requested"),
            }
        }
    }
    #[cfg(not(unix))]
    async {
        if let Err(error) = tokio::signal::ctrl_c().await {
            tracing::error!(%error, "cannot listen for Ctrl-C");
            std::future::pending::<()>().await;
        }
        tracing::info!(signal = "SIGINT", "shutdown requested");
    }
}
