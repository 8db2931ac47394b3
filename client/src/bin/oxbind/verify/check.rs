//! Judging an answer against a case: each check's expected value,
//! tolerance, observed value, difference and verdict.

use serde::Serialize;
use serde_json::{json, Value};

use super::{
    case::{Check, Expect, ItemError, Want},
    surface::CallFailure,
};

/// Numbers inside `equals` and `contains` are meant to be exact (enum
/// names, limits, constants); they may differ by this much.
const EXACT_NUMBER_TOLERANCE: f64 = 1e-12;

/// The domain of every refusal's ErrorInfo.
const ERROR_DOMAIN: &str = "oxbind.v1";

/// The status code of a refusal.
const INVALID_ARGUMENT: &str = "INVALID_ARGUMENT";

/// One check's outcome.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub(crate) struct CheckOutcome {
    /// What was checked: a response path, `refusal`, or `results[i] refusal`.
    pub(crate) what: String,
    /// The expected value (for `contains`, the element looked for).
    pub(crate) expected: Value,
    /// How it is compared: `within tolerance`, `equals` or `contains`.
    pub(crate) comparison: &'static str,
    /// The largest accepted absolute difference, for numbers.
    pub(crate) tolerance: Option<f64>,
    /// What came back (absent when nothing did).
    pub(crate) observed: Option<Value>,
    /// |observed - expected|, for numbers.
    pub(crate) difference: Option<f64>,
    /// Whether the check holds.
    pub(crate) passed: bool,
}

/// Judge `answer` against `expect`.
pub(crate) fn judge(expect: &Expect, answer: &Result<Value, CallFailure>) -> Vec<CheckOutcome> {
    match (expect, answer) {
        (
            Expect::Answer {
                checks,
                item_errors,
            },
            Ok(response),
        ) => checks
            .iter()
            .map(|check| judge_check(check, response))
            .chain(item_errors.iter().map(|item| judge_item(item, response)))
            .collect(),
        (Expect::Answer { .. }, Err(failure)) => vec![CheckOutcome {
            what: "answer".to_owned(),
            expected: json!("a computed answer"),
            comparison: "equals",
            tolerance: None,
            observed: Some(failure_json(failure)),
            difference: None,
            passed: false,
        }],
        (Expect::Refusal { field, reason }, answer) => {
            let expected = json!({
                "code": INVALID_ARGUMENT,
                "field": field,
                "reason": reason,
                "errorInfo": {"reason": reason, "domain": ERROR_DOMAIN},
            });
            let (observed, passed) = match answer {
                Ok(_) => (json!("computed, not refused"), false),
                Err(failure) => (failure_json(failure), is_refusal(failure, field, reason)),
            };
            vec![CheckOutcome {
                what: "refusal".to_owned(),
                expected,
                comparison: "equals",
                tolerance: None,
                observed: Some(observed),
                difference: None,
                passed,
            }]
        }
    }
}

fn is_refusal(failure: &CallFailure, field: &str, reason: &str) -> bool {
    failure.code == INVALID_ARGUMENT
        && failure
            .violations
            .iter()
            .any(|(f, r)| f == field && r == reason)
        && failure
            .error_info
            .as_ref()
            .is_some_and(|(r, d)| r == reason && d == ERROR_DOMAIN)
}

/// A failure as the report shows it.
fn failure_json(failure: &CallFailure) -> Value {
    let mut value = json!({"code": failure.code, "message": failure.message});
    if !failure.violations.is_empty() {
        value["violations"] = failure
            .violations
            .iter()
            .map(|(field, reason)| json!({"field": field, "reason": reason}))
            .collect();
    }
    if let Some((reason, domain)) = &failure.error_info {
        value["errorInfo"] = json!({"reason": reason, "domain": domain});
    }
    value
}

fn judge_check(check: &Check, response: &Value) -> CheckOutcome {
    let observed = lookup(response, &check.path).cloned();
    let mut outcome = CheckOutcome {
        what: check.path.clone(),
        expected: Value::Null,
        comparison: "equals",
        tolerance: None,
        observed: observed.clone(),
        difference: None,
        passed: false,
    };
    match &check.want {
        Want::Number { value, tolerance } => {
            outcome.expected = json!(value);
            outcome.comparison = "within tolerance";
            outcome.tolerance = Some(*tolerance);
            if let Some(actual) = observed.as_ref().and_then(Value::as_f64) {
                let difference = (actual - value).abs();
                outcome.difference = Some(difference);
                outcome.passed = difference <= *tolerance;
            }
        }
        Want::Equals(want) => {
            outcome.expected = want.clone();
            outcome.passed = observed.as_ref().is_some_and(|a| matches(a, want));
            if let (Some(a), Some(w)) = (observed.as_ref().and_then(Value::as_f64), want.as_f64()) {
                outcome.difference = Some((a - w).abs());
            }
        }
        Want::Contains(want) => {
            outcome.expected = want.clone();
            outcome.comparison = "contains";
            outcome.passed = observed
                .as_ref()
                .and_then(Value::as_array)
                .is_some_and(|list| list.iter().any(|e| matches(e, want)));
        }
    }
    outcome
}

/// A batch item that must carry its own refusal.
fn judge_item(item: &ItemError, response: &Value) -> CheckOutcome {
    let path = format!("results[{}]", item.index);
    let result = lookup(response, &path);
    let error = result.and_then(|r| r.get("error")).filter(|e| !e.is_null());
    let computed = result
        .and_then(|r| r.get("response"))
        .is_some_and(|r| !r.is_null());
    let details = error
        .and_then(|e| e["details"].as_array())
        .map(Vec::as_slice)
        .unwrap_or(&[]);
    let of_type = |suffix: &str| {
        details
            .iter()
            .find(|d| d["@type"].as_str().is_some_and(|t| t.ends_with(suffix)))
    };
    let violations: Vec<(String, String)> = of_type("google.rpc.BadRequest")
        .and_then(|b| b["fieldViolations"].as_array())
        .map(|list| {
            list.iter()
                .map(|v| {
                    (
                        v["field"].as_str().unwrap_or_default().to_owned(),
                        v["reason"].as_str().unwrap_or_default().to_owned(),
                    )
                })
                .collect()
        })
        .unwrap_or_default();
    let info = of_type("google.rpc.ErrorInfo").map(|i| {
        (
            i["reason"].as_str().unwrap_or_default().to_owned(),
            i["domain"].as_str().unwrap_or_default().to_owned(),
        )
    });
    let code = error.and_then(|e| e["code"].as_i64());
    let failure = CallFailure {
        code: match code {
            Some(3) => INVALID_ARGUMENT.to_owned(),
            Some(other) => format!("code {other}"),
            None if computed => "computed, not refused".to_owned(),
            None => "no result".to_owned(),
        },
        message: error
            .and_then(|e| e["message"].as_str())
            .unwrap_or_default()
            .to_owned(),
        violations,
        error_info: info,
    };
    CheckOutcome {
        what: format!("{path} refusal"),
        expected: json!({
            "code": INVALID_ARGUMENT,
            "field": item.field,
            "reason": item.reason,
            "errorInfo": {"reason": item.reason, "domain": ERROR_DOMAIN},
        }),
        comparison: "equals",
        tolerance: None,
        passed: !computed && is_refusal(&failure, &item.field, &item.reason),
        observed: Some(failure_json(&failure)),
        difference: None,
    }
}

/// The value at a dotted path such as `curves[0].points[3].po2`.
pub(crate) fn lookup<'a>(root: &'a Value, path: &str) -> Option<&'a Value> {
    let mut node = root;
    for segment in path.split('.') {
        let (name, indices) = match segment.find('[') {
            Some(at) => (&segment[..at], &segment[at..]),
            None => (segment, ""),
        };
        if !name.is_empty() {
            node = node.get(name)?;
        }
        for index in indices.split('[').filter(|s| !s.is_empty()) {
            let index: usize = index.strip_suffix(']')?.parse().ok()?;
            node = node.get(index)?;
        }
    }
    Some(node)
}

/// Whether `actual` has every key of `want` with an equal value
/// (recursively for objects; numbers within [`EXACT_NUMBER_TOLERANCE`]).
fn matches(actual: &Value, want: &Value) -> bool {
    match (actual, want) {
        (Value::Object(a), Value::Object(w)) => w
            .iter()
            .all(|(key, value)| a.get(key).is_some_and(|got| matches(got, value))),
        (Value::Array(a), Value::Array(w)) => {
            a.len() == w.len() && a.iter().zip(w).all(|(x, y)| matches(x, y))
        }
        (Value::Number(a), Value::Number(w)) => match (a.as_f64(), w.as_f64()) {
            (Some(a), Some(w)) => (a - w).abs() <= EXACT_NUMBER_TOLERANCE,
            _ => false,
        },
        (a, w) => a == w,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn number(path: &str, value: f64, tolerance: f64) -> Check {
        Check {
            path: path.to_owned(),
            want: Want::Number { value, tolerance },
        }
    }

    #[test]
    fn a_number_passes_within_its_tolerance_and_fails_outside_it() {
        let response =
            json!({"saturationFraction": 0.7495, "curves": [{"points": [{"po2": 10.0}]}]});
        let ok = judge_check(&number("saturationFraction", 0.7494, 2e-4), &response);
        assert!(ok.passed);
        assert!((ok.difference.unwrap() - 1e-4).abs() < 1e-12);
        let bad = judge_check(&number("saturationFraction", 0.7494, 5e-5), &response);
        assert!(!bad.passed);
        assert!(judge_check(&number("curves[0].points[0].po2", 10.0, 0.0), &response).passed);
        let absent = judge_check(&number("p50AtConditions.value", 1.0, 1.0), &response);
        assert!(!absent.passed);
        assert_eq!(absent.observed, None);
    }

    #[test]
    fn a_refusal_needs_the_field_the_reason_and_the_error_info() {
        let expect = Expect::Refusal {
            field: "po2".to_owned(),
            reason: "FIELD_REQUIRED".to_owned(),
        };
        let mut failure = CallFailure {
            code: "INVALID_ARGUMENT".to_owned(),
            message: "po2 is required".to_owned(),
            violations: vec![("po2".to_owned(), "FIELD_REQUIRED".to_owned())],
            error_info: Some(("FIELD_REQUIRED".to_owned(), "oxbind.v1".to_owned())),
        };
        assert!(judge(&expect, &Err(failure.clone()))[0].passed);
        failure.error_info = None;
        assert!(!judge(&expect, &Err(failure))[0].passed);
        assert!(!judge(&expect, &Ok(json!({})))[0].passed);
    }

    #[test]
    fn contains_finds_an_element_with_the_given_keys() {
        let response =
            json!({"warnings": [{"code": "A", "field": "x"}, {"code": "B", "field": "y"}]});
        let check = Check {
            path: "warnings".to_owned(),
            want: Want::Contains(json!({"code": "B"})),
        };
        assert!(judge_check(&check, &response).passed);
    }
}
