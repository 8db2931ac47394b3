//! Internal-consistency checks of one blood-gas sample before the laboratory
//! releases it: do its results agree with one another?
//!
//! Laboratories must "identify and assess patient test results that appear
//! inconsistent with ... relationship with other test parameters" (42 CFR
//! 493.1281(b)). Each check here is a pure function of one sample
//! ([`BloodGasSample`]) and the settings ([`CheckSettings`]), and gives one
//! [`Finding`]: a verdict (consistent, discordant, not evaluable), the
//! statistic and the threshold with its source, the direction, and the
//! published causes to consider ([`causes`]).
//!
//! "Discordant" means beyond a published threshold where one exists, and
//! otherwise beyond k times the combined standard uncertainty of the
//! statistic, computed with the uncertainty engine
//! ([`crate::physiology::uncertainty`]) from published figures
//! ([`figures`]); the caller may ask for the uncertainty-based rule
//! everywhere ([`ThresholdRule::UncertaintyBased`]).
//!
//! The checks, one module each:
//!
//! | check | module | threshold |
//! | --- | --- | --- |
//! | measured against calculated saturation | [`saturation`] | 10 points, Gunsolus et al. 2018 |
//! | SpO2 against co-oximetry | [`pulse_oximetry`] | 5 points, Akhtar et al. 2007 |
//! | SpO2 against oxyhaemoglobin (CO gap) | [`pulse_oximetry`] | 5 points, Akhtar et al. 2007 |
//! | PO2 above alveolar PO2 | [`alveolar`] | uncertainty-based |
//! | room-air exposure | [`room_air`] | uncertainty-based |
//! | venous pattern, labelled arterial | [`venous`] | uncertainty-based |
//! | Henderson-Hasselbalch | [`acid_base`] | 10 %, published |
//! | temperature correction (pH, PCO2, PO2) | [`temperature_correction`] | uncertainty-based |
//! | white-cell oxygen consumption | [`white_cells`] | 150 × 10⁹/L with the published pattern, Van de Louw et al. 2016 |
//!
//! Findings support the laboratory's review and never reject a result: local
//! policy decides what happens to a discordant sample, and measured
//! co-oximetry and licensed clinicians decide what a result means.

pub mod acid_base;
pub mod alveolar;
pub mod causes;
pub mod combine;
pub mod figures;
pub mod finding;
pub mod pulse_oximetry;
pub mod room_air;
pub mod sample;
pub mod saturation;
pub mod temperature_correction;
pub mod venous;
pub mod white_cells;

pub use figures::{Figure, FigureInput, FigureOrigin, Figures};
pub use finding::{
    Check, CheckSettings, Component, ComponentName, Direction, Evaluated, Finding,
    FindingUncertainty, NotEvaluable, Outcome, StatisticUnit, Threshold, ThresholdBasis,
    ThresholdRule, Verdict,
};
pub use sample::{
    Bicarbonate, BicarbonateSource, BloodGasSample, MeasuredSaturation, ReportedTemperature,
    ResultsAt37, SampleField, SampleType,
};

/// The version of the rules (checks, thresholds, causes). It changes whenever
/// a rule could change a finding.
pub const RULES_VERSION: &str = "1";

/// Every check of one sample, in [`Check::ALL`] order.
pub fn check_sample(sample: &BloodGasSample, settings: &CheckSettings) -> Vec<Finding> {
    Check::ALL
        .iter()
        .map(|&check| run(check, sample, settings))
        .collect()
}

/// One check of one sample.
pub fn run(check: Check, sample: &BloodGasSample, settings: &CheckSettings) -> Finding {
    let outcome = match check {
        Check::MeasuredSaturation => saturation::measured_saturation(sample, settings),
        Check::PulseOximetryGap => pulse_oximetry::pulse_oximetry_gap(sample, settings),
        Check::CarbonMonoxideGap => pulse_oximetry::carbon_monoxide_gap(sample, settings),
        Check::AboveAlveolar => alveolar::above_alveolar(sample, settings),
        Check::RoomAirExposure => room_air::room_air_exposure(sample, settings),
        Check::VenousPattern => venous::venous_pattern(sample, settings),
        Check::AcidBase => acid_base::acid_base(sample, settings),
        Check::TemperatureCorrectionPh
        | Check::TemperatureCorrectionPco2
        | Check::TemperatureCorrectionPo2 => {
            temperature_correction::temperature_correction(check, sample, settings)
        }
        Check::WhiteCellConsumption => white_cells::white_cell_consumption(sample, settings),
    };
    Finding { check, outcome }
}
