//! Typed async client for the Oxbind gRPC service.
//!
//! - [`OxbindClient`], built with [`OxbindClient::builder`]: connect and
//!   per-call timeouts, TLS with a CA bundle and an optional client
//!   certificate (mutual TLS), retries of UNAVAILABLE only with exponential
//!   backoff, jitter and a cap ([`RetryPolicy`]), and a user agent.
//! - Typed quantities and conditions from [`oxbind_proto`]:
//!   `Quantity::mm_hg(80.0)`, `Quantity::kpa(10.7)`, `Quantity::celsius(38.5)`,
//!   and `BloodConditions::standard().with_ph(7.31)...`.
//! - One error type, [`ClientError`], with the status code and each refused
//!   field ([`FieldViolation`]).
//! - Balancing over every replica behind one name
//!   ([`ClientBuilder::balance_over_dns`]; see [`balance`]).
//! - [`json::to_json`] renders any message in the protobuf JSON mapping.
//!
//! ```no_run
//! # async fn example() -> Result<(), oxbind_client::ClientError> {
//! use oxbind_client::{OxbindClient, v1::{BloodConditions, Quantity}};
//! let client = OxbindClient::connect("http://127.0.0.1:50051").await?;
//! let conditions = BloodConditions::standard()
//!     .with_ph(7.31)
//!     .with_pco2(Quantity::mm_hg(48.0))
//!     .with_temperature(Quantity::celsius(38.5));
//! match client.saturation(Quantity::mm_hg(60.0), conditions).await {
//!     Ok(answer) => println!("SO2 {:.3}", answer.saturation_fraction),
//!     Err(error) if error.is_refusal() => {
//!         for v in error.field_violations() {
//!             eprintln!("{}: {}", v.field, v.description);
//!         }
//!     }
//!     Err(error) => return Err(error),
//! }
//! # Ok(()) }
//! ```
//!
//! Results support, and never replace, measured co-oximetry and the
//! judgement of licensed clinicians.

pub mod balance;
mod client;
mod error;
pub mod json;
mod retry;

pub use client::{
    ClientBuilder, ItemResult, OxbindClient, DEFAULT_CALL_TIMEOUT, DEFAULT_CONNECT_TIMEOUT,
    DEFAULT_USER_AGENT,
};
pub use error::{code_name, ClientError, ErrorInfo, FieldViolation};
pub use oxbind_proto::{service_names, ucum, v1};
pub use retry::{RetryPolicy, MAX_ATTEMPTS_CAP};
pub use tonic::Code;
pub use tonic_health::pb as health;

use tonic::transport::{Channel, Endpoint};

/// The address `oxbind` talks to when none is given.
pub const DEFAULT_SERVER: &str = "http://127.0.0.1:50051";

/// The error [`connect`] returns (kept for callers of the first release).
pub type ConnectError = ClientError;

/// Open a bare channel to the server at `endpoint` (for example
/// `http://127.0.0.1:50051`), for use with the generated stubs directly.
/// Most callers want [`OxbindClient`] instead.
pub async fn connect(endpoint: impl Into<String>) -> Result<Channel, ClientError> {
    let endpoint: String = endpoint.into();
    Endpoint::from_shared(endpoint.clone())
        .map_err(|e| ClientError::InvalidEndpoint {
            endpoint: endpoint.clone(),
            reason: e.to_string(),
        })?
        .tcp_nodelay(true)
        .connect()
        .await
        .map_err(ClientError::Connect)
}
