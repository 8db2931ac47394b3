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
/// ErrorInfo reason: an uncertainty figure names a field that is not a
/// numeric input of the request.
pub const REASON_UNCERTAINTY_FIELD: &str = "UNCERTAINTY_FIELD_UNKNOWN";
/// ErrorInfo reason: an uncertainty figure or profile set that cannot be
/// used as given (an unknown profile, one for another kind of input, two
/// figures for one input).
pub const REASON_UNCERTAINTY_FIGURE: &str = "UNCERTAINTY_FIGURE_NOT_USABLE";
/// ErrorInfo reason: a Monte Carlo run abandoned because the stated
/// distributions put most draws outside what the inputs can be.
pub const REASON_UNCERTAINTY_DRAWS: &str = "UNCERTAINTY_DRAWS_REJECTED";
/// ErrorInfo reason: a request body that is not a message of the RPC's
/// request type in the encoding it names (a door that decodes the message
/// itself, such as Connect, refuses with it).
pub const REASON_NOT_DECODABLE: &str = "MESSAGE_NOT_DECODABLE";

/// Every gRPC status code a call to this server can end with, and when.
///
/// Only INVALID_ARGUMENT is built here; the others come from the per-call
/// layer (RESOURCE_EXHAUSTED for the call limit, DEADLINE_EXCEEDED), from
/// tonic (UNIMPLEMENTED, RESOURCE_EXHAUSTED for message sizes, INTERNAL),
/// from the transport (UNAVAILABLE) or from the caller (CANCELLED). proto/
/// API.md section 6 lists exactly these codes, and
/// `tests/tests/api_doc_tables.rs` keeps the two equal and provokes each
/// that a test can.
pub const STATUS_CODES: [(Code, &str); 8] = [
    (Code::Ok, "the call computed"),
    (
        Code::InvalidArgument,
        "the input was refused (google.rpc.BadRequest names each field)",
    ),
    (
        Code::ResourceExhausted,
        "the server is at --max-concurrent-calls, or a message exceeds --max-decoded-message-bytes or --max-encoded-message-bytes",
    ),
    (
        Code::DeadlineExceeded,
        "the call outlived --call-timeout, or the caller's own shorter deadline",
    ),
    (
        Code::Unavailable,
        "the server cannot be reached, or is draining after SIGTERM or SIGINT",
    ),
    (
        Code::Unimplemented,
        "the method is not one of the v1 RPCs (a misspelt path)",
    ),
    (
        Code::Internal,
        "a fault in the server itself; the message is fixed and carries no detail",
    ),
    (Code::Cancelled, "the caller cancelled the call"),
];

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
        let mut metadata = vec![(format!("min_{}", limit.unit_key), limit.min.to_string())];
        // A limit with no upper end has no max key (and needs only a finite
        // value).
        if limit.max.is_finite() {
            metadata.push((format!("max_{}", limit.unit_key), limit.max.to_string()));
        }
        metadata.push(("min_inclusive".to_owned(), limit.min_inclusive.to_string()));
        metadata.push(("max_inclusive".to_owned(), limit.max_inclusive.to_string()));
        Self {
            description: format!("{field} must lie in {}: {}", limit.describe(), limit.reason),
            reason: limit.error_reason,
            metadata,
            field,
        }
    }

    /// The same violation with `hint` appended to its description.
    pub fn with_hint(mut self, hint: &str) -> Self {
        self.description.push_str(hint);
        self
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

    /// A field required because of what else was given: `purpose` says
    /// what it is needed for.
    pub fn required_for(path: &FieldPath<'_>, purpose: &str) -> Self {
        let field = path.render();
        Self {
            description: format!("{field} is required for {purpose}"),
            reason: REASON_REQUIRED,
            metadata: Vec::new(),
            field,
        }
    }

    /// A field required unless one of `alternatives` is given (none was).
    pub fn required_unless(path: &FieldPath<'_>, alternatives: &[&str]) -> Self {
        let field = path.render();
        Self {
            description: format!(
                "{field} is required unless {} is given: at least one value is needed",
                alternatives.join(" or ")
            ),
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
            PhysiologyError::OutOfRange {
                input, min, max, ..
            } => {
                // The engine's "greater than 0" is the smallest positive
                // double, and "no upper limit" is infinity: both are stated
                // plainly, as the hard-limit table states its limits.
                let (min_text, min_inclusive) = engine_bound(*min);
                let (max_text, max_inclusive) = engine_bound(*max);
                let range = engine_range(*min, *max, units::input_unit(*input));
                return Self {
                    description: format!("{field} must lie in {range}"),
                    reason: REASON_OUT_OF_RANGE,
                    metadata: vec![
                        ("min".to_owned(), min_text),
                        ("max".to_owned(), max_text),
                        ("min_inclusive".to_owned(), min_inclusive.to_string()),
                        ("max_inclusive".to_owned(), max_inclusive.to_string()),
                    ],
                    field,
                };
            }
            PhysiologyError::OutsideModelDomain { limit, model, .. } => {
                // The limit is model-specific (Kelman's is a virtual PO2),
                // so it is stated, readably, without a unit.
                return Self {
                    description: format!(
                        "{field} lies outside the domain where the equation of model {model} is defined (limit {})",
                        readable(*limit)
                    ),
                    reason: REASON_MODEL_DOMAIN,
                    metadata: vec![
                        ("model_id".to_owned(), (*model).to_owned()),
                        ("limit".to_owned(), limit.to_string()),
                    ],
                    field,
                };
            }
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

/// A number as a person reads it: at most six decimals, no trailing zeros
/// (`760`, `0.001`, `0.999999`), never the full expansion of a tiny double.
pub fn readable(value: f64) -> String {
    if value.is_infinite() {
        return if value > 0.0 { "infinity" } else { "-infinity" }.to_owned();
    }
    let text = format!("{value:.6}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    match text {
        "" | "-0" => "0".to_owned(),
        other => other.to_owned(),
    }
}

/// An engine bound as metadata text and whether it is included: the
/// smallest positive double means "above 0" (0, excluded).
fn engine_bound(bound: f64) -> (String, bool) {
    if bound == f64::MIN_POSITIVE {
        ("0".to_owned(), false)
    } else if bound.is_infinite() {
        (readable(bound), false)
    } else {
        (readable(bound), true)
    }
}

/// An engine range in interval notation, e.g. `(0, 760] mm[Hg]`, or
/// `(0, no upper limit) mm[Hg]`.
fn engine_range(min: f64, max: f64, unit: &str) -> String {
    let (min_text, min_inclusive) = engine_bound(min);
    let (max_text, max_inclusive) = engine_bound(max);
    let max_text = if max.is_infinite() {
        "no upper limit".to_owned()
    } else {
        max_text
    };
    let unit = if unit.is_empty() || unit == "1" {
        String::new()
    } else {
        format!(" {unit}")
    };
    format!(
        "{}{min_text}, {max_text}{}{unit}",
        if min_inclusive { "[" } else { "(" },
        if max_inclusive { "]" } else { ")" },
    )
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physiology::error::Input;

    #[test]
    fn numbers_read_plainly() {
        assert_eq!(readable(760.0), "760");
        assert_eq!(readable(0.001), "0.001");
        assert_eq!(readable(1.0 - 1e-6), "0.999999");
        assert_eq!(readable(0.03 * 100.0), "3");
        assert_eq!(readable(-2.0), "-2");
        assert_eq!(readable(f64::MIN_POSITIVE), "0");
    }

    #[test]
    fn an_engine_range_never_prints_the_smallest_double() {
        let error = PhysiologyError::OutOfRange {
            input: Input::Pco2,
            value: 1000.0,
            min: f64::MIN_POSITIVE,
            max: 760.0,
        };
        let v = Violation::from_physiology_at("conditions.pco2.value".to_owned(), &error);
        assert_eq!(
            v.description,
            "conditions.pco2.value must lie in (0, 760] mm[Hg]"
        );
        assert!(v.metadata.contains(&("min".to_owned(), "0".to_owned())));
        assert!(v
            .metadata
            .contains(&("min_inclusive".to_owned(), "false".to_owned())));
        let open = PhysiologyError::OutOfRange {
            input: Input::Spo2,
            value: 0.0,
            min: f64::MIN_POSITIVE,
            max: f64::INFINITY,
        };
        let domain = PhysiologyError::OutsideModelDomain {
            input: Input::Po2,
            value: 3.0,
            limit: 4.661_189_645_824_274,
            model: "kelman-1966",
        };
        let v = Violation::from_physiology_at("po2.value".to_owned(), &domain);
        assert_eq!(
            v.description,
            "po2.value lies outside the domain where the equation of model kelman-1966 is defined (limit 4.66119)"
        );
        let v = Violation::from_physiology_at("spo2_fraction".to_owned(), &open);
        assert_eq!(
            v.description,
            "spo2_fraction must lie in (0, no upper limit)"
        );
    }
}
