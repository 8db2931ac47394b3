//! The columns `oxbind batch` reads: one documented set of names (with the
//! flag spellings as aliases), matched case-insensitively; a unit declared
//! once in a header (`po2 (kPa)`, `cohb (%)`); the caller's own columns
//! carried through with `--carry`. Anything else stops the run before a
//! request is sent.

use oxbind_client::ucum;

/// What a column holds, which fixes how a cell is read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Kind {
    /// A gas tension; a bare number is mm[Hg].
    Pressure,
    /// A temperature; a bare number is Cel.
    Temperature,
    /// A concentration; a bare number is mmol/L.
    Concentration,
    /// A fraction (0 to 1); a bare number is the fraction, `%` per cent.
    Fraction,
    /// pH: a plain number.
    Ph,
    /// A haemoglobin concentration; a bare number is g/dL.
    Hemoglobin,
    /// A cell count; a bare number is 10⁹/L.
    CellCount,
    /// A word naming a value of the contract's enum (`arterial`); no unit.
    Word,
}

impl Kind {
    /// The unit a bare number is in.
    pub(crate) fn default_unit(self) -> &'static str {
        match self {
            Kind::Pressure => ucum::MM_HG,
            Kind::Temperature => ucum::CELSIUS,
            Kind::Concentration => ucum::MMOL_PER_L,
            Kind::Fraction => ucum::FRACTION,
            Kind::Ph | Kind::Word => "",
            Kind::Hemoglobin => ucum::G_PER_DL,
            Kind::CellCount => CELLS_PER_NL,
        }
    }

    /// The UCUM codes a header may declare (those the contract accepts for
    /// the field, case-sensitive; UCUM's `l` for the litre too).
    pub(crate) fn header_units(self) -> &'static [&'static str] {
        match self {
            Kind::Pressure => &[ucum::MM_HG, ucum::KPA],
            Kind::Temperature => &[ucum::CELSIUS, ucum::FAHRENHEIT],
            Kind::Concentration => &[ucum::MMOL_PER_L, "mmol/l"],
            Kind::Fraction => &[ucum::PERCENT, ucum::FRACTION],
            Kind::Ph | Kind::Word => &[],
            Kind::Hemoglobin => &[ucum::G_PER_DL, "g/L", "mmol/L", "g/dl", "g/l", "mmol/l"],
            Kind::CellCount => &[CELLS_PER_NL, "10*3/uL", "/nL"],
        }
    }
}

/// The UCUM code of 10⁹ cells per litre.
pub(crate) const CELLS_PER_NL: &str = "10*9/L";

/// A column the batch reads.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Field {
    /// `po2`: the tension, for saturations (BatchSaturationFromTension).
    Po2,
    /// `saturation`: the saturation, for tensions (BatchTensionFromSaturation).
    Saturation,
    /// `ph`.
    Ph,
    /// `pco2`.
    Pco2,
    /// `temperature`.
    Temperature,
    /// `dpg`.
    Dpg,
    /// `base_excess`.
    BaseExcess,
    /// `cohb`.
    Cohb,
    /// `methb`.
    Methb,
    /// `hbf`.
    Hbf,
}

/// One documented column: its field, name, aliases and kind. `F` names the
/// fields of the command that reads it (`oxbind batch`'s [`Field`] by
/// default).
#[derive(Debug, Clone, Copy)]
pub(crate) struct ColumnSpec<F = Field> {
    /// The field it sets.
    pub(crate) field: F,
    /// Its name (the contract's field name).
    pub(crate) name: &'static str,
    /// Other spellings accepted (the flag's).
    pub(crate) aliases: &'static [&'static str],
    /// How a cell is read.
    pub(crate) kind: Kind,
    /// The request field path it sets (below the item).
    pub(crate) path: &'static str,
}

/// Every column `oxbind batch` reads, in the order `--help` lists them.
pub(crate) const COLUMNS: [ColumnSpec; 10] = [
    ColumnSpec {
        field: Field::Po2,
        name: "po2",
        aliases: &[],
        kind: Kind::Pressure,
        path: "po2",
    },
    ColumnSpec {
        field: Field::Saturation,
        name: "saturation",
        aliases: &["saturation_fraction", "so2"],
        kind: Kind::Fraction,
        path: "saturation_fraction",
    },
    ColumnSpec {
        field: Field::Ph,
        name: "ph",
        aliases: &[],
        kind: Kind::Ph,
        path: "conditions.ph",
    },
    ColumnSpec {
        field: Field::Pco2,
        name: "pco2",
        aliases: &[],
        kind: Kind::Pressure,
        path: "conditions.pco2",
    },
    ColumnSpec {
        field: Field::Temperature,
        name: "temperature",
        aliases: &["temp"],
        kind: Kind::Temperature,
        path: "conditions.temperature",
    },
    ColumnSpec {
        field: Field::Dpg,
        name: "dpg",
        aliases: &[],
        kind: Kind::Concentration,
        path: "conditions.dpg",
    },
    ColumnSpec {
        field: Field::BaseExcess,
        name: "base_excess",
        aliases: &["base-excess"],
        kind: Kind::Concentration,
        path: "conditions.base_excess",
    },
    ColumnSpec {
        field: Field::Cohb,
        name: "cohb",
        aliases: &[],
        kind: Kind::Fraction,
        path: "conditions.cohb",
    },
    ColumnSpec {
        field: Field::Methb,
        name: "methb",
        aliases: &[],
        kind: Kind::Fraction,
        path: "conditions.methb",
    },
    ColumnSpec {
        field: Field::Hbf,
        name: "hbf",
        aliases: &[],
        kind: Kind::Fraction,
        path: "conditions.hbf",
    },
];

/// The name of the caller's row key, carried through without `--carry`.
pub(crate) const ID_COLUMN: &str = "id";

/// What one header cell is.
#[derive(Debug, Clone)]
pub(crate) enum Header<F = Field> {
    /// A documented column, with the unit its header declares.
    Read {
        spec: ColumnSpec<F>,
        unit: Option<String>,
        /// The header as written.
        text: String,
    },
    /// Copied to the output unchanged, never sent.
    Carried { text: String },
}

/// The header split into its name and the unit it declares:
/// `PO2 (kPa)` -> (`po2`, `kPa`). The name is compared lower-case; the
/// unit, a UCUM code, keeps its case.
fn split_header(text: &str) -> (String, Option<String>) {
    let trimmed = text.trim();
    if let Some(open) = trimmed.find('(') {
        if let Some(inner) = trimmed[open + 1..].strip_suffix(')') {
            return (
                trimmed[..open].trim().to_lowercase(),
                Some(inner.trim().to_owned()),
            );
        }
    }
    (trimmed.to_lowercase(), None)
}

/// The accepted column names and aliases, for messages.
pub(crate) fn accepted_names() -> String {
    accepted_names_in(&COLUMNS)
}

/// The names and aliases of `table`, for messages.
pub(crate) fn accepted_names_in<F>(table: &[ColumnSpec<F>]) -> String {
    table
        .iter()
        .map(|c| {
            if c.aliases.is_empty() {
                c.name.to_owned()
            } else {
                format!("{} (or {})", c.name, c.aliases.join(", "))
            }
        })
        .chain(std::iter::once(format!("{ID_COLUMN} (carried)")))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Read a header row: every cell a documented column, the id, or a column
/// named in `carry`; each documented column at most once; each carried
/// name present.
pub(crate) fn read_header(cells: &[&str], carry: &[String]) -> Result<Vec<Header>, String> {
    read_header_in(&COLUMNS, cells, carry)
}

/// [`read_header`] against the columns of `table`.
pub(crate) fn read_header_in<F: Copy + PartialEq>(
    table: &[ColumnSpec<F>],
    cells: &[&str],
    carry: &[String],
) -> Result<Vec<Header<F>>, String> {
    let carry: Vec<String> = carry.iter().map(|c| c.trim().to_lowercase()).collect();
    let mut headers = Vec::with_capacity(cells.len());
    for cell in cells {
        let text = cell.trim().to_owned();
        let (name, unit) = split_header(&text);
        if carry.contains(&text.to_lowercase()) || name == ID_COLUMN {
            headers.push(Header::Carried { text });
            continue;
        }
        let Some(spec) = table
            .iter()
            .find(|c| c.name == name || c.aliases.contains(&name.as_str()))
        else {
            return Err(format!(
                "unknown column `{text}`: the columns read are {}; carry your own columns through with --carry {}",
                accepted_names_in(table),
                text
            ));
        };
        if let Some(unit) = &unit {
            check_header_unit(&text, spec.kind, unit)?;
        }
        headers.push(Header::Read {
            spec: *spec,
            unit,
            text,
        });
    }
    for (i, h) in headers.iter().enumerate() {
        if let Header::Read { spec, text, .. } = h {
            if let Some(Header::Read { text: other, .. }) = headers[i + 1..]
                .iter()
                .find(|o| matches!(o, Header::Read { spec: s, .. } if s.field == spec.field))
            {
                return Err(format!(
                    "columns `{text}` and `{other}` both set {}; keep one",
                    spec.name
                ));
            }
        }
    }
    for wanted in &carry {
        let present = headers.iter().any(|h| match h {
            Header::Carried { text } => text.to_lowercase() == *wanted,
            Header::Read { .. } => false,
        });
        if !present {
            return Err(format!(
                "--carry names `{wanted}`, but the file has no such column"
            ));
        }
    }
    Ok(headers)
}

fn check_header_unit(text: &str, kind: Kind, unit: &str) -> Result<(), String> {
    let accepted = kind.header_units();
    if accepted.contains(&unit) {
        return Ok(());
    }
    if accepted.is_empty() {
        return Err(format!("column `{text}` takes no unit"));
    }
    Err(format!(
        "column `{text}` declares the unit `{unit}`, which is not one of its UCUM codes (case-sensitive): {}",
        accepted.join(", ")
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fields(cells: &[&str], carry: &[&str]) -> Result<Vec<String>, String> {
        let carry: Vec<String> = carry.iter().map(|c| (*c).to_owned()).collect();
        Ok(read_header(cells, &carry)?
            .into_iter()
            .map(|h| match h {
                Header::Read { spec, unit, .. } => {
                    format!(
                        "{}{}",
                        spec.name,
                        unit.map(|u| format!("[{u}]")).unwrap_or_default()
                    )
                }
                Header::Carried { text } => format!("carry {text}"),
            })
            .collect())
    }

    #[test]
    fn headers_match_names_and_aliases_in_any_case() {
        assert_eq!(
            fields(&["ID", "PO2 (kPa)", "pH", "Temp", "COHb (%)"], &[]).unwrap(),
            ["carry ID", "po2[kPa]", "ph", "temperature", "cohb[%]"]
        );
        assert_eq!(
            fields(&["time", "Bed", "po2"], &["time", "bed"]).unwrap(),
            ["carry time", "carry Bed", "po2"]
        );
    }

    #[test]
    fn unknown_duplicate_and_badly_declared_columns_are_refused() {
        let unknown = fields(&["po2", "temprature"], &[]).unwrap_err();
        assert!(unknown.contains("`temprature`"), "{unknown}");
        assert!(unknown.contains("temperature (or temp)"), "{unknown}");
        assert!(fields(&["temp", "temperature"], &[]).is_err());
        assert!(fields(&["po2 (mmHg)"], &[]).unwrap_err().contains("mm[Hg]"));
        assert!(fields(&["ph (1)"], &[]).is_err());
        assert!(fields(&["po2"], &["bed"]).unwrap_err().contains("bed"));
    }
}
