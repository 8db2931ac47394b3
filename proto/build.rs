//! Compiles the v1 contract with protox (pure Rust, no system `protoc`) and
//! generates, from the one resulting descriptor set:
//!
//! - the prost messages and tonic stubs (tonic-prost-build);
//! - their serde implementations in the canonical proto3 JSON mapping
//!   (pbjson-build), for the Connect protocol's JSON codec.
//!
//! The well-known types come from `pbjson-types` (prost messages with the
//! mapping's JSON forms), except `Timestamp`, which is `crate::timestamp::
//! Timestamp` (pbjson-types writes it with `+00:00` rather than the `Z` the
//! mapping asks for), and the
//! `google.rpc` types the contract and its errors use (Status and the error
//! details) are generated here from the vendored googleapis files, so they
//! have JSON forms too. `google.protobuf.Any` is `crate::any::Any`, whose
//! JSON form is the mapping's `{"@type": ..., <fields>}` (pbjson-types' own
//! Any writes the raw bytes instead).
//!
//! The encoded descriptor set of the contract alone is written beside the
//! generated code so the server can offer it through reflection.

use std::{env, fs, path::PathBuf};

/// The contract's files, relative to the include directory.
const CONTRACT_FILES: [&str; 6] = [
    "oxbind/v1/common.proto",
    "oxbind/v1/dissociation.proto",
    "oxbind/v1/transport.proto",
    "oxbind/v1/catalog.proto",
    "oxbind/v1/uncertainty.proto",
    "oxbind/v1/consistency.proto",
];

/// The googleapis error details, generated beside the contract (not part of
/// it, and not offered through reflection, which has tonic-types' copy).
const ERROR_DETAILS_FILE: &str = "google/rpc/error_details.proto";

/// The include directory: the contract and the vendored `google/rpc` files.
const INCLUDE_DIR: &str = ".";

/// File name of the encoded descriptor set in `OUT_DIR`.
const DESCRIPTOR_FILE: &str = "oxbind_v1_descriptor.bin";

/// Where the well-known types (`google.protobuf.*`) come from.
const WELL_KNOWN_TYPES: (&str, &str) = (".google.protobuf", "::pbjson_types");

/// Where `google.protobuf.Any` comes from (more specific than the above, so
/// it wins in both generators).
const ANY_TYPE: (&str, &str) = (".google.protobuf.Any", "crate::any::Any");

/// Where `google.protobuf.Timestamp` comes from (as `ANY_TYPE`).
const TIMESTAMP_TYPE: (&str, &str) = (".google.protobuf.Timestamp", "crate::timestamp::Timestamp");

/// The packages generated here.
const GENERATED_PACKAGES: [&str; 2] = [".oxbind.v1", ".google.rpc"];

fn main() -> Result<(), Box<dyn std::error::Error>> {
    for file in CONTRACT_FILES {
        println!("cargo:rerun-if-changed={file}");
    }
    println!("cargo:rerun-if-changed=google/rpc/status.proto");
    println!("cargo:rerun-if-changed={ERROR_DETAILS_FILE}");

    let out_dir = PathBuf::from(env::var("OUT_DIR")?);
    let contract = protox::compile(CONTRACT_FILES, [INCLUDE_DIR])?;
    fs::write(
        out_dir.join(DESCRIPTOR_FILE),
        protox::prost::Message::encode_to_vec(&contract),
    )?;

    let generated = protox::compile(
        CONTRACT_FILES.iter().copied().chain([ERROR_DETAILS_FILE]),
        [INCLUDE_DIR],
    )?;
    let encoded = protox::prost::Message::encode_to_vec(&generated);

    tonic_prost_build::configure()
        .build_client(true)
        .build_server(true)
        .compile_well_known_types(true)
        .extern_path(WELL_KNOWN_TYPES.0, WELL_KNOWN_TYPES.1)
        .extern_path(ANY_TYPE.0, ANY_TYPE.1)
        .extern_path(TIMESTAMP_TYPE.0, TIMESTAMP_TYPE.1)
        // Decode each message from one contiguous slice (src/codec.rs).
        .codec_path("crate::codec::ContiguousProstCodec")
        .compile_fds(generated)?;

    pbjson_build::Builder::new()
        .register_descriptors(&encoded)?
        .extern_path(WELL_KNOWN_TYPES.0, WELL_KNOWN_TYPES.1)
        .extern_path(ANY_TYPE.0, ANY_TYPE.1)
        .extern_path(TIMESTAMP_TYPE.0, TIMESTAMP_TYPE.1)
        .build(&GENERATED_PACKAGES)?;
    Ok(())
}
