//! The gRPC adapters: one per v1 service. Each handler converts the proto
//! message into validated engine input, calls the physiology, and converts the
//! result back. Refusals become statuses in one place, [`status`].

pub mod catalog;
pub mod dissociation;
pub mod field_path;
pub mod limits;
pub mod model_choice;
pub mod observe;
pub mod provenance;
pub mod reader;
pub mod server_settings;
pub mod standard_ranges;
pub mod status;
pub mod transport;
pub mod units;
pub mod warnings;
