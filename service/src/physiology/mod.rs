//! The physiology engine: pure, synchronous computation in the units of the
//! published equations (mmHg, degrees Celsius, g/dL, mmol/L, fractions).
//!
//! Nothing here knows about gRPC, protobuf or I/O; every function documents its
//! equation and published source.

pub mod error;
pub mod tolerance;
pub mod units;
