//! Siggaard-Andersen 1984: the tanh model of the dissociation curve with its pH,
//! base-excess, 2,3-DPG and temperature terms.
//!
//! Source: Siggaard-Andersen O, Wimberley PD, Göthgen I, Siggaard-Andersen M. A
//! mathematical model of the hemoglobin-oxygen dissociation curve of human blood and
//! of the oxygen partial pressure as a function of temperature. *Clin Chem*
//! 1984;30(10):1646–1651 (doi 10.1093/clinchem/30.10.1646 from memory).
//!
//! Conditions: the pH term is at constant base excess (1.04 ln per pH unit); the
//! abstract does not say at which temperature pH is taken: we use the pH as given
//! (our judgement; documented in the catalog). The later (1990) update form with a
//! separate PCO2 term is not implemented (its coefficients are unverified).

use super::curve::{logit_of, Curve, ModelInfo, ValidatedRange};
use super::prepared::impl_dissociation_model;
use crate::physiology::conditions::{
    Condition, Conditions, STANDARD_DPG_MMOL_PER_L, STANDARD_PH, STANDARD_TEMPERATURE_CELSIUS,
};
use crate::physiology::error::{Input, PhysiologyError};
use crate::physiology::solver::solve_increasing;
use crate::physiology::units::KPA_PER_MMHG;

/// y0 = ln(s/(1 - s)) of the reference point (≈ ln(0.867/0.133)).
pub const Y0: f64 = 1.875;
/// k0, the tanh gain.
pub const K0: f64 = 0.5343;
/// h at standard conditions (h = 3.5 + a).
pub const H_STANDARD: f64 = 3.5;
/// x0 = ln(p/kPa) of the reference point at standard conditions (≈ ln 7.00).
pub const X0_STANDARD: f64 = 1.946;
/// Temperature coefficient b per kelvin (ln).
pub const TEMPERATURE_LN_PER_KELVIN: f64 = 0.055;
/// pH coefficient of a at constant base excess (ln per pH unit).
pub const PH_LN_PER_PH: f64 = 1.04;
/// Base-excess coefficient of a (ln per mmol/L).
pub const BASE_LN_PER_MMOL_PER_L: f64 = 0.005;
/// 2,3-DPG coefficient of a (ln per mmol/L).
pub const DPG_LN_PER_MMOL_PER_L: f64 = 0.07;

/// Siggaard-Andersen et al. 1984 (model id `siggaard-andersen-1984`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct SiggaardAndersen1984;

/// Sources followed and their disagreements (published in the catalog).
pub const NOTES: &str = "The 1984 equations as printed in the Clin Chem abstract: pH at constant base \
excess (1.04 per pH unit), base excess, 2,3-DPG, temperature. The later oxygen status algorithm (model \
siggaard-andersen-1990) rounds the reference point differently (y0 1.8747 and x0 = ln 7 kPa against 1.875 \
and 1.946 here): at standard conditions the two curves differ by at most 0.00002 in S and P50 is 26.8391 \
here against 26.8397 mmHg. Its pH term is at constant PCO2 with a separate PCO2 term, so at pH 7.2 P50 is \
33.91 mmHg here against 32.72 mmHg there. pH is used as given (the abstract does not say at which \
temperature).";

/// Catalog entry of [`SiggaardAndersen1984`].
pub static INFO: ModelInfo = ModelInfo {
    id: "siggaard-andersen-1984",
    version: "1.0.0",
    title: "Siggaard-Andersen 1984 tanh model (pH at constant base excess, base excess, 2,3-DPG, temperature)",
    reference: "Siggaard-Andersen O, Wimberley PD, Göthgen I, Siggaard-Andersen M. A mathematical model of \
the hemoglobin-oxygen dissociation curve of human blood and of the oxygen partial pressure as a function of \
temperature. Clin Chem 1984;30(10):1646–1651.",
    doi: "10.1093/clinchem/30.10.1646",
    honoured_conditions: &[
        Condition::Ph,
        Condition::Temperature,
        Condition::Dpg,
        Condition::BaseExcess,
        Condition::Cohb,
    ],
    // Clinical ranges, our judgement (the abstract states none).
    validated_ranges: &[
        ValidatedRange {
            input: Input::Ph,
            min: 6.8,
            max: 7.8,
        },
        ValidatedRange {
            input: Input::Temperature,
            min: 20.0,
            max: 43.0,
        },
        ValidatedRange {
            input: Input::Dpg,
            min: 1.0,
            max: 12.0,
        },
    ],
    is_default: false,
    notes: NOTES,
};

/// The tanh curve with its conditions applied.
///
/// # Formula
///
/// ```text
/// x = ln(p/kPa),  y = ln(s/(1 - s))
/// y - y0 = (x - x0) + h*tanh(k0*(x - x0))
/// y0 = 1.875, k0 = 0.5343, h = 3.5 + a, x0 = 1.946 + a + b
/// a = 1.04*(7.4 - pH) + 0.005*cBase + 0.07*(cDPG - 5),   b = 0.055*(T/K - 310.15)
/// ```
///
/// `p`: PO2 in kPa; `s` fraction; `cBase` base excess and `cDPG` erythrocyte 2,3-DPG
/// in mmol/L; `T` in kelvin. Hill slope n = 1 + h·k0·(1 - tanh²(k0(x - x0))).
///
/// Siggaard-Andersen O, Wimberley PD, Göthgen I, Siggaard-Andersen M. *Clin Chem*
/// 1984;30(10):1646–1651.
#[derive(Debug, Clone, Copy)]
pub(crate) struct TanhCurve {
    /// x0 expressed as ln(PO2/mmHg).
    x0: f64,
    h: f64,
}

impl SiggaardAndersen1984 {
    /// Validate `conditions` and prepare the curve.
    pub(crate) fn at(&self, conditions: &Conditions) -> Result<TanhCurve, PhysiologyError> {
        conditions.validate()?;
        let a = PH_LN_PER_PH * (STANDARD_PH - conditions.ph())
            + BASE_LN_PER_MMOL_PER_L * conditions.base_excess_mmol_per_l()
            + DPG_LN_PER_MMOL_PER_L * (conditions.dpg_mmol_per_l() - STANDARD_DPG_MMOL_PER_L);
        let b = TEMPERATURE_LN_PER_KELVIN
            * (conditions.temperature_celsius() - STANDARD_TEMPERATURE_CELSIUS);
        let h = H_STANDARD + a;
        // h <= 0 would make the curve non-monotone; unreachable within the hard
        // limits of Conditions::validate (h >= 1.75), kept as a guard.
        if h <= 0.0 {
            return Err(PhysiologyError::OutsideModelDomain {
                input: Input::Ph,
                value: conditions.ph(),
                limit: 0.0,
                model: INFO.id,
            });
        }
        Ok(TanhCurve {
            // x0 moved from ln(p/kPa) to ln(PO2/mmHg): ln(p/kPa) = ln PO2 + ln(kPa per mmHg).
            x0: X0_STANDARD + a + b - KPA_PER_MMHG.ln(),
            h,
        })
    }
}

impl TanhCurve {
    #[inline]
    fn y_of_x(&self, x: f64) -> (f64, f64) {
        let d = x - self.x0;
        let t = (K0 * d).tanh();
        (Y0 + d + self.h * t, 1.0 + self.h * K0 * (1.0 - t * t))
    }
}

impl Curve for TanhCurve {
    #[inline]
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.y_of_x(po2_mmhg.ln()).0)
    }
    #[inline]
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.y_of_x(po2_mmhg.ln()).1)
    }
    #[inline]
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        Ok(self.y_of_x(po2_mmhg.ln()))
    }
    /// Inverse by safeguarded Newton in x: slope lies in [1, 1 + h·k0], so the root
    /// lies between x0 + (y - y0)/(1 + h·k0) and x0 + (y - y0), the start point.
    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        let dy = logit_of(saturation) - Y0;
        let near = self.x0 + dy / (1.0 + self.h * K0);
        let far = self.x0 + dy;
        let margin = 1e-12 * (1.0 + far.abs());
        let (lo, hi) = (near.min(far) - margin, near.max(far) + margin);
        let target = dy + Y0;
        let x = solve_increasing(
            |x| {
                let (y, dydx) = self.y_of_x(x);
                Ok((y - target, dydx))
            },
            lo,
            hi,
            near,
            PhysiologyError::OutsideModelDomain {
                input: Input::Saturation,
                value: saturation,
                limit: 0.0,
                model: INFO.id,
            },
        )?;
        Ok(x.exp())
    }
}

impl_dissociation_model!(SiggaardAndersen1984, &INFO);
