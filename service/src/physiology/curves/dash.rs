//! Dash, Korman & Bassingthwaighte 2016: P50 from red-cell pH, PCO2, 2,3-DPG and
//! temperature, with a PO2-dependent Hill coefficient.
//!
//! Source: Dash RK, Korman B, Bassingthwaighte JB. Simple accurate mathematical
//! models of blood HbO2 and HbCO2 dissociation curves at varied physiological
//! conditions: evaluation and comparison with other models. *Eur J Appl Physiol*
//! 2016;116(1):97–113. doi:10.1007/s00421-015-3228-3. Coefficients (Eqs. 6, 9a–9d,
//! 10, 11 and Table 1) as commonly reproduced in code; the paper's text was not
//! checked (note its CO2 coefficient 0.1273 is three times the 2010 value 0.0428).
//!
//! Conditions: plasma pH is converted to red-cell pH by pHrbc = 0.795·pHpl + 1.357
//! (attributed to Siggaard-Andersen 1971, as used with the 2016 equations). When
//! 2,3-DPG is not given the model's own standard, 4.65 mmol/L, is used.

use super::curve::{invert_by_logit, Curve, ModelInfo, ValidatedRange};
use super::prepared::impl_dissociation_model;
use crate::physiology::conditions::{Condition, Conditions};
use crate::physiology::error::{Input, PhysiologyError};
use std::f64::consts::LN_10;

/// Standard P50, mmHg.
pub const P50_STANDARD_MMHG: f64 = 26.8;
/// Standard red-cell pH.
pub const PH_RBC_STANDARD: f64 = 7.24;
/// Standard PCO2, mmHg.
pub const PCO2_STANDARD_MMHG: f64 = 40.0;
/// Standard red-cell 2,3-DPG, mol/L.
pub const DPG_STANDARD_MOL_PER_L: f64 = 4.65e-3;
/// Standard temperature, °C.
pub const TEMPERATURE_STANDARD_CELSIUS: f64 = 37.0;
/// Plasma-to-red-cell pH slope: pHrbc = 0.795·pHpl + 1.357.
pub const PH_RBC_SLOPE: f64 = 0.795;
/// Plasma-to-red-cell pH intercept.
pub const PH_RBC_INTERCEPT: f64 = 1.357;

/// Eq. 9a coefficients of dpH, dpH², dpH³ (mmHg).
pub const PH_COEFFICIENTS: [f64; 3] = [-25.535, 10.646, -1.764];
/// Eq. 9b coefficients of dC, dC² (mmHg per mmHg, per mmHg²).
pub const CO2_COEFFICIENTS: [f64; 2] = [1.273e-1, 1.083e-4];
/// Eq. 9c coefficients of dD, dD² (mmHg per mol/L, per (mol/L)²).
pub const DPG_COEFFICIENTS: [f64; 2] = [795.63, -19_660.89];
/// Eq. 9d coefficients of dT, dT², dT³ (mmHg per °C, °C², °C³).
pub const TEMPERATURE_COEFFICIENTS: [f64; 3] = [1.435, 4.163e-2, 6.86e-4];

/// Eq. 11 / Table 1: nH = α - β·10^(-PO2/γ), α.
pub const HILL_ALPHA: f64 = 2.82;
/// Eq. 11 / Table 1: β.
pub const HILL_BETA: f64 = 1.20;
/// Eq. 11 / Table 1: γ, mmHg.
pub const HILL_GAMMA_MMHG: f64 = 29.25;

/// Dash, Korman & Bassingthwaighte 2016 (model id `dash-2016`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Dash2016;

/// Sources followed and their disagreements (published in the catalog).
pub const NOTES: &str = "Follows the 2016 paper's equations (9a-9d, 10, 11, Table 1) as transcribed by \
independent reimplementations: plasma pH to red-cell pH by 0.795 x pH + 1.357; PCO2 term 0.1273 and \
1.083e-4; temperature term 1.435, 4.163e-2, 6.86e-4; nH = 2.82 - 1.20 x 10^(-PO2/29.25). The authors' own \
published 2016 code differs: red-cell pH = plasma pH + log10(0.69) (P50 at pH 7.0 38.87 against 36.05 \
mmHg here, at pH 7.2 32.38 against 31.14, at pH 7.6 22.13 against 23.00; at pH 7.4 26.83 against 26.80); \
PCO2 term 1.7 x (0.0428, 3.64e-5), i.e. 0.0728 mmHg per mmHg (P50 at PCO2 60 mmHg 28.31 against 29.39, \
at 20 mmHg 25.40 against 24.30); temperature term 0.98 x (1.4945, 0.04335, 0.0007) (P50 at 39 C 29.94 \
against 29.84, at 33 C 21.60 against 21.68); nH constants 2.8, 1.2, 29.2 (at most 0.0018 in S, near 13 \
mmHg). All differences together change S at standard conditions by at most 0.0021. We follow the paper \
because it is the peer-reviewed description the model id names; the paper's full text was not available \
to us (abstract only), so its coefficients are those two independent transcriptions agree on.";

/// Catalog entry of [`Dash2016`].
pub static INFO: ModelInfo = ModelInfo {
    id: "dash-2016",
    version: "1.0.0",
    title: "Dash, Korman & Bassingthwaighte 2016: P50 from red-cell pH, PCO2, 2,3-DPG, temperature; PO2-dependent Hill coefficient",
    reference: "Dash RK, Korman B, Bassingthwaighte JB. Simple accurate mathematical models of blood HbO2 and \
HbCO2 dissociation curves at varied physiological conditions: evaluation and comparison with other models. \
Eur J Appl Physiol 2016;116(1):97–113. Coefficients as commonly reproduced; primary text not checked.",
    doi: "10.1007/s00421-015-3228-3",
    honoured_conditions: &[
        Condition::Ph,
        Condition::Pco2,
        Condition::Temperature,
        Condition::Dpg,
        Condition::Cohb,
    ],
    // Physiological ranges, our judgement (the fitted ranges were not checked in the paper).
    validated_ranges: &[
        ValidatedRange {
            input: Input::Ph,
            min: 6.8,
            max: 7.8,
        },
        ValidatedRange {
            input: Input::Pco2,
            min: 10.0,
            max: 100.0,
        },
        ValidatedRange {
            input: Input::Temperature,
            min: 25.0,
            max: 42.0,
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

/// P50 of the Dash 2016 model at `conditions`, mmHg.
///
/// # Formula
///
/// ```text
/// pHrbc    = 0.795*pHpl + 1.357
/// P50,ΔpH  = P50,S - 25.535*dpH + 10.646*dpH^2 - 1.764*dpH^3     dpH = pHrbc - 7.24
/// P50,ΔCO2 = P50,S + 1.273e-1*dC + 1.083e-4*dC^2                  dC  = PCO2 - 40 (mmHg)
/// P50,ΔDPG = P50,S + 795.63*dD - 19660.89*dD^2                    dD  = DPG - 4.65e-3 (mol/L)
/// P50,ΔT   = P50,S + 1.435*dT + 4.163e-2*dT^2 + 6.86e-4*dT^3      dT  = T - 37 (°C)
/// P50      = P50,S * Π (P50,Δi / P50,S),   P50,S = 26.8 mmHg
/// ```
///
/// A factor that is not positive (temperature below about 3.9 °C) is refused with
/// `OutsideModelDomain` naming its input.
///
/// Dash RK, Korman B, Bassingthwaighte JB. *Eur J Appl Physiol* 2016;116(1):97–113,
/// Eqs. 9a–9d and 10 (coefficients as commonly reproduced; primary text not checked).
pub fn p50_mmhg(conditions: &Conditions) -> Result<f64, PhysiologyError> {
    conditions.validate()?;
    p50_unchecked(conditions)
}

fn p50_unchecked(c: &Conditions) -> Result<f64, PhysiologyError> {
    let mut p50 = P50_STANDARD_MMHG;
    if let Some(ph) = c.ph {
        let d = PH_RBC_SLOPE * ph + PH_RBC_INTERCEPT - PH_RBC_STANDARD;
        let [c1, c2, c3] = PH_COEFFICIENTS;
        p50 *= factor(d * (c1 + d * (c2 + d * c3)), Input::Ph, ph)?;
    }
    if let Some(pco2) = c.pco2_mmhg {
        let d = pco2 - PCO2_STANDARD_MMHG;
        let [c1, c2] = CO2_COEFFICIENTS;
        p50 *= factor(d * (c1 + d * c2), Input::Pco2, pco2)?;
    }
    if let Some(dpg) = c.dpg_mmol_per_l {
        let d = dpg * 1e-3 - DPG_STANDARD_MOL_PER_L;
        let [c1, c2] = DPG_COEFFICIENTS;
        p50 *= factor(d * (c1 + d * c2), Input::Dpg, dpg)?;
    }
    if let Some(t) = c.temperature_celsius {
        let d = t - TEMPERATURE_STANDARD_CELSIUS;
        let [c1, c2, c3] = TEMPERATURE_COEFFICIENTS;
        p50 *= factor(d * (c1 + d * (c2 + d * c3)), Input::Temperature, t)?;
    }
    Ok(p50)
}

/// (P50,S + change)/P50,S, refusing a non-positive factor.
#[inline]
fn factor(change_mmhg: f64, input: Input, value: f64) -> Result<f64, PhysiologyError> {
    let f = (P50_STANDARD_MMHG + change_mmhg) / P50_STANDARD_MMHG;
    if f > 0.0 {
        Ok(f)
    } else {
        Err(PhysiologyError::OutsideModelDomain {
            input,
            value,
            limit: 0.0,
            model: INFO.id,
        })
    }
}

/// The PO2-dependent Hill coefficient of Dash 2016.
///
/// # Formula
///
/// ```text
/// nH = α - β * 10^(-PO2/γ),   α = 2.82, β = 1.20, γ = 29.25 mmHg
/// ```
///
/// `PO2` in mmHg (>= 0). Dash RK, Korman B, Bassingthwaighte JB. *Eur J Appl Physiol*
/// 2016;116(1):97–113, Eq. 11 and Table 1 (as commonly reproduced).
pub fn hill_coefficient(po2_mmhg: f64) -> Result<f64, PhysiologyError> {
    let p = super::curve::check_po2(po2_mmhg)?;
    Ok(n_h(p).0)
}

/// nH and dnH/dPO2.
#[inline]
fn n_h(p: f64) -> (f64, f64) {
    let e = (-p * (LN_10 / HILL_GAMMA_MMHG)).exp();
    (
        HILL_ALPHA - HILL_BETA * e,
        HILL_BETA * e * LN_10 / HILL_GAMMA_MMHG,
    )
}

/// The Dash 2016 curve at a P50.
///
/// # Formula
///
/// ```text
/// S = (PO2/P50)^nH / (1 + (PO2/P50)^nH),   nH = nH(PO2)
/// ```
///
/// Dash RK, Korman B, Bassingthwaighte JB. *Eur J Appl Physiol* 2016;116(1):97–113,
/// Eq. 6 (as commonly reproduced).
#[derive(Debug, Clone, Copy)]
pub(crate) struct DashCurve {
    p50: f64,
}

impl Dash2016 {
    /// Validate `conditions` and prepare the curve.
    pub(crate) fn at(&self, conditions: &Conditions) -> Result<DashCurve, PhysiologyError> {
        conditions.validate()?;
        let p50 = p50_unchecked(conditions)?;
        Ok(DashCurve { p50 })
    }
}

impl Curve for DashCurve {
    #[inline]
    fn logit(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(n_h(po2_mmhg).0 * (po2_mmhg / self.p50).ln())
    }
    #[inline]
    fn slope(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        Ok(self.logit_and_slope(po2_mmhg)?.1)
    }
    #[inline]
    fn logit_and_slope(&self, po2_mmhg: f64) -> Result<(f64, f64), PhysiologyError> {
        let (n, dn) = n_h(po2_mmhg);
        let l = (po2_mmhg / self.p50).ln();
        Ok((n * l, n + l * po2_mmhg * dn))
    }
    #[inline]
    fn saturation(&self, po2_mmhg: f64) -> Result<f64, PhysiologyError> {
        let (n, _) = n_h(po2_mmhg);
        let r = (po2_mmhg / self.p50).powf(n);
        Ok(r / (1.0 + r))
    }
    fn tension(&self, saturation: f64) -> Result<f64, PhysiologyError> {
        // Start from the Hill inverse with the mid-curve coefficient at P50.
        let guess = self.p50 * (super::curve::logit_of(saturation) / n_h(self.p50).0).exp();
        invert_by_logit(self, saturation, guess, INFO.id)
    }
}

impl_dissociation_model!(Dash2016, &INFO);
