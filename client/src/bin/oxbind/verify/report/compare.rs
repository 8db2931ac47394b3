//! `--compare previous.json`: what changed between an earlier report and
//! this run: the instance's identity and hashes (with the hash of its
//! uncertainty profiles), its settings, the doors, and every case whose
//! verdict or observed value changed.

use std::collections::BTreeMap;

use serde_json::Value;

use super::SCHEMA;

/// The differences, one line each; empty when nothing changed.
pub(crate) fn changes(previous: &Value, current: &Value) -> Result<Vec<String>, String> {
    if previous["schema"] != Value::String(SCHEMA.to_owned()) {
        return Err(format!(
            "not an oxbind verify report of schema {SCHEMA} (its schema: {})",
            previous["schema"]
        ));
    }
    let mut lines = Vec::new();
    let fields = [
        ("server.address", "address"),
        ("server.serviceVersion", "service version"),
        ("server.buildCommit", "build commit"),
        ("server.apiVersion", "API version"),
        ("server.catalogSha256", "catalog hash"),
        ("server.hardLimitsSha256", "hard-limit hash"),
        ("uncertainty.profilesSha256", "uncertainty-profile hash"),
        ("tool.version", "oxbind verify version"),
        ("tool.buildCommit", "oxbind verify build commit"),
    ];
    for (path, name) in fields {
        let (before, after) = (at(previous, path), at(current, path));
        if before != after {
            lines.push(format!("{name}: {} -> {}", text(before), text(after)));
        }
    }
    for (name, (before, after)) in paired(previous, current, "settings.items", |s| {
        (
            s["name"].as_str().unwrap_or_default().to_owned(),
            s["value"].clone(),
        )
    }) {
        if before != after {
            lines.push(format!(
                "setting {name}: {} -> {}",
                option_text(before.as_ref()),
                option_text(after.as_ref())
            ));
        }
    }
    for (key, (before, after)) in paired(previous, current, "surfaces", |s| {
        (
            s["key"].as_str().unwrap_or_default().to_owned(),
            s["answered"].clone(),
        )
    }) {
        if before != after {
            let state = |v: Option<&Value>| match v {
                Some(Value::Bool(true)) => "answered",
                Some(_) => "not offered",
                None => "not probed",
            };
            lines.push(format!(
                "door {key}: {} -> {}",
                state(before.as_ref()),
                state(after.as_ref())
            ));
        }
    }
    for (id, (before, after)) in paired(previous, current, "cases", |c| {
        (
            format!(
                "{} on {}",
                c["id"].as_str().unwrap_or_default(),
                c["surface"].as_str().unwrap_or_default()
            ),
            c.clone(),
        )
    }) {
        match (before, after) {
            (Some(_), None) => lines.push(format!("case {id}: no longer run")),
            (None, Some(after)) => lines.push(format!("case {id}: new, {}", verdict(&after))),
            (Some(before), Some(after)) => {
                if before["passed"] != after["passed"] {
                    lines.push(format!(
                        "case {id}: {} -> {}",
                        verdict(&before),
                        verdict(&after)
                    ));
                }
                lines.extend(observed_changes(&id, &before, &after));
            }
            (None, None) => {}
        }
    }
    Ok(lines)
}

/// Each check of a case whose observed value changed.
fn observed_changes(id: &str, before: &Value, after: &Value) -> Vec<String> {
    let observed = |case: &Value| -> BTreeMap<String, Value> {
        case["checks"]
            .as_array()
            .map(Vec::as_slice)
            .unwrap_or(&[])
            .iter()
            .map(|c| {
                (
                    c["what"].as_str().unwrap_or_default().to_owned(),
                    c["observed"].clone(),
                )
            })
            .collect()
    };
    let (before, after) = (observed(before), observed(after));
    after
        .iter()
        .filter_map(|(what, value)| {
            let old = before.get(what)?;
            (old != value).then(|| format!("case {id}: {what}: {} -> {}", text(old), text(value)))
        })
        .collect()
}

/// The entries of the list at `path` in both reports, by key.
fn paired(
    previous: &Value,
    current: &Value,
    path: &str,
    key: impl Fn(&Value) -> (String, Value),
) -> BTreeMap<String, (Option<Value>, Option<Value>)> {
    let mut pairs: BTreeMap<String, (Option<Value>, Option<Value>)> = BTreeMap::new();
    for (report, slot) in [(previous, 0), (current, 1)] {
        for entry in at(report, path)
            .as_array()
            .map(Vec::as_slice)
            .unwrap_or(&[])
        {
            let (name, value) = key(entry);
            let pair = pairs.entry(name).or_default();
            if slot == 0 {
                pair.0 = Some(value);
            } else {
                pair.1 = Some(value);
            }
        }
    }
    pairs
}

fn at<'a>(value: &'a Value, path: &str) -> &'a Value {
    path.split('.').fold(value, |node, key| &node[key])
}

fn text(value: &Value) -> String {
    match value {
        Value::String(s) => s.clone(),
        Value::Null => "(none)".to_owned(),
        other => other.to_string(),
    }
}

fn option_text(value: Option<&Value>) -> String {
    value.map_or_else(|| "(not reported)".to_owned(), text)
}

fn verdict(case: &Value) -> &'static str {
    if case["passed"] == Value::Bool(true) {
        "passed"
    } else {
        "failed"
    }
}

#[cfg(test)]
mod tests {
    use serde_json::json;

    use super::*;

    fn report(version: &str, value: f64, passed: bool, limit: &str) -> Value {
        json!({
            "schema": SCHEMA,
            "server": {"serviceVersion": version, "catalogSha256": "aa"},
            "settings": {"items": [{"name": "max-batch-items", "value": limit}]},
            "surfaces": [{"key": "grpc", "answered": true}],
            "cases": [{"id": "x", "surface": "grpc", "passed": passed,
                       "checks": [{"what": "saturationFraction", "observed": value}]}]
        })
    }

    #[test]
    fn changes_name_the_version_the_setting_and_the_case() {
        let lines = changes(
            &report("0.1.0", 0.5, true, "10000"),
            &report("0.2.0", 0.6, false, "500"),
        )
        .unwrap();
        assert_eq!(
            lines,
            vec![
                "service version: 0.1.0 -> 0.2.0",
                "setting max-batch-items: 10000 -> 500",
                "case x on grpc: passed -> failed",
                "case x on grpc: saturationFraction: 0.5 -> 0.6",
            ]
        );
        let same = report("0.1.0", 0.5, true, "10000");
        assert!(changes(&same, &same).unwrap().is_empty());
        assert!(changes(&json!({"schema": "other"}), &same).is_err());
    }

    #[test]
    fn a_changed_uncertainty_profile_is_named() {
        let mut before = report("0.1.0", 0.5, true, "10000");
        let mut after = before.clone();
        before["uncertainty"] = json!({"profilesSha256": "aa"});
        after["uncertainty"] = json!({"profilesSha256": "bb"});
        assert_eq!(
            changes(&before, &after).unwrap(),
            vec!["uncertainty-profile hash: aa -> bb"]
        );
    }
}
