//! Kelman 1966: the seven-coefficient rational function of virtual PO2.
//!
//! Source: Kelman GR. Digital computer subroutine for the conversion of oxygen
//! tension into saturation. *J Appl Physiol* 1966;21(4):1375–1376 (title and doi
//! 10.1152/jappl.1966.21.4.1375 from memory; coefficients as commonly reproduced,
//! primary text not checked). The virtual-PO2 factors 0.024, 0.40 and 0.06 were taken
//! by Kelman from Severinghaus JW, *J Appl Physiol* 1966;21:1108–1116.
//!
//! Conditions: pH, PCO2 and PO2 must be mutually consistent: all at 37 °C, or all
//! at the blood's temperature.
//!
//! Domain: the rational function is negative for virtual PO2 below 4.661 mmHg and
//! exceeds 1 above 8949.9 mmHg (both derived from the coefficients); outside that
//! interval the model refuses with [`PhysiologyError::OutsideModelDomain`].

use super::curve::{invert_by_logit, Curve, ModelInfo, ValidatedRange};
use super::prepared::impl_dissociation_model;
use super::severinghaus;
use crate::physiology::conditions::{
    Condition, Conditions, STANDARD_PCO2_MMHG, STANDARD_PH, STANDARD_TEMPERATURE_CELSIUS,
};
use crate::physiology::error::{Input, PhysiologyError};

/// Kelman a1 (mmHg).
pub const A1: f64 = -8.532_228_9e3;
/// Kelman a2 (mmHg²).
pub const A2: f64 = 2.121_401_0e3;
/// Kelman a3 (mmHg³).
pub const A3: f64 = -6.707_398_9e1;
/// Kelman a4 (mmHg⁴).
pub const A4: f64 = 9.359_608_7e5;
/// Kelman a5 (mmHg³).
pub const A5: f64 = -3.134_625_8e4;
/// Kelman a6 (mmHg²).
pub const A6: f64 = 2.396_167_4e3;
/// Kelman a7 (mmHg).
pub const A7: f64 = -6.710_440_6e1;
/// Temperature factor of the virtual PO2, log10 per °C.
pub const TEMPERATURE_LOG10_PER_CELSIUS: f64 = 0.024;
/// Fixed-acid Bohr factor of the virtual PO2, log10 per pH unit.
pub const BOHR_LOG10_PER_PH: f64 = 0.40;
/// Specific CO2 effect, log10 P50 per log10 PCO2.
pub const CO2_LOG10_PER_LOG10_PCO2: f64 = 0.06;

/// Zero crossing of the numerator, mmHg of virtual PO2 (derived from the
/// coefficients; methods.md §3 gives 4.661).
pub const DOMAIN_MIN_VIRTUAL_MMHG: f64 = 4.661_189_645_824_274;
/// Virtual PO2 (mmHg) above which the function exceeds 1: root of
/// a4 + (a5 - a1)x + (a6 - a2)x² + (a7 - a3)x³ (derived from the coefficients).
pub const DOMAIN_MAX_VIRTUAL_MMHG: f64 = 8_949.896_498_701_184;
/// Relative margin kept from the domain ends by the inverse's search.
const DOMAIN_MARGIN: f64 = 1e-9;

/// Kelman GR 1966 (model id `kelman-1966`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Kelman1966;

/// Catalog entry of [`Kelman1966`].
pub static INFO: ModelInfo = ModelInfo {
    id: "kelman-1966",
    version: "1.0.0",
    title: "Kelman 1966 seven-coefficient rational function of virtual PO2 (pH, PCO2, temperature)",
    reference: "Kelman GR. Digital computer subroutine for the conversion of oxygen tension into saturation. \
J Appl Physiol 1966;21(4):1375–1376. Coefficients as commonly reproduced; primary text not checked.",
    doi: "10.1152/jappl.1966.21.4.1375",
    honoured_conditions: &[
        Condition::Ph,
        Condition::Pco2,
        Condition::Temperature,
        Condition::Cohb,
    ],
    // Kelman stated adequate accuracy only above about 10 mmHg (from memory).
    validated_ranges: &[ValidatedRange {
        input: Input::Po2,
        min: 10.0,
        max: 7600.0,
    }],
    is_default: false,
};

/// Kelman's virtual-PO2 multiplier.
///
/// # Formula
///
/// ```text
/// x = PO2 * 10^( 0.024*(37 - T) + 0.40*(pH - 7.40) + 0.06*log10(40/PCO2) )
/// ```
///
/// `T` in °C, `PCO2` in mmHg, pH in pH units; returns the factor x/PO2.
///
/// Kelman GR. *J Appl Physiol* 1966;21(4):1375–1376 (factors as commonly reproduced;
/// primary text not checked).
pub fn virtual_po2_factor(conditions: &Conditions) -> Result<f64, PhysiologyError> {
    conditions.validate()?;
    Ok(virtual_factor(conditions))
}

#[inline]
fn virtual_factor(c: &Conditions) -> f64 {
    // Only the given terms are evaluated (an absent term is exactly zero).
    let mut exponent = 0.0;
    if let Some(t) = c.temperature_celsius {
        exponent += TEMPERATURE_LOG10_PER_CELSIUS * (STANDARD_TEMPERATURE_CELSIUS - t);
    }
    if let Some(ph) = c.ph {
        exponent += BOHR_LOG10_PER_PH * (ph - STANDARD_PH);
    }
    if let Some(pco2) = c.pco2_mmhg {
        exponent += CO2_LOG10_PER_LOG10_PCO2 * (STANDARD_PCO2_MMHG / pco2).log10();
    }
    if exponent == 0.0 {
        1.0
    } else {
        (std::f64::consts::LN_10 * exponent).exp()
    }
}

/// Kelman's saturation at a virtual PO2.
///
/// # Formula
///
/// ```text
/// S = (a1*x + a2*x^2 + a3*x^3 + x^4) / (a4 + a5*x + a6*x^2 + a7*x^3 + x^4)
/// ```
///
/// `x`: virtual PO2 in mmHg, which must lie strictly between
/// [`DOMAIN_MIN_VIRTUAL_MMHG`] and [`DOMAIN_MAX_VIRTUAL_MMHG`] (elsewhere the
/// function leaves [0, 1] and `OutsideModelDomain` is returned); `S`: fraction.
///
/// Kelman GR. *J Appl Physiol* 1966;21(4):1375–1376 (coefficients as commonly
/// reproduced; primary text not checked).
pub fn saturation_at_virtual_po2(virtual_po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let x = super::curve::check_positive_po2(virtual_po2_mmhg)?;
    let (n, m) = parts(x)?;
    Ok(n / (n + m))
}

/// Numerator N and D - N, both positive inside the domain.
#[inline]
fn parts(x: f64) -> Result<(f64, f64), PhysiologyError> {
    if x <= DOMAIN_MIN_VIRTUAL_MMHG || x >= DOMAIN_MAX_VIRTUAL_MMHG {
        return Err(domain_error(x));
    }
    let n = x * (A1 + x * (A2 + x * (A3 + x)));
    let m = A4 + x * ((A5 - A1) + x * ((A6 - A2) + x * (A7 - A3)));
    if n > 0.0 && m > 0.0 {
        Ok((n, m))
    } else {
        Err(domain_error(x))
    }
}

fn domain_error(x: f64) -> PhysiologyError {
    PhysiologyError::OutsideModelDomain {
        input: Input::Po2,
        value: x,
        limit: if x <= 100.0 {
            DOMAIN_MIN_VIRTUAL_MMHG
        } else {
            DOMAIN_MAX_VIRTUAL_MMHG
        },
        model: INFO.id,
    }
}

/// Kelman 1966 with its virtual-PO2 factor applied.
#[derive(Debug, Clone, Copy)]
pub(crate) struct KelmanCurve {
    factor: f64,
}

impl Kelman1966 {
    /// Validate `conditions` and prepare the curve.
    pub(crate) fn at(&self, conditions: &Conditions) -> Result<KelmanCurve, PhysiologyError> {
        conditions.validate()?;
        Ok(KelmanCurve {
            factor: virtual_factor(conditions),
        })
    }
}

impl Curve for KelmanCurve {
    #[inline]
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        let (n, m) = parts(po2_mmhg * self.factor)?;
        Ok(n.ln() - m.ln())
    }

    #[inline]
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.logit_and_slope(po2_mmhg)?.1)
    }

    #[inline]
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        let x = po2_mmhg * self.factor;
        let (n, m) = parts(x)?;
        // x·dN/dx and x·dM/dx.
        let xdn = x * (A1 + x * (2.0 * A2 + x * (3.0 * A3 + 4.0 * x)));
        let xdm = x * ((A5 - A1) + x * (2.0 * (A6 - A2) + x * 3.0 * (A7 - A3)));
        Ok((n.ln() - m.ln(), xdn / n - xdm / m))
    }

    #[inline]
    fn saturation(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        let (n, m) = parts(po2_mmhg * self.factor)?;
        Ok(n / (n + m))
    }

    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        // Eq. 1 of Severinghaus 1979 is close to Kelman's curve: a good first guess.
        let guess = severinghaus::tension_from_saturation_standard_mmhg(saturation)? / self.factor;
        invert_by_logit(self, saturation, guess, INFO.id)
    }

    fn saturation_at_zero(&self) -> Result<f64, PhysiologyError> {
        Err(domain_error(0.0))
    }

    fn max_po2_mmhg(&self) -> f64 {
        DOMAIN_MAX_VIRTUAL_MMHG * (1.0 - DOMAIN_MARGIN) / self.factor
    }

    fn min_po2_mmhg(&self) -> f64 {
        DOMAIN_MIN_VIRTUAL_MMHG * (1.0 + DOMAIN_MARGIN) / self.factor
    }
}

impl_dissociation_model!(Kelman1966, &INFO);
