//! The Oxbind v1 gRPC contract: generated messages, client stubs and server
//! traits for `oxbind.v1`, and the encoded file descriptor set for server
//! reflection.
//!
//! The `.proto` files in `proto/oxbind/v1/` are the source of truth; this
//! crate only compiles them (with `protox`, so no system `protoc` is needed).

/// Generated code for the `oxbind.v1` package.
#[allow(missing_docs, unreachable_pub, clippy::all)]
pub mod v1 {
    tonic::include_proto!("oxbind.v1");
}

pub mod codec;
mod conditions;
mod quantity;

pub use quantity::ucum;

/// The encoded `FileDescriptorSet` of the whole v1 contract (with its imports),
/// for registration with server reflection.
pub const FILE_DESCRIPTOR_SET: &[u8] =
    include_bytes!(concat!(env!("OUT_DIR"), "/oxbind_v1_descriptor.bin"));

/// Fully qualified names of the three v1 services, as health checking and
/// reflection report them.
pub mod service_names {
    /// `oxbind.v1.DissociationService`.
    pub const DISSOCIATION: &str = "oxbind.v1.DissociationService";
    /// `oxbind.v1.OxygenTransportService`.
    pub const OXYGEN_TRANSPORT: &str = "oxbind.v1.OxygenTransportService";
    /// `oxbind.v1.ModelCatalogService`.
    pub const MODEL_CATALOG: &str = "oxbind.v1.ModelCatalogService";
    /// All three, in a stable order.
    pub const ALL: [&str; 3] = [DISSOCIATION, OXYGEN_TRANSPORT, MODEL_CATALOG];
}

#[cfg(test)]
mod tests {
    use super::*;
    use prost::Message;

    #[test]
    fn descriptor_set_decodes_and_lists_the_three_services() {
        let set = prost_types::FileDescriptorSet::decode(FILE_DESCRIPTOR_SET)
            .expect("the embedded descriptor set decodes");
        let mut services: Vec<String> = set
            .file
            .iter()
            .filter(|f| f.package() == "oxbind.v1")
            .flat_map(|f| f.service.iter().map(|s| format!("oxbind.v1.{}", s.name())))
            .collect();
        services.sort();
        let mut expected: Vec<String> = service_names::ALL.iter().map(|s| s.to_string()).collect();
        expected.sort();
        assert_eq!(services, expected);
    }

    #[test]
    fn every_rpc_is_marked_free_of_side_effects() {
        use prost_types::method_options::IdempotencyLevel;
        let set = prost_types::FileDescriptorSet::decode(FILE_DESCRIPTOR_SET).unwrap();
        let mut count = 0;
        for file in set.file.iter().filter(|f| f.package() == "oxbind.v1") {
            for service in &file.service {
                for method in &service.method {
                    count += 1;
                    let level = method
                        .options
                        .as_ref()
                        .map(|o| o.idempotency_level())
                        .unwrap_or(IdempotencyLevel::IdempotencyUnknown);
                    assert_eq!(
                        level,
                        IdempotencyLevel::NoSideEffects,
                        "{}.{} lacks idempotency_level = NO_SIDE_EFFECTS",
                        service.name(),
                        method.name()
                    );
                }
            }
        }
        assert!(count >= 11, "expected every v1 RPC, found {count}");
    }
}
