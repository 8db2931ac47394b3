//! Which request fields an uncertainty figure may name, per RPC: the engine
//! input each one is, and the units its figure may be written in.

use std::sync::LazyLock;

use crate::{
    api::units::QuantityKind,
    physiology::{conditions::Condition, uncertainty::InputQuantity},
};

/// The units a figure's absolute part may be written in: those of the
/// input's own field.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FigureUnit {
    /// A Quantity kind's accepted UCUM codes (a fraction takes `%` as
    /// percentage points).
    Kind(QuantityKind),
    /// pH: `[pH]`.
    Ph,
    /// The Hüfner factor: `mL/g`.
    HufnerFactor,
    /// A dimensionless number (the respiratory quotient): `1`.
    Dimensionless,
}

impl FigureUnit {
    /// The UCUM codes accepted.
    pub fn accepted(self) -> &'static [&'static str] {
        match self {
            FigureUnit::Kind(kind) => crate::api::units::accepted_units(kind),
            FigureUnit::Ph => &["[pH]"],
            FigureUnit::HufnerFactor => &["mL/g"],
            FigureUnit::Dimensionless => &["1"],
        }
    }
}

/// What a request field is to the uncertainty engine.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum InputRole {
    /// An engine input of some derived value.
    Engine(InputQuantity),
    /// An input of the request that no evaluated value depends on (it serves
    /// a value without an uncertainty evaluation, such as the oxygenation
    /// index).
    NotAnInput,
    /// An input that enters a value whose uncertainty is evaluated, but whose
    /// own uncertainty is not propagated; the text says why.
    NotPropagated(&'static str),
}

/// One request field a figure may name.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct InputSpec {
    /// The dotted request field path (as `Provenance.inputs_used` names it).
    pub path: String,
    /// What it is to the engine.
    pub role: InputRole,
    /// The units its figure may be written in.
    pub unit: FigureUnit,
}

/// The units of a blood condition's figure.
const fn condition_unit(condition: Condition) -> FigureUnit {
    match condition {
        Condition::Ph => FigureUnit::Ph,
        Condition::Pco2 => PRESSURE,
        Condition::Temperature => TEMPERATURE,
        Condition::Dpg | Condition::BaseExcess => CONCENTRATION,
        Condition::Cohb | Condition::Methb | Condition::Hbf => FRACTION,
    }
}

const PRESSURE: FigureUnit = FigureUnit::Kind(QuantityKind::Pressure);
const FRACTION: FigureUnit = FigureUnit::Kind(QuantityKind::Fraction);
const TEMPERATURE: FigureUnit = FigureUnit::Kind(QuantityKind::Temperature);
const CONCENTRATION: FigureUnit = FigureUnit::Kind(QuantityKind::Concentration);
const HEMOGLOBIN: FigureUnit = FigureUnit::Kind(QuantityKind::Hemoglobin);

/// Why the conditions of a venous sample are not propagated.
const VENOUS_CONDITIONS: &str = "the conditions of a calculated venous saturation are held at their values (the engine propagates the arterial curve's conditions only)";

/// Why Hill parameters are not propagated.
const HILL_PARAMETERS: &str =
    "Hill parameters define the curve; the model component states how far curves differ";

/// Builds one RPC's table.
#[derive(Debug, Default)]
struct Builder {
    specs: Vec<InputSpec>,
}

impl Builder {
    fn engine(mut self, path: &str, quantity: InputQuantity, unit: FigureUnit) -> Self {
        self.specs.push(InputSpec {
            path: path.to_owned(),
            role: InputRole::Engine(quantity),
            unit,
        });
        self
    }

    fn other(mut self, path: &str, role: InputRole, unit: FigureUnit) -> Self {
        self.specs.push(InputSpec {
            path: path.to_owned(),
            role,
            unit,
        });
        self
    }

    /// The eight conditions under `prefix`, each as `role` gives it.
    fn conditions(mut self, prefix: &str, role: impl Fn(Condition) -> InputRole) -> Self {
        for condition in Condition::ALL {
            self.specs.push(InputSpec {
                path: format!(
                    "{prefix}.{}",
                    crate::api::warnings::condition_field(condition)
                ),
                role: role(condition),
                unit: condition_unit(condition),
            });
        }
        self
    }

    /// The Hill parameters under `prefix`, with `role`.
    fn hill(self, prefix: &str, role: InputRole) -> Self {
        self.other(&format!("{prefix}.p50"), role, PRESSURE).other(
            &format!("{prefix}.n"),
            role,
            FigureUnit::Dimensionless,
        )
    }

    /// A blood sample's fields under `prefix`, all with `role` (GasExchange's
    /// shunt samples).
    fn sample(self, prefix: &str, role: InputRole) -> Self {
        self.other(&format!("{prefix}.saturation_fraction"), role, FRACTION)
            .other(&format!("{prefix}.po2"), role, PRESSURE)
            .other(&format!("{prefix}.cohb"), role, FRACTION)
            .other(&format!("{prefix}.methb"), role, FRACTION)
            .conditions(&format!("{prefix}.conditions"), |_| role)
            .hill(&format!("{prefix}.hill"), role)
    }

    fn build(self) -> Vec<InputSpec> {
        self.specs
    }
}

fn engine_condition(condition: Condition) -> InputRole {
    InputRole::Engine(InputQuantity::of_condition(condition))
}

fn saturation_from_tension() -> Vec<InputSpec> {
    Builder::default()
        .engine("po2", InputQuantity::Po2, PRESSURE)
        .conditions("conditions", engine_condition)
        .hill("hill", InputRole::NotPropagated(HILL_PARAMETERS))
        .build()
}

fn tension_from_saturation() -> Vec<InputSpec> {
    Builder::default()
        .engine("saturation_fraction", InputQuantity::Saturation, FRACTION)
        .conditions("conditions", engine_condition)
        .hill("hill", InputRole::NotPropagated(HILL_PARAMETERS))
        .build()
}

fn shift_factors() -> Vec<InputSpec> {
    Builder::default()
        .conditions("conditions", engine_condition)
        .build()
}

fn oxygen_content() -> Vec<InputSpec> {
    let hill = InputRole::NotPropagated(HILL_PARAMETERS);
    Builder::default()
        .engine("hemoglobin", InputQuantity::Hemoglobin, HEMOGLOBIN)
        .engine(
            "hufner_factor_ml_per_g",
            InputQuantity::HufnerFactor,
            FigureUnit::HufnerFactor,
        )
        .engine(
            "arterial.saturation_fraction",
            InputQuantity::Saturation,
            FRACTION,
        )
        .engine("arterial.po2", InputQuantity::Po2, PRESSURE)
        // A sample's COHb and MetHb are also its conditions' (one value
        // each, either field): both paths name the same input.
        .engine("arterial.cohb", InputQuantity::Cohb, FRACTION)
        .engine("arterial.methb", InputQuantity::Methb, FRACTION)
        .conditions("arterial.conditions", engine_condition)
        .hill("arterial.hill", hill)
        .engine(
            "venous.saturation_fraction",
            InputQuantity::VenousSaturation,
            FRACTION,
        )
        .engine("venous.po2", InputQuantity::VenousPo2, PRESSURE)
        .engine("venous.cohb", InputQuantity::VenousCohb, FRACTION)
        .engine("venous.methb", InputQuantity::VenousMethb, FRACTION)
        .conditions("venous.conditions", |c| match c {
            Condition::Cohb => InputRole::Engine(InputQuantity::VenousCohb),
            Condition::Methb => InputRole::Engine(InputQuantity::VenousMethb),
            _ => InputRole::NotPropagated(VENOUS_CONDITIONS),
        })
        .hill("venous.hill", hill)
        .other(
            "cardiac_output",
            InputRole::NotAnInput,
            FigureUnit::Kind(QuantityKind::BloodFlow),
        )
        .build()
}

fn gas_exchange() -> Vec<InputSpec> {
    // The shunt's inputs and the indices' airway pressure serve values
    // without an uncertainty evaluation.
    let not_evaluated = InputRole::NotAnInput;
    Builder::default()
        .engine("fio2", InputQuantity::Fio2, FRACTION)
        .engine(
            "barometric_pressure",
            InputQuantity::BarometricPressure,
            PRESSURE,
        )
        .engine("paco2", InputQuantity::Paco2, PRESSURE)
        .engine("pao2", InputQuantity::Pao2, PRESSURE)
        .engine(
            "respiratory_quotient",
            InputQuantity::RespiratoryQuotient,
            FigureUnit::Dimensionless,
        )
        .engine("spo2_fraction", InputQuantity::Spo2, FRACTION)
        .engine(
            "body_temperature",
            InputQuantity::BodyTemperature,
            TEMPERATURE,
        )
        .other(
            "mean_airway_pressure",
            not_evaluated,
            FigureUnit::Kind(QuantityKind::AirwayPressure),
        )
        .other("hemoglobin", not_evaluated, HEMOGLOBIN)
        .sample("arterial", not_evaluated)
        .sample("venous", not_evaluated)
        .build()
}

/// The request fields of one RPC a figure may name.
#[derive(Debug)]
pub struct InputTable {
    specs: LazyLock<Vec<InputSpec>>,
}

impl InputTable {
    const fn new(build: fn() -> Vec<InputSpec>) -> Self {
        Self {
            specs: LazyLock::new(build),
        }
    }

    /// The spec of `path`, if it names an input.
    pub fn find(&self, path: &str) -> Option<&InputSpec> {
        self.specs.iter().find(|s| s.path == path)
    }

    /// The first (canonical) path of an engine input.
    pub fn path_of(&self, quantity: InputQuantity) -> Option<&str> {
        self.specs
            .iter()
            .find(|s| s.role == InputRole::Engine(quantity))
            .map(|s| s.path.as_str())
    }

    /// The units of an engine input's figures and values.
    pub fn unit_of(&self, quantity: InputQuantity) -> Option<FigureUnit> {
        self.specs
            .iter()
            .find(|s| s.role == InputRole::Engine(quantity))
            .map(|s| s.unit)
    }

    /// Every path, in table order.
    pub fn paths(&self) -> impl Iterator<Item = &str> {
        self.specs.iter().map(|s| s.path.as_str())
    }
}

/// SaturationFromTension: `po2` and the blood conditions.
pub static SATURATION_FROM_TENSION_INPUTS: InputTable = InputTable::new(saturation_from_tension);

/// TensionFromSaturation: `saturation_fraction` and the blood conditions.
pub static TENSION_FROM_SATURATION_INPUTS: InputTable = InputTable::new(tension_from_saturation);

/// ShiftFactors: the blood conditions.
pub static SHIFT_FACTORS_INPUTS: InputTable = InputTable::new(shift_factors);

/// OxygenContent: haemoglobin, the Hüfner factor and the two samples.
pub static OXYGEN_CONTENT_INPUTS: InputTable = InputTable::new(oxygen_content);

/// GasExchange: the alveolar gas equation's inputs, PaO2 and SpO2; the
/// shunt's and the indices' inputs are named but not propagated.
pub static GAS_EXCHANGE_INPUTS: InputTable = InputTable::new(gas_exchange);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_are_unique_and_engine_inputs_have_one_canonical_path() {
        for table in [
            &SATURATION_FROM_TENSION_INPUTS,
            &TENSION_FROM_SATURATION_INPUTS,
            &SHIFT_FACTORS_INPUTS,
            &OXYGEN_CONTENT_INPUTS,
            &GAS_EXCHANGE_INPUTS,
        ] {
            let mut paths: Vec<_> = table.paths().collect();
            let n = paths.len();
            paths.sort_unstable();
            paths.dedup();
            assert_eq!(paths.len(), n);
        }
        assert_eq!(
            OXYGEN_CONTENT_INPUTS.path_of(InputQuantity::Cohb),
            Some("arterial.cohb")
        );
        assert_eq!(
            OXYGEN_CONTENT_INPUTS
                .find("arterial.conditions.cohb")
                .map(|s| s.role),
            Some(InputRole::Engine(InputQuantity::Cohb))
        );
        assert_eq!(
            GAS_EXCHANGE_INPUTS.unit_of(InputQuantity::Spo2),
            Some(FRACTION)
        );
    }
}
