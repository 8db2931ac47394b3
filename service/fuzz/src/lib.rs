//! Checks shared by the fuzz targets.
//!
//! - [`check_response`] encodes a response and walks its wire bytes with the
//!   contract's own descriptor set ([`oxbind_proto::FILE_DESCRIPTOR_SET`]), so
//!   every `double` (and `float`) field at any depth is checked for NaN and
//!   infinity: saturations, quantities, curve points, provenance inputs,
//!   ratios, and any field added later, with no list to keep up to date.
//! - [`check_refusal`] and [`check_tonic_refusal`] assert that a refusal is
//!   INVALID_ARGUMENT with a `google.rpc.BadRequest` whose every violation
//!   names a field.
//! - [`ready`] runs a handler future that must complete without waiting (the
//!   service's handlers are pure), so the targets can call the real tonic
//!   trait methods, batch size checks included.
//!
//! Each target takes its first input byte as a selector (which request type
//! of the family the rest of the bytes are) and skips input that prost
//! cannot decode.

use std::{
    collections::HashMap,
    future::Future,
    pin::pin,
    sync::OnceLock,
    task::{Context, Poll, Waker},
};

use prost::Message;
use prost_types::{field_descriptor_proto::Type, DescriptorProto, FileDescriptorSet};
use oxbind_proto::google::rpc as pb;

/// Full protobuf name (with leading dot) of the messages the targets check.
pub mod names {
    /// `oxbind.v1.SaturationFromTensionResponse`.
    pub const SATURATION: &str = ".oxbind.v1.SaturationFromTensionResponse";
    /// `oxbind.v1.BatchSaturationFromTensionResponse`.
    pub const BATCH_SATURATION: &str = ".oxbind.v1.BatchSaturationFromTensionResponse";
    /// `oxbind.v1.TensionFromSaturationResponse`.
    pub const TENSION: &str = ".oxbind.v1.TensionFromSaturationResponse";
    /// `oxbind.v1.BatchTensionFromSaturationResponse`.
    pub const BATCH_TENSION: &str = ".oxbind.v1.BatchTensionFromSaturationResponse";
    /// `oxbind.v1.SampleCurveResponse`.
    pub const CURVE: &str = ".oxbind.v1.SampleCurveResponse";
    /// `oxbind.v1.ShiftFactorsResponse`.
    pub const SHIFT: &str = ".oxbind.v1.ShiftFactorsResponse";
    /// `oxbind.v1.EstimateP50Response`.
    pub const P50: &str = ".oxbind.v1.EstimateP50Response";
    /// `oxbind.v1.CorrectForTemperatureResponse`.
    pub const TEMPERATURE: &str = ".oxbind.v1.CorrectForTemperatureResponse";
    /// `oxbind.v1.OxygenContentResponse`.
    pub const CONTENT: &str = ".oxbind.v1.OxygenContentResponse";
    /// `oxbind.v1.GasExchangeResponse`.
    pub const GAS_EXCHANGE: &str = ".oxbind.v1.GasExchangeResponse";
    /// `oxbind.v1.ListModelsResponse`.
    pub const LIST_MODELS: &str = ".oxbind.v1.ListModelsResponse";
    /// `oxbind.v1.CheckBloodGasResponse`.
    pub const CONSISTENCY: &str = ".oxbind.v1.CheckBloodGasResponse";
    /// `oxbind.v1.BatchCheckBloodGasResponse`.
    pub const BATCH_CONSISTENCY: &str = ".oxbind.v1.BatchCheckBloodGasResponse";
    /// `google.rpc.Status`.
    pub const RPC_STATUS: &str = ".google.rpc.Status";
}

/// The batch item limit the targets give the dissociation handler: the
/// server's default.
pub const MAX_BATCH_ITEMS: usize = oxbind_service::config::DEFAULT_MAX_BATCH_ITEMS;

/// Every message of the contract (and its imports), by full name.
struct Schema {
    messages: HashMap<String, DescriptorProto>,
}

impl Schema {
    fn get() -> &'static Schema {
        static SCHEMA: OnceLock<Schema> = OnceLock::new();
        SCHEMA.get_or_init(|| {
            let set = FileDescriptorSet::decode(oxbind_proto::FILE_DESCRIPTOR_SET)
                .expect("the contract's descriptor set decodes");
            let mut messages = HashMap::new();
            for file in set.file {
                let prefix = match file.package() {
                    "" => String::new(),
                    package => format!(".{package}"),
                };
                for message in file.message_type {
                    insert_message(&prefix, message, &mut messages);
                }
            }
            Schema { messages }
        })
    }
}

fn insert_message(
    prefix: &str,
    message: DescriptorProto,
    messages: &mut HashMap<String, DescriptorProto>,
) {
    let name = format!("{prefix}.{}", message.name());
    for nested in &message.nested_type {
        insert_message(&name, nested.clone(), messages);
    }
    messages.insert(name, message);
}

/// What a walk found.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct Walk {
    /// Floating-point values seen (every one of them finite).
    pub floats_checked: usize,
    /// Field paths of non-finite values, e.g. `curves[0].points[3].saturation_fraction`.
    pub non_finite: Vec<String>,
}

/// Walk the encoded message `bytes` of protobuf type `type_name` (full name
/// with leading dot) and record every floating-point field.
///
/// # Panics
/// On bytes that are not a well-formed encoding of `type_name` or on a type
/// the descriptor set lacks: both would be a bug in the checker or the
/// encoder, never something to skip.
pub fn walk_encoded(type_name: &str, bytes: &[u8]) -> Walk {
    let mut walk = Walk::default();
    walk_message(Schema::get(), type_name, bytes, "", &mut walk);
    walk
}

fn read_varint(bytes: &[u8], at: &mut usize) -> u64 {
    let mut value = 0u64;
    for shift in (0..64).step_by(7) {
        let byte = *bytes.get(*at).expect("varint runs past the end");
        *at += 1;
        value |= u64::from(byte & 0x7f) << shift;
        if byte & 0x80 == 0 {
            return value;
        }
    }
    panic!("varint longer than ten bytes")
}

fn take<'a>(bytes: &'a [u8], at: &mut usize, len: usize) -> &'a [u8] {
    let end = at.checked_add(len).expect("length overflows");
    let slice = bytes.get(*at..end).expect("field runs past the end");
    *at = end;
    slice
}

fn walk_message(schema: &Schema, type_name: &str, bytes: &[u8], path: &str, walk: &mut Walk) {
    let descriptor = schema
        .messages
        .get(type_name)
        .unwrap_or_else(|| panic!("the descriptor set has no message {type_name}"));
    let mut counts: HashMap<i32, usize> = HashMap::new();
    let mut at = 0;
    while at < bytes.len() {
        let key = read_varint(bytes, &mut at);
        let number = i32::try_from(key >> 3).expect("field number fits i32");
        let wire_type = key & 7;
        let field = descriptor
            .field
            .iter()
            .find(|f| f.number() == number)
            .unwrap_or_else(|| panic!("{type_name} has no field {number} (at {path:?})"));
        let index = counts.entry(number).or_default();
        let field_path = if path.is_empty() {
            field.name().to_owned()
        } else {
            format!("{path}.{}", field.name())
        };
        let field_path = if field.label() == prost_types::field_descriptor_proto::Label::Repeated {
            format!("{field_path}[{index}]")
        } else {
            field_path
        };
        *index += 1;
        let mut record = |value: f64, at_path: &str| {
            walk.floats_checked += 1;
            if !value.is_finite() {
                walk.non_finite.push(format!("{at_path} = {value}"));
            }
        };
        match (wire_type, field.r#type()) {
            (0, _) => {
                read_varint(bytes, &mut at);
            }
            (1, Type::Double) => {
                let raw = take(bytes, &mut at, 8);
                record(
                    f64::from_le_bytes(raw.try_into().expect("eight bytes")),
                    &field_path,
                );
            }
            (1, _) => {
                take(bytes, &mut at, 8);
            }
            (5, Type::Float) => {
                let raw = take(bytes, &mut at, 4);
                record(
                    f64::from(f32::from_le_bytes(raw.try_into().expect("four bytes"))),
                    &field_path,
                );
            }
            (5, _) => {
                take(bytes, &mut at, 4);
            }
            (2, kind) => {
                let len = usize::try_from(read_varint(bytes, &mut at)).expect("length fits");
                let inner = take(bytes, &mut at, len);
                match kind {
                    Type::Message => {
                        walk_message(schema, field.type_name(), inner, &field_path, walk)
                    }
                    // Packed repeated floating-point values.
                    Type::Double => {
                        for (i, raw) in inner.chunks(8).enumerate() {
                            let raw: [u8; 8] = raw.try_into().expect("packed doubles");
                            record(f64::from_le_bytes(raw), &format!("{field_path}<{i}>"));
                        }
                    }
                    Type::Float => {
                        for (i, raw) in inner.chunks(4).enumerate() {
                            let raw: [u8; 4] = raw.try_into().expect("packed floats");
                            record(
                                f64::from(f32::from_le_bytes(raw)),
                                &format!("{field_path}<{i}>"),
                            );
                        }
                    }
                    _ => {}
                }
            }
            (other, _) => panic!("wire type {other} in {type_name} (at {path:?})"),
        }
    }
}

/// Encode `response` (of protobuf type `type_name`) and assert that no
/// floating-point field anywhere in it is NaN or infinite. Refusals carried
/// inside it (batch items' `google.rpc.Status`) are checked with
/// [`check_refusal`]. Returns the number of floating-point values checked.
pub fn check_response<M: Message>(type_name: &str, response: &M) -> usize {
    let bytes = response.encode_to_vec();
    let walk = walk_encoded(type_name, &bytes);
    assert!(
        walk.non_finite.is_empty(),
        "{type_name} holds {} non-finite values, first: {:?}",
        walk.non_finite.len(),
        &walk.non_finite[..walk.non_finite.len().min(5)]
    );
    walk.floats_checked
}

/// Assert that `status` is INVALID_ARGUMENT, carries a message, and has a
/// `google.rpc.BadRequest` with at least one violation, each naming a field
/// and a reason. Its encoding is walked like a response, too.
pub fn check_refusal(status: &pb::Status) {
    assert_eq!(
        status.code,
        tonic::Code::InvalidArgument as i32,
        "a refusal must be INVALID_ARGUMENT: {status:?}"
    );
    assert!(!status.message.is_empty(), "a refusal without a message");
    check_response(names::RPC_STATUS, status);
    let mut violations = 0;
    for any in &status.details {
        if any.type_url == "type.googleapis.com/google.rpc.BadRequest" {
            let bad = pb::BadRequest::decode(any.value.as_slice()).expect("BadRequest decodes");
            for violation in &bad.field_violations {
                assert!(
                    !violation.field.is_empty(),
                    "a violation names no field: {violation:?}"
                );
                assert!(
                    !violation.reason.is_empty(),
                    "a violation gives no reason: {violation:?}"
                );
                violations += 1;
            }
        }
    }
    assert!(
        violations > 0,
        "a refusal without BadRequest violations: {status:?}"
    );
}

/// [`check_refusal`] for a tonic status, whose `google.rpc.Status` travels in
/// the details (`grpc-status-details-bin`); the outer code must agree.
pub fn check_tonic_refusal(status: &tonic::Status) {
    assert_eq!(
        status.code(),
        tonic::Code::InvalidArgument,
        "a refusal must be INVALID_ARGUMENT: {status:?}"
    );
    let rpc = pb::Status::decode(status.details()).expect("grpc-status-details-bin decodes");
    check_refusal(&rpc);
}

/// Run a handler future that completes without waiting (the service's
/// handlers do no I/O).
///
/// # Panics
/// If the future asks to wait.
pub fn ready<F: Future>(future: F) -> F::Output {
    let mut future = pin!(future);
    let mut context = Context::from_waker(Waker::noop());
    match future.as_mut().poll(&mut context) {
        Poll::Ready(output) => output,
        Poll::Pending => panic!("a pure handler asked to wait"),
    }
}

/// Split a fuzz input into its selector byte and the request bytes.
pub fn split(data: &[u8]) -> Option<(u8, &[u8])> {
    data.split_first().map(|(first, rest)| (*first, rest))
}

#[cfg(test)]
mod tests {
    use super::*;
    use oxbind_proto::v1::{
        Curve, CurvePoint, Provenance, Quantity, SampleCurveResponse, SaturationFromTensionResponse,
    };

    #[test]
    fn the_walk_finds_every_double_at_any_depth() {
        let response = SampleCurveResponse {
            curves: vec![Curve {
                p50: Some(Quantity {
                    value: 26.8,
                    unit: "mm[Hg]".to_owned(),
                }),
                points: vec![
                    CurvePoint {
                        po2: 1.0,
                        saturation_fraction: 0.01,
                    },
                    CurvePoint {
                        po2: 2.0,
                        saturation_fraction: f64::NAN,
                    },
                ],
                ..Default::default()
            }],
        };
        let walk = walk_encoded(names::CURVE, &response.encode_to_vec());
        assert_eq!(walk.floats_checked, 5);
        assert_eq!(walk.non_finite.len(), 1);
        assert!(
            walk.non_finite[0].starts_with("curves[0].points[1].saturation_fraction"),
            "{:?}",
            walk.non_finite
        );
    }

    #[test]
    fn the_walk_reaches_provenance_and_flags_infinity() {
        let response = SaturationFromTensionResponse {
            saturation_fraction: 0.97,
            hill_slope: f64::INFINITY,
            provenance: Some(Provenance {
                inputs_used: vec![oxbind_proto::v1::InputUsed {
                    name: "po2".to_owned(),
                    value: Some(Quantity {
                        value: f64::NEG_INFINITY,
                        unit: "mm[Hg]".to_owned(),
                    }),
                    defaulted: false,
                }],
                compute_time: Some(oxbind_proto::Timestamp {
                    seconds: 1,
                    nanos: 2,
                }),
                ..Default::default()
            }),
            ..Default::default()
        };
        let walk = walk_encoded(names::SATURATION, &response.encode_to_vec());
        assert_eq!(walk.floats_checked, 3);
        assert_eq!(
            walk.non_finite,
            vec![
                "hill_slope = inf".to_owned(),
                "provenance.inputs_used[0].value.value = -inf".to_owned()
            ]
        );
    }

    #[test]
    fn the_catalog_is_finite_and_every_name_is_in_the_schema() {
        let catalog = oxbind_service::api::catalog::list_models(MAX_BATCH_ITEMS);
        assert!(check_response(names::LIST_MODELS, &catalog) > 0);
        for name in [
            names::SATURATION,
            names::BATCH_SATURATION,
            names::TENSION,
            names::BATCH_TENSION,
            names::CURVE,
            names::SHIFT,
            names::P50,
            names::TEMPERATURE,
            names::CONTENT,
            names::GAS_EXCHANGE,
            names::RPC_STATUS,
        ] {
            assert_eq!(walk_encoded(name, &[]), Walk::default(), "{name}");
        }
    }
}
