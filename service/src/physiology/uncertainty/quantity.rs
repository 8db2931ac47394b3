//! The input quantities an uncertainty can be stated for, with their engine
//! units, their physical domains and the step used where a derivative has to
//! be taken numerically.

use crate::physiology::conditions::{
    Condition, BASE_EXCESS_LIMIT_MMOL_PER_L, DPG_MAX_MMOL_PER_L, PCO2_MAX_MMHG, PH_MAX, PH_MIN,
    TEMPERATURE_MAX_CELSIUS, TEMPERATURE_MIN_CELSIUS,
};
use crate::physiology::content::{
    HEMOGLOBIN_MAX_G_PER_DL, HUFNER_MAX_ML_PER_G, HUFNER_MIN_ML_PER_G,
};
use crate::physiology::gas_exchange::{
    FIO2_MIN_FRACTION, RESPIRATORY_QUOTIENT_MAX, RESPIRATORY_QUOTIENT_MIN,
};
use crate::physiology::temperature::PRESSURE_MAX_MMHG;

/// An input of a derived value whose uncertainty a caller may state.
///
/// Values are in the engine's units (see [`InputQuantity::unit`]): mmHg,
/// fractions 0-1, pH units, degrees Celsius, mmol/L, g/dL, mL/g.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum InputQuantity {
    /// Oxygen partial pressure of the sample the curve is evaluated for.
    Po2,
    /// Oxygen saturation (functional unless the content calculation says
    /// otherwise), fraction; for content, the arterial sample's.
    Saturation,
    /// Plasma pH (curve condition).
    Ph,
    /// Carbon dioxide partial pressure (curve condition).
    Pco2,
    /// Blood temperature (curve condition).
    Temperature,
    /// Red-cell 2,3-DPG (curve condition).
    Dpg,
    /// Whole-blood base excess (curve condition).
    BaseExcess,
    /// Carboxyhaemoglobin fraction (curve condition; for content, the
    /// arterial sample's).
    Cohb,
    /// Methaemoglobin fraction (curve condition; for content, the arterial
    /// sample's).
    Methb,
    /// Fetal haemoglobin fraction (curve condition).
    Hbf,
    /// Total haemoglobin concentration.
    Hemoglobin,
    /// Hüfner factor, mL O2 per g Hb.
    HufnerFactor,
    /// Venous oxygen saturation, fraction.
    VenousSaturation,
    /// Venous oxygen partial pressure.
    VenousPo2,
    /// Venous carboxyhaemoglobin fraction.
    VenousCohb,
    /// Venous methaemoglobin fraction.
    VenousMethb,
    /// Inspired oxygen fraction.
    Fio2,
    /// Barometric pressure.
    BarometricPressure,
    /// Arterial carbon dioxide partial pressure (alveolar gas equation).
    Paco2,
    /// Arterial oxygen partial pressure (gas-exchange indices).
    Pao2,
    /// Respiratory exchange ratio R.
    RespiratoryQuotient,
    /// Pulse-oximetry saturation, fraction.
    Spo2,
    /// Body temperature (water-vapour pressure of alveolar gas).
    BodyTemperature,
}

/// The physical domain of an input: draws outside it are not blood values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Domain {
    /// Smallest value.
    pub min: f64,
    /// Largest value.
    pub max: f64,
    /// Whether `min` itself belongs to the domain.
    pub min_inclusive: bool,
    /// Whether `max` itself belongs to the domain.
    pub max_inclusive: bool,
}

impl Domain {
    /// `[min, max]`.
    pub const fn closed(min: f64, max: f64) -> Domain {
        Domain {
            min,
            max,
            min_inclusive: true,
            max_inclusive: true,
        }
    }

    /// `(min, max]`.
    pub const fn left_open(min: f64, max: f64) -> Domain {
        Domain {
            min,
            max,
            min_inclusive: false,
            max_inclusive: true,
        }
    }

    /// `[min, max)`.
    pub const fn right_open(min: f64, max: f64) -> Domain {
        Domain {
            min,
            max,
            min_inclusive: true,
            max_inclusive: false,
        }
    }

    /// `(min, max)`.
    pub const fn open(min: f64, max: f64) -> Domain {
        Domain {
            min,
            max,
            min_inclusive: false,
            max_inclusive: false,
        }
    }

    /// Whether `x` lies in the domain (NaN never does).
    #[inline]
    pub fn contains(&self, x: f64) -> bool {
        let above = if self.min_inclusive {
            x >= self.min
        } else {
            x > self.min
        };
        let below = if self.max_inclusive {
            x <= self.max
        } else {
            x < self.max
        };
        above && below
    }
}

impl InputQuantity {
    /// Every input quantity, in declaration order.
    pub const ALL: [InputQuantity; 23] = [
        InputQuantity::Po2,
        InputQuantity::Saturation,
        InputQuantity::Ph,
        InputQuantity::Pco2,
        InputQuantity::Temperature,
        InputQuantity::Dpg,
        InputQuantity::BaseExcess,
        InputQuantity::Cohb,
        InputQuantity::Methb,
        InputQuantity::Hbf,
        InputQuantity::Hemoglobin,
        InputQuantity::HufnerFactor,
        InputQuantity::VenousSaturation,
        InputQuantity::VenousPo2,
        InputQuantity::VenousCohb,
        InputQuantity::VenousMethb,
        InputQuantity::Fio2,
        InputQuantity::BarometricPressure,
        InputQuantity::Paco2,
        InputQuantity::Pao2,
        InputQuantity::RespiratoryQuotient,
        InputQuantity::Spo2,
        InputQuantity::BodyTemperature,
    ];

    /// A stable lower_snake_case name (used in profiles and for field paths).
    pub const fn name(self) -> &'static str {
        match self {
            InputQuantity::Po2 => "po2",
            InputQuantity::Saturation => "saturation",
            InputQuantity::Ph => "ph",
            InputQuantity::Pco2 => "pco2",
            InputQuantity::Temperature => "temperature",
            InputQuantity::Dpg => "dpg",
            InputQuantity::BaseExcess => "base_excess",
            InputQuantity::Cohb => "cohb",
            InputQuantity::Methb => "methb",
            InputQuantity::Hbf => "hbf",
            InputQuantity::Hemoglobin => "hemoglobin",
            InputQuantity::HufnerFactor => "hufner_factor",
            InputQuantity::VenousSaturation => "venous_saturation",
            InputQuantity::VenousPo2 => "venous_po2",
            InputQuantity::VenousCohb => "venous_cohb",
            InputQuantity::VenousMethb => "venous_methb",
            InputQuantity::Fio2 => "fio2",
            InputQuantity::BarometricPressure => "barometric_pressure",
            InputQuantity::Paco2 => "paco2",
            InputQuantity::Pao2 => "pao2",
            InputQuantity::RespiratoryQuotient => "respiratory_quotient",
            InputQuantity::Spo2 => "spo2",
            InputQuantity::BodyTemperature => "body_temperature",
        }
    }

    /// The quantity a built-in profile for this input is written for: a
    /// profile states the accuracy of a measurement (a blood PO2, a blood
    /// PCO2), whichever sample it was measured on, so an arterial or venous
    /// PO2 takes the PO2 profiles and an arterial PCO2 the PCO2 profiles.
    pub const fn measured_as(self) -> InputQuantity {
        match self {
            InputQuantity::Pao2 | InputQuantity::VenousPo2 => InputQuantity::Po2,
            InputQuantity::Paco2 => InputQuantity::Pco2,
            other => other,
        }
    }

    /// The quantity with this [`name`](Self::name), if any.
    pub fn from_name(name: &str) -> Option<InputQuantity> {
        InputQuantity::ALL.into_iter().find(|q| q.name() == name)
    }

    /// The engine unit as a UCUM code: `mm[Hg]`, `1` (fraction), `[pH]`,
    /// `Cel`, `mmol/L`, `g/dL`, `mL/g`.
    pub const fn unit(self) -> &'static str {
        match self {
            InputQuantity::Po2
            | InputQuantity::Pco2
            | InputQuantity::VenousPo2
            | InputQuantity::BarometricPressure
            | InputQuantity::Paco2
            | InputQuantity::Pao2 => "mm[Hg]",
            InputQuantity::Saturation
            | InputQuantity::Cohb
            | InputQuantity::Methb
            | InputQuantity::Hbf
            | InputQuantity::VenousSaturation
            | InputQuantity::VenousCohb
            | InputQuantity::VenousMethb
            | InputQuantity::Fio2
            | InputQuantity::RespiratoryQuotient
            | InputQuantity::Spo2 => "1",
            InputQuantity::Ph => "[pH]",
            InputQuantity::Temperature | InputQuantity::BodyTemperature => "Cel",
            InputQuantity::Dpg | InputQuantity::BaseExcess => "mmol/L",
            InputQuantity::Hemoglobin => "g/dL",
            InputQuantity::HufnerFactor => "mL/g",
        }
    }

    /// The curve condition this quantity is, if it is one.
    pub const fn condition(self) -> Option<Condition> {
        Some(match self {
            InputQuantity::Ph => Condition::Ph,
            InputQuantity::Pco2 => Condition::Pco2,
            InputQuantity::Temperature => Condition::Temperature,
            InputQuantity::Dpg => Condition::Dpg,
            InputQuantity::BaseExcess => Condition::BaseExcess,
            InputQuantity::Cohb => Condition::Cohb,
            InputQuantity::Methb => Condition::Methb,
            InputQuantity::Hbf => Condition::Hbf,
            _ => return None,
        })
    }

    /// The input quantity of a curve condition.
    pub const fn of_condition(condition: Condition) -> InputQuantity {
        match condition {
            Condition::Ph => InputQuantity::Ph,
            Condition::Pco2 => InputQuantity::Pco2,
            Condition::Temperature => InputQuantity::Temperature,
            Condition::Dpg => InputQuantity::Dpg,
            Condition::BaseExcess => InputQuantity::BaseExcess,
            Condition::Cohb => InputQuantity::Cohb,
            Condition::Methb => InputQuantity::Methb,
            Condition::Hbf => InputQuantity::Hbf,
        }
    }

    /// The physical domain: the engine's hard limits for the quantity
    /// (the same named constants the physiology functions refuse by).
    /// A derived value may narrow it (an inverse needs a saturation strictly
    /// inside (0, 1)).
    pub fn domain(self) -> Domain {
        match self {
            InputQuantity::Po2
            | InputQuantity::VenousPo2
            | InputQuantity::Pao2
            | InputQuantity::Paco2
            | InputQuantity::BarometricPressure => Domain::left_open(0.0, PRESSURE_MAX_MMHG),
            InputQuantity::Pco2 => Domain::left_open(0.0, PCO2_MAX_MMHG),
            InputQuantity::Saturation | InputQuantity::VenousSaturation | InputQuantity::Spo2 => {
                Domain::closed(0.0, 1.0)
            }
            InputQuantity::Ph => Domain::closed(PH_MIN, PH_MAX),
            InputQuantity::Temperature => {
                Domain::closed(TEMPERATURE_MIN_CELSIUS, TEMPERATURE_MAX_CELSIUS)
            }
            InputQuantity::BodyTemperature => Domain::closed(
                crate::physiology::temperature::TEMPERATURE_MIN_CELSIUS,
                crate::physiology::temperature::TEMPERATURE_MAX_CELSIUS,
            ),
            InputQuantity::Dpg => Domain::closed(0.0, DPG_MAX_MMOL_PER_L),
            InputQuantity::BaseExcess => {
                Domain::closed(-BASE_EXCESS_LIMIT_MMOL_PER_L, BASE_EXCESS_LIMIT_MMOL_PER_L)
            }
            InputQuantity::Cohb
            | InputQuantity::Methb
            | InputQuantity::VenousCohb
            | InputQuantity::VenousMethb => Domain::right_open(0.0, 1.0),
            InputQuantity::Hbf => Domain::closed(0.0, 1.0),
            InputQuantity::Hemoglobin => Domain::closed(0.0, HEMOGLOBIN_MAX_G_PER_DL),
            InputQuantity::HufnerFactor => Domain::closed(HUFNER_MIN_ML_PER_G, HUFNER_MAX_ML_PER_G),
            InputQuantity::Fio2 => Domain::closed(FIO2_MIN_FRACTION, 1.0),
            InputQuantity::RespiratoryQuotient => {
                Domain::closed(RESPIRATORY_QUOTIENT_MIN, RESPIRATORY_QUOTIENT_MAX)
            }
        }
    }

    /// The scale below which a numerical derivative's step does not shrink
    /// (engine units): the step is [`DERIVATIVE_RELATIVE_STEP`] times the
    /// larger of |x| and this scale, so that a value of 0 (a COHb of 0, a base
    /// excess of 0) still gets a usable step. Our choice: a typical magnitude of
    /// the quantity.
    pub const fn derivative_scale(self) -> f64 {
        match self {
            InputQuantity::Po2
            | InputQuantity::VenousPo2
            | InputQuantity::Pao2
            | InputQuantity::Paco2
            | InputQuantity::Pco2 => 10.0,
            InputQuantity::BarometricPressure => 100.0,
            InputQuantity::Ph => 1.0,
            InputQuantity::Temperature | InputQuantity::BodyTemperature => 10.0,
            InputQuantity::Dpg | InputQuantity::BaseExcess => 1.0,
            InputQuantity::Hemoglobin => 1.0,
            InputQuantity::HufnerFactor => 1.0,
            InputQuantity::RespiratoryQuotient => 1.0,
            InputQuantity::Saturation
            | InputQuantity::VenousSaturation
            | InputQuantity::Spo2
            | InputQuantity::Fio2
            | InputQuantity::Cohb
            | InputQuantity::Methb
            | InputQuantity::VenousCohb
            | InputQuantity::VenousMethb
            | InputQuantity::Hbf => 0.01,
        }
    }
}

/// Relative step of a numerical derivative (see
/// [`InputQuantity::derivative_scale`]). With one Richardson step the
/// truncation error is of order h⁴ and the rounding error of order ε/h; 1e-4
/// keeps both far below 1e-10 relative for the smooth curves of the engine
/// (our choice, checked in the tests against exact derivatives).
pub const DERIVATIVE_RELATIVE_STEP: f64 = 1e-4;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_are_unique() {
        for q in InputQuantity::ALL {
            assert_eq!(InputQuantity::from_name(q.name()), Some(q));
        }
        let mut names: Vec<_> = InputQuantity::ALL.iter().map(|q| q.name()).collect();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), InputQuantity::ALL.len());
    }

    #[test]
    fn arterial_and_venous_tensions_are_measured_as_blood_tensions() {
        assert_eq!(InputQuantity::Pao2.measured_as(), InputQuantity::Po2);
        assert_eq!(InputQuantity::VenousPo2.measured_as(), InputQuantity::Po2);
        assert_eq!(InputQuantity::Paco2.measured_as(), InputQuantity::Pco2);
        assert_eq!(InputQuantity::Spo2.measured_as(), InputQuantity::Spo2);
        assert_eq!(
            InputQuantity::Saturation.measured_as(),
            InputQuantity::Saturation
        );
    }

    #[test]
    fn conditions_map_both_ways() {
        for c in Condition::ALL {
            assert_eq!(InputQuantity::of_condition(c).condition(), Some(c));
        }
    }

    #[test]
    fn domains_have_the_engine_limits() {
        assert!(InputQuantity::Ph.domain().contains(6.0));
        assert!(!InputQuantity::Ph.domain().contains(5.99));
        assert!(!InputQuantity::Po2.domain().contains(0.0));
        assert!(InputQuantity::Saturation.domain().contains(1.0));
        assert!(!InputQuantity::Cohb.domain().contains(1.0));
        assert!(!InputQuantity::Fio2.domain().contains(f64::NAN));
    }
}
