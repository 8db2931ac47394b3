//! The hard input limits: one table, read by validation and by the catalog.
//!
//! A value outside its hard limit is impossible or unusable, and the request
//! is refused with INVALID_ARGUMENT. Values inside the hard limits but outside
//! a model's validated range are soft limits: they compute and draw a warning
//! (see the model descriptions in the physiology engine).

use crate::physiology::{
    conditions, content, gas_exchange, hill, temperature, uncertainty as physiology_uncertainty,
};

/// Highest partial or barometric pressure accepted, mmHg: ten standard
/// atmospheres, beyond any hyperbaric treatment (our judgement). The engine
/// itself accepts far higher tensions, so that its inverses can be checked
/// over their whole saturation range; requests cannot.
pub const PRESSURE_MAX_MMHG: f64 = 7600.0;

/// Lowest partial pressure accepted, mmHg: far below any analyser's reading,
/// and above the range where powers of the tension under- or overflow.
pub const PRESSURE_MIN_MMHG: f64 = 0.001;

/// Lowest saturation accepted by the inverse and the logit-scale fits.
pub const SATURATION_OPEN_MIN: f64 = 1e-6;

/// Highest saturation accepted by the inverse and the logit-scale fits.
pub const SATURATION_OPEN_MAX: f64 = 1.0 - 1e-6;

/// Lowest Hill coefficient accepted.
pub const HILL_N_MIN: f64 = 0.1;

/// A hard limit on one kind of input, in the engine's unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HardLimit {
    /// The kind of input, e.g. `ph`, `pressure`.
    pub input: &'static str,
    /// Request field paths it applies to (`[]` marks a repeated field).
    pub fields: &'static [&'static str],
    /// UCUM code of the unit `min` and `max` are in.
    pub unit: &'static str,
    /// Suffix of the ErrorInfo metadata keys (`min_<suffix>`, `max_<suffix>`),
    /// so the unit is in the key as AIP-193 asks.
    pub unit_key: &'static str,
    /// Lowest accepted value.
    pub min: f64,
    /// Whether `min` is accepted.
    pub min_inclusive: bool,
    /// Highest accepted value.
    pub max: f64,
    /// Whether `max` is accepted.
    pub max_inclusive: bool,
    /// The ErrorInfo reason for a value outside the limit.
    pub error_reason: &'static str,
    /// Why the limit is where it is.
    pub reason: &'static str,
}

impl HardLimit {
    /// Whether `value` (finite, in `unit`) is accepted.
    pub fn accepts(&self, value: f64) -> bool {
        let above_min = if self.min_inclusive {
            value >= self.min
        } else {
            value > self.min
        };
        let below_max = if self.max_inclusive {
            value <= self.max
        } else {
            value < self.max
        };
        above_min && below_max
    }

    /// The accepted interval in interval notation, e.g. `(0, 7600] mm[Hg]`,
    /// or `[0, no upper limit)` for a limit that only needs a finite value.
    pub fn describe(&self) -> String {
        let unit = if self.unit == "1" {
            String::new()
        } else {
            format!(" {}", self.unit)
        };
        let max = if self.max.is_infinite() {
            "no upper limit".to_owned()
        } else {
            self.max.to_string()
        };
        format!(
            "{}{}, {max}{}{unit}",
            if self.min_inclusive { "[" } else { "(" },
            self.min,
            if self.max_inclusive { "]" } else { ")" },
        )
    }
}

/// Plasma pH.
pub const PH: HardLimit = HardLimit {
    input: "ph",
    fields: &[
        "conditions.ph",
        "condition_sets[].ph",
        "pairs[].conditions.ph",
        "arterial.conditions.ph",
        "venous.conditions.ph",
        "ph",
        "sample.ph",
        "sample.results_at_37_cel.ph",
    ],
    unit: "[pH]",
    unit_key: "ph",
    min: 6.0,
    min_inclusive: true,
    max: 8.5,
    max_inclusive: true,
    error_reason: "PH_OUT_OF_RANGE",
    reason: "a blood pH outside 6.0-8.5 is not survivable; such a value is a transcription or unit error",
};

/// Oxygen and carbon dioxide partial pressures, and P50.
pub const PRESSURE: HardLimit = HardLimit {
    input: "pressure",
    fields: &[
        "po2",
        "pco2",
        "pao2",
        "paco2",
        "po2_min",
        "po2_max",
        "pairs[].po2",
        "arterial.po2",
        "venous.po2",
        "hill.p50",
        "arterial.hill.p50",
        "venous.hill.p50",
        "sample.po2",
        "sample.results_at_37_cel.po2",
    ],
    unit: "mm[Hg]",
    unit_key: "mmhg",
    min: PRESSURE_MIN_MMHG,
    min_inclusive: true,
    max: PRESSURE_MAX_MMHG,
    max_inclusive: true,
    error_reason: "PRESSURE_OUT_OF_RANGE",
    reason: "below 0.001 mm[Hg] no analyser reads and the equations lose all precision; 7600 mm[Hg] (10 atm) is beyond any hyperbaric treatment",
};

/// The carbon dioxide tension of blood conditions (the curve-shift input).
/// CorrectForTemperature's `pco2` and GasExchange's `paco2` are read by other
/// equations and keep the [`PRESSURE`] limit.
pub const CONDITIONS_PCO2: HardLimit = HardLimit {
    input: "conditions_pco2",
    fields: &[
        "conditions.pco2",
        "condition_sets[].pco2",
        "pairs[].conditions.pco2",
        "arterial.conditions.pco2",
        "venous.conditions.pco2",
        "sample.pco2",
        "sample.results_at_37_cel.pco2",
    ],
    unit: "mm[Hg]",
    unit_key: "mmhg",
    min: PRESSURE_MIN_MMHG,
    min_inclusive: true,
    max: conditions::PCO2_MAX_MMHG,
    max_inclusive: true,
    error_reason: "PCO2_OUT_OF_RANGE",
    reason: "the curve-shift equations are defined up to a CO2 tension of one atmosphere (760 mm[Hg]), far above any survivable blood value; below 0.001 mm[Hg] they lose all precision",
};

/// Barometric pressure.
pub const BAROMETRIC_PRESSURE: HardLimit = HardLimit {
    input: "barometric_pressure",
    fields: &["barometric_pressure", "sample.barometric_pressure"],
    unit: "mm[Hg]",
    unit_key: "mmhg",
    min: 150.0,
    min_inclusive: true,
    max: PRESSURE_MAX_MMHG,
    max_inclusive: true,
    error_reason: "BAROMETRIC_PRESSURE_OUT_OF_RANGE",
    reason: "below 150 mm[Hg] lies above the highest summit on Earth; above 10 atm is beyond any hyperbaric chamber",
};

/// Blood, body and measurement temperatures.
pub const TEMPERATURE: HardLimit = HardLimit {
    input: "temperature",
    fields: &[
        "conditions.temperature",
        "condition_sets[].temperature",
        "pairs[].conditions.temperature",
        "arterial.conditions.temperature",
        "venous.conditions.temperature",
        "measured_temperature",
        "target_temperature",
        "body_temperature",
        "sample.temperature",
    ],
    unit: "Cel",
    unit_key: "celsius",
    min: temperature::TEMPERATURE_MIN_CELSIUS,
    min_inclusive: true,
    max: temperature::TEMPERATURE_MAX_CELSIUS,
    max_inclusive: true,
    error_reason: "TEMPERATURE_OUT_OF_RANGE",
    reason: "10-46 Cel spans deep therapeutic hypothermia to the highest survivable fever; beyond it the value is a unit error",
};

/// A saturation given to an inverse (PO2 from saturation) or used on the
/// logit scale.
pub const SATURATION_OPEN: HardLimit = HardLimit {
    input: "saturation_open",
    fields: &["saturation_fraction", "pairs[].saturation_fraction"],
    unit: "1",
    unit_key: "fraction",
    min: SATURATION_OPEN_MIN,
    min_inclusive: true,
    max: SATURATION_OPEN_MAX,
    max_inclusive: true,
    error_reason: "SATURATION_OUT_OF_RANGE",
    reason: "PO2 is zero at saturation 0 and infinite at 1; the inverse is computed, to 1e-10 relative, for saturations from 1e-6 to 1 - 1e-6",
};

/// A measured saturation (co-oximetry or pulse oximetry).
pub const SATURATION_MEASURED: HardLimit = HardLimit {
    input: "saturation_measured",
    fields: &[
        "arterial.saturation_fraction",
        "venous.saturation_fraction",
        "sample.so2_fraction",
    ],
    unit: "1",
    unit_key: "fraction",
    min: 0.0,
    min_inclusive: true,
    max: 1.0,
    max_inclusive: true,
    error_reason: "SATURATION_OUT_OF_RANGE",
    reason: "a saturation is a fraction between 0 and 1 (send percentages with unit-less fields divided by 100)",
};

/// A pulse-oximetry saturation.
pub const SPO2: HardLimit = HardLimit {
    input: "spo2",
    fields: &["spo2_fraction", "sample.spo2_fraction"],
    unit: "1",
    unit_key: "fraction",
    min: 0.0,
    min_inclusive: false,
    max: 1.0,
    max_inclusive: true,
    error_reason: "SATURATION_OUT_OF_RANGE",
    reason: "a pulse oximeter reading is a fraction above 0 and at most 1",
};

/// Carboxyhaemoglobin and methaemoglobin fractions, each; their sum must also
/// stay below 1.
pub const DYSHEMOGLOBIN_FRACTION: HardLimit = HardLimit {
    input: "dyshemoglobin_fraction",
    fields: &[
        "conditions.cohb",
        "conditions.methb",
        "condition_sets[].cohb",
        "condition_sets[].methb",
        "pairs[].conditions.cohb",
        "pairs[].conditions.methb",
        "arterial.conditions.cohb",
        "arterial.conditions.methb",
        "venous.conditions.cohb",
        "venous.conditions.methb",
        "arterial.cohb",
        "arterial.methb",
        "venous.cohb",
        "venous.methb",
        "sample.cohb",
        "sample.methb",
    ],
    unit: "1",
    unit_key: "fraction",
    min: 0.0,
    min_inclusive: true,
    max: 1.0,
    max_inclusive: false,
    error_reason: "FRACTION_OUT_OF_RANGE",
    reason: "a fraction of total haemoglobin; COHb and MetHb together must leave some haemoglobin able to carry oxygen",
};

/// Fetal haemoglobin fraction.
pub const HBF_FRACTION: HardLimit = HardLimit {
    input: "hbf_fraction",
    fields: &[
        "conditions.hbf",
        "condition_sets[].hbf",
        "pairs[].conditions.hbf",
        "arterial.conditions.hbf",
        "venous.conditions.hbf",
        "sample.hbf",
    ],
    unit: "1",
    unit_key: "fraction",
    min: 0.0,
    min_inclusive: true,
    max: 1.0,
    max_inclusive: true,
    error_reason: "FRACTION_OUT_OF_RANGE",
    reason: "a fraction of total haemoglobin",
};

/// Red-cell 2,3-DPG.
pub const DPG: HardLimit = HardLimit {
    input: "dpg",
    fields: &[
        "conditions.dpg",
        "condition_sets[].dpg",
        "pairs[].conditions.dpg",
        "arterial.conditions.dpg",
        "venous.conditions.dpg",
    ],
    unit: "mmol/L",
    unit_key: "mmol_per_l",
    min: 0.0,
    min_inclusive: true,
    max: 20.0,
    max_inclusive: true,
    error_reason: "DPG_OUT_OF_RANGE",
    reason: "a concentration cannot be negative; red-cell 2,3-DPG above 20 mmol/L (four times normal) is a unit error",
};

/// Whole-blood base excess.
pub const BASE_EXCESS: HardLimit = HardLimit {
    input: "base_excess",
    fields: &[
        "conditions.base_excess",
        "condition_sets[].base_excess",
        "pairs[].conditions.base_excess",
        "arterial.conditions.base_excess",
        "venous.conditions.base_excess",
    ],
    unit: "mmol/L",
    unit_key: "mmol_per_l",
    min: -50.0,
    min_inclusive: true,
    max: 50.0,
    max_inclusive: true,
    error_reason: "BASE_EXCESS_OUT_OF_RANGE",
    reason:
        "a base excess beyond 50 mmol/L either way is not survivable; such a value is a unit error",
};

/// Total haemoglobin.
pub const HEMOGLOBIN: HardLimit = HardLimit {
    input: "hemoglobin",
    fields: &["hemoglobin", "sample.hemoglobin"],
    unit: "g/dL",
    unit_key: "g_per_dl",
    min: 0.0,
    min_inclusive: false,
    max: 30.0,
    max_inclusive: true,
    error_reason: "HEMOGLOBIN_OUT_OF_RANGE",
    reason: "blood without haemoglobin carries no bound oxygen; above 30 g/dL is beyond any reported polycythaemia",
};

/// Inspired oxygen fraction.
pub const FIO2: HardLimit = HardLimit {
    input: "fio2",
    fields: &["fio2", "sample.fio2"],
    unit: "1",
    unit_key: "fraction",
    min: 0.05,
    min_inclusive: true,
    max: 1.0,
    max_inclusive: true,
    error_reason: "FIO2_OUT_OF_RANGE",
    reason: "room air is 0.21 and pure oxygen 1.0; below 0.05 no one is ventilated (a percentage sent as a fraction?)",
};

/// Hill coefficient.
pub const HILL_N: HardLimit = HardLimit {
    input: "hill_n",
    fields: &["hill.n", "arterial.hill.n", "venous.hill.n"],
    unit: "1",
    unit_key: "dimensionless",
    min: HILL_N_MIN,
    min_inclusive: true,
    max: hill::HILL_N_MAX,
    max_inclusive: true,
    error_reason: "HILL_N_OUT_OF_RANGE",
    reason: "below 0.1 the curve is flat over any physiological range; the coefficient cannot exceed the four oxygen binding sites of a haemoglobin tetramer",
};

/// Hüfner factor.
pub const HUFNER_FACTOR: HardLimit = HardLimit {
    input: "hufner_factor",
    fields: &["hufner_factor_ml_per_g"],
    unit: "mL/g",
    unit_key: "ml_per_g",
    min: content::HUFNER_MIN_ML_PER_G,
    min_inclusive: true,
    max: content::HUFNER_MAX_ML_PER_G,
    max_inclusive: true,
    error_reason: "HUFNER_FACTOR_OUT_OF_RANGE",
    reason:
        "measured Hüfner factors lie near 1.34-1.37 mL/g and the theoretical value is 1.39; outside 1.30-1.40 the value is an error",
};

/// Cardiac output.
pub const CARDIAC_OUTPUT: HardLimit = HardLimit {
    input: "cardiac_output",
    fields: &["cardiac_output"],
    unit: "L/min",
    unit_key: "l_per_min",
    min: 0.0,
    min_inclusive: false,
    max: 40.0,
    max_inclusive: true,
    error_reason: "CARDIAC_OUTPUT_OUT_OF_RANGE",
    reason: "a flow must be positive; above 40 L/min exceeds elite athletes' maximal output",
};

/// Respiratory quotient.
pub const RESPIRATORY_QUOTIENT: HardLimit = HardLimit {
    input: "respiratory_quotient",
    fields: &["respiratory_quotient"],
    unit: "1",
    unit_key: "dimensionless",
    min: gas_exchange::RESPIRATORY_QUOTIENT_MIN,
    min_inclusive: true,
    max: gas_exchange::RESPIRATORY_QUOTIENT_MAX,
    max_inclusive: true,
    error_reason: "RESPIRATORY_QUOTIENT_OUT_OF_RANGE",
    reason: "whole-body exchange ratios lie near 0.7-1.0; outside 0.5-2.0 the value is an error",
};

/// Mean airway pressure.
pub const MEAN_AIRWAY_PRESSURE: HardLimit = HardLimit {
    input: "mean_airway_pressure",
    fields: &["mean_airway_pressure"],
    unit: "cm[H2O]",
    unit_key: "cmh2o",
    min: 0.0,
    min_inclusive: false,
    max: gas_exchange::MEAN_AIRWAY_PRESSURE_MAX_CMH2O,
    max_inclusive: true,
    error_reason: "MEAN_AIRWAY_PRESSURE_OUT_OF_RANGE",
    reason: "a mean airway pressure must be positive; above 200 cm[H2O] no lung is ventilated",
};

/// Points per sampled curve.
pub const CURVE_POINTS: HardLimit = HardLimit {
    input: "curve_points",
    fields: &["point_count"],
    unit: "1",
    unit_key: "points",
    min: 2.0,
    min_inclusive: true,
    max: 10_000.0,
    max_inclusive: true,
    error_reason: "POINT_COUNT_OUT_OF_RANGE",
    reason: "a curve needs two points; 10,000 keeps one response well under the message size limit",
};

/// Condition sets per SampleCurve call.
pub const CURVE_CONDITION_SETS: HardLimit = HardLimit {
    input: "curve_condition_sets",
    fields: &["condition_sets"],
    unit: "1",
    unit_key: "sets",
    min: 0.0,
    min_inclusive: true,
    max: 10.0,
    max_inclusive: true,
    error_reason: "TOO_MANY_CONDITION_SETS",
    reason: "ten curves are as many as one comparison plot can show; more would multiply the response size",
};

/// Measured pairs per EstimateP50 call.
pub const MEASURED_PAIRS: HardLimit = HardLimit {
    input: "measured_pairs",
    fields: &["pairs"],
    unit: "1",
    unit_key: "pairs",
    min: 1.0,
    min_inclusive: true,
    max: 10_000.0,
    max_inclusive: true,
    error_reason: "PAIR_COUNT_OUT_OF_RANGE",
    reason: "a P50 needs at least one measured pair; 10,000 bounds the fit's work",
};

/// Monte Carlo draws per uncertainty evaluation (one derived value).
///
/// The floor is JCGM 101:2008 clause 7.9.4's 100/(1 − p) draws at the
/// largest coverage probability accepted, 0.99 (so each tail of the
/// interval holds at least 100 draws). The ceiling is 10⁶, ten times below
/// the engine's own 10⁷ ([`crate::physiology::uncertainty::MAX_DRAWS`]):
/// JCGM 101 clause 7.2.2 says 10⁶ draws can often be expected to give a 95 %
/// interval correct to one or two significant digits, and 10⁶ draws take
/// 0.05 to 0.2 s per value on one core (10⁵ take 5 to 21 ms,
/// service/BENCHMARKS-uncertainty.md), so a GasExchange call with its five
/// values stays near a second, inside the default 10 s call timeout, and
/// holds 8 MB of draws at a time.
pub const UNCERTAINTY_DRAWS: HardLimit = HardLimit {
    input: "uncertainty_draws",
    fields: &["uncertainty.draw_count"],
    unit: "1",
    unit_key: "draws",
    min: 10_000.0,
    min_inclusive: true,
    max: 1_000_000.0,
    max_inclusive: true,
    error_reason: "DRAW_COUNT_OUT_OF_RANGE",
    reason: "JCGM 101:2008 7.9.4 asks for at least 100/(1 - p) draws, 10,000 at the largest coverage probability accepted (0.99); 10^6 draws (JCGM 101 7.2.2: often enough for a 95 % interval correct to one or two significant digits) keep a five-value call near a second on one core, inside the call timeout",
};

/// Coverage probability of an uncertainty interval.
pub const UNCERTAINTY_COVERAGE_PROBABILITY: HardLimit = HardLimit {
    input: "uncertainty_coverage_probability",
    fields: &["uncertainty.coverage_probability"],
    unit: "1",
    unit_key: "fraction",
    min: 0.5,
    min_inclusive: true,
    max: 0.99,
    max_inclusive: true,
    error_reason: "COVERAGE_PROBABILITY_OUT_OF_RANGE",
    reason: "below one half an interval says little; above 0.99 the smallest accepted Monte Carlo run (10,000 draws) no longer leaves 100 draws in each tail (JCGM 101:2008 7.9.4)",
};

/// Significant digits of a standard uncertainty, for the numerical
/// tolerance of JCGM 101's validation and stability check.
pub const UNCERTAINTY_SIGNIFICANT_DIGITS: HardLimit = HardLimit {
    input: "uncertainty_significant_digits",
    fields: &["uncertainty.significant_digits"],
    unit: "1",
    unit_key: "digits",
    min: 1.0,
    min_inclusive: true,
    max: physiology_uncertainty::evaluate::MAX_SIGNIFICANT_DIGITS as f64,
    max_inclusive: true,
    error_reason: "SIGNIFICANT_DIGITS_OUT_OF_RANGE",
    reason: "one or two significant digits of a standard uncertainty are usually meaningful (JCGM 101:2008 7.9.2); four is the engine's own limit",
};

/// Figures per uncertainty request.
pub const UNCERTAINTY_FIGURES: HardLimit = HardLimit {
    input: "uncertainty_figures",
    fields: &["uncertainty.inputs"],
    unit: "1",
    unit_key: "figures",
    min: 0.0,
    min_inclusive: true,
    max: 32.0,
    max_inclusive: true,
    error_reason: "TOO_MANY_UNCERTAINTY_FIGURES",
    reason: "one figure per input, and no request has more than 32 inputs",
};

/// The absolute part of an uncertainty figure, in the unit of the input it
/// is for.
pub const UNCERTAINTY_ABSOLUTE: HardLimit = HardLimit {
    input: "uncertainty_absolute",
    fields: &[
        "uncertainty.inputs[].standard_uncertainty.absolute",
        "uncertainty.inputs[].bound.half_width.absolute",
    ],
    unit: "1",
    unit_key: "input_unit",
    min: 0.0,
    min_inclusive: true,
    max: f64::INFINITY,
    max_inclusive: false,
    error_reason: "UNCERTAINTY_OUT_OF_RANGE",
    reason: "an uncertainty is a spread, never negative; it is stated in a unit the input's own field accepts",
};

/// The relative part of an uncertainty figure, a fraction of the input's
/// value.
pub const UNCERTAINTY_RELATIVE: HardLimit = HardLimit {
    input: "uncertainty_relative",
    fields: &[
        "uncertainty.inputs[].standard_uncertainty.relative",
        "uncertainty.inputs[].bound.half_width.relative",
    ],
    unit: "1",
    unit_key: "fraction",
    min: 0.0,
    min_inclusive: true,
    max: 1.0,
    max_inclusive: true,
    error_reason: "UNCERTAINTY_OUT_OF_RANGE",
    reason: "a relative uncertainty is a fraction of the value, never negative; beyond 100 % of the value the input is not known at all",
};

/// The coverage probability of a normal bound.
pub const UNCERTAINTY_BOUND_COVERAGE: HardLimit = HardLimit {
    input: "uncertainty_bound_coverage",
    fields: &["uncertainty.inputs[].bound.coverage_probability"],
    unit: "1",
    unit_key: "fraction",
    min: 0.0,
    min_inclusive: false,
    max: 1.0,
    max_inclusive: false,
    error_reason: "COVERAGE_PROBABILITY_OUT_OF_RANGE",
    reason: "a bound covers some but not all of a normal distribution: 0 gives no divisor and 1 an infinite one",
};

/// The coverage factor of an expanded uncertainty.
pub const UNCERTAINTY_COVERAGE_FACTOR: HardLimit = HardLimit {
    input: "uncertainty_coverage_factor",
    fields: &["uncertainty.inputs[].bound.coverage_factor"],
    unit: "1",
    unit_key: "dimensionless",
    min: 0.0,
    min_inclusive: false,
    max: f64::INFINITY,
    max_inclusive: false,
    error_reason: "COVERAGE_FACTOR_OUT_OF_RANGE",
    reason: "the standard uncertainty is the expanded uncertainty divided by k, so k must be a finite number above 0",
};

/// The top-to-base ratio of a trapezoidal bound.
pub const UNCERTAINTY_TRAPEZOID_RATIO: HardLimit = HardLimit {
    input: "uncertainty_trapezoid_ratio",
    fields: &["uncertainty.inputs[].bound.trapezoid_top_ratio"],
    unit: "1",
    unit_key: "dimensionless",
    min: 0.0,
    min_inclusive: true,
    max: 1.0,
    max_inclusive: true,
    error_reason: "TRAPEZOID_RATIO_OUT_OF_RANGE",
    reason: "a trapezoid's top lies between a point (0, the triangle) and its whole base (1, the rectangle)",
};

/// Bicarbonate (or total CO2) of a blood-gas sample.
pub const BICARBONATE: HardLimit = HardLimit {
    input: "bicarbonate",
    fields: &["sample.bicarbonate"],
    unit: "mmol/L",
    unit_key: "mmol_per_l",
    min: 0.0,
    min_inclusive: false,
    max: 100.0,
    max_inclusive: true,
    error_reason: "BICARBONATE_OUT_OF_RANGE",
    reason: "a bicarbonate or total CO2 must be positive; above 100 mmol/L no plasma value is plausible and the value is a unit error (our judgement)",
};

/// White-cell count.
pub const WHITE_CELL_COUNT: HardLimit = HardLimit {
    input: "white_cell_count",
    fields: &["sample.white_cell_count"],
    unit: "10*9/L",
    unit_key: "e9_per_l",
    min: 0.0,
    min_inclusive: true,
    max: 1000.0,
    max_inclusive: true,
    error_reason: "WHITE_CELL_COUNT_OUT_OF_RANGE",
    reason: "a count cannot be negative; above 1000 x 10^9/L is beyond any reported leukocytosis and the value is a unit error (our judgement)",
};

/// Every hard limit, in the order the catalog lists them.
pub const ALL: [&HardLimit; 33] = [
    &PH,
    &PRESSURE,
    &CONDITIONS_PCO2,
    &BAROMETRIC_PRESSURE,
    &TEMPERATURE,
    &SATURATION_OPEN,
    &SATURATION_MEASURED,
    &SPO2,
    &DYSHEMOGLOBIN_FRACTION,
    &HBF_FRACTION,
    &DPG,
    &BASE_EXCESS,
    &HEMOGLOBIN,
    &FIO2,
    &HILL_N,
    &HUFNER_FACTOR,
    &CARDIAC_OUTPUT,
    &RESPIRATORY_QUOTIENT,
    &MEAN_AIRWAY_PRESSURE,
    &CURVE_POINTS,
    &CURVE_CONDITION_SETS,
    &MEASURED_PAIRS,
    &UNCERTAINTY_DRAWS,
    &UNCERTAINTY_COVERAGE_PROBABILITY,
    &UNCERTAINTY_SIGNIFICANT_DIGITS,
    &UNCERTAINTY_FIGURES,
    &UNCERTAINTY_ABSOLUTE,
    &UNCERTAINTY_RELATIVE,
    &UNCERTAINTY_BOUND_COVERAGE,
    &UNCERTAINTY_COVERAGE_FACTOR,
    &UNCERTAINTY_TRAPEZOID_RATIO,
    &BICARBONATE,
    &WHITE_CELL_COUNT,
];
