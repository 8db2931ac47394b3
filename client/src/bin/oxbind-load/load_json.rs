//! The load generator's JSON side, for `--protocol connect --encoding json`:
//! requests written once, before the measured window, in the canonical
//! proto3 JSON mapping by the serde code `pbjson-build` generated for the
//! contract's messages; answers checked through narrow views that read only
//! the fields checked and skip the rest.
//!
//! As with the protobuf walk of `load_wire`, this keeps the generator's
//! share of a shared machine small (an answer's provenance is never turned
//! into strings) while the checks stay real: every answer is parsed to its
//! end as JSON, and must hold what the protobuf checks ask for (a saturation
//! strictly between 0 and 1; each batch item a checked response or an error,
//! counted by its code). The views' field names are the mapping's
//! lowerCamelCase names; the tests below hold them to what pbjson writes.

use oxbind_client::Code;
use prost::bytes::Bytes;
use serde::{Deserialize, Serialize};

use crate::load_wire::{BadAnswer, BatchTally};

/// Write `message` once in its proto3 JSON form, for sending as it is.
pub(crate) fn encode(message: &impl Serialize) -> Bytes {
    Bytes::from(serde_json::to_vec(message).expect("generated messages serialise as JSON"))
}

/// The fields of a `SaturationFromTensionResponse` that are checked.
#[derive(Deserialize)]
#[serde(rename_all = "camelCase")]
struct SaturationView {
    /// Left out when 0, as the mapping leaves out default values.
    #[serde(default)]
    saturation_fraction: Option<f64>,
}

impl SaturationView {
    fn check(&self) -> Result<(), BadAnswer> {
        match self.saturation_fraction {
            Some(s) if s > 0.0 && s < 1.0 => Ok(()),
            _ => Err(BadAnswer::Unexpected),
        }
    }
}

/// The fields of a `BatchSaturationFromTensionResponse` that are checked.
#[derive(Deserialize)]
struct BatchView {
    #[serde(default)]
    results: Vec<ResultView>,
}

/// A `SaturationFromTensionResult`: the oneof's `response` or `error`.
#[derive(Deserialize)]
struct ResultView {
    #[serde(default)]
    response: Option<SaturationView>,
    #[serde(default)]
    error: Option<StatusView>,
}

/// A `google.rpc.Status`: its code (left out when 0).
#[derive(Deserialize)]
struct StatusView {
    #[serde(default)]
    code: i32,
}

/// Check a `SaturationFromTensionResponse` in JSON: its saturation lies in (0, 1).
pub(crate) fn check_saturation_response(bytes: &[u8]) -> Result<(), BadAnswer> {
    serde_json::from_slice::<SaturationView>(bytes)
        .map_err(|_| BadAnswer::Malformed)?
        .check()
}

/// Check a `BatchSaturationFromTensionResponse` in JSON, item by item.
pub(crate) fn check_batch_response(bytes: &[u8]) -> Result<BatchTally, BadAnswer> {
    let batch: BatchView = serde_json::from_slice(bytes).map_err(|_| BadAnswer::Malformed)?;
    let mut tally = BatchTally::default();
    for result in batch.results {
        match (result.response, result.error) {
            (Some(response), None) if response.check().is_ok() => tally.computed += 1,
            (None, Some(status)) => tally.refused.push(Code::from(status.code)),
            _ => tally.bad += 1,
        }
    }
    Ok(tally)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::load_wire;
    use oxbind_client::v1::{
        saturation_from_tension_result::Result as Outcome, BatchSaturationFromTensionResponse,
        Provenance, Quantity, SaturationFromTensionRequest, SaturationFromTensionResponse,
        SaturationFromTensionResult,
    };
    use prost::Message;

    fn response(saturation: f64) -> SaturationFromTensionResponse {
        SaturationFromTensionResponse {
            saturation_fraction: saturation,
            hill_slope: 2.7,
            p50_at_conditions: Some(Quantity::mm_hg(26.8)),
            provenance: Some(Provenance {
                model_id: "severinghaus-1979".into(),
                ..Default::default()
            }),
            ..Default::default()
        }
    }

    fn computed(saturation: f64) -> SaturationFromTensionResult {
        SaturationFromTensionResult {
            result: Some(Outcome::Response(response(saturation))),
            shared_provenance_index: 1,
        }
    }

    /// pbjson's JSON of a message and prost's encoding of it pass or fail
    /// the same checks, so the views read the names pbjson writes.
    #[test]
    fn a_single_answer_is_judged_as_its_protobuf_form_is() {
        for saturation in [0.97, 0.0, 1.0, 1e-9] {
            let answer = response(saturation);
            let json = serde_json::to_vec(&answer).unwrap();
            assert_eq!(
                check_saturation_response(&json),
                load_wire::check_saturation_response(&answer.encode_to_vec()),
                "{}",
                String::from_utf8_lossy(&json)
            );
        }
        assert_eq!(check_saturation_response(&encode(&response(0.97))), Ok(()));
        assert_eq!(
            check_saturation_response(&encode(&response(0.0))),
            Err(BadAnswer::Unexpected)
        );
    }

    #[test]
    fn a_batch_answer_is_counted_item_by_item_as_its_protobuf_form_is() {
        let refused = SaturationFromTensionResult {
            result: Some(Outcome::Error(oxbind_proto::google::rpc::Status {
                code: Code::InvalidArgument as i32,
                message: "po2.value: outside".into(),
                details: vec![],
            })),
            shared_provenance_index: 0,
        };
        let answer = BatchSaturationFromTensionResponse {
            results: vec![
                computed(0.9),
                refused,
                computed(1.5),
                SaturationFromTensionResult::default(),
                computed(0.4),
            ],
            shared_provenance: vec![Default::default()],
        };
        let tally = check_batch_response(&encode(&answer)).expect("well formed");
        assert_eq!(tally.computed, 2);
        assert_eq!(tally.refused, vec![Code::InvalidArgument]);
        // The saturation of 1.5 and the empty result.
        assert_eq!(tally.bad, 2);
        assert_eq!(
            Ok(tally),
            load_wire::check_batch_response(&answer.encode_to_vec())
        );
        let empty = BatchSaturationFromTensionResponse::default();
        assert_eq!(
            check_batch_response(&encode(&empty)),
            Ok(BatchTally::default())
        );
    }

    #[test]
    fn an_answer_that_is_not_json_or_breaks_off_is_malformed() {
        let json = encode(&response(0.5));
        assert_eq!(
            check_saturation_response(&json[..json.len() - 2]),
            Err(BadAnswer::Malformed)
        );
        assert_eq!(
            check_batch_response(&response(0.5).encode_to_vec()),
            Err(BadAnswer::Malformed)
        );
        assert_eq!(
            check_batch_response(br#"{"results": [{"error": {"code": "three"}}]}"#),
            Err(BadAnswer::Malformed)
        );
    }

    /// The request is the mapping's JSON, which pbjson reads back to the
    /// same message.
    #[test]
    fn a_request_is_written_in_the_proto3_json_mapping() {
        let request = SaturationFromTensionRequest {
            po2: Some(Quantity::kpa(8.0)),
            ..Default::default()
        };
        let json = encode(&request);
        let value: serde_json::Value = serde_json::from_slice(&json).unwrap();
        assert_eq!(value["po2"]["unit"], "kPa");
        assert_eq!(value["po2"]["value"], 8.0);
        let back: SaturationFromTensionRequest = serde_json::from_slice(&json).unwrap();
        assert_eq!(back, request);
    }
}
