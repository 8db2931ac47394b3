//! UCUM units at the edge of the service: reading a request `Quantity` into
//! the engine's unit, and writing an engine value back in the caller's unit
//! system.
//!
//! Codes are matched case-sensitively, as UCUM's case-sensitive form requires
//! (Regenstrief UCUM specification, c/s symbols). UCUM defines both `L` and
//! `l` for the litre, so both spellings are accepted wherever a litre appears.

use oxbind_proto::v1::{Quantity, UnitSystem};

use crate::physiology::{error::Input, units as engine};

/// What a quantity measures, which fixes its engine unit and the UCUM codes
/// accepted for it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum QuantityKind {
    /// Gas partial pressure; engine unit mmHg.
    Pressure,
    /// Airway pressure; engine unit cmH2O.
    AirwayPressure,
    /// Haemoglobin concentration; engine unit g/dL (mmol/L on the monomer basis).
    Hemoglobin,
    /// Temperature; engine unit degrees Celsius.
    Temperature,
    /// A dimensionless fraction; engine unit 1 (fraction 0-1).
    Fraction,
    /// A substance concentration (2,3-DPG, base excess); engine unit mmol/L.
    Concentration,
    /// Blood flow (cardiac output); engine unit L/min.
    BloodFlow,
    /// Oxygen content (output only); engine unit mL O2 per dL blood.
    OxygenContent,
    /// Oxygen flow (delivery, consumption; output only); engine unit mL/min.
    OxygenFlow,
    /// A blood cell count (white cells); engine unit 10⁹/L.
    CellCount,
}

/// The UCUM code of the engine unit of each kind, used in error metadata
/// and in the catalog's limits table.
pub fn engine_unit(kind: QuantityKind) -> &'static str {
    match kind {
        QuantityKind::Pressure => "mm[Hg]",
        QuantityKind::AirwayPressure => "cm[H2O]",
        QuantityKind::Hemoglobin => "g/dL",
        QuantityKind::Temperature => "Cel",
        QuantityKind::Fraction => "1",
        QuantityKind::Concentration => "mmol/L",
        QuantityKind::BloodFlow => "L/min",
        QuantityKind::OxygenContent => "mL/dL",
        QuantityKind::OxygenFlow => "mL/min",
        QuantityKind::CellCount => "10*9/L",
    }
}

/// The UCUM code of the engine unit an engine input is checked in (empty
/// for dimensionless inputs and pH), for refusals that state a limit.
pub fn input_unit(input: Input) -> &'static str {
    match input {
        Input::Po2
        | Input::Pco2
        | Input::P50
        | Input::VenousPo2
        | Input::BarometricPressure
        | Input::Paco2
        | Input::Pao2
        | Input::AlveolarPo2 => "mm[Hg]",
        Input::Temperature | Input::MeasuredTemperature | Input::TargetTemperature => "Cel",
        Input::Dpg | Input::BaseExcess => "mmol/L",
        Input::Hemoglobin => "g/dL",
        Input::HufnerFactor => "mL/g",
        Input::CardiacOutput => "L/min",
        Input::MeanAirwayPressure => "cm[H2O]",
        _ => "",
    }
}

/// The UCUM codes a request may use for each kind (the litre also as `l`).
pub fn accepted_units(kind: QuantityKind) -> &'static [&'static str] {
    match kind {
        QuantityKind::Pressure => &["mm[Hg]", "kPa"],
        QuantityKind::AirwayPressure => &["cm[H2O]", "mm[Hg]", "kPa"],
        QuantityKind::Hemoglobin => &["g/dL", "g/L", "mmol/L"],
        QuantityKind::Temperature => &["Cel", "[degF]"],
        QuantityKind::Fraction => &["%", "1"],
        QuantityKind::Concentration => &["mmol/L"],
        QuantityKind::BloodFlow => &["L/min", "mL/min"],
        QuantityKind::OxygenContent => &["mL/dL", "mmol/L"],
        QuantityKind::OxygenFlow => &["mL/min", "mmol/min"],
        QuantityKind::CellCount => &["10*9/L", "10*3/uL", "/nL"],
    }
}

/// Why a unit code was not accepted.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnitRefusal {
    /// A hint when the code is a common non-UCUM spelling (`mmHg`).
    pub hint: Option<&'static str>,
}

/// Common spellings that are not UCUM codes, with the code to write instead.
const NOT_UCUM_HINTS: [(&str, &str); 10] = [
    ("mmHg", "mm[Hg]"),
    ("mmhg", "mm[Hg]"),
    ("torr", "mm[Hg]"),
    ("Torr", "mm[Hg]"),
    ("kpa", "kPa"),
    ("cmH2O", "cm[H2O]"),
    ("C", "Cel"),
    ("degC", "Cel"),
    ("F", "[degF]"),
    ("degF", "[degF]"),
];

/// Millilitres of oxygen (STPD) per millimole: the engine's constant.
const OXYGEN_ML_PER_MMOL: f64 = crate::physiology::content::O2_MOLAR_VOLUME_ML_PER_MMOL;

/// Convert `value` given in UCUM `unit` to the engine unit of `kind`.
pub fn to_engine(value: f64, unit: &str, kind: QuantityKind) -> Result<f64, UnitRefusal> {
    use QuantityKind as K;
    let converted = match (kind, unit) {
        (K::Pressure | K::AirwayPressure, "mm[Hg]") => match kind {
            K::AirwayPressure => engine::cmh2o_from_mmhg(value),
            _ => value,
        },
        (K::Pressure | K::AirwayPressure, "kPa") => {
            let mmhg = engine::mmhg_from_kpa(value);
            match kind {
                K::AirwayPressure => engine::cmh2o_from_mmhg(mmhg),
                _ => mmhg,
            }
        }
        (K::AirwayPressure, "cm[H2O]") => value,
        (K::Hemoglobin, "g/dL" | "g/dl") => value,
        (K::Hemoglobin, "g/L" | "g/l") => engine::hemoglobin_g_per_dl_from_g_per_l(value),
        (K::Hemoglobin, "mmol/L" | "mmol/l") => engine::hemoglobin_g_per_dl_from_mmol_per_l(value),
        (K::Temperature, "Cel") => value,
        (K::Temperature, "[degF]") => engine::celsius_from_fahrenheit(value),
        (K::Fraction, "1") => value,
        (K::Fraction, "%") => engine::fraction_from_percent(value),
        (K::Concentration, "mmol/L" | "mmol/l") => value,
        (K::BloodFlow, "L/min" | "l/min") => value,
        (K::BloodFlow, "mL/min" | "ml/min") => value / 1000.0,
        (K::OxygenContent, "mL/dL" | "ml/dl") => value,
        (K::OxygenContent, "mmol/L" | "mmol/l") => value * OXYGEN_ML_PER_MMOL / 10.0,
        (K::OxygenFlow, "mL/min" | "ml/min") => value,
        (K::OxygenFlow, "mmol/min") => value * OXYGEN_ML_PER_MMOL,
        // 10³ per µL and 1 per nL are both 10⁹ per L (UCUM prefixes).
        (K::CellCount, "10*9/L" | "10*9/l" | "10*3/uL" | "10*3/ul" | "/nL" | "/nl") => value,
        _ => {
            let hint = NOT_UCUM_HINTS
                .iter()
                .find(|(wrong, _)| *wrong == unit)
                .map(|(_, right)| *right);
            return Err(UnitRefusal { hint });
        }
    };
    Ok(converted)
}

/// The UCUM code `kind` is reported in under `system`.
pub fn output_unit(kind: QuantityKind, system: UnitSystem) -> &'static str {
    use QuantityKind as K;
    let si = system == UnitSystem::Si;
    match kind {
        K::Pressure => {
            if si {
                "kPa"
            } else {
                "mm[Hg]"
            }
        }
        K::AirwayPressure => "cm[H2O]",
        K::Hemoglobin => {
            if si {
                "g/L"
            } else {
                "g/dL"
            }
        }
        K::Temperature => "Cel",
        K::Fraction => "1",
        K::Concentration => "mmol/L",
        K::BloodFlow => "L/min",
        K::OxygenContent => {
            if si {
                "mmol/L"
            } else {
                "mL/dL"
            }
        }
        K::OxygenFlow => {
            if si {
                "mmol/min"
            } else {
                "mL/min"
            }
        }
        K::CellCount => "10*9/L",
    }
}

/// Convert an engine value of `kind` to the caller's unit system.
pub fn from_engine(value: f64, kind: QuantityKind, system: UnitSystem) -> Quantity {
    use QuantityKind as K;
    let unit = output_unit(kind, system);
    let value = match (kind, unit) {
        (K::Pressure, "kPa") => engine::kpa_from_mmhg(value),
        (K::Hemoglobin, "g/L") => engine::hemoglobin_g_per_l_from_g_per_dl(value),
        (K::OxygenContent, "mmol/L") => value * 10.0 / OXYGEN_ML_PER_MMOL,
        (K::OxygenFlow, "mmol/min") => value / OXYGEN_ML_PER_MMOL,
        _ => value,
    };
    Quantity {
        value,
        unit: unit.to_owned(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_accepted_code_converts() {
        for kind in [
            QuantityKind::Pressure,
            QuantityKind::AirwayPressure,
            QuantityKind::Hemoglobin,
            QuantityKind::Temperature,
            QuantityKind::Fraction,
            QuantityKind::Concentration,
            QuantityKind::BloodFlow,
            QuantityKind::OxygenContent,
            QuantityKind::OxygenFlow,
            QuantityKind::CellCount,
        ] {
            for unit in accepted_units(kind) {
                assert!(to_engine(1.0, unit, kind).is_ok(), "{unit} for {kind:?}");
            }
        }
    }

    #[test]
    fn mmhg_without_brackets_is_refused_with_a_hint() {
        let refusal = to_engine(40.0, "mmHg", QuantityKind::Pressure).unwrap_err();
        assert_eq!(refusal.hint, Some("mm[Hg]"));
    }

    #[test]
    fn codes_are_case_sensitive() {
        assert!(to_engine(5.0, "KPA", QuantityKind::Pressure).is_err());
        assert!(to_engine(37.0, "cel", QuantityKind::Temperature).is_err());
    }

    #[test]
    fn si_output_round_trips_through_the_input_reader() {
        for kind in [
            QuantityKind::Pressure,
            QuantityKind::Hemoglobin,
            QuantityKind::OxygenContent,
            QuantityKind::OxygenFlow,
        ] {
            let q = from_engine(12.345, kind, UnitSystem::Si);
            let back = to_engine(q.value, &q.unit, kind).unwrap();
            assert!((back - 12.345).abs() < 1e-12, "{kind:?}");
        }
    }

    #[test]
    fn content_in_si_uses_the_oxygen_molar_volume() {
        // 20.008 mL/dL = 200.08 mL/L = 8.9266 mmol/L at 22.414 mL/mmol
        // (derived from the ideal-gas molar volume, methods.md section 13).
        let q = from_engine(20.008, QuantityKind::OxygenContent, UnitSystem::Si);
        assert_eq!(q.unit, "mmol/L");
        assert!((q.value - 8.926_564).abs() < 1e-5, "{}", q.value);
    }
}
