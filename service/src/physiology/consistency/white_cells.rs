//! Check 8: oxygen consumption by white cells in the syringe ("leukocyte
//! larceny"): a very high white-cell count with a low PO2 while the pulse
//! oximeter reads high.
//!
//! # Rule
//!
//! ```text
//! statistic = white-cell count                                   10⁹/L
//! discordant when count > 150 × 10⁹/L, PO2₃₇ < 55 mmHg and SpO2 > 0.94
//! ```
//!
//! The three numbers are those of the published finding: with white cells
//! above 150 × 10⁹/L, 11 of 19 samples had a PaO2 below 55 mmHg with SpO2
//! above 94 %, against 5 of 62 below that count (Van de Louw et al. 2016).
//! A sample labelled venous or mixed venous is not evaluable (the SpO2 reads
//! arterial blood).
//!
//! # Source
//!
//! Van de Louw A, Desai RJ, Schneider CW, Claxton DF. Hypoxemia during
//! extreme hyperleukocytosis: how spurious? *Respir Care* 2016;61(1):8-14,
//! doi:10.4187/respcare.04196 (abstract, verified: reference/assurance.md
//! B.2 row 3).

use super::combine::{available, decide, Published, Side};
use super::finding::{CheckSettings, Evaluated, NotEvaluable, Outcome, StatisticUnit};
use super::sample::{BloodGasSample, SampleField};

/// White-cell count above which the published pattern was seen, 10⁹/L.
pub const VAN_DE_LOUW_2016_WHITE_CELLS_PER_NL: f64 = 150.0;

/// PO2 below which the published pattern counted a sample, mmHg.
pub const VAN_DE_LOUW_2016_PO2_MMHG: f64 = 55.0;

/// SpO2 above which the published pattern counted a sample, fraction.
pub const VAN_DE_LOUW_2016_SPO2_FRACTION: f64 = 0.94;

/// The citation of the rule.
pub const VAN_DE_LOUW_2016_SOURCE: &str = "Van de Louw A, Desai RJ, Schneider CW, Claxton DF. \
Hypoxemia during extreme hyperleukocytosis: how spurious? Respir Care 2016;61(1):8-14. \
doi:10.4187/respcare.04196: with white cells above 150 x 10^9/L, 11 of 19 samples had a PaO2 \
below 55 mm[Hg] with SpO2 above 94 % (verified in the abstract)";

/// Check 8 for one sample.
pub fn white_cell_consumption(sample: &BloodGasSample, settings: &CheckSettings) -> Outcome {
    evaluate(sample, settings).into()
}

fn evaluate(sample: &BloodGasSample, settings: &CheckSettings) -> Result<Evaluated, NotEvaluable> {
    if !sample.sample_type.may_be_arterial() {
        return Err(NotEvaluable::because(
            "the sample is labelled venous or mixed venous: the published pattern concerns \
arterial samples and the SpO2",
        ));
    }
    let mut missing = Vec::new();
    if sample.white_cell_count_per_nl.is_none() {
        missing.push(SampleField::WhiteCellCount);
    }
    if sample.spo2_fraction.is_none() {
        missing.push(SampleField::Spo2);
    }
    let at_37 = available(sample.at_37(), &mut missing)?;
    let (Some(count), Some(spo2), Some(at_37), true) = (
        sample.white_cell_count_per_nl,
        sample.spo2_fraction,
        at_37,
        missing.is_empty(),
    ) else {
        return Err(NotEvaluable::missing(
            missing,
            "a very high white-cell count is read with the PO2 and the SpO2 at sampling",
        ));
    };
    let published = Published {
        value: VAN_DE_LOUW_2016_WHITE_CELLS_PER_NL,
        source: VAN_DE_LOUW_2016_SOURCE,
        inclusive: false,
    };
    // No uncertainty: the rule is the published pattern itself.
    let (mut threshold, high_count) =
        decide(count, Side::Positive, Some(published), None, settings)?;
    let pattern =
        at_37.po2_mmhg < VAN_DE_LOUW_2016_PO2_MMHG && spo2 > VAN_DE_LOUW_2016_SPO2_FRACTION;
    threshold.rule = "discordant when the white-cell count > threshold while the PO2 at 37 Cel \
is below 55 mm[Hg] and SpO2 above 0.94 (the published pattern)"
        .to_owned();
    let note = match (high_count, pattern) {
        (true, true) => {
            "A very high white-cell count with a low PO2 and a high SpO2: the \
published pattern of oxygen consumption in the syringe; analyse at once, on ice."
        }
        (true, false) => {
            "A very high white-cell count, but not the published pattern of a \
low PO2 with a high SpO2."
        }
        (false, _) => {
            "The white-cell count is below the count at which the published pattern \
was seen."
        }
    };
    Ok(Evaluated {
        statistic: count,
        unit: StatisticUnit::CellCount,
        observed: None,
        reference: None,
        threshold,
        discordant: high_count && pattern,
        uncertainty: None,
        note: note.to_owned(),
    })
}
