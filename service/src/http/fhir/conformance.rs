//! The conformance resources, served as the data files they are kept in:
//! the CapabilityStatement (`GET /fhir/r4/metadata`), the
//! OperationDefinition and the CodeSystem of derived values without a
//! LOINC term (each at its canonical URL's path).

use std::sync::LazyLock;

use serde_json::Value;

use crate::SERVICE_VERSION;

/// The CapabilityStatement as shipped (`software.version` is filled in).
pub const CAPABILITY_STATEMENT: &str = include_str!("data/capabilitystatement.json");

/// The OperationDefinition of the operation.
pub const OPERATION_DEFINITION: &str =
    include_str!("data/operationdefinition-derive-oxygen-values.json");

/// The CodeSystem of derived values without a LOINC term.
pub const CODE_SYSTEM: &str = include_str!("data/codesystem-oxygen-derived-values.json");

/// The OperationDefinition's id (its path under `OperationDefinition/`).
pub const OPERATION_DEFINITION_ID: &str = "derive-oxygen-values";

/// The CodeSystem's id (its path under `CodeSystem/`).
pub const CODE_SYSTEM_ID: &str = "oxygen-derived-values";

/// The placeholder of `software.version` in the data file.
const VERSION_PLACEHOLDER: &str = "\"set by the server\"";

/// The CapabilityStatement with this build's version (the data file as
/// written otherwise).
pub static METADATA: LazyLock<Vec<u8>> = LazyLock::new(|| {
    let version = Value::String(SERVICE_VERSION.to_owned()).to_string();
    CAPABILITY_STATEMENT
        .replacen(VERSION_PLACEHOLDER, &version, 1)
        .into_bytes()
});

#[cfg(test)]
mod tests {
    use std::collections::BTreeSet;

    use super::*;
    use crate::http::fhir::codes::{CODE_SYSTEM_URL, MAPPING};

    fn json(text: &str) -> Value {
        serde_json::from_str(text).unwrap()
    }

    #[test]
    fn the_code_system_defines_exactly_the_codes_the_mapping_uses() {
        let code_system = json(CODE_SYSTEM);
        assert_eq!(code_system["url"], CODE_SYSTEM_URL);
        assert_eq!(code_system["id"], CODE_SYSTEM_ID);
        let defined: BTreeSet<String> = code_system["concept"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c["code"].as_str().unwrap().to_owned())
            .collect();
        let used: BTreeSet<String> = MAPPING
            .output_rows()
            .filter(|(_, _, c)| c.system == CODE_SYSTEM_URL)
            .map(|(_, _, c)| c.code.clone())
            .collect();
        assert_eq!(defined, used);
        assert_eq!(code_system["count"], defined.len());
    }

    #[test]
    fn the_capability_statement_lists_the_operation_by_its_canonical_url() {
        let statement: Value = serde_json::from_slice(&METADATA).unwrap();
        let definition = json(OPERATION_DEFINITION);
        assert_eq!(statement["fhirVersion"], "4.0.1");
        assert_eq!(statement["software"]["version"], SERVICE_VERSION);
        let operation = &statement["rest"][0]["operation"][0];
        assert_eq!(operation["name"], definition["code"]);
        assert_eq!(operation["definition"], definition["url"]);
        assert_eq!(definition["id"], OPERATION_DEFINITION_ID);
        assert!(definition["url"]
            .as_str()
            .unwrap()
            .ends_with(&format!("/OperationDefinition/{OPERATION_DEFINITION_ID}")));
    }
}
