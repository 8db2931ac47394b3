//! Oxygen content values as measurement functions: arterial and venous
//! content, their difference and the extraction fraction.
//!
//! # Sensitivity coefficients
//!
//! With C = k·Hb·S_b + α·PO2 (α = 0.0031 mL/dL/mmHg), S_b = S·f and
//! f = 1 − FCOHb − FMetHb for a functional saturation given with measured
//! dyshaemoglobins (else f = 1; see
//! [`sample_oxygen_content`](crate::physiology::content::sample_oxygen_content)):
//!
//! ```text
//! ∂C/∂Hb = k S_b      ∂C/∂k = Hb S_b      ∂C/∂S = k Hb f      ∂C/∂FCOHb = ∂C/∂FMetHb = −k Hb S
//! ∂C/∂PO2 = α                         (measured saturation)
//! ∂C/∂PO2 = α + k Hb f S(1 − S) n_H/PO2   (saturation calculated from PO2; n_H the model's Hill slope)
//! a−v difference: ∂(Ca − Cv);   extraction E = (Ca − Cv)/Ca:  ∂E = (Cv ∂Ca − Ca ∂Cv)/Ca²
//! ```
//!
//! all exact. Haemoglobin and the Hüfner factor are shared by both samples, so
//! the difference and the extraction treat them as one input each. For a
//! saturation calculated from PO2, a curve condition's coefficient and the
//! dyshaemoglobins' (which act on the curve through the Haldane relation as
//! well as through f) are taken numerically ([`numerical_partial`]). The
//! conditions of a calculated *venous* saturation are held at their values
//! (the engine has no separate venous pH or PCO2 input); they are reported as
//! not propagated.

use super::curve_values::CurveSetting;
use super::function::{
    numerical_partial, AbsentReason, DerivedQuantity, MeasurementFunction, Partial, Slot,
};
use super::quantity::InputQuantity;
use crate::physiology::conditions::{ConditionSet, Conditions};
use crate::physiology::content::{
    oxygen_transport, sample_oxygen_content, BloodOxygenSample, OxygenTransportInput,
    SaturationKind, DISSOLVED_O2_ML_PER_DL_PER_MMHG,
};
use crate::physiology::error::{Input, PhysiologyError};
use crate::physiology::model::{DissociationModel, Model};

/// How a sample's saturation is known.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SampleSaturation {
    /// Measured (co-oximetry or pulse oximetry), of the given kind.
    Measured {
        /// The saturation, fraction.
        fraction: f64,
        /// Functional or fractional.
        kind: SaturationKind,
    },
    /// Calculated from the sample's PO2 through a curve model at conditions
    /// (functional); the sample's COHb and MetHb act on the curve.
    Calculated {
        /// The curve model.
        model: Model,
        /// The conditions (COHb and MetHb are taken from the sample).
        conditions: Conditions,
    },
}

/// One sample for a content calculation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ContentSample {
    /// The saturation.
    pub saturation: SampleSaturation,
    /// PO2, mmHg.
    pub po2_mmhg: f64,
    /// Carboxyhaemoglobin fraction, if measured.
    pub cohb_fraction: Option<f64>,
    /// Methaemoglobin fraction, if measured.
    pub methb_fraction: Option<f64>,
}

/// The inputs of the content values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ContentInputs {
    /// Total haemoglobin, g/dL.
    pub hemoglobin_g_per_dl: f64,
    /// Hüfner factor, mL/g, when the caller set it (else the default for the
    /// arterial saturation's kind, a definition and so not an input).
    pub hufner_factor_ml_per_g: Option<f64>,
    /// The arterial sample.
    pub arterial: ContentSample,
    /// The venous sample, if any.
    pub venous: Option<ContentSample>,
}

/// Where one sample's inputs sit among the slots.
#[derive(Debug, Clone, Copy, PartialEq)]
struct SampleLayout {
    saturation: Option<usize>,
    po2: usize,
    cohb: Option<usize>,
    methb: Option<usize>,
}

/// An oxygen-content value (arterial, venous, a−v difference or extraction).
#[derive(Debug, Clone, PartialEq)]
pub struct OxygenContentValue {
    quantity: DerivedQuantity,
    inputs: ContentInputs,
    /// The Hüfner factor used when the caller set none.
    default_hufner: f64,
    slots: Vec<Slot>,
    hemoglobin: usize,
    hufner: Option<usize>,
    arterial: SampleLayout,
    venous: Option<SampleLayout>,
    /// The arterial curve's condition slots (calculated arterial saturation).
    arterial_curve: Option<CurveSetting>,
}

impl OxygenContentValue {
    /// The content value `quantity` ([`DerivedQuantity::ArterialContent`],
    /// [`DerivedQuantity::VenousContent`],
    /// [`DerivedQuantity::ArteriovenousDifference`] or
    /// [`DerivedQuantity::ExtractionFraction`]) of `inputs`.
    ///
    /// # Errors
    ///
    /// The refusal of
    /// [`oxygen_transport`](crate::physiology::content::oxygen_transport) at
    /// the estimates; [`PhysiologyError::NotInformative`] naming
    /// [`Input::VenousSaturation`] when a venous value is asked for without a
    /// venous sample; [`PhysiologyError::Inconsistent`] for a quantity that is
    /// not a content value.
    pub fn new(
        quantity: DerivedQuantity,
        inputs: ContentInputs,
    ) -> Result<OxygenContentValue, PhysiologyError> {
        match quantity {
            DerivedQuantity::ArterialContent => {}
            DerivedQuantity::VenousContent
            | DerivedQuantity::ArteriovenousDifference
            | DerivedQuantity::ExtractionFraction => {
                if inputs.venous.is_none() {
                    return Err(PhysiologyError::NotInformative {
                        input: Input::VenousSaturation,
                        reason: "a venous sample is needed for this value",
                    });
                }
            }
            _ => {
                return Err(PhysiologyError::Inconsistent {
                    input: Input::Saturation,
                    reason: "not an oxygen-content value",
                })
            }
        }
        let arterial = blood_sample(&inputs.arterial, None)?;
        let venous = inputs
            .venous
            .as_ref()
            .map(|v| blood_sample(v, None))
            .transpose()?;
        let transport = oxygen_transport(&OxygenTransportInput {
            hemoglobin_g_per_dl: inputs.hemoglobin_g_per_dl,
            arterial,
            venous,
            cardiac_output_l_per_min: None,
            hufner_factor_ml_per_g: inputs.hufner_factor_ml_per_g,
        })?;
        let default_hufner = transport.arterial.hufner_factor_ml_per_g;

        let mut slots = vec![Slot::new(
            InputQuantity::Hemoglobin,
            inputs.hemoglobin_g_per_dl,
        )];
        let hufner = inputs.hufner_factor_ml_per_g.map(|k| {
            slots.push(Slot::new(InputQuantity::HufnerFactor, k));
            slots.len() - 1
        });
        let uses_arterial = quantity != DerivedQuantity::VenousContent;
        let uses_venous = quantity != DerivedQuantity::ArterialContent;
        let (arterial_layout, arterial_curve) = layout(
            &inputs.arterial,
            [
                InputQuantity::Saturation,
                InputQuantity::Po2,
                InputQuantity::Cohb,
                InputQuantity::Methb,
            ],
            uses_arterial,
            &mut slots,
        );
        let venous_layout = match (&inputs.venous, uses_venous) {
            (Some(v), true) => Some(
                layout(
                    v,
                    [
                        InputQuantity::VenousSaturation,
                        InputQuantity::VenousPo2,
                        InputQuantity::VenousCohb,
                        InputQuantity::VenousMethb,
                    ],
                    false,
                    &mut slots,
                )
                .0,
            ),
            _ => None,
        };
        Ok(OxygenContentValue {
            quantity,
            inputs,
            default_hufner,
            slots,
            hemoglobin: 0,
            hufner,
            arterial: arterial_layout,
            venous: venous_layout,
            arterial_curve,
        })
    }

    fn hufner_at(&self, x: &[f64]) -> f64 {
        self.hufner.map_or(self.default_hufner, |i| x[i])
    }

    /// One sample's content at `x`, with `model` in place of a calculated
    /// saturation's own model when given.
    fn content(
        &self,
        sample: &ContentSample,
        lay: &SampleLayout,
        curve: Option<&CurveSetting>,
        x: &[f64],
        model: Option<&Model>,
    ) -> Result<f64, PhysiologyError> {
        let mut at = *sample;
        at.po2_mmhg = x[lay.po2];
        if let Some(i) = lay.cohb {
            at.cohb_fraction = Some(x[i]);
        }
        if let Some(i) = lay.methb {
            at.methb_fraction = Some(x[i]);
        }
        match (&mut at.saturation, lay.saturation) {
            (SampleSaturation::Measured { fraction, .. }, Some(i)) => *fraction = x[i],
            (SampleSaturation::Calculated { conditions, .. }, _) => {
                if let Some(curve) = curve {
                    *conditions = curve.conditions_at(x);
                }
            }
            _ => {}
        }
        let blood = blood_sample(&at, model)?;
        Ok(
            sample_oxygen_content(x[self.hemoglobin], &blood, Some(self.hufner_at(x)))?
                .total_ml_per_dl,
        )
    }

    fn contents(&self, x: &[f64], model: Option<&Model>) -> Result<(f64, f64), PhysiologyError> {
        let a = if self.quantity == DerivedQuantity::VenousContent {
            0.0
        } else {
            self.content(
                &self.inputs.arterial,
                &self.arterial,
                self.arterial_curve.as_ref(),
                x,
                model,
            )?
        };
        let v = match (&self.inputs.venous, &self.venous) {
            (Some(sample), Some(lay)) => self.content(sample, lay, None, x, model)?,
            _ => 0.0,
        };
        Ok((a, v))
    }

    fn combine(&self, a: f64, v: f64) -> f64 {
        match self.quantity {
            DerivedQuantity::VenousContent => v,
            DerivedQuantity::ArteriovenousDifference => a - v,
            DerivedQuantity::ExtractionFraction => (a - v) / a,
            _ => a,
        }
    }

    /// ∂C/∂xᵢ of one sample in closed form, or `None` where it is taken
    /// numerically (see the module docs).
    fn sample_partial(
        &self,
        sample: &ContentSample,
        lay: &SampleLayout,
        curve: Option<&CurveSetting>,
        x: &[f64],
        i: usize,
    ) -> Result<Option<f64>, PhysiologyError> {
        let hb = x[self.hemoglobin];
        let k = self.hufner_at(x);
        let cohb = lay.cohb.map(|j| x[j]).or(sample.cohb_fraction);
        let methb = lay.methb.map(|j| x[j]).or(sample.methb_fraction);
        let measured_dys = cohb.is_some() || methb.is_some();
        let (s, scales_with_dys, calculated) = match (&sample.saturation, lay.saturation) {
            (SampleSaturation::Measured { kind, .. }, Some(j)) => (
                x[j],
                *kind == SaturationKind::Functional && measured_dys,
                None,
            ),
            (SampleSaturation::Measured { fraction, kind }, None) => (
                *fraction,
                *kind == SaturationKind::Functional && measured_dys,
                None,
            ),
            (SampleSaturation::Calculated { model, conditions }, _) => {
                let mut c = curve.map_or(*conditions, |curve| curve.conditions_at(x));
                c.cohb_fraction = cohb;
                c.methb_fraction = methb;
                let (s, slope) = model.saturation_and_slope(x[lay.po2], &c)?;
                (s, measured_dys, Some(slope))
            }
        };
        let f = if scales_with_dys {
            1.0 - cohb.unwrap_or(0.0) - methb.unwrap_or(0.0)
        } else {
            1.0
        };
        let bound = s * f;
        Ok(if i == self.hemoglobin {
            Some(k * bound)
        } else if Some(i) == self.hufner {
            Some(hb * bound)
        } else if Some(i) == lay.saturation {
            Some(k * hb * f)
        } else if i == lay.po2 {
            let through_curve =
                calculated.map_or(0.0, |slope| k * hb * f * s * (1.0 - s) * slope / x[lay.po2]);
            Some(DISSOLVED_O2_ML_PER_DL_PER_MMHG + through_curve)
        } else if Some(i) == lay.cohb || Some(i) == lay.methb {
            if calculated.is_some() {
                None
            } else {
                Some(-k * hb * s)
            }
        } else if curve.and_then(|c| c.condition_of(i)).is_some() {
            None
        } else {
            Some(0.0)
        })
    }
}

/// The slots of one sample; the curve setting of a calculated saturation when
/// its conditions are to be slots.
fn layout(
    sample: &ContentSample,
    [saturation, po2, cohb, methb]: [InputQuantity; 4],
    curve_slots: bool,
    slots: &mut Vec<Slot>,
) -> (SampleLayout, Option<CurveSetting>) {
    let mut push = |q: InputQuantity, v: f64| {
        slots.push(Slot::new(q, v));
        slots.len() - 1
    };
    let saturation_slot = match sample.saturation {
        SampleSaturation::Measured { fraction, .. } => Some(push(saturation, fraction)),
        SampleSaturation::Calculated { .. } => None,
    };
    let po2_slot = push(po2, sample.po2_mmhg);
    // A fractional saturation already excludes the dyshaemoglobins: they do
    // not enter its content.
    let dys_enter = !matches!(
        sample.saturation,
        SampleSaturation::Measured {
            kind: SaturationKind::Fractional,
            ..
        }
    );
    let cohb_slot = sample
        .cohb_fraction
        .filter(|_| dys_enter)
        .map(|v| push(cohb, v));
    let methb_slot = sample
        .methb_fraction
        .filter(|_| dys_enter)
        .map(|v| push(methb, v));
    let curve = match sample.saturation {
        SampleSaturation::Calculated { model, conditions } if curve_slots => {
            // COHb and MetHb are the sample's own slots, not condition slots.
            let without_dys = Conditions {
                cohb_fraction: None,
                methb_fraction: None,
                ..conditions
            };
            Some(CurveSetting::new(model, without_dys, slots))
        }
        _ => None,
    };
    (
        SampleLayout {
            saturation: saturation_slot,
            po2: po2_slot,
            cohb: cohb_slot,
            methb: methb_slot,
        },
        curve,
    )
}

/// The engine's sample, with a calculated saturation computed (by `model`
/// when given, else by the sample's own model).
fn blood_sample(
    sample: &ContentSample,
    model: Option<&Model>,
) -> Result<BloodOxygenSample, PhysiologyError> {
    let (fraction, kind) = match sample.saturation {
        SampleSaturation::Measured { fraction, kind } => (fraction, kind),
        SampleSaturation::Calculated {
            model: own,
            conditions,
        } => {
            let c = Conditions {
                cohb_fraction: sample.cohb_fraction,
                methb_fraction: sample.methb_fraction,
                ..conditions
            };
            let m = model.unwrap_or(&own);
            (
                m.saturation(sample.po2_mmhg, &c)?,
                SaturationKind::Functional,
            )
        }
    };
    Ok(BloodOxygenSample {
        saturation_fraction: fraction,
        saturation_kind: kind,
        po2_mmhg: sample.po2_mmhg,
        cohb_fraction: sample.cohb_fraction,
        methb_fraction: sample.methb_fraction,
    })
}

impl MeasurementFunction for OxygenContentValue {
    fn quantity(&self) -> DerivedQuantity {
        self.quantity
    }
    fn slots(&self) -> &[Slot] {
        &self.slots
    }
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        let (a, v) = self.contents(x, None)?;
        Ok(self.combine(a, v))
    }
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        let arterial = if self.quantity == DerivedQuantity::VenousContent {
            Some(0.0)
        } else {
            self.sample_partial(
                &self.inputs.arterial,
                &self.arterial,
                self.arterial_curve.as_ref(),
                x,
                i,
            )?
        };
        let venous = match (&self.inputs.venous, &self.venous) {
            (Some(sample), Some(lay)) => self.sample_partial(sample, lay, None, x, i)?,
            _ => Some(0.0),
        };
        let (Some(da), Some(dv)) = (arterial, venous) else {
            return numerical_partial(self, x, i);
        };
        Ok(Partial::exact(match self.quantity {
            DerivedQuantity::VenousContent => dv,
            DerivedQuantity::ArteriovenousDifference => da - dv,
            DerivedQuantity::ExtractionFraction => {
                let (a, v) = self.contents(x, None)?;
                (v * da - a * dv) / (a * a)
            }
            _ => da,
        }))
    }
    fn curve_model(&self) -> Option<&Model> {
        fn calculated(s: &ContentSample) -> Option<&Model> {
            match &s.saturation {
                SampleSaturation::Calculated { model, .. } => Some(model),
                SampleSaturation::Measured { .. } => None,
            }
        }
        match self.quantity {
            DerivedQuantity::VenousContent => self.inputs.venous.as_ref().and_then(calculated),
            _ => calculated(&self.inputs.arterial)
                .or_else(|| self.inputs.venous.as_ref().and_then(calculated)),
        }
    }
    fn evaluate_with_model(
        &self,
        model: &Model,
        x: &[f64],
    ) -> Option<Result<f64, PhysiologyError>> {
        self.curve_model()?;
        Some(
            self.contents(x, Some(model))
                .map(|(a, v)| self.combine(a, v)),
        )
    }
    fn given_conditions(&self) -> ConditionSet {
        let mut set = ConditionSet::EMPTY;
        for sample in std::iter::once(&self.inputs.arterial).chain(self.inputs.venous.iter()) {
            if let SampleSaturation::Calculated { conditions, .. } = &sample.saturation {
                for c in conditions.given() {
                    set = set.with(c);
                }
            }
            if sample.cohb_fraction.is_some() {
                set = set.with(crate::physiology::conditions::Condition::Cohb);
            }
        }
        set
    }
    fn absent_reason(&self, quantity: InputQuantity) -> AbsentReason {
        if quantity == InputQuantity::HufnerFactor {
            return AbsentReason::ValueNotGiven;
        }
        let fractional = |s: &ContentSample| {
            matches!(
                s.saturation,
                SampleSaturation::Measured {
                    kind: SaturationKind::Fractional,
                    ..
                }
            )
        };
        match quantity {
            InputQuantity::Cohb | InputQuantity::Methb if fractional(&self.inputs.arterial) => {
                AbsentReason::NotPropagated(
                    "the arterial saturation is fractional, so dyshaemoglobins do not enter its content",
                )
            }
            InputQuantity::VenousCohb | InputQuantity::VenousMethb
                if self.inputs.venous.as_ref().is_some_and(fractional) =>
            {
                AbsentReason::NotPropagated(
                    "the venous saturation is fractional, so dyshaemoglobins do not enter its content",
                )
            }
            InputQuantity::Cohb if self.inputs.arterial.cohb_fraction.is_none() => {
                AbsentReason::ValueNotGiven
            }
            InputQuantity::Methb if self.inputs.arterial.methb_fraction.is_none() => {
                AbsentReason::ValueNotGiven
            }
            InputQuantity::VenousCohb | InputQuantity::VenousMethb => {
                match (&self.inputs.venous, self.venous) {
                    (Some(_), Some(_)) => AbsentReason::ValueNotGiven,
                    _ => AbsentReason::NotAnInput,
                }
            }
            q if q.condition().is_some() => match (&self.arterial_curve, &self.inputs.venous) {
                (Some(curve), _) => curve.absent_reason(q),
                (None, Some(ContentSample {
                    saturation: SampleSaturation::Calculated { .. },
                    ..
                })) => AbsentReason::NotPropagated(
                    "the conditions of a calculated venous saturation are held at their values",
                ),
                _ => AbsentReason::NotAnInput,
            },
            _ => AbsentReason::NotAnInput,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physiology::model::DEFAULT_MODEL;

    fn measured(s: f64, po2: f64) -> ContentSample {
        ContentSample {
            saturation: SampleSaturation::Measured {
                fraction: s,
                kind: SaturationKind::Functional,
            },
            po2_mmhg: po2,
            cohb_fraction: None,
            methb_fraction: None,
        }
    }

    fn inputs() -> ContentInputs {
        ContentInputs {
            hemoglobin_g_per_dl: 15.0,
            hufner_factor_ml_per_g: Some(1.34),
            arterial: ContentSample {
                cohb_fraction: Some(0.02),
                methb_fraction: Some(0.01),
                ..measured(0.97, 100.0)
            },
            // Both samples of one kind: functional with measured dyshaemoglobins
            // (the engine then uses the fractional saturation for both).
            venous: Some(ContentSample {
                cohb_fraction: Some(0.02),
                methb_fraction: Some(0.01),
                ..measured(0.75, 40.0)
            }),
        }
    }

    fn check(f: &OxygenContentValue) {
        let x = f.estimates();
        for i in 0..f.slots().len() {
            let given = f.partial(&x, i).unwrap().value;
            let numerical = numerical_partial(f, &x, i).unwrap().value;
            assert!(
                (given - numerical).abs() <= 1e-7 * numerical.abs().max(1e-9),
                "{:?} {:?}: {given} vs {numerical}",
                f.quantity(),
                f.slots()[i].quantity
            );
        }
    }

    #[test]
    fn exact_coefficients_agree_with_differences() {
        for q in [
            DerivedQuantity::ArterialContent,
            DerivedQuantity::VenousContent,
            DerivedQuantity::ArteriovenousDifference,
            DerivedQuantity::ExtractionFraction,
        ] {
            check(&OxygenContentValue::new(q, inputs()).unwrap());
        }
    }

    #[test]
    fn calculated_saturation_propagates_po2_and_conditions() {
        let mut i = inputs();
        i.arterial = ContentSample {
            saturation: SampleSaturation::Calculated {
                model: DEFAULT_MODEL,
                conditions: Conditions {
                    ph: Some(7.32),
                    ..Conditions::STANDARD
                },
            },
            po2_mmhg: 62.0,
            cohb_fraction: Some(0.03),
            methb_fraction: None,
        };
        let f = OxygenContentValue::new(DerivedQuantity::ArterialContent, i).unwrap();
        let quantities: Vec<_> = f.slots().iter().map(|s| s.quantity).collect();
        assert_eq!(
            quantities,
            [
                InputQuantity::Hemoglobin,
                InputQuantity::HufnerFactor,
                InputQuantity::Po2,
                InputQuantity::Cohb,
                InputQuantity::Ph
            ]
        );
        check(&f);
        assert!(f.curve_model().is_some());
    }

    #[test]
    fn the_value_is_the_engines_content() {
        let f = OxygenContentValue::new(DerivedQuantity::ArterialContent, inputs()).unwrap();
        // 1.34 · 15 · 0.97 · (1 − 0.03) + 0.0031 · 100 (derived from the formula).
        let expected = 1.34 * 15.0 * 0.97 * 0.97 + 0.31;
        assert!((f.evaluate(&f.estimates()).unwrap() - expected).abs() < 1e-12);
    }

    #[test]
    fn figures_for_missing_values_say_so() {
        let mut i = inputs();
        i.arterial.cohb_fraction = None;
        i.arterial.methb_fraction = None;
        i.venous = None;
        let f = OxygenContentValue::new(DerivedQuantity::ArterialContent, i).unwrap();
        assert_eq!(
            f.absent_reason(InputQuantity::Cohb),
            AbsentReason::ValueNotGiven
        );
        assert_eq!(
            f.absent_reason(InputQuantity::VenousSaturation),
            AbsentReason::NotAnInput
        );
        assert_eq!(
            f.absent_reason(InputQuantity::VenousCohb),
            AbsentReason::NotAnInput
        );
    }

    #[test]
    fn a_venous_value_needs_a_venous_sample() {
        let mut i = inputs();
        i.venous = None;
        assert!(OxygenContentValue::new(DerivedQuantity::ArteriovenousDifference, i).is_err());
    }
}
