//! Client for the Oxbind gRPC service.
//!
//! Re-exports the generated v1 messages and client stubs, and offers
//! [`connect`] to open a channel to a server.
//!
//! ```no_run
//! # async fn example() -> Result<(), oxbind_client::ConnectError> {
//! let channel = oxbind_client::connect("http://127.0.0.1:50051").await?;
//! let mut catalog = oxbind_client::v1::model_catalog_service_client::ModelCatalogServiceClient::new(channel);
//! # let _ = &mut catalog;
//! # Ok(()) }
//! ```

pub use oxbind_proto::{service_names, v1};
pub use tonic_health::pb as health;

use tonic::transport::{Channel, Endpoint};

/// The address `oxbind` talks to when none is given.
pub const DEFAULT_SERVER: &str = "http://127.0.0.1:50051";

/// Why a connection could not be opened.
#[derive(Debug)]
pub enum ConnectError {
    /// The endpoint is not a valid URI.
    InvalidEndpoint(String),
    /// The server could not be reached.
    Unreachable(tonic::transport::Error),
}

impl std::fmt::Display for ConnectError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ConnectError::InvalidEndpoint(e) => write!(f, "invalid server address: {e}"),
            ConnectError::Unreachable(e) => write!(f, "server unreachable: {e}"),
        }
    }
}

impl std::error::Error for ConnectError {}

/// Open a channel to the server at `endpoint` (for example
/// `http://127.0.0.1:50051`).
pub async fn connect(endpoint: impl Into<String>) -> Result<Channel, ConnectError> {
    let endpoint: String = endpoint.into();
    Endpoint::from_shared(endpoint.clone())
        .map_err(|e| ConnectError::InvalidEndpoint(format!("{endpoint}: {e}")))?
        .tcp_nodelay(true)
        .connect()
        .await
        .map_err(ConnectError::Unreachable)
}
