//! A fluent builder on [`BloodConditions`](crate::v1::BloodConditions):
//! `BloodConditions::standard().with_ph(7.31).with_pco2(Quantity::mm_hg(48.0))`.

use crate::v1::{BloodConditions, Quantity};

impl BloodConditions {
    /// Standard conditions: every field absent, so the server applies its
    /// defaults (pH 7.40, PCO2 40 mm[Hg], 37 Cel, the model's standard
    /// 2,3-DPG, base excess 0, no COHb, MetHb or HbF).
    ///
    /// ```
    /// use oxbind_proto::v1::{BloodConditions, Quantity};
    /// let patient = BloodConditions::standard()
    ///     .with_ph(7.31)
    ///     .with_pco2(Quantity::mm_hg(48.0))
    ///     .with_temperature(Quantity::celsius(38.5));
    /// assert_eq!(patient.ph, Some(7.31));
    /// assert_eq!(patient.pco2, Some(Quantity::mm_hg(48.0)));
    /// ```
    pub fn standard() -> Self {
        Self::default()
    }

    /// Set the pH (dimensionless).
    pub fn with_ph(mut self, ph: f64) -> Self {
        self.ph = Some(ph);
        self
    }

    /// Set the carbon dioxide tension (a pressure).
    pub fn with_pco2(mut self, pco2: Quantity) -> Self {
        self.pco2 = Some(pco2);
        self
    }

    /// Set the blood temperature.
    pub fn with_temperature(mut self, temperature: Quantity) -> Self {
        self.temperature = Some(temperature);
        self
    }

    /// Set the red-cell 2,3-DPG concentration (`mmol/L`).
    pub fn with_dpg(mut self, dpg: Quantity) -> Self {
        self.dpg = Some(dpg);
        self
    }

    /// Set the base excess (`mmol/L`).
    pub fn with_base_excess(mut self, base_excess: Quantity) -> Self {
        self.base_excess = Some(base_excess);
        self
    }

    /// Set the carboxyhaemoglobin fraction (`%` or `1`).
    pub fn with_cohb(mut self, cohb: Quantity) -> Self {
        self.cohb = Some(cohb);
        self
    }

    /// Set the methaemoglobin fraction (`%` or `1`).
    pub fn with_methb(mut self, methb: Quantity) -> Self {
        self.methb = Some(methb);
        self
    }

    /// Set the fetal haemoglobin fraction (`%` or `1`).
    pub fn with_hbf(mut self, hbf: Quantity) -> Self {
        self.hbf = Some(hbf);
        self
    }

    /// True when no field is set (the server's standard conditions).
    pub fn is_standard(&self) -> bool {
        *self == Self::default()
    }
}
