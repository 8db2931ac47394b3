//! P50 estimated from measured (PO2, saturation) pairs.
//!
//! One pair gives the in-vivo P50 and the standard P50 (PO2 standardised to pH 7.40,
//! PCO2 40 mmHg, 37 °C) by the single-point Hill method and by the curve-shift ratio
//! method; two or more pairs give a least-squares fit of P50 and n on the Hill plot.
//!
//! Sources: Aberman A, Cavanilles JM, Weil MH, Shubin H. Blood P50 calculated from a
//! single measurement of pH, PO2 and SO2. *J Appl Physiol* 1975;38:171–176; Lichtman
//! MA, Murphy MS, Adamson JW. Detection of mutant hemoglobins with altered affinity
//! for oxygen — a simplified technique; Doyle DJ. A simple method to calculate P50
//! from a single blood sample, 1997, doi:10.1007/BF03356585; Severinghaus JW, *J Appl
//! Physiol: Respir Environ Exerc Physiol* 1979;46(3):599–602.
//!
//! # Cut-off
//!
//! Pairs with saturation above [`INFORMATIVE_SATURATION_MAX`] (0.97) are refused
//! ([`PhysiologyError::NotInformative`]): on the flat top of the curve a 0.001 error
//! in S is strongly amplified in P50 (derived from the slope of Severinghaus Eq. 1;
//! 0.97 is a commonly used cut-off, from memory; methods.md §12). The method is best
//! for roughly 0.2 < S < 0.9, i.e. venous blood.

use super::conditions::{
    Conditions, STANDARD_PCO2_MMHG, STANDARD_PH, STANDARD_TEMPERATURE_CELSIUS,
};
use super::curves::curve::{
    check_inverse_saturation, check_positive_po2, logit_of, DissociationModel,
};
use super::curves::dispatch::Model;
use super::curves::kelman;
use super::error::{require_finite, Input, PhysiologyError};

/// Largest saturation accepted for P50 estimation (see the module docs).
pub const INFORMATIVE_SATURATION_MAX: f64 = 0.97;
/// Hill coefficient of adult whole blood used by the single-point method, n = 2.7
/// (Severinghaus 1979 revised text: "usually 2.7").
pub const SINGLE_POINT_HILL_N: f64 = 2.7;
/// Classical constant Bohr factor, log10 PO2 per pH unit (from memory).
pub const CLASSICAL_BOHR_LOG10_PER_PH: f64 = 0.48;

/// How a measured PO2 is standardised to pH 7.40, PCO2 40 mmHg, 37 °C.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Standardisation {
    /// Kelman's virtual-PO2 factors: 0.40 per pH unit, 0.06 per log10 PCO2, 0.024 per °C
    /// (Kelman GR, *J Appl Physiol* 1966;21(4):1375–1376, as commonly reproduced).
    #[default]
    Kelman,
    /// The classical constant Bohr factor 0.48 (from memory) for pH, with Kelman's PCO2
    /// and temperature factors.
    ClassicalBohr,
}

/// A measured (PO2, functional saturation) pair with its conditions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MeasuredPair {
    /// PO2, mmHg (at the conditions' temperature).
    pub po2_mmhg: f64,
    /// Measured functional saturation, fraction.
    pub saturation: f64,
    /// pH, PCO2 and temperature of the sample (others ignored).
    pub conditions: Conditions,
}

/// Single-pair estimates, mmHg.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SinglePointP50 {
    /// The measured PO2 standardised to pH 7.40, PCO2 40 mmHg, 37 °C.
    pub standardised_po2_mmhg: f64,
    /// In-vivo P50 by the single-point Hill method.
    pub in_vivo_hill_mmhg: f64,
    /// Standard P50 by the single-point Hill method.
    pub standard_hill_mmhg: f64,
    /// In-vivo P50 by the curve-shift ratio method.
    pub in_vivo_ratio_mmhg: f64,
    /// Standard P50 by the curve-shift ratio method.
    pub standard_ratio_mmhg: f64,
}

/// Least-squares Hill fit over two or more pairs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HillFit {
    /// P50 fitted on the standardised PO2s, mmHg.
    pub p50_standard_mmhg: f64,
    /// P50 fitted on the measured PO2s (meaningful when the pairs share conditions), mmHg.
    pub p50_in_vivo_mmhg: f64,
    /// Fitted Hill coefficient n (standardised fit).
    pub n: f64,
    /// Root-mean-square residual of logit S in the standardised fit.
    pub rms_logit_residual: f64,
    /// Number of pairs used.
    pub pairs: usize,
}

/// Standardise a measured PO2 to pH 7.40, PCO2 40 mmHg, 37 °C.
///
/// # Formula
///
/// ```text
/// PO2,std = PO2 * 10^( B*(pH - 7.40) + 0.06*log10(40/PCO2) + 0.024*(37 - T) )
/// B = 0.40 (Kelman) or 0.48 (classical)
/// ```
///
/// PO2 in mmHg, PCO2 in mmHg, T in °C. Kelman GR, *J Appl Physiol* 1966;21(4):1375–1376
/// (factors as commonly reproduced); 0.48 from memory (methods.md §12).
pub fn standardised_po2_mmhg(
    po2_mmhg: f64,
    conditions: &Conditions,
    method: Standardisation,
) -> Result<f64, PhysiologyError> {
    let p = check_positive_po2(po2_mmhg)?;
    conditions.validate()?;
    let bohr = match method {
        Standardisation::Kelman => kelman::BOHR_LOG10_PER_PH,
        Standardisation::ClassicalBohr => CLASSICAL_BOHR_LOG10_PER_PH,
    };
    let exponent = bohr * (conditions.ph() - STANDARD_PH)
        + kelman::CO2_LOG10_PER_LOG10_PCO2 * (STANDARD_PCO2_MMHG / conditions.pco2_mmhg()).log10()
        + kelman::TEMPERATURE_LOG10_PER_CELSIUS
            * (STANDARD_TEMPERATURE_CELSIUS - conditions.temperature_celsius());
    Ok(p * 10f64.powf(exponent))
}

/// Refuse a saturation that cannot inform a P50 estimate.
fn check_informative(saturation: f64) -> Result<f64, PhysiologyError> {
    let s = check_inverse_saturation(saturation)?;
    if s > INFORMATIVE_SATURATION_MAX {
        return Err(PhysiologyError::NotInformative {
            input: Input::Saturation,
            reason: "saturation above 0.97 lies on the flat top of the curve, where P50 is poorly determined",
        });
    }
    Ok(s)
}

/// P50 from one measured pair, by the single-point Hill and the curve-shift ratio
/// methods.
///
/// # Formula
///
/// ```text
/// Hill:   P50 = PO2 * ((1 - S)/S)^(1/n),                 n = 2.7
/// ratio:  P50 = P50_model(standard) * PO2 / P_model(S; standard)
/// ```
///
/// applied to the measured PO2 (in-vivo P50) and to the standardised PO2
/// ([`standardised_po2_mmhg`]; standard P50). PO2 in mmHg, S functional fraction
/// (0 < S <= 0.97). With the default model (Severinghaus Eq. 1, P50 26.857 mmHg) the
/// ratio method is the one of methods.md §12. Sources in the module docs.
pub fn single_point_p50(
    pair: &MeasuredPair,
    ratio_model: &Model,
    method: Standardisation,
) -> Result<SinglePointP50, PhysiologyError> {
    let s = check_informative(pair.saturation)?;
    let p = check_positive_po2(pair.po2_mmhg)?;
    let p_std = standardised_po2_mmhg(p, &pair.conditions, method)?;
    let hill_factor = (-logit_of(s) / SINGLE_POINT_HILL_N).exp();
    let standard = Conditions::STANDARD;
    let ratio = ratio_model.p50_mmhg(&standard)? / ratio_model.tension_mmhg(s, &standard)?;
    Ok(SinglePointP50 {
        standardised_po2_mmhg: p_std,
        in_vivo_hill_mmhg: p * hill_factor,
        standard_hill_mmhg: p_std * hill_factor,
        in_vivo_ratio_mmhg: p * ratio,
        standard_ratio_mmhg: p_std * ratio,
    })
}

/// Least-squares fit of P50 and n on the Hill plot from two or more pairs.
///
/// # Formula
///
/// ```text
/// y_i = ln(S_i/(1 - S_i)),  x_i = ln PO2_i
/// minimise Σ (y_i - n*x_i + n*ln P50)^2   (ordinary least squares: y = a + n*x)
/// n = Sxy/Sxx,  ln P50 = mean(x) - mean(y)/n,  RMS = sqrt(Σ r_i^2 / N)
/// ```
///
/// Fitted on the standardised PO2s (standard P50 and n) and on the measured PO2s
/// (in-vivo P50). Refuses fewer than two pairs, pairs above the cut-off, pairs whose
/// PO2s are all equal, and a fit whose slope is not positive. Hill plot: Hill AV.
/// *J Physiol* 1910;40(Suppl):iv–vii (from memory); least squares: common practice.
pub fn fit_hill(
    pairs: &[MeasuredPair],
    method: Standardisation,
) -> Result<HillFit, PhysiologyError> {
    if pairs.len() < 2 {
        return Err(PhysiologyError::NotInformative {
            input: Input::MeasuredPairs,
            reason: "a Hill fit needs at least two pairs",
        });
    }
    let mut standard = LineFit::default();
    let mut in_vivo = LineFit::default();
    for pair in pairs {
        let s = check_informative(pair.saturation)?;
        let p = check_positive_po2(pair.po2_mmhg)?;
        let y = logit_of(s);
        let p_std = standardised_po2_mmhg(p, &pair.conditions, method)?;
        standard.add(p_std.ln(), y);
        in_vivo.add(p.ln(), y);
    }
    let (n, ln_p50_std) = standard.solve()?;
    let (_, ln_p50_vivo) = in_vivo.solve()?;
    // Residuals in a second pass (no allocation).
    let mut sum_sq = 0.0;
    for pair in pairs {
        let p_std = standardised_po2_mmhg(pair.po2_mmhg, &pair.conditions, method)?;
        let r = logit_of(pair.saturation) - n * (p_std.ln() - ln_p50_std);
        sum_sq += r * r;
    }
    let rms = (sum_sq / pairs.len() as f64).sqrt();
    Ok(HillFit {
        p50_standard_mmhg: require_finite(ln_p50_std.exp(), Input::MeasuredPairs)?,
        p50_in_vivo_mmhg: require_finite(ln_p50_vivo.exp(), Input::MeasuredPairs)?,
        n,
        rms_logit_residual: rms,
        pairs: pairs.len(),
    })
}

/// Running sums of a straight-line fit.
#[derive(Debug, Default, Clone, Copy)]
struct LineFit {
    n: f64,
    sx: f64,
    sy: f64,
    sxx: f64,
    sxy: f64,
}

impl LineFit {
    fn add(&mut self, x: f64, y: f64) {
        self.n += 1.0;
        self.sx += x;
        self.sy += y;
        self.sxx += x * x;
        self.sxy += x * y;
    }

    /// (slope, x-intercept) of y = slope·(x - x_intercept).
    fn solve(&self) -> Result<(f64, f64), PhysiologyError> {
        let mx = self.sx / self.n;
        let my = self.sy / self.n;
        let sxx = self.sxx - self.n * mx * mx;
        let sxy = self.sxy - self.n * mx * my;
        if sxx.is_nan() || sxx <= 1e-24 * (1.0 + mx * mx) {
            return Err(PhysiologyError::NotInformative {
                input: Input::MeasuredPairs,
                reason: "the pairs' PO2s are all equal, so no slope can be fitted",
            });
        }
        let slope = sxy / sxx;
        if slope.is_nan() || slope <= 0.0 {
            return Err(PhysiologyError::NotInformative {
                input: Input::MeasuredPairs,
                reason: "saturation does not rise with PO2 across the pairs",
            });
        }
        Ok((slope, mx - my / slope))
    }
}
