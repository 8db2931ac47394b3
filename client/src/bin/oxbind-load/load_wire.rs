//! The load generator's wire side: requests encoded once, before the measured
//! window, and answers checked by walking their protobuf encoding instead of
//! decoding them into messages.
//!
//! A load generator on the same machine as the server takes CPU from it; this
//! keeps the generator's share small, so that the figures are the server's.
//! The checks are still real: every answer is walked to its end, every batch
//! item must hold a response with a saturation strictly between 0 and 1, or
//! an error (counted by its code).

use oxbind_client::Code;
use prost::{
    bytes::{Buf, BufMut, Bytes},
    encoding::{decode_key, decode_varint, skip_field, DecodeContext, WireType},
};
use tonic::{
    codec::{Codec, DecodeBuf, Decoder, EncodeBuf, Encoder},
    Status,
};

/// A codec that sends and receives message bytes as they are.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct EncodedCodec;

impl Codec for EncodedCodec {
    type Encode = Bytes;
    type Decode = Bytes;
    type Encoder = EncodedCodec;
    type Decoder = EncodedCodec;

    fn encoder(&mut self) -> Self::Encoder {
        EncodedCodec
    }

    fn decoder(&mut self) -> Self::Decoder {
        EncodedCodec
    }
}

impl Encoder for EncodedCodec {
    type Item = Bytes;
    type Error = Status;

    fn encode(&mut self, item: Bytes, dst: &mut EncodeBuf<'_>) -> Result<(), Status> {
        dst.put(item);
        Ok(())
    }
}

impl Decoder for EncodedCodec {
    type Item = Bytes;
    type Error = Status;

    fn decode(&mut self, src: &mut DecodeBuf<'_>) -> Result<Option<Bytes>, Status> {
        let len = src.remaining();
        Ok(Some(src.copy_to_bytes(len)))
    }
}

/// Why an answer did not pass its check.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum BadAnswer {
    /// The bytes are not a well-formed protobuf message.
    Malformed,
    /// A required field is missing, or a saturation lies outside (0, 1).
    Unexpected,
}

impl BadAnswer {
    /// The label the report counts it under.
    pub(crate) fn label(self) -> &'static str {
        match self {
            BadAnswer::Malformed => "MALFORMED_ANSWER",
            BadAnswer::Unexpected => "UNEXPECTED_ANSWER",
        }
    }
}

/// Field numbers of the messages walked (from `proto/oxbind/v1/*.proto` and
/// `grpc/health/v1/health.proto`).
mod field {
    /// `SaturationFromTensionResponse.saturation_fraction` (double).
    pub(super) const SATURATION_FRACTION: u32 = 1;
    /// `BatchSaturationFromTensionResponse.results` (repeated message).
    pub(super) const BATCH_RESULTS: u32 = 1;
    /// `SaturationFromTensionResult.response` (message).
    pub(super) const RESULT_RESPONSE: u32 = 1;
    /// `SaturationFromTensionResult.error` (`google.rpc.Status`).
    pub(super) const RESULT_ERROR: u32 = 2;
    /// `google.rpc.Status.code` (int32).
    pub(super) const STATUS_CODE: u32 = 1;
    /// `grpc.health.v1.HealthCheckResponse.status` (enum).
    pub(super) const HEALTH_STATUS: u32 = 1;
}

/// `grpc.health.v1.HealthCheckResponse.ServingStatus.SERVING`.
const HEALTH_SERVING: u64 = 1;

/// Walk one message, calling `on_field` for each field with its number, wire
/// type and (for length-delimited fields) its bytes; other fields are read by
/// `on_field` from the buffer or skipped.
fn walk(
    mut buf: &[u8],
    mut on_field: impl FnMut(u32, WireType, &mut &[u8]) -> Result<bool, BadAnswer>,
) -> Result<(), BadAnswer> {
    while buf.has_remaining() {
        let (tag, wire_type) = decode_key(&mut buf).map_err(|_| BadAnswer::Malformed)?;
        if !on_field(tag, wire_type, &mut buf)? {
            skip_field(wire_type, tag, &mut buf, DecodeContext::default())
                .map_err(|_| BadAnswer::Malformed)?;
        }
    }
    Ok(())
}

/// The bytes of a length-delimited field at the head of `buf`, advancing past it.
fn take_delimited<'a>(buf: &mut &'a [u8]) -> Result<&'a [u8], BadAnswer> {
    let len = usize::try_from(decode_varint(buf).map_err(|_| BadAnswer::Malformed)?)
        .map_err(|_| BadAnswer::Malformed)?;
    if len > buf.len() {
        return Err(BadAnswer::Malformed);
    }
    let (head, rest) = buf.split_at(len);
    *buf = rest;
    Ok(head)
}

/// Check a `SaturationFromTensionResponse`: its saturation lies in (0, 1).
pub(crate) fn check_saturation_response(bytes: &[u8]) -> Result<(), BadAnswer> {
    let mut saturation = None;
    walk(bytes, |tag, wire_type, buf| {
        if tag == field::SATURATION_FRACTION && wire_type == WireType::SixtyFourBit {
            if buf.remaining() < 8 {
                return Err(BadAnswer::Malformed);
            }
            saturation = Some(buf.get_f64_le());
            return Ok(true);
        }
        Ok(false)
    })?;
    match saturation {
        Some(s) if s > 0.0 && s < 1.0 => Ok(()),
        _ => Err(BadAnswer::Unexpected),
    }
}

/// What a batch answer held.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub(crate) struct BatchTally {
    /// Items with a response that passed its check.
    pub(crate) computed: u64,
    /// Items refused, by status code.
    pub(crate) refused: Vec<Code>,
    /// Items with neither a checked response nor an error.
    pub(crate) bad: u64,
}

impl BatchTally {
    /// Every item: computed, refused or bad.
    pub(crate) fn items(&self) -> u64 {
        self.computed + self.refused.len() as u64 + self.bad
    }
}

/// Check a `BatchSaturationFromTensionResponse`, item by item.
pub(crate) fn check_batch_response(bytes: &[u8]) -> Result<BatchTally, BadAnswer> {
    let mut tally = BatchTally::default();
    walk(bytes, |tag, wire_type, buf| {
        if tag != field::BATCH_RESULTS || wire_type != WireType::LengthDelimited {
            return Ok(false);
        }
        let item = take_delimited(buf)?;
        match check_item(item)? {
            ItemOutcome::Computed => tally.computed += 1,
            ItemOutcome::Refused(code) => tally.refused.push(code),
            ItemOutcome::Bad => tally.bad += 1,
        }
        Ok(true)
    })?;
    Ok(tally)
}

enum ItemOutcome {
    Computed,
    Refused(Code),
    Bad,
}

fn check_item(item: &[u8]) -> Result<ItemOutcome, BadAnswer> {
    let mut outcome = ItemOutcome::Bad;
    walk(item, |tag, wire_type, buf| {
        if wire_type != WireType::LengthDelimited {
            return Ok(false);
        }
        match tag {
            field::RESULT_RESPONSE => {
                let response = take_delimited(buf)?;
                outcome = match check_saturation_response(response) {
                    Ok(()) => ItemOutcome::Computed,
                    Err(BadAnswer::Unexpected) => ItemOutcome::Bad,
                    Err(malformed) => return Err(malformed),
                };
                Ok(true)
            }
            field::RESULT_ERROR => {
                let status = take_delimited(buf)?;
                outcome = ItemOutcome::Refused(status_code(status)?);
                Ok(true)
            }
            _ => Ok(false),
        }
    })?;
    Ok(outcome)
}

fn status_code(status: &[u8]) -> Result<Code, BadAnswer> {
    let mut code = 0i32;
    walk(status, |tag, wire_type, buf| {
        if tag == field::STATUS_CODE && wire_type == WireType::Varint {
            // int32 on the wire: a negative value is sign-extended to 64 bits.
            code = decode_varint(buf).map_err(|_| BadAnswer::Malformed)? as i32;
            return Ok(true);
        }
        Ok(false)
    })?;
    Ok(Code::from(code))
}

/// Check a `grpc.health.v1.HealthCheckResponse`: SERVING.
pub(crate) fn check_health_response(bytes: &[u8]) -> Result<(), BadAnswer> {
    let mut serving = false;
    walk(bytes, |tag, wire_type, buf| {
        if tag == field::HEALTH_STATUS && wire_type == WireType::Varint {
            serving = decode_varint(buf).map_err(|_| BadAnswer::Malformed)? == HEALTH_SERVING;
            return Ok(true);
        }
        Ok(false)
    })?;
    if serving {
        Ok(())
    } else {
        Err(BadAnswer::Unexpected)
    }
}

/// Encode `message` once, for sending as it is.
pub(crate) fn encode(message: &impl prost::Message) -> Bytes {
    Bytes::from(message.encode_to_vec())
}

#[cfg(test)]
mod tests {
    use super::*;
    use oxbind_client::v1::{
        saturation_from_tension_result::Result as Outcome, BatchSaturationFromTensionResponse,
        SaturationFromTensionResponse, SaturationFromTensionResult,
    };
    use prost::Message;

    fn computed(saturation: f64) -> SaturationFromTensionResult {
        SaturationFromTensionResult {
            result: Some(Outcome::Response(SaturationFromTensionResponse {
                saturation_fraction: saturation,
                hill_slope: 2.7,
                ..Default::default()
            })),
            shared_provenance_index: 1,
        }
    }

    #[test]
    fn a_batch_answer_is_counted_item_by_item() {
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
            ],
            shared_provenance: vec![Default::default()],
        };
        let tally = check_batch_response(&answer.encode_to_vec()).expect("well formed");
        assert_eq!(tally.computed, 1);
        assert_eq!(tally.refused, vec![Code::InvalidArgument]);
        // The saturation of 1.5 and the empty result.
        assert_eq!(tally.bad, 2);
        assert_eq!(tally.items(), 4);
    }

    #[test]
    fn a_truncated_answer_is_malformed() {
        let answer = BatchSaturationFromTensionResponse {
            results: vec![computed(0.5)],
            shared_provenance: vec![],
        };
        let bytes = answer.encode_to_vec();
        assert_eq!(
            check_batch_response(&bytes[..bytes.len() - 3]),
            Err(BadAnswer::Malformed)
        );
    }

    #[test]
    fn a_single_answer_needs_a_saturation_inside_0_and_1() {
        let ok = SaturationFromTensionResponse {
            saturation_fraction: 0.97,
            ..Default::default()
        };
        assert_eq!(check_saturation_response(&ok.encode_to_vec()), Ok(()));
        let zero = SaturationFromTensionResponse::default();
        assert_eq!(
            check_saturation_response(&zero.encode_to_vec()),
            Err(BadAnswer::Unexpected)
        );
    }

    #[test]
    fn health_must_be_serving() {
        let serving = oxbind_client::health::HealthCheckResponse { status: 1 };
        assert_eq!(check_health_response(&serving.encode_to_vec()), Ok(()));
        let not = oxbind_client::health::HealthCheckResponse { status: 2 };
        assert_eq!(
            check_health_response(&not.encode_to_vec()),
            Err(BadAnswer::Unexpected)
        );
    }
}
