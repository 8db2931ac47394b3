//! Request bodies for h2load, the HTTP/2 load generator of nghttp2, so that
//! BENCHMARKS.md can measure the server with a tool that is not ours.
//!
//! ```text
//! cargo run -p oxbind-client --example h2load_bodies -- DIR
//! ```
//!
//! Writes into DIR (default: the current directory):
//! - `health-check.grpc`: a gRPC-framed `grpc.health.v1.HealthCheckRequest`
//!   for the whole server;
//! - `saturation-conditions.grpc`: a gRPC-framed
//!   `oxbind.v1.SaturationFromTensionRequest`, PO2 70 mm[Hg] with pH 7.32,
//!   PCO2 48 mm[Hg] and temperature 38.5 Cel (invented values, not patient
//!   data), the default model;
//! - `saturation-conditions.json`: the same request in the Connect
//!   protocol's JSON form.
//!
//! A gRPC message on the wire is one byte of compression flag (0), four bytes
//! of big-endian length, then the protobuf bytes (gRPC over HTTP/2 protocol,
//! "Length-Prefixed-Message").

use std::{error::Error, path::PathBuf};

use oxbind_client::v1::{BloodConditions, Quantity, SaturationFromTensionRequest};
use prost::Message;

/// One gRPC length-prefixed message, uncompressed.
fn grpc_frame(message: &impl Message) -> Vec<u8> {
    let body = message.encode_to_vec();
    let length = u32::try_from(body.len()).expect("a small message");
    let mut framed = Vec::with_capacity(5 + body.len());
    framed.push(0);
    framed.extend_from_slice(&length.to_be_bytes());
    framed.extend_from_slice(&body);
    framed
}

fn main() -> Result<(), Box<dyn Error>> {
    let dir = PathBuf::from(std::env::args().nth(1).unwrap_or_else(|| ".".to_owned()));
    std::fs::create_dir_all(&dir)?;

    let health = oxbind_client::health::HealthCheckRequest {
        service: String::new(),
    };
    std::fs::write(dir.join("health-check.grpc"), grpc_frame(&health))?;

    let saturation = SaturationFromTensionRequest {
        po2: Some(Quantity::mm_hg(70.0)),
        conditions: Some(
            BloodConditions::standard()
                .with_ph(7.32)
                .with_pco2(Quantity::mm_hg(48.0))
                .with_temperature(Quantity::celsius(38.5)),
        ),
        ..Default::default()
    };
    std::fs::write(
        dir.join("saturation-conditions.grpc"),
        grpc_frame(&saturation),
    )?;
    std::fs::write(
        dir.join("saturation-conditions.json"),
        serde_json::to_vec(&saturation)?,
    )?;
    println!("wrote the h2load bodies into {}", dir.display());
    Ok(())
}
