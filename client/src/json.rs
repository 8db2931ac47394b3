//! Protobuf JSON for any v1 message, by reflection over the embedded
//! descriptor set (the `prost-reflect` crate), so output follows the
//! protobuf JSON mapping: lowerCamelCase names, enums as names, 64-bit
//! integers as strings, timestamps as RFC 3339, default values left out.

use std::sync::OnceLock;

use prost_reflect::{DescriptorPool, DynamicMessage};

/// Why a message could not be rendered as JSON.
#[derive(Debug)]
pub struct JsonError(String);

impl std::fmt::Display for JsonError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "protobuf JSON: {}", self.0)
    }
}

impl std::error::Error for JsonError {}

fn pool() -> Result<&'static DescriptorPool, JsonError> {
    static POOL: OnceLock<Result<DescriptorPool, String>> = OnceLock::new();
    POOL.get_or_init(|| {
        DescriptorPool::decode(oxbind_proto::FILE_DESCRIPTOR_SET).map_err(|e| e.to_string())
    })
    .as_ref()
    .map_err(|e| JsonError(e.clone()))
}

/// The protobuf JSON form of `message`, whose fully qualified type name is
/// `full_name` (e.g. `oxbind.v1.ShiftFactorsResponse`).
///
/// ```
/// use oxbind_client::{json::to_json, v1::Quantity};
/// let json = to_json(&Quantity::mm_hg(48.0), "oxbind.v1.Quantity").unwrap();
/// assert_eq!(json["unit"], "mm[Hg]");
/// assert_eq!(json["value"], 48.0);
/// ```
pub fn to_json<M: prost::Message>(
    message: &M,
    full_name: &str,
) -> Result<serde_json::Value, JsonError> {
    let descriptor = pool()?
        .get_message_by_name(full_name)
        .ok_or_else(|| JsonError(format!("unknown message type {full_name}")))?;
    let dynamic = DynamicMessage::decode(descriptor, message.encode_to_vec().as_slice())
        .map_err(|e| JsonError(e.to_string()))?;
    serde_json::to_value(&dynamic).map_err(|e| JsonError(e.to_string()))
}
