//! What the command writes: human-readable tables in plain words and
//! protobuf JSON on standard output. A closed standard output (`| head`)
//! ends the command quietly instead of panicking.

use std::io::Write;

use oxbind_client::v1::{
    InputUsed, Provenance, Quantity, ShiftFactor, Warning, WarningCode, WarningSeverity,
};

use crate::{failure::Failure, fields::FieldNames};

/// The failure for an error writing to standard output: a closed pipe ends
/// the command quietly, anything else is reported.
pub(crate) fn stdout_error(error: std::io::Error) -> Failure {
    if error.kind() == std::io::ErrorKind::BrokenPipe {
        Failure::ClosedOutput
    } else {
        Failure::Other(format!("standard output: {error}"))
    }
}

/// Write `text` and a newline to standard output.
pub(crate) fn line(text: impl std::fmt::Display) -> Result<(), Failure> {
    writeln!(std::io::stdout().lock(), "{text}").map_err(stdout_error)
}

/// Write `text` and a newline to standard error; a closed standard error
/// is ignored (there is nowhere left to say anything).
pub(crate) fn note(text: impl std::fmt::Display) {
    let _ = writeln!(std::io::stderr().lock(), "{text}");
}

/// A two-column table of labelled values.
#[derive(Debug, Default)]
pub(crate) struct Table {
    rows: Vec<(String, String)>,
    /// The Hill preset the user chose, for the Hill parameters row.
    hill_preset: Option<&'static str>,
}

impl Table {
    /// An empty table.
    pub(crate) fn new() -> Self {
        Self::default()
    }

    /// The Hill preset the user chose (`--hill-preset`), named in the Hill
    /// parameters row.
    pub(crate) fn hill_preset(&mut self, preset: Option<&'static str>) -> &mut Self {
        self.hill_preset = preset;
        self
    }

    /// Add a row.
    pub(crate) fn row(&mut self, label: impl Into<String>, value: impl Into<String>) -> &mut Self {
        self.rows.push((label.into(), value.into()));
        self
    }

    /// Add a quantity row, if the quantity is present.
    pub(crate) fn quantity(&mut self, label: &str, q: Option<&Quantity>) -> &mut Self {
        if let Some(q) = q {
            self.row(label, quantity(q));
        }
        self
    }

    /// Add a plain-number row, if present.
    pub(crate) fn number(&mut self, label: &str, value: Option<f64>, decimals: usize) -> &mut Self {
        if let Some(v) = value {
            self.row(label, format!("{v:.decimals$}"));
        }
        self
    }

    /// Add the provenance rows and one row per warning, naming fields as the
    /// user wrote them.
    pub(crate) fn provenance(
        &mut self,
        provenance: Option<&Provenance>,
        warnings: &[Warning],
        names: &FieldNames,
    ) -> &mut Self {
        if let Some(p) = provenance {
            if !p.model_id.is_empty() {
                self.row("model", format!("{} {}", p.model_id, p.model_version));
            }
            if p.model_id == "hill" {
                if let Some(hill) = hill_parameters(&p.inputs_used, self.hill_preset) {
                    self.row("Hill parameters", hill);
                }
            }
            self.row(
                "inputs within validated range",
                if p.within_validated_range {
                    "yes"
                } else {
                    "no"
                },
            );
        }
        for w in warnings {
            self.row(
                format!("warning ({})", severity_name(w.severity)),
                warning_text(w, names),
            );
        }
        self
    }

    /// Print the table, labels padded to one width.
    pub(crate) fn print(&self) -> Result<(), Failure> {
        let width = self
            .rows
            .iter()
            .map(|(l, _)| l.chars().count())
            .max()
            .unwrap_or(0);
        let mut out = std::io::stdout().lock();
        for (label, value) in &self.rows {
            writeln!(out, "{label:<width$}  {value}").map_err(stdout_error)?;
        }
        Ok(())
    }
}

/// The Hill parameters as used, from the inputs the server recorded, e.g.
/// `P50 19.5 mm[Hg], n 2.7 (fetal preset)`.
fn hill_parameters(inputs: &[InputUsed], preset: Option<&str>) -> Option<String> {
    let find = |name: &str| inputs.iter().find(|i| i.name == name);
    let p50 = find("hill.p50")?;
    let n = find("hill.n")?;
    let origin = match (p50.defaulted || n.defaulted, preset) {
        (false, _) => String::new(),
        (true, Some(preset)) => format!(" ({preset} preset)"),
        (true, None) => " (adult preset, the default)".to_owned(),
    };
    Some(format!(
        "P50 {}, n {}{origin}",
        p50.value.as_ref().map(quantity).unwrap_or_default(),
        n.value
            .as_ref()
            .map(|q| format!("{}", q.value))
            .unwrap_or_default(),
    ))
}

/// A unit as people read it: `°C` for `Cel`, `°F` for `[degF]`; other UCUM
/// codes as they are (`mm[Hg]` is what users type).
pub(crate) fn unit_text(unit: &str) -> &str {
    match unit {
        "Cel" => "°C",
        "[degF]" => "°F",
        other => other,
    }
}

/// `value unit`, with at least three significant figures.
pub(crate) fn quantity(q: &Quantity) -> String {
    let decimals = match q.unit.as_str() {
        "1" => 4,
        "[pH]" => 3,
        "kPa" | "mmol/L" | "mL/dL" | "g/dL" | "L/min" => 2,
        _ => 1,
    };
    let decimals = decimals.max(significant_decimals(q.value, 3));
    match q.unit.as_str() {
        "1" => format!("{:.decimals$}", q.value),
        "%" => format!("{:.decimals$} %", q.value),
        unit => format!("{:.decimals$} {}", q.value, unit_text(unit)),
    }
}

/// Decimals needed to show `figures` significant figures of `value` (at
/// most 6).
fn significant_decimals(value: f64, figures: i32) -> usize {
    if value == 0.0 || !value.is_finite() {
        return 0;
    }
    let magnitude = value.abs().log10().floor() as i32;
    (figures - 1 - magnitude).clamp(0, 6) as usize
}

/// A quantity as given by the user, in plain words (`33.2 °C`, `24 %`;
/// a fraction as per cent).
pub(crate) fn given(q: &Quantity) -> String {
    match q.unit.as_str() {
        "1" => format!("{} %", trim(q.value * 100.0)),
        "%" => format!("{} %", trim(q.value)),
        unit => format!("{} {}", trim(q.value), unit_text(unit)),
    }
}

/// A number without trailing zeros (at most 6 decimals).
pub(crate) fn trim(value: f64) -> String {
    let text = format!("{value:.6}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" {
        "0".to_owned()
    } else {
        text.to_owned()
    }
}

/// A saturation fraction shown with its percentage.
pub(crate) fn saturation(fraction: f64) -> String {
    format!("{fraction:.4} ({:.1} %)", fraction * 100.0)
}

/// `informational` or `caution` (an unset severity, from an older server,
/// counts as a caution).
pub(crate) fn severity_name(raw: i32) -> &'static str {
    match WarningSeverity::try_from(raw) {
        Ok(WarningSeverity::Informational) => "informational",
        _ => "caution",
    }
}

/// The warning's code name (`WARNING_CODE_...`).
pub(crate) fn code_name(w: &Warning) -> String {
    WarningCode::try_from(w.code)
        .map(|c| c.as_str_name().to_owned())
        .unwrap_or_else(|_| w.code.to_string())
}

/// `name: message`, the field named as the user wrote it, and the
/// message's units in plain words (`°C`).
pub(crate) fn warning_text(w: &Warning, names: &FieldNames) -> String {
    let message = plain_units(&crate::fields::model_flags(&w.message));
    if w.field.is_empty() {
        return message;
    }
    let name = names.name(&w.field).unwrap_or_else(|| w.field.clone());
    format!("{name}: {message}")
}

/// A server's text with its temperature units in plain words (`°C`, `°F`).
pub(crate) fn plain_units(text: &str) -> String {
    text.replace(" Cel", " °C").replace(" [degF]", " °F")
}

/// A shift factor in plain words.
pub(crate) fn factor_name(raw: i32) -> String {
    match ShiftFactor::try_from(raw) {
        Ok(ShiftFactor::Ph) => "pH".to_owned(),
        Ok(ShiftFactor::Pco2) => "PCO2".to_owned(),
        Ok(ShiftFactor::Temperature) => "temperature".to_owned(),
        Ok(ShiftFactor::Dpg) => "2,3-DPG".to_owned(),
        Ok(ShiftFactor::BaseExcess) => "base excess".to_owned(),
        Ok(ShiftFactor::Cohb) => "COHb".to_owned(),
        Ok(ShiftFactor::Methb) => "MetHb".to_owned(),
        Ok(ShiftFactor::Hbf) => "HbF".to_owned(),
        _ => raw.to_string(),
    }
}

/// Print `message` as protobuf JSON (pretty), named by its full type name.
pub(crate) fn print_json<M: prost::Message>(message: &M, full_name: &str) -> Result<(), Failure> {
    let value = oxbind_client::json::to_json(message, full_name)
        .map_err(|e| Failure::Other(e.to_string()))?;
    let text = serde_json::to_string_pretty(&value).map_err(|e| Failure::Other(e.to_string()))?;
    line(text)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantities_read_plainly_with_enough_figures() {
        assert_eq!(quantity(&Quantity::mm_hg(26.86)), "26.9 mm[Hg]");
        assert_eq!(quantity(&Quantity::mm_hg(0.0123)), "0.0123 mm[Hg]");
        assert_eq!(quantity(&Quantity::celsius(33.0)), "33.0 °C");
        assert_eq!(quantity(&Quantity::kpa(26.66)), "26.66 kPa");
        assert_eq!(given(&Quantity::celsius(33.2)), "33.2 °C");
        assert_eq!(given(&Quantity::fraction(0.24)), "24 %");
        assert_eq!(given(&Quantity::mmol_per_l(-2.0)), "-2 mmol/L");
    }
}
