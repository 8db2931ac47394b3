//! The standard physiological range of each blood condition: whether a
//! condition the model ignores matters. An ignored value inside its range is
//! worth recording (an informational warning); outside it, the result may
//! mislead (a caution).
//!
//! The table is the data file `standard_ranges.csv` beside this module, one
//! row per condition with its source, in the engine's unit.

use std::sync::OnceLock;

use crate::physiology::conditions::Condition;

use super::{status::readable, warnings::condition_field};

/// The data file, compiled in.
const DATA: &str = include_str!("standard_ranges.csv");

/// One condition's standard range, in the engine's unit.
#[derive(Debug, Clone, PartialEq)]
pub struct StandardRange {
    /// The condition.
    pub condition: Condition,
    /// Lowest standard value (inclusive).
    pub min: f64,
    /// Highest standard value (inclusive).
    pub max: f64,
    /// UCUM code of `min` and `max`.
    pub unit: String,
    /// Where the range comes from.
    pub source: String,
}

impl StandardRange {
    /// Whether `value` lies inside the range (ends included).
    pub fn contains(&self, value: f64) -> bool {
        (self.min..=self.max).contains(&value)
    }

    /// The range as text, e.g. `35 to 45 mm[Hg]` (a fraction as per cent).
    pub fn describe(&self) -> String {
        let (min, max) = (readable(self.min), readable(self.max));
        match self.unit.as_str() {
            "1" => format!(
                "{} to {} %",
                readable(self.min * 100.0),
                readable(self.max * 100.0)
            ),
            "[pH]" => format!("{min} to {max}"),
            unit => format!("{min} to {max} {unit}"),
        }
    }
}

/// Every row of the table, or why it could not be read.
pub fn table() -> Result<&'static [StandardRange], &'static str> {
    static TABLE: OnceLock<Result<Vec<StandardRange>, String>> = OnceLock::new();
    TABLE.get_or_init(parse).as_deref().map_err(String::as_str)
}

/// The standard range of `condition`, if the table has one.
pub fn standard_range(condition: Condition) -> Option<&'static StandardRange> {
    table()
        .ok()?
        .iter()
        .find(|range| range.condition == condition)
}

fn parse() -> Result<Vec<StandardRange>, String> {
    let mut reader = csv::Reader::from_reader(DATA.as_bytes());
    let mut rows = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| e.to_string())?;
        let name = record.get(0).unwrap_or_default();
        let condition = Condition::ALL
            .iter()
            .copied()
            .find(|c| condition_field(*c) == name)
            .ok_or_else(|| format!("unknown condition `{name}`"))?;
        let number = |i: usize| -> Result<f64, String> {
            record
                .get(i)
                .unwrap_or_default()
                .parse()
                .map_err(|_| format!("{name}: column {i} is not a number"))
        };
        rows.push(StandardRange {
            condition,
            min: number(1)?,
            max: number(2)?,
            unit: record.get(3).unwrap_or_default().to_owned(),
            source: record.get(4).unwrap_or_default().to_owned(),
        });
    }
    Ok(rows)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physiology::conditions::Conditions;

    #[test]
    fn every_condition_has_one_sourced_range_containing_its_standard_value() {
        let table = table().expect("the compiled-in table parses");
        assert_eq!(table.len(), Condition::ALL.len());
        for condition in Condition::ALL {
            let range = standard_range(condition).expect("a range for every condition");
            assert!(range.min <= range.max, "{condition:?}");
            assert!(!range.source.is_empty(), "{condition:?} has a source");
            // The contract's standard value (pH 7.40, PCO2 40 mm[Hg], 37 Cel,
            // 2,3-DPG 5 mmol/L, base excess 0, no COHb, MetHb or HbF) lies
            // inside its own standard range.
            let standard = match condition {
                Condition::Ph => Conditions::STANDARD.ph(),
                Condition::Pco2 => Conditions::STANDARD.pco2_mmhg(),
                Condition::Temperature => Conditions::STANDARD.temperature_celsius(),
                Condition::Dpg => Conditions::STANDARD.dpg_mmol_per_l(),
                Condition::BaseExcess => Conditions::STANDARD.base_excess_mmol_per_l(),
                Condition::Cohb => Conditions::STANDARD.cohb_fraction(),
                Condition::Methb => Conditions::STANDARD.methb_fraction(),
                Condition::Hbf => Conditions::STANDARD.hbf_fraction(),
            };
            assert!(range.contains(standard), "{condition:?} {standard}");
        }
    }

    #[test]
    fn ranges_read_as_text_with_their_unit() {
        let pco2 = standard_range(Condition::Pco2).unwrap();
        assert_eq!(pco2.describe(), "35 to 45 mm[Hg]");
        let cohb = standard_range(Condition::Cohb).unwrap();
        assert_eq!(cohb.describe(), "0 to 3 %");
    }
}
