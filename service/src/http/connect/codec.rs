//! The two Connect codecs: `json` (the canonical proto3 JSON mapping, by the
//! serde code `pbjson-build` generated for every message) and `proto` (the
//! binary protobuf encoding, by prost).

use prost::Message;
use serde::{de::DeserializeOwned, Serialize};
use tonic::{codegen::Bytes, Status};

use crate::api::status::{InvalidRequest, Violation};

/// A message codec of the Connect protocol.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Codec {
    /// `application/json`: the proto3 JSON mapping.
    Json,
    /// `application/proto`: binary protobuf.
    Proto,
}

impl Codec {
    /// The codec of a unary request's `content-type` (`application/json`,
    /// optionally with `charset=utf-8`, or `application/proto`), if it is one
    /// of the two.
    pub fn from_content_type(content_type: &str) -> Option<Self> {
        let mut parts = content_type.split(';');
        let media_type = parts.next().unwrap_or_default().trim();
        let codec = if media_type.eq_ignore_ascii_case("application/json") {
            Self::Json
        } else if media_type.eq_ignore_ascii_case("application/proto") {
            Self::Proto
        } else {
            return None;
        };
        // JSON is UTF-8 by definition (RFC 8259); any other charset is not
        // this codec.
        let charset_ok = parts.all(|parameter| match parameter.split_once('=') {
            Some((name, value)) if name.trim().eq_ignore_ascii_case("charset") => {
                value.trim().trim_matches('"').eq_ignore_ascii_case("utf-8")
            }
            _ => true,
        });
        charset_ok.then_some(codec)
    }

    /// The codec named by the GET form's `encoding` parameter.
    pub fn from_encoding(encoding: &str) -> Option<Self> {
        match encoding {
            "json" => Some(Self::Json),
            "proto" => Some(Self::Proto),
            _ => None,
        }
    }

    /// The response's `content-type`.
    pub fn content_type(self) -> &'static str {
        match self {
            Self::Json => "application/json",
            Self::Proto => "application/proto",
        }
    }

    /// Decode a request message; a body that is not one is refused with
    /// INVALID_ARGUMENT naming where decoding stopped.
    pub fn decode<M>(self, bytes: &[u8]) -> Result<M, Status>
    where
        M: Message + Default + DeserializeOwned,
    {
        match self {
            Self::Json => {
                let mut reader = serde_json::Deserializer::from_slice(bytes);
                let message = serde_path_to_error::deserialize(&mut reader)
                    .map_err(|error| json_refusal(&error.path().to_string(), error.inner()))?;
                // Trailing content after the message is malformed too.
                reader.end().map_err(|error| json_refusal(".", &error))?;
                Ok(message)
            }
            Self::Proto => M::decode(bytes).map_err(|error| {
                // prost names the message and field it was reading, never
                // the value.
                refusal(
                    String::new(),
                    format!("the body is not a valid binary protobuf request message ({error})"),
                )
            }),
        }
    }

    /// Encode a response message.
    pub fn encode<M>(self, message: &M) -> Result<Bytes, Status>
    where
        M: Message + Serialize,
    {
        match self {
            Self::Json => serde_json::to_vec(message)
                .map(Bytes::from)
                .map_err(|error| {
                    tracing::error!(%error, "a response has no JSON form");
                    Status::internal("the response could not be written as JSON")
                }),
            Self::Proto => Ok(Bytes::from(message.encode_to_vec())),
        }
    }
}

/// The refusal of a JSON body at `json_path` (serde_path_to_error's form:
/// `.` for the whole body), naming the field where reading stopped (in
/// the service's dotted snake_case form, as every refusal names fields) and
/// why, without echoing the value.
fn json_refusal(json_path: &str, inner: &serde_json::Error) -> Status {
    let position = format!("line {}, column {}", inner.line(), inner.column());
    let text = inner.to_string();
    let mut field = proto_path(json_path);
    let description = if let Some(name) = unknown_field(&text) {
        // The path ends with the unknown key. The refusal names the message
        // that holds it (a field of the contract, so refused field paths,
        // which are counted in a metric, stay a bounded set); the text
        // names the key as the caller wrote it.
        let parent = json_path
            .strip_suffix(name)
            .map(|p| p.trim_end_matches('.'))
            .unwrap_or(json_path);
        field = proto_path(parent);
        let holder = if field.is_empty() {
            "the request".to_owned()
        } else {
            field.clone()
        };
        format!("`{name}` is not a field of {holder} ({position}); field names are case-sensitive")
    } else if text.starts_with("unknown variant") {
        format!("{field} is not a known value of its enum ({position}); enums are written by name")
    } else {
        use serde_json::error::Category;
        match inner.classify() {
            Category::Syntax | Category::Eof | Category::Io => {
                format!("the body is not well-formed JSON ({position})")
            }
            Category::Data if field.is_empty() => {
                format!("the body is not a JSON object of this request's fields ({position})")
            }
            Category::Data => {
                format!("{field} does not hold a value of its type in the proto3 JSON mapping ({position})")
            }
        }
    };
    refusal(field, description)
}

/// The field name in serde's "unknown field `name`, expected ..." message.
/// The name is the caller's key, not a value.
fn unknown_field(text: &str) -> Option<&str> {
    let rest = text.strip_prefix("unknown field `")?;
    rest.split_once('`').map(|(name, _)| name)
}

/// A JSON path (`conditions.temperature.value`, `requests[2].po2`) in the
/// service's field-path form: each lowerCamelCase name in snake_case.
fn proto_path(json_path: &str) -> String {
    if json_path == "." {
        return String::new();
    }
    snake_case(json_path)
}

/// `lowerCamelCase` as `lower_camel_case` (names already in snake_case, as
/// the mapping also accepts them, are unchanged).
fn snake_case(name: &str) -> String {
    let mut out = String::with_capacity(name.len() + 4);
    for c in name.chars() {
        if c.is_ascii_uppercase() {
            out.push('_');
            out.push(c.to_ascii_lowercase());
        } else {
            out.push(c);
        }
    }
    out
}

/// An undecodable request, as the status every refusal is (INVALID_ARGUMENT
/// with `google.rpc.BadRequest` and `ErrorInfo`, from `api::status`).
fn refusal(field: String, description: String) -> Status {
    InvalidRequest::one(Violation::not_decodable(field, description)).into_status()
}

#[cfg(test)]
mod tests {
    use oxbind_proto::v1::{SaturationFromTensionRequest, SaturationFromTensionResponse};

    use super::*;

    fn rpc_status(status: &Status) -> oxbind_proto::google::rpc::Status {
        oxbind_proto::google::rpc::Status::decode(status.details()).expect("details decode")
    }

    fn refused_field(body: &str) -> (String, String) {
        let status = Codec::Json
            .decode::<SaturationFromTensionRequest>(body.as_bytes())
            .unwrap_err();
        assert_eq!(status.code(), tonic::Code::InvalidArgument);
        let rpc = rpc_status(&status);
        let bad = rpc
            .details
            .iter()
            .find(|d| d.type_name() == "google.rpc.BadRequest")
            .expect("BadRequest");
        let bad = oxbind_proto::google::rpc::BadRequest::decode(bad.value.as_slice()).unwrap();
        let violation = &bad.field_violations[0];
        (violation.field.clone(), violation.description.clone())
    }

    #[test]
    fn content_types_name_their_codec() {
        assert_eq!(
            Codec::from_content_type("application/json"),
            Some(Codec::Json)
        );
        assert_eq!(
            Codec::from_content_type("application/json; charset=UTF-8"),
            Some(Codec::Json)
        );
        assert_eq!(
            Codec::from_content_type("application/proto"),
            Some(Codec::Proto)
        );
        assert_eq!(
            Codec::from_content_type("application/json; charset=latin1"),
            None
        );
        assert_eq!(Codec::from_content_type("application/connect+json"), None);
        assert_eq!(Codec::from_content_type("text/plain"), None);
    }

    #[test]
    fn the_json_mapping_reads_lower_camel_case_proto_names_and_enum_names() {
        let request: SaturationFromTensionRequest = Codec::Json
            .decode(
                br#"{"po2":{"value":60,"unit":"mm[Hg]"},"model":"MODEL_KELMAN_1966","unit_system":"UNIT_SYSTEM_SI","conditions":{"ph":7.31}}"#,
            )
            .unwrap();
        assert_eq!(request.po2.as_ref().unwrap().value, 60.0);
        assert_eq!(request.model, oxbind_proto::v1::Model::Kelman1966 as i32);
        assert_eq!(request.unit_system, oxbind_proto::v1::UnitSystem::Si as i32);
        assert_eq!(request.conditions.unwrap().ph, Some(7.31));
    }

    #[test]
    fn a_refused_json_body_names_the_field_in_snake_case_and_never_the_value() {
        let (field, description) = refused_field(r#"{"po2":{"value":"sixty","unit":"mm[Hg]"}}"#);
        assert_eq!(field, "po2.value");
        assert!(!description.contains("sixty"), "{description}");
        let (field, description) = refused_field(r#"{"po2":{"value":60},"conditions":{"pH":7.4}}"#);
        assert_eq!(field, "conditions");
        assert!(
            description.starts_with("`pH` is not a field of conditions"),
            "{description}"
        );
        let (field, _) = refused_field(r#"{"model":"MODEL_NONE_SUCH"}"#);
        assert_eq!(field, "model");
        let (field, description) = refused_field(r#"{"po2":"#);
        assert_eq!(field, "po2");
        assert!(description.contains("not well-formed"), "{description}");
        let (_, description) = refused_field(r#"{} {}"#);
        assert!(description.contains("not well-formed"), "{description}");
    }

    #[test]
    fn a_response_is_written_in_the_json_mapping() {
        let response = SaturationFromTensionResponse {
            saturation_fraction: 0.9,
            hill_slope: 2.5,
            ..Default::default()
        };
        let bytes = Codec::Json.encode(&response).unwrap();
        assert_eq!(
            std::str::from_utf8(&bytes).unwrap(),
            r#"{"saturationFraction":0.9,"hillSlope":2.5}"#
        );
    }

    #[test]
    fn json_paths_become_field_paths() {
        assert_eq!(proto_path("."), "");
        assert_eq!(proto_path("requests[2].po2.value"), "requests[2].po2.value");
        assert_eq!(
            proto_path("conditionSets[0].baseExcess"),
            "condition_sets[0].base_excess"
        );
    }
}
