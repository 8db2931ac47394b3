//! The Hill equation with caller-set P50 and n, presets, and our documented
//! shift scheme for conditions.
//!
//! Source: Hill AV. The possible effects of the aggregation of the molecules of
//! haemoglobin on its dissociation curves. *J Physiol* 1910;40(Suppl):iv–vii (from
//! memory). Adult n "usually 2.7": Severinghaus JW, *J Appl Physiol: Respir Environ
//! Exerc Physiol* 1979;46(3):599–602 (revised text).
//!
//! # Shift scheme (ours, documented)
//!
//! With conditions, the P50 is moved and the shape (n) kept:
//!
//! ```text
//! log10 P50(c) = log10 P50 + 0.40*(7.40 - pH) + 0.06*log10(PCO2/40)
//!                          + 0.024*(T - 37) + (0.07/ln 10)*(DPG - 5)
//! ```
//!
//! pH, PCO2 and temperature use Kelman's virtual-PO2 factors (Kelman GR, *J Appl
//! Physiol* 1966;21(4):1375–1376, as commonly reproduced), 2,3-DPG the coefficient of
//! Siggaard-Andersen O, Wimberley PD, Göthgen I, Siggaard-Andersen M, *Clin Chem*
//! 1984;30(10):1646–1651 (0.07 ln per mmol/L). COHb acts through the Haldane relation
//! as for every haemoglobin model. The myoglobin preset uses no shift scheme (no
//! Bohr or DPG effect), and then reports every given condition as not modelled.

use super::curve::{logit_of, Curve, ModelInfo, ValidatedRange};
use super::kelman;
use crate::physiology::conditions::{
    Condition, ConditionSet, Conditions, STANDARD_DPG_MMOL_PER_L, STANDARD_PCO2_MMHG, STANDARD_PH,
    STANDARD_TEMPERATURE_CELSIUS,
};
use crate::physiology::error::{require_positive, Input, PhysiologyError};
use std::f64::consts::LN_10;

/// 2,3-DPG coefficient of the shift scheme, ln P50 per mmol/L (Siggaard-Andersen 1984).
pub const DPG_LN_PER_MMOL_PER_L: f64 = 0.07;
/// Largest Hill coefficient accepted (our judgement: four binding sites bound n by 4).
pub const HILL_N_MAX: f64 = 4.0;

/// Whether the Hill curve moves with the conditions.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HillShift {
    /// Shifted through the documented blood shift scheme (module docs).
    BloodScheme,
    /// Not shifted (myoglobin): every given condition is reported as not modelled.
    None,
}

/// Hill equation with P50 (mmHg, at standard conditions) and coefficient n.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hill {
    /// P50 at standard conditions, mmHg.
    pub p50_mmhg: f64,
    /// Hill coefficient n (dimensionless, 0 < n <= [`HILL_N_MAX`]).
    pub n: f64,
    /// How conditions move the curve.
    pub shift: HillShift,
}

impl Hill {
    /// Adult whole blood: P50 26.8 mmHg, n 2.7 (Severinghaus 1979 revised text: n
    /// "usually 2.7"; PMC5336584 Fig. 5 legend: P50 26.8 mmHg).
    pub const ADULT: Hill = Hill {
        p50_mmhg: 26.8,
        n: 2.7,
        shift: HillShift::BloodScheme,
    };
    /// Fetal haemoglobin: P50 19.5 mmHg (within the 18–20 mmHg given by educational
    /// sources, methods.md §4), n 2.7 assumed (the adult value).
    pub const FETAL: Hill = Hill {
        p50_mmhg: 19.5,
        n: 2.7,
        shift: HillShift::BloodScheme,
    };
    /// Myoglobin: hyperbolic (n = 1), P50 2.8 mmHg at 37 °C (from memory; about 2 Torr
    /// per Wikibooks *Structural Biochemistry*), no shift.
    pub const MYOGLOBIN: Hill = Hill {
        p50_mmhg: 2.8,
        n: 1.0,
        shift: HillShift::None,
    };

    /// A Hill curve with caller-set P50 (mmHg) and n, shifted by the blood scheme.
    pub fn new(p50_mmhg: f64, n: f64) -> Result<Hill, PhysiologyError> {
        let hill = Hill {
            p50_mmhg,
            n,
            shift: HillShift::BloodScheme,
        };
        hill.check()?;
        Ok(hill)
    }

    fn check(&self) -> Result<(), PhysiologyError> {
        require_positive(self.p50_mmhg, Input::P50)?;
        let n = require_positive(self.n, Input::HillN)?;
        if n > HILL_N_MAX {
            return Err(PhysiologyError::OutOfRange {
                input: Input::HillN,
                value: n,
                min: f64::MIN_POSITIVE,
                max: HILL_N_MAX,
            });
        }
        Ok(())
    }

    /// Validate parameters and `conditions`, and prepare the curve.
    pub(crate) fn at(&self, conditions: &Conditions) -> Result<HillCurve, PhysiologyError> {
        self.check()?;
        conditions.validate()?;
        let p50 = match self.shift {
            HillShift::BloodScheme => self.p50_mmhg * (LN_10 * shift_log10(conditions)).exp(),
            HillShift::None => self.p50_mmhg,
        };
        Ok(HillCurve {
            p50,
            n: self.n,
            honours_cohb: self.shift == HillShift::BloodScheme,
        })
    }
}

/// The shift scheme's log10 P50 shift at `conditions`.
///
/// # Formula
///
/// ```text
/// Δlog10 P50 = 0.40*(7.40 - pH) + 0.06*log10(PCO2/40) + 0.024*(T - 37) + (0.07/ln 10)*(DPG - 5)
/// ```
///
/// pH units, PCO2 in mmHg, T in °C, DPG in mmol/L. Sources in the module docs
/// (Kelman GR, *J Appl Physiol* 1966;21(4):1375–1376; Siggaard-Andersen O et al.,
/// *Clin Chem* 1984;30(10):1646–1651).
pub fn shift_log10(conditions: &Conditions) -> f64 {
    // Only the given terms are evaluated (an absent term is exactly zero).
    let mut shift = 0.0;
    if let Some(ph) = conditions.ph {
        shift += kelman::BOHR_LOG10_PER_PH * (STANDARD_PH - ph);
    }
    if let Some(pco2) = conditions.pco2_mmhg {
        shift += kelman::CO2_LOG10_PER_LOG10_PCO2 * (pco2 / STANDARD_PCO2_MMHG).log10();
    }
    if let Some(t) = conditions.temperature_celsius {
        shift += kelman::TEMPERATURE_LOG10_PER_CELSIUS * (t - STANDARD_TEMPERATURE_CELSIUS);
    }
    if let Some(dpg) = conditions.dpg_mmol_per_l {
        shift += DPG_LN_PER_MMOL_PER_L / LN_10 * (dpg - STANDARD_DPG_MMOL_PER_L);
    }
    shift
}

/// Saturation from the Hill equation.
///
/// # Formula
///
/// ```text
/// S = P^n / (P^n + P50^n)      ⇔   ln(S/(1 - S)) = n*(ln P - ln P50)
/// ```
///
/// `P`, `P50` in mmHg; `n` dimensionless; `S` fraction.
///
/// Hill AV. *J Physiol* 1910;40(Suppl):iv–vii (from memory).
pub fn hill_saturation(po2_mmhg: f64, p50_mmhg: f64, n: f64) -> Result<f64, PhysiologyError> {
    let p = super::curve::check_po2(po2_mmhg)?;
    let curve = Hill {
        p50_mmhg,
        n,
        shift: HillShift::None,
    }
    .at(&Conditions::STANDARD)?;
    if p == 0.0 {
        return Ok(0.0);
    }
    curve.saturation(p)
}

/// Inverse Hill equation.
///
/// # Formula
///
/// ```text
/// P = P50 * (S/(1 - S))^(1/n)
/// ```
///
/// `S` strictly inside (0, 1); `P`, `P50` in mmHg. Hill AV. *J Physiol*
/// 1910;40(Suppl):iv–vii (from memory).
pub fn hill_tension_mmhg(saturation: f64, p50_mmhg: f64, n: f64) -> Result<f64, PhysiologyError> {
    let s = super::curve::check_inverse_saturation(saturation)?;
    Hill {
        p50_mmhg,
        n,
        shift: HillShift::None,
    }
    .at(&Conditions::STANDARD)?
    .tension(s)
}

/// Hill curve with its conditions applied.
#[derive(Debug, Clone, Copy)]
pub(crate) struct HillCurve {
    p50: f64,
    n: f64,
    honours_cohb: bool,
}

impl Curve for HillCurve {
    #[inline]
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.n * (po2_mmhg / self.p50).ln())
    }
    #[inline]
    fn slope(&self, _po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.n)
    }
    #[inline]
    fn saturation(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        let r = (po2_mmhg / self.p50).powf(self.n);
        Ok(r / (1.0 + r))
    }
    #[inline]
    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        Ok(self.p50 * (logit_of(saturation) / self.n).exp())
    }
    fn honours_cohb(&self) -> bool {
        self.honours_cohb
    }
}

/// Sources followed (published in the catalog).
pub const NOTES: &str = "The Hill equation with caller-set P50 and n. Conditions move P50 by our \
documented scheme (Kelman 1966's factors for pH, PCO2 and temperature; Siggaard-Andersen 1984's 0.07 per \
mmol/L for 2,3-DPG), keeping n. The adult preset (P50 26.8 mmHg, n 2.7) lies within 0.02 in S of \
Severinghaus Eq. 1 between 20 and 100 mmHg; a fixed n departs most at the two ends of the curve.";

/// Catalog entry of [`Hill`].
pub static INFO: ModelInfo = ModelInfo {
    id: "hill",
    version: "1.0.0",
    title: "Hill equation with caller-set P50 and n (presets: adult, fetal, myoglobin), shifted by a documented scheme",
    reference: "Hill AV. The possible effects of the aggregation of the molecules of haemoglobin on its \
dissociation curves. J Physiol 1910;40(Suppl):iv–vii. Shift scheme: Kelman GR. J Appl Physiol \
1966;21(4):1375–1376 (pH, PCO2, temperature factors); Siggaard-Andersen O, Wimberley PD, Göthgen I, \
Siggaard-Andersen M. Clin Chem 1984;30(10):1646–1651 (2,3-DPG).",
    doi: "",
    honoured_conditions: &[
        Condition::Ph,
        Condition::Pco2,
        Condition::Temperature,
        Condition::Dpg,
        Condition::Cohb,
    ],
    // A fixed n is least accurate at the ends of the curve (methods.md §4); we state
    // 10-90 % saturation as the range where n = 2.7 describes whole blood (our judgement).
    validated_ranges: &[ValidatedRange {
        input: Input::Saturation,
        min: 0.1,
        max: 0.9,
    }],
    is_default: false,
    notes: NOTES,
};

super::prepared::impl_dissociation_model!(
    Hill,
    &INFO,
    fn unmodelled_conditions(&self, conditions: &Conditions) -> ConditionSet {
        match self.shift {
            HillShift::BloodScheme => conditions.given().difference(INFO.honoured()),
            HillShift::None => conditions.given(),
        }
    }
);
