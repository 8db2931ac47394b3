//! The one place that turns the FHIR door's refusals into OperationOutcomes
//! and HTTP statuses.
//!
//! - 400 Bad Request: the body is not a FHIR resource of the expected shape
//!   (not JSON, wrong types, an element the operation does not accept, a
//!   missing required element).
//! - 422 Unprocessable Entity: a well-formed request the operation cannot
//!   compute from (a unit not accepted, a value outside a hard limit, two
//!   Observations for one input, subjects that disagree, nothing to derive).
//! - 404, 405, 406, 415 for a path, method, `Accept` or content type the
//!   endpoint does not serve.
//!
//! Every issue has an IssueType code and a FHIRPath `expression` naming the
//! element; diagnostics name elements, units and limits, never a value
//! received, and never a stack trace.

use http::StatusCode;

use super::resources::{CodeableConcept, Issue, OperationOutcome};
use crate::api::status::{
    Violation, REASON_FRACTIONS_SUM, REASON_INCONSISTENT, REASON_MODEL_DOMAIN,
    REASON_NOT_APPLICABLE, REASON_NOT_FINITE, REASON_NOT_INFORMATIVE, REASON_OUT_OF_RANGE,
    REASON_REQUIRED, REASON_UNIT, REASON_UNKNOWN_ENUM,
};

/// Issue severities (https://hl7.org/fhir/R4/valueset-issue-severity.html).
pub mod severity {
    /// The request was not processed.
    pub const ERROR: &str = "error";
    /// Computed, with a caution.
    pub const WARNING: &str = "warning";
    /// For the caller's information.
    pub const INFORMATION: &str = "information";
}

/// IssueType codes used here (https://hl7.org/fhir/R4/valueset-issue-type.html).
pub mod issue_type {
    /// Content invalid against the specification.
    pub const INVALID: &str = "invalid";
    /// A structural issue in the content.
    pub const STRUCTURE: &str = "structure";
    /// A required element is missing.
    pub const REQUIRED: &str = "required";
    /// An element's value is invalid.
    pub const VALUE: &str = "value";
    /// A content validation rule failed.
    pub const INVARIANT: &str = "invariant";
    /// Not supported by this server.
    pub const NOT_SUPPORTED: &str = "not-supported";
    /// Two of something that must be unique.
    pub const DUPLICATE: &str = "duplicate";
    /// The resource or path was not found.
    pub const NOT_FOUND: &str = "not-found";
    /// A code or unit not in the accepted set.
    pub const CODE_INVALID: &str = "code-invalid";
    /// Too much to process.
    pub const TOO_COSTLY: &str = "too-costly";
    /// A business rule of the operation.
    pub const BUSINESS_RULE: &str = "business-rule";
    /// Content conflicts with other content.
    pub const CONFLICT: &str = "conflict";
    /// The server failed unexpectedly.
    pub const EXCEPTION: &str = "exception";
    /// A temporary condition; retry later.
    pub const TRANSIENT: &str = "transient";
    /// The time allowed ran out.
    pub const TIMEOUT: &str = "timeout";
    /// Not an error: information for the caller.
    pub const INFORMATIONAL: &str = "informational";
    /// A warning the computation raised.
    pub const PROCESSING: &str = "processing";
}

/// An issue of `severity` and `code` about the elements at `expression`.
pub fn issue(
    severity: &'static str,
    code: &'static str,
    diagnostics: impl Into<String>,
    expression: Vec<String>,
) -> Issue {
    Issue {
        severity,
        code,
        details: None,
        diagnostics: diagnostics.into(),
        expression,
    }
}

/// An error issue.
pub fn error(code: &'static str, diagnostics: impl Into<String>, expression: String) -> Issue {
    issue(severity::ERROR, code, diagnostics, vec![expression])
}

/// A refused request: its HTTP status and the issues.
#[derive(Debug, Clone, PartialEq)]
pub struct Refusal {
    /// 400, 404, 405, 406, 415 or 422.
    pub status: StatusCode,
    /// At least one issue.
    pub issues: Vec<Issue>,
    /// The `Allow` header of a 405.
    pub allow: Option<&'static str>,
}

impl Refusal {
    /// A 400 (malformed).
    pub fn malformed(issues: Vec<Issue>) -> Self {
        Self::with(StatusCode::BAD_REQUEST, issues)
    }

    /// A 422 (well-formed, not processable).
    pub fn unprocessable(issues: Vec<Issue>) -> Self {
        Self::with(StatusCode::UNPROCESSABLE_ENTITY, issues)
    }

    /// A refusal with `status`.
    pub fn with(status: StatusCode, issues: Vec<Issue>) -> Self {
        Self {
            status,
            issues,
            allow: None,
        }
    }

    /// The OperationOutcome body.
    pub fn outcome(&self) -> OperationOutcome {
        OperationOutcome::new(self.issues.clone())
    }
}

/// The IssueType for an API refusal reason.
pub fn issue_type_of(reason: &str) -> &'static str {
    match reason {
        REASON_UNIT | REASON_UNKNOWN_ENUM => issue_type::CODE_INVALID,
        REASON_REQUIRED => issue_type::REQUIRED,
        REASON_NOT_FINITE | REASON_OUT_OF_RANGE => issue_type::VALUE,
        REASON_FRACTIONS_SUM | REASON_INCONSISTENT => issue_type::CONFLICT,
        REASON_MODEL_DOMAIN | REASON_NOT_INFORMATIVE => issue_type::BUSINESS_RULE,
        REASON_NOT_APPLICABLE => issue_type::NOT_SUPPORTED,
        // Hard limits have their own reasons (api/limits.rs); all are values
        // outside a range.
        _ => issue_type::VALUE,
    }
}

/// One API violation as an issue about `expression`, with `subject` (what
/// the element holds, e.g. "arterial pH") in place of the request's field
/// path. The API's descriptions start with the field path and name only
/// fields and limits (api/status.rs), so no value is echoed.
pub fn from_violation(violation: &Violation, subject: &str, expression: String) -> Issue {
    let rest = violation
        .description
        .strip_prefix(violation.field.as_str())
        .unwrap_or(&violation.description)
        .trim_start_matches(':')
        .trim_start();
    let diagnostics = if rest.is_empty() {
        subject.to_owned()
    } else if violation
        .description
        .starts_with(&format!("{}:", violation.field))
    {
        format!("{subject}: {rest}")
    } else {
        format!("{subject} {rest}")
    };
    Issue {
        severity: severity::ERROR,
        code: issue_type_of(violation.reason),
        details: Some(CodeableConcept::text(violation.reason)),
        diagnostics,
        expression: vec![expression],
    }
}
