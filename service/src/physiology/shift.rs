//! P50 at conditions and the shift of the curve against standard conditions,
//! split into each factor's contribution.
//!
//! # How the shift is split
//!
//! Each factor's contribution is its **one-at-a-time** effect: the log10 P50 shift
//! with that factor alone at its given value and every other condition standard.
//! For models whose factors multiply P50 independently (Kelman 1966, Hill with the
//! shift scheme, Dash 2016) the contributions sum exactly to the total shift. Where
//! factors interact (Severinghaus' PO2-dependent Bohr factor, the tanh model's h
//! term, COHb through the Haldane relation) they do not, and the remainder is
//! reported as [`ShiftAnalysis::interaction_log10_p50_shift`] rather than hidden
//! in one factor.

use super::conditions::{
    Condition, Conditions, STANDARD_BASE_EXCESS_MMOL_PER_L, STANDARD_DPG_MMOL_PER_L,
    STANDARD_PCO2_MMHG, STANDARD_PH, STANDARD_TEMPERATURE_CELSIUS,
};
use super::curves::curve::DissociationModel;
use super::curves::dispatch::Model;
use super::error::PhysiologyError;

/// Every condition given at its standard value: asks a model which it honours.
const EVERY_CONDITION_GIVEN: Conditions = Conditions {
    ph: Some(STANDARD_PH),
    pco2_mmhg: Some(STANDARD_PCO2_MMHG),
    temperature_celsius: Some(STANDARD_TEMPERATURE_CELSIUS),
    dpg_mmol_per_l: Some(STANDARD_DPG_MMOL_PER_L),
    base_excess_mmol_per_l: Some(STANDARD_BASE_EXCESS_MMOL_PER_L),
    cohb_fraction: Some(0.0),
    methb_fraction: Some(0.0),
    hbf_fraction: Some(0.0),
};

/// A |log10 P50 shift| at or below this is reported as no shift: it is below the
/// numerical noise of the inverses (relative PO2 error 1e-10, i.e. 4e-11 in log10).
pub const NO_SHIFT_LOG10_THRESHOLD: f64 = 1e-9;

/// Direction of a shift of the dissociation curve.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ShiftDirection {
    /// No shift (|Δlog10 P50| <= [`NO_SHIFT_LOG10_THRESHOLD`]).
    None,
    /// Right shift: higher P50, lower affinity.
    Right,
    /// Left shift: lower P50, higher affinity.
    Left,
}

impl ShiftDirection {
    /// The direction of a log10 P50 shift.
    pub fn of(log10_p50_shift: f64) -> ShiftDirection {
        if log10_p50_shift > NO_SHIFT_LOG10_THRESHOLD {
            ShiftDirection::Right
        } else if log10_p50_shift < -NO_SHIFT_LOG10_THRESHOLD {
            ShiftDirection::Left
        } else {
            ShiftDirection::None
        }
    }
}

/// One factor's contribution to the shift.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FactorContribution {
    /// The factor.
    pub factor: Condition,
    /// Whether the caller gave it.
    pub given: bool,
    /// Whether the model honours it (a given, unhonoured factor contributes 0).
    pub modelled: bool,
    /// Its one-at-a-time log10 P50 shift.
    pub log10_p50_shift: f64,
    /// Direction of that shift.
    pub direction: ShiftDirection,
}

/// The shift of the curve at conditions against standard conditions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ShiftAnalysis {
    /// P50 at standard conditions, mmHg (the model's own standard).
    pub p50_standard_mmhg: f64,
    /// P50 at the given conditions, mmHg.
    pub p50_at_conditions_mmhg: f64,
    /// log10(P50 at conditions / P50 standard).
    pub log10_p50_shift: f64,
    /// Direction of the total shift.
    pub direction: ShiftDirection,
    /// Every factor in proto order (not given: 0 and `None`).
    pub contributions: [FactorContribution; 8],
    /// Total shift minus the sum of the contributions (0 for multiplicative models).
    pub interaction_log10_p50_shift: f64,
    /// P50 standard / P50 at conditions: multiply a measured PO2 by it to get the
    /// standard-conditions equivalent (exact at the P50 point; for models whose shift
    /// depends on PO2 use [`standard_equivalent_po2_mmhg`] at other points).
    pub po2_correction_factor: f64,
}

/// P50 (mmHg) of `model` at `conditions`.
///
/// # Formula
///
/// ```text
/// P50 = P_model(S = 0.5; conditions)
/// ```
///
/// The model's own inverse (see each model's module for its formula and citation).
pub fn p50_at_conditions_mmhg(model: &Model, c: &Conditions) -> Result<f64, PhysiologyError> {
    model.p50_mmhg(c)
}

/// The shift of `model`'s curve at `c` against standard conditions, split per factor.
///
/// # Formula
///
/// ```text
/// Δ        = log10( P50(c) / P50(standard) )
/// Δ_i      = log10( P50(c_i only) / P50(standard) )        one at a time
/// interaction = Δ - Σ Δ_i
/// PO2 correction factor = P50(standard) / P50(c)
/// ```
///
/// Directions: Δ > 0 right (lower affinity), Δ < 0 left (common practice). P50 from
/// each model's inverse (see its module for the citation).
pub fn shift_factors(model: &Model, c: &Conditions) -> Result<ShiftAnalysis, PhysiologyError> {
    c.validate()?;
    let standard = model.p50_mmhg(&Conditions::STANDARD)?;
    let at = model.p50_mmhg(c)?;
    let total = (at / standard).log10();
    let not_modelled = model.unmodelled_conditions(&EVERY_CONDITION_GIVEN);
    let mut sum = 0.0;
    let mut contributions = [FactorContribution {
        factor: Condition::Ph,
        given: false,
        modelled: false,
        log10_p50_shift: 0.0,
        direction: ShiftDirection::None,
    }; 8];
    for (slot, factor) in contributions.iter_mut().zip(Condition::ALL) {
        let given = c.is_given(factor);
        let modelled = !not_modelled.contains(factor);
        let shift = if given && modelled {
            (model.p50_mmhg(&c.only(factor))? / standard).log10()
        } else {
            0.0
        };
        sum += shift;
        *slot = FactorContribution {
            factor,
            given,
            modelled,
            log10_p50_shift: shift,
            direction: ShiftDirection::of(shift),
        };
    }
    let interaction = total - sum;
    Ok(ShiftAnalysis {
        p50_standard_mmhg: standard,
        p50_at_conditions_mmhg: at,
        log10_p50_shift: total,
        direction: ShiftDirection::of(total),
        contributions,
        interaction_log10_p50_shift: if interaction.abs() <= NO_SHIFT_LOG10_THRESHOLD {
            0.0
        } else {
            interaction
        },
        po2_correction_factor: standard / at,
    })
}

/// The PO2 (mmHg) that gives, at standard conditions, the saturation that
/// `po2_mmhg` gives at `c` (exact at every PO2, also when the shift depends on PO2).
///
/// # Formula
///
/// ```text
/// PO2_std = P_model( S_model(PO2; c); standard )
/// ```
///
/// Uses the model's forward and inverse (see its module for the citation). Refuses a
/// saturation of 0 or 1 (PO2 of 0, or a curve that rounds to 1).
pub fn standard_equivalent_po2_mmhg(
    model: &Model,
    po2_mmhg: f64,
    c: &Conditions,
) -> Result<f64, PhysiologyError> {
    let s = model.saturation(po2_mmhg, c)?;
    model.tension_mmhg(s, &Conditions::STANDARD)
}
