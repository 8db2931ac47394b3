//! The gRPC door: tonic's service traits for the v1 services. Each
//! method is one call into the transport-neutral [`crate::api`] function of
//! its RPC; a refusal becomes a gRPC status in one place,
//! [`InvalidRequest::into_status`] (`google.rpc.Status` in the
//! `grpc-status-details-bin` trailer).

use oxbind_proto::v1::{
    dissociation_service_server::DissociationService,
    model_catalog_service_server::ModelCatalogService,
    oxygen_transport_service_server::OxygenTransportService, BatchSaturationFromTensionRequest,
    BatchSaturationFromTensionResponse, BatchTensionFromSaturationRequest,
    BatchTensionFromSaturationResponse, CorrectForTemperatureRequest,
    CorrectForTemperatureResponse, EstimateP50Request, EstimateP50Response, GasExchangeRequest,
    GasExchangeResponse, GetServerSettingsRequest, GetServerSettingsResponse, ListModelsRequest,
    ListModelsResponse, OxygenContentRequest, OxygenContentResponse, SampleCurveRequest,
    SampleCurveResponse, SaturationFromTensionRequest, SaturationFromTensionResponse,
    ShiftFactorsRequest, ShiftFactorsResponse, TensionFromSaturationRequest,
    TensionFromSaturationResponse,
};
use tonic::{Request, Response, Status};

use crate::{
    api::{
        catalog, dissociation,
        server_settings::{compute_get_server_settings, ReportedSettings},
        status::InvalidRequest,
        transport,
    },
    config::Config,
};

use crate::api::consistency;
use oxbind_proto::v1::{
    consistency_service_server::ConsistencyService, BatchCheckBloodGasRequest,
    BatchCheckBloodGasResponse, CheckBloodGasRequest, CheckBloodGasResponse,
};

/// The answer of one RPC function as tonic wants it.
fn answer<T>(outcome: Result<T, InvalidRequest>) -> Result<Response<T>, Status> {
    outcome
        .map(Response::new)
        .map_err(InvalidRequest::into_status)
}

/// `oxbind.v1.DissociationService` over gRPC.
#[derive(Debug, Clone)]
pub struct DissociationApi {
    max_batch_items: usize,
}

impl DissociationApi {
    /// A handler refusing batches of more than `max_batch_items` items.
    pub fn new(max_batch_items: usize) -> Self {
        Self { max_batch_items }
    }
}

#[tonic::async_trait]
impl DissociationService for DissociationApi {
    async fn saturation_from_tension(
        &self,
        request: Request<SaturationFromTensionRequest>,
    ) -> Result<Response<SaturationFromTensionResponse>, Status> {
        answer(dissociation::compute_saturation_from_tension(
            request.get_ref(),
        ))
    }

    async fn tension_from_saturation(
        &self,
        request: Request<TensionFromSaturationRequest>,
    ) -> Result<Response<TensionFromSaturationResponse>, Status> {
        answer(dissociation::compute_tension_from_saturation(
            request.get_ref(),
        ))
    }

    async fn sample_curve(
        &self,
        request: Request<SampleCurveRequest>,
    ) -> Result<Response<SampleCurveResponse>, Status> {
        answer(dissociation::compute_sample_curve(request.get_ref()))
    }

    async fn shift_factors(
        &self,
        request: Request<ShiftFactorsRequest>,
    ) -> Result<Response<ShiftFactorsResponse>, Status> {
        answer(dissociation::compute_shift_factors(request.get_ref()))
    }

    async fn estimate_p50(
        &self,
        request: Request<EstimateP50Request>,
    ) -> Result<Response<EstimateP50Response>, Status> {
        answer(dissociation::compute_estimate_p50(request.get_ref()))
    }

    async fn correct_for_temperature(
        &self,
        request: Request<CorrectForTemperatureRequest>,
    ) -> Result<Response<CorrectForTemperatureResponse>, Status> {
        answer(dissociation::compute_correct_for_temperature(
            request.get_ref(),
        ))
    }

    async fn batch_saturation_from_tension(
        &self,
        request: Request<BatchSaturationFromTensionRequest>,
    ) -> Result<Response<BatchSaturationFromTensionResponse>, Status> {
        answer(dissociation::compute_batch_saturation_from_tension(
            request.get_ref(),
            self.max_batch_items,
        ))
    }

    async fn batch_tension_from_saturation(
        &self,
        request: Request<BatchTensionFromSaturationRequest>,
    ) -> Result<Response<BatchTensionFromSaturationResponse>, Status> {
        answer(dissociation::compute_batch_tension_from_saturation(
            request.get_ref(),
            self.max_batch_items,
        ))
    }
}

/// `oxbind.v1.OxygenTransportService` over gRPC.
#[derive(Debug, Clone, Default)]
pub struct TransportApi;

impl TransportApi {
    /// A new handler.
    pub fn new() -> Self {
        Self
    }
}

#[tonic::async_trait]
impl OxygenTransportService for TransportApi {
    async fn oxygen_content(
        &self,
        request: Request<OxygenContentRequest>,
    ) -> Result<Response<OxygenContentResponse>, Status> {
        answer(transport::compute_oxygen_content(request.get_ref()))
    }

    async fn gas_exchange(
        &self,
        request: Request<GasExchangeRequest>,
    ) -> Result<Response<GasExchangeResponse>, Status> {
        answer(transport::compute_gas_exchange(request.get_ref()))
    }
}

/// `oxbind.v1.ModelCatalogService` over gRPC.
#[derive(Debug, Clone)]
pub struct CatalogApi {
    max_batch_items: usize,
    settings: std::sync::Arc<ReportedSettings>,
}

impl CatalogApi {
    /// A catalog that reports `max_batch_items` as the batch limit, and the
    /// default configuration's settings.
    pub fn new(max_batch_items: usize) -> Self {
        Self::from_config(&Config {
            max_batch_items,
            ..Config::default()
        })
    }

    /// A catalog that reports the limits and settings of `config`.
    pub fn from_config(config: &Config) -> Self {
        Self {
            max_batch_items: config.max_batch_items,
            settings: std::sync::Arc::new(ReportedSettings::from_config(config)),
        }
    }
}

#[tonic::async_trait]
impl ModelCatalogService for CatalogApi {
    async fn list_models(
        &self,
        request: Request<ListModelsRequest>,
    ) -> Result<Response<ListModelsResponse>, Status> {
        Ok(Response::new(catalog::compute_list_models(
            request.get_ref(),
            self.max_batch_items,
        )))
    }

    async fn get_server_settings(
        &self,
        request: Request<GetServerSettingsRequest>,
    ) -> Result<Response<GetServerSettingsResponse>, Status> {
        Ok(Response::new(compute_get_server_settings(
            request.get_ref(),
            &self.settings,
        )))
    }
}

/// `oxbind.v1.ConsistencyService` over gRPC.
#[derive(Debug, Clone)]
pub struct ConsistencyApi {
    max_batch_items: usize,
}

impl ConsistencyApi {
    /// A handler refusing batches of more than `max_batch_items` items (and
    /// of more than [`consistency::MAX_BATCH_ITEMS`] in any case).
    pub fn new(max_batch_items: usize) -> Self {
        Self { max_batch_items }
    }
}

#[tonic::async_trait]
impl ConsistencyService for ConsistencyApi {
    async fn check_blood_gas(
        &self,
        request: Request<CheckBloodGasRequest>,
    ) -> Result<Response<CheckBloodGasResponse>, Status> {
        answer(consistency::compute_check_blood_gas(request.get_ref()))
    }

    async fn batch_check_blood_gas(
        &self,
        request: Request<BatchCheckBloodGasRequest>,
    ) -> Result<Response<BatchCheckBloodGasResponse>, Status> {
        answer(consistency::compute_batch_check_blood_gas(
            request.get_ref(),
            self.max_batch_items,
        ))
    }
}
