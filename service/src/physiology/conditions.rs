//! The conditions of the blood a dissociation curve is evaluated at.
//!
//! Every condition is optional; an absent condition means the standard value
//! below. Engine units: pH units, mmHg, degrees Celsius, mmol/L and fractions
//! 0-1. Which of them a model honours is listed in its
//! [`ModelInfo`](super::curves::curve::ModelInfo); see each model's module for which
//! temperature the pH and PCO2 refer to.

use super::error::{require_finite, require_within, Input, PhysiologyError};

/// Standard plasma pH, 7.40 (Severinghaus 1979 definition of P50: whole blood at
/// 37 °C, pH 7.4; common practice).
pub const STANDARD_PH: f64 = 7.40;
/// Standard carbon dioxide tension, 40 mmHg (common practice).
pub const STANDARD_PCO2_MMHG: f64 = 40.0;
/// Standard temperature, 37 °C (common practice).
pub const STANDARD_TEMPERATURE_CELSIUS: f64 = 37.0;
/// Standard red-cell 2,3-DPG, 5 mmol/L (the reference value of the
/// Siggaard-Andersen 1984 model, `cDPG - 5`).
pub const STANDARD_DPG_MMOL_PER_L: f64 = 5.0;
/// Standard whole-blood base excess, 0 mmol/L (definitional).
pub const STANDARD_BASE_EXCESS_MMOL_PER_L: f64 = 0.0;

/// Hard lower limit of plasma pH accepted (design input rules: pH outside 6.0-8.5 is refused).
pub const PH_MIN: f64 = 6.0;
/// Hard upper limit of plasma pH accepted (design input rules).
pub const PH_MAX: f64 = 8.5;
/// Hard upper limit of PCO2, mmHg: above barometric pressure at sea level is not a blood gas
/// (our judgement; the lower limit is "greater than zero").
pub const PCO2_MAX_MMHG: f64 = 760.0;
/// Hard lower limit of blood temperature, °C (our judgement: below this blood is not liquid
/// and no model applies).
pub const TEMPERATURE_MIN_CELSIUS: f64 = 0.0;
/// Hard upper limit of blood temperature, °C (our judgement: far above any survivable value).
pub const TEMPERATURE_MAX_CELSIUS: f64 = 50.0;
/// Hard upper limit of red-cell 2,3-DPG, mmol/L (our judgement: about four times the
/// normal value; the Dash 2016 DPG polynomial stops rising near 24.9 mmol/L).
pub const DPG_MAX_MMOL_PER_L: f64 = 20.0;
/// Hard limit of the magnitude of base excess, mmol/L (our judgement).
pub const BASE_EXCESS_LIMIT_MMOL_PER_L: f64 = 50.0;

/// One of the conditions that shift the dissociation curve, in the order of the
/// proto `ShiftFactor` enum.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Condition {
    /// Plasma pH.
    Ph,
    /// Carbon dioxide tension.
    Pco2,
    /// Blood temperature.
    Temperature,
    /// Red-cell 2,3-diphosphoglycerate.
    Dpg,
    /// Whole-blood base excess.
    BaseExcess,
    /// Carboxyhaemoglobin fraction.
    Cohb,
    /// Methaemoglobin fraction.
    Methb,
    /// Fetal haemoglobin fraction.
    Hbf,
}

impl Condition {
    /// All conditions, in proto order.
    pub const ALL: [Condition; 8] = [
        Condition::Ph,
        Condition::Pco2,
        Condition::Temperature,
        Condition::Dpg,
        Condition::BaseExcess,
        Condition::Cohb,
        Condition::Methb,
        Condition::Hbf,
    ];

    /// The engine input this condition is reported as in errors.
    pub const fn input(self) -> Input {
        match self {
            Condition::Ph => Input::Ph,
            Condition::Pco2 => Input::Pco2,
            Condition::Temperature => Input::Temperature,
            Condition::Dpg => Input::Dpg,
            Condition::BaseExcess => Input::BaseExcess,
            Condition::Cohb => Input::Cohb,
            Condition::Methb => Input::Methb,
            Condition::Hbf => Input::Hbf,
        }
    }

    const fn bit(self) -> u8 {
        1 << (self as u8)
    }
}

/// A small set of [`Condition`]s (a bit set; `Copy`, no allocation).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Hash)]
pub struct ConditionSet(u8);

impl ConditionSet {
    /// The empty set.
    pub const EMPTY: ConditionSet = ConditionSet(0);

    /// The set holding exactly the conditions in `conditions`.
    pub const fn from_slice(conditions: &[Condition]) -> ConditionSet {
        let mut bits = 0u8;
        let mut i = 0;
        while i < conditions.len() {
            bits |= conditions[i].bit();
            i += 1;
        }
        ConditionSet(bits)
    }

    /// Whether `condition` is in the set.
    pub const fn contains(self, condition: Condition) -> bool {
        self.0 & condition.bit() != 0
    }

    /// The set with `condition` added.
    pub const fn with(self, condition: Condition) -> ConditionSet {
        ConditionSet(self.0 | condition.bit())
    }

    /// The conditions in `self` that are not in `other`.
    pub const fn difference(self, other: ConditionSet) -> ConditionSet {
        ConditionSet(self.0 & !other.0)
    }

    /// Whether the set is empty.
    pub const fn is_empty(self) -> bool {
        self.0 == 0
    }

    /// Number of conditions in the set.
    pub const fn len(self) -> usize {
        self.0.count_ones() as usize
    }

    /// The conditions in the set, in proto order.
    pub fn iter(self) -> ConditionSetIter {
        self.into_iter()
    }
}

impl IntoIterator for ConditionSet {
    type Item = Condition;
    type IntoIter = ConditionSetIter;

    fn into_iter(self) -> ConditionSetIter {
        ConditionSetIter { set: self, next: 0 }
    }
}

/// Iterator over a [`ConditionSet`], in proto order.
#[derive(Debug, Clone, Copy)]
pub struct ConditionSetIter {
    set: ConditionSet,
    next: usize,
}

impl Iterator for ConditionSetIter {
    type Item = Condition;

    fn next(&mut self) -> Option<Condition> {
        while self.next < Condition::ALL.len() {
            let condition = Condition::ALL[self.next];
            self.next += 1;
            if self.set.contains(condition) {
                return Some(condition);
            }
        }
        None
    }
}

/// The conditions a curve is evaluated at; `None` means the standard value.
///
/// Engine units: pH units, mmHg, °C, mmol/L, fractions 0-1 (COHb and MetHb as
/// fractions of total haemoglobin; HbF as the fraction of haemoglobin that is fetal).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Conditions {
    /// Plasma pH.
    pub ph: Option<f64>,
    /// Carbon dioxide tension, mmHg.
    pub pco2_mmhg: Option<f64>,
    /// Blood temperature, °C (the temperature the PO2 refers to).
    pub temperature_celsius: Option<f64>,
    /// Red-cell 2,3-DPG, mmol/L.
    pub dpg_mmol_per_l: Option<f64>,
    /// Whole-blood base excess, mmol/L.
    pub base_excess_mmol_per_l: Option<f64>,
    /// Carboxyhaemoglobin, fraction of total haemoglobin.
    pub cohb_fraction: Option<f64>,
    /// Methaemoglobin, fraction of total haemoglobin.
    pub methb_fraction: Option<f64>,
    /// Fetal haemoglobin, fraction of total haemoglobin.
    pub hbf_fraction: Option<f64>,
}

impl Conditions {
    /// Standard conditions: nothing given.
    pub const STANDARD: Conditions = Conditions {
        ph: None,
        pco2_mmhg: None,
        temperature_celsius: None,
        dpg_mmol_per_l: None,
        base_excess_mmol_per_l: None,
        cohb_fraction: None,
        methb_fraction: None,
        hbf_fraction: None,
    };

    /// pH, or [`STANDARD_PH`].
    #[inline]
    pub fn ph(&self) -> f64 {
        self.ph.unwrap_or(STANDARD_PH)
    }

    /// PCO2 in mmHg, or [`STANDARD_PCO2_MMHG`].
    #[inline]
    pub fn pco2_mmhg(&self) -> f64 {
        self.pco2_mmhg.unwrap_or(STANDARD_PCO2_MMHG)
    }

    /// Temperature in °C, or [`STANDARD_TEMPERATURE_CELSIUS`].
    #[inline]
    pub fn temperature_celsius(&self) -> f64 {
        self.temperature_celsius
            .unwrap_or(STANDARD_TEMPERATURE_CELSIUS)
    }

    /// 2,3-DPG in mmol/L, or [`STANDARD_DPG_MMOL_PER_L`].
    #[inline]
    pub fn dpg_mmol_per_l(&self) -> f64 {
        self.dpg_mmol_per_l.unwrap_or(STANDARD_DPG_MMOL_PER_L)
    }

    /// Base excess in mmol/L, or [`STANDARD_BASE_EXCESS_MMOL_PER_L`].
    #[inline]
    pub fn base_excess_mmol_per_l(&self) -> f64 {
        self.base_excess_mmol_per_l
            .unwrap_or(STANDARD_BASE_EXCESS_MMOL_PER_L)
    }

    /// COHb fraction, or 0.
    #[inline]
    pub fn cohb_fraction(&self) -> f64 {
        self.cohb_fraction.unwrap_or(0.0)
    }

    /// MetHb fraction, or 0.
    #[inline]
    pub fn methb_fraction(&self) -> f64 {
        self.methb_fraction.unwrap_or(0.0)
    }

    /// HbF fraction, or 0.
    #[inline]
    pub fn hbf_fraction(&self) -> f64 {
        self.hbf_fraction.unwrap_or(0.0)
    }

    /// Whether `condition` was given (is `Some`).
    #[inline]
    pub fn is_given(&self, condition: Condition) -> bool {
        match condition {
            Condition::Ph => self.ph.is_some(),
            Condition::Pco2 => self.pco2_mmhg.is_some(),
            Condition::Temperature => self.temperature_celsius.is_some(),
            Condition::Dpg => self.dpg_mmol_per_l.is_some(),
            Condition::BaseExcess => self.base_excess_mmol_per_l.is_some(),
            Condition::Cohb => self.cohb_fraction.is_some(),
            Condition::Methb => self.methb_fraction.is_some(),
            Condition::Hbf => self.hbf_fraction.is_some(),
        }
    }

    /// The conditions that were given.
    pub fn given(&self) -> ConditionSet {
        let mut set = ConditionSet::EMPTY;
        for condition in Condition::ALL {
            if self.is_given(condition) {
                set = set.with(condition);
            }
        }
        set
    }

    /// These conditions with only `condition` kept (all others standard).
    pub fn only(&self, condition: Condition) -> Conditions {
        let mut out = Conditions::STANDARD;
        match condition {
            Condition::Ph => out.ph = self.ph,
            Condition::Pco2 => out.pco2_mmhg = self.pco2_mmhg,
            Condition::Temperature => out.temperature_celsius = self.temperature_celsius,
            Condition::Dpg => out.dpg_mmol_per_l = self.dpg_mmol_per_l,
            Condition::BaseExcess => out.base_excess_mmol_per_l = self.base_excess_mmol_per_l,
            Condition::Cohb => out.cohb_fraction = self.cohb_fraction,
            Condition::Methb => out.methb_fraction = self.methb_fraction,
            Condition::Hbf => out.hbf_fraction = self.hbf_fraction,
        }
        out
    }

    /// Refuse NaN, infinities and physically impossible values, naming the input.
    ///
    /// Hard limits: pH [`PH_MIN`]-[`PH_MAX`]; 0 < PCO2 <= [`PCO2_MAX_MMHG`];
    /// temperature [`TEMPERATURE_MIN_CELSIUS`]-[`TEMPERATURE_MAX_CELSIUS`];
    /// 0 <= DPG <= [`DPG_MAX_MMOL_PER_L`]; |BE| <= [`BASE_EXCESS_LIMIT_MMOL_PER_L`];
    /// each fraction 0-1; COHb + MetHb must leave some haemoglobin able to bind
    /// oxygen (sum below 1), else [`PhysiologyError::Inconsistent`].
    pub fn validate(&self) -> Result<(), PhysiologyError> {
        if let Some(ph) = self.ph {
            require_within(ph, Input::Ph, PH_MIN, PH_MAX)?;
        }
        if let Some(pco2) = self.pco2_mmhg {
            let pco2 = require_finite(pco2, Input::Pco2)?;
            if pco2 <= 0.0 || pco2 > PCO2_MAX_MMHG {
                return Err(PhysiologyError::OutOfRange {
                    input: Input::Pco2,
                    value: pco2,
                    min: f64::MIN_POSITIVE,
                    max: PCO2_MAX_MMHG,
                });
            }
        }
        if let Some(t) = self.temperature_celsius {
            require_within(
                t,
                Input::Temperature,
                TEMPERATURE_MIN_CELSIUS,
                TEMPERATURE_MAX_CELSIUS,
            )?;
        }
        if let Some(dpg) = self.dpg_mmol_per_l {
            require_within(dpg, Input::Dpg, 0.0, DPG_MAX_MMOL_PER_L)?;
        }
        if let Some(be) = self.base_excess_mmol_per_l {
            require_within(
                be,
                Input::BaseExcess,
                -BASE_EXCESS_LIMIT_MMOL_PER_L,
                BASE_EXCESS_LIMIT_MMOL_PER_L,
            )?;
        }
        if let Some(f) = self.cohb_fraction {
            require_within(f, Input::Cohb, 0.0, 1.0)?;
        }
        if let Some(f) = self.methb_fraction {
            require_within(f, Input::Methb, 0.0, 1.0)?;
        }
        if let Some(f) = self.hbf_fraction {
            require_within(f, Input::Hbf, 0.0, 1.0)?;
        }
        if self.cohb_fraction() + self.methb_fraction() >= 1.0 {
            return Err(PhysiologyError::Inconsistent {
                input: if self.methb_fraction.is_some() {
                    Input::Methb
                } else {
                    Input::Cohb
                },
                reason: "carboxy- and methaemoglobin fractions sum to 1 or more, leaving no haemoglobin to bind oxygen",
            });
        }
        Ok(())
    }
}
