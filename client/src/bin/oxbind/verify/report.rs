//! The verification report: what it records, in one structure that the
//! JSON report serialises as it stands and the HTML report lays out.
//! Everything in it comes from the cases, the server's answers, the command
//! line and `--as-of`: no clock, no random order, no hash-map order, so the
//! same build, cases, server and `--as-of` give the same bytes.

pub(crate) mod compare;
pub(crate) mod html;

use serde::Serialize;
use serde_json::Value;

use super::{case::NotRun, check::CheckOutcome, surface::Probe};

/// The JSON report's schema name; `--compare` reads reports of this schema.
pub(crate) const SCHEMA: &str = "oxbind-verification-report/1";

/// What the report is and is not, said plainly at its top.
pub(crate) const STATEMENT: &str =
    "This report records a run of published check cases against one \
deployed Oxbind instance, through the network path named below. It supports, and does not \
replace, the laboratory's own verification procedure and the approval of its laboratory \
director. The cases show that this instance computes the published equations as their sources \
give them; they do not show that a calculated value is right for a patient. Oxbind results are \
decision support only: measured co-oximetry and licensed clinicians decide, and local laboratory \
policy decides which values are reported.";

/// How the two hashes are computed.
pub(crate) const HASH_METHOD: &str = "SHA-256 (FIPS 180-4) of canonical JSON: the ListModels \
answer read through the contract of this build of oxbind (protobuf JSON mapping, lowerCamelCase \
names, every field present including defaults, enums by name), then written with no whitespace, \
object keys in ascending order of their UTF-8 bytes and numbers in shortest round-trip form. The \
catalog hash covers the models list; the hard-limit hash covers the inputLimits list. Hashes \
made by the same build of oxbind are comparable.";

/// When re-verification falls due besides the interval.
pub(crate) const ALSO_DUE_WHEN: [&str; 6] = [
    "the service version changes",
    "the build commit changes",
    "the catalog hash changes",
    "the hard-limit hash changes",
    "the uncertainty-profile hash changes",
    "a reported setting changes (run oxbind verify --compare with this report's JSON to see what changed)",
];

/// The whole report.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Report {
    /// [`SCHEMA`].
    pub(crate) schema: &'static str,
    /// [`STATEMENT`].
    pub(crate) statement: &'static str,
    /// The report's time (`--as-of`), RFC 3339 UTC.
    pub(crate) as_of: String,
    /// When it falls due.
    pub(crate) reverification: Reverification,
    /// The command that made it.
    pub(crate) tool: Tool,
    /// The instance verified.
    pub(crate) server: Server,
    /// The settings it reports.
    pub(crate) settings: Settings,
    /// Each door and whether it answered.
    pub(crate) surfaces: Vec<SurfaceRecord>,
    /// What the instance offers for the uncertainty of its results, and
    /// the cases that checked it.
    pub(crate) uncertainty: super::uncertainty::Uncertainty,
    /// What the cases covered, and what they did not.
    pub(crate) coverage: Coverage,
    /// Counts.
    pub(crate) totals: Totals,
    /// Every case run, on every door.
    pub(crate) cases: Vec<CaseRecord>,
    /// Every source row that is not a case, and why.
    pub(crate) not_run: Vec<NotRun>,
    /// Source rows this build could not read (a broken build: they fail the
    /// run).
    pub(crate) source_problems: Vec<NotRun>,
    /// The sign-off fields, blank.
    pub(crate) sign_off: Vec<SignOff>,
}

/// When the report falls due.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Reverification {
    /// `--interval` as written.
    pub(crate) interval: String,
    /// The same in ISO 8601.
    pub(crate) interval_iso: String,
    /// The due date (UTC).
    pub(crate) due_by: String,
    /// [`ALSO_DUE_WHEN`].
    pub(crate) also_due_when: Vec<&'static str>,
}

/// The command that made the report.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Tool {
    /// `oxbind verify`.
    pub(crate) name: &'static str,
    /// Its version.
    pub(crate) version: &'static str,
    /// The commit it was built from.
    pub(crate) build_commit: &'static str,
    /// Each case source file and its SHA-256, as embedded in this build.
    pub(crate) case_files: Vec<CaseFile>,
}

/// A case source file.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct CaseFile {
    /// Its path from the workspace root.
    pub(crate) path: &'static str,
    /// SHA-256 of its bytes.
    pub(crate) sha256: String,
}

/// The instance verified.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Server {
    /// The address given (`--server`).
    pub(crate) address: String,
    /// Its service version.
    pub(crate) service_version: String,
    /// The commit it was built from.
    pub(crate) build_commit: String,
    /// Its API version.
    pub(crate) api_version: String,
    /// Where the three came from.
    pub(crate) identity_source: String,
    /// SHA-256 of the catalog's canonical JSON.
    pub(crate) catalog_sha256: String,
    /// SHA-256 of the hard-limit table's canonical JSON.
    pub(crate) hard_limits_sha256: String,
    /// [`HASH_METHOD`].
    pub(crate) hash_method: &'static str,
    /// How many models the catalog lists.
    pub(crate) catalog_models: usize,
    /// How many hard limits the table lists.
    pub(crate) hard_limits: usize,
}

/// The settings the server reports.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Settings {
    /// Whether the server reported any.
    pub(crate) reported: bool,
    /// Where they came from, or why there are none.
    pub(crate) note: String,
    /// Each setting: name, value, meaning.
    pub(crate) items: Vec<Setting>,
}

/// One setting.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Setting {
    /// Its name.
    pub(crate) name: String,
    /// Its value.
    pub(crate) value: String,
    /// What it does.
    pub(crate) meaning: String,
}

/// One door.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct SurfaceRecord {
    /// Its key.
    pub(crate) key: &'static str,
    /// Its name.
    pub(crate) title: &'static str,
    /// What probing it found.
    #[serde(flatten)]
    pub(crate) probe: Probe,
    /// How many cases ran through it.
    pub(crate) cases: usize,
    /// How many of them passed.
    pub(crate) passed: usize,
}

/// What the cases covered.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Coverage {
    /// Cases per method and door.
    pub(crate) methods: Vec<MethodCoverage>,
    /// Cases per model the catalog lists.
    pub(crate) models: Vec<ModelCoverage>,
    /// What no case covered: each fails the run.
    pub(crate) gaps: Vec<String>,
}

/// Cases of one method.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct MethodCoverage {
    /// `oxbind.v1.Service/Method`.
    pub(crate) rpc: String,
    /// Cases run, over every door.
    pub(crate) cases: usize,
    /// Of which passed.
    pub(crate) passed: usize,
    /// Of which expected a refusal.
    pub(crate) refusals: usize,
}

/// Cases of one model (on the gRPC door).
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct ModelCoverage {
    /// Its catalog id.
    pub(crate) model_id: String,
    /// Cases that used it.
    pub(crate) cases: usize,
    /// Of which passed.
    pub(crate) passed: usize,
}

/// Counts.
#[derive(Debug, Clone, Default, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct Totals {
    /// Cases run (each case once per door).
    pub(crate) cases: usize,
    /// Cases whose every check held.
    pub(crate) passed: usize,
    /// Cases with a check that did not hold.
    pub(crate) failed: usize,
    /// Checks made.
    pub(crate) checks: usize,
    /// Checks that held.
    pub(crate) checks_passed: usize,
    /// Source rows that are not cases.
    pub(crate) not_run: usize,
    /// Coverage gaps.
    pub(crate) gaps: usize,
    /// Source rows this build could not read.
    pub(crate) source_problems: usize,
    /// Whether the run passed: every case, no gap, no source problem.
    pub(crate) verified: bool,
}

/// One case on one door.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct CaseRecord {
    /// The case id.
    pub(crate) id: String,
    /// The door's key.
    pub(crate) surface: &'static str,
    /// The kind of source.
    pub(crate) family: super::case::Family,
    /// The source file.
    pub(crate) file: &'static str,
    /// The method.
    pub(crate) rpc: String,
    /// The request as sent (protobuf JSON mapping).
    pub(crate) inputs: Value,
    /// The published source of the expected values.
    pub(crate) source: String,
    /// How a row became a request, where not plain.
    pub(crate) note: Option<String>,
    /// The models the request names (or the default model it gets).
    pub(crate) models: Vec<String>,
    /// Whether every check held.
    pub(crate) passed: bool,
    /// Each check.
    pub(crate) checks: Vec<CheckOutcome>,
}

/// A sign-off block, left blank for the laboratory.
#[derive(Debug, Clone, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct SignOff {
    /// Who signs.
    pub(crate) role: &'static str,
    /// Name (blank).
    pub(crate) name: &'static str,
    /// Signature (blank).
    pub(crate) signature: &'static str,
    /// Date (blank).
    pub(crate) date: &'static str,
    /// Decision or comment (blank).
    pub(crate) comment: &'static str,
}

/// The blank sign-off blocks: the person who ran the verification, its
/// reviewer, and the laboratory director.
pub(crate) fn blank_sign_off() -> Vec<SignOff> {
    [
        "Performed by",
        "Reviewed by",
        "Approved by the laboratory director",
    ]
    .into_iter()
    .map(|role| SignOff {
        role,
        name: "",
        signature: "",
        date: "",
        comment: "",
    })
    .collect()
}

impl Report {
    /// The JSON report: pretty-printed, ending with a newline.
    pub(crate) fn to_json(&self) -> String {
        let mut text = serde_json::to_string_pretty(self).expect("a report always serialises");
        text.push('\n');
        text
    }
}
