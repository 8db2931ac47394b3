//! One blood-gas sample as the checks see it (engine units: mmHg, °C,
//! fractions 0-1, mmol/L, g/dL, 10⁹/L), and the values every check derives
//! from it: the results at 37 °C, at body temperature, and the saturation in
//! the definition a check needs.

use crate::physiology::conditions::{Conditions, STANDARD_TEMPERATURE_CELSIUS};
use crate::physiology::content::SaturationKind;
use crate::physiology::error::PhysiologyError;
use crate::physiology::temperature::{correct_pco2_mmhg, correct_ph, correct_po2_mmhg};

/// A sample's type as labelled.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SampleType {
    /// Labelled arterial.
    Arterial,
    /// Labelled venous.
    Venous,
    /// Labelled mixed venous.
    MixedVenous,
    /// Labelled capillary (arterialised).
    Capillary,
    /// The label does not say.
    #[default]
    Unknown,
}

impl SampleType {
    /// Whether SpO2 (arterial blood) describes the same blood as the sample:
    /// true for arterial, capillary and unknown samples.
    pub fn may_be_arterial(self) -> bool {
        !matches!(self, SampleType::Venous | SampleType::MixedVenous)
    }
}

/// The temperature a sample's PO2, PCO2 and pH refer to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ReportedTemperature {
    /// 37 °C, as measured.
    #[default]
    At37,
    /// The patient's temperature.
    AtPatientTemperature,
}

/// A saturation measured by co-oximetry.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MeasuredSaturation {
    /// The value, fraction.
    pub fraction: f64,
    /// Functional or fractional.
    pub kind: SaturationKind,
}

/// How a bicarbonate value was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BicarbonateSource {
    /// Bicarbonate measured.
    Measured,
    /// Total CO2 measured (bicarbonate plus dissolved CO2).
    MeasuredTotalCo2,
    /// Calculated by the analyser from pH and PCO2.
    Calculated,
}

/// A bicarbonate value with its source.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bicarbonate {
    /// The value, mmol/L.
    pub mmol_per_l: f64,
    /// How it was obtained.
    pub source: BicarbonateSource,
}

/// The same sample's results at 37 °C (when the sample is reported at the
/// patient's temperature).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ResultsAt37 {
    /// pH at 37 °C.
    pub ph: Option<f64>,
    /// PCO2 at 37 °C, mmHg.
    pub pco2_mmhg: Option<f64>,
    /// PO2 at 37 °C, mmHg.
    pub po2_mmhg: Option<f64>,
}

/// One sample's results. Only the PO2 is required.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct BloodGasSample {
    /// PO2, mmHg, at [`Self::reported_at`].
    pub po2_mmhg: f64,
    /// PCO2, mmHg, at [`Self::reported_at`].
    pub pco2_mmhg: Option<f64>,
    /// pH at [`Self::reported_at`].
    pub ph: Option<f64>,
    /// The patient's temperature, °C.
    pub patient_temperature_celsius: Option<f64>,
    /// The temperature PO2, PCO2 and pH refer to.
    pub reported_at: ReportedTemperature,
    /// The type as labelled.
    pub sample_type: SampleType,
    /// Saturation by co-oximetry.
    pub so2: Option<MeasuredSaturation>,
    /// Carboxyhaemoglobin, fraction of total haemoglobin.
    pub cohb_fraction: Option<f64>,
    /// Methaemoglobin, fraction of total haemoglobin.
    pub methb_fraction: Option<f64>,
    /// Total haemoglobin, g/dL.
    pub hemoglobin_g_per_dl: Option<f64>,
    /// Fetal haemoglobin, fraction of total haemoglobin.
    pub hbf_fraction: Option<f64>,
    /// Pulse-oximeter saturation at sampling, fraction.
    pub spo2_fraction: Option<f64>,
    /// Inspired oxygen fraction.
    pub fio2_fraction: Option<f64>,
    /// Barometric pressure, mmHg; absent: [`STANDARD_BAROMETRIC_PRESSURE_MMHG`].
    pub barometric_pressure_mmhg: Option<f64>,
    /// Bicarbonate with its source.
    pub bicarbonate: Option<Bicarbonate>,
    /// White-cell count, 10⁹/L.
    pub white_cell_count_per_nl: Option<f64>,
    /// The results at 37 °C, when reported at the patient's temperature.
    pub at_37: ResultsAt37,
}

/// Barometric pressure assumed when none is given, mmHg: one standard
/// atmosphere (definitional), as GasExchange assumes.
pub const STANDARD_BAROMETRIC_PRESSURE_MMHG: f64 =
    crate::physiology::gas_exchange::SEA_LEVEL_BAROMETRIC_PRESSURE_MMHG;

/// A sample input a check may need (named in a not-evaluable finding).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SampleField {
    /// PO2.
    Po2,
    /// PCO2.
    Pco2,
    /// pH.
    Ph,
    /// The patient's temperature.
    Temperature,
    /// The measured saturation.
    So2,
    /// COHb.
    Cohb,
    /// MetHb.
    Methb,
    /// Total haemoglobin.
    Hemoglobin,
    /// HbF.
    Hbf,
    /// SpO2.
    Spo2,
    /// FiO2.
    Fio2,
    /// Barometric pressure.
    BarometricPressure,
    /// Bicarbonate.
    Bicarbonate,
    /// White-cell count.
    WhiteCellCount,
    /// pH at 37 °C.
    PhAt37,
    /// PCO2 at 37 °C.
    Pco2At37,
    /// PO2 at 37 °C.
    Po2At37,
}

impl SampleField {
    /// The field's name in the sample message (dotted below it).
    pub const fn name(self) -> &'static str {
        match self {
            SampleField::Po2 => "po2",
            SampleField::Pco2 => "pco2",
            SampleField::Ph => "ph",
            SampleField::Temperature => "temperature",
            SampleField::So2 => "so2_fraction",
            SampleField::Cohb => "cohb",
            SampleField::Methb => "methb",
            SampleField::Hemoglobin => "hemoglobin",
            SampleField::Hbf => "hbf",
            SampleField::Spo2 => "spo2_fraction",
            SampleField::Fio2 => "fio2",
            SampleField::BarometricPressure => "barometric_pressure",
            SampleField::Bicarbonate => "bicarbonate",
            SampleField::WhiteCellCount => "white_cell_count",
            SampleField::PhAt37 => "results_at_37_cel.ph",
            SampleField::Pco2At37 => "results_at_37_cel.pco2",
            SampleField::Po2At37 => "results_at_37_cel.po2",
        }
    }

    /// The input in words, for a reason.
    pub const fn describe(self) -> &'static str {
        match self {
            SampleField::Po2 => "PO2",
            SampleField::Pco2 => "PCO2",
            SampleField::Ph => "pH",
            SampleField::Temperature => "the patient's temperature",
            SampleField::So2 => "the measured saturation (co-oximetry)",
            SampleField::Cohb => "COHb",
            SampleField::Methb => "MetHb",
            SampleField::Hemoglobin => "total haemoglobin",
            SampleField::Hbf => "HbF",
            SampleField::Spo2 => "SpO2 at sampling",
            SampleField::Fio2 => "FiO2",
            SampleField::BarometricPressure => "barometric pressure",
            SampleField::Bicarbonate => "bicarbonate",
            SampleField::WhiteCellCount => "the white-cell count",
            SampleField::PhAt37 => "the pH at 37 Cel",
            SampleField::Pco2At37 => "the PCO2 at 37 Cel",
            SampleField::Po2At37 => "the PO2 at 37 Cel",
        }
    }
}

/// PO2, PCO2 and pH at one temperature.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GasValues {
    /// PO2, mmHg.
    pub po2_mmhg: f64,
    /// PCO2, mmHg.
    pub pco2_mmhg: Option<f64>,
    /// pH.
    pub ph: Option<f64>,
    /// The temperature they refer to, °C.
    pub temperature_celsius: f64,
}

/// Why derived values could not be formed: inputs absent, or a correction
/// the engine refused.
#[derive(Debug, Clone, PartialEq)]
pub enum Unavailable {
    /// These inputs are needed and absent.
    Missing(Vec<SampleField>),
    /// The engine refused a calculation.
    Refused(PhysiologyError),
}

impl From<PhysiologyError> for Unavailable {
    fn from(e: PhysiologyError) -> Self {
        Unavailable::Refused(e)
    }
}

impl BloodGasSample {
    /// The temperature the reported PO2, PCO2 and pH refer to, °C: 37, or the
    /// patient's (absent when reported at a patient temperature not given).
    pub fn reported_celsius(&self) -> Option<f64> {
        match self.reported_at {
            ReportedTemperature::At37 => Some(STANDARD_TEMPERATURE_CELSIUS),
            ReportedTemperature::AtPatientTemperature => self.patient_temperature_celsius,
        }
    }

    /// The body temperature, °C: the patient's, or 37 when not given.
    pub fn body_celsius(&self) -> f64 {
        self.patient_temperature_celsius
            .unwrap_or(STANDARD_TEMPERATURE_CELSIUS)
    }

    /// Barometric pressure, mmHg, and whether it was given.
    pub fn barometric_pressure(&self) -> (f64, bool) {
        match self.barometric_pressure_mmhg {
            Some(pb) => (pb, true),
            None => (STANDARD_BAROMETRIC_PRESSURE_MMHG, false),
        }
    }

    /// PO2, PCO2 and pH at 37 °C: the results themselves when reported at
    /// 37 °C; otherwise each result at 37 °C where given, else the reported
    /// result carried to 37 °C by the engine's temperature correction
    /// ([`crate::physiology::temperature`]).
    ///
    /// # Errors
    ///
    /// [`Unavailable::Missing`] (the patient's temperature) when the results
    /// are reported at a patient temperature not given; the engine's refusal
    /// of a correction.
    pub fn at_37(&self) -> Result<GasValues, Unavailable> {
        let Some(from) = self.reported_celsius() else {
            return Err(Unavailable::Missing(vec![SampleField::Temperature]));
        };
        let to = STANDARD_TEMPERATURE_CELSIUS;
        let po2 = match self.at_37.po2_mmhg {
            Some(p) if self.reported_at == ReportedTemperature::AtPatientTemperature => p,
            _ => correct_po2_mmhg(self.po2_mmhg, from, to)?,
        };
        let pco2 = match self.at_37.pco2_mmhg {
            Some(p) if self.reported_at == ReportedTemperature::AtPatientTemperature => Some(p),
            _ => self
                .pco2_mmhg
                .map(|p| correct_pco2_mmhg(p, from, to))
                .transpose()?,
        };
        let ph = match self.at_37.ph {
            Some(ph) if self.reported_at == ReportedTemperature::AtPatientTemperature => Some(ph),
            _ => self.ph.map(|ph| correct_ph(ph, from, to)).transpose()?,
        };
        Ok(GasValues {
            po2_mmhg: po2,
            pco2_mmhg: pco2,
            ph,
            temperature_celsius: to,
        })
    }

    /// PO2, PCO2 and pH at body temperature ([`Self::body_celsius`]): the
    /// reported results carried there by the engine's temperature correction
    /// (unchanged when they already refer to it).
    ///
    /// # Errors
    ///
    /// As [`Self::at_37`].
    pub fn at_body(&self) -> Result<GasValues, Unavailable> {
        let Some(from) = self.reported_celsius() else {
            return Err(Unavailable::Missing(vec![SampleField::Temperature]));
        };
        let to = self.body_celsius();
        Ok(GasValues {
            po2_mmhg: correct_po2_mmhg(self.po2_mmhg, from, to)?,
            pco2_mmhg: self
                .pco2_mmhg
                .map(|p| correct_pco2_mmhg(p, from, to))
                .transpose()?,
            ph: self.ph.map(|ph| correct_ph(ph, from, to)).transpose()?,
            temperature_celsius: to,
        })
    }

    /// The measured saturation as a functional saturation
    /// O2Hb/(O2Hb + HHb): as measured, or a fractional one divided by
    /// 1 − FCOHb − FMetHb (which needs both). `Ok(None)` when no saturation
    /// was measured.
    ///
    /// # Formula
    ///
    /// ```text
    /// SO2 = FO2Hb / (1 − FCOHb − FMetHb)
    /// ```
    ///
    /// Definitions of functional and fractional saturation: Toffaletti J,
    /// Zijlstra WG. Misconceptions in reporting oxygen saturation. *Anesth
    /// Analg* 2007;105(6 Suppl):S5-9 (abstract read; reference/methods.md
    /// section 10 derives the relation).
    ///
    /// # Errors
    ///
    /// [`Unavailable::Missing`] naming COHb and/or MetHb for a fractional
    /// saturation without them.
    pub fn functional_so2(&self) -> Result<Option<f64>, Unavailable> {
        let Some(so2) = self.so2 else {
            return Ok(None);
        };
        match so2.kind {
            SaturationKind::Functional => Ok(Some(so2.fraction)),
            SaturationKind::Fractional => {
                let active = self.active_fraction()?;
                Ok(Some(so2.fraction / active))
            }
        }
    }

    /// The measured oxyhaemoglobin fraction FO2Hb: as measured, or a
    /// functional saturation times 1 − FCOHb − FMetHb (which needs both).
    /// `Ok(None)` when no saturation was measured.
    ///
    /// # Errors
    ///
    /// [`Unavailable::Missing`] naming COHb and/or MetHb for a functional
    /// saturation without them.
    pub fn fractional_o2hb(&self) -> Result<Option<f64>, Unavailable> {
        let Some(so2) = self.so2 else {
            return Ok(None);
        };
        match so2.kind {
            SaturationKind::Fractional => Ok(Some(so2.fraction)),
            SaturationKind::Functional => Ok(Some(so2.fraction * self.active_fraction()?)),
        }
    }

    /// 1 − FCOHb − FMetHb, which needs both.
    fn active_fraction(&self) -> Result<f64, Unavailable> {
        let mut missing = Vec::new();
        if self.cohb_fraction.is_none() {
            missing.push(SampleField::Cohb);
        }
        if self.methb_fraction.is_none() {
            missing.push(SampleField::Methb);
        }
        if !missing.is_empty() {
            return Err(Unavailable::Missing(missing));
        }
        Ok(1.0 - self.cohb_fraction.unwrap_or(0.0) - self.methb_fraction.unwrap_or(0.0))
    }

    /// The curve conditions of the sample at 37 °C: pH and PCO2 at 37 °C,
    /// COHb, MetHb and HbF as given; 2,3-DPG and base excess standard.
    pub fn curve_conditions(&self, at_37: &GasValues) -> Conditions {
        Conditions {
            ph: at_37.ph,
            pco2_mmhg: at_37.pco2_mmhg,
            cohb_fraction: self.cohb_fraction,
            methb_fraction: self.methb_fraction,
            hbf_fraction: self.hbf_fraction,
            ..Conditions::STANDARD
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn results_at_37_are_the_results_when_reported_at_37() {
        let sample = BloodGasSample {
            po2_mmhg: 80.0,
            pco2_mmhg: Some(40.0),
            ph: Some(7.40),
            patient_temperature_celsius: Some(33.0),
            ..Default::default()
        };
        let v = sample.at_37().unwrap();
        assert_eq!(
            (v.po2_mmhg, v.pco2_mmhg, v.ph),
            (80.0, Some(40.0), Some(7.40))
        );
        // Carried to the body: reference/methods.md section 8, PO2 80 -> 33 Cel
        // integrated 61.059 [D]; PCO2 40 -> 33.578 [D]; pH 7.40 -> 7.4588 [D].
        let b = sample.at_body().unwrap();
        assert!((b.po2_mmhg - 61.059).abs() < 0.01, "{}", b.po2_mmhg);
        assert!((b.pco2_mmhg.unwrap() - 33.578).abs() < 0.001);
        assert!((b.ph.unwrap() - 7.4588).abs() < 0.0001);
    }

    #[test]
    fn results_at_patient_temperature_come_back_to_37() {
        let sample = BloodGasSample {
            po2_mmhg: 61.059,
            pco2_mmhg: Some(33.578),
            ph: Some(7.4588),
            patient_temperature_celsius: Some(33.0),
            reported_at: ReportedTemperature::AtPatientTemperature,
            ..Default::default()
        };
        let v = sample.at_37().unwrap();
        assert!((v.po2_mmhg - 80.0).abs() < 0.01, "{}", v.po2_mmhg);
        assert!((v.pco2_mmhg.unwrap() - 40.0).abs() < 0.001);
        assert!((v.ph.unwrap() - 7.40).abs() < 0.0001);
        let without_temperature = BloodGasSample {
            patient_temperature_celsius: None,
            ..sample
        };
        assert_eq!(
            without_temperature.at_37(),
            Err(Unavailable::Missing(vec![SampleField::Temperature]))
        );
    }

    #[test]
    fn fractional_and_functional_saturations_convert_with_both_dyshaemoglobins() {
        // reference/methods.md section 10: SO2 0.97, FCOHb 0.10, FMetHb 0.01
        // gives FO2Hb 0.8633 [D].
        let mut sample = BloodGasSample {
            so2: Some(MeasuredSaturation {
                fraction: 0.97,
                kind: SaturationKind::Functional,
            }),
            cohb_fraction: Some(0.10),
            methb_fraction: Some(0.01),
            ..Default::default()
        };
        assert!((sample.fractional_o2hb().unwrap().unwrap() - 0.8633).abs() < 1e-12);
        sample.so2 = Some(MeasuredSaturation {
            fraction: 0.8633,
            kind: SaturationKind::Fractional,
        });
        assert!((sample.functional_so2().unwrap().unwrap() - 0.97).abs() < 1e-12);
        sample.methb_fraction = None;
        assert_eq!(
            sample.functional_so2(),
            Err(Unavailable::Missing(vec![SampleField::Methb]))
        );
    }
}
