//! The Adair four-step equation with the constant set of Keener & Sneyd.
//!
//! Sources: Adair GS. The hemoglobin system. VI. The oxygen dissociation curve of
//! hemoglobin. *J Biol Chem* 1925;63:529–545 (pages from memory). Constants:
//! Keener J, Sneyd J. *Mathematical Physiology*, 3rd ed., Springer, Ch. 14 §14.2.2
//! (companion material); their experimental origin was not established.
//!
//! The constant set describes the standard curve only: no condition other than
//! COHb (through the Haldane relation) moves it.

use super::curve::{invert_by_logit, Curve, ModelInfo, ValidatedRange};
use super::prepared::impl_dissociation_model;
use super::severinghaus;
use crate::physiology::conditions::{Condition, Conditions};
use crate::physiology::error::{Input, PhysiologyError};

/// First stepwise dissociation constant K1, mmHg (Keener & Sneyd).
pub const K1_MMHG: f64 = 45.9;
/// Second stepwise dissociation constant K2, mmHg (Keener & Sneyd).
pub const K2_MMHG: f64 = 23.9;
/// Third stepwise dissociation constant K3, mmHg (Keener & Sneyd).
pub const K3_MMHG: f64 = 243.1;
/// Fourth stepwise dissociation constant K4, mmHg (Keener & Sneyd).
pub const K4_MMHG: f64 = 1.52;

/// β1 = 1/K1, mmHg⁻¹.
const B1: f64 = 1.0 / K1_MMHG;
/// β2 = 1/(K1·K2), mmHg⁻².
const B2: f64 = B1 / K2_MMHG;
/// β3 = 1/(K1·K2·K3), mmHg⁻³.
const B3: f64 = B2 / K3_MMHG;
/// β4 = 1/(K1·K2·K3·K4), mmHg⁻⁴.
const B4: f64 = B3 / K4_MMHG;

/// The Adair equation (model id `adair`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Adair;

/// Sources followed (published in the catalog).
pub const NOTES: &str = "Adair's four-step equation with the constants K1..K4 = 45.9, 23.9, 243.1, \
1.52 mmHg used by Keener and Sneyd (Mathematical Physiology, 3rd ed., ch. 14, and their published \
companion code, which gives the same curve); the experimental origin of these four constants was not \
established. Standard conditions only: no condition other than carbon monoxide moves the curve.";

/// Catalog entry of [`Adair`].
pub static INFO: ModelInfo = ModelInfo {
    id: "adair",
    version: "1.0.0",
    title: "Adair four-step equation, Keener & Sneyd constant set (standard conditions)",
    reference: "Adair GS. The hemoglobin system. VI. The oxygen dissociation curve of hemoglobin. \
J Biol Chem 1925;63:529–545. Constants K1..K4 = 45.9, 23.9, 243.1, 1.52 mmHg from Keener J, Sneyd J. \
Mathematical Physiology, 3rd ed., Springer, Ch. 14 §14.2.2.",
    doi: "",
    honoured_conditions: &[Condition::Cohb],
    // Adair fits to whole blood were no better than about ±1 % S (Severinghaus 1979,
    // revised text); we state the clinical PO2 range as validated (our judgement).
    validated_ranges: &[ValidatedRange {
        input: Input::Po2,
        min: 5.0,
        max: 150.0,
    }],
    is_default: false,
    notes: NOTES,
};

/// Fractional saturation Y from the Adair equation.
///
/// # Formula
///
/// ```text
/// Y = (β1*P + 2*β2*P^2 + 3*β3*P^3 + 4*β4*P^4) / ( 4*(1 + β1*P + β2*P^2 + β3*P^3 + β4*P^4) )
/// β1 = 1/K1, β2 = 1/(K1 K2), β3 = 1/(K1 K2 K3), β4 = 1/(K1 K2 K3 K4)
/// ```
///
/// `P`: PO2 in mmHg; `K1..K4`: stepwise dissociation constants in mmHg; `Y` fraction.
///
/// Adair GS. *J Biol Chem* 1925;63:529–545; constants from Keener J, Sneyd J.
/// *Mathematical Physiology*, 3rd ed., Springer, Ch. 14 §14.2.2.
pub fn adair_saturation(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let p = super::curve::check_po2(po2_mmhg)?;
    let (n, m) = parts(p);
    Ok(n / (n + m))
}

/// Numerator N = Σ iβiP^i and 4·denominator - N = 4 + 3β1P + 2β2P² + β3P³.
#[inline]
fn parts(p: f64) -> (f64, f64) {
    let n = p * (B1 + p * (2.0 * B2 + p * (3.0 * B3 + p * 4.0 * B4)));
    let m = 4.0 + p * (3.0 * B1 + p * (2.0 * B2 + p * B3));
    (n, m)
}

/// The Adair curve (no conditions other than COHb apply).
#[derive(Debug, Clone, Copy)]
pub(crate) struct AdairCurve;

impl Adair {
    /// Validate `conditions` and prepare the curve.
    pub(crate) fn at(&self, conditions: &Conditions) -> Result<AdairCurve, PhysiologyError> {
        conditions.validate()?;
        Ok(AdairCurve)
    }
}

impl Curve for AdairCurve {
    #[inline]
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        let (n, m) = parts(po2_mmhg);
        Ok(n.ln() - m.ln())
    }
    #[inline]
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.logit_and_slope(po2_mmhg)?.1)
    }
    #[inline]
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        let p = po2_mmhg;
        let (n, m) = parts(p);
        let pdn = p * (B1 + p * (4.0 * B2 + p * (9.0 * B3 + p * 16.0 * B4)));
        let pdm = p * (3.0 * B1 + p * (4.0 * B2 + p * 3.0 * B3));
        Ok((n.ln() - m.ln(), pdn / n - pdm / m))
    }
    #[inline]
    fn saturation(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        let (n, m) = parts(po2_mmhg);
        Ok(n / (n + m))
    }
    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        let guess = severinghaus::tension_from_saturation_standard_mmhg(saturation)?;
        invert_by_logit(self, saturation, guess, INFO.id)
    }
}

impl_dissociation_model!(Adair, &INFO);
