//! Typed constructors for [`Quantity`](crate::v1::Quantity), so a caller
//! writes `Quantity::mm_hg(80.0)` instead of spelling a UCUM code by hand.

use crate::v1::Quantity;

/// The UCUM codes (case-sensitive form) that the v1 contract accepts.
///
/// Source: UCUM essence v2.2 and the FHIR `ucum-common` value set, as
/// summarised in the project's conventions (section 1.1).
pub mod ucum {
    /// Millimetre of mercury.
    pub const MM_HG: &str = "mm[Hg]";
    /// Kilopascal.
    pub const KPA: &str = "kPa";
    /// Centimetre of water (airway pressure).
    pub const CM_H2O: &str = "cm[H2O]";
    /// Degree Celsius.
    pub const CELSIUS: &str = "Cel";
    /// Degree Fahrenheit.
    pub const FAHRENHEIT: &str = "[degF]";
    /// Percent.
    pub const PERCENT: &str = "%";
    /// Unity: a plain fraction between 0 and 1.
    pub const FRACTION: &str = "1";
    /// Gram per decilitre.
    pub const G_PER_DL: &str = "g/dL";
    /// Gram per litre.
    pub const G_PER_L: &str = "g/L";
    /// Millimole per litre.
    pub const MMOL_PER_L: &str = "mmol/L";
    /// Millilitre per decilitre.
    pub const ML_PER_DL: &str = "mL/dL";
    /// Litre per minute.
    pub const L_PER_MIN: &str = "L/min";
    /// Millilitre per minute.
    pub const ML_PER_MIN: &str = "mL/min";
    /// Millimole per minute.
    pub const MMOL_PER_MIN: &str = "mmol/min";
}

impl Quantity {
    /// A quantity with any UCUM unit code.
    ///
    /// ```
    /// use oxbind_proto::v1::Quantity;
    /// let q = Quantity::new(48.0, "mm[Hg]");
    /// assert_eq!(q, Quantity::mm_hg(48.0));
    /// ```
    pub fn new(value: f64, unit: impl Into<String>) -> Self {
        Self {
            value,
            unit: unit.into(),
        }
    }

    /// A pressure in millimetres of mercury (`mm[Hg]`).
    ///
    /// ```
    /// use oxbind_proto::v1::Quantity;
    /// assert_eq!(Quantity::mm_hg(80.0).unit, "mm[Hg]");
    /// ```
    pub fn mm_hg(value: f64) -> Self {
        Self::new(value, ucum::MM_HG)
    }

    /// A pressure in kilopascals (`kPa`).
    ///
    /// ```
    /// use oxbind_proto::v1::Quantity;
    /// assert_eq!(Quantity::kpa(10.7).unit, "kPa");
    /// ```
    pub fn kpa(value: f64) -> Self {
        Self::new(value, ucum::KPA)
    }

    /// An airway pressure in centimetres of water (`cm[H2O]`).
    pub fn cm_h2o(value: f64) -> Self {
        Self::new(value, ucum::CM_H2O)
    }

    /// A temperature in degrees Celsius (`Cel`).
    ///
    /// ```
    /// use oxbind_proto::v1::Quantity;
    /// assert_eq!(Quantity::celsius(38.5).unit, "Cel");
    /// ```
    pub fn celsius(value: f64) -> Self {
        Self::new(value, ucum::CELSIUS)
    }

    /// A temperature in degrees Fahrenheit (`[degF]`).
    pub fn fahrenheit(value: f64) -> Self {
        Self::new(value, ucum::FAHRENHEIT)
    }

    /// A dimensionless amount in percent (`%`), e.g. COHb 12 %.
    ///
    /// ```
    /// use oxbind_proto::v1::Quantity;
    /// assert_eq!(Quantity::percent(12.0).unit, "%");
    /// ```
    pub fn percent(value: f64) -> Self {
        Self::new(value, ucum::PERCENT)
    }

    /// A dimensionless fraction between 0 and 1 (UCUM unity, `1`).
    pub fn fraction(value: f64) -> Self {
        Self::new(value, ucum::FRACTION)
    }

    /// A haemoglobin concentration in grams per decilitre (`g/dL`).
    pub fn g_per_dl(value: f64) -> Self {
        Self::new(value, ucum::G_PER_DL)
    }

    /// A haemoglobin concentration in grams per litre (`g/L`).
    pub fn g_per_l(value: f64) -> Self {
        Self::new(value, ucum::G_PER_L)
    }

    /// A concentration in millimoles per litre (`mmol/L`): 2,3-DPG, base
    /// excess, or haemoglobin (as monomer) or oxygen content in SI units.
    pub fn mmol_per_l(value: f64) -> Self {
        Self::new(value, ucum::MMOL_PER_L)
    }

    /// An oxygen content in millilitres per decilitre (`mL/dL`).
    pub fn ml_per_dl(value: f64) -> Self {
        Self::new(value, ucum::ML_PER_DL)
    }

    /// A blood flow (cardiac output) in litres per minute (`L/min`).
    pub fn l_per_min(value: f64) -> Self {
        Self::new(value, ucum::L_PER_MIN)
    }

    /// A flow in millilitres per minute (`mL/min`).
    pub fn ml_per_min(value: f64) -> Self {
        Self::new(value, ucum::ML_PER_MIN)
    }
}

impl std::fmt::Display for Quantity {
    /// `value unit`, e.g. `48 mm[Hg]`; a fraction (`1`) prints without unit.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.unit == ucum::FRACTION || self.unit.is_empty() {
            write!(f, "{}", self.value)
        } else {
            write!(f, "{} {}", self.value, self.unit)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constructors_carry_the_ucum_code_and_value() {
        assert_eq!(Quantity::kpa(10.7), Quantity::new(10.7, "kPa"));
        assert_eq!(Quantity::g_per_dl(14.2).unit, "g/dL");
        assert_eq!(Quantity::fraction(0.21).value, 0.21);
        assert_eq!(Quantity::mm_hg(48.0).to_string(), "48 mm[Hg]");
        assert_eq!(Quantity::fraction(0.5).to_string(), "0.5");
    }
}
