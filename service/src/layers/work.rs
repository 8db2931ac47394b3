//! How much work a request is, read from its encoded message before it is
//! decoded, in items:
//!
//! - a batch (`BatchSaturationFromTension`, `BatchTensionFromSaturation`):
//!   its items;
//! - `EstimateP50`: its measured pairs;
//! - `SampleCurve`: its condition sets (at least one) times its points, one
//!   item per [`CURVE_POINTS_PER_ITEM`] points;
//! - any other call: one.
//!
//! The count comes first because decoding is itself the work to bound: a
//! 4 MiB message of two-byte empty items would decode into two million
//! structs before the batch limit could refuse it. The walk reads only the
//! top-level field keys and lengths (prost's own wire primitives), so it
//! costs no allocation whatever the message holds.

use prost::{
    bytes::Buf,
    encoding::{decode_key, decode_varint, skip_field, DecodeContext, WireType},
};

/// Curve points that count as one item of work: a point is two numbers,
/// about a hundredth of a batch item's answer.
pub const CURVE_POINTS_PER_ITEM: u64 = 100;

/// Points per curve when the request does not say (`SampleCurveRequest`'s
/// documented default).
const CURVE_DEFAULT_POINTS: u64 = 100;

/// Points per curve at most (the hard limit the API enforces).
const CURVE_MAX_POINTS: u64 = 10_000;

/// Field number of each request's repeated field (`requests`,
/// `condition_sets`, `pairs`: all 1 in `oxbind.v1`).
const ENTRIES_FIELD: u32 = 1;

/// Field number of `SampleCurveRequest.point_count`.
const POINT_COUNT_FIELD: u32 = 6;

/// The work of a request to the method at `path`, whose encoded message is
/// `message` (without the gRPC prefix). At least one.
pub fn items_of(path: &str, message: &[u8]) -> u64 {
    let method = path.rsplit('/').next().unwrap_or("");
    let service_is_dissociation = path.starts_with("/oxbind.v1.DissociationService/");
    if !service_is_dissociation {
        return 1;
    }
    match method {
        "BatchSaturationFromTension" | "BatchTensionFromSaturation" | "EstimateP50" => {
            walk(message).entries.max(1)
        }
        "SampleCurve" => {
            let fields = walk(message);
            let points = match fields.point_count {
                None | Some(0) => CURVE_DEFAULT_POINTS,
                Some(n) => n.clamp(2, CURVE_MAX_POINTS),
            };
            (fields.entries.max(1) * points).div_ceil(CURVE_POINTS_PER_ITEM)
        }
        _ => 1,
    }
}

/// What the walk found at the top level of a message.
#[derive(Debug, Default, PartialEq)]
struct TopLevel {
    /// Length-delimited entries of [`ENTRIES_FIELD`].
    entries: u64,
    /// The last [`POINT_COUNT_FIELD`] varint, if any.
    point_count: Option<u64>,
}

/// Walk the top-level fields of `message`. A malformed message stops the
/// walk with what was counted so far (the decoder will refuse it anyway).
fn walk(mut message: &[u8]) -> TopLevel {
    let mut found = TopLevel::default();
    while message.has_remaining() {
        let Ok((field, wire_type)) = decode_key(&mut message) else {
            break;
        };
        match (field, wire_type) {
            (ENTRIES_FIELD, WireType::LengthDelimited) => found.entries += 1,
            (POINT_COUNT_FIELD, WireType::Varint) => {
                let Ok(value) = decode_varint(&mut message) else {
                    break;
                };
                // An int32 on the wire; a negative one is refused by the API.
                found.point_count = Some(value as i32 as i64).map(|v| v.max(0) as u64);
                continue;
            }
            _ => {}
        }
        if skip_field(wire_type, field, &mut message, DecodeContext::default()).is_err() {
            break;
        }
    }
    found
}

#[cfg(test)]
mod tests {
    use super::*;
    use oxbind_proto::v1::{
        BatchSaturationFromTensionRequest, BloodConditions, EstimateP50Request, MeasuredPair,
        SampleCurveRequest, SaturationFromTensionRequest,
    };
    use prost::Message;

    const BATCH: &str = "/oxbind.v1.DissociationService/BatchSaturationFromTension";
    const CURVE: &str = "/oxbind.v1.DissociationService/SampleCurve";

    #[test]
    fn a_batch_counts_its_items_even_empty_ones() {
        let batch = BatchSaturationFromTensionRequest {
            requests: vec![SaturationFromTensionRequest::default(); 1234],
            ..Default::default()
        };
        assert_eq!(items_of(BATCH, &batch.encode_to_vec()), 1234);
        assert_eq!(items_of(BATCH, &[]), 1, "an empty batch is still one call");
    }

    #[test]
    fn pairs_and_curve_points_are_counted() {
        let pairs = EstimateP50Request {
            pairs: vec![MeasuredPair::default(); 7],
            ..Default::default()
        };
        assert_eq!(
            items_of(
                "/oxbind.v1.DissociationService/EstimateP50",
                &pairs.encode_to_vec()
            ),
            7
        );
        let curve = SampleCurveRequest {
            condition_sets: vec![BloodConditions::default(); 10],
            point_count: 10_000,
            ..Default::default()
        };
        assert_eq!(items_of(CURVE, &curve.encode_to_vec()), 1_000);
        let default_curve = SampleCurveRequest::default();
        assert_eq!(items_of(CURVE, &default_curve.encode_to_vec()), 1);
        let negative = SampleCurveRequest {
            point_count: -5,
            ..Default::default()
        };
        assert_eq!(items_of(CURVE, &negative.encode_to_vec()), 1);
    }

    #[test]
    fn single_calls_and_other_services_count_one() {
        let single = SaturationFromTensionRequest::default().encode_to_vec();
        assert_eq!(
            items_of(
                "/oxbind.v1.DissociationService/SaturationFromTension",
                &single
            ),
            1
        );
        assert_eq!(
            items_of("/oxbind.v1.ModelCatalogService/ListModels", &[]),
            1
        );
    }

    #[test]
    fn a_malformed_message_counts_what_came_before_the_damage() {
        let batch = BatchSaturationFromTensionRequest {
            requests: vec![SaturationFromTensionRequest::default(); 3],
            ..Default::default()
        };
        let mut bytes = batch.encode_to_vec();
        bytes.extend_from_slice(&[0x0a, 0xff]); // an entry claiming more than is left
        assert_eq!(items_of(BATCH, &bytes), 4);
    }
}
