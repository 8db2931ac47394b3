//! The physiology engine: pure, synchronous computation in the units of the
//! published equations (mmHg, degrees Celsius, g/dL, mmol/L, fractions).
//!
//! Nothing here knows about gRPC, protobuf or I/O; every function documents its
//! equation and published source.
//!
//! The layout:
//!
//! - [`curves`]: the dissociation-curve models, their trait and helpers
//!   ([`curves::curve`]) and the dispatch enum ([`curves::dispatch`]); carbon
//!   monoxide through [`curves::dyshemoglobin`].
//! - [`transport`]: oxygen content, delivery, Fick ([`transport::content`]) and
//!   gas exchange ([`transport::gas_exchange`]).
//! - Shared pieces every part reaches: [`conditions`], [`units`], [`solver`],
//!   [`tolerance`], [`error`], [`temperature`] (blood-gas temperature
//!   correction), [`shift`] (P50 at conditions, shift factors),
//!   [`p50_estimation`].
//! - Assurance: [`uncertainty`] (how sure a derived value is) and
//!   [`consistency`] (whether a blood-gas sample's results agree with one
//!   another).
//!
//! The flat paths of the earlier layout (`physiology::model`,
//! `physiology::severinghaus`, `physiology::content`, ...) still resolve through
//! the re-exports at the end of this file.

// Parts.
pub mod curves;
pub mod transport;

// Shared pieces.
pub mod conditions;
pub mod consistency;
pub mod error;
pub mod p50_estimation;
pub mod shift;
pub mod solver;
pub mod temperature;
pub mod tolerance;
pub mod uncertainty;
pub mod units;

// Re-exports: the public paths of the flat layout, kept so that code written
// against them compiles unchanged.
pub use curves::{
    adair, dash, dyshemoglobin, hill, kelman, severinghaus, siggaard_andersen,
    siggaard_andersen_1990,
};
pub use transport::{content, gas_exchange};

/// The trait, model description and dispatch enum under their earlier path
/// (`physiology::model::...`): re-exports of [`curves::curve`] and
/// [`curves::dispatch`].
pub mod model {
    pub use super::curves::curve::*;
    pub use super::curves::dispatch::*;
}
