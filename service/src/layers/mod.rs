//! Tower layers and listener wrappers around the gRPC services.
//!
//! - [`call`]: one layer per call: request id, server span, deadline, load
//!   shedding, status capture, metrics and the per-call log line.
//! - [`connections`]: a cap on open connections per listener.
//! - [`web`]: grpc-web and its CORS policy, behind a flag.

pub mod call;
pub mod connections;
pub mod web;
