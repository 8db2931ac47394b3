//! The shared test vectors (`tests/vectors/*.json`) and the descriptors to
//! read them with: each request and response is written in the protobuf
//! JSON mapping, and `prost_reflect` turns it into messages of the contract
//! (see `tests/tests/shared_vectors.rs` for the schema).

use std::path::PathBuf;

use prost::Message;
use prost_reflect::{DescriptorPool, MethodDescriptor};
use serde_json::Value;

/// Every vector file under `tests/vectors/`, parsed.
pub fn vector_files() -> Vec<(PathBuf, Value)> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("vectors");
    let mut paths: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("read {}: {e}", dir.display()))
        .map(|entry| entry.expect("directory entry").path())
        .filter(|path| path.extension().is_some_and(|ext| ext == "json"))
        .collect();
    paths.sort();
    assert!(!paths.is_empty(), "no vector files in {}", dir.display());
    paths
        .into_iter()
        .map(|path| {
            let text = std::fs::read_to_string(&path)
                .unwrap_or_else(|e| panic!("read {}: {e}", path.display()));
            let value: Value = serde_json::from_str(&text)
                .unwrap_or_else(|e| panic!("parse {}: {e}", path.display()));
            (path, value)
        })
        .collect()
}

/// All vectors of all files.
pub fn vectors() -> Vec<Value> {
    vector_files()
        .into_iter()
        .flat_map(|(path, file)| {
            file["vectors"]
                .as_array()
                .unwrap_or_else(|| panic!("{}: no \"vectors\" array", path.display()))
                .clone()
        })
        .collect()
}

/// The contract's descriptors plus the `google.rpc` error details, so that
/// `google.protobuf.Any` in batch item errors can be rendered as JSON.
pub fn descriptor_pool() -> DescriptorPool {
    let mut pool =
        DescriptorPool::decode(oxbind_proto::FILE_DESCRIPTOR_SET).expect("contract descriptors");
    let details = prost_types::FileDescriptorSet::decode(tonic_types::pb::FILE_DESCRIPTOR_SET)
        .expect("google.rpc descriptors");
    for file in details.file {
        // The contract vendors google/rpc/status.proto itself (tonic-types
        // names its copy status.proto); keep the contract's copy.
        let already_defined = pool.get_file_by_name(file.name()).is_some()
            || file.message_type.iter().any(|m| {
                let full_name = format!("{}.{}", file.package(), m.name());
                pool.get_message_by_name(&full_name).is_some()
            });
        if !already_defined {
            pool.add_file_descriptor_proto(file)
                .expect("google.rpc file adds to the pool");
        }
    }
    pool
}

/// The method named `package.Service/Method`.
pub fn method(pool: &DescriptorPool, rpc: &str) -> MethodDescriptor {
    let (service, name) = rpc
        .split_once('/')
        .unwrap_or_else(|| panic!("rpc {rpc:?} is not Service/Method"));
    let service = pool
        .get_service_by_name(service)
        .unwrap_or_else(|| panic!("unknown service in {rpc:?}"));
    let found = service.methods().find(|m| m.name() == name);
    found.unwrap_or_else(|| panic!("unknown method in {rpc:?}"))
}
