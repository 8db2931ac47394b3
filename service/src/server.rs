//! Start-up and shutdown: the server on an already-bound listener.
//!
//! [`serve`] takes the listener and any shutdown future, so the binary passes a
//! real socket and the OS signals, and tests pass port 0 and a oneshot.
//!
//! The main listener serves gRPC, grpc-web (behind a flag), the Connect
//! protocol and the FHIR R4 door, over HTTP/2 and HTTP/1.1. Each request
//! passes, outermost first: CORS (when origins are configured), the door
//! dispatch ([`crate::http::DispatchLayer`]: FHIR by path, Connect by
//! content type, refusals for v1 paths), then, for gRPC and grpc-web only,
//! grpc-web translation, the per-call layer and the tonic routes. The
//! Connect and FHIR doors each have their own copy of the same per-call
//! layer (one shared call limit).

use std::{future::Future, time::Duration};

use oxbind_proto::{
    service_names,
    v1::consistency_service_server::ConsistencyServiceServer,
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
use tower::util::option_layer;

use crate::api::server_settings::ReportedSettings;
use crate::{
    config::Config,
    grpc::ConsistencyApi,
    grpc::{CatalogApi, DissociationApi, TransportApi},
    http::{connect, fhir, DispatchLayer},
    layers::{call::CallLayer, connections::limited_incoming, web},
};

/// How long the health listener may take to close after the main listener
/// has drained.
pub const HEALTH_LISTENER_STOP: Duration = Duration::from_secs(1);

/// Why the server stopped with an error.
#[derive(Debug)]
pub enum ServeError {
    /// The reflection service could not be built from the descriptor sets.
    Reflection(tonic_reflection::server::Error),
    /// The transport failed.
    Transport(tonic::transport::Error),
    /// The TLS material could not be read or used.
    Tls(String),
    /// The health listener could not be bound.
    HealthBind(std::io::Error),
}

impl std::fmt::Display for ServeError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ServeError::Reflection(e) => write!(f, "cannot build the reflection service: {e}"),
            ServeError::Transport(e) => write!(f, "transport error: {e}"),
            ServeError::Tls(e) => write!(f, "cannot set up TLS: {e}"),
            ServeError::HealthBind(e) => write!(f, "cannot bind the health listener: {e}"),
        }
    }
}

impl std::error::Error for ServeError {}

/// Every name health checking reports: the whole server (`""`) and each v1
/// service.
pub const HEALTH_NAMES: [&str; 5] = [
    "",
    service_names::DISSOCIATION,
    service_names::OXYGEN_TRANSPORT,
    service_names::MODEL_CATALOG,
    service_names::CONSISTENCY,
];

/// Serve the v1 services, health and reflection on `listener` until
/// `shutdown` completes; when `config.health_listen` is set, also bind it and
/// serve plaintext health there.
///
/// On shutdown every health status turns NOT_SERVING at once, the server stops
/// accepting connections, and calls in flight get `config.shutdown_grace` to
/// finish; connections still open after that are closed.
pub async fn serve<F>(listener: TcpListener, config: Config, shutdown: F) -> Result<(), ServeError>
where
    F: Future<Output = ()> + Send + 'static,
{
    let health = match config.health_listen {
        Some(address) => Some(
            TcpListener::bind(address)
                .await
                .map_err(ServeError::HealthBind)?,
        ),
        None => None,
    };
    serve_on(listener, health, config, shutdown).await
}

/// Like [`serve`], with the health listener (if any) already bound, so tests
/// can pass port 0 for both. `config.health_listen` is ignored.
pub async fn serve_on<F>(
    listener: TcpListener,
    health_listener: Option<TcpListener>,
    config: Config,
    shutdown: F,
) -> Result<(), ServeError>
where
    F: Future<Output = ()> + Send + 'static,
{
    let (reporter, health_service) = tonic_health::server::health_reporter();
    // Reflection in both protocol versions: v1, and v1alpha for the many
    // tools (grpcio-reflection's client among them) that still speak only it.
    let reflection_builder = || {
        tonic_reflection::server::Builder::configure()
            .register_encoded_file_descriptor_set(FILE_DESCRIPTOR_SET)
            .register_encoded_file_descriptor_set(tonic_types::pb::FILE_DESCRIPTOR_SET)
            .register_encoded_file_descriptor_set(tonic_health::pb::FILE_DESCRIPTOR_SET)
    };
    let (reflection, reflection_v1alpha) = if config.no_reflection {
        (None, None)
    } else {
        (
            Some(
                reflection_builder()
                    .build_v1()
                    .map_err(ServeError::Reflection)?,
            ),
            Some(
                reflection_builder()
                    .build_v1alpha()
                    .map_err(ServeError::Reflection)?,
            ),
        )
    };
    // TLS is done before tonic sees a connection (tls.rs): ALPN offers
    // HTTP/1.1 as well as HTTP/2.
    let tls = crate::tls::acceptor(&config).map_err(ServeError::Tls)?;

    let builder = Server::builder()
        .max_concurrent_streams(config.max_concurrent_streams)
        .http2_keepalive_interval(Some(config.keepalive_interval))
        .http2_keepalive_timeout(Some(config.keepalive_timeout))
        // HTTP/1.1 always: the Connect protocol and grpc-web use it.
        .accept_http1(true);
    let cors = (config.grpc_web || !config.cors_allowed_origins.is_empty())
        .then(|| web::cors_layer(&config.cors_allowed_origins));
    let grpc_web = config.grpc_web.then(web::grpc_web_layer);
    let decode = config.max_decoded_message_bytes;
    let encode = config.max_encoded_message_bytes;
    // One per-call layer (one call limit) for both stacks below.
    let call_layer = CallLayer::new(config.max_concurrent_calls, config.call_timeout);
    let connect = connect::door(
        &call_layer,
        connect::Limits {
            max_batch_items: config.max_batch_items,
            max_request_bytes: decode,
            max_response_bytes: encode,
            settings: std::sync::Arc::new(ReportedSettings::from_config(&config)),
        },
    );
    // The FHIR R4 door under /fhir/r4, with its own copy of the same layer.
    let fhir = fhir::door::door(&call_layer, decode);

    let router = builder
        .layer(option_layer(cors))
        // The dispatch: FHIR and Connect (each with its own copy of the
        // per-call layer) and refusals here; gRPC and grpc-web go on below.
        .layer(DispatchLayer::new(connect, fhir, config.grpc_web))
        // Only gRPC and grpc-web requests pass this point: a gRPC
        // strictness layer goes here.
        .layer(option_layer(grpc_web))
        .layer(call_layer)
        .add_service(health_service.clone())
        .add_optional_service(reflection)
        .add_optional_service(reflection_v1alpha)
        .add_service(
            DissociationServiceServer::new(DissociationApi::new(config.max_batch_items))
                .max_decoding_message_size(decode)
                .max_encoding_message_size(encode),
        )
        .add_service(
            OxygenTransportServiceServer::new(TransportApi::new())
                .max_decoding_message_size(decode)
                .max_encoding_message_size(encode),
        )
        .add_service(
            ModelCatalogServiceServer::new(CatalogApi::from_config(&config))
                .max_decoding_message_size(decode)
                .max_encoding_message_size(encode),
        )
        .add_service(
            ConsistencyServiceServer::new(ConsistencyApi::new(config.max_batch_items))
                .max_decoding_message_size(decode)
                .max_encoding_message_size(encode),
        );

    set_all(&reporter, ServingStatus::Serving).await;

    // The plaintext health listener: grpc.health.v1 only, no reflection, no
    // TLS, no limits; it answers NOT_SERVING through the drain.
    let (health_stop_tx, health_stop_rx) = tokio::sync::oneshot::channel::<()>();
    let health_task = match health_listener {
        Some(health_listener) => {
            if let Ok(address) = health_listener.local_addr() {
                tracing::info!(%address, "serving health");
            }
            let incoming = TcpIncoming::from(health_listener).with_nodelay(Some(true));
            Some(tokio::spawn(
                Server::builder()
                    .add_service(health_service)
                    .serve_with_incoming_shutdown(incoming, async move {
                        let _ = health_stop_rx.await;
                    }),
            ))
        }
        None => None,
    };

    if let Ok(address) = listener.local_addr() {
        tracing::info!(%address, "serving");
    }
    let incoming = crate::tls::incoming(limited_incoming(listener, config.max_connections), tls);

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
    let outcome = tokio::select! {
        result = &mut server => result.map_err(ServeError::Transport),
        Ok(()) = drain_started_rx => bounded_drain(&mut server, config.shutdown_grace).await,
    };

    if let Some(task) = health_task {
        let _ = health_stop_tx.send(());
        let abort = task.abort_handle();
        match tokio::time::timeout(HEALTH_LISTENER_STOP, task).await {
            Ok(Ok(Ok(()))) => {}
            Ok(Ok(Err(error))) => tracing::warn!(%error, "health listener failed"),
            Ok(Err(_)) => {}
            Err(_) => abort.abort(),
        }
    }
    outcome?;
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
