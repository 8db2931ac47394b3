//! Start-up and shutdown: the gRPC server on an already-bound listener.
//!
//! [`serve`] takes the listener and any shutdown future, so the binary passes a
//! real socket and the OS signals, and tests pass port 0 and a oneshot.

use std::{future::Future, time::Duration};

use oxbind_proto::{
    service_names,
    v1::{
        dissociation_service_server::DissociationServiceServer,
        model_catalog_service_server::ModelCatalogServiceServer,
        oxygen_transport_service_server::OxygenTransportServiceServer,
    },
    FILE_DESCRIPTOR_SET,
};
use tokio::net::TcpListener;
use tonic::transport::{server::TcpIncoming, Server};
use tonic_health::{server::HealthReporter, ServingStatus};

use crate::{
    api::{catalog::CatalogApi, dissociation::DissociationApi, transport::TransportApi},
    config::Config,
};

/// Why the server stopped with an error.
#[derive(Debug)]
pub enum ServeError {
    /// The reflection service could not be built from the descriptor sets.
    Reflection(tonic_reflection::server::Error),
    /// The transport failed.
    Transport(tonic::transport::Error),
}

impl std::fmt::Display for ServeError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ServeError::Reflection(e) => write!(f, "cannot build the reflection service: {e}"),
            ServeError::Transport(e) => write!(f, "transport error: {e}"),
        }
    }
}

impl std::error::Error for ServeError {}

/// Every name health checking reports: the whole server (`""`) and each v1
/// service.
pub const HEALTH_NAMES: [&str; 4] = [
    "",
    service_names::DISSOCIATION,
    service_names::OXYGEN_TRANSPORT,
    service_names::MODEL_CATALOG,
];

/// Serve the v1 services, health and reflection on `listener` until
/// `shutdown` completes.
///
/// On shutdown every health status turns NOT_SERVING at once, the server stops
/// accepting connections, and calls in flight get `config.shutdown_grace` to
/// finish; connections still open after that are closed.
pub async fn serve<F>(listener: TcpListener, config: Config, shutdown: F) -> Result<(), ServeError>
where
    F: Future<Output = ()> + Send + 'static,
{
    let (reporter, health_service) = tonic_health::server::health_reporter();
    let reflection = tonic_reflection::server::Builder::configure()
        .register_encoded_file_descriptor_set(FILE_DESCRIPTOR_SET)
        .register_encoded_file_descriptor_set(tonic_types::pb::FILE_DESCRIPTOR_SET)
        .register_encoded_file_descriptor_set(tonic_health::pb::FILE_DESCRIPTOR_SET)
        .build_v1()
        .map_err(ServeError::Reflection)?;

    let router = Server::builder()
        .add_service(health_service)
        .add_service(reflection)
        .add_service(DissociationServiceServer::new(DissociationApi::new(
            config.max_batch_items,
        )))
        .add_service(OxygenTransportServiceServer::new(TransportApi::new()))
        .add_service(ModelCatalogServiceServer::new(CatalogApi::new(
            config.max_batch_items,
        )));

    set_all(&reporter, ServingStatus::Serving).await;
    if let Ok(address) = listener.local_addr() {
        tracing::info!(%address, "serving");
    }

    // Without TCP_NODELAY every small call waits on Nagle and delayed ACK
    // (about 40 ms); `serve_with_incoming` ignores `Server::tcp_nodelay`.
    let incoming = TcpIncoming::from(listener).with_nodelay(Some(true));

    let (drain_started_tx, drain_started_rx) = tokio::sync::oneshot::channel::<()>();
    let drain_reporter = reporter.clone();
    let stop_accepting = async move {
        shutdown.await;
        set_all(&drain_reporter, ServingStatus::NotServing).await;
        tracing::info!("health NOT_SERVING; draining calls in flight");
        let _ = drain_started_tx.send(());
    };

    let server = router.serve_with_incoming_shutdown(incoming, stop_accepting);
    tokio::pin!(server);
    tokio::select! {
        result = &mut server => result.map_err(ServeError::Transport)?,
        Ok(()) = drain_started_rx => {
            bounded_drain(&mut server, config.shutdown_grace).await?;
        }
    }
    tracing::info!("stopped");
    Ok(())
}

/// Let the graceful drain run for at most `grace`: tonic waits for every open
/// connection to close, which a client holding a connection open would make
/// last forever.
async fn bounded_drain<S>(
    server: &mut std::pin::Pin<&mut S>,
    grace: Duration,
) -> Result<(), ServeError>
where
    S: Future<Output = Result<(), tonic::transport::Error>>,
{
    match tokio::time::timeout(grace, server.as_mut()).await {
        Ok(result) => result.map_err(ServeError::Transport),
        Err(_) => {
            tracing::warn!(
                grace_ms = grace.as_millis() as u64,
                "grace period over; closing the connections still open"
            );
            Ok(())
        }
    }
}

async fn set_all(reporter: &HealthReporter, status: ServingStatus) {
    for name in HEALTH_NAMES {
        reporter.set_service_status(name, status).await;
    }
}
