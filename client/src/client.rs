//! [`OxbindClient`] and its [`ClientBuilder`].

use std::{future::Future, path::Path, time::Duration};

use backon::Retryable;
use oxbind_proto::v1::{
    dissociation_service_client::DissociationServiceClient,
    model_catalog_service_client::ModelCatalogServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient, saturation_from_tension_result,
    tension_from_saturation_result, BatchSaturationFromTensionRequest,
    BatchTensionFromSaturationRequest, BloodConditions, CorrectForTemperatureRequest,
    CorrectForTemperatureResponse, EstimateP50Request, EstimateP50Response, GasExchangeRequest,
    GasExchangeResponse, GetServerSettingsRequest, GetServerSettingsResponse, ListModelsRequest,
    ListModelsResponse, OxygenContentRequest, OxygenContentResponse, Provenance,
    ProvenancePlacement, Quantity, SampleCurveRequest, SampleCurveResponse,
    SaturationFromTensionRequest, SaturationFromTensionResponse, ShiftFactorsRequest,
    ShiftFactorsResponse, TensionFromSaturationRequest, TensionFromSaturationResponse,
};
use tonic::{
    transport::{Certificate, Channel, ClientTlsConfig, Endpoint, Identity},
    Code,
};
use tonic_health::pb::{
    health_check_response::ServingStatus, health_client::HealthClient, HealthCheckRequest,
};

use oxbind_proto::v1::{
    check_blood_gas_result, consistency_service_client::ConsistencyServiceClient,
    BatchCheckBloodGasRequest, CheckBloodGasRequest, CheckBloodGasResponse,
};

use crate::{
    balance::{self, Balancing, ResolveFuture},
    ClientError, RetryPolicy,
};

/// Default time allowed to open the connection.
pub const DEFAULT_CONNECT_TIMEOUT: Duration = Duration::from_secs(5);
/// Default deadline of each call attempt.
pub const DEFAULT_CALL_TIMEOUT: Duration = Duration::from_secs(10);
/// The user agent sent when none is set.
pub const DEFAULT_USER_AGENT: &str = concat!("oxbind-client/", env!("CARGO_PKG_VERSION"));

/// The message of the status tonic makes up when its per-call timeout fires.
const TONIC_TIMEOUT_MESSAGE: &str = "Timeout expired";

/// The result of one item of a batch: its response, or why it was refused.
pub type ItemResult<T> = Result<T, ClientError>;

/// Settings for an [`OxbindClient`]; made by [`OxbindClient::builder`].
///
/// ```no_run
/// # async fn example() -> Result<(), oxbind_client::ClientError> {
/// use std::time::Duration;
/// use oxbind_client::{OxbindClient, RetryPolicy};
/// let client = OxbindClient::builder("https://oxbind.example.invalid:50051")
///     .connect_timeout(Duration::from_secs(2))
///     .call_timeout(Duration::from_secs(5))
///     .ca_certificate_pem(std::fs::read("ca.pem").unwrap())
///     .client_identity_pem(std::fs::read("me.pem").unwrap(), std::fs::read("me.key").unwrap())
///     .retry(RetryPolicy::default().with_max_attempts(3))
///     .user_agent("order-pipeline/2.1")
///     .connect()
///     .await?;
/// # let _ = client; Ok(()) }
/// ```
#[derive(Debug, Clone)]
pub struct ClientBuilder {
    pub(crate) endpoint: String,
    connect_timeout: Duration,
    call_timeout: Option<Duration>,
    retry: RetryPolicy,
    user_agent: String,
    ca_pem: Option<Vec<u8>>,
    identity_pem: Option<(Vec<u8>, Vec<u8>)>,
    domain_name: Option<String>,
    native_roots: bool,
    balancing: Option<Balancing>,
}

impl ClientBuilder {
    fn new(endpoint: impl Into<String>) -> Self {
        Self {
            endpoint: endpoint.into(),
            connect_timeout: DEFAULT_CONNECT_TIMEOUT,
            call_timeout: Some(DEFAULT_CALL_TIMEOUT),
            retry: RetryPolicy::default(),
            user_agent: DEFAULT_USER_AGENT.to_owned(),
            ca_pem: None,
            identity_pem: None,
            domain_name: None,
            native_roots: false,
            balancing: None,
        }
    }

    /// Time allowed to open the connection (default 5 s).
    pub fn connect_timeout(mut self, timeout: Duration) -> Self {
        self.connect_timeout = timeout;
        self
    }

    /// Deadline of each call attempt (default 10 s), sent to the server as
    /// `grpc-timeout`.
    pub fn call_timeout(mut self, timeout: Duration) -> Self {
        self.call_timeout = Some(timeout);
        self
    }

    /// No per-call deadline.
    pub fn no_call_timeout(mut self) -> Self {
        self.call_timeout = None;
        self
    }

    /// How to retry calls answered with UNAVAILABLE (default: the
    /// [`RetryPolicy::default`]).
    pub fn retry(mut self, policy: RetryPolicy) -> Self {
        self.retry = policy;
        self
    }

    /// The `user-agent` header (tonic appends its own name).
    pub fn user_agent(mut self, agent: impl Into<String>) -> Self {
        self.user_agent = agent.into();
        self
    }

    /// Trust the CA certificates in this PEM bundle (enables TLS).
    pub fn ca_certificate_pem(mut self, pem: impl Into<Vec<u8>>) -> Self {
        self.ca_pem = Some(pem.into());
        self
    }

    /// Trust the CA certificates in the PEM file at `path` (enables TLS).
    pub fn ca_certificate_file(self, path: impl AsRef<Path>) -> Result<Self, ClientError> {
        let path = path.as_ref();
        let pem = std::fs::read(path)
            .map_err(|e| ClientError::Tls(format!("CA bundle {}: {e}", path.display())))?;
        Ok(self.ca_certificate_pem(pem))
    }

    /// Present this client certificate and key (PEM) for mutual TLS.
    pub fn client_identity_pem(
        mut self,
        certificate: impl Into<Vec<u8>>,
        key: impl Into<Vec<u8>>,
    ) -> Self {
        self.identity_pem = Some((certificate.into(), key.into()));
        self
    }

    /// Present the client certificate and key in these PEM files (mTLS).
    pub fn client_identity_files(
        self,
        certificate: impl AsRef<Path>,
        key: impl AsRef<Path>,
    ) -> Result<Self, ClientError> {
        let read = |p: &Path| {
            std::fs::read(p).map_err(|e| ClientError::Tls(format!("{}: {e}", p.display())))
        };
        let cert = read(certificate.as_ref())?;
        let key = read(key.as_ref())?;
        Ok(self.client_identity_pem(cert, key))
    }

    /// The name to check the server certificate against, when it differs
    /// from the host in the address.
    pub fn tls_domain_name(mut self, name: impl Into<String>) -> Self {
        self.domain_name = Some(name.into());
        self
    }

    /// Also trust the operating system's root certificates (enables TLS).
    pub fn with_native_roots(mut self) -> Self {
        self.native_roots = true;
        self
    }

    /// Balance calls over every address the server's host name resolves
    /// to (for example a Kubernetes headless Service, one address per ready
    /// pod), resolving it again every 30 s ([`balance::DEFAULT_DNS_REFRESH`];
    /// see [`ClientBuilder::dns_refresh`]). Each address gets its own
    /// connection; each call goes to the less busy of two at random (tonic's
    /// balancing channel). Without it, the client keeps one connection to
    /// whichever address it reached.
    ///
    /// ```no_run
    /// # async fn example() -> Result<(), oxbind_client::ClientError> {
    /// let client = oxbind_client::OxbindClient::builder(
    ///     "http://oxbind-headless.clinical.svc.cluster.local:50051",
    /// )
    /// .balance_over_dns()
    /// .connect()
    /// .await?;
    /// # let _ = client; Ok(()) }
    /// ```
    pub fn balance_over_dns(mut self) -> Self {
        let refresh = self
            .balancing
            .as_ref()
            .map_or(balance::DEFAULT_DNS_REFRESH, |b| b.refresh);
        self.balancing = Some(Balancing {
            resolver: balance::dns_resolver(),
            refresh,
        });
        self
    }

    /// Balance as [`ClientBuilder::balance_over_dns`] does, over the
    /// addresses `resolve(host, port)` returns instead of DNS's (another
    /// discovery service, or a fixed list).
    pub fn balance_with_resolver<F, Fut>(mut self, resolve: F) -> Self
    where
        F: Fn(&str, u16) -> Fut + Send + Sync + 'static,
        Fut: std::future::Future<Output = std::io::Result<Vec<std::net::SocketAddr>>>
            + Send
            + 'static,
    {
        let refresh = self
            .balancing
            .as_ref()
            .map_or(balance::DEFAULT_DNS_REFRESH, |b| b.refresh);
        let resolver = std::sync::Arc::new(move |host: &str, port: u16| -> ResolveFuture {
            Box::pin(resolve(host, port))
        });
        self.balancing = Some(Balancing { resolver, refresh });
        self
    }

    /// How often a balancing client resolves the name again (default
    /// 30 s); no effect without balancing.
    pub fn dns_refresh(mut self, every: Duration) -> Self {
        if let Some(balancing) = &mut self.balancing {
            balancing.refresh = every;
        }
        self
    }

    fn endpoint(&self) -> Result<Endpoint, ClientError> {
        self.endpoint_at(&self.endpoint, None)
    }

    /// The endpoint at `uri` with every setting of this builder; `tls_name`
    /// is the name to check the server's certificate against when `uri`
    /// names an address (unless [`ClientBuilder::tls_domain_name`] set one).
    pub(crate) fn endpoint_at(
        &self,
        uri: &str,
        tls_name: Option<&str>,
    ) -> Result<Endpoint, ClientError> {
        let invalid = |reason: String| ClientError::InvalidEndpoint {
            endpoint: self.endpoint.clone(),
            reason,
        };
        // Without a scheme the address would only fail later, at connect
        // time, as if the server were down.
        if !(self.endpoint.starts_with("http://") || self.endpoint.starts_with("https://")) {
            return Err(invalid(
                "the address needs a scheme: http://HOST:PORT, or https://HOST:PORT for TLS"
                    .to_owned(),
            ));
        }
        let mut endpoint = Endpoint::from_shared(uri.to_owned())
            .map_err(|e| invalid(e.to_string()))?
            .tcp_nodelay(true)
            .connect_timeout(self.connect_timeout)
            .user_agent(self.user_agent.clone())
            .map_err(|e| invalid(format!("user agent: {e}")))?;
        if let Some(timeout) = self.call_timeout {
            endpoint = endpoint.timeout(timeout);
        }
        let https = self.endpoint.starts_with("https://");
        if https || self.ca_pem.is_some() || self.identity_pem.is_some() || self.native_roots {
            let mut tls = ClientTlsConfig::new();
            if let Some(pem) = &self.ca_pem {
                tls = tls.ca_certificate(Certificate::from_pem(pem));
            }
            if let Some((cert, key)) = &self.identity_pem {
                tls = tls.identity(Identity::from_pem(cert, key));
            }
            if let Some(name) = self.domain_name.as_deref().or(tls_name) {
                tls = tls.domain_name(name.to_owned());
            }
            if self.native_roots || self.ca_pem.is_none() {
                tls = tls.with_native_roots();
            }
            endpoint = endpoint
                .tls_config(tls)
                .map_err(|e| ClientError::Tls(e.to_string()))?;
        }
        Ok(endpoint)
    }

    /// Open the connection now; fails with [`ClientError::Connect`] when the
    /// server cannot be reached.
    ///
    /// A balancing client resolves the name now (an error if it resolves to
    /// nothing) and connects to each address in the background.
    pub async fn connect(self) -> Result<OxbindClient, ClientError> {
        let channel = match &self.balancing {
            Some(balancing) => balance::balanced_channel(&self, balancing).await?,
            None => self
                .endpoint()?
                .connect()
                .await
                .map_err(ClientError::Connect)?,
        };
        Ok(OxbindClient::from_channel(channel, self.retry).with_call_timeout(self.call_timeout))
    }

    /// Open the connection now and give back the bare channel, with this
    /// builder's address, timeouts, TLS and user agent, for calls the
    /// typed client does not make (any method, by reflection). Fails as
    /// [`Self::connect`] does.
    pub async fn connect_channel(self) -> Result<Channel, ClientError> {
        self.endpoint()?
            .connect()
            .await
            .map_err(ClientError::Connect)
    }

    /// Connect on first use: an unreachable server then shows as UNAVAILABLE
    /// on the call (and is retried by the policy).
    ///
    /// A balancing client resolves the name in the background; calls wait
    /// for the first addresses.
    pub fn connect_lazy(self) -> Result<OxbindClient, ClientError> {
        let channel = match &self.balancing {
            Some(balancing) => balance::balanced_channel_lazy(&self, balancing)?,
            None => self.endpoint()?.connect_lazy(),
        };
        Ok(OxbindClient::from_channel(channel, self.retry).with_call_timeout(self.call_timeout))
    }
}

/// A typed client for every Oxbind v1 RPC and the health service.
///
/// Cheap to clone (clones share one connection). Every call is retried on
/// UNAVAILABLE by its [`RetryPolicy`], and on nothing else.
///
/// ```no_run
/// # async fn example() -> Result<(), oxbind_client::ClientError> {
/// use oxbind_client::{OxbindClient, v1::{BloodConditions, Quantity}};
/// let client = OxbindClient::builder("http://127.0.0.1:50051").connect().await?;
/// let patient = BloodConditions::standard().with_ph(7.31).with_pco2(Quantity::mm_hg(48.0));
/// let answer = client.saturation(Quantity::kpa(10.7), patient).await?;
/// println!("SO2 {:.3}", answer.saturation_fraction);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone)]
pub struct OxbindClient {
    dissociation: DissociationServiceClient<Channel>,
    transport: OxygenTransportServiceClient<Channel>,
    catalog: ModelCatalogServiceClient<Channel>,
    health: HealthClient<Channel>,
    retry: RetryPolicy,
    call_timeout: Option<Duration>,
    consistency: ConsistencyServiceClient<Channel>,
}

/// Define a retried unary call on one of the stubs.
macro_rules! unary {
    ($(#[$doc:meta])* $name:ident, $stub:ident, $req:ty, $resp:ty) => {
        $(#[$doc])*
        pub async fn $name(&self, request: $req) -> Result<$resp, ClientError> {
            let stub = self.$stub.clone();
            self.retried(move || {
                let mut stub = stub.clone();
                let request = request.clone();
                async move { stub.$name(request).await }
            })
            .await
        }
    };
}

impl OxbindClient {
    /// Start configuring a client for the server at `endpoint`, e.g.
    /// `http://127.0.0.1:50051` or `https://oxbind.example.invalid`.
    pub fn builder(endpoint: impl Into<String>) -> ClientBuilder {
        ClientBuilder::new(endpoint)
    }

    /// Connect to `endpoint` with the default settings.
    pub async fn connect(endpoint: impl Into<String>) -> Result<Self, ClientError> {
        Self::builder(endpoint).connect().await
    }

    /// Wrap an existing channel.
    pub fn from_channel(channel: Channel, retry: RetryPolicy) -> Self {
        Self {
            dissociation: DissociationServiceClient::new(channel.clone()),
            transport: OxygenTransportServiceClient::new(channel.clone()),
            catalog: ModelCatalogServiceClient::new(channel.clone()),
            consistency: ConsistencyServiceClient::new(channel.clone()),
            health: HealthClient::new(channel),
            retry,
            call_timeout: None,
        }
    }

    /// The same client, knowing the per-call deadline its channel applies
    /// (set by [`ClientBuilder::connect`]), so that a call that outlives it
    /// is reported as DEADLINE_EXCEEDED with that deadline.
    fn with_call_timeout(mut self, timeout: Option<Duration>) -> Self {
        self.call_timeout = timeout;
        self
    }

    /// The retry policy in force.
    pub fn retry_policy(&self) -> RetryPolicy {
        self.retry
    }

    async fn retried<T, F, Fut>(&self, call: F) -> Result<T, ClientError>
    where
        F: FnMut() -> Fut,
        Fut: Future<Output = Result<tonic::Response<T>, tonic::Status>>,
    {
        call.retry(self.retry.backoff())
            .sleep(tokio::time::sleep)
            .when(|status: &tonic::Status| status.code() == Code::Unavailable)
            .await
            .map(tonic::Response::into_inner)
            .map_err(|status| self.local_deadline(status))
    }

    /// The error for `status`. tonic reports its own per-call timeout as
    /// CANCELLED "Timeout expired"; gRPC names a deadline that passed on the
    /// client's side DEADLINE_EXCEEDED, so that is what the caller gets,
    /// with the deadline in the message.
    fn local_deadline(&self, status: tonic::Status) -> ClientError {
        if status.code() == Code::Cancelled && status.message() == TONIC_TIMEOUT_MESSAGE {
            let message = match self.call_timeout {
                Some(timeout) => format!(
                    "no answer within the client's deadline of {} s",
                    timeout.as_secs_f64()
                ),
                None => "no answer within the client's deadline".to_owned(),
            };
            return ClientError::Status {
                code: Code::DeadlineExceeded,
                message,
                violations: Vec::new(),
                info: None,
            };
        }
        ClientError::from(status)
    }

    unary!(
        /// Oxygen saturation from oxygen tension (`SaturationFromTension`).
        saturation_from_tension, dissociation, SaturationFromTensionRequest, SaturationFromTensionResponse
    );
    unary!(
        /// Oxygen tension from saturation (`TensionFromSaturation`).
        tension_from_saturation, dissociation, TensionFromSaturationRequest, TensionFromSaturationResponse
    );
    unary!(
        /// Sampled dissociation curves (`SampleCurve`).
        sample_curve, dissociation, SampleCurveRequest, SampleCurveResponse
    );
    unary!(
        /// The P50 shift and each factor's share (`ShiftFactors`).
        shift_factors, dissociation, ShiftFactorsRequest, ShiftFactorsResponse
    );
    unary!(
        /// P50 from measured PO2/SO2 pairs (`EstimateP50`).
        estimate_p50, dissociation, EstimateP50Request, EstimateP50Response
    );
    unary!(
        /// Blood-gas values corrected to another temperature (`CorrectForTemperature`).
        correct_for_temperature, dissociation, CorrectForTemperatureRequest, CorrectForTemperatureResponse
    );
    unary!(
        /// Oxygen content, delivery and consumption (`OxygenContent`).
        oxygen_content, transport, OxygenContentRequest, OxygenContentResponse
    );
    unary!(
        /// Alveolar gas, gradients, ratios and shunt (`GasExchange`).
        gas_exchange, transport, GasExchangeRequest, GasExchangeResponse
    );
    unary!(
        /// The models the server offers, and its cautions (`ListModels`).
        list_models, catalog, ListModelsRequest, ListModelsResponse
    );
    unary!(
        /// The server's identity and the settings it runs with
        /// (`GetServerSettings`).
        get_server_settings, catalog, GetServerSettingsRequest, GetServerSettingsResponse
    );
    unary!(
        /// The consistency findings of one blood-gas sample (`CheckBloodGas`):
        /// one finding per check, never a refusal for being discordant.
        check_blood_gas, consistency, CheckBloodGasRequest, CheckBloodGasResponse
    );

    /// Saturation at `po2` under `conditions`, with the server's default
    /// model and units.
    pub async fn saturation(
        &self,
        po2: Quantity,
        conditions: BloodConditions,
    ) -> Result<SaturationFromTensionResponse, ClientError> {
        self.saturation_from_tension(SaturationFromTensionRequest {
            po2: Some(po2),
            conditions: Some(conditions),
            ..Default::default()
        })
        .await
    }

    /// Tension at `saturation_fraction` (0 to 1, exclusive) under
    /// `conditions`, with the server's default model and units.
    pub async fn tension(
        &self,
        saturation_fraction: f64,
        conditions: BloodConditions,
    ) -> Result<TensionFromSaturationResponse, ClientError> {
        self.tension_from_saturation(TensionFromSaturationRequest {
            saturation_fraction,
            conditions: Some(conditions),
            ..Default::default()
        })
        .await
    }

    /// Many saturations in one call (`BatchSaturationFromTension`): one
    /// result per request, in order; a refused item carries its
    /// [`ClientError`] and the rest are still computed. The outer error is
    /// for the call as a whole (unreachable server, batch too large).
    ///
    /// ```no_run
    /// # async fn example(client: oxbind_client::OxbindClient) -> Result<(), oxbind_client::ClientError> {
    /// use oxbind_client::v1::{Quantity, SaturationFromTensionRequest};
    /// let rows = [80.0, -5.0].map(|po2| SaturationFromTensionRequest {
    ///     po2: Some(Quantity::mm_hg(po2)),
    ///     ..Default::default()
    /// });
    /// for result in client.batch_saturation_from_tension(rows.to_vec()).await? {
    ///     match result {
    ///         Ok(answer) => println!("{:.3}", answer.saturation_fraction),
    ///         Err(refused) => println!("refused: {refused}"),
    ///     }
    /// }
    /// # Ok(()) }
    /// ```
    pub async fn batch_saturation_from_tension(
        &self,
        requests: Vec<SaturationFromTensionRequest>,
    ) -> Result<Vec<ItemResult<SaturationFromTensionResponse>>, ClientError> {
        self.batch_saturation(requests, ProvenancePlacement::EachItem)
            .await
    }

    /// [`Self::batch_saturation_from_tension`] with the provenance sent once
    /// per batch (`PROVENANCE_PLACEMENT_SHARED`): a much smaller answer for
    /// large batches. Each computed item's response gets its shared entry
    /// copied back in, so the results have the same shape; the entries carry
    /// no `inputs_used` (the item's inputs are those of its request).
    pub async fn batch_saturation_from_tension_sharing_provenance(
        &self,
        requests: Vec<SaturationFromTensionRequest>,
    ) -> Result<Vec<ItemResult<SaturationFromTensionResponse>>, ClientError> {
        self.batch_saturation(requests, ProvenancePlacement::Shared)
            .await
    }

    async fn batch_saturation(
        &self,
        requests: Vec<SaturationFromTensionRequest>,
        placement: ProvenancePlacement,
    ) -> Result<Vec<ItemResult<SaturationFromTensionResponse>>, ClientError> {
        let stub = self.dissociation.clone();
        let request = BatchSaturationFromTensionRequest {
            requests,
            provenance_placement: placement as i32,
        };
        let response = self
            .retried(move || {
                let mut stub = stub.clone();
                let request = request.clone();
                async move { stub.batch_saturation_from_tension(request).await }
            })
            .await?;
        let items = response.results.into_iter().map(|item| {
            let outcome = item.result.map(|result| match result {
                saturation_from_tension_result::Result::Response(r) => Ok(r),
                saturation_from_tension_result::Result::Error(e) => Err(e),
            });
            (outcome, item.shared_provenance_index)
        });
        Ok(item_results(
            items,
            &response.shared_provenance,
            placement,
            |r, provenance| r.provenance = Some(provenance),
        ))
    }

    /// Many tensions in one call (`BatchTensionFromSaturation`), with the same
    /// per-item results as [`Self::batch_saturation_from_tension`].
    pub async fn batch_tension_from_saturation(
        &self,
        requests: Vec<TensionFromSaturationRequest>,
    ) -> Result<Vec<ItemResult<TensionFromSaturationResponse>>, ClientError> {
        self.batch_tension(requests, ProvenancePlacement::EachItem)
            .await
    }

    /// [`Self::batch_tension_from_saturation`] with the provenance sent once
    /// per batch, as [`Self::batch_saturation_from_tension_sharing_provenance`].
    pub async fn batch_tension_from_saturation_sharing_provenance(
        &self,
        requests: Vec<TensionFromSaturationRequest>,
    ) -> Result<Vec<ItemResult<TensionFromSaturationResponse>>, ClientError> {
        self.batch_tension(requests, ProvenancePlacement::Shared)
            .await
    }

    async fn batch_tension(
        &self,
        requests: Vec<TensionFromSaturationRequest>,
        placement: ProvenancePlacement,
    ) -> Result<Vec<ItemResult<TensionFromSaturationResponse>>, ClientError> {
        let stub = self.dissociation.clone();
        let request = BatchTensionFromSaturationRequest {
            requests,
            provenance_placement: placement as i32,
        };
        let response = self
            .retried(move || {
                let mut stub = stub.clone();
                let request = request.clone();
                async move { stub.batch_tension_from_saturation(request).await }
            })
            .await?;
        let items = response.results.into_iter().map(|item| {
            let outcome = item.result.map(|result| match result {
                tension_from_saturation_result::Result::Response(r) => Ok(r),
                tension_from_saturation_result::Result::Error(e) => Err(e),
            });
            (outcome, item.shared_provenance_index)
        });
        Ok(item_results(
            items,
            &response.shared_provenance,
            placement,
            |r, provenance| r.provenance = Some(provenance),
        ))
    }

    /// The consistency findings of many samples in one call
    /// (`BatchCheckBloodGas`): one result per request, in order; a refused
    /// item carries its [`ClientError`] and the rest are still checked. The
    /// outer error is for the call as a whole (unreachable server, batch too
    /// large).
    pub async fn batch_check_blood_gas(
        &self,
        requests: Vec<CheckBloodGasRequest>,
    ) -> Result<Vec<ItemResult<CheckBloodGasResponse>>, ClientError> {
        let stub = self.consistency.clone();
        let request = BatchCheckBloodGasRequest { requests };
        let response = self
            .retried(move || {
                let mut stub = stub.clone();
                let request = request.clone();
                async move { stub.batch_check_blood_gas(request).await }
            })
            .await?;
        let items = response.results.into_iter().map(|item| {
            let outcome = item.result.map(|result| match result {
                check_blood_gas_result::Result::Response(r) => Ok(r),
                check_blood_gas_result::Result::Error(e) => Err(e),
            });
            (outcome, 0)
        });
        Ok(item_results(
            items,
            &[],
            ProvenancePlacement::EachItem,
            |_, _| {},
        ))
    }

    /// The health of `service` (`""` for the whole server), from
    /// `grpc.health.v1.Health/Check`.
    pub async fn health(&self, service: &str) -> Result<ServingStatus, ClientError> {
        let stub = self.health.clone();
        let service = service.to_owned();
        let response = self
            .retried(move || {
                let mut stub = stub.clone();
                let request = HealthCheckRequest {
                    service: service.clone(),
                };
                async move { stub.check(request).await }
            })
            .await?;
        Ok(response.status())
    }
}

/// A batch answer's items as results: each response (with its shared
/// provenance entry copied in under `PROVENANCE_PLACEMENT_SHARED`) or the
/// item's error; an item with neither is an error too.
fn item_results<R>(
    items: impl Iterator<Item = (Option<Result<R, oxbind_proto::google::rpc::Status>>, u32)>,
    shared: &[Provenance],
    placement: ProvenancePlacement,
    set_provenance: impl Fn(&mut R, Provenance),
) -> Vec<ItemResult<R>> {
    items
        .map(|(outcome, index)| match outcome {
            Some(Ok(mut response)) => {
                if placement == ProvenancePlacement::Shared {
                    set_provenance(&mut response, shared_entry(shared, index)?);
                }
                Ok(response)
            }
            Some(Err(status)) => Err(ClientError::from_rpc_status(&status)),
            None => Err(missing_item()),
        })
        .collect()
}

/// The shared provenance entry an item names.
fn shared_entry(shared: &[Provenance], index: u32) -> Result<Provenance, ClientError> {
    shared
        .get(index as usize)
        .cloned()
        .ok_or_else(|| ClientError::Status {
            code: Code::Internal,
            message: format!(
                "batch item names shared provenance entry {index}, but the answer has {}",
                shared.len()
            ),
            violations: Vec::new(),
            info: None,
        })
}

fn missing_item() -> ClientError {
    ClientError::Status {
        code: Code::Internal,
        message: "batch item carried neither a response nor an error".to_owned(),
        violations: Vec::new(),
        info: None,
    }
}
