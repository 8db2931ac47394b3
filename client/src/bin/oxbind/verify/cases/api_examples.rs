//! Cases from the worked examples of the API reference (`proto/API.md`
//! section 7, the RPCs, and section 10, uncertainty on request): each
//! `Request:` JSON block with the `Response:` block that follows it. Every
//! number printed in the response is checked to the precision printed
//! (within half a unit of its last digit, as the document says of itself),
//! and every printed code, unit, identifier and flag exactly; placeholders
//! (`…`, the compute time, service version and build commit) and free-text
//! messages, which the contract says not to parse, are not checked. The
//! values were recorded from the service when the document was written:
//! these cases show that the deployment answers as its integrators were
//! told, and are not an independent source. Section 10's sources say so in
//! so many words (regression values); its independent check values are
//! shared vectors.

use std::collections::BTreeMap;

use serde_json::{value::RawValue, Value};

use crate::verify::{
    case::{file_name, Case, CaseSet, Check, Expect, Family, NotRun, Want},
    contract,
    sources::EmbeddedFile,
};

/// Fields whose printed value is a placeholder or free text.
const NOT_CHECKED: [&str; 5] = [
    "computeTime",
    "serviceVersion",
    "buildCommit",
    "message",
    "cautions",
];

/// The mark of an abridged value.
const ELLIPSIS: char = '…';

/// Significant figures a number printed in exponent form is read to.
const EXPONENT_SIGNIFICANT_FIGURES: i32 = 4;

/// The sections whose subsections hold worked examples: 7 (the RPCs) and
/// 10 (uncertainty on request).
const EXAMPLE_SECTIONS: [&str; 2] = ["7.", "10."];

/// The section whose examples are regression values only.
const UNCERTAINTY_SECTION: &str = "10.";

/// One fenced JSON block and the label line before it.
struct Block {
    line: usize,
    label: String,
    section: String,
    rpc: Option<String>,
    text: String,
}

/// Every worked example of sections 7 and 10.
pub(crate) fn cases(file: &EmbeddedFile) -> CaseSet {
    let mut set = CaseSet::default();
    let mut pending: Option<Block> = None;
    for block in blocks(file.text) {
        if block.label.starts_with("Request") {
            pending = Some(block);
        } else if block.label.starts_with("Response") {
            match pending.take() {
                Some(request) => match case(file, &request, &block) {
                    Ok(case) => set.cases.push(case),
                    Err(reason) => set.not_run.push(NotRun {
                        file: file.path,
                        location: format!("line {}", request.line),
                        reason,
                    }),
                },
                None => set.not_run.push(NotRun {
                    file: file.path,
                    location: format!("line {}", block.line),
                    reason: "a response shown without a request block of its own".to_owned(),
                }),
            }
        }
    }
    set
}

/// Whether a subsection holds worked examples.
fn is_example_section(section: &str) -> bool {
    EXAMPLE_SECTIONS.iter().any(|s| section.starts_with(s))
}

/// The fenced JSON blocks of sections 7 and 10, with the label before each.
fn blocks(text: &str) -> Vec<Block> {
    let mut blocks = Vec::new();
    let mut section = String::new();
    let mut rpc = None;
    let mut label = String::new();
    let mut lines = text.lines().enumerate();
    while let Some((index, line)) = lines.next() {
        if let Some(heading) = line.strip_prefix("### ") {
            section = heading.trim().to_owned();
            rpc = None;
        } else if line.starts_with("## ") {
            section.clear();
            rpc = None;
        } else if rpc.is_none() && is_example_section(&section) {
            rpc = method_named(line);
        }
        if line.trim_start().starts_with("```json") {
            let mut body = String::new();
            for (_, inner) in lines.by_ref() {
                if inner.trim_start().starts_with("```") {
                    break;
                }
                body.push_str(inner);
                body.push('\n');
            }
            if is_example_section(&section) {
                blocks.push(Block {
                    line: index + 1,
                    label: label.clone(),
                    section: section.clone(),
                    rpc: rpc.clone().or_else(|| method_in_label(&label)),
                    text: body,
                });
            }
            label.clear();
        } else if !line.trim().is_empty() {
            label = line.trim().to_owned();
        }
    }
    blocks
}

/// The first `` `oxbind.v1.Service/Method` `` on a line.
fn method_named(line: &str) -> Option<String> {
    let start = line.find("`oxbind.v1.")? + 1;
    let end = line[start..].find('`')? + start;
    let name = &line[start..end];
    name.contains('/').then(|| name.to_owned())
}

/// The method a label names by its name alone, as section 10's do:
/// `Request (GasExchange, Monte Carlo ...):` names
/// `oxbind.v1.OxygenTransportService/GasExchange`, when exactly one method
/// of the contract has that name.
fn method_in_label(label: &str) -> Option<String> {
    let inside = label.split_once('(')?.1;
    let name = inside.split([',', ')']).next()?.trim();
    let mut found = oxbind_proto::service_names::ALL
        .iter()
        .filter_map(|service| contract::pool().get_service_by_name(service))
        .flat_map(|service| {
            service
                .methods()
                .filter(|m| m.name() == name)
                .map(|m| format!("{}/{}", service.full_name(), m.name()))
                .collect::<Vec<_>>()
        });
    let first = found.next()?;
    found.next().is_none().then_some(first)
}

fn case(file: &EmbeddedFile, request: &Block, response: &Block) -> Result<Case, String> {
    let rpc = request
        .rpc
        .clone()
        .ok_or_else(|| format!("section {} names no method", request.section))?;
    let parsed_request: Value = serde_json::from_str(&request.text)
        .map_err(|e| format!("the request block is not JSON: {e}"))?;
    let raw: &RawValue = serde_json::from_str(&response.text)
        .map_err(|e| format!("the response block is not JSON: {e}"))?;
    let mut checks = Vec::new();
    leaves(raw, "", &mut checks)?;
    if checks.is_empty() {
        return Err("the response block shows nothing to check".to_owned());
    }
    let number = request.section.split_whitespace().next().unwrap_or("");
    Ok(Case {
        id: format!(
            "{}/section-{number}-line-{}",
            file_name(file.path),
            request.line
        ),
        family: Family::ApiExample,
        file: file.path,
        rpc,
        request: parsed_request,
        expect: Expect::Answer {
            checks,
            item_errors: Vec::new(),
        },
        source: if request.section.starts_with(UNCERTAINTY_SECTION) {
            format!(
                "regression values: proto/API.md section {}, the worked example on line {}, \
                 recorded from this service's own output when the document was written, not an \
                 independent check (each number within half a unit of its last printed digit; a \
                 Monte Carlo result repeats exactly with the seed and draws the request fixes)",
                request.section, response.line
            )
        } else {
            format!(
                "proto/API.md section {}, the worked example on line {} (values recorded from the \
                 service when the document was written; each number within half a unit of its \
                 last printed digit)",
                request.section, response.line
            )
        },
        note: None,
    })
}

/// A check for every printed leaf of `raw` (JSON text) under `path`.
fn leaves(raw: &RawValue, path: &str, checks: &mut Vec<Check>) -> Result<(), String> {
    let text = raw.get().trim();
    let bad = |e: serde_json::Error| format!("{path}: {e}");
    if text.starts_with('{') {
        let map: BTreeMap<String, &RawValue> = serde_json::from_str(text).map_err(bad)?;
        for (key, child) in map {
            if key.contains(ELLIPSIS) || NOT_CHECKED.contains(&key.as_str()) {
                continue;
            }
            let child_path = if path.is_empty() {
                key
            } else {
                format!("{path}.{key}")
            };
            leaves(child, &child_path, checks)?;
        }
    } else if text.starts_with('[') {
        let items: Vec<&RawValue> = serde_json::from_str(text).map_err(bad)?;
        // Elements after an abridged one may not be where they are shown.
        for (i, item) in items.into_iter().enumerate() {
            if item.get().contains(ELLIPSIS) && item.get().trim().starts_with('"') {
                break;
            }
            leaves(item, &format!("{path}[{i}]"), checks)?;
        }
    } else {
        let value: Value = serde_json::from_str(text).map_err(bad)?;
        match value {
            Value::String(s) if s.contains(ELLIPSIS) || s.starts_with('<') => {}
            Value::Number(number) => checks.push(Check {
                path: path.to_owned(),
                want: Want::Number {
                    value: number.as_f64().unwrap_or(f64::NAN),
                    tolerance: printed_tolerance(text),
                },
            }),
            other => checks.push(Check {
                path: path.to_owned(),
                want: Want::Equals(other),
            }),
        }
    }
    Ok(())
}

/// Half a unit in the last printed digit of the number `text`; for a number
/// in exponent form, half a unit in its 4th significant figure.
fn printed_tolerance(text: &str) -> f64 {
    if text.contains(['e', 'E']) {
        let value: f64 = text.parse().unwrap_or(0.0);
        if value == 0.0 || !value.is_finite() {
            return 0.0;
        }
        let magnitude = value.abs().log10().floor() as i32;
        return 0.5 * 10f64.powi(magnitude - (EXPONENT_SIGNIFICANT_FIGURES - 1));
    }
    let decimals = text.split_once('.').map_or(0, |(_, d)| d.len()) as i32;
    0.5 * 10f64.powi(-decimals)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::verify::sources::API_REFERENCE_FILE;

    #[test]
    fn printed_precision_is_half_a_unit_in_the_last_digit() {
        assert!((printed_tolerance("33.202") - 0.0005).abs() < 1e-15);
        assert!((printed_tolerance("0.85577") - 0.000005).abs() < 1e-15);
        assert!((printed_tolerance("180.00") - 0.005).abs() < 1e-15);
        assert!((printed_tolerance("62") - 0.5).abs() < 1e-15);
        assert!((printed_tolerance("1.25e-3") - 5e-7).abs() < 1e-18);
    }

    #[test]
    fn every_worked_example_of_sections_7_and_10_is_a_case() {
        let set = cases(&API_REFERENCE_FILE);
        assert!(set.problems.is_empty(), "{:#?}", set.problems);
        assert!(set.cases.len() >= 10, "{} cases", set.cases.len());
        for case in &set.cases {
            assert!(case.rpc.starts_with("oxbind.v1."), "{}", case.rpc);
        }
        for skipped in &set.not_run {
            assert!(skipped.reason.contains("without a request"), "{skipped:?}");
        }
        // Section 10's examples ask for an uncertainty, and say that their
        // values are the service's own.
        let uncertainty: Vec<&Case> = set
            .cases
            .iter()
            .filter(|c| c.id.contains("section-10."))
            .collect();
        assert!(uncertainty.len() >= 2, "{} cases", uncertainty.len());
        for case in uncertainty {
            assert!(case.request.get("uncertainty").is_some(), "{}", case.id);
            assert!(case.source.starts_with("regression values"), "{}", case.id);
        }
    }

    #[test]
    fn a_label_names_a_method_by_its_name_alone() {
        assert_eq!(
            method_in_label("Request (GasExchange, Monte Carlo with 10⁵ draws and seed 94):")
                .as_deref(),
            Some("oxbind.v1.OxygenTransportService/GasExchange")
        );
        assert_eq!(
            method_in_label("Request (SaturationFromTension):").as_deref(),
            Some("oxbind.v1.DissociationService/SaturationFromTension")
        );
        assert_eq!(method_in_label("Request:"), None);
        assert_eq!(method_in_label("Request (NoSuchMethod):"), None);
    }
}
