//! `oxbind.v1.DissociationService`.

use oxbind_proto::v1::dissociation_service_server::DissociationService;

/// The dissociation-curve RPCs.
#[derive(Debug, Clone)]
pub struct DissociationApi {
    max_batch_items: usize,
}

impl DissociationApi {
    /// A handler refusing batches of more than `max_batch_items` items.
    pub fn new(max_batch_items: usize) -> Self {
        Self { max_batch_items }
    }

    /// The configured batch item limit.
    pub fn max_batch_items(&self) -> usize {
        self.max_batch_items
    }
}

#[tonic::async_trait]
impl DissociationService for DissociationApi {}
