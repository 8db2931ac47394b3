//! Built-in uncertainty profiles: published figures a caller may name instead
//! of stating an uncertainty, each with its source and how far it was
//! verified.
//!
//! The table is `profiles.csv` beside this file, embedded at build time; its
//! header comment explains the columns. A profile belongs to a set (for
//! example `clia-2024` holds pO2, pCO2, pH and haemoglobin), so that a caller
//! can name one set for every input it covers.
//!
//! These are fallbacks. A laboratory's own imprecision (internal quality
//! control) and a device's own stated accuracy describe its results better;
//! the engine warns whenever a built-in profile was used.

use super::quantity::InputQuantity;
use super::statement::{Amount, BoundShape, Statement};
use std::fmt;
use std::sync::OnceLock;

/// The embedded profile table.
const PROFILE_TABLE: &str = include_str!("profiles.csv");

/// How far a profile's figure was checked at its source.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Verification {
    /// The figure was read at the source named.
    Verified,
    /// The figure was read in a public page quoting the source; the source
    /// itself was not read.
    SecondarySource,
    /// The figure was not found in a readable copy of the source; treat it as
    /// from memory until checked.
    Unverified,
}

impl Verification {
    /// The table's word for it.
    pub const fn name(self) -> &'static str {
        match self {
            Verification::Verified => "verified",
            Verification::SecondarySource => "secondary",
            Verification::Unverified => "unverified",
        }
    }
}

/// One built-in profile: a published figure for one input.
#[derive(Debug, Clone, PartialEq)]
pub struct Profile {
    /// Stable id, e.g. `clia-2024-po2`.
    pub id: String,
    /// The set it belongs to, e.g. `clia-2024`.
    pub set: String,
    /// The input it is a figure for.
    pub input: InputQuantity,
    /// The figure.
    pub statement: Statement,
    /// What the figure is, in words.
    pub what: String,
    /// How the figure is turned into a standard uncertainty, and why.
    pub conversion: String,
    /// The full citation.
    pub source: String,
    /// How far the figure was verified.
    pub verification: Verification,
    /// Where it was verified, or why it could not be.
    pub verification_note: String,
}

/// The embedded table could not be read (a build defect, caught by the tests).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ProfileTableError {
    /// 1-based record number in the table (after the header), 0 if unknown.
    pub record: usize,
    /// What is wrong.
    pub reason: String,
}

impl fmt::Display for ProfileTableError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "built-in uncertainty profile table, record {}: {}",
            self.record, self.reason
        )
    }
}

impl std::error::Error for ProfileTableError {}

static PROFILES: OnceLock<Result<Vec<Profile>, ProfileTableError>> = OnceLock::new();

/// Every built-in profile, in table order.
///
/// # Errors
///
/// [`ProfileTableError`] if the embedded table is malformed (a build defect;
/// a unit test reads the table).
pub fn profiles() -> Result<&'static [Profile], ProfileTableError> {
    PROFILES
        .get_or_init(|| parse_table(PROFILE_TABLE))
        .as_ref()
        .map(Vec::as_slice)
        .map_err(Clone::clone)
}

/// The profile with this id.
///
/// # Errors
///
/// As [`profiles`].
pub fn profile(id: &str) -> Result<Option<&'static Profile>, ProfileTableError> {
    Ok(profiles()?.iter().find(|p| p.id == id))
}

/// The profile of `set` for `input`, if the set covers that input.
///
/// # Errors
///
/// As [`profiles`].
pub fn profile_in_set(
    set: &str,
    input: InputQuantity,
) -> Result<Option<&'static Profile>, ProfileTableError> {
    Ok(profiles()?
        .iter()
        .find(|p| p.set == set && p.input == input))
}

/// Every set name, in table order, without repeats.
///
/// # Errors
///
/// As [`profiles`].
pub fn profile_sets() -> Result<Vec<&'static str>, ProfileTableError> {
    let mut sets: Vec<&'static str> = Vec::new();
    for p in profiles()? {
        if !sets.contains(&p.set.as_str()) {
            sets.push(p.set.as_str());
        }
    }
    Ok(sets)
}

fn parse_table(text: &str) -> Result<Vec<Profile>, ProfileTableError> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .has_headers(true)
        .from_reader(text.as_bytes());
    let headers = reader
        .headers()
        .map_err(|e| ProfileTableError {
            record: 0,
            reason: e.to_string(),
        })?
        .clone();
    let column = |name: &str| -> Result<usize, ProfileTableError> {
        headers
            .iter()
            .position(|h| h == name)
            .ok_or_else(|| ProfileTableError {
                record: 0,
                reason: format!("missing column {name}"),
            })
    };
    let [id, set, input, statement, absolute, relative, shape, parameter, what, conversion, source, verification, note] =
        [
            "id",
            "set",
            "input",
            "statement",
            "absolute",
            "relative",
            "shape",
            "shape_parameter",
            "what",
            "conversion",
            "source",
            "verification",
            "verification_note",
        ]
        .map(column);
    let (id, set, input, statement, absolute, relative, shape, parameter) = (
        id?, set?, input?, statement?, absolute?, relative?, shape?, parameter?,
    );
    let (what, conversion, source, verification, note) =
        (what?, conversion?, source?, verification?, note?);
    let mut out: Vec<Profile> = Vec::new();
    for (index, record) in reader.records().enumerate() {
        let n = index + 1;
        let fail = |reason: String| ProfileTableError { record: n, reason };
        let record = record.map_err(|e| fail(e.to_string()))?;
        let field = |i: usize| record.get(i).unwrap_or("").trim();
        let number = |i: usize, name: &str| -> Result<f64, ProfileTableError> {
            field(i)
                .parse::<f64>()
                .map_err(|_| fail(format!("{name} is not a number")))
        };
        let quantity = InputQuantity::from_name(field(input))
            .ok_or_else(|| fail(format!("unknown input {}", field(input))))?;
        let amount =
            Amount::greater_of(number(absolute, "absolute")?, number(relative, "relative")?);
        let parsed_statement = match (field(statement), field(shape)) {
            ("standard", "none") => Statement::StandardUncertainty(amount),
            ("bound", shape_name) => Statement::Bound {
                half_width: amount,
                shape: match shape_name {
                    "normal" => BoundShape::Normal {
                        coverage_probability: number(parameter, "shape_parameter")?,
                    },
                    "coverage_factor" => BoundShape::CoverageFactor {
                        k: number(parameter, "shape_parameter")?,
                    },
                    "rectangular" => BoundShape::Rectangular,
                    "triangular" => BoundShape::Triangular,
                    "trapezoidal" => BoundShape::Trapezoidal {
                        beta: number(parameter, "shape_parameter")?,
                    },
                    other => return Err(fail(format!("unknown shape {other}"))),
                },
            },
            (kind, shape_name) => {
                return Err(fail(format!(
                    "statement {kind} with shape {shape_name} is not a known combination"
                )))
            }
        };
        parsed_statement
            .check(quantity)
            .map_err(|e| fail(e.reason.to_owned()))?;
        let verification = match field(verification) {
            "verified" => Verification::Verified,
            "secondary" => Verification::SecondarySource,
            "unverified" => Verification::Unverified,
            other => return Err(fail(format!("unknown verification {other}"))),
        };
        let profile = Profile {
            id: field(id).to_owned(),
            set: field(set).to_owned(),
            input: quantity,
            statement: parsed_statement,
            what: field(what).to_owned(),
            conversion: field(conversion).to_owned(),
            source: field(source).to_owned(),
            verification,
            verification_note: field(note).to_owned(),
        };
        for (value, name) in [
            (&profile.id, "id"),
            (&profile.set, "set"),
            (&profile.what, "what"),
            (&profile.conversion, "conversion"),
            (&profile.source, "source"),
            (&profile.verification_note, "verification_note"),
        ] {
            if value.is_empty() {
                return Err(fail(format!("{name} is empty")));
            }
        }
        if out.iter().any(|p| p.id == profile.id) {
            return Err(fail(format!("duplicate id {}", profile.id)));
        }
        if out
            .iter()
            .any(|p| p.set == profile.set && p.input == profile.input)
        {
            return Err(fail(format!(
                "set {} has two profiles for {}",
                profile.set,
                profile.input.name()
            )));
        }
        out.push(profile);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physiology::uncertainty::statement::Conversion;

    #[test]
    fn the_embedded_table_parses_and_every_row_names_a_source() {
        let all = profiles().expect("embedded profile table");
        assert!(all.len() >= 9);
        for p in all {
            assert!(
                !p.source.is_empty() && !p.verification_note.is_empty(),
                "{}",
                p.id
            );
        }
    }

    #[test]
    fn clia_po2_is_the_greater_of_15_mmhg_and_15_percent_read_as_a_95_percent_bound() {
        let p = profile("clia-2024-po2").unwrap().unwrap();
        assert_eq!(p.input, InputQuantity::Po2);
        assert_eq!(p.verification, Verification::Unverified);
        let at_80 = p.statement.resolve(p.input, 80.0).unwrap();
        // a = max(15, 0.15 * 80) = 15 mmHg; u = 15 / 1.959964.
        assert!((at_80.standard_uncertainty - 15.0 / 1.959_963_984_540_054).abs() < 1e-9);
        let at_200 = p.statement.resolve(p.input, 200.0).unwrap();
        assert!((at_200.standard_uncertainty - 30.0 / 1.959_963_984_540_054).abs() < 1e-9);
        assert!(matches!(at_200.conversion, Conversion::Divided { .. }));
    }

    #[test]
    fn pulse_oximeter_arms_is_used_as_the_standard_uncertainty() {
        let p = profile_in_set("pulse-oximeter-fda-2013-transmittance", InputQuantity::Spo2)
            .unwrap()
            .unwrap();
        let r = p.statement.resolve(p.input, 0.94).unwrap();
        assert_eq!(r.standard_uncertainty, 0.03);
        assert_eq!(r.conversion, Conversion::AsGiven);
    }

    #[test]
    fn sets_are_listed_once() {
        let sets = profile_sets().unwrap();
        assert!(sets.contains(&"clia-2024"));
        let mut unique = sets.clone();
        unique.dedup();
        assert_eq!(unique.len(), sets.len());
    }

    #[test]
    fn malformed_tables_are_refused_with_the_record_number() {
        let header = "id,set,input,statement,absolute,relative,shape,shape_parameter,what,conversion,source,verification,verification_note\n";
        let bad_input = format!("{header}a,s,oxygen,standard,1,0,none,,w,c,src,verified,n\n");
        assert_eq!(parse_table(&bad_input).unwrap_err().record, 1);
        let negative = format!("{header}a,s,po2,standard,-1,0,none,,w,c,src,verified,n\n");
        assert!(parse_table(&negative).is_err());
        let duplicate = format!(
            "{header}a,s,po2,standard,1,0,none,,w,c,src,verified,n\na,t,po2,standard,1,0,none,,w,c,src,verified,n\n"
        );
        assert_eq!(parse_table(&duplicate).unwrap_err().record, 2);
    }
}
