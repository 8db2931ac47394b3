//! A check case: one request to the service, what must come back, and where
//! the expected values come from.

use serde::Serialize;
use serde_json::Value;

/// The kind of file a case was read from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum Family {
    /// A shared vector (`tests/vectors/*.json`), also read by the Rust
    /// end-to-end tests and the independent Python client.
    SharedVector,
    /// A row of an engine reference table (`service/tests/data/*.csv`), or
    /// all the rows of one table sent as one batch.
    ReferenceTable,
    /// A worked example of the API reference (`proto/API.md`).
    ApiExample,
}

impl Family {
    /// How the report names the family.
    pub(crate) fn title(self) -> &'static str {
        match self {
            Family::SharedVector => "Shared test vectors",
            Family::ReferenceTable => "Engine reference tables",
            Family::ApiExample => "Worked examples of the API reference",
        }
    }
}

/// One check case.
#[derive(Debug, Clone)]
pub(crate) struct Case {
    /// Unique and stable across runs: the file name and the row, vector or
    /// section, e.g. `dissociation.json/kelman_standard_40`.
    pub(crate) id: String,
    /// The kind of file it was read from.
    pub(crate) family: Family,
    /// The file, from the workspace root.
    pub(crate) file: &'static str,
    /// The full method name, `oxbind.v1.Service/Method`.
    pub(crate) rpc: String,
    /// The request, in the protobuf JSON mapping.
    pub(crate) request: Value,
    /// What must come back.
    pub(crate) expect: Expect,
    /// The published source (or other stated origin) of the expected values.
    pub(crate) source: String,
    /// How a table row was turned into a request, where that is not plain.
    pub(crate) note: Option<String>,
}

/// What a case requires of the answer.
#[derive(Debug, Clone)]
pub(crate) enum Expect {
    /// The call computes; each check holds on the response, and each listed
    /// batch item carries its own refusal.
    Answer {
        /// Checks on the response's JSON form.
        checks: Vec<Check>,
        /// Batch items that must be refused.
        item_errors: Vec<ItemError>,
    },
    /// The call is refused with INVALID_ARGUMENT naming `field` with
    /// `reason`, and an ErrorInfo with that reason in domain `oxbind.v1`.
    Refusal {
        /// The dotted field path.
        field: String,
        /// The reason.
        reason: String,
    },
}

/// One check on the response.
#[derive(Debug, Clone)]
pub(crate) struct Check {
    /// Dotted lowerCamelCase path with `[i]` for list elements.
    pub(crate) path: String,
    /// What must be found there.
    pub(crate) want: Want,
}

/// What a check requires.
#[derive(Debug, Clone)]
pub(crate) enum Want {
    /// A number within an absolute tolerance.
    Number {
        /// The expected value.
        value: f64,
        /// The largest accepted absolute difference.
        tolerance: f64,
    },
    /// Exactly this value (numbers within 1e-12).
    Equals(Value),
    /// A list with an element that has all these keys and values.
    Contains(Value),
}

/// A batch item that must carry its own INVALID_ARGUMENT status.
#[derive(Debug, Clone)]
pub(crate) struct ItemError {
    /// The item's index in the batch.
    pub(crate) index: usize,
    /// The dotted field path, under `requests[index]`.
    pub(crate) field: String,
    /// The reason.
    pub(crate) reason: String,
}

/// A row of a source file that is not a case run through the service, and
/// why: the report lists every one, so that no row is dropped unseen.
#[derive(Debug, Clone, Serialize)]
pub(crate) struct NotRun {
    /// The file, from the workspace root.
    pub(crate) file: &'static str,
    /// The row, vector or section.
    pub(crate) location: String,
    /// Why it is not run.
    pub(crate) reason: String,
}

/// Every case and every row not run, from all sources.
#[derive(Debug, Clone, Default)]
pub(crate) struct CaseSet {
    /// The cases, in source order.
    pub(crate) cases: Vec<Case>,
    /// The rows that are not cases.
    pub(crate) not_run: Vec<NotRun>,
    /// Files that could not be read as cases (a broken build).
    pub(crate) problems: Vec<NotRun>,
}

impl CaseSet {
    /// Append another set.
    pub(crate) fn extend(&mut self, other: CaseSet) {
        self.cases.extend(other.cases);
        self.not_run.extend(other.not_run);
        self.problems.extend(other.problems);
    }
}

/// The file name alone, for case ids.
pub(crate) fn file_name(path: &str) -> &str {
    path.rsplit('/').next().unwrap_or(path)
}
