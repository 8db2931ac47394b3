//! The curl transcripts of `proto/API.md` section 8 (the Connect protocol),
//! sent exactly as written: each `curl` command is read from the document,
//! sent to a test server (on its own port rather than 50051), and the
//! answer checked against the one printed below it: the status line, every
//! header shown, and every field shown, numbers to the printed precision
//! (within half a unit of the last digit). Answers in the document are
//! shortened: a field, or a list element past those shown, may be left out.
//! A string written `<...>`, and `computeTime`, are placeholders.
//!
//! The expected values are outputs of the service itself, recorded when the
//! document was written (derived from the engine's equations; the
//! equations' own checks against published values live in the other tests).

use http::Method;
use oxbind_tests::{
    http::{percent_encode, request, send, Answer, Version},
    TestServer,
};
use serde_json::Value;

/// The heading of the section whose transcripts are checked.
const SECTION: &str = "## 8. Plain HTTP and JSON: the Connect protocol";

/// The document.
fn api_md() -> String {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../proto/API.md");
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("read {path}: {e}"))
}

/// The fenced code blocks of `text`, as (info string, contents).
fn code_blocks(text: &str) -> Vec<(String, String)> {
    let mut blocks = Vec::new();
    let mut lines = text.lines();
    while let Some(line) = lines.next() {
        if let Some(info) = line.strip_prefix("```") {
            let body: Vec<&str> = lines.by_ref().take_while(|l| *l != "```").collect();
            blocks.push((info.trim().to_owned(), body.join("\n")));
        }
    }
    blocks
}

/// A shell command line split into words: single quotes group, a backslash
/// at the end of a line continues it (all the transcripts use).
fn words(command: &str) -> Vec<String> {
    let joined = command.replace("\\\n", " ");
    let mut words = Vec::new();
    let mut word = String::new();
    let mut in_word = false;
    let mut chars = joined.chars();
    while let Some(c) = chars.next() {
        match c {
            '\'' => {
                in_word = true;
                word.extend(chars.by_ref().take_while(|c| *c != '\''));
            }
            c if c.is_whitespace() => {
                if in_word {
                    words.push(std::mem::take(&mut word));
                    in_word = false;
                }
            }
            c => {
                in_word = true;
                word.push(c);
            }
        }
    }
    if in_word {
        words.push(word);
    }
    words
}

/// What a curl command sends: method, path and query, headers, body. Only
/// the options the transcripts use are understood; anything else fails the
/// test, so the document cannot show a command this test does not send.
struct Curl {
    method: Method,
    target: String,
    headers: Vec<(String, String)>,
    body: String,
}

fn parse_curl(command: &str) -> Curl {
    let words = words(command);
    assert_eq!(words.first().map(String::as_str), Some("curl"), "{command}");
    let (mut get, mut data, mut headers, mut url) = (false, Vec::new(), Vec::new(), None);
    let mut rest = words[1..].iter();
    while let Some(word) = rest.next() {
        match word.as_str() {
            "-sS" | "-i" | "-s" | "-S" => {}
            "-G" => get = true,
            "-d" => data.push(rest.next().expect("-d takes data").clone()),
            "--data-urlencode" => {
                let pair = rest.next().expect("--data-urlencode takes data");
                let (name, content) = pair.split_once('=').expect("name=content");
                data.push(format!("{name}={}", percent_encode(content)));
            }
            "-H" => {
                let header = rest.next().expect("-H takes a header");
                let (name, value) = header.split_once(':').expect("name: value");
                headers.push((name.trim().to_owned(), value.trim().to_owned()));
            }
            word if word.starts_with("http://") => url = Some(word.to_owned()),
            other => panic!("the test does not know curl's {other}"),
        }
    }
    let url = url.expect("a URL");
    let target = url["http://".len()..]
        .find('/')
        .map(|at| url["http://".len() + at..].to_owned())
        .expect("a path");
    let data = data.join("&");
    if get {
        let separator = if target.contains('?') { '&' } else { '?' };
        return Curl {
            method: Method::GET,
            target: format!("{target}{separator}{data}"),
            headers,
            body: String::new(),
        };
    }
    // Without -H content-type, curl's -d sends a form.
    if !headers
        .iter()
        .any(|(n, _)| n.eq_ignore_ascii_case("content-type"))
    {
        headers.push((
            "content-type".to_owned(),
            "application/x-www-form-urlencoded".to_owned(),
        ));
    }
    Curl {
        method: if data.is_empty() {
            Method::GET
        } else {
            Method::POST
        },
        target,
        headers,
        body: data,
    }
}

/// The answer a transcript prints: status, headers, JSON body.
struct Printed {
    status: u16,
    headers: Vec<(String, String)>,
    body: Value,
}

fn parse_answer(text: &str) -> Printed {
    let (head, body) = text
        .split_once("\n\n")
        .expect("a blank line before the body");
    let mut lines = head.lines();
    let status_line = lines.next().expect("a status line");
    let status = status_line
        .split_whitespace()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| panic!("not a status line: {status_line}"));
    let headers = lines
        .map(|line| {
            let (name, value) = line.split_once(':').expect("name: value");
            (name.trim().to_owned(), value.trim().to_owned())
        })
        .collect();
    let body = serde_json::from_str(body).unwrap_or_else(|e| panic!("body is not JSON: {e}"));
    Printed {
        status,
        headers,
        body,
    }
}

/// Whether a printed string is a placeholder.
fn placeholder(text: &str) -> bool {
    text.starts_with('<') && text.ends_with('>')
}

/// Half a unit of the last digit of `printed` (its shortest decimal form).
fn half_unit(printed: f64) -> f64 {
    let text = format!("{printed}");
    let decimals = text.split_once('.').map_or(0, |(_, d)| d.len());
    0.5 * 10f64.powi(-(decimals as i32))
}

/// Check that `actual` has everything `printed` shows, at `path`.
fn check(path: &str, actual: Option<&Value>, printed: &Value) {
    let actual = actual.unwrap_or_else(|| panic!("{path} is absent from the answer"));
    match printed {
        Value::Object(fields) => {
            for (key, value) in fields {
                let at = format!("{path}.{key}");
                if key == "computeTime" {
                    assert!(actual.get(key).is_some_and(Value::is_string), "{at}");
                } else {
                    check(&at, actual.get(key), value);
                }
            }
        }
        Value::Array(elements) => {
            for (index, value) in elements.iter().enumerate() {
                check(&format!("{path}[{index}]"), actual.get(index), value);
            }
        }
        Value::String(text) if placeholder(text) => {
            assert!(actual.is_string(), "{path} is not a string: {actual}")
        }
        Value::Number(number) => {
            let (a, p) = (
                actual
                    .as_f64()
                    .unwrap_or_else(|| panic!("{path}: {actual}")),
                number.as_f64().unwrap(),
            );
            assert!((a - p).abs() <= half_unit(p), "{path} = {a}, printed {p}");
        }
        other => assert_eq!(actual, other, "{path}"),
    }
}

fn check_answer(command: &str, answer: &Answer, printed: &Printed) {
    assert_eq!(
        answer.status,
        printed.status,
        "{command}\n{}",
        String::from_utf8_lossy(&answer.body)
    );
    for (name, value) in &printed.headers {
        let actual = answer.header(name);
        if placeholder(value) {
            assert!(!actual.is_empty(), "{command}: no {name}");
        } else {
            assert_eq!(actual, value, "{command}: {name}");
        }
    }
    check("answer", Some(&answer.json()), &printed.body);
}

/// The Connect section of API.md: from its heading to the next section's.
fn connect_section(document: &str) -> &str {
    let start = document.find(SECTION).expect("the Connect section");
    let rest = &document[start + SECTION.len()..];
    let end = rest
        .find("\n## ")
        .map_or(document.len(), |i| start + SECTION.len() + i);
    &document[start..end]
}

#[tokio::test]
async fn every_curl_transcript_of_the_connect_section_holds() {
    let document = api_md();
    let blocks = code_blocks(connect_section(&document));
    let server = TestServer::start().await;
    let mut checked = 0;
    for pair in blocks.windows(2) {
        let [(info, command), (answer_info, printed)] = pair else {
            unreachable!()
        };
        if info != "sh" || !command.starts_with("curl") {
            continue;
        }
        assert_eq!(answer_info, "http", "{command}: no answer printed below it");
        let curl = parse_curl(command);
        let headers: Vec<(&str, &str)> = curl
            .headers
            .iter()
            .map(|(n, v)| (n.as_str(), v.as_str()))
            .collect();
        let answer = send(
            server.address(),
            Version::Http1,
            request(curl.method, &curl.target, &headers, curl.body),
        )
        .await;
        check_answer(command, &answer, &parse_answer(printed));
        checked += 1;
    }
    // A JSON POST, the GET form and a refusal.
    assert!(checked >= 3, "only {checked} transcripts found");
    server.stop().await;
}

#[test]
fn the_readme_curl_example_is_the_documents_first() {
    let readme = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../README.md"))
        .expect("README.md");
    let document = api_md();
    let first = code_blocks(connect_section(&document))
        .into_iter()
        .find(|(info, body)| info == "sh" && body.starts_with("curl"))
        .expect("a curl transcript")
        .1;
    let request = |text: &str| {
        let curl = parse_curl(text);
        (curl.method, curl.target, curl.headers, curl.body)
    };
    let in_readme = code_blocks(&readme)
        .into_iter()
        .find(|(info, body)| info == "sh" && body.starts_with("curl"))
        .expect("a curl example in the README")
        .1;
    assert_eq!(request(&in_readme), request(&first));
}
