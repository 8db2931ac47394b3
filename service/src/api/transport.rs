//! `oxbind.v1.OxygenTransportService`.

use oxbind_proto::v1::oxygen_transport_service_server::OxygenTransportService;

/// The oxygen content and gas-exchange RPCs.
#[derive(Debug, Clone, Default)]
pub struct TransportApi;

impl TransportApi {
    /// A new handler.
    pub fn new() -> Self {
        Self
    }
}

#[tonic::async_trait]
impl OxygenTransportService for TransportApi {}
