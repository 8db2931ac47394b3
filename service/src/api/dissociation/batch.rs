//! The two batch RPCs: every item computed by the single call's function,
//! in order; a bad item gets its own refusal and the rest still compute.

use oxbind_proto::v1::{
    saturation_from_tension_result, tension_from_saturation_result,
    BatchSaturationFromTensionRequest, BatchSaturationFromTensionResponse,
    BatchTensionFromSaturationRequest, BatchTensionFromSaturationResponse,
    SaturationFromTensionResult, TensionFromSaturationResult,
};

use super::{
    item_provenance::{batch_placement, ItemProvenance, ProvenanceKey},
    point,
};
use crate::{
    api::{
        observe,
        status::{batch_refusal, InvalidRequest, REASON_BATCH_EMPTY, REASON_BATCH_TOO_LARGE},
        uncertainty::Call,
    },
    instruments,
};

/// BatchSaturationFromTension: at most `max_batch_items` items.
pub fn compute_batch_saturation_from_tension(
    request: &BatchSaturationFromTensionRequest,
    max_batch_items: usize,
) -> Result<BatchSaturationFromTensionResponse, InvalidRequest> {
    check_batch_size(request.requests.len(), max_batch_items)?;
    instruments::record_batch_items(
        "oxbind.v1.DissociationService/BatchSaturationFromTension",
        request.requests.len() as u64,
    );
    let (results, shared_provenance) = compute_batch(
        &request.requests,
        request.provenance_placement,
        |item, placement| point::saturation_from_tension(item, placement, Call::BatchItem),
        |outcome, shared_provenance_index| SaturationFromTensionResult {
            result: Some(match outcome {
                Ok(response) => saturation_from_tension_result::Result::Response(response),
                Err(status) => saturation_from_tension_result::Result::Error(status),
            }),
            shared_provenance_index,
        },
    )?;
    Ok(BatchSaturationFromTensionResponse {
        results,
        shared_provenance,
    })
}

/// BatchTensionFromSaturation: at most `max_batch_items` items.
pub fn compute_batch_tension_from_saturation(
    request: &BatchTensionFromSaturationRequest,
    max_batch_items: usize,
) -> Result<BatchTensionFromSaturationResponse, InvalidRequest> {
    check_batch_size(request.requests.len(), max_batch_items)?;
    instruments::record_batch_items(
        "oxbind.v1.DissociationService/BatchTensionFromSaturation",
        request.requests.len() as u64,
    );
    let (results, shared_provenance) = compute_batch(
        &request.requests,
        request.provenance_placement,
        |item, placement| point::tension_from_saturation(item, placement, Call::BatchItem),
        |outcome, shared_provenance_index| TensionFromSaturationResult {
            result: Some(match outcome {
                Ok(response) => tension_from_saturation_result::Result::Response(response),
                Err(status) => tension_from_saturation_result::Result::Error(status),
            }),
            shared_provenance_index,
        },
    )?;
    Ok(BatchTensionFromSaturationResponse {
        results,
        shared_provenance,
    })
}

/// Refuse an empty batch, or one over `max_batch_items`.
fn check_batch_size(len: usize, max_batch_items: usize) -> Result<(), InvalidRequest> {
    if len == 0 {
        return Err(batch_refusal(
            REASON_BATCH_EMPTY,
            "requests must hold at least one item".to_owned(),
            max_batch_items,
        ));
    }
    if len > max_batch_items {
        return Err(batch_refusal(
            REASON_BATCH_TOO_LARGE,
            format!(
                "requests holds more than the limit of {max_batch_items} items; split the batch"
            ),
            max_batch_items,
        ));
    }
    Ok(())
}

/// Compute every item of a batch with `compute`, in order, and wrap each
/// outcome (the response, or the refusal's status with its field paths under
/// `requests[i]`) with its shared provenance index by `wrap`; the shared
/// entries come back beside the results. `raw_placement` is the request's
/// `provenance_placement`; an unknown value refuses the batch.
fn compute_batch<Req, Resp, Item>(
    requests: &[Req],
    raw_placement: i32,
    compute: impl Fn(&Req, ItemProvenance) -> Result<(Resp, ProvenanceKey), InvalidRequest>,
    wrap: impl Fn(Result<Resp, oxbind_proto::google::rpc::Status>, u32) -> Item,
) -> Result<(Vec<Item>, Vec<oxbind_proto::v1::Provenance>), InvalidRequest> {
    let (placement, mut shared) = batch_placement(raw_placement)?;
    let results = requests
        .iter()
        .enumerate()
        .map(|(index, item)| match compute(item, placement) {
            Ok((response, key)) => wrap(Ok(response), shared.index_for(placement, &key)),
            Err(refusal) => wrap(Err(item_refusal(refusal, index)), 0),
        })
        .collect();
    Ok((results, shared.into_entries()))
}

/// The status of a refused batch item, its field paths prefixed by the
/// item's place (`requests[3].po2.value`).
fn item_refusal(refusal: InvalidRequest, index: usize) -> oxbind_proto::google::rpc::Status {
    let refusal = refusal.within_item("requests", index);
    observe::refused_item(&refusal);
    refusal.to_rpc_status()
}
