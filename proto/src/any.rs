//! `google.protobuf.Any`, as the generated `google.rpc.Status` carries it,
//! with the JSON form the proto3 JSON mapping gives it:
//! `{"@type": "<type URL>", <the packed message's own fields>}`.
//!
//! Writing that form needs the packed message's type. pbjson-types' `Any`
//! has no registry of types and writes the raw bytes instead, which standard
//! JSON readers (protobuf's `json_format`, protobuf-es, prost-reflect) refuse.
//! So this crate keeps its own `Any` with the same wire shape and fields as
//! `prost_types::Any`, and a registry of the types it may hold: the
//! googleapis error details (`google/rpc/error_details.proto`), which are
//! what every `google.rpc.Status` of this service packs. Each registered
//! type's fields are written and read by its pbjson-generated serde code;
//! only the `@type` envelope is handled here. A type outside the registry
//! cannot be written as JSON, and the mapping says so: writing fails with a
//! message naming the type URL.

use prost::Message;
use serde::{de::Error as _, ser::Error as _, ser::SerializeMap, Deserialize, Serialize};
use serde_json::{Map, Value};

use crate::google::rpc;

/// A message packed with its type URL (`google.protobuf.Any`).
#[derive(Clone, PartialEq, Eq, Hash, Message)]
pub struct Any {
    /// The type URL, e.g. `type.googleapis.com/google.rpc.BadRequest`.
    #[prost(string, tag = "1")]
    pub type_url: String,
    /// The packed message, protobuf-encoded.
    #[prost(bytes = "vec", tag = "2")]
    pub value: Vec<u8>,
}

/// Call `$then::<T>` with the registered type `T` named `$name`, or evaluate
/// `$otherwise`.
macro_rules! with_registered_type {
    ($name:expr, $then:ident ( $($arg:expr),* ), $otherwise:expr) => {
        match $name {
            "google.rpc.ErrorInfo" => $then::<rpc::ErrorInfo>($($arg),*),
            "google.rpc.RetryInfo" => $then::<rpc::RetryInfo>($($arg),*),
            "google.rpc.DebugInfo" => $then::<rpc::DebugInfo>($($arg),*),
            "google.rpc.QuotaFailure" => $then::<rpc::QuotaFailure>($($arg),*),
            "google.rpc.PreconditionFailure" => $then::<rpc::PreconditionFailure>($($arg),*),
            "google.rpc.BadRequest" => $then::<rpc::BadRequest>($($arg),*),
            "google.rpc.RequestInfo" => $then::<rpc::RequestInfo>($($arg),*),
            "google.rpc.ResourceInfo" => $then::<rpc::ResourceInfo>($($arg),*),
            "google.rpc.Help" => $then::<rpc::Help>($($arg),*),
            "google.rpc.LocalizedMessage" => $then::<rpc::LocalizedMessage>($($arg),*),
            _ => $otherwise,
        }
    };
}

/// The JSON key of the type URL.
const TYPE_KEY: &str = "@type";

impl Any {
    /// Pack `message` under `type_url` (take the URL from the crate that owns
    /// the type, e.g. `tonic_types::BadRequest::TYPE_URL`).
    pub fn pack(type_url: &str, message: &impl Message) -> Self {
        Self {
            type_url: type_url.to_owned(),
            value: message.encode_to_vec(),
        }
    }

    /// The fully qualified message name in the type URL (the part after the
    /// last `/`), e.g. `google.rpc.BadRequest`.
    pub fn type_name(&self) -> &str {
        type_name(&self.type_url)
    }

    /// The packed message's own fields in their JSON form (without `@type`),
    /// or why there is none (a type outside the registry, or bytes that do
    /// not decode as the named type).
    pub fn message_json(&self) -> Result<Map<String, Value>, String> {
        with_registered_type!(
            self.type_name(),
            fields_of(&self.value),
            Err(format!(
                "google.protobuf.Any of type `{}` has no JSON form here: the type is not registered",
                self.type_url
            ))
        )
    }
}

fn type_name(type_url: &str) -> &str {
    type_url.rsplit('/').next().unwrap_or(type_url)
}

impl From<prost_types::Any> for Any {
    fn from(any: prost_types::Any) -> Self {
        Self {
            type_url: any.type_url,
            value: any.value,
        }
    }
}

impl From<Any> for prost_types::Any {
    fn from(any: Any) -> Self {
        Self {
            type_url: any.type_url,
            value: any.value,
        }
    }
}

/// The JSON object of the message of type `T` encoded in `bytes`.
fn fields_of<T: Message + Default + Serialize>(bytes: &[u8]) -> Result<Map<String, Value>, String> {
    let message = T::decode(bytes).map_err(|e| e.to_string())?;
    match serde_json::to_value(&message).map_err(|e| e.to_string())? {
        Value::Object(fields) => Ok(fields),
        _ => Err("the packed message has no JSON object form".to_owned()),
    }
}

/// The encoding of the message of type `T` whose JSON fields are `fields`.
fn encode_from<T: Message + for<'de> Deserialize<'de>>(
    fields: Map<String, Value>,
) -> Result<Vec<u8>, serde_json::Error> {
    serde_json::from_value::<T>(Value::Object(fields)).map(|m| m.encode_to_vec())
}

impl Serialize for Any {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let fields = self.message_json().map_err(S::Error::custom)?;
        let mut map = serializer.serialize_map(Some(fields.len() + 1))?;
        map.serialize_entry(TYPE_KEY, &self.type_url)?;
        for (key, value) in &fields {
            map.serialize_entry(key, value)?;
        }
        map.end()
    }
}

impl<'de> Deserialize<'de> for Any {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let mut fields = Map::deserialize(deserializer)?;
        let type_url = match fields.remove(TYPE_KEY) {
            Some(Value::String(url)) => url,
            Some(_) => return Err(D::Error::custom("`@type` must be a string")),
            None => return Err(D::Error::missing_field(TYPE_KEY)),
        };
        let value = with_registered_type!(
            type_name(&type_url),
            encode_from(fields),
            return Err(D::Error::custom(format!(
                "google.protobuf.Any of type `{type_url}` cannot be read here: the type is not registered"
            )))
        )
        .map_err(D::Error::custom)?;
        Ok(Self { type_url, value })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn bad_request() -> Any {
        Any::pack(
            "type.googleapis.com/google.rpc.BadRequest",
            &rpc::BadRequest {
                field_violations: vec![rpc::bad_request::FieldViolation {
                    field: "po2.value".to_owned(),
                    description: "po2.value must lie in [0.001, 7600] mm[Hg]".to_owned(),
                    reason: "PRESSURE_OUT_OF_RANGE".to_owned(),
                    localized_message: None,
                }],
            },
        )
    }

    #[test]
    fn a_registered_type_is_written_with_its_type_url_and_own_fields() {
        let json = serde_json::to_value(bad_request()).unwrap();
        assert_eq!(
            json,
            serde_json::json!({
                "@type": "type.googleapis.com/google.rpc.BadRequest",
                "fieldViolations": [{
                    "field": "po2.value",
                    "description": "po2.value must lie in [0.001, 7600] mm[Hg]",
                    "reason": "PRESSURE_OUT_OF_RANGE"
                }]
            })
        );
    }

    #[test]
    fn the_json_form_reads_back_to_the_same_bytes() {
        let any = bad_request();
        let text = serde_json::to_string(&any).unwrap();
        let back: Any = serde_json::from_str(&text).unwrap();
        assert_eq!(back, any);
    }

    #[test]
    fn an_unregistered_type_is_refused_naming_its_url() {
        let any = Any {
            type_url: "type.googleapis.com/acme.Unknown".to_owned(),
            value: vec![],
        };
        let error = serde_json::to_string(&any).unwrap_err().to_string();
        assert!(error.contains("acme.Unknown"), "{error}");
        let error = serde_json::from_str::<Any>(r#"{"@type":"type.googleapis.com/acme.Unknown"}"#)
            .unwrap_err()
            .to_string();
        assert!(error.contains("acme.Unknown"), "{error}");
    }
}
