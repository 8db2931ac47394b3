//! Tests of blood-gas temperature correction, oxygen content and gas exchange.
//!
//! Reference values live in `tests/data/transport_*.csv`, one row per check,
//! each with its inputs, expected value, tolerance and source (tags as in
//! methods.md: [V] verified, [D] derived, [M] from memory; "common practice"
//! for facts of the trade).

use std::collections::HashMap;

use oxbind_service::physiology::content::{
    default_hufner_factor_ml_per_g, dissolved_oxygen_ml_per_dl, oxygen_capacity_ml_per_dl,
    oxygen_content_ml_per_dl, oxygen_content_ml_per_dl_from_mmol_per_l,
    oxygen_content_mmol_per_l_from_ml_per_dl, oxygen_flow_mmol_per_min_from_ml_per_min,
    oxygen_transport, sample_oxygen_content, BloodOxygenSample, OxygenTransportInput,
    SaturationKind, DISSOLVED_O2_ML_PER_DL_PER_KPA, O2_MOLAR_VOLUME_ML_PER_MMOL,
    O2_SOLUBILITY_SI_MMOL_PER_L_PER_KPA,
};
use oxbind_service::physiology::dyshemoglobin::{
    fractional_from_functional, functional_from_fractional,
};
use oxbind_service::physiology::error::{Input, PhysiologyError};
use oxbind_service::physiology::gas_exchange::{
    alveolar_arterial_gradient_mmhg, alveolar_paco2_factor, alveolar_po2_mmhg,
    alveolar_po2_with_water_vapour_mmhg, end_capillary_content, impute_pao2_from_spo2,
    oxygen_saturation_index, oxygenation_index, pao2_fio2_ratio_mmhg, shunt_fraction,
    spo2_fio2_ratio, water_vapour_pressure_mmhg, AlveolarGasForm, AlveolarGasInput,
    ImputationValidity, ShuntInput,
};
use oxbind_service::physiology::severinghaus::po2_temperature_coefficient_ln_per_celsius;
use oxbind_service::physiology::temperature::{
    correct_blood_gas, correct_pco2_mmhg, correct_pco2_with_mmhg, correct_ph, correct_ph_with,
    correct_po2_mmhg, correct_po2_single_step_mmhg,
    po2_temperature_coefficient_log10_form_per_celsius, BloodGasTemperatureInput, Pco2Coefficient,
    PhCorrection,
};
use proptest::prelude::*;
use serde::Deserialize;

// ---------------------------------------------------------------------------
// Reference tables
// ---------------------------------------------------------------------------

#[derive(Debug, Deserialize)]
struct Row {
    check: String,
    inputs: String,
    expected: f64,
    tolerance: f64,
    unit: String,
    source: String,
}

impl Row {
    fn inputs(&self) -> HashMap<String, f64> {
        self.inputs
            .split(';')
            .filter(|pair| !pair.trim().is_empty())
            .map(|pair| {
                let (key, value) = pair
                    .split_once('=')
                    .unwrap_or_else(|| panic!("bad input pair {pair:?} in {self:?}"));
                let value: f64 = value
                    .trim()
                    .parse()
                    .unwrap_or_else(|_| panic!("bad number in {pair:?} in {self:?}"));
                (key.trim().to_owned(), value)
            })
            .collect()
    }
}

fn read_rows(file: &str) -> Vec<Row> {
    let path = format!("{}/tests/data/{file}", env!("CARGO_MANIFEST_DIR"));
    let mut reader = csv::Reader::from_path(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
    let rows: Vec<Row> = reader
        .deserialize()
        .map(|r| r.unwrap_or_else(|e| panic!("{path}: {e}")))
        .collect();
    assert!(!rows.is_empty(), "{path} has no rows");
    for row in &rows {
        assert!(
            !row.source.trim().is_empty(),
            "row without a source: {row:?}"
        );
        assert!(row.tolerance > 0.0, "row without a tolerance: {row:?}");
    }
    rows
}

/// Run every row through `compute`; report every failing row with its inputs.
fn check_table(file: &str, compute: impl Fn(&str, &HashMap<String, f64>) -> Option<f64>) {
    let rows = read_rows(file);
    let mut failures = Vec::new();
    for row in &rows {
        let inputs = row.inputs();
        match compute(&row.check, &inputs) {
            None => failures.push(format!("unknown check {:?} in row {row:?}", row.check)),
            Some(actual) => {
                // Written so that a NaN result counts as a failure.
                let within = (actual - row.expected).abs() <= row.tolerance;
                if !within {
                    failures.push(format!(
                        "{}({}) = {actual} {}, expected {} ± {} [{}]",
                        row.check, row.inputs, row.unit, row.expected, row.tolerance, row.source
                    ));
                }
            }
        }
    }
    assert!(
        failures.is_empty(),
        "{file}: {} of {} rows failed:\n{}",
        failures.len(),
        rows.len(),
        failures.join("\n")
    );
}

fn get(inputs: &HashMap<String, f64>, key: &str) -> f64 {
    *inputs
        .get(key)
        .unwrap_or_else(|| panic!("input {key} missing from {inputs:?}"))
}

#[test]
fn temperature_correction_reference_table() {
    check_table("transport_temperature_correction.csv", |check, i| {
        let ok = |r: Result<f64, PhysiologyError>| Some(r.expect("valid reference input"));
        match check {
            "ph" => ok(correct_ph(get(i, "ph"), get(i, "from"), get(i, "to"))),
            "ph_constant_coefficient" => ok(correct_ph_with(
                get(i, "ph"),
                get(i, "from"),
                get(i, "to"),
                PhCorrection::ConstantCoefficient,
            )),
            "pco2_nunn" => ok(correct_pco2_with_mmhg(
                get(i, "pco2"),
                get(i, "from"),
                get(i, "to"),
                Pco2Coefficient::Nunn1965,
            )),
            "pco2_bradley" => ok(correct_pco2_with_mmhg(
                get(i, "pco2"),
                get(i, "from"),
                get(i, "to"),
                Pco2Coefficient::Bradley1956,
            )),
            "po2_single_step" => ok(correct_po2_single_step_mmhg(
                get(i, "po2"),
                get(i, "from"),
                get(i, "to"),
            )),
            "po2_integrated" => ok(correct_po2_mmhg(
                get(i, "po2"),
                get(i, "from"),
                get(i, "to"),
            )),
            "po2_log10_form_coefficient" => ok(po2_temperature_coefficient_log10_form_per_celsius(
                get(i, "po2"),
            )),
            "po2_eq3_over_ln10" => Some(
                po2_temperature_coefficient_ln_per_celsius(get(i, "po2")) / std::f64::consts::LN_10,
            ),
            _ => None,
        }
    });
}

fn functional(s: f64, po2: f64) -> BloodOxygenSample {
    BloodOxygenSample::functional(s, po2)
}

fn transport_from(i: &HashMap<String, f64>) -> OxygenTransportInput {
    OxygenTransportInput {
        hemoglobin_g_per_dl: get(i, "hb"),
        arterial: functional(get(i, "s"), get(i, "po2")),
        venous: i.get("sv").map(|&sv| functional(sv, get(i, "pv"))),
        cardiac_output_l_per_min: i.get("co").copied(),
        hufner_factor_ml_per_g: i.get("k").copied(),
    }
}

#[test]
fn oxygen_content_reference_table() {
    check_table("transport_oxygen_content.csv", |check, i| {
        let ok = |r: Result<f64, PhysiologyError>| Some(r.expect("valid reference input"));
        let transport = || oxygen_transport(&transport_from(i)).expect("valid reference input");
        match check {
            "arterial_content" | "venous_content" => ok(oxygen_content_ml_per_dl(
                get(i, "hb"),
                get(i, "s"),
                get(i, "po2"),
                get(i, "k"),
            )),
            "arterial_content_default_functional" => Some(
                sample_oxygen_content(get(i, "hb"), &functional(get(i, "s"), get(i, "po2")), None)
                    .expect("valid")
                    .total_ml_per_dl,
            ),
            "delivery" => transport().delivery_ml_per_min,
            "consumption" => transport().consumption_ml_per_min,
            "extraction" => transport().extraction_fraction,
            "arteriovenous_difference" => transport().arteriovenous_difference_ml_per_dl,
            "fractional_from_functional" => ok(fractional_from_functional(
                get(i, "s"),
                get(i, "cohb"),
                get(i, "methb"),
            )),
            "content_functional_with_dyshemoglobins" => {
                let sample = BloodOxygenSample {
                    cohb_fraction: Some(get(i, "cohb")),
                    methb_fraction: Some(get(i, "methb")),
                    ..functional(get(i, "s"), get(i, "po2"))
                };
                Some(
                    sample_oxygen_content(get(i, "hb"), &sample, None)
                        .expect("valid")
                        .total_ml_per_dl,
                )
            }
            "capacity" => ok(oxygen_capacity_ml_per_dl(
                get(i, "hb"),
                get(i, "k"),
                0.0,
                0.0,
            )),
            "dissolved_per_kpa" => Some(DISSOLVED_O2_ML_PER_DL_PER_KPA),
            "solubility_si_as_conventional" => {
                Some(O2_SOLUBILITY_SI_MMOL_PER_L_PER_KPA * O2_MOLAR_VOLUME_ML_PER_MMOL / 10.0)
            }
            "content_si" => ok(oxygen_content_mmol_per_l_from_ml_per_dl(get(
                i,
                "ml_per_dl",
            ))),
            "flow_si" => ok(oxygen_flow_mmol_per_min_from_ml_per_min(get(
                i,
                "ml_per_min",
            ))),
            _ => None,
        }
    });
}

#[test]
fn gas_exchange_reference_table() {
    check_table("transport_gas_exchange.csv", |check, i| {
        let ok = |r: Result<f64, PhysiologyError>| Some(r.expect("valid reference input"));
        let alveolar = |form| {
            alveolar_po2_with_water_vapour_mmhg(
                get(i, "fio2"),
                get(i, "pb"),
                get(i, "ph2o"),
                get(i, "paco2"),
                i.get("r").copied().unwrap_or(0.8),
                form,
            )
            .expect("valid reference input")
        };
        let shunt_input = || ShuntInput {
            hemoglobin_g_per_dl: get(i, "hb"),
            alveolar_po2_mmhg: get(i, "pao2_alv"),
            arterial: functional(get(i, "s"), get(i, "po2")),
            venous: functional(get(i, "sv"), get(i, "pv")),
            hufner_factor_ml_per_g: None,
        };
        match check {
            "water_vapour" => ok(water_vapour_pressure_mmhg(get(i, "t"))),
            "alveolar_simplified" => Some(alveolar(AlveolarGasForm::Simplified).alveolar_po2_mmhg),
            "alveolar_full" => Some(alveolar(AlveolarGasForm::Full).alveolar_po2_mmhg),
            // The abbreviated bedside form: the inspired term of our equation
            // minus 1.2·PaCO2.
            "alveolar_abbreviated" => {
                Some(alveolar(AlveolarGasForm::Full).inspired_po2_mmhg - 1.2 * get(i, "paco2"))
            }
            "alveolar_body_temperature" => Some(
                alveolar_po2_mmhg(
                    &AlveolarGasInput {
                        fio2_fraction: get(i, "fio2"),
                        barometric_pressure_mmhg: get(i, "pb"),
                        paco2_mmhg: get(i, "paco2"),
                        respiratory_quotient: get(i, "r"),
                        body_temperature_celsius: get(i, "t"),
                    },
                    AlveolarGasForm::Full,
                )
                .expect("valid")
                .alveolar_po2_mmhg,
            ),
            "paco2_factor" => ok(alveolar_paco2_factor(get(i, "fio2"), get(i, "r"))),
            "end_capillary_content" => Some(
                end_capillary_content(
                    get(i, "hb"),
                    get(i, "pao2_alv"),
                    &functional(0.98, 100.0),
                    None,
                )
                .expect("valid")
                .total_ml_per_dl,
            ),
            "shunt" => Some(
                shunt_fraction(&shunt_input())
                    .expect("valid")
                    .shunt_fraction,
            ),
            "a_a_gradient" => ok(alveolar_arterial_gradient_mmhg(
                get(i, "pao2_alv"),
                get(i, "pao2"),
            )),
            "pf_ratio" => ok(pao2_fio2_ratio_mmhg(get(i, "pao2"), get(i, "fio2"))),
            "oxygenation_index" => ok(oxygenation_index(
                get(i, "fio2"),
                get(i, "map"),
                get(i, "pao2"),
            )),
            "oxygen_saturation_index" => ok(oxygen_saturation_index(
                get(i, "fio2"),
                get(i, "map"),
                get(i, "spo2"),
            )),
            "imputed_pao2" => {
                let imputed = impute_pao2_from_spo2(get(i, "spo2")).expect("valid");
                assert_eq!(imputed.validity, ImputationValidity::Valid, "{i:?}");
                Some(imputed.pao2_mmhg)
            }
            "imputed_pao2_not_valid" => {
                let imputed = impute_pao2_from_spo2(get(i, "spo2")).expect("computed");
                assert_eq!(
                    imputed.validity,
                    ImputationValidity::AboveValiditySpo2,
                    "{i:?}"
                );
                Some(imputed.pao2_mmhg)
            }
            "imputed_pf_ratio" => {
                let imputed = impute_pao2_from_spo2(get(i, "spo2")).expect("valid");
                ok(pao2_fio2_ratio_mmhg(imputed.pao2_mmhg, get(i, "fio2")))
            }
            "sf_ratio" => ok(spo2_fio2_ratio(get(i, "spo2"), get(i, "fio2"))),
            _ => None,
        }
    });
}

// ---------------------------------------------------------------------------
// Named behaviour
// ---------------------------------------------------------------------------

/// The integration removes most of the single-step error: methods.md section 8
/// gives 61.531 (single) against 61.059 (integrated) for 80 mmHg to 33 °C, so
/// the two must differ by about 0.47 mmHg (derived from Eq. 3).
#[test]
fn integrated_po2_differs_from_single_step_as_published() {
    let single = correct_po2_single_step_mmhg(80.0, 37.0, 33.0).unwrap();
    let integrated = correct_po2_mmhg(80.0, 37.0, 33.0).unwrap();
    assert!(
        ((single - integrated) - 0.472).abs() < 0.003,
        "{single} vs {integrated}"
    );
}

#[test]
fn no_temperature_change_returns_the_input() {
    assert_eq!(correct_po2_mmhg(87.5, 36.0, 36.0).unwrap(), 87.5);
    assert_eq!(correct_pco2_mmhg(41.0, 36.0, 36.0).unwrap(), 41.0);
    assert!((correct_ph(7.31, 36.0, 36.0).unwrap() - 7.31).abs() < 1e-12);
}

#[test]
fn combined_correction_matches_the_single_corrections() {
    let corrected = correct_blood_gas(&BloodGasTemperatureInput {
        ph: Some(7.40),
        pco2_mmhg: Some(40.0),
        po2_mmhg: None,
        measured_celsius: 37.0,
        target_celsius: 33.0,
    })
    .unwrap();
    // methods.md section 8 check values [D].
    assert!((corrected.ph.unwrap() - 7.4588).abs() < 1e-4);
    assert!((corrected.pco2_mmhg.unwrap() - 33.578).abs() < 1e-3);
    assert_eq!(corrected.po2_mmhg, None);
}

#[test]
fn hufner_defaults_follow_the_saturation_kind() {
    // methods.md section 10: 1.39 with fractional FO2Hb, 1.34 with functional SO2.
    assert_eq!(
        default_hufner_factor_ml_per_g(SaturationKind::Fractional),
        1.39
    );
    assert_eq!(
        default_hufner_factor_ml_per_g(SaturationKind::Functional),
        1.34
    );
    let fractional = BloodOxygenSample {
        saturation_kind: SaturationKind::Fractional,
        ..functional(0.98, 100.0)
    };
    let content = sample_oxygen_content(15.0, &fractional, None).unwrap();
    assert_eq!(content.hufner_factor_ml_per_g, 1.39);
    // derived: 1.39·15·0.98 + 0.31 = 20.743 (methods.md section 10 [D]).
    assert!((content.total_ml_per_dl - 20.743).abs() < 5e-4);
}

#[test]
fn functional_and_fractional_conversions_round_trip() {
    let fo2hb = fractional_from_functional(0.97, 0.10, 0.01).unwrap();
    let so2 = functional_from_fractional(fo2hb, 0.10, 0.01).unwrap();
    assert!((so2 - 0.97).abs() < 1e-12);
}

#[test]
fn si_content_round_trips() {
    let mmol = oxygen_content_mmol_per_l_from_ml_per_dl(20.008).unwrap();
    let back = oxygen_content_ml_per_dl_from_mmol_per_l(mmol).unwrap();
    assert!((back - 20.008).abs() < 1e-12);
}

#[test]
fn inconsistent_samples_are_refused_with_the_reason() {
    // Venous content above arterial.
    let input = OxygenTransportInput {
        hemoglobin_g_per_dl: 15.0,
        arterial: functional(0.70, 40.0),
        venous: Some(functional(0.90, 60.0)),
        cardiac_output_l_per_min: Some(5.0),
        hufner_factor_ml_per_g: None,
    };
    let err = oxygen_transport(&input).unwrap_err();
    assert!(matches!(
        err,
        PhysiologyError::Inconsistent {
            input: Input::VenousSaturation,
            ..
        }
    ));

    // Fractional O2Hb + COHb + MetHb above 1.
    let sample = BloodOxygenSample {
        saturation_kind: SaturationKind::Fractional,
        cohb_fraction: Some(0.1),
        ..functional(0.95, 100.0)
    };
    let err = sample_oxygen_content(15.0, &sample, None).unwrap_err();
    assert!(matches!(
        err,
        PhysiologyError::Inconsistent {
            input: Input::Saturation,
            ..
        }
    ));

    // Arterial functional, venous fractional: one Hüfner factor cannot serve both.
    let input = OxygenTransportInput {
        venous: Some(BloodOxygenSample {
            saturation_kind: SaturationKind::Fractional,
            ..functional(0.70, 40.0)
        }),
        arterial: functional(0.98, 100.0),
        ..input
    };
    let err = oxygen_transport(&input).unwrap_err();
    assert!(matches!(
        err,
        PhysiologyError::Inconsistent {
            input: Input::VenousSaturation,
            ..
        }
    ));

    // A Hüfner factor above four O2 per tetramer.
    let err = oxygen_content_ml_per_dl(15.0, 0.98, 100.0, 1.45).unwrap_err();
    assert_eq!(err.input(), Input::HufnerFactor);
}

#[test]
fn impossible_alveolar_gas_is_refused() {
    // Barometric pressure below water-vapour pressure.
    let err =
        alveolar_po2_with_water_vapour_mmhg(0.21, 40.0, 47.0, 40.0, 0.8, AlveolarGasForm::Full)
            .unwrap_err();
    assert!(matches!(
        err,
        PhysiologyError::Inconsistent {
            input: Input::BarometricPressure,
            ..
        }
    ));
    // PaCO2 so high that PAO2 would be negative.
    let err =
        alveolar_po2_with_water_vapour_mmhg(0.21, 760.0, 47.0, 200.0, 0.8, AlveolarGasForm::Full)
            .unwrap_err();
    assert!(matches!(
        err,
        PhysiologyError::Inconsistent {
            input: Input::Paco2,
            ..
        }
    ));
}

#[test]
fn shunt_refuses_arterial_content_above_end_capillary() {
    let err = shunt_fraction(&ShuntInput {
        hemoglobin_g_per_dl: 15.0,
        alveolar_po2_mmhg: 60.0,
        arterial: functional(1.0, 100.0),
        venous: functional(0.75, 40.0),
        hufner_factor_ml_per_g: None,
    })
    .unwrap_err();
    assert!(matches!(
        err,
        PhysiologyError::Inconsistent {
            input: Input::Saturation,
            ..
        }
    ));
}

#[test]
fn imputation_flags_rather_than_clamps_above_96_percent() {
    // Brown et al. Chest 2016: valid for SpO2 <= 96 % [V].
    assert!(impute_pao2_from_spo2(0.96).unwrap().is_valid());
    let above = impute_pao2_from_spo2(0.961).unwrap();
    assert!(!above.is_valid());
    // Still computed from the Ellis inverse: between the 96 % and 97 % values
    // of methods.md section 11 [D] (81.898 and 90.573 mmHg).
    assert!(above.pao2_mmhg > 81.898 && above.pao2_mmhg < 90.573);
    // 1.0 and 0 have no inverse: refused, naming SpO2.
    for s in [0.0, 1.0] {
        assert_eq!(impute_pao2_from_spo2(s).unwrap_err().input(), Input::Spo2);
    }
}

#[test]
fn water_vapour_rises_with_temperature() {
    // Saturation vapour pressure increases with temperature (common practice).
    let cold = water_vapour_pressure_mmhg(33.0).unwrap();
    let warm = water_vapour_pressure_mmhg(40.0).unwrap();
    assert!(cold < 47.0 && warm > 47.5, "{cold} {warm}");
}

// ---------------------------------------------------------------------------
// Property tests
// ---------------------------------------------------------------------------

/// Values every function must refuse for a non-negative physical input.
fn bad_value() -> impl Strategy<Value = f64> {
    prop_oneof![
        Just(f64::NAN),
        Just(f64::INFINITY),
        Just(f64::NEG_INFINITY),
        (1e-9..1e9f64).prop_map(|x| -x),
    ]
}

fn temperature() -> impl Strategy<Value = f64> {
    10.0..45.0f64
}

/// ∫ d ln P / fT(P) from ln P1 to ln P2 by composite Simpson (2000 intervals):
/// the temperature change that Eq. 3 implies for a PO2 change. An independent
/// re-derivation of the integration, not using Runge–Kutta.
fn temperature_change_for(p1: f64, p2: f64) -> f64 {
    let (a, b) = (p1.ln(), p2.ln());
    let n = 2000;
    let h = (b - a) / n as f64;
    let g = |y: f64| 1.0 / po2_temperature_coefficient_ln_per_celsius(y.exp());
    let mut sum = g(a) + g(b);
    for k in 1..n {
        let w = if k % 2 == 1 { 4.0 } else { 2.0 };
        sum += w * g(a + k as f64 * h);
    }
    sum * h / 3.0
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn temperature_correction_round_trips(
        ph in 6.6..8.0f64,
        pco2 in 5.0..150.0f64,
        po2 in 5.0..700.0f64,
        a in temperature(),
        b in temperature(),
    ) {
        let there = correct_ph(ph, a, b);
        if let Ok(there) = there {
            let back = correct_ph(there, b, a).unwrap();
            prop_assert!((back - ph).abs() < 1e-12, "pH {ph} {a}->{b}->{a} = {back}");
        }
        let back = correct_pco2_mmhg(correct_pco2_mmhg(pco2, a, b).unwrap(), b, a).unwrap();
        prop_assert!((back / pco2 - 1.0).abs() < 1e-12);
        let back = correct_po2_mmhg(correct_po2_mmhg(po2, a, b).unwrap(), b, a).unwrap();
        // Two integrations, each within about 5e-10 relative.
        prop_assert!((back / po2 - 1.0).abs() < 2e-9, "PO2 {po2} {a}->{b}->{a} = {back}");
    }

    #[test]
    fn integrated_po2_satisfies_equation_3(po2 in 5.0..1000.0f64, a in temperature(), b in temperature()) {
        let p2 = correct_po2_mmhg(po2, a, b).unwrap();
        let implied = temperature_change_for(po2, p2);
        prop_assert!((implied - (b - a)).abs() < 1e-6, "{po2} {a}->{b}: {p2}, implied dT {implied}");
    }

    #[test]
    fn po2_and_pco2_fall_on_cooling(p in 1.0..1000.0f64, a in temperature(), b in temperature()) {
        prop_assume!(b < a);
        prop_assert!(correct_po2_mmhg(p, a, b).unwrap() < p);
        prop_assert!(correct_pco2_mmhg(p, a, b).unwrap() < p);
    }

    #[test]
    fn temperature_correction_refuses_bad_input(bad in bad_value(), good_t in temperature()) {
        prop_assert_eq!(correct_po2_mmhg(bad, 37.0, good_t).unwrap_err().input(), Input::Po2);
        prop_assert_eq!(correct_po2_mmhg(80.0, bad, good_t).unwrap_err().input(), Input::MeasuredTemperature);
        prop_assert_eq!(correct_po2_mmhg(80.0, good_t, bad).unwrap_err().input(), Input::TargetTemperature);
        prop_assert_eq!(correct_pco2_mmhg(bad, 37.0, good_t).unwrap_err().input(), Input::Pco2);
        prop_assert_eq!(correct_ph(bad, 37.0, good_t).unwrap_err().input(), Input::Ph);
        prop_assert_eq!(correct_po2_single_step_mmhg(bad, 37.0, good_t).unwrap_err().input(), Input::Po2);
        prop_assert_eq!(po2_temperature_coefficient_log10_form_per_celsius(bad).unwrap_err().input(), Input::Po2);
        let input = BloodGasTemperatureInput {
            ph: Some(7.4), pco2_mmhg: Some(40.0), po2_mmhg: Some(bad),
            measured_celsius: 37.0, target_celsius: good_t,
        };
        prop_assert_eq!(correct_blood_gas(&input).unwrap_err().input(), Input::Po2);
    }

    #[test]
    fn content_refuses_bad_input(bad in bad_value()) {
        prop_assert_eq!(oxygen_content_ml_per_dl(bad, 0.98, 100.0, 1.34).unwrap_err().input(), Input::Hemoglobin);
        prop_assert_eq!(oxygen_content_ml_per_dl(15.0, bad, 100.0, 1.34).unwrap_err().input(), Input::Saturation);
        prop_assert_eq!(oxygen_content_ml_per_dl(15.0, 0.98, bad, 1.34).unwrap_err().input(), Input::Po2);
        prop_assert_eq!(oxygen_content_ml_per_dl(15.0, 0.98, 100.0, bad).unwrap_err().input(), Input::HufnerFactor);
        prop_assert_eq!(dissolved_oxygen_ml_per_dl(bad).unwrap_err().input(), Input::Po2);
        prop_assert_eq!(fractional_from_functional(0.9, bad, 0.0).unwrap_err().input(), Input::Cohb);
        prop_assert_eq!(fractional_from_functional(0.9, 0.0, bad).unwrap_err().input(), Input::Methb);
        prop_assert_eq!(oxygen_capacity_ml_per_dl(bad, 1.34, 0.0, 0.0).unwrap_err().input(), Input::Hemoglobin);
        let good = OxygenTransportInput {
            hemoglobin_g_per_dl: 15.0,
            arterial: functional(0.98, 100.0),
            venous: Some(functional(0.75, 40.0)),
            cardiac_output_l_per_min: Some(5.0),
            hufner_factor_ml_per_g: None,
        };
        let with = |f: &dyn Fn(&mut OxygenTransportInput)| { let mut i = good; f(&mut i); oxygen_transport(&i) };
        prop_assert_eq!(with(&|i| i.cardiac_output_l_per_min = Some(bad)).unwrap_err().input(), Input::CardiacOutput);
        prop_assert_eq!(with(&|i| i.venous = Some(functional(bad, 40.0))).unwrap_err().input(), Input::VenousSaturation);
        prop_assert_eq!(with(&|i| i.venous = Some(functional(0.75, bad))).unwrap_err().input(), Input::VenousPo2);
        prop_assert_eq!(with(&|i| i.arterial.cohb_fraction = Some(bad)).unwrap_err().input(), Input::Cohb);
        prop_assert_eq!(with(&|i| i.hufner_factor_ml_per_g = Some(bad)).unwrap_err().input(), Input::HufnerFactor);
        prop_assert!(oxygen_content_mmol_per_l_from_ml_per_dl(f64::NAN).is_err());
        prop_assert!(oxygen_flow_mmol_per_min_from_ml_per_min(f64::INFINITY).is_err());
    }

    #[test]
    fn gas_exchange_refuses_bad_input(bad in bad_value()) {
        prop_assert_eq!(water_vapour_pressure_mmhg(bad).unwrap_err().input(), Input::Temperature);
        let alv = |fio2, pb, ph2o, paco2, r| alveolar_po2_with_water_vapour_mmhg(fio2, pb, ph2o, paco2, r, AlveolarGasForm::Full);
        prop_assert_eq!(alv(bad, 760.0, 47.0, 40.0, 0.8).unwrap_err().input(), Input::Fio2);
        prop_assert_eq!(alv(0.21, bad, 47.0, 40.0, 0.8).unwrap_err().input(), Input::BarometricPressure);
        prop_assert_eq!(alv(0.21, 760.0, bad, 40.0, 0.8).unwrap_err().input(), Input::Temperature);
        prop_assert_eq!(alv(0.21, 760.0, 47.0, bad, 0.8).unwrap_err().input(), Input::Paco2);
        prop_assert_eq!(alv(0.21, 760.0, 47.0, 40.0, bad).unwrap_err().input(), Input::RespiratoryQuotient);
        prop_assert_eq!(alveolar_paco2_factor(0.21, bad).unwrap_err().input(), Input::RespiratoryQuotient);
        prop_assert_eq!(alveolar_arterial_gradient_mmhg(bad, 90.0).unwrap_err().input(), Input::AlveolarPo2);
        prop_assert_eq!(alveolar_arterial_gradient_mmhg(100.0, bad).unwrap_err().input(), Input::Pao2);
        prop_assert_eq!(pao2_fio2_ratio_mmhg(bad, 0.21).unwrap_err().input(), Input::Pao2);
        prop_assert_eq!(pao2_fio2_ratio_mmhg(90.0, bad).unwrap_err().input(), Input::Fio2);
        prop_assert_eq!(spo2_fio2_ratio(bad, 0.21).unwrap_err().input(), Input::Spo2);
        prop_assert_eq!(oxygenation_index(0.6, bad, 60.0).unwrap_err().input(), Input::MeanAirwayPressure);
        prop_assert_eq!(oxygenation_index(0.6, 15.0, bad).unwrap_err().input(), Input::Pao2);
        prop_assert_eq!(oxygen_saturation_index(0.6, 15.0, bad).unwrap_err().input(), Input::Spo2);
        prop_assert_eq!(impute_pao2_from_spo2(bad).unwrap_err().input(), Input::Spo2);
        prop_assert_eq!(end_capillary_content(15.0, bad, &functional(0.98, 100.0), None).unwrap_err().input(), Input::AlveolarPo2);
        let shunt = ShuntInput {
            hemoglobin_g_per_dl: bad,
            alveolar_po2_mmhg: 100.0,
            arterial: functional(0.98, 100.0),
            venous: functional(0.75, 40.0),
            hufner_factor_ml_per_g: None,
        };
        prop_assert_eq!(shunt_fraction(&shunt).unwrap_err().input(), Input::Hemoglobin);
    }

    #[test]
    fn any_input_gives_a_finite_answer_or_an_error(
        hb in prop::num::f64::ANY, s in prop::num::f64::ANY, p in prop::num::f64::ANY,
        t in prop::num::f64::ANY, f in prop::num::f64::ANY,
    ) {
        let finite_or_err = |r: Result<f64, PhysiologyError>| r.map_or(true, f64::is_finite);
        prop_assert!(finite_or_err(oxygen_content_ml_per_dl(hb, s, p, 1.34)));
        prop_assert!(finite_or_err(correct_po2_mmhg(p, 37.0, t)));
        prop_assert!(finite_or_err(correct_pco2_mmhg(p, t, 37.0)));
        prop_assert!(finite_or_err(correct_ph(s, 37.0, t)));
        prop_assert!(finite_or_err(water_vapour_pressure_mmhg(t)));
        prop_assert!(finite_or_err(pao2_fio2_ratio_mmhg(p, f)));
        prop_assert!(finite_or_err(spo2_fio2_ratio(s, f)));
        prop_assert!(finite_or_err(oxygenation_index(f, hb, p)));
        prop_assert!(finite_or_err(impute_pao2_from_spo2(s).map(|i| i.pao2_mmhg)));
        prop_assert!(finite_or_err(
            alveolar_po2_with_water_vapour_mmhg(f, p, 47.0, hb, 0.8, AlveolarGasForm::Simplified)
                .map(|a| a.alveolar_po2_mmhg)
        ));
    }

    #[test]
    fn shunt_lies_between_zero_and_one(
        s_a in 0.80..1.0f64, s_v in 0.3..0.8f64, pao2 in 50.0..150.0f64, extra in 0.0..300.0f64,
    ) {
        let shunt = shunt_fraction(&ShuntInput {
            hemoglobin_g_per_dl: 12.0,
            alveolar_po2_mmhg: pao2 + extra,
            arterial: functional(s_a, pao2),
            venous: functional(s_v, 40.0),
            hufner_factor_ml_per_g: None,
        }).unwrap();
        prop_assert!((0.0..=1.0).contains(&shunt.shunt_fraction));
    }
}
