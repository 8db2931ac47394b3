//! Property tests of CheckBloodGas (issue 14) at the API level: arbitrary
//! samples (numbers finite or not, inside and outside the hard limits,
//! accepted or junk unit codes, enum values known or not, figures of every
//! kind) either compute, with eleven findings whose every number is finite
//! and whose verdicts carry what they promise, or are refused with
//! INVALID_ARGUMENT naming each field. A sample is never refused for being
//! discordant: a request inside every limit always computes.

use oxbind_client::v1::{
    input_uncertainty::Figure, BloodGasResults, BoundShape, CheckBloodGasRequest,
    CheckBloodGasResponse, ConsistencyUncertainty, ConsistencyVerdict, InputUncertainty, Quantity,
    ResultsAt37Cel, UncertaintyAmount, UncertaintyBound,
};
use oxbind_service::api::consistency::compute_check_blood_gas;
use proptest::{option, prelude::*, test_runner::TestCaseError};

/// A number: mostly plausible, sometimes extreme or not finite.
fn number(low: f64, high: f64) -> impl Strategy<Value = f64> {
    prop_oneof![
        8 => low..high,
        1 => prop_oneof![
            Just(f64::NAN),
            Just(f64::INFINITY),
            Just(-1.0),
            Just(0.0),
            Just(1e300),
            Just(5e-324),
        ],
    ]
}

fn quantity(
    low: f64,
    high: f64,
    units: &'static [&'static str],
) -> impl Strategy<Value = Quantity> {
    (number(low, high), prop::sample::select(units)).prop_map(|(value, unit)| Quantity {
        value,
        unit: unit.to_owned(),
    })
}

const PRESSURE: &[&str] = &["mm[Hg]", "mm[Hg]", "kPa", "mmHg"];
const FRACTION: &[&str] = &["1", "%", "%"];
const TEMPERATURE: &[&str] = &["Cel", "[degF]", "C"];

fn sample() -> impl Strategy<Value = BloodGasResults> {
    let gases = (
        option::of(quantity(1.0, 700.0, PRESSURE)),
        option::of(quantity(5.0, 150.0, PRESSURE)),
        option::of(number(6.5, 8.0)),
        option::of(quantity(25.0, 43.0, TEMPERATURE)),
        0..4i32,
        0..7i32,
    );
    let oximetry = (
        option::of(number(0.3, 1.0)),
        0..3i32,
        option::of(quantity(0.0, 0.4, FRACTION)),
        option::of(quantity(0.0, 0.2, FRACTION)),
        option::of(quantity(5.0, 20.0, &["g/dL", "g/L", "mmol/L"])),
        option::of(quantity(0.0, 1.0, FRACTION)),
        option::of(number(0.5, 1.0)),
    );
    let rest = (
        option::of(quantity(0.1, 100.0, FRACTION)),
        option::of(quantity(400.0, 800.0, PRESSURE)),
        option::of(quantity(5.0, 45.0, &["mmol/L"])),
        0..5i32,
        option::of(quantity(0.0, 400.0, &["10*9/L", "10*3/uL", "/nL", "g/L"])),
        option::of((
            option::of(number(6.5, 8.0)),
            option::of(quantity(10.0, 100.0, PRESSURE)),
            option::of(quantity(10.0, 600.0, PRESSURE)),
        )),
    );
    (gases, oximetry, rest).prop_map(
        |(
            (po2, pco2, ph, temperature, reported_at, sample_type),
            (so2, so2_kind, cohb, methb, hemoglobin, hbf, spo2),
            (fio2, barometric, bicarbonate, bicarbonate_source, wbc, at_37),
        )| BloodGasResults {
            po2,
            pco2,
            ph,
            temperature,
            reported_at,
            sample_type,
            so2_fraction: so2,
            so2_kind,
            cohb,
            methb,
            hemoglobin,
            hbf,
            spo2_fraction: spo2,
            fio2,
            barometric_pressure: barometric,
            bicarbonate,
            bicarbonate_source,
            white_cell_count: wbc,
            results_at_37_cel: at_37.map(|(ph, pco2, po2)| ResultsAt37Cel { ph, pco2, po2 }),
        },
    )
}

/// The request fields a figure may name, and some it may not.
const FIGURE_FIELDS: &[&str] = &[
    "sample.po2",
    "sample.pco2",
    "sample.ph",
    "sample.so2_fraction",
    "sample.spo2_fraction",
    "sample.cohb",
    "sample.methb",
    "sample.fio2",
    "sample.barometric_pressure",
    "sample.bicarbonate",
    "sample.results_at_37_cel.po2",
    "sample.results_at_37_cel.ph",
    "sample.temperature",
    "po2",
    "",
];

fn amount() -> impl Strategy<Value = UncertaintyAmount> {
    (
        option::of(quantity(
            0.0,
            20.0,
            &["mm[Hg]", "%", "1", "[pH]", "mmol/L", "kPa", "Cel"],
        )),
        option::of(quantity(0.0, 30.0, &["%", "1"])),
    )
        .prop_map(|(absolute, relative)| UncertaintyAmount { absolute, relative })
}

fn figures() -> impl Strategy<Value = Option<ConsistencyUncertainty>> {
    let bound = (
        amount(),
        0..7i32,
        number(0.5, 0.99),
        number(1.0, 3.0),
        number(0.0, 1.0),
    )
        .prop_map(|(half_width, shape, coverage_probability, k, beta)| {
            let mut bound = UncertaintyBound {
                half_width: Some(half_width),
                shape,
                ..Default::default()
            };
            match BoundShape::try_from(shape) {
                Ok(BoundShape::Unspecified | BoundShape::Normal) => {
                    bound.coverage_probability = coverage_probability;
                }
                Ok(BoundShape::CoverageFactor) => bound.coverage_factor = k,
                Ok(BoundShape::Trapezoidal) => bound.trapezoid_top_ratio = beta,
                _ => {}
            }
            bound
        });
    let figure = (
        prop::sample::select(FIGURE_FIELDS),
        option::of(prop_oneof![
            amount().prop_map(Figure::StandardUncertainty),
            bound.prop_map(Figure::Bound),
            prop::sample::select(
                &[
                    "clia-2024-po2",
                    "clia-2024-ph",
                    "pulse-oximeter-iso-80601-2-61-spo2",
                    "co-oximetry-repeatability-mallat-2015-saturation",
                    "no-such-profile",
                ][..]
            )
            .prop_map(|id| Figure::ProfileId(id.to_owned())),
        ]),
    )
        .prop_map(|(field, figure)| InputUncertainty {
            field: field.to_owned(),
            figure,
        });
    let sets = prop::collection::vec(
        prop::sample::select(
            &[
                "clia-2024",
                "analytical-goal-harding-fraser-1987",
                "pulse-oximeter-fda-2013-reflectance",
                "no-such-set",
            ][..],
        )
        .prop_map(str::to_owned),
        0..3,
    );
    option::of(
        (
            prop::collection::vec(figure, 0..4),
            sets,
            any::<bool>(),
            prop_oneof![Just(0.0), number(0.5, 0.999)],
        )
            .prop_map(
                |(inputs, profile_sets, no_built_in_figures, coverage_probability)| {
                    ConsistencyUncertainty {
                        inputs,
                        profile_sets,
                        no_built_in_figures,
                        coverage_probability,
                    }
                },
            ),
    )
}

fn finite(q: &Option<Quantity>) -> bool {
    q.as_ref().is_none_or(|q| q.value.is_finite())
}

fn check_response(r: &CheckBloodGasResponse) -> Result<(), TestCaseError> {
    prop_assert_eq!(r.findings.len(), 11);
    let mut discordant = 0;
    for f in &r.findings {
        let verdict = ConsistencyVerdict::try_from(f.verdict).unwrap();
        prop_assert!(finite(&f.statistic) && finite(&f.threshold));
        prop_assert!(finite(&f.observed) && finite(&f.reference));
        if let Some(u) = &f.uncertainty {
            prop_assert!(finite(&u.combined_standard_uncertainty));
            prop_assert!(finite(&u.expanded_uncertainty) && u.coverage_factor.is_finite());
            for c in &u.components {
                prop_assert!(finite(&c.contribution) && finite(&c.input_standard_uncertainty));
            }
        }
        match verdict {
            ConsistencyVerdict::NotEvaluable => {
                prop_assert!(!f.not_evaluable_reason.is_empty());
                prop_assert!(f.statistic.is_none());
            }
            ConsistencyVerdict::Consistent | ConsistencyVerdict::Discordant => {
                prop_assert!(f.statistic.is_some() && f.threshold.is_some());
                prop_assert!(!f.threshold_source.is_empty() && !f.rule.is_empty());
                discordant += usize::from(verdict == ConsistencyVerdict::Discordant);
            }
            ConsistencyVerdict::Unspecified => prop_assert!(false, "unspecified verdict"),
        }
    }
    prop_assert_eq!(r.discordant_count as usize, discordant);
    prop_assert!(r.cautions.contains("do not reject results"));
    Ok(())
}

/// Cases per property.
const CASES: u32 = 256;

/// Run `property` on `CASES` values of `strategy` in a thread with a large
/// stack: the strategies' value trees are deep in a debug build.
fn run<S, F>(strategy: S, property: F)
where
    S: Strategy + Send + 'static,
    S::Value: std::fmt::Debug,
    F: Fn(S::Value) -> Result<(), TestCaseError> + Send + 'static,
{
    std::thread::Builder::new()
        .stack_size(64 << 20)
        .spawn(move || {
            let mut runner =
                proptest::test_runner::TestRunner::new(ProptestConfig::with_cases(CASES));
            if let Err(e) = runner.run(&strategy, property) {
                panic!("{e}");
            }
        })
        .expect("a test thread")
        .join()
        .expect("the property holds");
}

#[test]
fn every_sample_computes_with_finite_findings_or_is_refused_naming_fields() {
    let strategy = (sample(), figures(), 0..4i32, 0..9i32, 0..4i32);
    run(
        strategy,
        |(sample, uncertainty, threshold_rule, model, unit_system)| {
            let request = CheckBloodGasRequest {
                sample: Some(sample),
                uncertainty,
                threshold_rule,
                model,
                unit_system,
            };
            match compute_check_blood_gas(&request) {
                Ok(response) => check_response(&response)?,
                Err(refusal) => {
                    let status = refusal.to_rpc_status();
                    prop_assert_eq!(status.code, tonic::Code::InvalidArgument as i32);
                    prop_assert!(!refusal.violations().is_empty());
                    for v in refusal.violations() {
                        prop_assert!(!v.field.is_empty() && !v.reason.is_empty());
                        prop_assert!(v.description.starts_with(&v.field), "{}", v.description);
                    }
                }
            }
            Ok(())
        },
    );
}

#[test]
fn a_sample_inside_every_limit_is_never_refused() {
    let strategy = (
        0.001f64..7600.0,
        0.001f64..760.0,
        6.0f64..8.5,
        0.0f64..=1.0,
        1e-6f64..=1.0,
        0.05f64..=1.0,
        0.0f64..0.5,
        0.01f64..100.0,
        0.0f64..1000.0,
    );
    run(
        strategy,
        |(po2, pco2, ph, so2, spo2, fio2, cohb, bicarbonate, wbc)| {
            let q = |value: f64, unit: &str| {
                Some(Quantity {
                    value,
                    unit: unit.to_owned(),
                })
            };
            let request = CheckBloodGasRequest {
                sample: Some(BloodGasResults {
                    po2: q(po2, "mm[Hg]"),
                    pco2: q(pco2, "mm[Hg]"),
                    ph: Some(ph),
                    sample_type: 1,
                    so2_fraction: Some(so2),
                    cohb: q(cohb, "1"),
                    methb: q(0.01, "1"),
                    spo2_fraction: Some(spo2),
                    fio2: q(fio2, "1"),
                    bicarbonate: q(bicarbonate, "mmol/L"),
                    bicarbonate_source: 1,
                    white_cell_count: q(wbc, "10*9/L"),
                    ..Default::default()
                }),
                ..Default::default()
            };
            let response = compute_check_blood_gas(&request);
            prop_assert!(response.is_ok(), "{:?}", response.err());
            check_response(&response.unwrap())
        },
    );
}
