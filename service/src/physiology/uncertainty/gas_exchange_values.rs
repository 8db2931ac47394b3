//! Gas-exchange values as measurement functions: PaO2 imputed from SpO2,
//! PaO2/FiO2 (measured or imputed), alveolar PO2 and the alveolar–arterial
//! gradient.
//!
//! # Sensitivity coefficients (all exact)
//!
//! ```text
//! imputed PaO2 P(S):  dP/dS = P / (n_H S (1 − S))    n_H: Hill slope of Severinghaus Eq. 1 at P (implicit-function theorem)
//! P/F = P / F:        ∂/∂P = 1/F,  ∂/∂F = −P/F²       (imputed: ∂/∂S = (dP/dS)/F)
//! PAO2 full:          PAO2 = F (PB − W(T)) − PaCO2 (F + (1 − F)/R)
//!     ∂/∂F = PB − W − PaCO2 (1 − 1/R)   ∂/∂PB = F   ∂/∂PaCO2 = −(F + (1 − F)/R)
//!     ∂/∂R = PaCO2 (1 − F)/R²           ∂/∂T = −F W′(T)
//! PAO2 simplified:    PAO2 = F (PB − W(T)) − PaCO2/R
//!     ∂/∂F = PB − W   ∂/∂PaCO2 = −1/R   ∂/∂R = PaCO2/R²   ∂/∂PB, ∂/∂T as above
//! Buck 1996 water vapour:  W(T) = W₀ exp(g(T)),  g = (A − T/B) T/(C + T)
//!     W′(T) = W g′(T),  g′ = ((A − 2T/B)(C + T) − (A − T/B) T) / (C + T)²
//! A–a gradient = PAO2 − PaO2:  the PAO2 coefficients, and ∂/∂PaO2 = −1
//! ```
//!
//! Sources as on the engine functions called:
//! [`impute_pao2_from_spo2`], [`alveolar_po2_mmhg`],
//! [`water_vapour_pressure_mmhg`], [`pao2_fio2_ratio_mmhg`].

use super::function::{DerivedQuantity, MeasurementFunction, Partial, Slot};
use super::quantity::{Domain, InputQuantity};
use crate::physiology::conditions::Conditions;
use crate::physiology::error::{Input, PhysiologyError};
use crate::physiology::gas_exchange::{
    alveolar_arterial_gradient_mmhg, alveolar_po2_mmhg, impute_pao2_from_spo2,
    pao2_fio2_ratio_mmhg, water_vapour_pressure_mmhg, AlveolarGasForm, AlveolarGasInput,
    BUCK_1996_A, BUCK_1996_B_CELSIUS, BUCK_1996_C_CELSIUS, IMPUTATION_MAX_SPO2_FRACTION,
};
use crate::physiology::model::{DissociationModel, Model, DEFAULT_MODEL};

/// PaO2 imputed from SpO2 (the Ellis inverse of Severinghaus Eq. 1), alone or
/// over FiO2.
#[derive(Debug, Clone, PartialEq)]
pub struct ImputedPao2 {
    slots: Vec<Slot>,
    over_fio2: bool,
}

impl ImputedPao2 {
    /// The imputed PaO2 at `spo2_fraction`; slot: SpO2 (strictly inside
    /// (0, 1); validated up to 0.96, Brown et al. 2016).
    ///
    /// # Errors
    ///
    /// [`impute_pao2_from_spo2`]'s refusal.
    pub fn new(spo2_fraction: f64) -> Result<ImputedPao2, PhysiologyError> {
        impute_pao2_from_spo2(spo2_fraction)?;
        Ok(ImputedPao2 {
            slots: vec![spo2_slot(spo2_fraction)],
            over_fio2: false,
        })
    }

    /// The imputed PaO2 over FiO2; slots: SpO2, FiO2.
    ///
    /// # Errors
    ///
    /// The refusals of [`impute_pao2_from_spo2`] and [`pao2_fio2_ratio_mmhg`].
    pub fn over_fio2(
        spo2_fraction: f64,
        fio2_fraction: f64,
    ) -> Result<ImputedPao2, PhysiologyError> {
        let p = impute_pao2_from_spo2(spo2_fraction)?.pao2_mmhg;
        pao2_fio2_ratio_mmhg(p, fio2_fraction)?;
        Ok(ImputedPao2 {
            slots: vec![
                spo2_slot(spo2_fraction),
                Slot::new(InputQuantity::Fio2, fio2_fraction),
            ],
            over_fio2: true,
        })
    }

    fn pao2_with(model: &Model, spo2: f64) -> Result<f64, PhysiologyError> {
        if *model == DEFAULT_MODEL {
            return Ok(impute_pao2_from_spo2(spo2)?.pao2_mmhg);
        }
        model
            .tension_mmhg(spo2, &Conditions::STANDARD)
            .map_err(|_| PhysiologyError::OutsideModelDomain {
                input: Input::Spo2,
                value: spo2,
                limit: 0.0,
                model: model.info().id,
            })
    }

    fn value_with(&self, model: &Model, x: &[f64]) -> Result<f64, PhysiologyError> {
        let p = Self::pao2_with(model, x[0])?;
        if self.over_fio2 {
            pao2_fio2_ratio_mmhg(p, x[1])
        } else {
            Ok(p)
        }
    }
}

fn spo2_slot(spo2: f64) -> Slot {
    Slot::new(InputQuantity::Spo2, spo2)
        .with_domain(Domain::open(0.0, 1.0))
        .with_validated(0.0, IMPUTATION_MAX_SPO2_FRACTION)
}

impl MeasurementFunction for ImputedPao2 {
    fn quantity(&self) -> DerivedQuantity {
        if self.over_fio2 {
            DerivedQuantity::ImputedPao2Fio2Ratio
        } else {
            DerivedQuantity::ImputedPao2
        }
    }
    fn slots(&self) -> &[Slot] {
        &self.slots
    }
    #[inline]
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        self.value_with(&DEFAULT_MODEL, x)
    }
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        let s = x[0];
        let p = impute_pao2_from_spo2(s)?.pao2_mmhg;
        let fio2 = if self.over_fio2 { x[1] } else { 1.0 };
        Ok(Partial::exact(if i == 0 {
            let slope = DEFAULT_MODEL.hill_slope(p, &Conditions::STANDARD)?;
            p / (slope * s * (1.0 - s)) / fio2
        } else {
            -p / (fio2 * fio2)
        }))
    }
    fn curve_model(&self) -> Option<&Model> {
        Some(&DEFAULT_MODEL)
    }
    fn evaluate_with_model(
        &self,
        model: &Model,
        x: &[f64],
    ) -> Option<Result<f64, PhysiologyError>> {
        Some(self.value_with(model, x))
    }
}

/// PaO2 / FiO2 from a measured PaO2.
#[derive(Debug, Clone, PartialEq)]
pub struct Pao2Fio2Ratio {
    slots: [Slot; 2],
}

impl Pao2Fio2Ratio {
    /// The ratio; slots: PaO2, FiO2.
    ///
    /// # Errors
    ///
    /// [`pao2_fio2_ratio_mmhg`]'s refusal.
    pub fn new(pao2_mmhg: f64, fio2_fraction: f64) -> Result<Pao2Fio2Ratio, PhysiologyError> {
        pao2_fio2_ratio_mmhg(pao2_mmhg, fio2_fraction)?;
        Ok(Pao2Fio2Ratio {
            slots: [
                Slot::new(InputQuantity::Pao2, pao2_mmhg),
                Slot::new(InputQuantity::Fio2, fio2_fraction),
            ],
        })
    }
}

impl MeasurementFunction for Pao2Fio2Ratio {
    fn quantity(&self) -> DerivedQuantity {
        DerivedQuantity::Pao2Fio2Ratio
    }
    fn slots(&self) -> &[Slot] {
        &self.slots
    }
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        pao2_fio2_ratio_mmhg(x[0], x[1])
    }
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        Ok(Partial::exact(if i == 0 {
            1.0 / x[1]
        } else {
            -x[0] / (x[1] * x[1])
        }))
    }
}

/// The inputs of the alveolar gas equation (engine units).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AlveolarInputs {
    /// Inspired O2 fraction.
    pub fio2_fraction: f64,
    /// Barometric pressure, mmHg.
    pub barometric_pressure_mmhg: f64,
    /// Arterial PCO2, mmHg.
    pub paco2_mmhg: f64,
    /// Respiratory exchange ratio R.
    pub respiratory_quotient: f64,
    /// Body temperature, °C.
    pub body_temperature_celsius: f64,
    /// Full or simplified equation.
    pub form: AlveolarGasForm,
}

/// Alveolar PO2, or the alveolar–arterial gradient with a PaO2.
#[derive(Debug, Clone, PartialEq)]
pub struct AlveolarValue {
    form: AlveolarGasForm,
    slots: Vec<Slot>,
    gradient: bool,
}

const FIO2: usize = 0;
const PB: usize = 1;
const PACO2: usize = 2;
const R: usize = 3;
const TEMPERATURE: usize = 4;
const PAO2: usize = 5;

impl AlveolarValue {
    /// Alveolar PO2; slots: FiO2, barometric pressure, PaCO2, R, body
    /// temperature.
    ///
    /// # Errors
    ///
    /// [`alveolar_po2_mmhg`]'s refusal.
    pub fn alveolar_po2(inputs: AlveolarInputs) -> Result<AlveolarValue, PhysiologyError> {
        Self::build(inputs, None)
    }

    /// The alveolar–arterial gradient; slots as [`Self::alveolar_po2`], then
    /// PaO2.
    ///
    /// # Errors
    ///
    /// The refusals of [`alveolar_po2_mmhg`] and
    /// [`alveolar_arterial_gradient_mmhg`].
    pub fn gradient(
        inputs: AlveolarInputs,
        pao2_mmhg: f64,
    ) -> Result<AlveolarValue, PhysiologyError> {
        Self::build(inputs, Some(pao2_mmhg))
    }

    fn build(inputs: AlveolarInputs, pao2: Option<f64>) -> Result<AlveolarValue, PhysiologyError> {
        let mut slots = vec![
            Slot::new(InputQuantity::Fio2, inputs.fio2_fraction),
            Slot::new(
                InputQuantity::BarometricPressure,
                inputs.barometric_pressure_mmhg,
            ),
            Slot::new(InputQuantity::Paco2, inputs.paco2_mmhg),
            Slot::new(
                InputQuantity::RespiratoryQuotient,
                inputs.respiratory_quotient,
            ),
            Slot::new(
                InputQuantity::BodyTemperature,
                inputs.body_temperature_celsius,
            ),
        ];
        if let Some(p) = pao2 {
            slots.push(Slot::new(InputQuantity::Pao2, p));
        }
        let value = AlveolarValue {
            form: inputs.form,
            slots,
            gradient: pao2.is_some(),
        };
        value.evaluate(&value.estimates())?;
        Ok(value)
    }

    fn alveolar(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        Ok(alveolar_po2_mmhg(
            &AlveolarGasInput {
                fio2_fraction: x[FIO2],
                barometric_pressure_mmhg: x[PB],
                paco2_mmhg: x[PACO2],
                respiratory_quotient: x[R],
                body_temperature_celsius: x[TEMPERATURE],
            },
            self.form,
        )?
        .alveolar_po2_mmhg)
    }
}

/// W′(T) of the Buck 1996 water-vapour pressure, mmHg per °C (module docs).
fn water_vapour_slope_mmhg_per_celsius(t: f64) -> Result<f64, PhysiologyError> {
    let w = water_vapour_pressure_mmhg(t)?;
    let (a, b, c) = (BUCK_1996_A, BUCK_1996_B_CELSIUS, BUCK_1996_C_CELSIUS);
    let g_slope = ((a - 2.0 * t / b) * (c + t) - (a - t / b) * t) / ((c + t) * (c + t));
    Ok(w * g_slope)
}

impl MeasurementFunction for AlveolarValue {
    fn quantity(&self) -> DerivedQuantity {
        if self.gradient {
            DerivedQuantity::AlveolarArterialGradient
        } else {
            DerivedQuantity::AlveolarPo2
        }
    }
    fn slots(&self) -> &[Slot] {
        &self.slots
    }
    fn evaluate(&self, x: &[f64]) -> Result<f64, PhysiologyError> {
        let alveolar = self.alveolar(x)?;
        if self.gradient {
            alveolar_arterial_gradient_mmhg(alveolar, x[PAO2])
        } else {
            Ok(alveolar)
        }
    }
    fn partial(&self, x: &[f64], i: usize) -> Result<Partial, PhysiologyError> {
        let (f, pb, paco2, r, t) = (x[FIO2], x[PB], x[PACO2], x[R], x[TEMPERATURE]);
        let w = water_vapour_pressure_mmhg(t)?;
        let full = self.form == AlveolarGasForm::Full;
        Ok(Partial::exact(match i {
            FIO2 if full => pb - w - paco2 * (1.0 - 1.0 / r),
            FIO2 => pb - w,
            PB => f,
            PACO2 if full => -(f + (1.0 - f) / r),
            PACO2 => -1.0 / r,
            R if full => paco2 * (1.0 - f) / (r * r),
            R => paco2 / (r * r),
            TEMPERATURE => -f * water_vapour_slope_mmhg_per_celsius(t)?,
            _ => -1.0,
        }))
    }
}

#[cfg(test)]
mod tests {
    use super::super::function::numerical_partial;
    use super::*;

    fn check<F: MeasurementFunction>(f: &F) {
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
        check(&ImputedPao2::new(0.92).unwrap());
        check(&ImputedPao2::over_fio2(0.92, 0.4).unwrap());
        check(&Pao2Fio2Ratio::new(80.0, 0.5).unwrap());
        for form in [AlveolarGasForm::Full, AlveolarGasForm::Simplified] {
            let inputs = AlveolarInputs {
                fio2_fraction: 0.3,
                barometric_pressure_mmhg: 745.0,
                paco2_mmhg: 44.0,
                respiratory_quotient: 0.8,
                body_temperature_celsius: 38.5,
                form,
            };
            check(&AlveolarValue::alveolar_po2(inputs).unwrap());
            check(&AlveolarValue::gradient(inputs, 90.0).unwrap());
        }
    }

    #[test]
    fn the_values_are_the_engines() {
        let f = ImputedPao2::over_fio2(0.92, 0.4).unwrap();
        // methods.md section 11: SpO2 92 %, FiO2 0.40 → imputed P/F 159.47 (derived).
        assert!((f.evaluate(&f.estimates()).unwrap() - 159.47).abs() < 0.01);
    }
}
