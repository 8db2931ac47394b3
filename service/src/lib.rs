//! Oxbind: one validated, versioned, auditable implementation of the published
//! oxygen-haemoglobin dissociation methods, served over gRPC.
//!
//! - [`physiology`]: the science, pure and synchronous: curve models and their
//!   inverses, shifts and P50, temperature correction, oxygen content and gas
//!   exchange. No gRPC types.
//! - [`api`]: one thin adapter per gRPC service: proto to validated domain
//!   input, to physiology, and back.
//! - [`server`], [`config`], [`layers`], [`telemetry`], [`shutdown`]:
//!   start-up, per-call layers, limits, telemetry and shutdown.
//!
//! Results are decision support only: measured co-oximetry and licensed
//! clinicians decide, and local laboratory policy decides what is reported.

pub mod api;
pub mod config;
pub mod grpc;
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
