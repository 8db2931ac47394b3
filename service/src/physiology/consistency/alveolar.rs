//! Check 3: a PO2 above the alveolar PO2, which is impossible in a steady
//! state.
//!
//! # Formula
//!
//! ```text
//! PAO2      = FiO2·(PB − PH2O(T)) − PaCO2·(FiO2 + (1 − FiO2)/R)     full alveolar gas equation
//! statistic = PaO2 − PAO2            at body temperature T (the A–a gradient with its sign turned)
//! discordant when statistic > k·u_c(statistic)                      uncertainty-based rule
//! ```
//!
//! * `FiO2` fraction; `PB` barometric pressure, mmHg (760 when not given);
//!   `PH2O(T)` water-vapour pressure at body temperature (Buck 1996);
//!   `PaCO2`, `PaO2` the sample's values at body temperature, mmHg; `R` the
//!   respiratory exchange ratio, 0.8.
//! * u_c from the uncertainty engine's alveolar–arterial gradient
//!   ([`AlveolarValue`]): the figures of FiO2, PB, PaCO2 and PaO2 (FiO2 and PB
//!   have no published figure; without one they add nothing, and the finding
//!   says so).
//!
//! # Threshold
//!
//! No published threshold: "a negative A–a beyond its uncertainty is
//! physically impossible in a steady state" (reference/assurance.md B.2 row
//! 7; the reasoning is ours, the equation and the normal A–a gradient are
//! from the Merck Manual's table of alveolar gas equations, verified). The
//! comparison is made at body temperature, where alveolar gas and blood
//! meet; results reported at 37 °C are carried there by the engine's
//! temperature correction.

use super::combine::{available, decide, evaluate_with_engine, refused, usable, Budget, Side};
use super::finding::{CheckSettings, Evaluated, NotEvaluable, Outcome, StatisticUnit};
use super::sample::{BloodGasSample, SampleField};
use crate::physiology::gas_exchange::{AlveolarGasForm, RESPIRATORY_QUOTIENT_DEFAULT};
use crate::physiology::uncertainty::{AlveolarInputs, AlveolarValue};

/// The form of the alveolar gas equation used (the service's default form).
pub const EQUATION_FORM: AlveolarGasForm = AlveolarGasForm::Full;

/// Check 3 for one sample.
pub fn above_alveolar(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    evaluate(sample, settings).into()
}

fn evaluate(sample: &BloodGasSample, settings: &CheckSettings) -> Result<Evaluated, NotEvaluable> {
    let mut missing = Vec::new();
    if sample.fio2_fraction.is_none() {
        missing.push(SampleField::Fio2);
    }
    if sample.pco2_mmhg.is_none() {
        missing.push(SampleField::Pco2);
    }
    let at_body = available(sample.at_body(), &mut missing)?;
    let (Some(fio2), Some(at_body), true) = (sample.fio2_fraction, at_body, missing.is_empty())
    else {
        return Err(NotEvaluable::missing(
            missing,
            "the alveolar PO2 comes from FiO2, barometric pressure and PCO2 (alveolar gas \
equation)",
        ));
    };
    let Some(paco2) = at_body.pco2_mmhg else {
        return Err(NotEvaluable::missing(
            vec![SampleField::Pco2],
            "the alveolar PO2 needs the PCO2",
        ));
    };
    let (barometric, barometric_given) = sample.barometric_pressure();
    let inputs = AlveolarInputs {
        fio2_fraction: fio2,
        barometric_pressure_mmhg: barometric,
        paco2_mmhg: paco2,
        respiratory_quotient: RESPIRATORY_QUOTIENT_DEFAULT,
        body_temperature_celsius: at_body.temperature_celsius,
        form: EQUATION_FORM,
    };
    let gradient = AlveolarValue::gradient(inputs, at_body.po2_mmhg).map_err(|e| refused(&e))?;
    let mut budget = Budget::new();
    let gradient =
        evaluate_with_engine(&gradient, settings, &mut budget).map_err(|e| refused(&e))?;
    let alveolar = at_body.po2_mmhg + gradient;
    let statistic = -gradient;
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let (threshold, discordant) = decide(
        statistic,
        Side::Positive,
        None,
        uncertainty.as_ref(),
        settings,
    )?;
    let note = format!(
        "PO2 minus alveolar PO2 at body temperature ({} Cel), full alveolar gas equation with \
R 0.8{}. A PO2 above the alveolar PO2 cannot occur in a steady state.",
        super::finding::plain_number(at_body.temperature_celsius),
        if barometric_given {
            ""
        } else {
            " and the barometric pressure of one standard atmosphere (none was given)"
        }
    );
    Ok(Evaluated {
        statistic,
        unit: StatisticUnit::Pressure,
        observed: Some((at_body.po2_mmhg, StatisticUnit::Pressure)),
        reference: Some((alveolar, StatisticUnit::Pressure)),
        threshold,
        discordant,
        uncertainty,
        note,
    })
}
