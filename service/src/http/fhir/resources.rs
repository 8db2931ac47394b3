//! The few FHIR R4 (4.0.1) types the door reads and writes, by hand: no FHIR
//! model crate (a full one costs gigabytes of memory and minutes to build).
//!
//! Input types refuse any element they do not declare
//! (`deny_unknown_fields`), so a caller is told about an element the
//! operation does not read instead of having it dropped. Elements that are
//! accepted but do not change a value (`meta`, `extension`, `text`,
//! `identifier`, ...) are kept as opaque JSON and never read. Output types
//! leave out absent elements. Element names and order follow
//! https://hl7.org/fhir/R4/ (the element tables of each resource).

use serde::{Deserialize, Serialize};
use serde_json::Value;

/// UCUM's code system URI (https://hl7.org/fhir/R4/terminologies-systems.html).
pub const UCUM_SYSTEM: &str = "http://unitsofmeasure.org";

/// LOINC's code system URI.
pub const LOINC_SYSTEM: &str = "http://loinc.org";

/// The code system of `Observation.category`.
pub const OBSERVATION_CATEGORY_SYSTEM: &str =
    "http://terminology.hl7.org/CodeSystem/observation-category";

// ---------------------------------------------------------------- data types

/// Coding (https://hl7.org/fhir/R4/datatypes.html#Coding).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, rename_all = "camelCase")]
pub struct Coding {
    /// Element id.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub id: Option<String>,
    /// Extensions (accepted, not read).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub extension: Option<Vec<Value>>,
    /// Code system URI.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub system: Option<String>,
    /// Code system version.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub version: Option<String>,
    /// The code.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub code: Option<String>,
    /// Its display text.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub display: Option<String>,
    /// Whether a user chose this coding.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub user_selected: Option<bool>,
}

/// CodeableConcept (https://hl7.org/fhir/R4/datatypes.html#CodeableConcept).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, rename_all = "camelCase")]
pub struct CodeableConcept {
    /// Element id.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub id: Option<String>,
    /// Extensions (accepted, not read).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub extension: Option<Vec<Value>>,
    /// Codings.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub coding: Option<Vec<Coding>>,
    /// Plain text.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub text: Option<String>,
}

impl CodeableConcept {
    /// A concept with only a text.
    pub fn text(text: impl Into<String>) -> Self {
        Self {
            text: Some(text.into()),
            ..Self::default()
        }
    }

    /// A concept with one coding.
    pub fn coded(system: &str, code: &str, display: Option<&str>) -> Self {
        Self {
            coding: Some(vec![Coding {
                system: Some(system.to_owned()),
                code: Some(code.to_owned()),
                display: display.map(str::to_owned),
                ..Coding::default()
            }]),
            ..Self::default()
        }
    }
}

/// Quantity (https://hl7.org/fhir/R4/datatypes.html#Quantity).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, rename_all = "camelCase")]
pub struct Quantity {
    /// Element id.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub id: Option<String>,
    /// Extensions (accepted, not read).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub extension: Option<Vec<Value>>,
    /// The number.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub value: Option<f64>,
    /// `<`, `<=`, `>=` or `>`: the value is a bound, not a measurement.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub comparator: Option<String>,
    /// The unit as displayed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unit: Option<String>,
    /// The unit's code system (UCUM here).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub system: Option<String>,
    /// The unit's code.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub code: Option<String>,
}

impl Quantity {
    /// `value` in the UCUM unit `code` (also its display).
    pub fn ucum(value: f64, code: &str) -> Self {
        Self {
            value: Some(value),
            unit: Some(code.to_owned()),
            system: Some(UCUM_SYSTEM.to_owned()),
            code: Some(code.to_owned()),
            ..Self::default()
        }
    }
}

/// Reference (https://hl7.org/fhir/R4/references.html#Reference).
///
/// The patient references of the inputs (`subject`, `encounter`,
/// `specimen`) are kept in this type only to be compared and copied to the
/// outputs: never logged, never kept.
#[derive(Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields, rename_all = "camelCase")]
pub struct Reference {
    /// Element id.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub id: Option<String>,
    /// Extensions (copied as given).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub extension: Option<Vec<Value>>,
    /// Literal reference (`Patient/123`, an absolute URL, ...).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reference: Option<String>,
    /// Type the reference refers to.
    #[serde(rename = "type", skip_serializing_if = "Option::is_none")]
    pub type_: Option<String>,
    /// Logical reference by identifier (copied as given).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub identifier: Option<Value>,
    /// Text alternative.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub display: Option<String>,
}

impl Reference {
    /// A literal reference.
    pub fn to(reference: String) -> Self {
        Self {
            reference: Some(reference),
            ..Self::default()
        }
    }
}

/// Never prints the reference: it may identify a patient.
impl std::fmt::Debug for Reference {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Reference(..)")
    }
}

/// Period (https://hl7.org/fhir/R4/datatypes.html#Period).
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Period {
    /// Start, as given.
    pub start: String,
    /// End, as given.
    pub end: String,
}

// ------------------------------------------------------------------- input

/// A `Parameters` resource as the operation reads it.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields, rename_all = "camelCase")]
pub struct ParametersIn {
    /// Must be `Parameters`.
    pub resource_type: String,
    /// Logical id (not read).
    #[serde(default)]
    pub id: Option<String>,
    /// Metadata (accepted, not read).
    #[serde(default)]
    pub meta: Option<Value>,
    /// The parameters.
    #[serde(default)]
    pub parameter: Vec<ParameterIn>,
}

/// One `Parameters.parameter` as the operation reads it.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields, rename_all = "camelCase")]
pub struct ParameterIn {
    /// Element id (not read).
    #[serde(default)]
    pub id: Option<String>,
    /// Extensions (accepted, not read).
    #[serde(default)]
    pub extension: Option<Vec<Value>>,
    /// The parameter's name.
    pub name: String,
    /// A code value (`model`, `unitSystem`).
    #[serde(default)]
    pub value_code: Option<String>,
    /// A quantity value (`barometricPressure`).
    #[serde(default)]
    pub value_quantity: Option<Quantity>,
    /// A resource (`observation`), read on its own so that its errors name
    /// their element.
    #[serde(default)]
    pub resource: Option<Value>,
}

/// The subset of an R4 Observation the operation reads.
///
/// Read: `id`, `status`, `code`, `valueQuantity`, `dataAbsentReason`;
/// copied to the outputs: `subject`, `encounter`, `specimen`,
/// `effectiveDateTime`; accepted and not read (they do not change the
/// value): `meta`, `extension`, `text`, `identifier`, `category`, `issued`,
/// `performer`, `interpretation`, `referenceRange`. Anything else is refused.
#[derive(Deserialize)]
#[serde(deny_unknown_fields, rename_all = "camelCase")]
pub struct ObservationIn {
    /// Must be `Observation`.
    pub resource_type: String,
    /// Logical id: derived values point to it.
    #[serde(default)]
    pub id: Option<String>,
    /// Metadata (not read).
    #[serde(default)]
    pub meta: Option<Value>,
    /// Narrative (not read).
    #[serde(default)]
    pub text: Option<Value>,
    /// Extensions (not read).
    #[serde(default)]
    pub extension: Option<Vec<Value>>,
    /// Business identifiers (not read).
    #[serde(default)]
    pub identifier: Option<Vec<Value>>,
    /// Result status.
    #[serde(default)]
    pub status: Option<String>,
    /// Classification (not read: the LOINC code decides the input).
    #[serde(default)]
    pub category: Option<Vec<Value>>,
    /// What was measured.
    #[serde(default)]
    pub code: Option<CodeableConcept>,
    /// Who it is about (copied, compared, never logged).
    #[serde(default)]
    pub subject: Option<Reference>,
    /// The encounter (copied, compared, never logged).
    #[serde(default)]
    pub encounter: Option<Reference>,
    /// When it was measured (copied).
    #[serde(default)]
    pub effective_date_time: Option<String>,
    /// When it was released (not read).
    #[serde(default)]
    pub issued: Option<String>,
    /// Who measured it (not read).
    #[serde(default)]
    pub performer: Option<Vec<Value>>,
    /// The result.
    #[serde(default)]
    pub value_quantity: Option<Quantity>,
    /// Why the result is missing.
    #[serde(default)]
    pub data_absent_reason: Option<Value>,
    /// High/low flags (not read).
    #[serde(default)]
    pub interpretation: Option<Vec<Value>>,
    /// The specimen (copied, never logged).
    #[serde(default)]
    pub specimen: Option<Reference>,
    /// Reference ranges (not read).
    #[serde(default)]
    pub reference_range: Option<Vec<Value>>,
}

/// Never prints the Observation: it holds patient references and values.
impl std::fmt::Debug for ObservationIn {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("ObservationIn(..)")
    }
}

// ------------------------------------------------------------------ output

/// A derived Observation.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ObservationOut {
    /// Always `Observation`.
    pub resource_type: &'static str,
    /// A fresh id.
    pub id: String,
    /// Always `final`.
    pub status: &'static str,
    /// Always laboratory.
    pub category: Vec<CodeableConcept>,
    /// LOINC, or the service's CodeSystem.
    pub code: CodeableConcept,
    /// The inputs' subject, as given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub subject: Option<Reference>,
    /// The inputs' encounter, as given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub encounter: Option<Reference>,
    /// The inputs' effective time when they agree.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub effective_date_time: Option<String>,
    /// The span of the inputs' effective times when they differ.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub effective_period: Option<Period>,
    /// When the service computed it.
    pub issued: String,
    /// The derived value.
    pub value_quantity: Quantity,
    /// The model or equation, with its citation.
    pub method: CodeableConcept,
    /// The inputs' specimen when they share one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub specimen: Option<Reference>,
    /// The service.
    pub device: Reference,
    /// The inputs used.
    pub derived_from: Vec<Reference>,
}

/// `Device.deviceName`.
#[derive(Debug, Clone, Serialize)]
pub struct DeviceName {
    /// The name.
    pub name: String,
    /// Its kind (`manufacturer-name`, ...).
    #[serde(rename = "type")]
    pub type_: &'static str,
}

/// `Device.version`.
#[derive(Debug, Clone, Serialize)]
pub struct DeviceVersion {
    /// What the version string is.
    #[serde(rename = "type")]
    pub type_: CodeableConcept,
    /// The version string.
    pub value: String,
}

/// `Annotation` with text only.
#[derive(Debug, Clone, Serialize)]
pub struct Annotation {
    /// The text.
    pub text: String,
}

/// The Device that describes the service.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct DeviceOut {
    /// Always `Device`.
    pub resource_type: &'static str,
    /// Stable for one build.
    pub id: String,
    /// `active`.
    pub status: &'static str,
    /// The service's name.
    pub device_name: Vec<DeviceName>,
    /// What kind of device.
    #[serde(rename = "type")]
    pub type_: CodeableConcept,
    /// Version and build commit.
    pub version: Vec<DeviceVersion>,
    /// The caution.
    pub note: Vec<Annotation>,
}

/// `Provenance.agent`.
#[derive(Debug, Clone, Serialize)]
pub struct ProvenanceAgent {
    /// The Device.
    pub who: Reference,
}

/// `Provenance.entity`.
#[derive(Debug, Clone, Serialize)]
pub struct ProvenanceEntity {
    /// Always `derivation`.
    pub role: &'static str,
    /// An input Observation.
    pub what: Reference,
}

/// The Provenance covering the derived set.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ProvenanceOut {
    /// Always `Provenance`.
    pub resource_type: &'static str,
    /// A fresh id.
    pub id: String,
    /// The derived Observations.
    pub target: Vec<Reference>,
    /// The compute time.
    pub recorded: String,
    /// What was done.
    pub activity: CodeableConcept,
    /// The Device.
    pub agent: Vec<ProvenanceAgent>,
    /// The inputs.
    pub entity: Vec<ProvenanceEntity>,
}

/// `OperationOutcome.issue`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Issue {
    /// fatal | error | warning | information.
    pub severity: &'static str,
    /// An IssueType code (https://hl7.org/fhir/R4/valueset-issue-type.html).
    pub code: &'static str,
    /// A machine-readable reason, where there is one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub details: Option<CodeableConcept>,
    /// The explanation: names elements and limits, never values.
    pub diagnostics: String,
    /// FHIRPath of the element(s) concerned.
    pub expression: Vec<String>,
}

/// OperationOutcome.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct OperationOutcome {
    /// Always `OperationOutcome`.
    pub resource_type: &'static str,
    /// The issues.
    pub issue: Vec<Issue>,
}

impl OperationOutcome {
    /// An outcome with `issue`.
    pub fn new(issue: Vec<Issue>) -> Self {
        Self {
            resource_type: "OperationOutcome",
            issue,
        }
    }
}

/// Any resource the operation returns inside `Parameters`.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum ResourceOut {
    /// A derived Observation.
    Observation(Box<ObservationOut>),
    /// The service's Device.
    Device(Box<DeviceOut>),
    /// The Provenance.
    Provenance(Box<ProvenanceOut>),
    /// Warnings and information.
    OperationOutcome(OperationOutcome),
}

/// One output parameter.
#[derive(Debug, Clone, Serialize)]
pub struct ParameterOut {
    /// `observation`, `device`, `provenance` or `outcome`.
    pub name: &'static str,
    /// Its resource.
    pub resource: ResourceOut,
}

/// The operation's answer.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ParametersOut {
    /// Always `Parameters`.
    pub resource_type: &'static str,
    /// The parameters.
    pub parameter: Vec<ParameterOut>,
}
