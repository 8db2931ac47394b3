//! The HTML report: one self-contained page (inline CSS with print rules,
//! no scripts, no external assets) laid out from [`Report`] with maud,
//! which escapes every value it inserts; the only text inserted unescaped is
//! the style sheet below, which is ours.

use maud::{html, Markup, PreEscaped, DOCTYPE};
use serde_json::Value;

use super::{CaseRecord, Report};
use crate::verify::{case::Family, check::CheckOutcome, uncertainty::UncertaintyCase};

/// The style sheet: plain on screen, A4 on paper, readable in black and
/// white (every verdict is a word, not only a colour).
const STYLE: &str = r#"
@page { size: A4; margin: 14mm 12mm 16mm 12mm; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; font-size: 9.5pt;
  line-height: 1.35; color: #111; margin: 0; }
@media screen { body { max-width: 1180px; margin: 0 auto; padding: 16px 24px; } }
h1 { font-size: 17pt; margin: 0 0 2pt 0; }
h2 { font-size: 12.5pt; margin: 16pt 0 5pt 0; padding-bottom: 2pt; border-bottom: 1pt solid #333;
  break-after: avoid; page-break-after: avoid; }
h3 { font-size: 10.5pt; margin: 10pt 0 4pt 0; break-after: avoid; page-break-after: avoid; }
p { margin: 3pt 0 6pt 0; }
.subtitle { color: #333; margin-bottom: 8pt; }
table { border-collapse: collapse; width: 100%; margin: 3pt 0 8pt 0; }
th, td { border: 0.6pt solid #999; padding: 2pt 4pt; text-align: left; vertical-align: top; }
th { background: #eee; font-weight: bold; }
thead { display: table-header-group; }
tr { break-inside: avoid; page-break-inside: avoid; }
table.facts th { width: 28%; }
.mono, code { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7.6pt;
  overflow-wrap: anywhere; }
table.cases { table-layout: fixed; }
table.cases col.check { width: 27%; } table.cases col.expected { width: 17%; }
table.cases col.tolerance { width: 11%; } table.cases col.observed { width: 22%; }
table.cases col.difference { width: 14%; } table.cases col.result { width: 9%; }
table.profiles { table-layout: fixed; } table.profiles td { overflow-wrap: anywhere; }
table.ucases { table-layout: fixed; } table.ucases td { overflow-wrap: anywhere; }
table.ucases col.ucase { width: 66%; }
table.ucases col.umethod { width: 13%; } table.ucases col.uresult { width: 21%; }
table.profiles col.profile { width: 21%; } table.profiles col.figure { width: 31%; }
table.profiles col.psource { width: 25%; } table.profiles col.verification { width: 23%; }
html { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
.verdict-pass { font-weight: bold; }
.verdict-fail { font-weight: bold; color: #a00000; }
.outcome { border: 2pt solid #111; padding: 6pt 8pt; margin: 8pt 0; break-inside: avoid; }
.outcome.failed { border-color: #a00000; }
.outcome strong { font-size: 12pt; }
.case-head td { background: #f4f4f4; border-top: 1.2pt solid #555; }
.source { color: #333; font-size: 8.2pt; }
.signoff { display: grid; grid-template-columns: 1fr; gap: 8pt; break-inside: avoid; page-break-inside: avoid; }
.signoff table td { height: 22pt; }
.signoff table th { width: 22%; }
.small { font-size: 8.2pt; color: #333; }
ul { margin: 2pt 0 6pt 16pt; padding: 0; }
"#;

/// The HTML report of `report`.
pub(crate) fn render(report: &Report) -> String {
    let page = html! {
        (DOCTYPE)
        html lang="en" {
            head {
                meta charset="utf-8";
                meta name="viewport" content="width=device-width, initial-scale=1";
                title { "Verification of calculations in place: " (report.server.address) }
                style { (PreEscaped(STYLE)) }
            }
            body {
                h1 { "Verification of calculations in place" }
                p.subtitle {
                    "Oxbind oxygen-dissociation service at " code { (report.server.address) }
                    ", as of " (report.as_of)
                }
                (outcome(report))
                h2 { "What this report is" }
                p { (report.statement) }
                (instance(report))
                (doors(report))
                (settings(report))
                (reverification(report))
                (uncertainty(report))
                (coverage(report))
                (failed(report))
                (sign_off(report))
                (all_cases(report))
                (not_run(report))
                (case_data(report))
            }
        }
    };
    let mut text = page.into_string();
    text.push('\n');
    text
}

fn outcome(report: &Report) -> Markup {
    let t = &report.totals;
    html! {
        div.outcome.failed[!t.verified] {
            @if t.verified {
                strong { "Outcome: every case passed." }
            } @else {
                strong."verdict-fail" { "Outcome: not verified." }
            }
            " " (t.passed) " of " (t.cases) " cases passed (" (t.checks_passed) " of "
            (t.checks) " checks)"
            @if t.failed > 0 { "; " (t.failed) " failed" }
            @if t.gaps > 0 { "; " (t.gaps) " coverage gaps" }
            @if t.source_problems > 0 { "; " (t.source_problems) " unreadable source rows" }
            ". " (t.not_run) " source rows are not cases run through the service; each is listed with its reason."
        }
    }
}

fn instance(report: &Report) -> Markup {
    let s = &report.server;
    html! {
        h2 { "The instance verified" }
        table.facts {
            tbody {
                tr { th { "Address" } td { code { (s.address) } } }
                tr { th { "Service version" } td { (s.service_version) } }
                tr { th { "Build commit" } td { code { (s.build_commit) } } }
                tr { th { "API version" } td { (s.api_version) } }
                tr { th { "Identity reported by" } td { (s.identity_source) } }
                tr { th { "Catalog hash (" (s.catalog_models) " models)" } td { code { (s.catalog_sha256) } } }
                tr { th { "Hard-limit table hash (" (s.hard_limits) " limits)" } td { code { (s.hard_limits_sha256) } } }
            }
        }
        p.small { "How the hashes are made: " (s.hash_method) }
    }
}

fn doors(report: &Report) -> Markup {
    html! {
        h2 { "Doors probed" }
        p { "Every case runs through every door that answers and can carry it, so a number is shown not to depend on the door." }
        table {
            thead { tr { th { "Door" } th { "Answered" } th { "What was found" } th.num { "Cases" } th.num { "Passed" } } }
            tbody {
                @for s in &report.surfaces {
                    tr {
                        td { (s.title) }
                        td { @if s.probe.answered { "answered" } @else { "not offered" } }
                        td { (s.probe.detail) }
                        td.num { (s.cases) }
                        td.num { (s.passed) }
                    }
                }
            }
        }
    }
}

fn settings(report: &Report) -> Markup {
    html! {
        h2 { "Settings the server reports" }
        p { (report.settings.note) "." }
        @if !report.settings.items.is_empty() {
            table {
                thead { tr { th { "Setting" } th { "Value" } th { "Meaning" } } }
                tbody {
                    @for item in &report.settings.items {
                        tr { td { code { (item.name) } } td { code { (item.value) } } td { (item.meaning) } }
                    }
                }
            }
        }
    }
}

fn reverification(report: &Report) -> Markup {
    let r = &report.reverification;
    html! {
        h2 { "Re-verification" }
        p {
            "Due by " strong { (r.due_by) } " (" (r.interval) " after " (report.as_of)
            "), or sooner: whenever"
        }
        ul { @for when in &r.also_due_when { li { (when) } } }
    }
}

fn uncertainty(report: &Report) -> Markup {
    let u = &report.uncertainty;
    let source_of = |case: &UncertaintyCase| {
        report
            .cases
            .iter()
            .find(|c| c.id == case.id && c.surface == case.surface)
            .map_or("", |c| c.source.as_str())
    };
    html! {
        h2 { "Uncertainty of the results" }
        p { (u.statement) }
        @if let Some(cautions) = u.cautions { p { strong { "Cautions. " } (cautions) } }
        @if !u.methods.is_empty() {
            h3 { "Methods" }
            table {
                thead {
                    tr {
                        th { "Method" } th { "Published method" } th { "What the service does" }
                        th.num { "Cases (all doors)" } th.num { "Passed" }
                    }
                }
                tbody {
                    @for m in &u.methods {
                        tr {
                            td { (m.title) br; code { (m.method) } }
                            td { (m.reference) }
                            td { (m.how) }
                            td.num { (m.cases) }
                            td.num { (m.passed) }
                        }
                    }
                }
            }
        }
        @if let Some(text) = u.model_component { p { (text) } }
        @if !u.profiles.is_empty() {
            h3 { "Built-in profiles the server publishes (" (u.profiles.len()) ")" }
            p {
                "As the server published them in its ListModels answer, in its order. A request names one by its id, "
                "or all of a set by the set's name; every use of a built-in figure is warned of in the answer."
            }
            table.profiles {
                colgroup { col.profile; col.figure; col.psource; col.verification; }
                thead {
                    tr {
                        th { "Profile, set and input" } th { "Figure, what it is, and how it becomes a standard uncertainty" }
                        th { "Source" } th { "Verification" }
                    }
                }
                tbody {
                    @for p in &u.profiles {
                        tr {
                            td {
                                code { (p.profile_id) } br;
                                span.source { "set " } code { (p.profile_set) } br;
                                span.source { "input " } code { (p.input) }
                            }
                            td {
                                (p.figure_text) br;
                                span.source { (p.description) } br;
                                span.source { "Conversion: " (p.conversion) }
                            }
                            td { (p.source) }
                            td { (p.verification_meaning) br; span.source { (p.verification_note) } }
                        }
                    }
                }
            }
        }
        p.small { "Profile hash: " code { (u.profiles_sha256) } ". " (u.profiles_hash_method) }
        h3 { "Uncertainty cases (" (by_case(&u.cases).len()) ", " (u.cases.len()) " runs over the doors)" }
        @if u.cases.is_empty() {
            p { "No case of this build asks for an uncertainty." }
        } @else {
            p {
                "The cases of this run that ask for an uncertainty, with their result on each door. Each is shown in full under Every case below "
                "(inputs, expected values, tolerances, observed values, differences); the source of its expected "
                "values is repeated here. Values marked as regression values come from this service's own output "
                "when the source was written, not from an independent check."
            }
            table.ucases {
                colgroup { col.ucase; col.umethod; col.uresult; }
                thead { tr { th { "Case and the source of its expected values" } th { "Method asked" } th { "Result on each door" } } }
                tbody {
                    @for doors in by_case(&u.cases) {
                        tr {
                            td { strong { (doors[0].id) } br; span.source { (source_of(doors[0])) } }
                            td { (doors[0].methods.iter().map(|m| method_words(m)).collect::<Vec<_>>().join(", ")) }
                            td {
                                @for (i, case) in doors.iter().enumerate() {
                                    @if i > 0 { br; }
                                    (case.surface) ": "
                                    @if case.passed { span."verdict-pass" { "passed" } } @else { span."verdict-fail" { "FAILED" } }
                                }
                            }
                        }
                    }
                }
            }
        }
        @if !u.unchecked.is_empty() {
            p {
                "No case of this build asks for an uncertainty from "
                @for (i, rpc) in u.unchecked.iter().enumerate() {
                    @if i > 0 { ", " }
                    code { (rpc) }
                }
                ": the uncertainty results of those methods are not verified by this report."
            }
        }
    }
}

/// The uncertainty cases grouped by case, in order of first appearance,
/// each with its runs on every door.
fn by_case(cases: &[UncertaintyCase]) -> Vec<Vec<&UncertaintyCase>> {
    let mut groups: Vec<Vec<&UncertaintyCase>> = Vec::new();
    for case in cases {
        match groups.iter_mut().find(|g| g[0].id == case.id) {
            Some(group) => group.push(case),
            None => groups.push(vec![case]),
        }
    }
    groups
}

/// An `UncertaintyMethod` value in words.
fn method_words(method: &str) -> &str {
    match method {
        "UNCERTAINTY_METHOD_FIRST_ORDER" => "first order",
        "UNCERTAINTY_METHOD_MONTE_CARLO" => "Monte Carlo",
        other => other,
    }
}

fn coverage(report: &Report) -> Markup {
    let c = &report.coverage;
    html! {
        h2 { "What the cases cover" }
        h3 { "Methods" }
        table {
            thead { tr { th { "Method" } th.num { "Cases (all doors)" } th.num { "Passed" } th.num { "Refusals expected" } } }
            tbody {
                @for m in &c.methods {
                    tr { td { code { (m.rpc) } } td.num { (m.cases) } td.num { (m.passed) } td.num { (m.refusals) } }
                }
            }
        }
        h3 { "Models in the server's catalog (gRPC door)" }
        table {
            thead { tr { th { "Model" } th.num { "Cases" } th.num { "Passed" } } }
            tbody {
                @for m in &c.models {
                    tr { td { code { (m.model_id) } } td.num { (m.cases) } td.num { (m.passed) } }
                }
            }
        }
        @if c.gaps.is_empty() {
            p { "Every method of the contract and every model of the catalog has at least one case." }
        } @else {
            h3 { "Gaps (each fails the run)" }
            ul { @for gap in &c.gaps { li { (gap) } } }
        }
    }
}

fn failed(report: &Report) -> Markup {
    let failed: Vec<&CaseRecord> = report.cases.iter().filter(|c| !c.passed).collect();
    html! {
        @if !failed.is_empty() || !report.source_problems.is_empty() {
            h2 { "Cases that failed" }
            @if !failed.is_empty() {
                p { (failed.len()) " cases failed. Each is shown again in full under its source below." }
                (case_table(&failed))
            }
            @if !report.source_problems.is_empty() {
                h3 { "Source rows this build could not read" }
                (rows_table(&report.source_problems))
            }
        }
    }
}

fn all_cases(report: &Report) -> Markup {
    html! {
        h2 { "Every case" }
        @for surface in &report.surfaces {
            @for family in [Family::SharedVector, Family::ReferenceTable, Family::ApiExample] {
                @let cases: Vec<&CaseRecord> = report.cases.iter()
                    .filter(|c| c.surface == surface.key && c.family == family).collect();
                @if !cases.is_empty() {
                    h3 { (family.title()) ", through " (surface.title) " (" (cases.len()) " cases)" }
                    (case_table(&cases))
                }
            }
        }
    }
}

fn case_table(cases: &[&CaseRecord]) -> Markup {
    html! {
        table.cases {
            colgroup {
                col.check; col.expected; col.tolerance; col.observed; col.difference; col.result;
            }
            thead {
                tr {
                    th { "Check" } th { "Expected" } th { "Tolerance" } th { "Observed" }
                    th { "Difference" } th { "Result" }
                }
            }
            @for case in cases {
                tbody {
                    tr."case-head" {
                        td colspan="6" {
                            strong { (case.id) } " · " code { (case.rpc) } " · " (case.surface)
                            " · " @if case.passed { span."verdict-pass" { "passed" } } @else { span."verdict-fail" { "FAILED" } }
                            br;
                            span.source { "Source: " (case.source) }
                            @if let Some(note) = &case.note { br; span.source { "How it was sent: " (note) } }
                            br;
                            span.source { "Inputs: " } code { (compact(&case.inputs)) }
                        }
                    }
                    @for check in &case.checks {
                        (check_row(check))
                    }
                }
            }
        }
    }
}

fn check_row(check: &CheckOutcome) -> Markup {
    html! {
        tr {
            td { code { (check.what) } }
            td.mono { (value_text(&check.expected)) }
            td.mono {
                @match check.tolerance {
                    Some(t) => { "± " (number_text(t)) }
                    None => { (check.comparison) }
                }
            }
            td.mono {
                @match &check.observed {
                    Some(v) => { (value_text(v)) }
                    None => { "absent" }
                }
            }
            td.mono { @if let Some(d) = check.difference { (difference_text(d)) } }
            td { @if check.passed { span."verdict-pass" { "pass" } } @else { span."verdict-fail" { "FAIL" } } }
        }
    }
}

fn not_run(report: &Report) -> Markup {
    html! {
        h2 { "Source rows that are not cases" }
        p {
            "These rows of the source files check values inside the engine that the service does not return, "
            "or fix inputs the service takes otherwise. The engine's own tests check them; they are listed so "
            "that no row is left out unseen."
        }
        (rows_table(&report.not_run))
    }
}

fn rows_table(rows: &[crate::verify::case::NotRun]) -> Markup {
    html! {
        table {
            thead { tr { th { "File" } th { "Row" } th { "Why it is not run" } } }
            tbody {
                @for row in rows {
                    tr { td { code { (row.file) } } td { (row.location) } td { (row.reason) } }
                }
            }
        }
    }
}

fn case_data(report: &Report) -> Markup {
    let tool = &report.tool;
    html! {
        h2 { "Case data and the tool" }
        p {
            "Made by " (tool.name) " " (tool.version) ", built from commit " code { (tool.build_commit) }
            ". The cases come from these files, embedded in that build:"
        }
        table {
            thead { tr { th { "File" } th { "SHA-256" } } }
            tbody {
                @for f in &tool.case_files { tr { td { code { (f.path) } } td { code { (f.sha256) } } } }
            }
        }
    }
}

fn sign_off(report: &Report) -> Markup {
    html! {
        h2 { "Review and approval" }
        p {
            "To be completed by the laboratory. Approval records that the laboratory has reviewed this report "
            "under its own verification procedure. The evidence follows: every case, the source rows that are "
            "not cases, and the case data."
        }
        div.signoff {
            @for block in &report.sign_off {
                table {
                    tbody {
                        tr { th colspan="2" { (block.role) } }
                        tr { th { "Name" } td { (block.name) } }
                        tr { th { "Signature" } td { (block.signature) } }
                        tr { th { "Date" } td { (block.date) } }
                        tr { th { "Decision or comments" } td { (block.comment) } }
                    }
                }
            }
        }
    }
}

/// A JSON value in one line.
fn compact(value: &Value) -> String {
    value.to_string()
}

/// A value for a table cell: numbers as [`number_text`], strings bare,
/// anything else as compact JSON.
fn value_text(value: &Value) -> String {
    match value {
        Value::Number(n) => n.as_f64().map_or_else(|| n.to_string(), number_text),
        Value::String(s) => s.clone(),
        other => compact(other),
    }
}

/// A difference to three significant figures (the JSON report keeps every
/// digit).
fn difference_text(value: f64) -> String {
    if value == 0.0 {
        "0".to_owned()
    } else {
        format!("{value:.2e}")
    }
}

/// A number in the shortest form that reads back to it; very small and
/// very large ones in exponent form.
fn number_text(value: f64) -> String {
    let magnitude = value.abs();
    if magnitude != 0.0 && !(1e-4..1e9).contains(&magnitude) {
        format!("{value:e}")
    } else {
        format!("{value}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_read_back_and_small_ones_use_exponents() {
        assert_eq!(number_text(0.749465), "0.749465");
        assert_eq!(number_text(1e-6), "1e-6");
        assert_eq!(number_text(2.5e-5), "2.5e-5");
        assert_eq!(number_text(0.0), "0");
        assert_eq!(number_text(1000.4), "1000.4");
        assert_eq!(difference_text(3.9615266733e-8), "3.96e-8");
        assert_eq!(difference_text(0.0), "0");
    }

    #[test]
    fn server_text_is_escaped() {
        let markup =
            html! { td { (value_text(&Value::String("<script>x</script> & \"q\"".to_owned()))) } };
        let text = markup.into_string();
        assert!(!text.contains("<script>"), "{text}");
        assert!(text.contains("&lt;script&gt;"), "{text}");
    }
}
