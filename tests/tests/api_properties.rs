//! Property tests at the API level: arbitrary well-formed requests (numbers
//! finite or not, unit codes from the accepted set or junk, optional fields
//! present or absent, enum values known or not) sent through a real
//! in-process server never give INTERNAL, UNKNOWN or any code but
//! INVALID_ARGUMENT, and every refusal (of a call, or of one batch item)
//! names a field in its `google.rpc.BadRequest`.
//!
//! One server per test and 64 cases per test; proptest is synchronous, so
//! each test drives the async client on a tokio runtime it creates.

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient,
    model_catalog_service_client::ModelCatalogServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient, saturation_from_tension_result,
    tension_from_saturation_result, BatchSaturationFromTensionRequest,
    BatchTensionFromSaturationRequest, BloodConditions, BloodSample, CorrectForTemperatureRequest,
    EstimateP50Request, GasExchangeRequest, HillParameters, ListModelsRequest, MeasuredPair,
    OxygenContentRequest, Quantity, SampleCurveRequest, SaturationFromTensionRequest,
    ShiftFactorsRequest, TensionFromSaturationRequest,
};
use oxbind_tests::{decode_details, refusal_of, TestServer};
use proptest::{
    option,
    prelude::*,
    test_runner::{Config, TestCaseError, TestRunner},
};
use tokio::runtime::Runtime;
use tonic::transport::Channel;

/// Cases per test.
const CASES: u32 = 64;

/// A runtime with one server on it and a channel to that server.
struct Harness {
    runtime: Runtime,
    server: Option<TestServer>,
    channel: Channel,
}

impl Harness {
    fn start() -> Self {
        let runtime = tokio::runtime::Builder::new_multi_thread()
            .worker_threads(1)
            .enable_all()
            .build()
            .expect("a tokio runtime");
        let (server, channel) = runtime.block_on(async {
            let server = TestServer::start().await;
            let channel = server.channel().await;
            (server, channel)
        });
        Self {
            runtime,
            server: Some(server),
            channel,
        }
    }

    /// Run `check` on `CASES` values of `strategy`; panic with the smallest
    /// failing value if any fails.
    fn check<S: Strategy>(
        &self,
        strategy: S,
        check: impl Fn(&Self, S::Value) -> Result<(), TestCaseError>,
    ) where
        S::Value: std::fmt::Debug,
    {
        let mut runner = TestRunner::new(Config {
            cases: CASES,
            failure_persistence: None,
            ..Config::default()
        });
        if let Err(failure) = runner.run(&strategy, |value| check(self, value)) {
            panic!("{failure}");
        }
    }

    fn dissociation(&self) -> DissociationServiceClient<Channel> {
        DissociationServiceClient::new(self.channel.clone())
    }

    fn transport(&self) -> OxygenTransportServiceClient<Channel> {
        OxygenTransportServiceClient::new(self.channel.clone())
    }
}

impl Drop for Harness {
    fn drop(&mut self) {
        if let Some(server) = self.server.take() {
            self.runtime.block_on(server.stop());
        }
    }
}

/// A call's outcome: a response, or a refusal that is INVALID_ARGUMENT
/// (never INTERNAL, UNKNOWN or anything else) whose every violation names a
/// field.
fn accepted_or_refused<T>(result: Result<tonic::Response<T>, tonic::Status>) -> Option<T> {
    match result {
        Ok(response) => Some(response.into_inner()),
        Err(status) => {
            // refusal_of asserts INVALID_ARGUMENT.
            let (violations, info) = refusal_of(&status);
            assert_refusal_names_fields(&violations, info.is_some(), status.message());
            None
        }
    }
}

fn assert_refusal_names_fields(
    violations: &[oxbind_tests::Refusal],
    has_error_info: bool,
    message: &str,
) {
    assert!(
        !violations.is_empty(),
        "a refusal without BadRequest violations: {message}"
    );
    for violation in violations {
        assert!(
            !violation.field.is_empty(),
            "a violation names no field: {violation:?} ({message})"
        );
        assert!(
            !violation.reason.is_empty(),
            "a violation gives no reason: {violation:?}"
        );
    }
    assert!(has_error_info, "a refusal without ErrorInfo: {message}");
}

/// A batch item's refusal: INVALID_ARGUMENT, every violation naming a field
/// under `requests[index]`.
fn assert_item_refusal(status: &oxbind_proto::google::rpc::Status, index: usize) {
    assert_eq!(
        status.code,
        tonic::Code::InvalidArgument as i32,
        "batch item {index}: expected INVALID_ARGUMENT, got {status:?}"
    );
    let (violations, info) = decode_details(&status.details);
    assert_refusal_names_fields(&violations, info.is_some(), &status.message);
    let prefix = format!("requests[{index}].");
    for violation in &violations {
        assert!(
            violation.field.starts_with(&prefix),
            "batch item {index}: violation outside its item: {violation:?}"
        );
    }
}

// ---- strategies ----------------------------------------------------------

/// Every UCUM code some request field accepts, plus common non-UCUM
/// spellings and junk.
const UNIT_CODES: [&str; 22] = [
    "mm[Hg]", "kPa", "cm[H2O]", "g/dL", "g/L", "mmol/L", "mmol/l", "Cel", "[degF]", "%", "1",
    "L/min", "mL/min", "l/min", "mmHg", "torr", "C", "degC", "KPA", "", "m", "\u{b5}g",
];

/// A number: mostly inside `typical`, sometimes any finite value, zero, a
/// negative, NaN or an infinity.
fn number(typical: std::ops::Range<f64>) -> impl Strategy<Value = f64> {
    prop_oneof![
        6 => typical,
        1 => proptest::num::f64::ANY,
        1 => prop_oneof![
            Just(0.0),
            Just(-0.0),
            Just(-1.0),
            Just(f64::NAN),
            Just(f64::INFINITY),
            Just(f64::NEG_INFINITY),
            Just(f64::MIN_POSITIVE),
            Just(f64::MAX),
        ],
    ]
}

/// A quantity: mostly in one of `units` (the field's own), sometimes in any
/// code of [`UNIT_CODES`] or an arbitrary string.
fn quantity(
    typical: std::ops::Range<f64>,
    units: &'static [&'static str],
) -> BoxedStrategy<Quantity> {
    let unit = prop_oneof![
        6 => proptest::sample::select(units).prop_map(str::to_owned),
        2 => proptest::sample::select(&UNIT_CODES[..]).prop_map(str::to_owned),
        1 => "\\PC{0,6}",
    ];
    (number(typical), unit)
        .prop_map(|(value, unit)| Quantity { value, unit })
        .boxed()
}

fn maybe<S: Strategy>(strategy: S) -> impl Strategy<Value = Option<S::Value>> {
    option::weighted(0.6, strategy)
}

const PRESSURE: &[&str] = &["mm[Hg]", "kPa"];
const FRACTION: &[&str] = &["%", "1"];
const TEMPERATURE: &[&str] = &["Cel", "[degF]"];
const CONCENTRATION: &[&str] = &["mmol/L"];
const HEMOGLOBIN: &[&str] = &["g/dL", "g/L", "mmol/L"];

/// An enum value: mostly one of the first `known` values, sometimes any i32.
fn enum_value(known: i32) -> impl Strategy<Value = i32> {
    prop_oneof![8 => 0..known, 1 => known..known + 3, 1 => any::<i32>()]
}

fn conditions() -> BoxedStrategy<BloodConditions> {
    (
        maybe(number(6.8..7.8)),
        maybe(quantity(10.0..90.0, PRESSURE)),
        maybe(quantity(25.0..42.0, TEMPERATURE)),
        maybe(quantity(1.0..10.0, CONCENTRATION)),
        maybe(quantity(-20.0..20.0, CONCENTRATION)),
        maybe(quantity(0.0..30.0, FRACTION)),
        maybe(quantity(0.0..20.0, FRACTION)),
        maybe(quantity(0.0..90.0, FRACTION)),
    )
        .prop_map(
            |(ph, pco2, temperature, dpg, base_excess, cohb, methb, hbf)| BloodConditions {
                ph,
                pco2,
                temperature,
                dpg,
                base_excess,
                cohb,
                methb,
                hbf,
            },
        )
        .boxed()
}

fn hill() -> BoxedStrategy<HillParameters> {
    (
        maybe(quantity(5.0..60.0, PRESSURE)),
        number(0.5..4.0),
        enum_value(4),
    )
        .prop_map(|(p50, n, preset)| HillParameters { p50, n, preset })
        .boxed()
}

/// Model, Hill parameters, unit system.
fn model_choice() -> impl Strategy<Value = (i32, Option<HillParameters>, i32)> {
    (enum_value(7), maybe(hill()), enum_value(3))
}

fn saturation_request() -> impl Strategy<Value = SaturationFromTensionRequest> {
    (
        maybe(quantity(1.0..700.0, PRESSURE)),
        maybe(conditions()),
        model_choice(),
    )
        .prop_map(|(po2, conditions, (model, hill, unit_system))| {
            SaturationFromTensionRequest {
                po2,
                conditions,
                model,
                hill,
                unit_system,
                uncertainty: None,
            }
        })
}

fn tension_request() -> impl Strategy<Value = TensionFromSaturationRequest> {
    (number(0.0..1.0), maybe(conditions()), model_choice()).prop_map(
        |(saturation_fraction, conditions, (model, hill, unit_system))| {
            TensionFromSaturationRequest {
                saturation_fraction,
                conditions,
                model,
                hill,
                unit_system,
                uncertainty: None,
            }
        },
    )
}

fn curve_request() -> impl Strategy<Value = SampleCurveRequest> {
    (
        proptest::collection::vec(conditions(), 0..4),
        model_choice(),
        maybe(quantity(0.5..50.0, PRESSURE)),
        maybe(quantity(50.0..700.0, PRESSURE)),
        prop_oneof![8 => 0..300i32, 1 => any::<i32>()],
        enum_value(3),
    )
        .prop_map(
            |(
                condition_sets,
                (model, hill, unit_system),
                po2_min,
                po2_max,
                point_count,
                spacing,
            )| {
                SampleCurveRequest {
                    condition_sets,
                    model,
                    hill,
                    po2_min,
                    po2_max,
                    point_count,
                    unit_system,
                    spacing,
                }
            },
        )
}

fn pair() -> BoxedStrategy<MeasuredPair> {
    (
        maybe(quantity(5.0..120.0, PRESSURE)),
        number(0.0..1.0),
        maybe(conditions()),
    )
        .prop_map(|(po2, saturation_fraction, conditions)| MeasuredPair {
            po2,
            saturation_fraction,
            conditions,
        })
        .boxed()
}

fn blood_sample() -> BoxedStrategy<BloodSample> {
    (
        maybe(number(0.3..1.0)),
        maybe(quantity(10.0..600.0, PRESSURE)),
        enum_value(3),
        maybe(quantity(0.0..20.0, FRACTION)),
        maybe(quantity(0.0..10.0, FRACTION)),
        maybe(conditions()),
        model_choice(),
    )
        .prop_map(
            |(
                saturation_fraction,
                po2,
                saturation_kind,
                cohb,
                methb,
                conditions,
                (model, hill, _),
            )| {
                BloodSample {
                    saturation_fraction,
                    po2,
                    saturation_kind,
                    cohb,
                    methb,
                    conditions,
                    model,
                    hill,
                }
            },
        )
        .boxed()
}

// ---- properties ----------------------------------------------------------

#[test]
fn saturation_from_tension_and_its_batch_only_accept_or_name_a_field() {
    let harness = Harness::start();
    harness.check(saturation_request(), |h, request| {
        h.runtime.block_on(async {
            accepted_or_refused(h.dissociation().saturation_from_tension(request).await);
        });
        Ok(())
    });
    harness.check(
        proptest::collection::vec(saturation_request(), 0..6),
        |h, requests| {
            h.runtime.block_on(async {
                let count = requests.len();
                let batch = BatchSaturationFromTensionRequest {
                    requests,
                    ..Default::default()
                };
                let result = h.dissociation().batch_saturation_from_tension(batch).await;
                if let Some(response) = accepted_or_refused(result) {
                    assert_eq!(response.results.len(), count, "one result per item");
                    for (index, item) in response.results.iter().enumerate() {
                        if let Some(saturation_from_tension_result::Result::Error(status)) =
                            &item.result
                        {
                            assert_item_refusal(status, index);
                        } else {
                            assert!(item.result.is_some(), "item {index} has no result");
                        }
                    }
                } else {
                    assert_eq!(count, 0, "only an empty batch is refused as a whole");
                }
            });
            Ok(())
        },
    );
}

#[test]
fn tension_from_saturation_and_its_batch_only_accept_or_name_a_field() {
    let harness = Harness::start();
    harness.check(tension_request(), |h, request| {
        h.runtime.block_on(async {
            accepted_or_refused(h.dissociation().tension_from_saturation(request).await);
        });
        Ok(())
    });
    harness.check(
        proptest::collection::vec(tension_request(), 0..6),
        |h, requests| {
            h.runtime.block_on(async {
                let count = requests.len();
                let batch = BatchTensionFromSaturationRequest {
                    requests,
                    ..Default::default()
                };
                let result = h.dissociation().batch_tension_from_saturation(batch).await;
                if let Some(response) = accepted_or_refused(result) {
                    assert_eq!(response.results.len(), count, "one result per item");
                    for (index, item) in response.results.iter().enumerate() {
                        if let Some(tension_from_saturation_result::Result::Error(status)) =
                            &item.result
                        {
                            assert_item_refusal(status, index);
                        } else {
                            assert!(item.result.is_some(), "item {index} has no result");
                        }
                    }
                } else {
                    assert_eq!(count, 0, "only an empty batch is refused as a whole");
                }
            });
            Ok(())
        },
    );
}

#[test]
fn sample_curve_only_accepts_or_names_a_field() {
    let harness = Harness::start();
    harness.check(curve_request(), |h, request| {
        h.runtime.block_on(async {
            let sets = request.condition_sets.len().max(1);
            if let Some(response) =
                accepted_or_refused(h.dissociation().sample_curve(request).await)
            {
                assert_eq!(response.curves.len(), sets, "one curve per condition set");
            }
        });
        Ok(())
    });
}

#[test]
fn shift_factors_p50_and_temperature_correction_only_accept_or_name_a_field() {
    let harness = Harness::start();
    harness.check(
        (maybe(conditions()), enum_value(7), enum_value(3)),
        |h, (conditions, model, unit_system)| {
            let request = ShiftFactorsRequest {
                conditions,
                model,
                unit_system,
                uncertainty: None,
            };
            h.runtime.block_on(async {
                accepted_or_refused(h.dissociation().shift_factors(request).await);
            });
            Ok(())
        },
    );
    harness.check(
        (
            proptest::collection::vec(pair(), 0..5),
            enum_value(3),
            enum_value(7),
        ),
        |h, (pairs, unit_system, model)| {
            let request = EstimateP50Request {
                pairs,
                unit_system,
                model,
            };
            h.runtime.block_on(async {
                accepted_or_refused(h.dissociation().estimate_p50(request).await);
            });
            Ok(())
        },
    );
    harness.check(
        (
            maybe(number(6.8..7.8)),
            maybe(quantity(20.0..80.0, PRESSURE)),
            maybe(quantity(20.0..500.0, PRESSURE)),
            maybe(quantity(15.0..42.0, TEMPERATURE)),
            maybe(quantity(15.0..42.0, TEMPERATURE)),
            enum_value(3),
        ),
        |h, (ph, pco2, po2, measured_temperature, target_temperature, unit_system)| {
            let request = CorrectForTemperatureRequest {
                ph,
                pco2,
                po2,
                measured_temperature,
                target_temperature,
                unit_system,
            };
            h.runtime.block_on(async {
                accepted_or_refused(h.dissociation().correct_for_temperature(request).await);
            });
            Ok(())
        },
    );
}

#[test]
fn oxygen_content_and_gas_exchange_only_accept_or_name_a_field() {
    let harness = Harness::start();
    harness.check(
        (
            maybe(quantity(5.0..20.0, HEMOGLOBIN)),
            maybe(blood_sample()),
            maybe(blood_sample()),
            maybe(quantity(2.0..10.0, &["L/min", "mL/min"])),
            maybe(number(1.30..1.40)),
            enum_value(3),
        ),
        |h, (hemoglobin, arterial, venous, cardiac_output, hufner_factor_ml_per_g, unit_system)| {
            let request = OxygenContentRequest {
                hemoglobin,
                arterial,
                venous,
                cardiac_output,
                hufner_factor_ml_per_g,
                unit_system,
                uncertainty: None,
            };
            h.runtime.block_on(async {
                accepted_or_refused(h.transport().oxygen_content(request).await);
            });
            Ok(())
        },
    );
    harness.check(
        (
            (
                maybe(quantity(21.0..100.0, FRACTION)),
                maybe(quantity(600.0..800.0, PRESSURE)),
                maybe(quantity(25.0..70.0, PRESSURE)),
                maybe(quantity(40.0..500.0, PRESSURE)),
                maybe(number(0.7..1.0)),
                maybe(number(0.7..1.0)),
            ),
            (
                maybe(quantity(5.0..30.0, &["cm[H2O]", "mm[Hg]", "kPa"])),
                maybe(quantity(5.0..20.0, HEMOGLOBIN)),
                maybe(blood_sample()),
                maybe(quantity(34.0..41.0, TEMPERATURE)),
                enum_value(3),
                maybe(blood_sample()),
                enum_value(3),
            ),
        ),
        |h, (first, second)| {
            let (fio2, barometric_pressure, paco2, pao2, respiratory_quotient, spo2_fraction) =
                first;
            let (
                mean_airway_pressure,
                hemoglobin,
                venous,
                body_temperature,
                unit_system,
                arterial,
                alveolar_equation,
            ) = second;
            let request = GasExchangeRequest {
                fio2,
                barometric_pressure,
                paco2,
                pao2,
                respiratory_quotient,
                spo2_fraction,
                mean_airway_pressure,
                hemoglobin,
                venous,
                body_temperature,
                unit_system,
                arterial,
                alveolar_equation,
                uncertainty: None,
            };
            h.runtime.block_on(async {
                accepted_or_refused(h.transport().gas_exchange(request).await);
            });
            Ok(())
        },
    );
}

#[test]
fn list_models_answers() {
    let harness = Harness::start();
    let response = harness.runtime.block_on(async {
        ModelCatalogServiceClient::new(harness.channel.clone())
            .list_models(ListModelsRequest {})
            .await
    });
    let models = accepted_or_refused(response).expect("ListModels is never refused");
    // Seven models in the v1 contract (design.md's six, `Model` enum, and
    // MODEL_SIGGAARD_ANDERSEN_1990 added by issue 11).
    assert_eq!(models.models.len(), 7);
}
