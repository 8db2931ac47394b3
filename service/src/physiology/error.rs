//! The one error type of the physiology engine.
//!
//! Every refusal names the input it concerns, so that the API layer can turn it
//! into a field path without guessing.

use std::fmt;

/// An input of a physiology function, named in the trade's words.
///
/// The API layer maps each variant to a field path of the request; the engine
/// only needs to say *which* quantity was unusable.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Input {
    /// Oxygen partial pressure (PO2).
    Po2,
    /// Oxygen saturation, as a fraction.
    Saturation,
    /// Plasma pH.
    Ph,
    /// Carbon dioxide partial pressure (PCO2).
    Pco2,
    /// Blood or body temperature.
    Temperature,
    /// Red-cell 2,3-diphosphoglycerate concentration.
    Dpg,
    /// Whole-blood base excess.
    BaseExcess,
    /// Carboxyhaemoglobin fraction.
    Cohb,
    /// Methaemoglobin fraction.
    Methb,
    /// Fetal haemoglobin fraction.
    Hbf,
    /// A caller-set P50 (Hill model).
    P50,
    /// A caller-set Hill coefficient n.
    HillN,
    /// Total haemoglobin concentration.
    Hemoglobin,
    /// Hüfner factor (mL O2 per g Hb).
    HufnerFactor,
    /// Venous oxygen saturation.
    VenousSaturation,
    /// Venous oxygen partial pressure.
    VenousPo2,
    /// Cardiac output.
    CardiacOutput,
    /// Inspired oxygen fraction.
    Fio2,
    /// Barometric pressure.
    BarometricPressure,
    /// Arterial carbon dioxide partial pressure.
    Paco2,
    /// Arterial oxygen partial pressure.
    Pao2,
    /// Alveolar oxygen partial pressure (PAO2), when given directly.
    AlveolarPo2,
    /// Respiratory quotient (exchange ratio).
    RespiratoryQuotient,
    /// Pulse-oximetry saturation.
    Spo2,
    /// Mean airway pressure.
    MeanAirwayPressure,
    /// The temperature at which a blood gas was measured.
    MeasuredTemperature,
    /// The temperature a blood gas is to be corrected to.
    TargetTemperature,
    /// A measured (PO2, saturation) pair used for P50 estimation.
    MeasuredPairs,
}

impl Input {
    /// A stable, lower_snake_case name for the input.
    pub fn name(self) -> &'static str {
        match self {
            Input::Po2 => "po2",
            Input::Saturation => "saturation",
            Input::Ph => "ph",
            Input::Pco2 => "pco2",
            Input::Temperature => "temperature",
            Input::Dpg => "dpg",
            Input::BaseExcess => "base_excess",
            Input::Cohb => "cohb",
            Input::Methb => "methb",
            Input::Hbf => "hbf",
            Input::P50 => "p50",
            Input::HillN => "hill_n",
            Input::Hemoglobin => "hemoglobin",
            Input::HufnerFactor => "hufner_factor",
            Input::VenousSaturation => "venous_saturation",
            Input::VenousPo2 => "venous_po2",
            Input::CardiacOutput => "cardiac_output",
            Input::Fio2 => "fio2",
            Input::BarometricPressure => "barometric_pressure",
            Input::Paco2 => "paco2",
            Input::Pao2 => "pao2",
            Input::AlveolarPo2 => "alveolar_po2",
            Input::RespiratoryQuotient => "respiratory_quotient",
            Input::Spo2 => "spo2",
            Input::MeanAirwayPressure => "mean_airway_pressure",
            Input::MeasuredTemperature => "measured_temperature",
            Input::TargetTemperature => "target_temperature",
            Input::MeasuredPairs => "measured_pairs",
        }
    }
}

impl fmt::Display for Input {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// Why the engine refused to compute.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum PhysiologyError {
    /// The input was NaN or infinite.
    NotFinite {
        /// The offending input.
        input: Input,
    },
    /// The input lay outside the range where the quantity has meaning
    /// (a hard limit, for example a negative pressure or a saturation of 1
    /// given to an inverse).
    OutOfRange {
        /// The offending input.
        input: Input,
        /// The value received, in the function's documented unit.
        value: f64,
        /// Smallest accepted value (inclusive unless the function says otherwise).
        min: f64,
        /// Largest accepted value (inclusive unless the function says otherwise).
        max: f64,
    },
    /// The model's equation is undefined or meaningless at this input, although
    /// the input itself is physically possible (for example Kelman's rational
    /// function above a virtual PO2 of 8949.9 mmHg, where it exceeds 1).
    OutsideModelDomain {
        /// The offending input.
        input: Input,
        /// The value received (for a virtual PO2, the virtual value).
        value: f64,
        /// The limit of the model's domain that was crossed.
        limit: f64,
        /// The model id, e.g. `kelman-1966`.
        model: &'static str,
    },
    /// The input is possible but carries no usable information for this
    /// computation (for example a saturation on the flat top of the curve
    /// given for P50 estimation).
    NotInformative {
        /// The offending input.
        input: Input,
        /// A short English reason.
        reason: &'static str,
    },
    /// Inputs that are each acceptable but inconsistent together (for
    /// example dyshaemoglobin fractions that sum past 1).
    Inconsistent {
        /// The input reported as the offender.
        input: Input,
        /// A short English reason.
        reason: &'static str,
    },
}

impl PhysiologyError {
    /// The input the error concerns.
    pub fn input(&self) -> Input {
        match self {
            PhysiologyError::NotFinite { input }
            | PhysiologyError::OutOfRange { input, .. }
            | PhysiologyError::OutsideModelDomain { input, .. }
            | PhysiologyError::NotInformative { input, .. }
            | PhysiologyError::Inconsistent { input, .. } => *input,
        }
    }
}

impl fmt::Display for PhysiologyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            PhysiologyError::NotFinite { input } => write!(f, "{input} must be a finite number"),
            PhysiologyError::OutOfRange {
                input, min, max, ..
            } => write!(f, "{input} must lie between {min} and {max}"),
            PhysiologyError::OutsideModelDomain {
                input,
                limit,
                model,
                ..
            } => write!(
                f,
                "{input} is outside the domain of model {model} (limit {limit})"
            ),
            PhysiologyError::NotInformative { input, reason } => {
                write!(f, "{input} carries no usable information: {reason}")
            }
            PhysiologyError::Inconsistent { input, reason } => {
                write!(f, "{input} is inconsistent with the other inputs: {reason}")
            }
        }
    }
}

impl std::error::Error for PhysiologyError {}

/// Refuse NaN and infinities for `input`.
///
/// The first line of almost every engine function.
#[inline]
pub fn require_finite(value: f64, input: Input) -> Result<f64, PhysiologyError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(PhysiologyError::NotFinite { input })
    }
}

/// Refuse NaN, infinities, and values outside `[min, max]` for `input`.
#[inline]
pub fn require_within(
    value: f64,
    input: Input,
    min: f64,
    max: f64,
) -> Result<f64, PhysiologyError> {
    let value = require_finite(value, input)?;
    if value < min || value > max {
        Err(PhysiologyError::OutOfRange {
            input,
            value,
            min,
            max,
        })
    } else {
        Ok(value)
    }
}

/// Refuse NaN, infinities, zero and negative values for `input`.
#[inline]
pub fn require_positive(value: f64, input: Input) -> Result<f64, PhysiologyError> {
    let value = require_finite(value, input)?;
    if value > 0.0 {
        Ok(value)
    } else {
        Err(PhysiologyError::OutOfRange {
            input,
            value,
            min: f64::MIN_POSITIVE,
            max: f64::INFINITY,
        })
    }
}
