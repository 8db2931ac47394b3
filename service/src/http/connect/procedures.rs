//! The Connect procedures: every v1 RPC, each one call into its
//! transport-neutral [`crate::api`] function, and the service that reads a
//! request, calls its procedure and writes the answer.

use std::{convert::Infallible, future::Future, pin::Pin, task::Context, task::Poll};

use http::{header, HeaderValue, Request, Response};
use prost::Message;
use serde::{de::DeserializeOwned, Serialize};
use tonic::{body::Body, codegen::Bytes, Code, Status};
use tower::Service;

use super::{request, Codec};
use crate::{
    api::{
        catalog, dissociation, server_settings, server_settings::ReportedSettings,
        status::InvalidRequest, transport,
    },
    layers::{call::CallOutcome, door::DoorLayers, work},
};

use crate::api::consistency;

/// What a procedure needs besides the request: the configured limits, and
/// the settings GetServerSettings reports.
#[derive(Debug, Clone)]
pub struct Limits {
    /// Largest batch accepted (`--max-batch-items`).
    pub max_batch_items: usize,
    /// Largest request message accepted, in bytes as sent
    /// (`--max-decoded-message-bytes`).
    pub max_request_bytes: usize,
    /// Largest response message sent, in bytes as sent
    /// (`--max-encoded-message-bytes`).
    pub max_response_bytes: usize,
    /// The settings GetServerSettings reports.
    pub settings: std::sync::Arc<ReportedSettings>,
}

/// One call of a procedure: the request message as sent, its codec, and the
/// limits.
struct Call<'a> {
    codec: Codec,
    message: &'a [u8],
    limits: &'a Limits,
}

impl Call<'_> {
    /// Decode the request, compute it with `compute`, encode the answer.
    fn unary<Req, Resp>(
        &self,
        compute: impl FnOnce(&Req) -> Result<Resp, InvalidRequest>,
    ) -> Result<Bytes, Status>
    where
        Req: Message + Default + DeserializeOwned,
        Resp: Message + Serialize,
    {
        let request: Req = self.codec.decode(self.message)?;
        let response = compute(&request).map_err(InvalidRequest::into_status)?;
        let bytes = self.codec.encode(&response)?;
        if bytes.len() > self.limits.max_response_bytes {
            return Err(Status::resource_exhausted(format!(
                "the response is larger than the limit of {} bytes; split the request",
                self.limits.max_response_bytes
            )));
        }
        Ok(bytes)
    }
}

/// A procedure: decode, compute, encode.
type Procedure = fn(&Call<'_>) -> Result<Bytes, Status>;

/// Every v1 RPC by its Connect path (`/<package>.<Service>/<Method>`). All
/// are free of side effects (`idempotency_level = NO_SIDE_EFFECTS`), so all
/// take the GET form too.
const PROCEDURES: [(&str, Procedure); 14] = [
    (
        "/oxbind.v1.DissociationService/SaturationFromTension",
        |call| call.unary(dissociation::compute_saturation_from_tension),
    ),
    (
        "/oxbind.v1.DissociationService/TensionFromSaturation",
        |call| call.unary(dissociation::compute_tension_from_saturation),
    ),
    ("/oxbind.v1.DissociationService/SampleCurve", |call| {
        call.unary(dissociation::compute_sample_curve)
    }),
    ("/oxbind.v1.DissociationService/ShiftFactors", |call| {
        call.unary(dissociation::compute_shift_factors)
    }),
    ("/oxbind.v1.DissociationService/EstimateP50", |call| {
        call.unary(dissociation::compute_estimate_p50)
    }),
    (
        "/oxbind.v1.DissociationService/CorrectForTemperature",
        |call| call.unary(dissociation::compute_correct_for_temperature),
    ),
    (
        "/oxbind.v1.DissociationService/BatchSaturationFromTension",
        |call| {
            call.unary(|r| {
                dissociation::compute_batch_saturation_from_tension(r, call.limits.max_batch_items)
            })
        },
    ),
    (
        "/oxbind.v1.DissociationService/BatchTensionFromSaturation",
        |call| {
            call.unary(|r| {
                dissociation::compute_batch_tension_from_saturation(r, call.limits.max_batch_items)
            })
        },
    ),
    ("/oxbind.v1.OxygenTransportService/OxygenContent", |call| {
        call.unary(transport::compute_oxygen_content)
    }),
    ("/oxbind.v1.OxygenTransportService/GasExchange", |call| {
        call.unary(transport::compute_gas_exchange)
    }),
    ("/oxbind.v1.ModelCatalogService/ListModels", |call| {
        call.unary(|r| Ok(catalog::compute_list_models(r, call.limits.max_batch_items)))
    }),
    ("/oxbind.v1.ModelCatalogService/GetServerSettings", |call| {
        call.unary(|r| {
            Ok(server_settings::compute_get_server_settings(
                r,
                &call.limits.settings,
            ))
        })
    }),
    ("/oxbind.v1.ConsistencyService/CheckBloodGas", |call| {
        call.unary(consistency::compute_check_blood_gas)
    }),
    ("/oxbind.v1.ConsistencyService/BatchCheckBloodGas", |call| {
        call.unary(|r| consistency::compute_batch_check_blood_gas(r, call.limits.max_batch_items))
    }),
];

/// The path of every procedure.
pub fn paths() -> impl Iterator<Item = &'static str> {
    PROCEDURES.iter().map(|(path, _)| *path)
}

/// The procedure at `path`, if there is one.
fn procedure(path: &str) -> Option<Procedure> {
    PROCEDURES
        .iter()
        .find(|(known, _)| *known == path)
        .map(|(_, procedure)| *procedure)
}

/// The service that answers Connect calls. It speaks to the per-call layer
/// around it in that layer's terms: a refusal is a gRPC trailers-only
/// status, and every answer carries its [`CallOutcome`], so the call is
/// logged, measured and counted exactly as a gRPC call is;
/// [`super::ConnectDoor`] turns a refusal into the Connect shape.
///
/// Each call is admitted as a gRPC call is ([`DoorLayers`]): its body read
/// under the request-byte limit and the arrival timeout, its items counted
/// from the message before it is decoded, a call slot and its connection's
/// share taken; a call of many items is decoded, computed and encoded on
/// the compute pool.
#[derive(Debug, Clone)]
pub struct Procedures {
    limits: Limits,
    layers: DoorLayers,
}

impl Procedures {
    /// Answer every v1 procedure within `limits`, admitted by `layers`.
    pub fn new(limits: Limits, layers: DoorLayers) -> Self {
        Self { limits, layers }
    }
}

impl Service<Request<Body>> for Procedures {
    type Response = Response<Body>;
    type Error = Infallible;
    type Future = Pin<Box<dyn Future<Output = Result<Response<Body>, Infallible>> + Send>>;

    fn poll_ready(&mut self, _cx: &mut Context<'_>) -> Poll<Result<(), Infallible>> {
        Poll::Ready(Ok(()))
    }

    fn call(&mut self, request: Request<Body>) -> Self::Future {
        let (limits, layers) = (self.limits.clone(), self.layers.clone());
        Box::pin(async move {
            Ok(match answer(request, limits, &layers).await {
                Ok(response) => response,
                Err(status) => refused(&status),
            })
        })
    }
}

/// A refusal as the per-call layer reads it.
fn refused(status: &Status) -> Response<Body> {
    let mut response = status.clone().into_http();
    response.extensions_mut().insert(CallOutcome(status.code()));
    response
}

/// Find the procedure, read the request and admit it, compute, write the
/// answer.
async fn answer(
    request: Request<Body>,
    limits: Limits,
    layers: &DoorLayers,
) -> Result<Response<Body>, Status> {
    let Some(procedure) = procedure(request.uri().path()) else {
        return Err(Status::unimplemented(
            "no Connect procedure at this path; the procedures are the v1 RPCs, /oxbind.v1.<Service>/<Method>",
        ));
    };
    let (parts, body) = request.into_parts();
    let read = request::read(&parts, body, limits.max_request_bytes, layers).await?;
    let path = parts.uri.path();
    let items = match read.codec {
        Codec::Json => work::items_of_json(path, &read.message),
        Codec::Proto => work::items_of(path, &read.message),
    };
    let held = layers.admit(&parts.extensions, items, read.reserved)?;
    let (codec, message) = (read.codec, read.message);
    let encoded = layers
        .compute(items, move || {
            procedure(&Call {
                codec,
                message: &message,
                limits: &limits,
            })
        })
        .await??;
    let body = read.coding.compress(encoded)?;
    let mut response = Response::new(Body::new(http_body_util::Full::new(body)));
    let headers = response.headers_mut();
    headers.insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static(codec.content_type()),
    );
    if let Some(coding) = read.coding.header_value() {
        headers.insert(header::CONTENT_ENCODING, HeaderValue::from_static(coding));
    }
    response.extensions_mut().insert(CallOutcome(Code::Ok));
    Ok(DoorLayers::holding(response, held))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_rpc_of_the_contract_is_a_procedure() {
        use prost_types::FileDescriptorSet;
        let set = FileDescriptorSet::decode(oxbind_proto::FILE_DESCRIPTOR_SET).unwrap();
        let mut contract: Vec<String> = set
            .file
            .iter()
            .filter(|f| f.package() == "oxbind.v1")
            .flat_map(|f| {
                f.service.iter().flat_map(|s| {
                    s.method
                        .iter()
                        .map(move |m| format!("/oxbind.v1.{}/{}", s.name(), m.name()))
                })
            })
            .collect();
        contract.sort();
        let mut served: Vec<String> = paths().map(str::to_owned).collect();
        served.sort();
        assert_eq!(served, contract);
    }
}
