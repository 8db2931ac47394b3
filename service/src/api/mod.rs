//! The gRPC adapters: one per v1 service. Each handler converts the proto
//! message into validated engine input, calls the physiology, and converts the
//! result back.

pub mod catalog;
pub mod dissociation;
pub mod transport;
