//! Kelman 1966: the seven-coefficient rational function of virtual PO2, with
//! the low-tension quadratic, joined where the two pieces meet.
//!
//! Source: Kelman GR. Digital computer subroutine for the conversion of oxygen
//! tension into saturation. *J Appl Physiol* 1966;21(4):1375–1376 (title and doi
//! 10.1152/jappl.1966.21.4.1375 from memory; the primary text could not be reached:
//! coefficients as commonly reproduced in code, the low-tension branch as described
//! in the project's issue 11 from published code we could not find). The
//! virtual-PO2 factors 0.024, 0.40 and 0.06 were taken by Kelman from Severinghaus
//! JW, *J Appl Physiol* 1966;21:1108–1116.
//!
//! Conditions: pH, PCO2 and PO2 must be mutually consistent: all at 37 °C, or all
//! at the blood's temperature.
//!
//! # The two pieces and the join (our rule, model version 1.1.0)
//!
//! Kelman's subroutine uses the quadratic L(x) = 0.003683·x + 0.000584·x² below a
//! virtual PO2 of 10 mmHg and the rational function R(x) above it. At x = 10 the
//! pieces do not meet (L = 0.09523, R = 0.08664), so a curve switched there would
//! fall by 0.0086 and have no unique inverse. The pieces cross once above 10, at
//! [`JOIN_VIRTUAL_MMHG`] = 11.2630 mmHg (S = 0.11557), derived from the
//! coefficients. We switch there: L below, R at and above. Both published pieces
//! are kept unchanged; the curve is continuous and strictly increasing (L and R
//! both increase on their pieces), so each saturation has exactly one PO2. The
//! effect against switching at 10: between virtual PO2 10 and 11.263 mmHg the
//! engine returns L instead of R, higher by at most 0.0086 (at x = 10), falling
//! to 0 at the join. The Hill slope jumps at the join from 1.86 (L) to 2.61 (R).
//! Version 1.0.0 used R alone and refused every virtual PO2 at or below its zero
//! crossing, 4.661 mmHg (it gave S = 0.0031 at 5 mmHg where L gives 0.033).
//!
//! Domain: from 0 up to the virtual PO2 where R exceeds 1, 8949.9 mmHg (derived
//! from the coefficients; far above any blood gas); above it the model refuses with
//! [`PhysiologyError::OutsideModelDomain`].

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

/// Zero crossing of the rational function's numerator, mmHg of virtual PO2
/// (derived from the coefficients; methods.md §3 gives 4.661). Below the join the
/// model uses the low-tension quadratic, so this is no longer a limit of the model.
pub const DOMAIN_MIN_VIRTUAL_MMHG: f64 = 4.661_189_645_824_274;
/// Low-tension branch, coefficient of x (per mmHg): S = b1·x + b2·x² (Kelman 1966,
/// as reproduced in published code; primary text not checked).
pub const LOW_LINEAR_PER_MMHG: f64 = 0.003_683;
/// Low-tension branch, coefficient of x² (per mmHg²).
pub const LOW_QUADRATIC_PER_MMHG2: f64 = 0.000_584;
/// Kelman's own switch point between the two pieces, mmHg of virtual PO2.
pub const KELMAN_SWITCH_VIRTUAL_MMHG: f64 = 10.0;
/// Where the two pieces meet above Kelman's switch point, mmHg of virtual PO2: the
/// root of b1·x + b2·x² = R(x) in (10, 20) (derived from the coefficients, 40-digit
/// bisection). The model switches here.
pub const JOIN_VIRTUAL_MMHG: f64 = 11.263_040_190_552_062;
/// Saturation at the join, L(x_j) = R(x_j) (derived).
pub const JOIN_SATURATION: f64 = 0.115_565_724_432_854_01;
/// Virtual PO2 (mmHg) above which the function exceeds 1: root of
/// a4 + (a5 - a1)x + (a6 - a2)x² + (a7 - a3)x³ (derived from the coefficients).
pub const DOMAIN_MAX_VIRTUAL_MMHG: f64 = 8_949.896_498_701_184;
/// Relative margin kept from the upper domain end by the inverse's search.
const DOMAIN_MARGIN: f64 = 1e-9;

/// Kelman GR 1966 (model id `kelman-1966`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Kelman1966;

/// Sources followed, the join rule and its effect (published in the catalog).
pub const NOTES: &str = "Kelman's subroutine has two pieces: the quadratic S = 0.003683 x + 0.000584 x^2 \
below a virtual PO2 of 10 mmHg and the seven-coefficient rational function above it. They do not meet at \
10 mmHg (0.0952 against 0.0866), so this engine (model version 1.1.0) switches where they cross, at \
x = 11.2630 mmHg (S 0.11557): the quadratic below, the rational function at and above. Both published \
pieces are unchanged; the curve is continuous and strictly increasing with one PO2 for each saturation. \
Effect against a switch at 10 mmHg: between virtual PO2 10 and 11.263 mmHg the saturation is the \
quadratic's, higher by at most 0.0086 (at 10 mmHg) and by 0 at the join; the Hill slope jumps there from \
1.86 to 2.61. Version 1.0.0 used the rational function alone, which falls to 0 at 4.661 mmHg (S 0.0031 at \
5 mmHg against 0.033 from the quadratic) and refused everything below. The coefficients (a1..a7, 0.024, \
0.40, 0.06) agree with independent published code; the 1966 text itself was not available to us.";

/// Catalog entry of [`Kelman1966`].
pub static INFO: ModelInfo = ModelInfo {
    id: "kelman-1966",
    version: "1.1.0",
    title: "Kelman 1966 rational function of virtual PO2 with its low-tension quadratic (pH, PCO2, temperature)",
    reference: "Kelman GR. Digital computer subroutine for the conversion of oxygen tension into saturation. \
J Appl Physiol 1966;21(4):1375–1376. Coefficients and the low-tension branch as commonly reproduced; primary text not checked.",
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
    notes: NOTES,
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

/// Kelman's saturation at a virtual PO2, both pieces joined.
///
/// # Formula
///
/// ```text
/// x <  x_j:  S = L(x) = 0.003683*x + 0.000584*x^2
/// x >= x_j:  S = R(x) = (a1*x + a2*x^2 + a3*x^3 + x^4) / (a4 + a5*x + a6*x^2 + a7*x^3 + x^4)
/// x_j = 11.2630 mmHg, where L(x_j) = R(x_j)
/// ```
///
/// `x`: virtual PO2 in mmHg, `0 <= x <` [`DOMAIN_MAX_VIRTUAL_MMHG`] (above it R
/// exceeds 1 and `OutsideModelDomain` is returned); `S`: fraction. The join rule is
/// ours (module docs).
///
/// Kelman GR. *J Appl Physiol* 1966;21(4):1375–1376 (coefficients as commonly
/// reproduced; primary text not checked).
///
/// # Errors
///
/// `NotFinite`/`OutOfRange` on [`Input::Po2`] for a negative or non-finite value;
/// `OutsideModelDomain` above [`DOMAIN_MAX_VIRTUAL_MMHG`].
///
/// # Example
///
/// ```
/// use oxbind_service::physiology::kelman::saturation_at_virtual_po2;
/// // Low-tension branch: 0.003683*5 + 0.000584*25 = 0.033015.
/// assert!((saturation_at_virtual_po2(5.0).unwrap() - 0.033015).abs() < 1e-12);
/// ```
pub fn saturation_at_virtual_po2(virtual_po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let x = super::curve::check_po2(virtual_po2_mmhg)?;
    if x < JOIN_VIRTUAL_MMHG {
        return Ok(low_branch(x));
    }
    let (n, m) = parts(x)?;
    Ok(n / (n + m))
}

/// L(x) = b1·x + b2·x².
#[inline]
fn low_branch(x: f64) -> f64 {
    x * (LOW_LINEAR_PER_MMHG + LOW_QUADRATIC_PER_MMHG2 * x)
}

/// logit L and d logit L / d ln x at x > 0.
#[inline]
fn low_logit_and_slope(x: f64) -> (f64, f64) {
    let s = low_branch(x);
    let logit = s.ln() - (-s).ln_1p();
    // x·L'(x)/L(x) = (b1 + 2·b2·x)/(b1 + b2·x); divided by (1 - L) on the Hill plot.
    let ratio = (LOW_LINEAR_PER_MMHG + 2.0 * LOW_QUADRATIC_PER_MMHG2 * x)
        / (LOW_LINEAR_PER_MMHG + LOW_QUADRATIC_PER_MMHG2 * x);
    (logit, ratio / (1.0 - s))
}

/// The inverse of L for 0 < S < L(x_j): x = 2S / (b1 + sqrt(b1² + 4·b2·S)), the
/// root of b2·x² + b1·x - S = 0 written without cancellation.
#[inline]
fn low_branch_inverse(s: f64) -> f64 {
    let b1 = LOW_LINEAR_PER_MMHG;
    2.0 * s / (b1 + (b1 * b1 + 4.0 * LOW_QUADRATIC_PER_MMHG2 * s).sqrt())
}

/// Numerator N and D - N of the rational function, both positive from the join
/// up to the upper domain end.
#[inline]
fn parts(x: f64) -> Result<(f64, f64), PhysiologyError> {
    if x >= DOMAIN_MAX_VIRTUAL_MMHG {
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
        limit: DOMAIN_MAX_VIRTUAL_MMHG,
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
        Ok(self.logit_and_slope(po2_mmhg)?.0)
    }

    #[inline]
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.logit_and_slope(po2_mmhg)?.1)
    }

    #[inline]
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        let x = po2_mmhg * self.factor;
        if x < JOIN_VIRTUAL_MMHG {
            return Ok(low_logit_and_slope(x));
        }
        let (n, m) = parts(x)?;
        // x·dN/dx and x·dM/dx.
        let xdn = x * (A1 + x * (2.0 * A2 + x * (3.0 * A3 + 4.0 * x)));
        let xdm = x * ((A5 - A1) + x * (2.0 * (A6 - A2) + x * 3.0 * (A7 - A3)));
        Ok((n.ln() - m.ln(), xdn / n - xdm / m))
    }

    #[inline]
    fn saturation(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        saturation_at_virtual_po2(po2_mmhg * self.factor)
    }

    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        if saturation < JOIN_SATURATION {
            return Ok(low_branch_inverse(saturation) / self.factor);
        }
        // Eq. 1 of Severinghaus 1979 is close to Kelman's curve: a good first guess.
        let guess = severinghaus::tension_from_saturation_standard_mmhg(saturation)?
            .max(JOIN_VIRTUAL_MMHG)
            / self.factor;
        invert_by_logit(self, saturation, guess, INFO.id)
    }

    fn max_po2_mmhg(&self) -> f64 {
        DOMAIN_MAX_VIRTUAL_MMHG * (1.0 - DOMAIN_MARGIN) / self.factor
    }
}

impl_dissociation_model!(Kelman1966, &INFO);
