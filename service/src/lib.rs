//! Oxbind: one validated, versioned, auditable implementation of the published
//! oxygen-haemoglobin dissociation methods, served over gRPC.
//!
//! - [`physiology`]: the science, pure and synchronous: curve models and their
//!   inverses, shifts and P50, temperature correction, oxygen content and gas
//!   exchange. No gRPC types.
//! - [`api`]: transport-neutral, one function per RPC: the request message to
//!   validated domain input, to physiology, and back to the response message
//!   or a refusal.
//! - The doors, which only convert and call [`api`]: [`grpc`] (tonic's
//!   service traits) and [`http`] (the dispatch in front of the routes, the
//!   Connect protocol and the FHIR R4 door).
//! - [`server`], [`config`], [`layers`], [`telemetry`], [`shutdown`]:
//!   start-up, the connection loop and TLS, per-call layers, admission,
//!   telemetry and shutdown.
//! - [`instruments`] and [`identity`]: the metric instruments and the build's
//!   identity, at the bottom: `api`, `layers`, `http` and `telemetry` use
//!   them, and they use nothing of the crate.
//!
//! Results are decision support only: measured co-oximetry and licensed
//! clinicians decide, and local laboratory policy decides what is reported.

pub mod api;
pub mod config;
pub mod grpc;
pub mod http;
pub mod identity;
pub mod instruments;
pub mod layers;
pub mod physiology;
pub mod server;
pub mod shutdown;
pub mod telemetry;

pub use config::Config;
pub use identity::{BUILD_COMMIT, SERVICE_VERSION};
pub use server::{serve, serve_on, ServeError};
