//! Cases from the shared vectors (`tests/vectors/*.json`): each vector is one
//! case, read as `tests/tests/shared_vectors.rs` and the Python interop suite
//! read it (the file's `description` states the schema).

use serde_json::Value;

use crate::verify::{
    case::{file_name, Case, CaseSet, Check, Expect, Family, ItemError, NotRun, Want},
    sources::EmbeddedFile,
};

/// Every vector of every file.
pub(crate) fn cases(files: &[EmbeddedFile]) -> CaseSet {
    let mut set = CaseSet::default();
    for file in files {
        let parsed: Value = match serde_json::from_str(file.text) {
            Ok(value) => value,
            Err(e) => {
                set.problems
                    .push(problem(file, "the file", format!("not JSON: {e}")));
                continue;
            }
        };
        let Some(vectors) = parsed["vectors"].as_array() else {
            set.problems
                .push(problem(file, "the file", "no \"vectors\" list".to_owned()));
            continue;
        };
        for vector in vectors {
            let name = vector["name"].as_str().unwrap_or("(unnamed)");
            // A vector whose expected values name no source is not a
            // verification case.
            if vector["source"]
                .as_str()
                .is_none_or(|s| s.trim().is_empty())
            {
                set.not_run.push(problem(
                    file,
                    name,
                    "the vector names no source for its expected values".to_owned(),
                ));
                continue;
            }
            match case(file, vector) {
                Ok(case) => set.cases.push(case),
                Err(reason) => set.problems.push(problem(file, name, reason)),
            }
        }
    }
    set
}

fn problem(file: &EmbeddedFile, location: &str, reason: String) -> NotRun {
    NotRun {
        file: file.path,
        location: location.to_owned(),
        reason,
    }
}

/// One vector as a case.
fn case(file: &EmbeddedFile, vector: &Value) -> Result<Case, String> {
    let text = |key: &str| {
        vector[key]
            .as_str()
            .filter(|s| !s.trim().is_empty())
            .map(str::to_owned)
            .ok_or_else(|| format!("no \"{key}\""))
    };
    let name = text("name")?;
    let rpc = text("rpc")?;
    // A vector without a source is not a verification case.
    let source = text("source")?;
    let request = vector.get("request").cloned().ok_or("no \"request\"")?;
    let expect = if let Some(refused) = vector.get("refused") {
        let field = refused["field"].as_str().ok_or("refused without field")?;
        let reason = refused["reason"].as_str().ok_or("refused without reason")?;
        Expect::Refusal {
            field: field.to_owned(),
            reason: reason.to_owned(),
        }
    } else {
        let checks = list(vector, "expect")
            .iter()
            .map(check)
            .collect::<Result<Vec<_>, _>>()?;
        let item_errors = list(vector, "itemErrors")
            .iter()
            .map(item_error)
            .collect::<Result<Vec<_>, _>>()?;
        if checks.is_empty() && item_errors.is_empty() {
            return Err("expects nothing".to_owned());
        }
        Expect::Answer {
            checks,
            item_errors,
        }
    };
    Ok(Case {
        id: format!("{}/{name}", file_name(file.path)),
        family: Family::SharedVector,
        file: file.path,
        rpc,
        request,
        expect,
        source,
        note: None,
    })
}

fn list<'a>(vector: &'a Value, key: &str) -> &'a [Value] {
    vector[key].as_array().map(Vec::as_slice).unwrap_or(&[])
}

/// One entry of `expect`.
fn check(entry: &Value) -> Result<Check, String> {
    let path = entry["path"]
        .as_str()
        .ok_or("an expectation without a path")?
        .to_owned();
    let want = if let Some(value) = entry.get("value") {
        let value = value
            .as_f64()
            .ok_or_else(|| format!("{path}: value is not a number"))?;
        let tolerance = entry["tolerance"]
            .as_f64()
            .ok_or_else(|| format!("{path}: a value without a tolerance"))?;
        Want::Number { value, tolerance }
    } else if let Some(value) = entry.get("equals") {
        Want::Equals(value.clone())
    } else if let Some(value) = entry.get("contains") {
        Want::Contains(value.clone())
    } else {
        return Err(format!("{path}: no value, equals or contains"));
    };
    Ok(Check { path, want })
}

/// One entry of `itemErrors`.
fn item_error(entry: &Value) -> Result<ItemError, String> {
    Ok(ItemError {
        index: entry["index"].as_u64().ok_or("item error without index")? as usize,
        field: entry["field"]
            .as_str()
            .ok_or("item error without field")?
            .to_owned(),
        reason: entry["reason"]
            .as_str()
            .ok_or("item error without reason")?
            .to_owned(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const FILE: EmbeddedFile = EmbeddedFile {
        path: "tests/vectors/example.json",
        text: r#"{"vectors": [
            {"name": "a", "rpc": "oxbind.v1.DissociationService/SaturationFromTension",
             "request": {"po2": {"value": 40, "unit": "mm[Hg]"}},
             "expect": [{"path": "saturationFraction", "value": 0.749465, "tolerance": 1e-6}],
             "source": "derived from Severinghaus 1979 Eq. 1"},
            {"name": "b", "rpc": "oxbind.v1.DissociationService/SaturationFromTension",
             "request": {}, "expect": [{"path": "saturationFraction", "value": 0.5, "tolerance": 1e-6}]},
            {"name": "c", "rpc": "oxbind.v1.DissociationService/SaturationFromTension",
             "request": {}, "expect": [{"path": "saturationFraction", "value": 0.5}],
             "source": "somewhere"}
        ]}"#,
    };

    #[test]
    fn a_vector_is_a_case_only_with_a_source_and_a_tolerance() {
        let set = cases(&[FILE]);
        assert_eq!(set.cases.len(), 1);
        assert_eq!(set.cases[0].id, "example.json/a");
        assert_eq!(set.not_run.len(), 1);
        assert_eq!(set.not_run[0].location, "b");
        assert_eq!(set.problems.len(), 1);
        assert!(set.problems[0].reason.contains("without a tolerance"));
    }
}
