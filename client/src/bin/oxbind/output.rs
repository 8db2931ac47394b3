//! Human-readable tables and protobuf JSON on standard output.

use oxbind_client::v1::{Provenance, Quantity, Warning, WarningCode};

/// A two-column table of labelled values.
#[derive(Debug, Default)]
pub(crate) struct Table {
    rows: Vec<(String, String)>,
}

impl Table {
    /// An empty table.
    pub(crate) fn new() -> Self {
        Self::default()
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

    /// Add the provenance rows and one row per warning.
    pub(crate) fn provenance(
        &mut self,
        provenance: Option<&Provenance>,
        warnings: &[Warning],
    ) -> &mut Self {
        if let Some(p) = provenance {
            if !p.model_id.is_empty() {
                self.row("model", format!("{} {}", p.model_id, p.model_version));
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
            self.row("warning", warning(w));
        }
        self
    }

    /// Print the table, labels padded to one width.
    pub(crate) fn print(&self) {
        let width = self.rows.iter().map(|(l, _)| l.len()).max().unwrap_or(0);
        for (label, value) in &self.rows {
            println!("{label:<width$}  {value}");
        }
    }
}

/// `value unit` with a precision suited to the unit.
pub(crate) fn quantity(q: &Quantity) -> String {
    let decimals = match q.unit.as_str() {
        "1" => 4,
        "kPa" | "mmol/L" | "mL/dL" | "g/dL" | "L/min" => 2,
        _ => 1,
    };
    if q.unit == "1" {
        format!("{:.decimals$}", q.value)
    } else {
        format!("{:.decimals$} {}", q.value, q.unit)
    }
}

/// A saturation fraction shown with its percentage.
pub(crate) fn saturation(fraction: f64) -> String {
    format!("{fraction:.4} ({:.1} %)", fraction * 100.0)
}

/// `CODE (field): message`.
pub(crate) fn warning(w: &Warning) -> String {
    let code = WarningCode::try_from(w.code)
        .map(|c| c.as_str_name().to_owned())
        .unwrap_or_else(|_| w.code.to_string());
    if w.field.is_empty() {
        format!("{code}: {}", w.message)
    } else {
        format!("{code} ({}): {}", w.field, w.message)
    }
}

/// Print `message` as protobuf JSON (pretty), named by its full type name.
pub(crate) fn print_json<M: prost::Message>(message: &M, full_name: &str) -> Result<(), String> {
    let value = oxbind_client::json::to_json(message, full_name).map_err(|e| e.to_string())?;
    println!(
        "{}",
        serde_json::to_string_pretty(&value).map_err(|e| e.to_string())?
    );
    Ok(())
}
