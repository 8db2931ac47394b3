//! Unit conversion constants and functions.
//!
//! The engine computes in the units the published equations use: pressures in
//! mmHg, temperatures in degrees Celsius, haemoglobin in g/dL, fractions 0-1,
//! concentrations in mmol/L. Everything else is converted at the edge with the
//! constants below.

/// Pascals in one conventional millimetre of mercury, exactly:
/// 13.5951 g/cm³ × 9.80665 m/s² × 1 mm = 133.322387415 Pa.
///
/// Source: the conventional definition (mercury density 13.5951 g/cm³ under
/// standard gravity); the general-purpose Rust crate `dimensioned` carries the
/// same constant as `MMHG`. Not the torr (101325/760 Pa = 133.322368 Pa).
pub const PASCALS_PER_MMHG: f64 = 133.322387415;

/// Kilopascals in one millimetre of mercury (derived from [`PASCALS_PER_MMHG`]).
pub const KPA_PER_MMHG: f64 = PASCALS_PER_MMHG / 1000.0;

/// Pascals in one centimetre of water (conventional, 98.0665 Pa:
/// 1 g/cm³ × 9.80665 m/s² × 1 cm).
pub const PASCALS_PER_CMH2O: f64 = 98.0665;

/// Molar mass of one haem-bearing haemoglobin monomer, g/mol: one quarter of
/// the tetramer's 64 458 g/mol (ICSH 1995 value, from memory).
///
/// This is the basis of every mmol/L haemoglobin value in the service:
/// 1 g/dL = 10 g/L = 10/16.1145 mmol/L = 0.62056 mmol/L (monomer).
pub const HEMOGLOBIN_MONOMER_MOLAR_MASS_G_PER_MOL: f64 = 64_458.0 / 4.0;

/// Offset between the Celsius and Kelvin scales (definitional).
pub const KELVIN_AT_ZERO_CELSIUS: f64 = 273.15;

/// Convert kPa to mmHg.
#[inline]
pub fn mmhg_from_kpa(kpa: f64) -> f64 {
    kpa / KPA_PER_MMHG
}

/// Convert mmHg to kPa.
#[inline]
pub fn kpa_from_mmhg(mmhg: f64) -> f64 {
    mmhg * KPA_PER_MMHG
}

/// Convert cmH2O to mmHg.
#[inline]
pub fn mmhg_from_cmh2o(cmh2o: f64) -> f64 {
    cmh2o * PASCALS_PER_CMH2O / PASCALS_PER_MMHG
}

/// Convert mmHg to cmH2O.
#[inline]
pub fn cmh2o_from_mmhg(mmhg: f64) -> f64 {
    mmhg * PASCALS_PER_MMHG / PASCALS_PER_CMH2O
}

/// Convert haemoglobin g/dL to g/L.
#[inline]
pub fn hemoglobin_g_per_l_from_g_per_dl(g_per_dl: f64) -> f64 {
    g_per_dl * 10.0
}

/// Convert haemoglobin g/L to g/dL.
#[inline]
pub fn hemoglobin_g_per_dl_from_g_per_l(g_per_l: f64) -> f64 {
    g_per_l / 10.0
}

/// Convert haemoglobin g/dL to mmol/L on the monomer (per haem) basis.
#[inline]
pub fn hemoglobin_mmol_per_l_from_g_per_dl(g_per_dl: f64) -> f64 {
    // g/dL -> g/L (x10) -> mol/L (/ M) -> mmol/L (x1000)
    g_per_dl * 10.0 * 1000.0 / HEMOGLOBIN_MONOMER_MOLAR_MASS_G_PER_MOL
}

/// Convert haemoglobin mmol/L (monomer basis) to g/dL.
#[inline]
pub fn hemoglobin_g_per_dl_from_mmol_per_l(mmol_per_l: f64) -> f64 {
    mmol_per_l * HEMOGLOBIN_MONOMER_MOLAR_MASS_G_PER_MOL / (10.0 * 1000.0)
}

/// Convert degrees Fahrenheit to degrees Celsius.
#[inline]
pub fn celsius_from_fahrenheit(fahrenheit: f64) -> f64 {
    (fahrenheit - 32.0) * 5.0 / 9.0
}

/// Convert degrees Celsius to degrees Fahrenheit.
#[inline]
pub fn fahrenheit_from_celsius(celsius: f64) -> f64 {
    celsius * 9.0 / 5.0 + 32.0
}

/// Convert degrees Celsius to kelvin.
#[inline]
pub fn kelvin_from_celsius(celsius: f64) -> f64 {
    celsius + KELVIN_AT_ZERO_CELSIUS
}

/// Convert a percentage to a fraction.
#[inline]
pub fn fraction_from_percent(percent: f64) -> f64 {
    percent / 100.0
}

/// Convert a fraction to a percentage.
#[inline]
pub fn percent_from_fraction(fraction: f64) -> f64 {
    fraction * 100.0
}

#[cfg(test)]
mod tests {
    use super::*;

    // Check values: reference/methods.md section 13, derived from the exact
    // conventional mmHg (133.322387415 Pa).
    #[test]
    fn pressure_conversions_match_the_exact_mmhg() {
        assert!((kpa_from_mmhg(40.0) - 5.332_895_5).abs() < 1e-6);
        assert!((mmhg_from_kpa(5.33) - 39.978_28).abs() < 1e-4);
        assert!((mmhg_from_kpa(1.0) - 7.500_615_758).abs() < 1e-9);
        assert!((mmhg_from_kpa(kpa_from_mmhg(123.4)) - 123.4).abs() < 1e-12);
    }

    #[test]
    fn hemoglobin_conversions_use_the_monomer_basis() {
        // 15 g/dL = 9.3084 mmol/L monomer (methods.md section 13, derived).
        assert!((hemoglobin_mmol_per_l_from_g_per_dl(15.0) - 9.3084).abs() < 1e-4);
        assert!((hemoglobin_g_per_dl_from_mmol_per_l(1.0) - 1.61145).abs() < 1e-5);
    }

    #[test]
    fn temperature_conversions_are_definitional() {
        // 37 C = 98.6 F = 310.15 K (definitional).
        assert!((fahrenheit_from_celsius(37.0) - 98.6).abs() < 1e-12);
        assert!((celsius_from_fahrenheit(98.6) - 37.0).abs() < 1e-12);
        assert!((kelvin_from_celsius(37.0) - 310.15).abs() < 1e-12);
    }

    #[test]
    fn cmh2o_round_trips() {
        // 1 cmH2O = 98.0665 / 133.322387415 mmHg = 0.735559 mmHg (derived).
        assert!((mmhg_from_cmh2o(1.0) - 0.735_559).abs() < 1e-6);
        assert!((cmh2o_from_mmhg(mmhg_from_cmh2o(17.0)) - 17.0).abs() < 1e-12);
    }
}
