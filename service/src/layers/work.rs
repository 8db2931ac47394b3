//! How much work a request is, read from its encoded message before it is
//! decoded, in items:
//!
//! - a batch (`BatchSaturationFromTension`, `BatchTensionFromSaturation`,
//!   `BatchCheckBloodGas`): its items;
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
//!
//! The Connect door's JSON messages are counted the same way before they
//! are decoded ([`items_of_json`]): serde_json walks the top-level object,
//! counting the entries of the repeated field (by its JSON name or its
//! proto name, as the proto3 JSON mapping accepts both) and skipping every
//! value without building it.

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
/// `condition_sets`, `pairs`: all 1 in `oxbind.v1`, BatchCheckBloodGas's
/// `requests` too).
const ENTRIES_FIELD: u32 = 1;

/// Field number of `SampleCurveRequest.point_count`.
const POINT_COUNT_FIELD: u32 = 6;

/// The work of a request to the method at `path`, whose encoded message is
/// `message` (without the gRPC prefix). At least one.
pub fn items_of(path: &str, message: &[u8]) -> u64 {
    match counted(path) {
        Some(counted) => counted.items(&walk(message)),
        None => 1,
    }
}

/// The work of a request to the method at `path` whose message is `json`
/// (the proto3 JSON mapping, as the Connect door receives it). At least
/// one; JSON that is not a message counts what came before the damage.
pub fn items_of_json(path: &str, json: &[u8]) -> u64 {
    let Some(counted) = counted(path) else {
        return 1;
    };
    let mut found = TopLevel::default();
    let mut reader = serde_json::Deserializer::from_slice(json);
    let _ = serde::de::DeserializeSeed::deserialize(
        json_walk::Object {
            entries_names: counted.json_names(),
            found: &mut found,
        },
        &mut reader,
    );
    counted.items(&found)
}

/// The methods whose work is more than one item.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Counted {
    /// A batch: its `requests`.
    Batch,
    /// `EstimateP50`: its `pairs`.
    Pairs,
    /// `SampleCurve`: its `condition_sets` times its points.
    Curve,
}

/// Which count applies to the method at `path`, if any.
fn counted(path: &str) -> Option<Counted> {
    if path == "/oxbind.v1.ConsistencyService/BatchCheckBloodGas" {
        return Some(Counted::Batch);
    }
    let method = path.strip_prefix("/oxbind.v1.DissociationService/")?;
    match method {
        "BatchSaturationFromTension" | "BatchTensionFromSaturation" => Some(Counted::Batch),
        "EstimateP50" => Some(Counted::Pairs),
        "SampleCurve" => Some(Counted::Curve),
        _ => None,
    }
}

impl Counted {
    /// The items of a message whose top level is `fields`.
    fn items(self, fields: &TopLevel) -> u64 {
        match self {
            Counted::Batch | Counted::Pairs => fields.entries.max(1),
            Counted::Curve => {
                let points = match fields.point_count {
                    None | Some(0) => CURVE_DEFAULT_POINTS,
                    Some(n) => n.clamp(2, CURVE_MAX_POINTS),
                };
                (fields.entries.max(1) * points).div_ceil(CURVE_POINTS_PER_ITEM)
            }
        }
    }

    /// The JSON names of the repeated field counted (the proto3 JSON
    /// mapping's lowerCamelCase name, and the proto name parsers also
    /// accept).
    fn json_names(self) -> &'static [&'static str] {
        match self {
            Counted::Batch => &["requests"],
            Counted::Pairs => &["pairs"],
            Counted::Curve => &["conditionSets", "condition_sets"],
        }
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

/// The walk of a JSON message's top-level object (serde's visitors over
/// serde_json's reader): only the counted field's entries and
/// `pointCount` are looked at, every other value is skipped unbuilt
/// ([`IgnoredAny`](serde::de::IgnoredAny)). Counts go straight into
/// [`TopLevel`], so a message that breaks off keeps what came before.
mod json_walk {
    use std::fmt;

    use serde::de::{DeserializeSeed, Deserializer, IgnoredAny, MapAccess, SeqAccess, Visitor};

    use super::TopLevel;

    /// JSON names of `SampleCurveRequest.point_count`.
    const POINT_COUNT_NAMES: [&str; 2] = ["pointCount", "point_count"];

    /// The top-level object.
    pub(super) struct Object<'a> {
        pub(super) entries_names: &'static [&'static str],
        pub(super) found: &'a mut TopLevel,
    }

    impl<'de> DeserializeSeed<'de> for Object<'_> {
        type Value = ();

        fn deserialize<D: Deserializer<'de>>(self, deserializer: D) -> Result<(), D::Error> {
            deserializer.deserialize_map(self)
        }
    }

    impl<'de> Visitor<'de> for Object<'_> {
        type Value = ();

        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            f.write_str("a JSON object")
        }

        fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<(), A::Error> {
            let Object {
                entries_names,
                found,
            } = self;
            while let Some(key) = map.next_key_seed(KeySeed(entries_names))? {
                match key {
                    Key::Entries => map.next_value_seed(Entries(&mut found.entries))?,
                    Key::PointCount => found.point_count = map.next_value_seed(PointCount)?,
                    Key::Other => {
                        map.next_value::<IgnoredAny>()?;
                    }
                }
            }
            Ok(())
        }
    }

    /// What a key names.
    enum Key {
        Entries,
        PointCount,
        Other,
    }

    /// Reads a key without keeping it.
    struct KeySeed(&'static [&'static str]);

    impl<'de> DeserializeSeed<'de> for KeySeed {
        type Value = Key;

        fn deserialize<D: Deserializer<'de>>(self, deserializer: D) -> Result<Key, D::Error> {
            deserializer.deserialize_identifier(self)
        }
    }

    impl Visitor<'_> for KeySeed {
        type Value = Key;

        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            f.write_str("a field name")
        }

        fn visit_str<E>(self, key: &str) -> Result<Key, E> {
            Ok(if self.0.contains(&key) {
                Key::Entries
            } else if POINT_COUNT_NAMES.contains(&key) {
                Key::PointCount
            } else {
                Key::Other
            })
        }
    }

    /// Counts a list's entries into its `u64` as they are read (`null`
    /// counts none).
    struct Entries<'a>(&'a mut u64);

    impl<'de> DeserializeSeed<'de> for Entries<'_> {
        type Value = ();

        fn deserialize<D: Deserializer<'de>>(self, deserializer: D) -> Result<(), D::Error> {
            deserializer.deserialize_any(self)
        }
    }

    impl<'de> Visitor<'de> for Entries<'_> {
        type Value = ();

        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            f.write_str("a list")
        }

        fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<(), A::Error> {
            let Entries(count) = self;
            while seq.next_element::<IgnoredAny>()?.is_some() {
                *count += 1;
            }
            Ok(())
        }

        fn visit_unit<E>(self) -> Result<(), E> {
            Ok(())
        }
    }

    /// `pointCount`: an int32, as a JSON number or a string (proto3 JSON
    /// mapping); a negative one counts as none, anything else is not read.
    struct PointCount;

    impl<'de> DeserializeSeed<'de> for PointCount {
        type Value = Option<u64>;

        fn deserialize<D: Deserializer<'de>>(
            self,
            deserializer: D,
        ) -> Result<Option<u64>, D::Error> {
            deserializer.deserialize_any(self)
        }
    }

    impl Visitor<'_> for PointCount {
        type Value = Option<u64>;

        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            f.write_str("an integer")
        }

        fn visit_u64<E>(self, value: u64) -> Result<Option<u64>, E> {
            Ok(Some(value))
        }

        fn visit_i64<E>(self, value: i64) -> Result<Option<u64>, E> {
            Ok(Some(value.max(0) as u64))
        }

        fn visit_f64<E>(self, value: f64) -> Result<Option<u64>, E> {
            Ok((value.is_finite() && value.fract() == 0.0).then(|| value.max(0.0) as u64))
        }

        fn visit_str<E>(self, value: &str) -> Result<Option<u64>, E> {
            Ok(value.trim().parse::<i64>().ok().map(|v| v.max(0) as u64))
        }

        fn visit_unit<E>(self) -> Result<Option<u64>, E> {
            Ok(None)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use oxbind_proto::v1::{
        BatchCheckBloodGasRequest, BatchSaturationFromTensionRequest, BloodConditions,
        CheckBloodGasRequest, EstimateP50Request, MeasuredPair, SampleCurveRequest,
        SaturationFromTensionRequest,
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
        let checks = BatchCheckBloodGasRequest {
            requests: vec![CheckBloodGasRequest::default(); 321],
        };
        let path = "/oxbind.v1.ConsistencyService/BatchCheckBloodGas";
        assert_eq!(items_of(path, &checks.encode_to_vec()), 321);
        assert_eq!(items_of_json(path, br#"{"requests":[{},{},{}]}"#), 3);
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
    fn json_messages_are_counted_as_their_binary_form_is() {
        let batch = format!(
            r#"{{"requests":[{}{{}}],"provenancePlacement":"PROVENANCE_PLACEMENT_SHARED"}}"#,
            "{},".repeat(1233)
        );
        assert_eq!(items_of_json(BATCH, batch.as_bytes()), 1234);
        assert_eq!(items_of_json(BATCH, b"{}"), 1, "an empty batch is one call");
        assert_eq!(items_of_json(BATCH, br#"{"requests":null}"#), 1);
        let pairs = br#"{"pairs":[{"po2":{"value":30}},{},{}]}"#;
        assert_eq!(
            items_of_json("/oxbind.v1.DissociationService/EstimateP50", pairs),
            3
        );
        for curve in [
            r#"{"conditionSets":[{},{},{},{},{},{},{},{},{},{}],"pointCount":10000}"#,
            r#"{"condition_sets":[{},{},{},{},{},{},{},{},{},{}],"point_count":"10000"}"#,
        ] {
            assert_eq!(items_of_json(CURVE, curve.as_bytes()), 1_000, "{curve}");
        }
        assert_eq!(items_of_json(CURVE, br#"{"pointCount":-5}"#), 1);
        assert_eq!(
            items_of_json(
                "/oxbind.v1.DissociationService/SaturationFromTension",
                br#"{"requests":[{},{}]}"#
            ),
            1,
            "only the methods that count items"
        );
    }

    #[test]
    fn broken_json_counts_what_came_before_the_damage() {
        let mut batch = String::from(r#"{"requests":["#);
        batch.push_str(&"{},".repeat(500));
        batch.push_str("nonsense");
        assert_eq!(items_of_json(BATCH, batch.as_bytes()), 500);
        assert_eq!(items_of_json(BATCH, b"not json"), 1);
        assert_eq!(items_of_json(BATCH, b"[1,2,3]"), 1);
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
