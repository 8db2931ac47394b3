//! Values read off a dissociation curve as measurement functions: saturation
//! from PO2, PO2 from saturation, the PO2 change per percentage point of
//! saturation, and P50 at conditions.
//!
//! # Sensitivity coefficients
//!
//! With the Hill slope n_H = d logit S / d ln PO2 (exact for every model, from
//! its own closed form):
//!
//! ```text
//! S from PO2:   ∂S/∂PO2  = S (1 − S) n_H / PO2                       exact
//!               ∂S/∂c    = S (1 − S) ∂logit S/∂c                     ∂logit S/∂c numerical
//! PO2 from S:   ∂PO2/∂S  = PO2 / (n_H S (1 − S))                     exact (implicit-function theorem)
//!               ∂PO2/∂c  = −PO2 (∂logit S/∂c) / n_H                  implicit-function theorem, ∂logit S/∂c numerical
//! P50:          ∂P50/∂c  = −P50 (∂logit S/∂c at P50) / n_H(P50)      as PO2 from S at S = 0.5
//! change per %: g = PO2 / (n_H S (1 − S)) / 100                      all coefficients numerical
//! ```
//!
//! A condition c (pH, PCO2, temperature, 2,3-DPG, base excess, COHb, MetHb,
//! HbF) acts inside each model in its own way; the public model functions
//! give its effect only as values, so ∂logit S/∂c is taken numerically
//! ([`richardson`], on logit S, which keeps full precision on the flat top of
//! the curve). `po2_change_per_percent` needs dn_H/dPO2, the curve's second
//! derivative, which no model exposes, so its coefficients are numerical
//! throughout. Every numerical coefficient is reported as such, with its error
//! estimate, in the budget.

use super::function::{
    richardson, step_for, AbsentReason, DerivedQuantity, MeasurementFunction, Partial, Slot,
};
use super::quantity::{Domain, InputQuantity};
use crate::physiology::conditions::{Condition, ConditionSet, Conditions};
use crate::physiology::error::PhysiologyError;
use crate::physiology::model::{DissociationModel, Model};

/// A curve model at conditions, with the given conditions the model honours
/// as slots.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct CurveSetting {
    pub(crate) model: Model,
    pub(crate) conditions: Conditions,
    /// (slot index, condition) of each given, honoured condition.
    pub(crate) condition_slots: Vec<(usize, Condition)>,
}

impl CurveSetting {
    /// Append a slot for each condition given in `conditions` that `model`
    /// honours.
    pub(crate) fn new(model: Model, conditions: Conditions, slots: &mut Vec<Slot>) -> CurveSetting {
        let unmodelled = model.unmodelled_conditions(&conditions);
        let given = conditions.given();
        let mut condition_slots = Vec::with_capacity(given.len());
        for condition in given {
            if unmodelled.contains(condition) {
                continue;
            }
            if let Some(value) = condition_value(&conditions, condition) {
                condition_slots.push((slots.len(), condition));
                slots.push(Slot::new(InputQuantity::of_condition(condition), value));
            }
        }
        CurveSetting {
            model,
            conditions,
            condition_slots,
        }
    }

    /// The conditions with the slot values of `x`.
    pub(crate) fn conditions_at(&self, x: &[f64]) -> Conditions {
        let mut c = self.conditions;
        for &(i, condition) in &self.condition_slots {
            set_condition(&mut c, condition, x[i]);
        }
        c
    }

    /// The condition of slot `i`, if it is a condition slot.
    pub(crate) fn condition_of(&self, i: usize) -> Option<Condition> {
        self.condition_slots
            .iter()
            .find(|(slot, _)| *slot == i)
            .map(|(_, c)| *c)
    }

    /// Why a condition quantity is not a slot.
    pub(crate) fn absent_reason(&self, quantity: InputQuantity) -> AbsentReason {
        match quantity.condition() {
            Some(c) if !self.conditions.is_given(c) => AbsentReason::ValueNotGiven,
            Some(_) => AbsentReason::NotHonouredByModel(self.model.info().id),
            None => AbsentReason::NotAnInput,
        }
    }

    /// ∂ logit S / ∂c at PO2 `po2` for the condition of slot `i`, numerically.
    pub(crate) fn logit_partial(
        &self,
        model: &Model,
        po2: f64,
        x: &[f64],
        i: usize,
        condition: Condition,
    ) -> Result<Partial, PhysiologyError> {
        let base = self.conditions_at(x);
        let quantity = InputQuantity::of_condition(condition);
        richardson(
            |v| {
                let mut c = base;
                set_condition(&mut c, condition, v);
                model.logit_saturation(po2, &c)
            },
            x[i],
            step_for(quantity, x[i]),
            quantity.domain(),
        )
    }
}

/// The given value of a condition.
pub(crate) fn condition_value(c: &Conditions, condition: Condition) -> Option<f64> {
    match condition {
        Condition::Ph => c.ph,
        Condition::Pco2 => c.pco2_mmhg,
        Condition::Temperature => c.temperature_celsius,
        Condition::Dpg => c.dpg_mmol_per_l,
        Condition::BaseExcess => c.base_excess_mmol_per_l,
        Condition::Cohb => c.cohb_fraction,
        Condition::Methb => c.methb_fraction,
        Condition::Hbf => c.hbf_fraction,
    }
}

/// Set a condition's value.
pub(crate) fn set_condition(c: &mut Conditions, condition: Condition, value: f64) {
    let slot = match condition {
        Condition::Ph => &mut c.ph,
        Condition::Pco2 => &mut c.pco2_mmhg,
        Condition::Temperature => &mut c.temperature_celsius,
        Condition::Dpg => &mut c.dpg_mmol_per_l,
        Condition::BaseExcess => &mut c.base_excess_mmol_per_l,
        Condition::Cohb => &mut c.cohb_fraction,
        Condition::Methb => &mut c.methb_fraction,
        Condition::Hbf => &mut c.hbf_fraction,
    };
    *slot = Some(value);
}

/// A numerical coefficient scaled by an exact factor, keeping its method (the
/// error estimate scales with it).
fn scaled(partial: Partial, factor: f64) -> Partial {
    use super::function::DerivativeMethod;
    Partial {
        value: partial.value * factor,
        method: match partial.method {
            DerivativeMethod::Numerical {
                step,
                error_estimate,
                one_sided,
            } => DerivativeMethod::Numerical {
                step,
                error_estimate: error_estimate * factor.abs(),
                one_sided,
            },
            exact => exact,
        },
    }
}

/// Functional saturation from PO2 at conditions (SaturationFromTension).
#[derive(Debug, Clone, PartialEq)]
pub struct SaturationFromTension {
    curve: CurveSetting,
    slots: Vec<Slot>,
}

impl SaturationFromTension {
    /// The saturation of `model` at `po2_mmhg` and `conditions`; slots: PO2,
    /// then each given condition the model honours.
    ///
    /// # Errors
    ///
    /// The model's refusal at the estimates.
    pub fn new(
        model: Model,
        po2_mmhg: f64,
        conditions: Conditions,
    ) -> Result<SaturationFromTension, PhysiologyError> {
        model.saturation(po2_mmhg, &conditions)?;
        let mut slots = Vec::with_capacity(1 + Condition::ALL.len());
        slots.push(Slot::new(InputQuantity::Po2, po2_mmhg));
        let curve = CurveSetting::new(model, conditions, &mut slots);
        Ok(SaturationFromTension { curve, slots })
    }
}

impl MeasurementFunction for SaturationFromTension {
    fn quantity(&self) -> DerivedQuantity {
        DerivedQuantity::Saturation
    }
    fn slots(&self) -> &[Slot] {
        &self.slots
    }
    #[inline]
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        if self.curve.condition_slots.is_empty() {
            return self.curve.model.saturation(x[0], &self.curve.conditions);
        }
        self.curve
            .model
            .saturation(x[0], &self.curve.conditions_at(x))
    }
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        let c = self.curve.conditions_at(x);
        let po2 = x[0];
        match self.curve.condition_of(i) {
            None => {
                let (s, slope) = self.curve.model.saturation_and_slope(po2, &c)?;
                Ok(Partial::exact(s * (1.0 - s) * slope / po2))
            }
            Some(condition) => {
                let s = self.curve.model.saturation(po2, &c)?;
                let d = self
                    .curve
                    .logit_partial(&self.curve.model, po2, x, i, condition)?;
                Ok(scaled(d, s * (1.0 - s)))
            }
        }
    }
    fn curve_model(&self) -> Option<&Model> {
        Some(&self.curve.model)
    }
    fn evaluate_with_model(
        &self,
        model: &Model,
        x: &[f64],
    ) -> Option<Result<f64, PhysiologyError>> {
        Some(model.saturation(x[0], &self.curve.conditions_at(x)))
    }
    fn given_conditions(&self) -> ConditionSet {
        self.curve.conditions.given()
    }
    fn absent_reason(&self, quantity: InputQuantity) -> AbsentReason {
        self.curve.absent_reason(quantity)
    }
}

/// PO2 from functional saturation at conditions (TensionFromSaturation), or
/// its `po2_change_per_percent`.
#[derive(Debug, Clone, PartialEq)]
pub struct TensionFromSaturation {
    curve: CurveSetting,
    slots: Vec<Slot>,
    change_per_percent: bool,
}

impl TensionFromSaturation {
    /// The PO2 of `model` at `saturation` and `conditions`; slots: the
    /// saturation (strictly inside (0, 1)), then each given condition the model
    /// honours.
    ///
    /// # Errors
    ///
    /// The model's refusal at the estimates.
    pub fn new(
        model: Model,
        saturation: f64,
        conditions: Conditions,
    ) -> Result<TensionFromSaturation, PhysiologyError> {
        Self::build(model, saturation, conditions, false)
    }

    /// `po2_change_per_percent` = PO2 / (n_H S (1 − S)) / 100 at the same point.
    ///
    /// # Errors
    ///
    /// The model's refusal at the estimates.
    pub fn change_per_percent(
        model: Model,
        saturation: f64,
        conditions: Conditions,
    ) -> Result<TensionFromSaturation, PhysiologyError> {
        Self::build(model, saturation, conditions, true)
    }

    fn build(
        model: Model,
        saturation: f64,
        conditions: Conditions,
        change_per_percent: bool,
    ) -> Result<TensionFromSaturation, PhysiologyError> {
        let po2 = model.tension_mmhg(saturation, &conditions)?;
        model.hill_slope(po2, &conditions)?;
        let mut slots =
            vec![Slot::new(InputQuantity::Saturation, saturation)
                .with_domain(Domain::open(0.0, 1.0))];
        let curve = CurveSetting::new(model, conditions, &mut slots);
        Ok(TensionFromSaturation {
            curve,
            slots,
            change_per_percent,
        })
    }

    fn value_with(&self, model: &Model, x: &[f64]) -> Result<f64, PhysiologyError> {
        let c = self.curve.conditions_at(x);
        let s = x[0];
        let po2 = model.tension_mmhg(s, &c)?;
        if !self.change_per_percent {
            return Ok(po2);
        }
        let slope = model.hill_slope(po2, &c)?;
        Ok(po2 / (slope * s * (1.0 - s)) / 100.0)
    }
}

impl MeasurementFunction for TensionFromSaturation {
    fn quantity(&self) -> DerivedQuantity {
        if self.change_per_percent {
            DerivedQuantity::Po2ChangePerPercent
        } else {
            DerivedQuantity::Po2FromSaturation
        }
    }
    fn slots(&self) -> &[Slot] {
        &self.slots
    }
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        self.value_with(&self.curve.model, x)
    }
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        if self.change_per_percent {
            return super::function::numerical_partial(self, x, i);
        }
        let c = self.curve.conditions_at(x);
        let s = x[0];
        let po2 = self.curve.model.tension_mmhg(s, &c)?;
        let slope = self.curve.model.hill_slope(po2, &c)?;
        match self.curve.condition_of(i) {
            None => Ok(Partial::exact(po2 / (slope * s * (1.0 - s)))),
            Some(condition) => {
                let d = self
                    .curve
                    .logit_partial(&self.curve.model, po2, x, i, condition)?;
                Ok(scaled(d, -po2 / slope))
            }
        }
    }
    fn curve_model(&self) -> Option<&Model> {
        Some(&self.curve.model)
    }
    fn evaluate_with_model(
        &self,
        model: &Model,
        x: &[f64],
    ) -> Option<Result<f64, PhysiologyError>> {
        Some(self.value_with(model, x))
    }
    fn given_conditions(&self) -> ConditionSet {
        self.curve.conditions.given()
    }
    fn absent_reason(&self, quantity: InputQuantity) -> AbsentReason {
        self.curve.absent_reason(quantity)
    }
}

/// P50 at conditions (ShiftFactors' `p50_at_conditions`).
#[derive(Debug, Clone, PartialEq)]
pub struct P50AtConditions {
    curve: CurveSetting,
    slots: Vec<Slot>,
}

impl P50AtConditions {
    /// P50 of `model` at `conditions`; slots: each given condition the model
    /// honours.
    ///
    /// # Errors
    ///
    /// The model's refusal at the estimates.
    pub fn new(model: Model, conditions: Conditions) -> Result<P50AtConditions, PhysiologyError> {
        conditions.validate()?;
        model.p50_mmhg(&conditions)?;
        let mut slots = Vec::new();
        let curve = CurveSetting::new(model, conditions, &mut slots);
        Ok(P50AtConditions { curve, slots })
    }
}

impl MeasurementFunction for P50AtConditions {
    fn quantity(&self) -> DerivedQuantity {
        DerivedQuantity::P50AtConditions
    }
    fn slots(&self) -> &[Slot] {
        &self.slots
    }
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        self.curve.model.p50_mmhg(&self.curve.conditions_at(x))
    }
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        let Some(condition) = self.curve.condition_of(i) else {
            return super::function::numerical_partial(self, x, i);
        };
        let c = self.curve.conditions_at(x);
        let p50 = self.curve.model.p50_mmhg(&c)?;
        let slope = self.curve.model.hill_slope(p50, &c)?;
        let d = self
            .curve
            .logit_partial(&self.curve.model, p50, x, i, condition)?;
        Ok(scaled(d, -p50 / slope))
    }
    fn curve_model(&self) -> Option<&Model> {
        Some(&self.curve.model)
    }
    fn evaluate_with_model(
        &self,
        model: &Model,
        x: &[f64],
    ) -> Option<Result<f64, PhysiologyError>> {
        Some(model.p50_mmhg(&self.curve.conditions_at(x)))
    }
    fn given_conditions(&self) -> ConditionSet {
        self.curve.conditions.given()
    }
    fn absent_reason(&self, quantity: InputQuantity) -> AbsentReason {
        self.curve.absent_reason(quantity)
    }
}

#[cfg(test)]
mod tests {
    use super::super::function::numerical_partial;
    use super::*;
    use crate::physiology::model::DEFAULT_MODEL;

    fn conditions() -> Conditions {
        Conditions {
            ph: Some(7.31),
            temperature_celsius: Some(38.2),
            base_excess_mmol_per_l: Some(-3.0),
            pco2_mmhg: Some(48.0),
            ..Conditions::STANDARD
        }
    }

    /// Every analytic or implicit-function coefficient agrees with a plain
    /// numerical derivative of the value itself.
    fn check_against_numerical<F: MeasurementFunction>(f: &F, tolerance: f64) {
        let x = f.estimates();
        for i in 0..f.slots().len() {
            let given = f.partial(&x, i).unwrap().value;
            let numerical = numerical_partial(f, &x, i).unwrap().value;
            assert!(
                (given - numerical).abs() <= tolerance * numerical.abs().max(1e-12),
                "{:?} slot {i}: {given} vs {numerical}",
                f.quantity()
            );
        }
    }

    #[test]
    fn coefficients_agree_with_differences_of_the_value() {
        for id in [
            "severinghaus-1979",
            "kelman-1966",
            "dash-2016",
            "siggaard-andersen-1984",
        ] {
            let model = Model::from_id(id).unwrap();
            let s = SaturationFromTension::new(model, 55.0, conditions()).unwrap();
            check_against_numerical(&s, 1e-7);
            let p = TensionFromSaturation::new(model, 0.86, conditions()).unwrap();
            check_against_numerical(&p, 1e-7);
            let p50 = P50AtConditions::new(model, conditions()).unwrap();
            check_against_numerical(&p50, 1e-7);
        }
    }

    #[test]
    fn unhonoured_and_missing_conditions_are_not_slots() {
        // Severinghaus honours pH, temperature and base excess, not PCO2.
        let s = SaturationFromTension::new(DEFAULT_MODEL, 55.0, conditions()).unwrap();
        let quantities: Vec<_> = s.slots().iter().map(|s| s.quantity).collect();
        assert_eq!(
            quantities,
            [
                InputQuantity::Po2,
                InputQuantity::Ph,
                InputQuantity::Temperature,
                InputQuantity::BaseExcess
            ]
        );
        assert_eq!(
            s.absent_reason(InputQuantity::Pco2),
            AbsentReason::NotHonouredByModel("severinghaus-1979")
        );
        assert_eq!(
            s.absent_reason(InputQuantity::Dpg),
            AbsentReason::ValueNotGiven
        );
        assert_eq!(
            s.absent_reason(InputQuantity::Hemoglobin),
            AbsentReason::NotAnInput
        );
    }

    #[test]
    fn change_per_percent_is_the_reciprocal_slope_over_100() {
        let f = TensionFromSaturation::change_per_percent(DEFAULT_MODEL, 0.9, Conditions::STANDARD)
            .unwrap();
        let p = TensionFromSaturation::new(DEFAULT_MODEL, 0.9, Conditions::STANDARD).unwrap();
        let x = p.estimates();
        let dp_ds = p.partial(&x, 0).unwrap().value;
        assert!((f.evaluate(&x).unwrap() - dp_ds / 100.0).abs() < 1e-12);
    }
}
