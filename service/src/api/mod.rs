//! The transport-neutral API: one module per v1 service family, one function
//! per RPC. Each takes the request message, converts it into validated
//! engine input, calls the physiology, and returns the response message or a
//! refusal ([`status::InvalidRequest`]). No transport type appears here: the
//! doors (gRPC in [`crate::grpc`], the Connect protocol in [`crate::http`])
//! call these functions and put a refusal in their own shape, each in one
//! place, from [`status`]'s `google.rpc.Status`.

pub mod catalog;
pub mod consistency;
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
pub mod uncertainty;
pub mod units;
pub mod warnings;
