//! Which LOINC code means which input, and how each derived value is coded.
//!
//! The table is the data file `data/loinc-mapping.csv`: one row per code,
//! each with its source and how far it was verified (the tags of
//! `reference/integration.md` section 1: VP read on the page, VP-m read on a
//! third-party LOINC mirror, VC read in a public repository or value set, M
//! from memory). No LOINC code is invented: a derived value without a LOINC
//! term found gets a code of the service's own CodeSystem
//! ([`CODE_SYSTEM_URL`], served at its path), whose code is the value's
//! name. LOINC codes are property-specific, so an output has one row per
//! UCUM unit it can be stated in.

use std::sync::LazyLock;

use serde::Deserialize;

/// The canonical URL of the service's CodeSystem of derived values; its path
/// is where the server serves it.
pub const CODE_SYSTEM_URL: &str =
    "https://oxbind.example.invalid/fhir/r4/CodeSystem/oxygen-derived-values";

/// The mapping table, as shipped.
pub const MAPPING_CSV: &str = include_str!("data/loinc-mapping.csv");

macro_rules! named_enum {
    ($(#[$doc:meta])* $name:ident { $($(#[$vdoc:meta])* $variant:ident = $text:literal, $label:literal;)* }) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
        pub enum $name {
            $($(#[$vdoc])* $variant,)*
        }

        impl $name {
            /// Every value, in table order.
            pub const ALL: &'static [$name] = &[$($name::$variant),*];

            /// The name used in the mapping table (and, for outputs, as the
            /// own CodeSystem's code).
            pub fn name(self) -> &'static str {
                match self {
                    $($name::$variant => $text,)*
                }
            }

            /// A plain English label for messages.
            pub fn label(self) -> &'static str {
                match self {
                    $($name::$variant => $label,)*
                }
            }

            fn from_name(name: &str) -> Option<Self> {
                Self::ALL.iter().copied().find(|v| v.name() == name)
            }
        }
    };
}

named_enum! {
    /// An input the operation reads from an Observation.
    Input {
        /// Arterial oxygen tension.
        ArterialPo2 = "arterial-po2", "arterial PO2";
        /// Venous oxygen tension.
        VenousPo2 = "venous-po2", "venous PO2";
        /// Arterial carbon dioxide tension.
        ArterialPco2 = "arterial-pco2", "arterial PCO2";
        /// Venous carbon dioxide tension.
        VenousPco2 = "venous-pco2", "venous PCO2";
        /// Arterial pH.
        ArterialPh = "arterial-ph", "arterial pH";
        /// Venous pH.
        VenousPh = "venous-ph", "venous pH";
        /// Body temperature.
        BodyTemperature = "body-temperature", "body temperature";
        /// Total haemoglobin.
        Hemoglobin = "hemoglobin", "total haemoglobin";
        /// Carboxyhaemoglobin fraction.
        Cohb = "cohb", "COHb";
        /// Methaemoglobin fraction.
        Methb = "methb", "MetHb";
        /// Fetal haemoglobin fraction.
        Hbf = "hbf", "HbF";
        /// Measured functional arterial saturation.
        ArterialSo2 = "arterial-so2", "measured arterial oxygen saturation (functional)";
        /// Measured functional venous saturation.
        VenousSo2 = "venous-so2", "measured venous oxygen saturation (functional)";
        /// Measured fractional arterial oxyhaemoglobin.
        ArterialFo2hb = "arterial-fo2hb", "arterial fractional oxyhaemoglobin";
        /// Measured fractional venous oxyhaemoglobin.
        VenousFo2hb = "venous-fo2hb", "venous fractional oxyhaemoglobin";
        /// Pulse-oximeter saturation.
        Spo2 = "spo2", "SpO2";
        /// Inspired oxygen fraction.
        Fio2 = "fio2", "FiO2";
        /// Mean airway pressure.
        MeanAirwayPressure = "mean-airway-pressure", "mean airway pressure";
        /// Cardiac output.
        CardiacOutput = "cardiac-output", "cardiac output";
        /// Arterial base excess.
        ArterialBaseExcess = "arterial-base-excess", "arterial base excess";
        /// Venous base excess.
        VenousBaseExcess = "venous-base-excess", "venous base excess";
    }
}

named_enum! {
    /// A value the operation derives.
    Output {
        /// Saturation calculated from arterial PO2.
        SaturationCalculatedArterial = "oxygen-saturation-calculated-arterial", "arterial oxygen saturation calculated from PO2";
        /// Saturation calculated from venous PO2.
        SaturationCalculatedVenous = "oxygen-saturation-calculated-venous", "venous oxygen saturation calculated from PO2";
        /// P50 at the arterial sample's conditions.
        P50AtConditionsArterial = "p50-at-sample-conditions-arterial", "P50 at the arterial sample's conditions";
        /// P50 at the venous sample's conditions.
        P50AtConditionsVenous = "p50-at-sample-conditions-venous", "P50 at the venous sample's conditions";
        /// Standard P50 from the arterial sample.
        P50StandardArterial = "p50-standard-arterial", "P50 at standard conditions, arterial sample";
        /// Standard P50 from the venous sample.
        P50StandardVenous = "p50-standard-venous", "P50 at standard conditions, venous sample";
        /// Arterial oxygen content.
        ContentArterial = "oxygen-content-arterial", "arterial oxygen content";
        /// Venous oxygen content.
        ContentVenous = "oxygen-content-venous", "venous oxygen content";
        /// Arterial minus venous content.
        ContentDifference = "oxygen-content-arteriovenous-difference", "arterial minus venous oxygen content";
        /// Oxygen extraction fraction.
        ExtractionFraction = "oxygen-extraction-fraction", "oxygen extraction fraction";
        /// Oxygen delivery.
        Delivery = "oxygen-delivery", "oxygen delivery";
        /// Oxygen consumption (Fick).
        Consumption = "oxygen-consumption", "oxygen consumption";
        /// Alveolar oxygen tension.
        AlveolarPo2 = "alveolar-oxygen-partial-pressure", "alveolar PO2";
        /// Alveolar-arterial gradient.
        AlveolarArterialGradient = "alveolar-arterial-oxygen-gradient", "alveolar-arterial PO2 gradient";
        /// PaO2/FiO2.
        Pao2Fio2Ratio = "pao2-fio2-ratio", "PaO2/FiO2";
        /// SpO2/FiO2.
        Spo2Fio2Ratio = "spo2-fio2-ratio", "SpO2/FiO2";
        /// PaO2 imputed from SpO2.
        ImputedPao2 = "pao2-imputed-from-spo2", "PaO2 imputed from SpO2";
        /// Oxygenation index.
        OxygenationIndex = "oxygenation-index", "oxygenation index";
        /// Oxygen saturation index.
        OxygenSaturationIndex = "oxygen-saturation-index", "oxygen saturation index";
        /// Shunt fraction.
        ShuntFraction = "shunt-fraction", "shunt fraction";
        /// Arterial pH at body temperature.
        PhAtBodyTemperature = "ph-at-body-temperature-arterial", "arterial pH at body temperature";
        /// Arterial PCO2 at body temperature.
        Pco2AtBodyTemperature = "pco2-at-body-temperature-arterial", "arterial PCO2 at body temperature";
        /// Arterial PO2 at body temperature.
        Po2AtBodyTemperature = "po2-at-body-temperature-arterial", "arterial PO2 at body temperature";
    }
}

/// One row of the mapping file, as written.
#[derive(Debug, Clone, Deserialize)]
pub struct MappingRow {
    /// `input` or `output`.
    pub direction: String,
    /// The input's or output's name.
    pub name: String,
    /// The LOINC code, or empty (an output without a LOINC term).
    pub loinc: String,
    /// The LOINC long common name where it was verified, else empty.
    pub display: String,
    /// For outputs: the UCUM unit the row codes.
    pub ucum: String,
    /// Where the code was found.
    pub source: String,
    /// How far it was verified (integration.md tags).
    pub verification: String,
}

/// How an output is coded in one unit.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct OutputCoding {
    /// The code system: LOINC or [`CODE_SYSTEM_URL`].
    pub system: &'static str,
    /// The code.
    pub code: String,
    /// The display, where verified.
    pub display: Option<String>,
}

/// The parsed table.
#[derive(Debug)]
pub struct Mapping {
    inputs: Vec<(String, Input)>,
    outputs: Vec<(Output, String, OutputCoding)>,
}

/// Parse the mapping file's text.
pub fn parse(text: &str) -> Result<Mapping, String> {
    let mut inputs = Vec::new();
    let mut outputs = Vec::new();
    let mut reader = csv::Reader::from_reader(text.as_bytes());
    for (line, row) in reader.deserialize::<MappingRow>().enumerate() {
        let row = row.map_err(|e| format!("row {}: {e}", line + 2))?;
        if row.source.trim().is_empty() || row.verification.trim().is_empty() {
            return Err(format!(
                "row {}: source and verification are required",
                line + 2
            ));
        }
        match row.direction.as_str() {
            "input" => {
                let input = Input::from_name(&row.name)
                    .ok_or_else(|| format!("row {}: unknown input {}", line + 2, row.name))?;
                if row.loinc.is_empty() {
                    return Err(format!("row {}: an input needs a LOINC code", line + 2));
                }
                inputs.push((row.loinc, input));
            }
            "output" => {
                let output = Output::from_name(&row.name)
                    .ok_or_else(|| format!("row {}: unknown output {}", line + 2, row.name))?;
                let coding = if row.loinc.is_empty() {
                    OutputCoding {
                        system: CODE_SYSTEM_URL,
                        code: output.name().to_owned(),
                        display: Some(output.label().to_owned()),
                    }
                } else {
                    OutputCoding {
                        system: super::resources::LOINC_SYSTEM,
                        code: row.loinc,
                        display: (!row.display.is_empty()).then_some(row.display),
                    }
                };
                outputs.push((output, row.ucum, coding));
            }
            other => return Err(format!("row {}: unknown direction {other}", line + 2)),
        }
    }
    Ok(Mapping { inputs, outputs })
}

/// The shipped table (checked by the tests below, so it always parses).
pub static MAPPING: LazyLock<Mapping> =
    LazyLock::new(|| parse(MAPPING_CSV).expect("data/loinc-mapping.csv parses"));

impl Mapping {
    /// The input a LOINC code stands for.
    pub fn input_for(&self, loinc: &str) -> Option<Input> {
        self.inputs
            .iter()
            .find(|(code, _)| code == loinc)
            .map(|(_, input)| *input)
    }

    /// The LOINC codes of `input`.
    pub fn codes_of(&self, input: Input) -> impl Iterator<Item = &str> {
        self.inputs
            .iter()
            .filter(move |(_, i)| *i == input)
            .map(|(code, _)| code.as_str())
    }

    /// How `output` stated in UCUM `unit` is coded.
    pub fn coding_of(&self, output: Output, unit: &str) -> Option<&OutputCoding> {
        self.outputs
            .iter()
            .find(|(o, u, _)| *o == output && u == unit)
            .map(|(_, _, coding)| coding)
    }

    /// Every (output, unit, coding) row.
    pub fn output_rows(&self) -> impl Iterator<Item = (Output, &str, &OutputCoding)> {
        self.outputs.iter().map(|(o, u, c)| (*o, u.as_str(), c))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_shipped_table_parses_and_every_row_names_a_source() {
        let mapping = parse(MAPPING_CSV).unwrap();
        assert!(mapping.inputs.len() >= 25);
        for input in Input::ALL {
            assert!(
                mapping.codes_of(*input).count() >= 1,
                "{input:?} has no code"
            );
        }
    }

    #[test]
    fn a_loinc_code_means_one_input() {
        let mapping = parse(MAPPING_CSV).unwrap();
        for (code, input) in &mapping.inputs {
            assert_eq!(mapping.input_for(code), Some(*input), "{code}");
        }
    }

    #[test]
    fn every_output_has_a_coding_in_each_unit_system() {
        use oxbind_proto::v1::UnitSystem;
        for output in Output::ALL {
            for system in [UnitSystem::Conventional, UnitSystem::Si] {
                let unit = super::super::compute::unit_of(*output, system);
                assert!(
                    MAPPING.coding_of(*output, unit).is_some(),
                    "{output:?} in {unit}"
                );
            }
        }
    }

    #[test]
    fn loinc_codes_carry_their_check_digit() {
        // LOINC's mod-10 check digit (LOINC Users' Guide, from memory):
        // catches a mistyped code in the table.
        for row in csv::Reader::from_reader(MAPPING_CSV.as_bytes())
            .deserialize::<MappingRow>()
            .map(Result::unwrap)
            .filter(|r| !r.loinc.is_empty())
        {
            let (body, check) = row.loinc.split_once('-').unwrap();
            assert_eq!(
                check.parse::<u32>().unwrap(),
                loinc_check_digit(body),
                "{}",
                row.loinc
            );
        }
    }

    /// LOINC's check digit: the mod-10 (Luhn-style) algorithm over the code's
    /// digits, doubling every other digit starting from the rightmost.
    fn loinc_check_digit(body: &str) -> u32 {
        let mut sum = 0;
        for (i, c) in body.chars().rev().enumerate() {
            let d = c.to_digit(10).unwrap();
            sum += if i % 2 == 0 {
                let twice = d * 2;
                twice / 10 + twice % 10
            } else {
                d
            };
        }
        (10 - sum % 10) % 10
    }
}
