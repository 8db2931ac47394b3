//! Check 2: the pulse oximeter against the co-oximeter, in two findings.
//!
//! # Formula
//!
//! ```text
//! pulse-oximetry gap:   statistic = SpO2 − SO2,meas        (functional SO2)
//!                       discordant when |statistic| > 0.05
//! carbon monoxide gap:  statistic = SpO2 − FO2Hb,meas      (oxyhaemoglobin fraction)
//!                       discordant when statistic > 0.05
//! FO2Hb = SO2 · (1 − FCOHb − FMetHb)   when the measured saturation is functional
//! uncertainty-based limit: k·√(u²(SpO2) + u²(SO2) [+ FO2Hb's COHb and MetHb terms])
//! ```
//!
//! A pulse oximeter reads carboxyhaemoglobin as oxyhaemoglobin, so with COHb
//! the SpO2 stays high while the oxyhaemoglobin fraction falls: the gap was
//! about 1.82 + 0.94 × COHb (%) in carbon monoxide poisoning (Buckley et al.
//! 1994). Both checks compare arterial blood with the pulse oximeter, so a
//! sample labelled venous or mixed venous is not evaluable.
//!
//! # Threshold
//!
//! [`AKHTAR_2007_GAP`]: a gap above 5 % suggests abnormal haemoglobin
//! (Akhtar, Johnston, Krenzelok 2007).

use super::combine::{
    available, decide, measured_saturation_budget, other_rule_note, usable, Budget, Published, Side,
};
use super::figures::FigureInput;
use super::finding::{CheckSettings, Evaluated, NotEvaluable, Outcome, StatisticUnit};
use super::sample::{BloodGasSample, SampleField};

/// A saturation gap above 5 percentage points suggests abnormal haemoglobin
/// (CO, MetHb, SulfHb).
///
/// Akhtar J, Johnston BD, Krenzelok EP. Mind the gap. *J Emerg Med*
/// 2007;33(2):131-2, doi:10.1016/j.jemermed.2006.11.016 (verified,
/// reference/assurance.md B.2).
pub const AKHTAR_2007_GAP: f64 = 0.05;

/// The citation of [`AKHTAR_2007_GAP`].
pub const AKHTAR_2007_SOURCE: &str = "Akhtar J, Johnston BD, Krenzelok EP. Mind the gap. J Emerg \
Med 2007;33(2):131-2. doi:10.1016/j.jemermed.2006.11.016: a saturation gap above 5 % suggests \
abnormal haemoglobin (verified)";

/// Buckley et al. 1994: the gap SpO2 − O2Hb in carbon monoxide poisoning,
/// intercept in percentage points.
///
/// Buckley RG et al. The pulse oximetry gap in carbon monoxide intoxication.
/// *Ann Emerg Med* 1994;24:252-5 (verified, reference/assurance.md A.1):
/// gap = 1.82 + 0.94 × COHb (%).
pub const BUCKLEY_1994_INTERCEPT_POINTS: f64 = 1.82;

/// Buckley et al. 1994: slope of the gap on COHb (%), per percentage point.
pub const BUCKLEY_1994_SLOPE: f64 = 0.94;

/// The reason both checks give for a venous sample.
const NOT_ARTERIAL: &str = "the sample is labelled venous or mixed venous: its saturation is not \
expected to equal the pulse oximeter's, which reads arterial blood";

/// Check 2a, the pulse-oximetry gap, for one sample.
pub fn pulse_oximetry_gap(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    functional_gap(sample, settings).into()
}

/// Check 2b, the carbon monoxide gap, for one sample.
pub fn carbon_monoxide_gap(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    oxyhaemoglobin_gap(sample, settings).into()
}

fn functional_gap(
    sample: &BloodGasSample,
    settings: &CheckSettings,
) -> Result<Evaluated, NotEvaluable> {
    if !sample.sample_type.may_be_arterial() {
        return Err(NotEvaluable::because(NOT_ARTERIAL));
    }
    let mut missing = Vec::new();
    if sample.spo2_fraction.is_none() {
        missing.push(SampleField::Spo2);
    }
    if sample.so2.is_none() {
        missing.push(SampleField::So2);
    }
    let so2 = available(sample.functional_so2(), &mut missing)?.flatten();
    let (Some(spo2), Some(so2), true) = (sample.spo2_fraction, so2, missing.is_empty()) else {
        return Err(NotEvaluable::missing(
            missing,
            "the pulse oximeter's SpO2 is compared with the measured functional saturation",
        ));
    };
    let mut budget = Budget::new();
    budget.input(&settings.figures, FigureInput::Spo2, spo2, 1.0);
    measured_saturation_budget(sample, &settings.figures, &mut budget, false);
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let statistic = spo2 - so2;
    let published = Published {
        value: AKHTAR_2007_GAP,
        source: AKHTAR_2007_SOURCE,
        inclusive: false,
    };
    let (threshold, discordant) = decide(
        statistic,
        Side::Both,
        Some(published),
        uncertainty.as_ref(),
        settings,
    )?;
    let note = format!(
        "SpO2 minus the measured functional saturation; positive when the pulse oximeter reads \
higher. {}",
        other_rule_note(&threshold, Some(published))
    );
    Ok(Evaluated {
        statistic,
        unit: StatisticUnit::Fraction,
        observed: Some((spo2, StatisticUnit::Fraction)),
        reference: Some((so2, StatisticUnit::Fraction)),
        threshold,
        discordant,
        uncertainty,
        note: note.trim_end().to_owned(),
    })
}

fn oxyhaemoglobin_gap(
    sample: &BloodGasSample,
    settings: &CheckSettings,
) -> Result<Evaluated, NotEvaluable> {
    if !sample.sample_type.may_be_arterial() {
        return Err(NotEvaluable::because(NOT_ARTERIAL));
    }
    let mut missing = Vec::new();
    if sample.spo2_fraction.is_none() {
        missing.push(SampleField::Spo2);
    }
    if sample.so2.is_none() {
        missing.push(SampleField::So2);
    }
    if sample.cohb_fraction.is_none() {
        missing.push(SampleField::Cohb);
    }
    let o2hb = available(sample.fractional_o2hb(), &mut missing)?.flatten();
    let (Some(spo2), Some(o2hb), Some(cohb), true) = (
        sample.spo2_fraction,
        o2hb,
        sample.cohb_fraction,
        missing.is_empty(),
    ) else {
        return Err(NotEvaluable::missing(
            missing,
            "the pulse oximeter's SpO2 is compared with the measured oxyhaemoglobin fraction, \
and the gap read against the measured COHb",
        ));
    };
    let mut budget = Budget::new();
    budget.input(&settings.figures, FigureInput::Spo2, spo2, 1.0);
    measured_saturation_budget(sample, &settings.figures, &mut budget, true);
    let uncertainty = usable(budget.finish(settings.coverage_probability));
    let statistic = spo2 - o2hb;
    let published = Published {
        value: AKHTAR_2007_GAP,
        source: AKHTAR_2007_SOURCE,
        inclusive: false,
    };
    let (threshold, discordant) = decide(
        statistic,
        Side::Positive,
        Some(published),
        uncertainty.as_ref(),
        settings,
    )?;
    let buckley = (BUCKLEY_1994_INTERCEPT_POINTS + BUCKLEY_1994_SLOPE * 100.0 * cohb) / 100.0;
    let note = format!(
        "SpO2 minus the measured oxyhaemoglobin fraction; positive when the pulse oximeter \
reads higher. With this COHb, Buckley et al. (Ann Emerg Med 1994;24:252-5) found a gap of \
about {} (1.82 + 0.94 x COHb in per cent). {}",
        super::finding::plain_number(buckley),
        other_rule_note(&threshold, Some(published))
    );
    Ok(Evaluated {
        statistic,
        unit: StatisticUnit::Fraction,
        observed: Some((spo2, StatisticUnit::Fraction)),
        reference: Some((o2hb, StatisticUnit::Fraction)),
        threshold,
        discordant,
        uncertainty,
        note: note.trim_end().to_owned(),
    })
}
