//! The doors beside gRPC on the main listener: the FHIR R4 operation
//! ([`fhir`]). Each converts, validates and calls the same transport-neutral
//! API functions as the gRPC handlers.

pub mod fhir;
