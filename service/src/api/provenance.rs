//! Provenance: what a stored result needs beside it to be audited and
//! recomputed.

use std::time::SystemTime;

use oxbind_proto::v1::{InputUsed, Provenance};

use crate::{
    identity::{BUILD_COMMIT, SERVICE_VERSION},
    physiology::model::ModelInfo,
};

/// The API version of the contract.
pub const API_VERSION: &str = "v1";

/// The published method behind a result that uses no dissociation model
/// (temperature correction, content, gas exchange).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Method {
    /// Version of our implementation of the method.
    pub version: &'static str,
    /// Full citation of the method(s).
    pub reference: &'static str,
    /// DOI, or empty.
    pub doi: &'static str,
}

/// Provenance for a result computed with `model`.
pub fn for_model(
    model: &ModelInfo,
    inputs_used: Vec<InputUsed>,
    within_validated_range: bool,
) -> Provenance {
    build(
        model.id,
        model.version,
        model.reference,
        model.doi,
        inputs_used,
        within_validated_range,
    )
}

/// Provenance for a result computed by `method` alone (no curve model).
pub fn for_method(
    method: &Method,
    inputs_used: Vec<InputUsed>,
    within_validated_range: bool,
) -> Provenance {
    build(
        "",
        method.version,
        method.reference,
        method.doi,
        inputs_used,
        within_validated_range,
    )
}

fn build(
    model_id: &str,
    version: &str,
    reference: &str,
    doi: &str,
    inputs_used: Vec<InputUsed>,
    within_validated_range: bool,
) -> Provenance {
    Provenance {
        model_id: model_id.to_owned(),
        model_version: version.to_owned(),
        reference: reference.to_owned(),
        doi: doi.to_owned(),
        service_version: SERVICE_VERSION.to_owned(),
        build_commit: BUILD_COMMIT.to_owned(),
        api_version: API_VERSION.to_owned(),
        inputs_used,
        within_validated_range,
        compute_time: Some(oxbind_proto::Timestamp::from(SystemTime::now())),
    }
}
