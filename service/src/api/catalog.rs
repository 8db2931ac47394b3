//! `oxbind.v1.ModelCatalogService`.

use oxbind_proto::v1::model_catalog_service_server::ModelCatalogService;

/// The model catalog RPC.
#[derive(Debug, Clone, Default)]
pub struct CatalogApi;

impl CatalogApi {
    /// A new handler.
    pub fn new() -> Self {
        Self
    }
}

#[tonic::async_trait]
impl ModelCatalogService for CatalogApi {}
