//! Every field of every v1 request is reachable from the command line, and
//! the README's table that says how stays complete against the contract's
//! own descriptors (issue 18, finding 3): each field has a row, each row a
//! field, and each flag a row names is one that command's `--help` lists.

mod common;

use std::collections::{BTreeMap, BTreeSet};

use prost_reflect::{DescriptorPool, Kind, MessageDescriptor};

const README: &str = include_str!("../../README.md");

/// Messages documented once, in their own table, wherever they appear
/// (`InputUncertainty`, a figure for one input, in the UncertaintyRequest
/// table's `inputs` row: `--u` on every command, `oxbind check` included).
const SHARED: [&str; 4] = [
    "oxbind.v1.BloodConditions",
    "oxbind.v1.HillParameters",
    "oxbind.v1.UncertaintyRequest",
    "oxbind.v1.InputUncertainty",
];

fn pool() -> DescriptorPool {
    DescriptorPool::decode(oxbind_proto::FILE_DESCRIPTOR_SET).unwrap()
}

/// Every field path of `message` (`[]` for a repeated message), stopping at
/// Quantities and at the shared messages.
fn paths(message: &MessageDescriptor, prefix: &str, out: &mut Vec<String>) {
    for field in message.fields() {
        let path = format!("{prefix}{}", field.name());
        match field.kind() {
            Kind::Message(inner)
                if inner.full_name() != "oxbind.v1.Quantity"
                    && !SHARED.contains(&inner.full_name()) =>
            {
                let suffix = if field.is_list() { "[]." } else { "." };
                paths(&inner, &format!("{path}{suffix}"), out);
            }
            _ => out.push(path),
        }
    }
}

/// The rows of the README table whose header row starts with `header`.
fn table(header: &str) -> Vec<Vec<String>> {
    let start = README
        .find(header)
        .unwrap_or_else(|| panic!("README has no table headed `{header}`"));
    README[start..]
        .lines()
        .skip(2)
        .take_while(|l| l.starts_with('|'))
        .map(|l| {
            l.trim_matches('|')
                .split(" | ")
                .map(|c| c.trim().to_owned())
                .collect()
        })
        .collect()
}

fn unquote(cell: &str) -> String {
    cell.trim_matches('`').to_owned()
}

/// The `oxbind` subcommand a cell names (`` `oxbind content --pvo2` ``).
fn command_of(cell: &str) -> String {
    let rest = cell
        .strip_prefix("`oxbind ")
        .unwrap_or_else(|| panic!("`{cell}` does not start with an oxbind command"));
    rest.split([' ', '`']).next().unwrap().to_owned()
}

/// The flags a cell names.
fn flags_in(cell: &str) -> Vec<String> {
    cell.split(['`', ' ', ',', '(', ')'])
        .filter(|w| w.starts_with("--"))
        .map(str::to_owned)
        .collect()
}

fn help_of(command: &str, cache: &mut BTreeMap<String, String>) -> String {
    cache
        .entry(command.to_owned())
        .or_insert_with(|| common::stdout_of(common::oxbind().args([command, "--help"])))
        .clone()
}

#[test]
fn every_request_field_has_a_row_and_every_row_a_field() {
    let pool = pool();
    let mut wanted = BTreeSet::new();
    for service in pool.services().filter(|s| s.package_name() == "oxbind.v1") {
        for method in service.methods() {
            let mut fields = Vec::new();
            paths(&method.input(), "", &mut fields);
            for field in fields {
                wanted.insert((method.name().to_owned(), field));
            }
        }
    }
    let rows = table("| RPC | request field |");
    let documented: BTreeSet<(String, String)> = rows
        .iter()
        .map(|r| (unquote(&r[0]), unquote(&r[1])))
        .collect();
    let missing: Vec<_> = wanted.difference(&documented).collect();
    let stale: Vec<_> = documented.difference(&wanted).collect();
    assert!(missing.is_empty(), "fields without a row: {missing:?}");
    assert!(stale.is_empty(), "rows without a field: {stale:?}");
    assert_eq!(rows.len(), documented.len(), "one row per field");

    let mut helps = BTreeMap::new();
    for row in &rows {
        let command = command_of(&row[2]);
        let help = help_of(&command, &mut helps);
        for flag in flags_in(&row[2]) {
            assert!(
                help.contains(&flag),
                "{row:?}: `oxbind {command}` has no {flag}"
            );
        }
    }
}

#[test]
fn the_shared_messages_have_their_own_complete_tables() {
    let pool = pool();
    let mut helps = BTreeMap::new();
    let conditions = pool.get_message_by_name(SHARED[0]).unwrap();
    let rows = table("| BloodConditions field |");
    let documented: Vec<String> = rows.iter().map(|r| unquote(&r[0])).collect();
    let fields: Vec<String> = conditions.fields().map(|f| f.name().to_owned()).collect();
    assert_eq!(documented, fields);
    let batch = help_of("batch", &mut helps);
    for row in &rows {
        let saturation = help_of("saturation", &mut helps);
        let content = help_of("content", &mut helps);
        for flag in flags_in(&row[1]) {
            assert!(saturation.contains(&flag), "{row:?}: {flag}");
        }
        for flag in flags_in(&row[2]) {
            assert!(content.contains(&flag), "{row:?}: {flag}");
        }
        let column = unquote(&row[3]);
        assert!(batch.contains(&column), "{row:?}: column {column}");
    }
    let hill = pool.get_message_by_name(SHARED[1]).unwrap();
    let rows = table("| HillParameters field |");
    let documented: Vec<String> = rows.iter().map(|r| unquote(&r[0])).collect();
    let fields: Vec<String> = hill.fields().map(|f| f.name().to_owned()).collect();
    assert_eq!(documented, fields);
    let saturation = help_of("saturation", &mut helps);
    for row in &rows {
        for flag in flags_in(&row[1]) {
            assert!(saturation.contains(&flag), "{row:?}: {flag}");
        }
    }
    let uncertainty = pool.get_message_by_name(SHARED[2]).unwrap();
    let rows = table("| UncertaintyRequest field |");
    let documented: Vec<String> = rows.iter().map(|r| unquote(&r[0])).collect();
    let fields: Vec<String> = uncertainty.fields().map(|f| f.name().to_owned()).collect();
    assert_eq!(documented, fields);
    for command in [
        "saturation",
        "tension",
        "shift",
        "content",
        "gas-exchange",
        "curve",
    ] {
        let help = help_of(command, &mut helps);
        for row in &rows {
            for flag in flags_in(&row[1]) {
                assert!(help.contains(&flag), "{command} {row:?}: {flag}");
            }
        }
    }
}

#[test]
fn shell_examples_quote_every_bracketed_ucum_code() {
    // `48mm[Hg]` unquoted is a glob pattern: a file `48mmH` in the working
    // directory changes the argument, and zsh refuses it outright.
    for (name, text) in [
        ("README.md", README),
        ("proto/API.md", include_str!("../../proto/API.md")),
    ] {
        let mut in_shell = false;
        for line in text.lines() {
            if line.starts_with("```") {
                in_shell = line == "```sh" || line == "```bash" || line == "```zsh";
                continue;
            }
            if !in_shell {
                continue;
            }
            let mut quote = None;
            for c in line.chars() {
                match (quote, c) {
                    (None, '\'' | '"') => quote = Some(c),
                    (Some(q), c) if c == q => quote = None,
                    (None, '[' | ']' | '*' | '?') => {
                        panic!("{name}: unquoted pattern character in `{line}`")
                    }
                    _ => {}
                }
            }
        }
    }
}
