//! The physiology engine: pure, synchronous computation in the units of the
//! published equations (mmHg, degrees Celsius, g/dL, mmol/L, fractions).
//!
//! Nothing here knows about gRPC, protobuf or I/O; every function documents its
//! equation and published source.
//!
//! - Curve models behind one trait ([`model::DissociationModel`]):
//!   [`severinghaus`], [`kelman`], [`hill`], [`adair`], [`siggaard_andersen`],
//!   [`dash`]; carbon monoxide through [`dyshemoglobin`]; the bracketing
//!   [`solver`] every inverse uses.
//! - Derived quantities: [`shift`] (P50 at conditions, shift factors),
//!   [`p50_estimation`], [`temperature`] (blood-gas temperature correction),
//!   [`content`] (oxygen content, delivery, Fick), [`gas_exchange`].
//! - [`conditions`], [`units`], [`error`], [`tolerance`].

pub mod adair;
pub mod conditions;
pub mod content;
pub mod dash;
pub mod dyshemoglobin;
pub mod error;
pub mod gas_exchange;
pub mod hill;
pub mod kelman;
pub mod model;
pub mod p50_estimation;
pub mod severinghaus;
pub mod shift;
pub mod siggaard_andersen;
pub mod solver;
pub mod temperature;
pub mod tolerance;
pub mod uncertainty;
pub mod units;
