//! The uncertainty figures of the uncertainty-based rules: one per sample
//! input, stated by the caller or taken from the uncertainty engine's
//! built-in profiles ([`crate::physiology::uncertainty::profiles`]), each
//! with its origin so that a finding can say where it came from.

use crate::physiology::uncertainty::profiles::{profile, ProfileTableError, Verification};
use crate::physiology::uncertainty::{Amount, InputQuantity, Statement};

/// A sample input that can carry an uncertainty figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum FigureInput {
    /// PO2 (and the PO2 at 37 °C), mmHg.
    Po2,
    /// PCO2, mmHg.
    Pco2,
    /// pH.
    Ph,
    /// The measured saturation (co-oximetry), fraction.
    So2,
    /// SpO2, fraction.
    Spo2,
    /// COHb, fraction.
    Cohb,
    /// MetHb, fraction.
    Methb,
    /// FiO2, fraction.
    Fio2,
    /// Barometric pressure, mmHg.
    BarometricPressure,
    /// Bicarbonate, mmol/L.
    Bicarbonate,
}

impl FigureInput {
    /// Every input, in contract order.
    pub const ALL: [FigureInput; 10] = [
        FigureInput::Po2,
        FigureInput::Pco2,
        FigureInput::Ph,
        FigureInput::So2,
        FigureInput::Spo2,
        FigureInput::Cohb,
        FigureInput::Methb,
        FigureInput::Fio2,
        FigureInput::BarometricPressure,
        FigureInput::Bicarbonate,
    ];

    /// A stable lower_snake_case name.
    pub const fn name(self) -> &'static str {
        match self {
            FigureInput::Po2 => "po2",
            FigureInput::Pco2 => "pco2",
            FigureInput::Ph => "ph",
            FigureInput::So2 => "so2",
            FigureInput::Spo2 => "spo2",
            FigureInput::Cohb => "cohb",
            FigureInput::Methb => "methb",
            FigureInput::Fio2 => "fio2",
            FigureInput::BarometricPressure => "barometric_pressure",
            FigureInput::Bicarbonate => "bicarbonate",
        }
    }

    /// The uncertainty engine's quantities a profile for this input may be
    /// for (PO2 and PaO2 are the same measurement here, as are PCO2 and
    /// PaCO2, and the measured saturation and the engine's saturation).
    pub const fn engine_quantities(self) -> &'static [InputQuantity] {
        match self {
            FigureInput::Po2 => &[InputQuantity::Po2, InputQuantity::Pao2],
            FigureInput::Pco2 => &[InputQuantity::Pco2, InputQuantity::Paco2],
            FigureInput::Ph => &[InputQuantity::Ph],
            FigureInput::So2 => &[InputQuantity::Saturation],
            FigureInput::Spo2 => &[InputQuantity::Spo2],
            FigureInput::Cohb => &[InputQuantity::Cohb],
            FigureInput::Methb => &[InputQuantity::Methb],
            FigureInput::Fio2 => &[InputQuantity::Fio2],
            FigureInput::BarometricPressure => &[InputQuantity::BarometricPressure],
            FigureInput::Bicarbonate => &[],
        }
    }

    /// The input a slot of the uncertainty engine stands for, if any.
    pub fn of_engine(quantity: InputQuantity) -> Option<FigureInput> {
        FigureInput::ALL
            .into_iter()
            .find(|f| f.engine_quantities().contains(&quantity))
    }
}

/// The built-in figure of each input that has one: a profile of the
/// uncertainty engine, by id. Inputs not listed (COHb, MetHb, FiO2,
/// barometric pressure, bicarbonate) have no published figure
/// (reference/assurance.md A.1 "gap") and add nothing unless the caller gives
/// one.
pub const BUILT_IN_PROFILES: [(FigureInput, &str); 5] = [
    (FigureInput::Po2, "clia-2024-po2"),
    (FigureInput::Pco2, "clia-2024-pco2"),
    (FigureInput::Ph, "clia-2024-ph"),
    (
        FigureInput::So2,
        "co-oximetry-repeatability-mallat-2015-saturation",
    ),
    (
        FigureInput::Spo2,
        "pulse-oximeter-fda-2013-transmittance-spo2",
    ),
];

/// Where a figure comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum FigureOrigin {
    /// Stated in the request.
    Stated,
    /// A built-in profile.
    Profile {
        /// Its id.
        id: String,
        /// How far its figure was verified.
        verification: Verification,
        /// Its citation.
        source: String,
    },
}

impl FigureOrigin {
    /// The origin in words, for a finding.
    pub fn describe(&self) -> String {
        match self {
            FigureOrigin::Stated => "stated in the request".to_owned(),
            FigureOrigin::Profile {
                id,
                verification,
                source,
            } => format!("built-in profile {id} ({}): {source}", verification.name()),
        }
    }
}

/// One input's figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    /// The statement of the uncertainty.
    pub statement: Statement,
    /// The engine quantity the statement is resolved as (its profile's, or
    /// the input's first).
    pub quantity: Option<InputQuantity>,
    /// Where it comes from.
    pub origin: FigureOrigin,
}

impl Figure {
    /// A caller's standard uncertainty, absolute and/or relative (the
    /// greater applies).
    pub fn stated(amount: Amount) -> Figure {
        Figure {
            statement: Statement::StandardUncertainty(amount),
            quantity: None,
            origin: FigureOrigin::Stated,
        }
    }

    /// The built-in profile `id`, which must be a figure for `input`.
    ///
    /// # Errors
    ///
    /// [`FigureError::UnknownProfile`] or [`FigureError::ProfileForAnotherInput`];
    /// [`FigureError::ProfileTable`] for a malformed table (a build defect).
    pub fn profile(input: FigureInput, id: &str) -> Result<Figure, FigureError> {
        let p = profile(id)
            .map_err(FigureError::ProfileTable)?
            .ok_or(FigureError::UnknownProfile)?;
        if !input.engine_quantities().contains(&p.input) {
            return Err(FigureError::ProfileForAnotherInput {
                profile_input: p.input,
            });
        }
        Ok(Figure {
            statement: p.statement,
            quantity: Some(p.input),
            origin: FigureOrigin::Profile {
                id: p.id.clone(),
                verification: p.verification,
                source: p.source.clone(),
            },
        })
    }

    /// The standard uncertainty at the value `x` (engine unit), by the GUM
    /// conversion of the statement (JCGM 100:2008 clause 4.3, as the
    /// uncertainty engine does it).
    pub fn standard_uncertainty(&self, x: f64) -> f64 {
        match (&self.statement, self.quantity) {
            (Statement::StandardUncertainty(amount), _) => amount.at(x),
            (statement, Some(quantity)) => statement
                .resolve(quantity, x)
                .map(|r| r.standard_uncertainty)
                // Built-in statements are checked when the table is read; a
                // bound that cannot be resolved adds nothing rather than
                // a guess.
                .unwrap_or(0.0),
            (Statement::Bound { .. }, None) => 0.0,
        }
    }
}

/// Why a figure could not be formed.
#[derive(Debug, Clone, PartialEq)]
pub enum FigureError {
    /// No built-in profile has this id.
    UnknownProfile,
    /// The profile is a figure for another quantity.
    ProfileForAnotherInput {
        /// The quantity it is for.
        profile_input: InputQuantity,
    },
    /// The built-in table is malformed.
    ProfileTable(ProfileTableError),
}

/// The figures of one request: at most one per input.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Figures {
    figures: Vec<(FigureInput, Figure)>,
}

impl Figures {
    /// No figure for any input.
    pub fn none() -> Figures {
        Figures::default()
    }

    /// The built-in figures ([`BUILT_IN_PROFILES`]).
    ///
    /// # Errors
    ///
    /// [`FigureError::ProfileTable`] for a malformed table (a build defect,
    /// caught by the tests).
    pub fn built_in() -> Result<Figures, FigureError> {
        let mut figures = Figures::none();
        for (input, id) in BUILT_IN_PROFILES {
            figures.set(input, Figure::profile(input, id)?);
        }
        Ok(figures)
    }

    /// Set (or replace) the figure of `input`.
    pub fn set(&mut self, input: FigureInput, figure: Figure) {
        self.figures.retain(|(i, _)| *i != input);
        self.figures.push((input, figure));
    }

    /// The figure of `input`, if any.
    pub fn get(&self, input: FigureInput) -> Option<&Figure> {
        self.figures
            .iter()
            .find(|(i, _)| *i == input)
            .map(|(_, f)| f)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_built_in_profile_exists_and_fits_its_input() {
        let figures = Figures::built_in().expect("built-in profiles");
        for (input, id) in BUILT_IN_PROFILES {
            let figure = figures.get(input).expect("set");
            assert!(
                matches!(&figure.origin, FigureOrigin::Profile { id: got, .. } if got == id),
                "{id}"
            );
        }
        assert!(figures.get(FigureInput::Fio2).is_none());
    }

    #[test]
    fn the_co_oximetry_repeatability_figure_is_the_sdd_over_1_96_root_2() {
        // Mallat J et al. 2015 (PMC4602629): SaO2 SDD +/- 1.23 %; the SDD of
        // two measurements is 1.96 x sqrt(2) x the within-subject SD (Bland
        // JM, "Repeatability", www-users.york.ac.uk/~mb55/meas/repeat.htm).
        let figure = Figure::profile(
            FigureInput::So2,
            "co-oximetry-repeatability-mallat-2015-saturation",
        )
        .unwrap();
        let u = figure.standard_uncertainty(0.97);
        assert!((u - 0.0123 / (1.96 * 2f64.sqrt())).abs() < 2e-6, "{u}");
    }

    #[test]
    fn a_profile_for_another_input_is_refused() {
        assert_eq!(
            Figure::profile(FigureInput::Ph, "clia-2024-po2"),
            Err(FigureError::ProfileForAnotherInput {
                profile_input: InputQuantity::Po2
            })
        );
        assert_eq!(
            Figure::profile(FigureInput::Ph, "no-such-profile"),
            Err(FigureError::UnknownProfile)
        );
    }

    #[test]
    fn a_stated_figure_is_the_greater_of_its_parts() {
        let figure = Figure::stated(Amount::greater_of(2.0, 0.05));
        assert_eq!(figure.standard_uncertainty(20.0), 2.0);
        assert_eq!(figure.standard_uncertainty(100.0), 5.0);
    }
}
