//! The consistency checks (issue 14), each with a synthetic sample just
//! inside and one just outside its threshold, the source of the threshold
//! named beside it; a sample without inputs (every check not evaluable, with
//! its reason); and a normal arterial sample (no discordant finding).
//!
//! Synthetic samples: invented numbers, no patient. Where a threshold is
//! uncertainty-based the test states its own figures (not the built-in
//! profiles) and recomputes the limit k·u_c by hand.

use oxbind_service::physiology::{
    conditions::Conditions,
    consistency::{
        acid_base::calculated_bicarbonate_mmol_per_l, check_sample, run, Bicarbonate,
        BicarbonateSource, BloodGasSample, Check, CheckSettings, Figure, FigureInput, Figures,
        MeasuredSaturation, NotEvaluable, ReportedTemperature, ResultsAt37, SampleField,
        SampleType, ThresholdBasis, ThresholdRule, Verdict,
    },
    content::SaturationKind,
    model::{DissociationModel, DEFAULT_MODEL},
    uncertainty::Amount,
};

/// The normal coverage factor at 95 % (JCGM 100:2008 G; 1.959964 to seven
/// figures, common practice).
const K95: f64 = 1.959_963_984_540_054;

fn settings(figures: Figures) -> CheckSettings {
    CheckSettings {
        model: DEFAULT_MODEL,
        rule: ThresholdRule::PublishedWhereAvailable,
        coverage_probability: 0.95,
        figures,
    }
}

fn built_in() -> CheckSettings {
    settings(Figures::built_in().expect("built-in figures"))
}

fn stated(pairs: &[(FigureInput, f64)]) -> CheckSettings {
    let mut figures = Figures::none();
    for &(input, u) in pairs {
        figures.set(input, Figure::stated(Amount::absolute(u)));
    }
    settings(figures)
}

fn functional(fraction: f64) -> Option<MeasuredSaturation> {
    Some(MeasuredSaturation {
        fraction,
        kind: SaturationKind::Functional,
    })
}

fn verdict(check: Check, sample: &BloodGasSample, settings: &CheckSettings) -> Verdict {
    run(check, sample, settings).verdict()
}

fn statistic(check: Check, sample: &BloodGasSample, settings: &CheckSettings) -> f64 {
    run(check, sample, settings)
        .evaluated()
        .unwrap_or_else(|| panic!("{} not evaluated", check.code()))
        .statistic
}

fn threshold(
    check: Check,
    sample: &BloodGasSample,
    settings: &CheckSettings,
) -> (f64, ThresholdBasis) {
    let finding = run(check, sample, settings);
    let e = finding
        .evaluated()
        .unwrap_or_else(|| panic!("{} not evaluated", check.code()));
    (e.threshold.value, e.threshold.basis)
}

/// A normal arterial sample, at 37 Cel, standard conditions.
fn arterial(po2: f64) -> BloodGasSample {
    BloodGasSample {
        po2_mmhg: po2,
        pco2_mmhg: Some(40.0),
        ph: Some(7.40),
        sample_type: SampleType::Arterial,
        ..Default::default()
    }
}

/// Severinghaus 1979 Eq. 1 at 60 mmHg, pH 7.40: 0.905797 (reference/methods.md
/// section 1, derived).
const S_AT_60: f64 = 0.905_797;

#[test]
fn measured_saturation_is_discordant_from_10_points_gunsolus_2018() {
    // Gunsolus IL et al. Am J Clin Pathol 2018;149(1):82-86: a difference of
    // 10 percentage points or more defined discordance.
    let s = built_in();
    let mut sample = arterial(60.0);
    sample.so2 = functional(S_AT_60 + 0.0999);
    assert!((statistic(Check::MeasuredSaturation, &sample, &s) - 0.0999).abs() < 2e-6);
    assert_eq!(
        threshold(Check::MeasuredSaturation, &sample, &s),
        (0.10, ThresholdBasis::Published)
    );
    assert_eq!(
        verdict(Check::MeasuredSaturation, &sample, &s),
        Verdict::Consistent
    );
    sample.so2 = functional(S_AT_60 - 0.1001);
    assert_eq!(
        verdict(Check::MeasuredSaturation, &sample, &s),
        Verdict::Discordant
    );
}

#[test]
fn measured_saturation_by_the_uncertainty_rule_when_asked() {
    // Uncertainty-based: stated u(SO2) 0.01 and no other figure, so the limit
    // is k·√(0.01² + u_model²) with the engine's model spread at 60 mmHg.
    let mut s = stated(&[(FigureInput::So2, 0.01)]);
    s.rule = ThresholdRule::UncertaintyBased;
    let mut sample = arterial(60.0);
    sample.so2 = functional(S_AT_60);
    let (limit, basis) = threshold(Check::MeasuredSaturation, &sample, &s);
    assert_eq!(basis, ThresholdBasis::UncertaintyBased);
    assert!(limit > K95 * 0.01 && limit < 0.05, "{limit}");
    sample.so2 = functional(S_AT_60 + limit * 0.999);
    assert_eq!(
        verdict(Check::MeasuredSaturation, &sample, &s),
        Verdict::Consistent
    );
    sample.so2 = functional(S_AT_60 + limit * 1.001);
    assert_eq!(
        verdict(Check::MeasuredSaturation, &sample, &s),
        Verdict::Discordant
    );
}

#[test]
fn a_fractional_saturation_is_compared_as_functional() {
    // FO2Hb 0.8633 with COHb 0.10 and MetHb 0.01 is a functional 0.97
    // (reference/methods.md section 10, derived); at PO2 100 mmHg and pH
    // 7.40 Severinghaus gives 0.977465 with no COHb, higher with it.
    let s = built_in();
    let mut sample = arterial(100.0);
    sample.so2 = Some(MeasuredSaturation {
        fraction: 0.8633,
        kind: SaturationKind::Fractional,
    });
    sample.cohb_fraction = Some(0.10);
    sample.methb_fraction = Some(0.01);
    let finding = run(Check::MeasuredSaturation, &sample, &s);
    let e = finding.evaluated().expect("evaluated");
    assert!((e.observed.unwrap().0 - 0.97).abs() < 1e-9);
    sample.methb_fraction = None;
    let finding = run(Check::MeasuredSaturation, &sample, &s);
    assert_eq!(finding.verdict(), Verdict::NotEvaluable);
    assert_eq!(
        finding.not_evaluable().unwrap().missing,
        [SampleField::Methb]
    );
}

#[test]
fn pulse_oximetry_gap_is_discordant_above_5_points_akhtar_2007() {
    // Akhtar J, Johnston BD, Krenzelok EP. J Emerg Med 2007;33(2):131-2:
    // a gap above 5 % suggests abnormal haemoglobin.
    let s = built_in();
    let mut sample = arterial(90.0);
    sample.spo2_fraction = Some(0.97);
    sample.so2 = functional(0.9201);
    assert_eq!(
        threshold(Check::PulseOximetryGap, &sample, &s),
        (0.05, ThresholdBasis::Published)
    );
    assert_eq!(
        verdict(Check::PulseOximetryGap, &sample, &s),
        Verdict::Consistent
    );
    sample.so2 = functional(0.9199);
    assert_eq!(
        verdict(Check::PulseOximetryGap, &sample, &s),
        Verdict::Discordant
    );
    // Either way round.
    sample.so2 = functional(0.97);
    sample.spo2_fraction = Some(0.9199);
    assert_eq!(
        verdict(Check::PulseOximetryGap, &sample, &s),
        Verdict::Discordant
    );
    // A venous sample is not compared with the pulse oximeter.
    sample.sample_type = SampleType::Venous;
    assert_eq!(
        verdict(Check::PulseOximetryGap, &sample, &s),
        Verdict::NotEvaluable
    );
}

#[test]
fn carbon_monoxide_gap_is_discordant_above_5_points_akhtar_2007() {
    // Akhtar J et al. J Emerg Med 2007;33(2):131-2 (gap above 5 %); with
    // carbon monoxide the gap SpO2 - O2Hb is about 1.82 + 0.94 x COHb (%)
    // (Buckley RG et al. Ann Emerg Med 1994;24:252-5).
    let s = built_in();
    let mut sample = arterial(90.0);
    sample.spo2_fraction = Some(0.97);
    sample.cohb_fraction = Some(0.04);
    sample.methb_fraction = Some(0.01);
    sample.so2 = Some(MeasuredSaturation {
        fraction: 0.9201,
        kind: SaturationKind::Fractional,
    });
    assert_eq!(
        verdict(Check::CarbonMonoxideGap, &sample, &s),
        Verdict::Consistent
    );
    sample.so2 = Some(MeasuredSaturation {
        fraction: 0.9199,
        kind: SaturationKind::Fractional,
    });
    assert_eq!(
        verdict(Check::CarbonMonoxideGap, &sample, &s),
        Verdict::Discordant
    );
    // From a functional saturation: FO2Hb = SO2 x (1 - 0.04 - 0.01).
    sample.so2 = functional(0.9199 / 0.95);
    assert!((statistic(Check::CarbonMonoxideGap, &sample, &s) - 0.0501).abs() < 1e-12);
    assert_eq!(
        verdict(Check::CarbonMonoxideGap, &sample, &s),
        Verdict::Discordant
    );
    // Without COHb the check cannot be made.
    sample.cohb_fraction = None;
    let finding = run(Check::CarbonMonoxideGap, &sample, &s);
    assert!(finding
        .not_evaluable()
        .unwrap()
        .missing
        .contains(&SampleField::Cohb));
}

/// Water-vapour pressure at 37 Cel by Buck's equation (1996 constants, as
/// quoted in the Wikipedia article "Arden Buck equation"), recomputed here,
/// mmHg.
fn buck_37_mmhg() -> f64 {
    let t: f64 = 37.0;
    let hpa = 6.1121 * ((18.678 - t / 234.5) * (t / (257.14 + t))).exp();
    hpa * 100.0 / 133.322_387_415
}

#[test]
fn a_po2_above_the_alveolar_po2_beyond_its_uncertainty_is_discordant() {
    // No published threshold (reference/assurance.md B.2 row 7): the
    // uncertainty-based rule, k·u_c of PaO2 - PAO2 (JCGM 100:2008 5.1.2).
    // Stated figures: u(PaO2) 2 mmHg, u(PaCO2) 1 mmHg; FiO2 and PB none.
    // Full alveolar gas equation (reference/methods.md section 10):
    // PAO2 = 0.21 (760 - PH2O) - 40 (0.21 + 0.79/0.8).
    let factor = 0.21 + 0.79 / 0.8;
    let alveolar = 0.21 * (760.0 - buck_37_mmhg()) - 40.0 * factor;
    let limit = K95 * (2.0f64.powi(2) + factor.powi(2)).sqrt();
    let s = stated(&[(FigureInput::Po2, 2.0), (FigureInput::Pco2, 1.0)]);
    let mut sample = arterial(alveolar + limit - 0.01);
    sample.fio2_fraction = Some(0.21);
    let finding = run(Check::AboveAlveolar, &sample, &s);
    let e = finding.evaluated().expect("evaluated");
    assert!(
        (e.reference.unwrap().0 - alveolar).abs() < 1e-9,
        "{:?}",
        e.reference
    );
    assert!(
        (e.threshold.value - limit).abs() < 1e-9,
        "{}",
        e.threshold.value
    );
    assert_eq!(e.threshold.basis, ThresholdBasis::UncertaintyBased);
    assert_eq!(finding.verdict(), Verdict::Consistent);
    sample.po2_mmhg = alveolar + limit + 0.01;
    assert_eq!(
        verdict(Check::AboveAlveolar, &sample, &s),
        Verdict::Discordant
    );
    // Without any figure the uncertainty-based rule cannot be applied.
    let nothing = settings(Figures::none());
    let finding = run(Check::AboveAlveolar, &sample, &nothing);
    assert_eq!(finding.verdict(), Verdict::NotEvaluable);
    assert!(finding
        .not_evaluable()
        .unwrap()
        .reason
        .contains("uncertainty figure"));
}

#[test]
fn room_air_exposure_needs_the_po2_toward_air_beyond_uncertainty_and_a_low_pco2() {
    // No published threshold (reference/assurance.md B.2 row 2):
    // uncertainty-based, with u(SpO2) stated 0.02 and the model spread; the
    // PO2 of air about 150 mm[Hg] (Baird G. Biochem Med 2013;23(1):19-27);
    // a PCO2 below 35 mm[Hg], the usual arterial range (common practice).
    let s = stated(&[(FigureInput::Spo2, 0.02)]);
    let mut sample = arterial(110.0);
    sample.pco2_mmhg = Some(30.0);
    sample.spo2_fraction = Some(0.90);
    let finding = run(Check::RoomAirExposure, &sample, &s);
    let e = finding.evaluated().expect("evaluated");
    let implied = e.observed.unwrap().0;
    let limit = e.threshold.value;
    assert!(limit >= K95 * 0.02, "{limit}");
    sample.spo2_fraction = Some(implied - limit * 0.999);
    assert_eq!(
        verdict(Check::RoomAirExposure, &sample, &s),
        Verdict::Consistent
    );
    sample.spo2_fraction = Some(implied - limit * 1.001);
    assert_eq!(
        verdict(Check::RoomAirExposure, &sample, &s),
        Verdict::Discordant
    );
    // The same PO2 with a normal PCO2: the pattern is incomplete.
    sample.pco2_mmhg = Some(40.0);
    assert_eq!(
        verdict(Check::RoomAirExposure, &sample, &s),
        Verdict::Consistent
    );
    // A PO2 far below the SpO2's is away from air, not toward it.
    let mut low = arterial(40.0);
    low.pco2_mmhg = Some(30.0);
    low.spo2_fraction = Some(0.97);
    let finding = run(Check::RoomAirExposure, &low, &s);
    assert!(finding.evaluated().unwrap().statistic < -limit);
    assert_eq!(finding.verdict(), Verdict::Consistent);
}

#[test]
fn a_venous_pattern_in_an_arterial_label_is_discordant_beyond_uncertainty() {
    // No published threshold (reference/assurance.md B.2 row 4, "derive
    // from u(SpO2) and u(sO2)"): k·√(0.01² + 0.02²) with the figures stated.
    let s = stated(&[(FigureInput::So2, 0.01), (FigureInput::Spo2, 0.02)]);
    let limit = K95 * (0.01f64.powi(2) + 0.02f64.powi(2)).sqrt();
    let mut sample = arterial(40.0);
    sample.spo2_fraction = Some(0.96);
    sample.so2 = functional(0.96 - limit + 1e-4);
    let (t, basis) = threshold(Check::VenousPattern, &sample, &s);
    assert!((t - limit).abs() < 1e-12 && basis == ThresholdBasis::UncertaintyBased);
    assert_eq!(
        verdict(Check::VenousPattern, &sample, &s),
        Verdict::Consistent
    );
    sample.so2 = functional(0.96 - limit - 1e-4);
    assert_eq!(
        verdict(Check::VenousPattern, &sample, &s),
        Verdict::Discordant
    );
    // Only a lower saturation counts, and only under an arterial label.
    sample.so2 = functional(0.96 + limit + 1e-4);
    assert_eq!(
        verdict(Check::VenousPattern, &sample, &s),
        Verdict::Consistent
    );
    sample.sample_type = SampleType::Unknown;
    assert_eq!(
        verdict(Check::VenousPattern, &sample, &s),
        Verdict::NotEvaluable
    );
}

#[test]
fn a_venous_pattern_from_the_calculated_saturation_when_none_was_measured() {
    // Severinghaus at 40 mmHg, pH 7.40: 0.749465 (methods.md section 1 [D]).
    let s = built_in();
    let mut sample = arterial(40.0);
    sample.spo2_fraction = Some(0.97);
    let finding = run(Check::VenousPattern, &sample, &s);
    let e = finding.evaluated().expect("evaluated");
    assert!((e.observed.unwrap().0 - 0.749_465).abs() < 1e-6);
    assert_eq!(finding.verdict(), Verdict::Discordant);
}

#[test]
fn acid_base_is_discordant_beyond_10_percent() {
    // Henderson-Hasselbalch, pK' 6.1 and 0.03 mmol/L per mmHg
    // (AccessAnesthesiology); more than 10 % difference means one value is
    // wrong (Harrison's Principles of Internal Medicine; Sharing in Health).
    let s = built_in();
    let calculated = 0.03 * 40.0 * 10f64.powf(7.40 - 6.1);
    assert!((calculated_bicarbonate_mmol_per_l(7.40, 40.0) - calculated).abs() < 1e-12);
    assert!((calculated - 23.94).abs() < 0.01, "{calculated}");
    let mut sample = arterial(90.0);
    sample.bicarbonate = Some(Bicarbonate {
        mmol_per_l: calculated * 1.0999,
        source: BicarbonateSource::Measured,
    });
    assert_eq!(
        threshold(Check::AcidBase, &sample, &s),
        (0.10, ThresholdBasis::Published)
    );
    assert_eq!(verdict(Check::AcidBase, &sample, &s), Verdict::Consistent);
    sample.bicarbonate = Some(Bicarbonate {
        mmol_per_l: calculated * 0.8999,
        source: BicarbonateSource::Measured,
    });
    assert_eq!(verdict(Check::AcidBase, &sample, &s), Verdict::Discordant);
    // Total CO2 = bicarbonate + 0.03 x PCO2 (about 1.2 mmol/L more:
    // StatPearls).
    sample.bicarbonate = Some(Bicarbonate {
        mmol_per_l: calculated * 1.0999 + 1.2,
        source: BicarbonateSource::MeasuredTotalCo2,
    });
    assert!((statistic(Check::AcidBase, &sample, &s) - 0.0999).abs() < 1e-12);
    // A calculated bicarbonate would test the equation against itself.
    sample.bicarbonate = Some(Bicarbonate {
        mmol_per_l: calculated,
        source: BicarbonateSource::Calculated,
    });
    let finding = run(Check::AcidBase, &sample, &s);
    assert!(finding
        .not_evaluable()
        .unwrap()
        .reason
        .contains("calculated"));
}

/// pH corrected from 37 Cel to 33 Cel at pH37 7.40: 7.4588 (reference/
/// methods.md section 8, derived; the pH-dependent term is zero at 7.40).
#[test]
fn a_ph_at_patient_temperature_disagreeing_with_its_37_cel_value_is_discordant() {
    // Uncertainty-based: the published corrections agree at pH 7.40, so only
    // rounding remains: pH 0.01 and 0.1 Cel resolutions read as rectangular
    // (JCGM 100:2008 F.2.2.1), u = √((0.01/√12)² + (1.026·0.01/√12)² +
    // (0.0147·0.1/√12)²).
    let corrected = 7.40 - 0.0147 * (33.0 - 37.0);
    let r = 1.0 / 12f64.sqrt();
    let u = ((0.01 * r).powi(2) + (1.026 * 0.01 * r).powi(2) + (0.0147 * 0.1 * r).powi(2)).sqrt();
    let limit = K95 * u;
    let s = built_in();
    let mut sample = BloodGasSample {
        po2_mmhg: 61.059,
        ph: Some(corrected + limit - 1e-5),
        patient_temperature_celsius: Some(33.0),
        reported_at: ReportedTemperature::AtPatientTemperature,
        at_37: ResultsAt37 {
            ph: Some(7.40),
            ..Default::default()
        },
        ..Default::default()
    };
    let (t, basis) = threshold(Check::TemperatureCorrectionPh, &sample, &s);
    assert!((t - limit).abs() < 1e-6, "{t} against {limit}");
    assert_eq!(basis, ThresholdBasis::UncertaintyBased);
    assert_eq!(
        verdict(Check::TemperatureCorrectionPh, &sample, &s),
        Verdict::Consistent
    );
    sample.ph = Some(corrected + limit + 1e-5);
    assert_eq!(
        verdict(Check::TemperatureCorrectionPh, &sample, &s),
        Verdict::Discordant
    );
    // Results labelled at patient temperature but never corrected.
    sample.ph = Some(7.40);
    assert_eq!(
        verdict(Check::TemperatureCorrectionPh, &sample, &s),
        Verdict::Discordant
    );
}

#[test]
fn pco2_and_po2_at_patient_temperature_are_checked_against_their_corrections() {
    // PCO2 40 -> 33 Cel: 33.578 (Nunn 0.019) or 33.733 (Bradley 0.0185); PO2
    // 80 -> 33 Cel: 61.059 integrated, 61.531 single step (reference/
    // methods.md section 8, derived). The limit covers the spread of the
    // published corrections read as rectangular bounds, plus rounding.
    let s = built_in();
    let mut sample = BloodGasSample {
        po2_mmhg: 61.059,
        pco2_mmhg: Some(33.578),
        patient_temperature_celsius: Some(33.0),
        reported_at: ReportedTemperature::AtPatientTemperature,
        at_37: ResultsAt37 {
            pco2_mmhg: Some(40.0),
            po2_mmhg: Some(80.0),
            ..Default::default()
        },
        ..Default::default()
    };
    for check in [
        Check::TemperatureCorrectionPco2,
        Check::TemperatureCorrectionPo2,
    ] {
        assert!(
            statistic(check, &sample, &s).abs() < 0.01,
            "{}",
            check.code()
        );
        assert_eq!(verdict(check, &sample, &s), Verdict::Consistent);
    }
    let (pco2_limit, _) = threshold(Check::TemperatureCorrectionPco2, &sample, &s);
    let spread = 33.733 - 33.578;
    assert!(pco2_limit > K95 * spread / 3f64.sqrt(), "{pco2_limit}");
    sample.pco2_mmhg = Some(33.578 + pco2_limit * 1.01);
    assert_eq!(
        verdict(Check::TemperatureCorrectionPco2, &sample, &s),
        Verdict::Discordant
    );
    sample.pco2_mmhg = Some(33.578 + pco2_limit * 0.99);
    assert_eq!(
        verdict(Check::TemperatureCorrectionPco2, &sample, &s),
        Verdict::Consistent
    );
    // The uncorrected PO2 reported as if at 33 Cel.
    sample.po2_mmhg = 80.0;
    assert_eq!(
        verdict(Check::TemperatureCorrectionPo2, &sample, &s),
        Verdict::Discordant
    );
}

#[test]
fn white_cell_consumption_needs_the_count_above_150_with_the_published_pattern() {
    // Van de Louw A et al. Respir Care 2016;61(1):8-14: white cells above
    // 150 x 10^9/L; PaO2 below 55 mm[Hg] with SpO2 above 94 %.
    let s = built_in();
    let mut sample = arterial(48.0);
    sample.spo2_fraction = Some(0.97);
    sample.white_cell_count_per_nl = Some(150.0);
    assert_eq!(
        threshold(Check::WhiteCellConsumption, &sample, &s),
        (150.0, ThresholdBasis::Published)
    );
    assert_eq!(
        verdict(Check::WhiteCellConsumption, &sample, &s),
        Verdict::Consistent
    );
    sample.white_cell_count_per_nl = Some(150.1);
    assert_eq!(
        verdict(Check::WhiteCellConsumption, &sample, &s),
        Verdict::Discordant
    );
    sample.po2_mmhg = 55.0;
    assert_eq!(
        verdict(Check::WhiteCellConsumption, &sample, &s),
        Verdict::Consistent
    );
    sample.po2_mmhg = 48.0;
    sample.spo2_fraction = Some(0.94);
    assert_eq!(
        verdict(Check::WhiteCellConsumption, &sample, &s),
        Verdict::Consistent
    );
}

#[test]
fn a_sample_with_only_a_po2_gives_every_check_not_evaluable_with_its_reason() {
    let sample = BloodGasSample {
        po2_mmhg: 80.0,
        sample_type: SampleType::Arterial,
        ..Default::default()
    };
    let findings = check_sample(&sample, &built_in());
    assert_eq!(findings.len(), Check::ALL.len());
    for finding in &findings {
        assert_eq!(
            finding.verdict(),
            Verdict::NotEvaluable,
            "{}",
            finding.check.code()
        );
        let NotEvaluable { reason, missing } = finding.not_evaluable().unwrap();
        assert!(!reason.is_empty());
        assert!(!missing.is_empty(), "{}: {reason}", finding.check.code());
    }
    let reasons = |check: Check| {
        findings[Check::ALL.iter().position(|c| *c == check).unwrap()]
            .not_evaluable()
            .unwrap()
            .missing
            .clone()
    };
    assert_eq!(
        reasons(Check::MeasuredSaturation),
        [SampleField::So2, SampleField::Ph]
    );
    assert_eq!(
        reasons(Check::AboveAlveolar),
        [SampleField::Fio2, SampleField::Pco2]
    );
    assert_eq!(
        reasons(Check::TemperatureCorrectionPo2),
        [SampleField::Po2At37]
    );
}

/// A normal arterial sample (invented), every input given, results at 37 Cel
/// with the same results repeated as the 37 Cel set.
fn normal_arterial() -> BloodGasSample {
    let s = DEFAULT_MODEL
        .saturation(
            95.0,
            &Conditions {
                ph: Some(7.41),
                cohb_fraction: Some(0.012),
                ..Conditions::STANDARD
            },
        )
        .unwrap();
    BloodGasSample {
        po2_mmhg: 95.0,
        pco2_mmhg: Some(39.0),
        ph: Some(7.41),
        patient_temperature_celsius: Some(36.9),
        reported_at: ReportedTemperature::At37,
        sample_type: SampleType::Arterial,
        so2: functional(s - 0.004),
        cohb_fraction: Some(0.012),
        methb_fraction: Some(0.006),
        hemoglobin_g_per_dl: Some(14.2),
        hbf_fraction: None,
        spo2_fraction: Some(0.97),
        fio2_fraction: Some(0.21),
        barometric_pressure_mmhg: Some(752.0),
        bicarbonate: Some(Bicarbonate {
            mmol_per_l: 25.6,
            source: BicarbonateSource::MeasuredTotalCo2,
        }),
        white_cell_count_per_nl: Some(7.2),
        at_37: ResultsAt37 {
            ph: Some(7.41),
            pco2_mmhg: Some(39.0),
            po2_mmhg: Some(95.0),
        },
    }
}

#[test]
fn a_normal_arterial_sample_gives_no_discordant_finding() {
    for settings in [built_in(), {
        let mut s = built_in();
        s.rule = ThresholdRule::UncertaintyBased;
        s
    }] {
        for finding in check_sample(&normal_arterial(), &settings) {
            assert_ne!(
                finding.verdict(),
                Verdict::Discordant,
                "{}: {:?}",
                finding.check.code(),
                finding.outcome
            );
        }
    }
    // Every check but the uncertainty-free ones could be made; FiO2 and PB
    // have no built-in figure, so the alveolar check rests on PO2 and PCO2.
    let findings = check_sample(&normal_arterial(), &built_in());
    assert!(findings.iter().all(|f| f.verdict() == Verdict::Consistent));
}
