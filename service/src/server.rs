//! Start-up and shutdown: the server on an already-bound listener.
//!
//! [`serve`] takes the listener and any shutdown future, so the binary passes a
//! real socket and the OS signals, and tests pass port 0 and a oneshot.
//!
//! The main listener serves gRPC, grpc-web (behind a flag), the Connect
//! protocol and the FHIR R4 door, over HTTP/2 and HTTP/1.1, through one
//! connection loop ([`connections`]: connection cap, TLS with its handshake
//! deadline and ALPN `h2` then `http/1.1`, preface, idle and maximum-age
//! deadlines, stuck answers). Each request then passes, outermost first:
//!
//! 1. CORS (with `--grpc-web` or `--cors-allowed-origins`);
//! 2. the door dispatch ([`DispatchLayer`]: FHIR by path, gRPC and grpc-web
//!    by content type, Connect by content type or GET form, refusals for
//!    other requests to v1 paths);
//! 3. per door, its own copy of the per-call layer ([`CallLayer`]), then:
//!    - gRPC and grpc-web ([`grpc_stack`]): strictness, grpc-web
//!      translation, panic catching, streaming limits, the request gate and
//!      admission, the compute pool, tonic's routes;
//!    - Connect and FHIR ([`DoorLayers`]): panic catching, then the door,
//!      which reads its request and asks the same admission (and, for a
//!      Connect call of many items, the same compute pool).

use std::{convert::Infallible, future::Future, time::Duration};

use http::{Request, Response};
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
use tokio_util::sync::CancellationToken;
use tonic::{body::Body, service::Routes};
use tonic_health::{server::HealthReporter, ServingStatus};
use tower::{
    util::{option_layer, BoxCloneService, MapResponseLayer},
    Layer, ServiceBuilder,
};

use crate::{
    api::server_settings::ReportedSettings,
    config::Config,
    grpc::ConsistencyApi,
    grpc::{CatalogApi, DissociationApi, TransportApi},
    http::{connect, fhir, DispatchLayer},
    layers::{
        admission::Admission,
        call::CallLayer,
        compute::{ComputeLayer, ComputePool},
        connections::{self, ListenerSettings},
        door::DoorLayers,
        grpc_strict::GrpcStrictLayer,
        panic, protocol,
        request_gate::{RequestGateLayer, MAX_HEALTH_MESSAGE_BYTES},
        streaming::StreamingLayer,
        tls, web,
    },
};

/// How long the health listener may take to close after the main listener
/// has drained.
pub const HEALTH_LISTENER_STOP: Duration = Duration::from_secs(1);

/// Name of the health listener's thread.
const HEALTH_THREAD_NAME: &str = "oxbind-health";

/// Concurrent HTTP/2 streams per connection on the health listener (a
/// kubelet probe sends one check per connection).
pub const HEALTH_MAX_CONCURRENT_STREAMS: u32 = 8;

/// Largest server-reflection request message, in bytes (a request names one
/// file or symbol).
pub const MAX_REFLECTION_MESSAGE_BYTES: usize = 16 * 1024;

/// Why the server stopped with an error.
#[derive(Debug)]
pub enum ServeError {
    /// The reflection service could not be built from the descriptor sets.
    Reflection(tonic_reflection::server::Error),
    /// The TLS material could not be read or used.
    Tls(String),
    /// The health listener could not be bound.
    HealthBind(std::io::Error),
    /// The compute pool's threads could not be started.
    Compute(std::io::Error),
}

impl std::fmt::Display for ServeError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ServeError::Reflection(e) => write!(f, "cannot build the reflection service: {e}"),
            ServeError::Tls(e) => write!(f, "cannot set up TLS: {e}"),
            ServeError::HealthBind(e) => write!(f, "cannot bind the health listener: {e}"),
            ServeError::Compute(e) => write!(f, "cannot start the compute pool: {e}"),
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

/// A per-request service as the listeners serve it: any request in, an
/// answer out, never an error (every failure is an answer).
pub type RequestService = BoxCloneService<Request<Body>, Response<Body>, Infallible>;

/// Serve the v1 services, health and reflection on `listener` until
/// `shutdown` completes; when `config.health_listen` is set, also bind it and
/// serve plaintext health there.
///
/// On shutdown every health status turns NOT_SERVING at once, streaming
/// calls end, the server stops accepting connections, and calls in flight
/// get `config.shutdown_grace` to finish; connections still open after that
/// are closed.
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
    let health_service = health_service.max_decoding_message_size(MAX_HEALTH_MESSAGE_BYTES);
    let tls = tls_acceptor(&config)?;
    let compute = ComputePool::shared(config.compute_threads()).map_err(ServeError::Compute)?;
    // Cancelled when the drain begins: streaming calls end then.
    let draining = CancellationToken::new();
    let admission = Admission::new(
        config.max_concurrent_calls,
        config.max_items_in_flight,
        config.max_request_bytes_in_flight,
    );

    let mut routes = Routes::builder();
    routes.add_service(health_service.clone());
    if !config.no_reflection {
        add_reflection(&mut routes)?;
    }
    let (decode, encode) = (
        config.max_decoded_message_bytes,
        config.max_encoded_message_bytes,
    );
    routes
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

    // One per-call layer, a copy for each door: the same request id, span,
    // deadline, metrics and log line for every call.
    let call_layer = CallLayer::new(config.call_timeout);
    // gRPC and grpc-web: everything only they see.
    let grpc = call_layer.layer(grpc_stack(
        &config,
        &admission,
        compute.layer(),
        &draining,
        routes.routes().prepare(),
    ));
    // Connect and FHIR: the same admission, panic catching and compute pool,
    // through the door's side of the layers.
    let doors = DoorLayers::new(
        call_layer,
        admission.clone(),
        config.request_arrival_timeout,
        compute,
    );
    let connect = connect::door(
        &doors,
        connect::Limits {
            max_batch_items: config.max_batch_items,
            max_request_bytes: decode,
            max_response_bytes: encode,
            settings: std::sync::Arc::new(ReportedSettings::from_config(&config)),
        },
    );
    let fhir = fhir::door::door(&doors, decode);
    // Everything every request sees, whatever its door: CORS (for grpc-web
    // and for Connect from a browser), then the dispatch.
    let cors = (config.grpc_web || !config.cors_allowed_origins.is_empty())
        .then(|| web::cors_layer(&config.cors_allowed_origins));
    let service: RequestService = BoxCloneService::new(
        ServiceBuilder::new()
            .option_layer(cors)
            .layer(DispatchLayer::new(connect, fhir))
            .service(grpc),
    );

    set_all(&reporter, ServingStatus::Serving).await;

    // The plaintext health listener: grpc.health.v1 only, no reflection, no
    // TLS; never refused for load; it answers NOT_SERVING through the drain.
    // It runs on a thread of its own, so that a probe never waits for the
    // main listener's threads.
    let (health_stop_tx, health_stop_rx) = tokio::sync::oneshot::channel::<()>();
    let health_thread = match health_listener {
        Some(health_listener) => {
            if let Ok(address) = health_listener.local_addr() {
                tracing::info!(%address, "serving health");
            }
            let settings = ListenerSettings {
                name: "health",
                max_connections: config.max_health_connections,
                tls: None,
                accept_http1: false,
                max_concurrent_streams: HEALTH_MAX_CONCURRENT_STREAMS,
                ..listener_settings(&config)
            };
            let stack = health_stack(&config, &admission, &draining, Routes::new(health_service));
            let listener = health_listener.into_std().map_err(ServeError::HealthBind)?;
            Some(spawn_health_thread(
                listener,
                settings,
                stack,
                health_stop_rx,
            )?)
        }
        None => None,
    };

    if let Ok(address) = listener.local_addr() {
        tracing::info!(%address, "serving");
    }
    let settings = ListenerSettings {
        tls,
        ..listener_settings(&config)
    };

    let (drain_started_tx, drain_started_rx) = tokio::sync::oneshot::channel::<()>();
    let drain_reporter = reporter.clone();
    let stop_accepting = async move {
        shutdown.await;
        set_all(&drain_reporter, ServingStatus::NotServing).await;
        tracing::info!("health NOT_SERVING; draining calls in flight");
        draining.cancel();
        let _ = drain_started_tx.send(());
    };

    let server = connections::serve(listener, settings, service, stop_accepting);
    tokio::pin!(server);
    tokio::select! {
        () = &mut server => {}
        Ok(()) = drain_started_rx => bounded_drain(&mut server, config.shutdown_grace).await,
    }

    if let Some(thread) = health_thread {
        let _ = health_stop_tx.send(());
        let _ = tokio::task::spawn_blocking(move || thread.join()).await;
    }
    tracing::info!("stopped");
    Ok(())
}

/// Serve the health listener on a thread with a runtime of its own until
/// `stop`; then give its connections [`HEALTH_LISTENER_STOP`] to close.
fn spawn_health_thread(
    listener: std::net::TcpListener,
    settings: ListenerSettings,
    stack: RequestService,
    stop: tokio::sync::oneshot::Receiver<()>,
) -> Result<std::thread::JoinHandle<()>, ServeError> {
    let runtime = tokio::runtime::Builder::new_current_thread()
        .enable_all()
        .build()
        .map_err(ServeError::HealthBind)?;
    std::thread::Builder::new()
        .name(HEALTH_THREAD_NAME.to_owned())
        .spawn(move || {
            runtime.block_on(async move {
                let listener = match TcpListener::from_std(listener) {
                    Ok(listener) => listener,
                    Err(error) => {
                        tracing::error!(%error, "cannot serve the health listener");
                        return;
                    }
                };
                let (stopping_tx, stopping_rx) = tokio::sync::oneshot::channel::<()>();
                let serve = connections::serve(listener, settings, stack, async move {
                    let _ = stopping_rx.await;
                });
                tokio::pin!(serve);
                tokio::select! {
                    () = &mut serve => {}
                    _ = stop => {
                        let _ = stopping_tx.send(());
                        let _ = tokio::time::timeout(HEALTH_LISTENER_STOP, serve).await;
                    }
                }
            });
        })
        .map_err(ServeError::HealthBind)
}

/// The main listener's connection settings from `config` (its TLS is set
/// apart).
fn listener_settings(config: &Config) -> ListenerSettings {
    ListenerSettings {
        name: "main",
        max_connections: config.max_connections,
        tls: None,
        tls_handshake_timeout: config.tls_handshake_timeout,
        preface_timeout: config.preface_timeout,
        idle_timeout: config.idle_timeout,
        max_connection_age: config.max_connection_age,
        max_connection_age_grace: config.max_connection_age_grace,
        accept_http1: protocol::MAIN_ACCEPTS_HTTP1,
        max_concurrent_streams: config.max_concurrent_streams,
        keepalive_interval: config.keepalive_interval,
        keepalive_timeout: config.keepalive_timeout,
    }
}

/// The layers only gRPC requests see, around the routes (outermost first):
/// strictness, grpc-web translation, panics, streaming limits, the request
/// gate and admission, the compute pool.
fn grpc_stack(
    config: &Config,
    admission: &Admission,
    compute: ComputeLayer,
    draining: &CancellationToken,
    routes: Routes,
) -> RequestService {
    let grpc_web = config.grpc_web.then(web::grpc_web_layer);
    let stack = ServiceBuilder::new()
        .layer(GrpcStrictLayer::new(
            config.grpc_web,
            &config.cors_allowed_origins,
        ))
        .layer(option_layer(grpc_web))
        .layer(MapResponseLayer::new(|r: Response<_>| r.map(Body::new)))
        .layer(panic::catch_panic_layer())
        .layer(StreamingLayer::new(
            config.max_streaming_calls,
            config.streaming_idle_timeout,
            draining.clone(),
        ))
        .layer(RequestGateLayer::new(
            admission.clone(),
            config.request_arrival_timeout,
            config.max_decoded_message_bytes,
        ))
        .layer(compute)
        .service(routes);
    BoxCloneService::new(stack)
}

/// The health listener's layers: the same strictness, panic catching,
/// streaming limits (for Watch) and request gate (health is never refused
/// for load, but its request must arrive in time).
fn health_stack(
    config: &Config,
    admission: &Admission,
    draining: &CancellationToken,
    routes: Routes,
) -> RequestService {
    let stack = ServiceBuilder::new()
        .layer(GrpcStrictLayer::new(false, &[]))
        .layer(MapResponseLayer::new(|r: Response<_>| r.map(Body::new)))
        .layer(panic::catch_panic_layer())
        .layer(StreamingLayer::new(
            config.max_streaming_calls,
            config.streaming_idle_timeout,
            draining.clone(),
        ))
        .layer(RequestGateLayer::new(
            admission.clone(),
            config.request_arrival_timeout,
            config.max_decoded_message_bytes,
        ))
        .service(routes.prepare());
    BoxCloneService::new(stack)
}

/// Server reflection in both protocol versions: v1, and v1alpha for the
/// many tools (grpcio-reflection's client among them) that still speak only
/// it.
fn add_reflection(routes: &mut tonic::service::RoutesBuilder) -> Result<(), ServeError> {
    let builder = || {
        tonic_reflection::server::Builder::configure()
            .register_encoded_file_descriptor_set(FILE_DESCRIPTOR_SET)
            .register_encoded_file_descriptor_set(tonic_types::pb::FILE_DESCRIPTOR_SET)
            .register_encoded_file_descriptor_set(tonic_health::pb::FILE_DESCRIPTOR_SET)
    };
    let v1 = builder().build_v1().map_err(ServeError::Reflection)?;
    let v1alpha = builder().build_v1alpha().map_err(ServeError::Reflection)?;
    routes
        .add_service(v1.max_decoding_message_size(MAX_REFLECTION_MESSAGE_BYTES))
        .add_service(v1alpha.max_decoding_message_size(MAX_REFLECTION_MESSAGE_BYTES));
    Ok(())
}

/// The TLS acceptor `config` asks for: none, TLS, or mutual TLS.
fn tls_acceptor(config: &Config) -> Result<Option<tokio_rustls::TlsAcceptor>, ServeError> {
    let (Some(cert), Some(key)) = (&config.tls_cert, &config.tls_key) else {
        return Ok(None);
    };
    let read = |flag: &str, path: &std::path::Path| {
        std::fs::read(path).map_err(|e| ServeError::Tls(format!("{flag} {}: {e}", path.display())))
    };
    let client_ca = match &config.client_ca {
        Some(path) => Some(read("--client-ca", path)?),
        None => None,
    };
    tls::acceptor(
        &read("--tls-cert", cert)?,
        &read("--tls-key", key)?,
        client_ca.as_deref(),
        protocol::MAIN_ACCEPTS_HTTP1,
    )
    .map(Some)
    .map_err(ServeError::Tls)
}

/// Let the graceful drain run for at most `grace`: every connection has its
/// GOAWAY, and those still open after it (a client holding a connection
/// open) are closed when the server future is dropped.
async fn bounded_drain<S>(server: &mut std::pin::Pin<&mut S>, grace: Duration)
where
    S: Future<Output = ()>,
{
    if tokio::time::timeout(grace, server.as_mut()).await.is_err() {
        tracing::warn!(
            grace_ms = grace.as_millis() as u64,
            "grace period over; closing the connections still open"
        );
    }
}

async fn set_all(reporter: &HealthReporter, status: ServingStatus) {
    for name in HEALTH_NAMES {
        reporter.set_service_status(name, status).await;
    }
}
