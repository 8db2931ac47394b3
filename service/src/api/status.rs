//! Refusals, and the one place that turns them into `google.rpc.Status`.
//!
//! Every refused input becomes a `google.rpc.BadRequest` field violation with
//! its dotted path, and the status carries one `google.rpc.ErrorInfo` in domain
//! [`ERROR_DOMAIN`] whose reason is that of the first violation (AIP-193: one
//! detail of each type). A batch item carries that `google.rpc.Status` in its
//! result. Each door sends a refused call's status in its own shape from
//! [`InvalidRequest::to_rpc_status`]: gRPC in the `grpc-status-details-bin`
//! trailer ([`InvalidRequest::into_status`]), Connect in its error JSON
//! (`crate::http::connect`). Status messages name fields and limits, never
//! the values received.

use oxbind_proto::{google::rpc as pb, Any};
use prost::Message;
use tonic::{Code, Status};

use super::{field_path::FieldPath, limits::HardLimit, units};
use crate::physiology::error::PhysiologyError;

/// ErrorInfo domain of every refusal.
pub const ERROR_DOMAIN: &str = "oxbind.v1";

/// ErrorInfo reason: a number was NaN or infinite.
pub const REASON_NOT_FINITE: &str = "VALUE_NOT_FINITE";
/// ErrorInfo reason: a required field was absent.
pub const REASON_REQUIRED: &str = "FIELD_REQUIRED";
/// ErrorInfo reason: a unit code is not accepted for the field.
pub const REASON_UNIT: &str = "UNIT_NOT_ACCEPTED";
/// ErrorInfo reason: an enum value the server does not know.
pub const REASON_UNKNOWN_ENUM: &str = "UNKNOWN_ENUM_VALUE";
/// ErrorInfo reason: a parameter given that the chosen model or call cannot use.
pub const REASON_NOT_APPLICABLE: &str = "PARAMETER_NOT_APPLICABLE";
/// ErrorInfo reason: fractions of haemoglobin that sum to 1 or more.
pub const REASON_FRACTIONS_SUM: &str = "FRACTIONS_EXCEED_ONE";
/// ErrorInfo reason: the model's equation is undefined at this input.
pub const REASON_MODEL_DOMAIN: &str = "OUTSIDE_MODEL_DOMAIN";
/// ErrorInfo reason: an input that carries no usable information.
pub const REASON_NOT_INFORMATIVE: &str = "INPUT_NOT_INFORMATIVE";
/// ErrorInfo reason: inputs inconsistent with one another.
pub const REASON_INCONSISTENT: &str = "INPUTS_INCONSISTENT";
/// ErrorInfo reason: a batch with no items.
pub const REASON_BATCH_EMPTY: &str = "BATCH_EMPTY";
/// ErrorInfo reason: a batch with more items than the server accepts.
pub const REASON_BATCH_TOO_LARGE: &str = "BATCH_TOO_LARGE";
/// ErrorInfo reason: the engine refused a value outside its own range.
pub const REASON_OUT_OF_RANGE: &str = "VALUE_OUT_OF_RANGE";
/// ErrorInfo reason: a request body that is not a message of the RPC's
/// request type in the encoding it names (a door that decodes the message
/// itself, such as Connect, refuses with it).
pub const REASON_NOT_DECODABLE: &str = "MESSAGE_NOT_DECODABLE";

/// One refused field.
#[derive(Debug, Clone, PartialEq)]
pub struct Violation {
    /// Dotted field path, e.g. `conditions.ph`.
    pub field: String,
    /// UPPER_SNAKE_CASE reason.
    pub reason: &'static str,
    /// English description naming the field and the limit, never the value.
    pub description: String,
    /// ErrorInfo metadata for this violation (keys carry units).
    pub metadata: Vec<(String, String)>,
}

impl Violation {
    /// A value outside a hard limit.
    pub fn outside_limit(path: &FieldPath<'_>, limit: &HardLimit) -> Self {
        let field = path.render();
        Self {
            description: format!("{field} must lie in {}: {}", limit.describe(), limit.reason),
            reason: limit.error_reason,
            metadata: vec![
                (format!("min_{}", limit.unit_key), limit.min.to_string()),
                (format!("max_{}", limit.unit_key), limit.max.to_string()),
                ("min_inclusive".to_owned(), limit.min_inclusive.to_string()),
                ("max_inclusive".to_owned(), limit.max_inclusive.to_string()),
            ],
            field,
        }
    }

    /// A NaN or infinite number.
    pub fn not_finite(path: &FieldPath<'_>) -> Self {
        let field = path.render();
        Self {
            description: format!("{field} must be a finite number"),
            reason: REASON_NOT_FINITE,
            metadata: Vec::new(),
            field,
        }
    }

    /// A required field that was absent.
    pub fn required(path: &FieldPath<'_>) -> Self {
        let field = path.render();
        Self {
            description: format!("{field} is required"),
            reason: REASON_REQUIRED,
            metadata: Vec::new(),
            field,
        }
    }

    /// A unit code not accepted for a field of `kind`.
    pub fn unit(path: &FieldPath<'_>, kind: units::QuantityKind, hint: Option<&str>) -> Self {
        let field = path.render();
        let accepted = units::accepted_units(kind).join(", ");
        let hint = hint
            .map(|right| format!(" (UCUM writes it `{right}`)"))
            .unwrap_or_default();
        Self {
            description: format!(
                "{field} has a unit code this field does not accept{hint}; accepted UCUM codes (case-sensitive): {accepted}"
            ),
            reason: REASON_UNIT,
            metadata: vec![("accepted_units".to_owned(), accepted)],
            field,
        }
    }

    /// A violation with a custom reason and description.
    pub fn other(
        path: &FieldPath<'_>,
        reason: &'static str,
        description: impl Into<String>,
    ) -> Self {
        let field = path.render();
        Self {
            description: format!("{field}: {}", description.into()),
            reason,
            metadata: Vec::new(),
            field,
        }
    }

    /// A request message that could not be decoded. `field` is the dotted
    /// path where decoding stopped (empty when the message as a whole is
    /// unreadable); `description` says why, without the value received.
    pub fn not_decodable(field: String, description: impl Into<String>) -> Self {
        Self {
            description: description.into(),
            reason: REASON_NOT_DECODABLE,
            metadata: Vec::new(),
            field,
        }
    }

    /// An engine refusal, for the field at `path`.
    pub fn from_physiology(path: &FieldPath<'_>, error: &PhysiologyError) -> Self {
        Self::from_physiology_at(path.render(), error)
    }

    /// An engine refusal, for the field named `field`.
    pub fn from_physiology_at(field: String, error: &PhysiologyError) -> Self {
        let (reason, metadata) = match error {
            PhysiologyError::NotFinite { .. } => (REASON_NOT_FINITE, Vec::new()),
            PhysiologyError::OutOfRange { min, max, .. } => (
                REASON_OUT_OF_RANGE,
                vec![
                    ("min".to_owned(), min.to_string()),
                    ("max".to_owned(), max.to_string()),
                ],
            ),
            PhysiologyError::OutsideModelDomain { limit, model, .. } => (
                REASON_MODEL_DOMAIN,
                vec![
                    ("model_id".to_owned(), (*model).to_owned()),
                    ("limit".to_owned(), limit.to_string()),
                ],
            ),
            PhysiologyError::NotInformative { .. } => (REASON_NOT_INFORMATIVE, Vec::new()),
            PhysiologyError::Inconsistent { .. } => (REASON_INCONSISTENT, Vec::new()),
        };
        Self {
            // The engine's messages name the input and its limits, never the
            // value received.
            description: format!("{field}: {error}"),
            reason,
            metadata,
            field,
        }
    }
}

/// A request refused for one or more bad fields.
#[derive(Debug, Clone, PartialEq)]
pub struct InvalidRequest {
    violations: Vec<Violation>,
}

impl InvalidRequest {
    /// A refusal with the given violations (at least one).
    pub fn new(violations: Vec<Violation>) -> Self {
        debug_assert!(!violations.is_empty());
        Self { violations }
    }

    /// A refusal for one violation.
    pub fn one(violation: Violation) -> Self {
        Self::new(vec![violation])
    }

    /// The same refusal with every field path placed under item `index` of
    /// the repeated field `name` (e.g. `requests[3].po2.value`).
    pub fn within_item(mut self, name: &str, index: usize) -> Self {
        for violation in &mut self.violations {
            violation.field = format!("{name}[{index}].{}", violation.field);
            // Every description starts with the field path it concerns.
            violation.description = format!("{name}[{index}].{}", violation.description);
        }
        self
    }

    /// The violations, in the order found.
    pub fn violations(&self) -> &[Violation] {
        &self.violations
    }

    fn message(&self) -> String {
        match self.violations.as_slice() {
            [only] => only.description.clone(),
            [first, rest @ ..] => format!(
                "{} (and {} more invalid field{})",
                first.description,
                rest.len(),
                if rest.len() == 1 { "" } else { "s" }
            ),
            [] => "invalid request".to_owned(),
        }
    }

    /// The `google.rpc.Status` of this refusal, with BadRequest and ErrorInfo.
    pub fn to_rpc_status(&self) -> pb::Status {
        let bad_request = pb::BadRequest {
            field_violations: self
                .violations
                .iter()
                .map(|v| pb::bad_request::FieldViolation {
                    field: v.field.clone(),
                    description: v.description.clone(),
                    reason: v.reason.to_owned(),
                    localized_message: None,
                })
                .collect(),
        };
        let first = &self.violations[0];
        let mut metadata: std::collections::HashMap<String, String> =
            first.metadata.iter().cloned().collect();
        metadata.insert("field".to_owned(), first.field.clone());
        metadata.insert(
            "violation_count".to_owned(),
            self.violations.len().to_string(),
        );
        let error_info = pb::ErrorInfo {
            reason: first.reason.to_owned(),
            domain: ERROR_DOMAIN.to_owned(),
            metadata,
        };
        pb::Status {
            code: Code::InvalidArgument as i32,
            message: self.message(),
            details: vec![
                Any::pack(tonic_types::BadRequest::TYPE_URL, &bad_request),
                Any::pack(tonic_types::ErrorInfo::TYPE_URL, &error_info),
            ],
        }
    }

    /// The gRPC status of this refusal, details in `grpc-status-details-bin`.
    pub fn into_status(self) -> Status {
        let rpc = self.to_rpc_status();
        Status::with_details(
            Code::InvalidArgument,
            rpc.message.clone(),
            rpc.encode_to_vec().into(),
        )
    }
}

impl From<InvalidRequest> for Status {
    fn from(value: InvalidRequest) -> Self {
        value.into_status()
    }
}

/// A refusal for a batch as a whole (empty, or over the item limit).
pub fn batch_refusal(reason: &'static str, description: String, limit: usize) -> InvalidRequest {
    let violation = Violation {
        field: "requests".to_owned(),
        reason,
        description,
        metadata: vec![("max_items".to_owned(), limit.to_string())],
    };
    InvalidRequest::one(violation)
}
