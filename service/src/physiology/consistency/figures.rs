//! The uncertainty figures of the uncertainty-based rules: one per sample
//! input, stated by the caller (a [`Statement`], as every uncertainty
//! evaluation takes it) or taken from the uncertainty engine's built-in
//! profiles ([`crate::physiology::uncertainty::profiles`]), by id or by
//! profile set, each with its origin so that a finding can say where it
//! came from.

use crate::physiology::uncertainty::profiles::{
    profile, profile_in_set, Profile, ProfileTableError, Verification,
};
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

/// The built-in figures: the profile sets applied, in order, to every input
/// still without a figure. They cover PO2, PCO2 and pH (proficiency-testing
/// limits, 42 CFR 493), the measured saturation (co-oximeter repeatability)
/// and SpO2 (pulse-oximeter accuracy); COHb, MetHb, FiO2, barometric
/// pressure and bicarbonate have no published figure
/// (reference/assurance.md A.1 "gap") and add nothing unless the caller
/// gives one.
pub const BUILT_IN_PROFILE_SETS: [&str; 3] = [
    "clia-2024",
    "co-oximetry-repeatability-mallat-2015",
    "pulse-oximeter-fda-2013-transmittance",
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
    /// The statement of the uncertainty, in the input's engine unit.
    pub statement: Statement,
    /// Where it comes from.
    pub origin: FigureOrigin,
}

impl Figure {
    /// A caller's standard uncertainty, absolute and/or relative (the
    /// greater applies).
    pub fn stated(amount: Amount) -> Figure {
        Figure::stated_as(Statement::StandardUncertainty(amount))
    }

    /// A caller's statement: a standard uncertainty or a bound with what it
    /// covers.
    pub fn stated_as(statement: Statement) -> Figure {
        Figure {
            statement,
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
        Ok(Figure::of_profile(p))
    }

    fn of_profile(p: &Profile) -> Figure {
        Figure {
            statement: p.statement,
            origin: FigureOrigin::Profile {
                id: p.id.clone(),
                verification: p.verification,
                source: p.source.clone(),
            },
        }
    }

    /// The standard uncertainty at the value `x` (engine unit), by the GUM
    /// conversion of the statement (JCGM 100:2008 clause 4.3, the divisor
    /// the uncertainty engine uses: [`crate::physiology::uncertainty::BoundShape::divisor`]).
    /// The statement's numbers were checked when it was read.
    pub fn standard_uncertainty(&self, x: f64) -> f64 {
        match self.statement {
            Statement::StandardUncertainty(amount) => amount.at(x),
            Statement::Bound { half_width, shape } => half_width.at(x) / shape.divisor(),
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

    /// The built-in figures ([`BUILT_IN_PROFILE_SETS`]).
    ///
    /// # Errors
    ///
    /// [`FigureError::ProfileTable`] for a malformed table (a build defect,
    /// caught by the tests).
    pub fn built_in() -> Result<Figures, FigureError> {
        let mut figures = Figures::none();
        figures.fill_built_in()?;
        Ok(figures)
    }

    /// Give every input still without a figure its built-in one, if any
    /// ([`BUILT_IN_PROFILE_SETS`]).
    ///
    /// # Errors
    ///
    /// As [`Figures::built_in`].
    pub fn fill_built_in(&mut self) -> Result<(), FigureError> {
        for set in BUILT_IN_PROFILE_SETS {
            self.fill_from_set(set)?;
        }
        Ok(())
    }

    /// Give every input still without a figure the profile of `set` for it,
    /// if the set covers it. An unknown set covers nothing (the caller
    /// checks set names).
    ///
    /// # Errors
    ///
    /// [`FigureError::ProfileTable`] for a malformed table (a build defect).
    pub fn fill_from_set(&mut self, set: &str) -> Result<(), FigureError> {
        for input in FigureInput::ALL {
            if self.get(input).is_some() {
                continue;
            }
            for &quantity in input.engine_quantities() {
                if let Some(p) = profile_in_set(set, quantity).map_err(FigureError::ProfileTable)? {
                    self.set(input, Figure::of_profile(p));
                    break;
                }
            }
        }
        Ok(())
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
    fn the_built_in_sets_give_the_published_figure_of_each_input_that_has_one() {
        let figures = Figures::built_in().expect("built-in profiles");
        for (input, id) in [
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
        ] {
            let figure = figures.get(input).expect("set");
            assert!(
                matches!(&figure.origin, FigureOrigin::Profile { id: got, .. } if got == id),
                "{id}: {:?}",
                figure.origin
            );
        }
        for input in [
            FigureInput::Cohb,
            FigureInput::Methb,
            FigureInput::Fio2,
            FigureInput::BarometricPressure,
            FigureInput::Bicarbonate,
        ] {
            assert!(figures.get(input).is_none(), "{input:?}");
        }
    }

    #[test]
    fn a_set_fills_only_inputs_without_a_figure() {
        let mut figures = Figures::none();
        figures.set(FigureInput::Ph, Figure::stated(Amount::absolute(0.01)));
        figures
            .fill_from_set("analytical-goal-harding-fraser-1987")
            .unwrap();
        assert_eq!(
            figures.get(FigureInput::Ph).unwrap().origin,
            FigureOrigin::Stated
        );
        assert!(matches!(
            &figures.get(FigureInput::Pco2).unwrap().origin,
            FigureOrigin::Profile { id, .. } if id == "analytical-goal-harding-fraser-1987-pco2"
        ));
        assert!(figures.get(FigureInput::Po2).is_none());
        figures.fill_from_set("no-such-set").unwrap();
        assert!(figures.get(FigureInput::Po2).is_none());
    }

    #[test]
    fn a_stated_bound_converts_by_the_gum_divisor() {
        // A rectangular bound of ±0.03: u = 0.03/√3 (JCGM 100:2008 4.3.7).
        let figure = Figure::stated_as(Statement::Bound {
            half_width: Amount::absolute(0.03),
            shape: crate::physiology::uncertainty::BoundShape::Rectangular,
        });
        assert!((figure.standard_uncertainty(0.9) - 0.03 / 3f64.sqrt()).abs() < 1e-15);
        // A normal 95 % bound of 15 mm[Hg] or 15 % (greater) at 200 mm[Hg]:
        // u = 30 / 1.959964 (JCGM 100:2008 4.3.4).
        let figure = Figure::stated_as(Statement::Bound {
            half_width: Amount::greater_of(15.0, 0.15),
            shape: crate::physiology::uncertainty::BoundShape::Normal {
                coverage_probability: 0.95,
            },
        });
        assert!((figure.standard_uncertainty(200.0) - 30.0 / 1.959_963_984_540_054).abs() < 1e-9);
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
