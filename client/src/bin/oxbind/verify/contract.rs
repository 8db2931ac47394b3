//! The contract by reflection: requests from their protobuf JSON form to
//! bytes and answers back, for any method the contract defines; the
//! canonical JSON the report hashes; SHA-256.

use std::{fmt::Write as _, sync::OnceLock};

use prost::Message;
use prost_reflect::{DescriptorPool, DynamicMessage, MethodDescriptor, SerializeOptions};
use serde_json::Value;
use sha2::{Digest, Sha256};

/// The contract's descriptors with the `google.rpc` error details, so that
/// the `Any` in a batch item's error has a JSON form.
pub(crate) fn pool() -> &'static DescriptorPool {
    static POOL: OnceLock<DescriptorPool> = OnceLock::new();
    POOL.get_or_init(|| {
        let mut pool = DescriptorPool::decode(oxbind_proto::FILE_DESCRIPTOR_SET)
            .expect("the contract's embedded descriptors decode");
        let details = prost_types::FileDescriptorSet::decode(tonic_types::pb::FILE_DESCRIPTOR_SET)
            .expect("tonic-types' embedded descriptors decode");
        for file in details.file {
            // Keep the contract's own copy of any file or message both have.
            let known = pool.get_file_by_name(file.name()).is_some()
                || file.message_type.iter().any(|m| {
                    pool.get_message_by_name(&format!("{}.{}", file.package(), m.name()))
                        .is_some()
                });
            if !known {
                pool.add_file_descriptor_proto(file)
                    .expect("the google.rpc details add to the contract's descriptors");
            }
        }
        pool
    })
}

/// The method `oxbind.v1.Service/Method`, when the contract has it.
pub(crate) fn method(rpc: &str) -> Option<MethodDescriptor> {
    let (service, name) = rpc.split_once('/')?;
    pool()
        .get_service_by_name(service)?
        .methods()
        .find(|m| m.name() == name)
}

/// The request `json` (protobuf JSON mapping) in binary form.
pub(crate) fn encode_request(method: &MethodDescriptor, json: &Value) -> Result<Vec<u8>, String> {
    DynamicMessage::deserialize(method.input(), json.clone())
        .map(|m| m.encode_to_vec())
        .map_err(|e| {
            format!(
                "the request does not fit {}: {e}",
                method.input().full_name()
            )
        })
}

/// A binary answer in its JSON form, every field present (defaults too), so
/// that any path can be looked up whichever door answered.
pub(crate) fn decode_response(method: &MethodDescriptor, bytes: &[u8]) -> Result<Value, String> {
    let message = DynamicMessage::decode(method.output(), bytes)
        .map_err(|e| format!("the answer is not a {}: {e}", method.output().full_name()))?;
    full_json(&message)
}

/// A JSON answer (from a JSON door) in the same form as
/// [`decode_response`] gives: read by the contract, then written with every
/// field present.
pub(crate) fn normalise_response(method: &MethodDescriptor, json: Value) -> Result<Value, String> {
    let message = DynamicMessage::deserialize(method.output(), json)
        .map_err(|e| format!("the answer is not a {}: {e}", method.output().full_name()))?;
    full_json(&message)
}

fn full_json(message: &DynamicMessage) -> Result<Value, String> {
    message
        .serialize_with_options(
            serde_json::value::Serializer,
            &SerializeOptions::new().skip_default_fields(false),
        )
        .map_err(|e| format!("the answer has no JSON form: {e}"))
}

/// The canonical text of a JSON value: no whitespace, object keys in
/// ascending order of their UTF-8 bytes, strings escaped as serde_json
/// escapes them, numbers in serde_json's shortest round-trip form.
pub(crate) fn canonical_json(value: &Value) -> String {
    let mut out = String::new();
    write_canonical(value, &mut out);
    out
}

fn write_canonical(value: &Value, out: &mut String) {
    match value {
        Value::Object(map) => {
            let mut keys: Vec<&String> = map.keys().collect();
            keys.sort();
            out.push('{');
            for (i, key) in keys.into_iter().enumerate() {
                if i > 0 {
                    out.push(',');
                }
                out.push_str(&Value::String(key.clone()).to_string());
                out.push(':');
                write_canonical(&map[key], out);
            }
            out.push('}');
        }
        Value::Array(items) => {
            out.push('[');
            for (i, item) in items.iter().enumerate() {
                if i > 0 {
                    out.push(',');
                }
                write_canonical(item, out);
            }
            out.push(']');
        }
        other => out.push_str(&other.to_string()),
    }
}

/// SHA-256 of `bytes`, as 64 lower-case hexadecimal digits.
pub(crate) fn sha256_hex(bytes: &[u8]) -> String {
    let digest = Sha256::digest(bytes);
    let mut hex = String::with_capacity(64);
    for byte in digest {
        let _ = write!(hex, "{byte:02x}");
    }
    hex
}

#[cfg(test)]
mod tests {
    use serde_json::json;

    use super::*;

    #[test]
    fn canonical_json_sorts_keys_and_drops_whitespace() {
        let value = json!({"b": [1, {"z": true, "a": null}], "a": "é\"", "c": 0.1});
        assert_eq!(
            canonical_json(&value),
            r#"{"a":"é\"","b":[1,{"a":null,"z":true}],"c":0.1}"#
        );
    }

    #[test]
    fn sha256_of_abc_is_the_fips_180_2_example() {
        // FIPS 180-2, appendix B.1.
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn every_method_of_the_contract_is_found() {
        for service in oxbind_proto::service_names::ALL {
            let service = pool().get_service_by_name(service).expect("service");
            for m in service.methods() {
                let rpc = format!("{}/{}", service.full_name(), m.name());
                assert!(method(&rpc).is_some(), "{rpc}");
            }
        }
    }
}
