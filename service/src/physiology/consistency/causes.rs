//! The published causes each check names for a discordant finding, with
//! their sources: the table `causes.csv` beside this file, embedded at build
//! time (its header comment explains the columns).

use std::sync::OnceLock;

use super::finding::Check;

/// The embedded table.
const CAUSES_TABLE: &str = include_str!("causes.csv");

/// One cause to consider, with its source.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Cause {
    /// The check it belongs to.
    pub check: Check,
    /// The cause, in plain English.
    pub cause: String,
    /// Its source, as a citation.
    pub source: String,
    /// How far it was verified: `verified`, `secondary`, `memory` or
    /// `common practice`.
    pub verification: String,
}

/// The words the table may use for how far a cause was verified.
pub const VERIFICATIONS: [&str; 4] = ["verified", "secondary", "memory", "common practice"];

static CAUSES: OnceLock<Result<Vec<Cause>, String>> = OnceLock::new();

/// Every cause, in table order.
///
/// # Errors
///
/// A description of the first malformed record (a build defect; the unit
/// tests read the table).
pub fn all() -> Result<&'static [Cause], String> {
    CAUSES
        .get_or_init(|| parse(CAUSES_TABLE))
        .as_ref()
        .map(Vec::as_slice)
        .map_err(Clone::clone)
}

/// The causes of `check`, in table order (empty if the table is malformed,
/// which the tests rule out).
pub fn of(check: Check) -> Vec<&'static Cause> {
    all()
        .map(|causes| causes.iter().filter(|c| c.check == check).collect())
        .unwrap_or_default()
}

fn parse(text: &str) -> Result<Vec<Cause>, String> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .has_headers(true)
        .from_reader(text.as_bytes());
    let headers = reader.headers().map_err(|e| e.to_string())?.clone();
    if headers.iter().collect::<Vec<_>>() != ["check", "cause", "source", "verification"] {
        return Err("the header must be check,cause,source,verification".to_owned());
    }
    let mut out = Vec::new();
    for (index, record) in reader.records().enumerate() {
        let n = index + 1;
        let record = record.map_err(|e| format!("record {n}: {e}"))?;
        let field = |i: usize| record.get(i).unwrap_or("").trim().to_owned();
        let check = Check::from_code(&field(0))
            .ok_or_else(|| format!("record {n}: unknown check {}", field(0)))?;
        let cause = Cause {
            check,
            cause: field(1),
            source: field(2),
            verification: field(3),
        };
        if cause.cause.is_empty() || cause.source.is_empty() {
            return Err(format!("record {n}: a cause and its source are required"));
        }
        if !VERIFICATIONS.contains(&cause.verification.as_str()) {
            return Err(format!(
                "record {n}: unknown verification {}",
                cause.verification
            ));
        }
        out.push(cause);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_check_has_causes_and_every_cause_a_source() {
        let causes = all().expect("the embedded table parses");
        for check in Check::ALL {
            assert!(!of(check).is_empty(), "{}", check.code());
        }
        for c in causes {
            assert!(!c.source.is_empty(), "{}", c.cause);
        }
    }

    #[test]
    fn malformed_tables_are_refused() {
        let header = "check,cause,source,verification\n";
        assert!(parse(&format!("{header}no_such_check,c,s,verified\n")).is_err());
        assert!(parse(&format!("{header}acid_base,c,s,guessed\n")).is_err());
        assert!(parse(&format!("{header}acid_base,,s,verified\n")).is_err());
        assert!(parse("a,b\n").is_err());
    }
}
