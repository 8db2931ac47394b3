//! A prepared curve under its conditions: carbon monoxide applied through the
//! Haldane relation (see [`super::dyshemoglobin`]) for every model that
//! honours it, the input checks in front, and the macro that implements
//! [`DissociationModel`](super::curve::DissociationModel) for a model from its
//! prepared curve.

use super::curve::{check_inverse_saturation, check_po2, check_positive_po2, logistic, Curve};
use super::dyshemoglobin;
use crate::physiology::conditions::Conditions;
use crate::physiology::error::PhysiologyError;

/// Forward through a prepared curve, with COHb (Haldane) when given.
pub(crate) fn saturation_through<C: Curve>(
    curve: &C,
    po2_mmhg: f64,
    conditions: &Conditions,
) -> Result<f64, PhysiologyError> {
    let p = check_po2(po2_mmhg)?;
    if p == 0.0 {
        return curve.saturation_at_zero();
    }
    match carbon_monoxide_share(curve, conditions) {
        Some(f) => dyshemoglobin::functional_saturation_with_cohb(curve, p, f),
        None => curve.saturation(p),
    }
}

/// logit S through a prepared curve, with COHb when given.
pub(crate) fn logit_through<C: Curve>(
    curve: &C,
    po2_mmhg: f64,
    conditions: &Conditions,
) -> Result<f64, PhysiologyError> {
    let p = check_positive_po2(po2_mmhg)?;
    match carbon_monoxide_share(curve, conditions) {
        Some(f) => dyshemoglobin::functional_logit_with_cohb(curve, p, f),
        None => curve.logit(p),
    }
}

/// Inverse through a prepared curve, with COHb when given.
pub(crate) fn tension_through<C: Curve>(
    curve: &C,
    saturation: f64,
    conditions: &Conditions,
) -> Result<f64, PhysiologyError> {
    let s = check_inverse_saturation(saturation)?;
    match carbon_monoxide_share(curve, conditions) {
        Some(f) => dyshemoglobin::tension_with_cohb(curve, s, f),
        None => curve.tension(s),
    }
}

/// Hill slope through a prepared curve, with COHb when given.
pub(crate) fn slope_through<C: Curve>(
    curve: &C,
    po2_mmhg: f64,
    conditions: &Conditions,
) -> Result<f64, PhysiologyError> {
    let p = check_positive_po2(po2_mmhg)?;
    match carbon_monoxide_share(curve, conditions) {
        Some(f) => dyshemoglobin::hill_slope_with_cohb(curve, p, f),
        None => curve.slope(p),
    }
}

/// Saturation and Hill slope through a prepared curve: one evaluation of
/// logit and slope without COHb, the two separate paths with it.
pub(crate) fn saturation_and_slope_through<C: Curve>(
    curve: &C,
    po2_mmhg: f64,
    conditions: &Conditions,
) -> Result<(f64, f64), PhysiologyError> {
    if carbon_monoxide_share(curve, conditions).is_some() {
        return Ok((
            saturation_through(curve, po2_mmhg, conditions)?,
            slope_through(curve, po2_mmhg, conditions)?,
        ));
    }
    let p = check_positive_po2(po2_mmhg)?;
    let (logit, slope) = curve.logit_and_slope(p)?;
    Ok((logistic(logit), slope))
}

/// COHb as a share of the haemoglobin that is not oxidised to MetHb, when positive.
#[inline]
fn carbon_monoxide_share<C: Curve>(curve: &C, conditions: &Conditions) -> Option<f64> {
    let cohb = conditions.cohb_fraction();
    if cohb > 0.0 && curve.honours_cohb() {
        Some(cohb / (1.0 - conditions.methb_fraction()))
    } else {
        None
    }
}

/// Implements [`DissociationModel`] for a model type with an
/// `at(&self, &Conditions) -> Result<impl Curve, PhysiologyError>` method.
macro_rules! impl_dissociation_model {
    ($ty:ty, $info:expr $(, $extra:item)*) => {
        impl $crate::physiology::curves::curve::DissociationModel for $ty {
            $($extra)*
            fn info(&self) -> &'static $crate::physiology::curves::curve::ModelInfo {
                $info
            }
            fn saturation(
                &self,
                po2_mmhg: f64,
                conditions: &$crate::physiology::conditions::Conditions,
            ) -> Result<f64, $crate::physiology::error::PhysiologyError> {
                let curve = self.at(conditions)?;
                $crate::physiology::curves::prepared::saturation_through(&curve, po2_mmhg, conditions)
            }
            fn tension_mmhg(
                &self,
                saturation: f64,
                conditions: &$crate::physiology::conditions::Conditions,
            ) -> Result<f64, $crate::physiology::error::PhysiologyError> {
                let curve = self.at(conditions)?;
                $crate::physiology::curves::prepared::tension_through(&curve, saturation, conditions)
            }
            fn hill_slope(
                &self,
                po2_mmhg: f64,
                conditions: &$crate::physiology::conditions::Conditions,
            ) -> Result<f64, $crate::physiology::error::PhysiologyError> {
                let curve = self.at(conditions)?;
                $crate::physiology::curves::prepared::slope_through(&curve, po2_mmhg, conditions)
            }
            fn logit_saturation(
                &self,
                po2_mmhg: f64,
                conditions: &$crate::physiology::conditions::Conditions,
            ) -> Result<f64, $crate::physiology::error::PhysiologyError> {
                let curve = self.at(conditions)?;
                $crate::physiology::curves::prepared::logit_through(&curve, po2_mmhg, conditions)
            }
            fn saturation_and_slope(
                &self,
                po2_mmhg: f64,
                conditions: &$crate::physiology::conditions::Conditions,
            ) -> Result<(f64, f64), $crate::physiology::error::PhysiologyError> {
                let curve = self.at(conditions)?;
                $crate::physiology::curves::prepared::saturation_and_slope_through(
                    &curve, po2_mmhg, conditions,
                )
            }
        }
    };
}
pub(crate) use impl_dissociation_model;
