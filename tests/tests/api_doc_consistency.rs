//! The worked example of `proto/API.md` section 7.13 (CheckBloodGas), sent
//! exactly as documented: the request is read from the document's first
//! JSON block of the section, sent through the client crate, and the answer
//! (in the protobuf JSON mapping) is checked against every field the
//! document's response block shows: numbers to their printed precision
//! (within half a unit of the last digit), strings exactly or, where the
//! document cuts them with `…`, piece by piece in order; a key `…` and a
//! list element `…` stand for what the document leaves out.
//!
//! The scenario (Larchmere Valley Infirmary, case LV-4130) is fictional. The
//! expected values are outputs of the service itself, recorded when the
//! document was written; the checks' own thresholds are tested against their
//! sources in `service/tests/physiology_consistency.rs`.

use oxbind_client::{v1::CheckBloodGasRequest, OxbindClient};
use oxbind_tests::TestServer;
use serde_json::Value;

/// The heading of the section whose example is checked.
const SECTION: &str = "### 7.13 CheckBloodGas";

/// The document's text between `SECTION` and the next section.
fn section() -> String {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../proto/API.md");
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("read {path}: {e}"));
    let start = text
        .find(SECTION)
        .expect("API.md has the CheckBloodGas section");
    let rest = &text[start + SECTION.len()..];
    let end = rest.find("\n### ").unwrap_or(rest.len());
    rest[..end].to_owned()
}

/// The contents of the section's ```json blocks, in order.
fn json_blocks(text: &str) -> Vec<Value> {
    let mut blocks = Vec::new();
    let mut lines = text.lines();
    while let Some(line) = lines.next() {
        if line.trim() == "```json" {
            let body: Vec<&str> = lines.by_ref().take_while(|l| l.trim() != "```").collect();
            let body = body.join("\n");
            blocks.push(
                serde_json::from_str(&body)
                    .unwrap_or_else(|e| panic!("a JSON block of the section does not parse: {e}")),
            );
        }
    }
    blocks
}

/// The tolerance of a number as the document prints it: half a unit of its
/// last decimal, or exact without one.
fn tolerance(printed: &Value) -> f64 {
    let text = printed.to_string();
    match text.split_once('.') {
        Some((_, decimals)) => 0.5 * 10f64.powi(-(decimals.len() as i32)) * (1.0 + 1e-9),
        None => 0.0,
    }
}

/// Whether every piece of `shown` (cut with `…`) appears in `actual`, in
/// order, the first at the start and the last at the end unless a cut is
/// there.
fn pieces_match(actual: &str, shown: &str) -> bool {
    let pieces: Vec<&str> = shown.split('…').collect();
    if pieces.len() == 1 {
        return actual == shown;
    }
    let mut rest = actual;
    for (i, piece) in pieces.iter().enumerate() {
        if piece.is_empty() {
            continue;
        }
        let Some(at) = rest.find(piece) else {
            return false;
        };
        if i == 0 && at != 0 {
            return false;
        }
        rest = &rest[at + piece.len()..];
    }
    pieces
        .last()
        .is_none_or(|last| last.is_empty() || rest.is_empty())
}

/// Check that `actual` holds everything `shown` shows; `path` names the
/// place for a failure.
fn check(actual: &Value, shown: &Value, path: &str) {
    match (actual, shown) {
        (Value::Object(a), Value::Object(s)) => {
            for (key, value) in s {
                if key == "…" {
                    continue;
                }
                let got = a
                    .get(key)
                    .unwrap_or_else(|| panic!("{path}.{key} is absent from the answer"));
                check(got, value, &format!("{path}.{key}"));
            }
        }
        (Value::Array(a), Value::Array(s)) => {
            let cut = s.iter().any(|v| v.as_str() == Some("…"));
            let shown: Vec<&Value> = s.iter().filter(|v| v.as_str() != Some("…")).collect();
            if !cut {
                assert_eq!(a.len(), shown.len(), "{path}: list length");
            }
            // In order; with a cut, each shown element matches a later element.
            let mut next = 0;
            for (i, want) in shown.iter().enumerate() {
                if cut {
                    let found = (next..a.len())
                        .find(|&j| std::panic::catch_unwind(|| check(&a[j], want, path)).is_ok());
                    let j = found.unwrap_or_else(|| panic!("{path}: no element matches {want}"));
                    next = j + 1;
                } else {
                    check(&a[i], want, &format!("{path}[{i}]"));
                }
            }
        }
        (Value::Number(a), Value::Number(s)) => {
            let (a, want) = (a.as_f64().unwrap(), s.as_f64().unwrap());
            assert!(
                (a - want).abs() <= tolerance(shown),
                "{path}: the answer has {a}, the document prints {shown}"
            );
        }
        (Value::String(a), Value::String(s)) => {
            assert!(
                pieces_match(a, s),
                "{path}: the answer has {a:?}, the document {s:?}"
            );
        }
        (a, s) => assert_eq!(a, s, "{path}"),
    }
}

#[tokio::test]
async fn the_check_blood_gas_example_is_true() {
    let blocks = json_blocks(&section());
    assert!(blocks.len() >= 2, "a request and a response block");
    let request: CheckBloodGasRequest =
        serde_json::from_value(blocks[0].clone()).expect("the request is a CheckBloodGasRequest");
    let server = TestServer::start().await;
    let client = OxbindClient::connect(server.uri()).await.unwrap();
    let response = client.check_blood_gas(request).await.expect("checked");
    let answer = serde_json::to_value(&response).unwrap();
    check(&answer, &blocks[1], "response");
    server.stop().await;
}

#[test]
fn the_comparison_catches_a_wrong_number_and_a_wrong_cut() {
    let answer: Value =
        serde_json::json!({"a": [{"x": 0.014855307}, {"x": 2}], "s": "one two three"});
    check(
        &answer,
        &serde_json::json!({"a": [{"x": 0.014855}, "…"], "s": "one…three"}),
        "r",
    );
    let wrong = std::panic::catch_unwind(|| {
        check(
            &answer,
            &serde_json::json!({"a": [{"x": 0.01487}, "…"]}),
            "r",
        )
    });
    assert!(wrong.is_err());
    assert!(!pieces_match("one two three", "two…three"));
    assert!(!pieces_match("one two three", "one…two"));
}
