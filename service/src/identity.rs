//! The build's identity, as provenance and telemetry report it.
//!
//! Like [`crate::instruments`], this module sits at the bottom of the crate:
//! `api` (provenance), `telemetry` (the `service.version` resource
//! attribute) and the doors use it; it uses nothing of theirs. The crate
//! root re-exports both constants (`oxbind_service::SERVICE_VERSION`).

/// The service's version, as reported in provenance.
pub const SERVICE_VERSION: &str = env!("CARGO_PKG_VERSION");

/// The git commit the service was built from, or "unknown" outside a checkout
/// (embedded by `service/build.rs`).
pub const BUILD_COMMIT: &str = env!("OXBIND_BUILD_COMMIT");
