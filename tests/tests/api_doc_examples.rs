//! The worked examples of `proto/API.md`, sent exactly as documented: every
//! number the document prints in a response is asserted here to its printed
//! precision, so the document stays true to the service.
//!
//! The scenario (Larchmere Valley Infirmary and its patients) is
//! fictional. The expected values are outputs of the service itself, recorded
//! when the document was written (derived from the engine's equations; the
//! equations' own checks against published values live in the other
//! `api_*.rs` tests and the engine's unit tests).

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient,
    model_catalog_service_client::ModelCatalogServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient,
    BatchSaturationFromTensionRequest, BatchTensionFromSaturationRequest, BloodConditions,
    BloodSample, CorrectForTemperatureRequest, EstimateP50Request, GasExchangeRequest,
    ListModelsRequest, MeasuredPair, Model, OxygenContentRequest, SampleCurveRequest,
    SaturationFromTensionRequest, ShiftFactorsRequest, TensionFromSaturationRequest, UnitSystem,
};
use oxbind_client::v1::{
    saturation_from_tension_result, tension_from_saturation_result, HillPreset, Provenance,
    ProvenancePlacement, Quantity, ShiftDirection, ShiftFactor, Warning, WarningCode,
    WarningSeverity,
};
use oxbind_proto::google::rpc as pb;
use oxbind_tests::{q, TestServer};
use prost::Message;
use tonic::transport::Channel;

fn saturation_from_tension_example() -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2: q(62.0, "mm[Hg]"),
        conditions: Some(BloodConditions {
            ph: Some(7.31),
            pco2: q(48.0, "mm[Hg]"),
            temperature: q(38.5, "Cel"),
            ..Default::default()
        }),
        ..Default::default()
    }
}

fn tension_from_saturation_example() -> TensionFromSaturationRequest {
    TensionFromSaturationRequest {
        saturation_fraction: 0.88,
        conditions: Some(BloodConditions {
            ph: Some(7.45),
            ..Default::default()
        }),
        unit_system: UnitSystem::Si as i32,
        ..Default::default()
    }
}

fn plateau_example() -> TensionFromSaturationRequest {
    TensionFromSaturationRequest {
        saturation_fraction: 0.985,
        ..Default::default()
    }
}

fn sample_curve_example() -> SampleCurveRequest {
    SampleCurveRequest {
        condition_sets: vec![
            BloodConditions::default(),
            BloodConditions {
                ph: Some(7.20),
                temperature: q(39.0, "Cel"),
                ..Default::default()
            },
        ],
        po2_min: q(20.0, "mm[Hg]"),
        po2_max: q(80.0, "mm[Hg]"),
        point_count: 4,
        ..Default::default()
    }
}

fn shift_factors_example() -> ShiftFactorsRequest {
    ShiftFactorsRequest {
        conditions: Some(BloodConditions {
            ph: Some(7.25),
            pco2: q(55.0, "mm[Hg]"),
            temperature: q(39.2, "Cel"),
            ..Default::default()
        }),
        model: Model::Kelman1966 as i32,
        ..Default::default()
    }
}

fn estimate_p50_example() -> EstimateP50Request {
    EstimateP50Request {
        pairs: vec![MeasuredPair {
            po2: q(31.0, "mm[Hg]"),
            saturation_fraction: 0.58,
            conditions: Some(BloodConditions {
                ph: Some(7.36),
                pco2: q(46.0, "mm[Hg]"),
                ..Default::default()
            }),
        }],
        ..Default::default()
    }
}

fn correct_for_temperature_example() -> CorrectForTemperatureRequest {
    CorrectForTemperatureRequest {
        ph: Some(7.32),
        pco2: q(44.0, "mm[Hg]"),
        po2: q(95.0, "mm[Hg]"),
        target_temperature: q(33.0, "Cel"),
        ..Default::default()
    }
}

fn batch_saturation_example() -> BatchSaturationFromTensionRequest {
    let item = |value: f64, unit: &str| SaturationFromTensionRequest {
        po2: q(value, unit),
        ..Default::default()
    };
    BatchSaturationFromTensionRequest {
        requests: vec![item(88.0, "mm[Hg]"), item(54.0, "mmHg"), item(5.6, "kPa")],
        ..Default::default()
    }
}

fn batch_tension_example() -> BatchTensionFromSaturationRequest {
    let item = |s: f64| TensionFromSaturationRequest {
        saturation_fraction: s,
        ..Default::default()
    };
    BatchTensionFromSaturationRequest {
        requests: vec![item(0.91), item(100.0), item(0.75)],
        ..Default::default()
    }
}

fn oxygen_content_example() -> OxygenContentRequest {
    OxygenContentRequest {
        hemoglobin: q(11.2, "g/dL"),
        arterial: Some(BloodSample {
            saturation_fraction: Some(0.95),
            po2: q(78.0, "mm[Hg]"),
            ..Default::default()
        }),
        venous: Some(BloodSample {
            saturation_fraction: Some(0.68),
            po2: q(36.0, "mm[Hg]"),
            ..Default::default()
        }),
        cardiac_output: q(4.6, "L/min"),
        ..Default::default()
    }
}

fn gas_exchange_example() -> GasExchangeRequest {
    GasExchangeRequest {
        fio2: q(40.0, "%"),
        paco2: q(38.0, "mm[Hg]"),
        pao2: q(72.0, "mm[Hg]"),
        spo2_fraction: Some(0.93),
        mean_airway_pressure: q(14.0, "cm[H2O]"),
        ..Default::default()
    }
}

fn refused_example() -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2: q(-5.0, "mm[Hg]"),
        conditions: Some(BloodConditions {
            ph: Some(8.9),
            temperature: q(37.0, "C"),
            ..Default::default()
        }),
        ..Default::default()
    }
}

/// Assert that `actual` rounds to `printed`, the number as API.md prints it:
/// within half a unit of its last printed decimal place, or exactly when it is
/// printed without a decimal point (inputs echoed, zeros, defaults).
fn printed(actual: f64, printed: &str) {
    let expected: f64 = printed.parse().expect("a printed number");
    let Some((_, digits)) = printed.split_once('.') else {
        assert_eq!(actual, expected, "the document prints {printed}");
        return;
    };
    let decimals = digits.len();
    let half_unit = 0.5 * 10f64.powi(-(decimals as i32));
    assert!(
        (actual - expected).abs() <= half_unit * (1.0 + 1e-9),
        "got {actual}, the document prints {printed}"
    );
}

/// Assert a quantity's unit code and its printed value.
fn quantity(actual: &Option<Quantity>, value: &str, unit: &str) {
    let actual = actual.as_ref().expect("quantity set");
    assert_eq!(actual.unit, unit);
    printed(actual.value, value);
}

/// Assert the inputs used, in order: (name, printed value, unit, defaulted).
fn inputs_used(provenance: &Option<Provenance>, expected: &[(&str, &str, &str, bool)]) {
    let used = &provenance.as_ref().expect("provenance").inputs_used;
    let names: Vec<&str> = used.iter().map(|i| i.name.as_str()).collect();
    let expected_names: Vec<&str> = expected.iter().map(|e| e.0).collect();
    assert_eq!(names, expected_names);
    for (input, (name, value, unit, defaulted)) in used.iter().zip(expected) {
        quantity(&input.value, value, unit);
        assert_eq!(input.defaulted, *defaulted, "{name} defaulted");
    }
}

/// The standard-condition defaults below `prefix` that every curve request
/// records, after the explicitly given ones.
fn standard_defaults(prefix: &str) -> Vec<(String, &'static str, &'static str)> {
    [
        ("ph", "7.4", "[pH]"),
        ("pco2", "40", "mm[Hg]"),
        ("temperature", "37", "Cel"),
        ("dpg", "5", "mmol/L"),
        ("base_excess", "0", "mmol/L"),
        ("cohb", "0", "1"),
        ("methb", "0", "1"),
        ("hbf", "0", "1"),
    ]
    .into_iter()
    .map(|(name, value, unit)| (format!("{prefix}{name}"), value, unit))
    .collect()
}

fn model_of(provenance: &Option<Provenance>, id: &str, version: &str, inside: bool) {
    let provenance = provenance.as_ref().expect("provenance");
    assert_eq!(provenance.model_id, id);
    assert_eq!(provenance.model_version, version);
    assert_eq!(provenance.api_version, "v1");
    assert_eq!(provenance.within_validated_range, inside);
    assert!(provenance.compute_time.is_some());
    assert!(!provenance.build_commit.is_empty());
}

fn warnings_are(warnings: &[Warning], expected: &[(WarningCode, &str, WarningSeverity)]) {
    let got: Vec<(i32, &str, i32)> = warnings
        .iter()
        .map(|w| (w.code, w.field.as_str(), w.severity))
        .collect();
    let want: Vec<(i32, &str, i32)> = expected
        .iter()
        .map(|(c, f, s)| (*c as i32, *f, *s as i32))
        .collect();
    assert_eq!(got, want);
}

/// A refusal's BadRequest violations (field, reason, description) and its
/// ErrorInfo.
fn details(details: &[oxbind_proto::Any]) -> (Vec<(String, String, String)>, pb::ErrorInfo) {
    let mut violations = Vec::new();
    let mut info = None;
    for any in details {
        match any.type_url.as_str() {
            "type.googleapis.com/google.rpc.BadRequest" => {
                let bad = pb::BadRequest::decode(any.value.as_slice()).expect("BadRequest");
                violations.extend(
                    bad.field_violations
                        .into_iter()
                        .map(|v| (v.field, v.reason, v.description)),
                );
            }
            "type.googleapis.com/google.rpc.ErrorInfo" => {
                info = Some(pb::ErrorInfo::decode(any.value.as_slice()).expect("ErrorInfo"));
            }
            other => panic!("unexpected detail {other}"),
        }
    }
    (violations, info.expect("ErrorInfo present"))
}

fn metadata(info: &pb::ErrorInfo, expected: &[(&str, &str)]) {
    let mut got: Vec<(&str, &str)> = info
        .metadata
        .iter()
        .map(|(k, v)| (k.as_str(), v.as_str()))
        .collect();
    got.sort_unstable();
    let mut want = expected.to_vec();
    want.sort_unstable();
    assert_eq!(got, want);
}

async fn dissociation(server: &TestServer) -> DissociationServiceClient<Channel> {
    DissociationServiceClient::new(server.channel().await)
}

#[tokio::test]
async fn saturation_from_tension_example_is_true() {
    let server = TestServer::start().await;
    let r = dissociation(&server)
        .await
        .saturation_from_tension(saturation_from_tension_example())
        .await
        .expect("computes")
        .into_inner();
    printed(r.saturation_fraction, "0.85577");
    quantity(&r.p50_at_conditions, "33.202", "mm[Hg]");
    printed(r.hill_slope, "2.9704");
    model_of(&r.provenance, "severinghaus-1979", "1.0.0", true);
    inputs_used(
        &r.provenance,
        &[
            ("po2", "62", "mm[Hg]", false),
            ("conditions.ph", "7.31", "[pH]", false),
            ("conditions.pco2", "48", "mm[Hg]", false),
            ("conditions.temperature", "38.5", "Cel", false),
            ("conditions.dpg", "5", "mmol/L", true),
            ("conditions.base_excess", "0", "mmol/L", true),
            ("conditions.cohb", "0", "1", true),
            ("conditions.methb", "0", "1", true),
            ("conditions.hbf", "0", "1", true),
        ],
    );
    warnings_are(
        &r.warnings,
        &[(
            WarningCode::ConditionNotModelled,
            "conditions.pco2",
            WarningSeverity::Caution,
        )],
    );
    server.stop().await;
}

#[tokio::test]
async fn tension_from_saturation_examples_are_true() {
    let server = TestServer::start().await;
    let mut client = dissociation(&server).await;
    let r = client
        .tension_from_saturation(tension_from_saturation_example())
        .await
        .expect("computes")
        .into_inner();
    quantity(&r.po2, "6.9086", "kPa");
    quantity(&r.po2_change_per_percent, "0.22746", "kPa/%");
    quantity(&r.p50_at_conditions, "3.3710", "kPa");
    model_of(&r.provenance, "severinghaus-1979", "1.0.0", true);
    let mut expected = vec![
        ("saturation_fraction".to_owned(), "0.88", "1", false),
        ("conditions.ph".to_owned(), "7.45", "[pH]", false),
        ("conditions.pco2".to_owned(), "5.3329", "kPa", true),
    ];
    expected.extend(
        standard_defaults("conditions.")
            .into_iter()
            .skip(2)
            .map(|(n, v, u)| (n, v, u, true)),
    );
    let expected: Vec<(&str, &str, &str, bool)> = expected
        .iter()
        .map(|(n, v, u, d)| (n.as_str(), *v, *u, *d))
        .collect();
    inputs_used(&r.provenance, &expected);
    warnings_are(&r.warnings, &[]);

    let plateau = client
        .tension_from_saturation(plateau_example())
        .await
        .expect("computes")
        .into_inner();
    quantity(&plateau.po2, "114.96", "mm[Hg]");
    quantity(&plateau.po2_change_per_percent, "26.132", "mm[Hg]/%");
    warnings_are(
        &plateau.warnings,
        &[(
            WarningCode::PlateauPoorlyDetermined,
            "saturation_fraction",
            WarningSeverity::Caution,
        )],
    );
    server.stop().await;
}

#[tokio::test]
async fn sample_curve_example_is_true() {
    let server = TestServer::start().await;
    let r = dissociation(&server)
        .await
        .sample_curve(sample_curve_example())
        .await
        .expect("computes")
        .into_inner();
    assert_eq!(r.curves.len(), 2);
    let expected = [
        ("26.857", ["0.31977", "0.74946", "0.90580", "0.95725"]),
        ("38.959", ["0.15976", "0.51826", "0.77635", "0.89311"]),
    ];
    for (curve, (p50, saturations)) in r.curves.iter().zip(expected) {
        quantity(&curve.p50, p50, "mm[Hg]");
        assert_eq!(curve.po2_unit, "mm[Hg]");
        let po2s: Vec<f64> = curve.points.iter().map(|p| p.po2).collect();
        assert_eq!(po2s, [20.0, 40.0, 60.0, 80.0]);
        for (point, s) in curve.points.iter().zip(saturations) {
            printed(point.saturation_fraction, s);
        }
        model_of(&curve.provenance, "severinghaus-1979", "1.0.0", true);
        warnings_are(&curve.warnings, &[]);
    }
    // The curve's conditions come back with every default filled in.
    let filled = |ph: f64, temperature: f64| BloodConditions {
        ph: Some(ph),
        pco2: q(40.0, "mm[Hg]"),
        temperature: q(temperature, "Cel"),
        dpg: q(5.0, "mmol/L"),
        base_excess: q(0.0, "mmol/L"),
        cohb: q(0.0, "1"),
        methb: q(0.0, "1"),
        hbf: q(0.0, "1"),
    };
    assert_eq!(r.curves[0].conditions, Some(filled(7.4, 37.0)));
    assert_eq!(r.curves[1].conditions, Some(filled(7.2, 39.0)));
    let shared = [
        ("po2_min", "20", "mm[Hg]", false),
        ("po2_max", "80", "mm[Hg]", false),
        ("point_count", "4", "1", false),
    ];
    let mut first = shared.to_vec();
    let first_defaults = standard_defaults("condition_sets[0].");
    first.extend(
        first_defaults
            .iter()
            .map(|(n, v, u)| (n.as_str(), *v, *u, true)),
    );
    inputs_used(&r.curves[0].provenance, &first);
    // Explicit inputs first (shared, then the set's own), then defaulted ones.
    let mut second = shared.to_vec();
    second.extend([
        ("condition_sets[1].ph", "7.2", "[pH]", false),
        ("condition_sets[1].temperature", "39", "Cel", false),
    ]);
    let second_defaults: Vec<_> = standard_defaults("condition_sets[1].")
        .into_iter()
        .filter(|(n, _, _)| !n.ends_with(".ph") && !n.ends_with(".temperature"))
        .collect();
    second.extend(
        second_defaults
            .iter()
            .map(|(n, v, u)| (n.as_str(), *v, *u, true)),
    );
    inputs_used(&r.curves[1].provenance, &second);
    server.stop().await;
}

#[tokio::test]
async fn shift_factors_example_is_true() {
    let server = TestServer::start().await;
    let r = dissociation(&server)
        .await
        .shift_factors(shift_factors_example())
        .await
        .expect("computes")
        .into_inner();
    quantity(&r.p50_standard, "26.833", "mm[Hg]");
    quantity(&r.p50_at_conditions, "35.463", "mm[Hg]");
    printed(r.log10_p50_shift, "0.12110");
    assert_eq!(r.direction, ShiftDirection::Right as i32);
    printed(r.po2_correction_factor, "0.75666");
    let expected = [
        (ShiftFactor::Ph, "0.06000", ShiftDirection::Right),
        (ShiftFactor::Pco2, "0.008298", ShiftDirection::Right),
        (ShiftFactor::Temperature, "0.05280", ShiftDirection::Right),
        (ShiftFactor::Dpg, "0", ShiftDirection::None),
        (ShiftFactor::BaseExcess, "0", ShiftDirection::None),
        (ShiftFactor::Cohb, "0", ShiftDirection::None),
        (ShiftFactor::Methb, "0", ShiftDirection::None),
        (ShiftFactor::Hbf, "0", ShiftDirection::None),
    ];
    assert_eq!(r.contributions.len(), expected.len());
    for (c, (factor, shift, direction)) in r.contributions.iter().zip(expected) {
        assert_eq!(c.factor, factor as i32);
        printed(c.log10_p50_shift, shift);
        assert_eq!(c.direction, direction as i32, "{factor:?}");
    }
    model_of(&r.provenance, "kelman-1966", "1.1.0", true);
    warnings_are(&r.warnings, &[]);
    server.stop().await;
}

#[tokio::test]
async fn estimate_p50_example_is_true() {
    let server = TestServer::start().await;
    let r = dissociation(&server)
        .await
        .estimate_p50(estimate_p50_example())
        .await
        .expect("computes")
        .into_inner();
    quantity(&r.p50_at_conditions, "27.507", "mm[Hg]");
    quantity(&r.p50_standard, "26.291", "mm[Hg]");
    quantity(&r.p50_at_conditions_curve_shift, "27.493", "mm[Hg]");
    quantity(&r.p50_standard_curve_shift, "26.277", "mm[Hg]");
    assert_eq!(r.fitted_hill_n, None);
    assert_eq!(r.fit_rms_logit, 0.0);
    model_of(&r.provenance, "severinghaus-1979", "1.0.0", true);
    let used = &r.provenance.as_ref().unwrap().inputs_used;
    let first: Vec<(&str, bool)> = used
        .iter()
        .take(5)
        .map(|i| (i.name.as_str(), i.defaulted))
        .collect();
    assert_eq!(
        first,
        [
            ("pairs[0].po2", false),
            ("pairs[0].saturation_fraction", false),
            ("pairs[0].conditions.ph", false),
            ("pairs[0].conditions.pco2", false),
            ("pairs[0].conditions.temperature", true),
        ]
    );
    warnings_are(&r.warnings, &[]);

    // API.md 7.5 notes: a pair outside the model's validated range computes,
    // with a warning on that field.
    let mut outside = estimate_p50_example();
    outside.pairs[0].conditions.as_mut().unwrap().ph = Some(7.9);
    let o = dissociation(&server)
        .await
        .estimate_p50(outside)
        .await
        .expect("computes")
        .into_inner();
    model_of(&o.provenance, "severinghaus-1979", "1.0.0", false);
    warnings_are(
        &o.warnings,
        &[(
            WarningCode::OutsideValidatedRange,
            "pairs[0].conditions.ph",
            WarningSeverity::Caution,
        )],
    );
    server.stop().await;
}

#[tokio::test]
async fn correct_for_temperature_example_is_true() {
    let server = TestServer::start().await;
    let r = dissociation(&server)
        .await
        .correct_for_temperature(correct_for_temperature_example())
        .await
        .expect("computes")
        .into_inner();
    printed(r.ph.expect("pH corrected"), "7.3767");
    quantity(&r.pco2, "36.936", "mm[Hg]");
    quantity(&r.po2, "73.388", "mm[Hg]");
    model_of(&r.provenance, "", "2", true);
    inputs_used(
        &r.provenance,
        &[
            ("ph", "7.32", "[pH]", false),
            ("pco2", "44", "mm[Hg]", false),
            ("po2", "95", "mm[Hg]", false),
            ("target_temperature", "33", "Cel", false),
            ("measured_temperature", "37", "Cel", true),
        ],
    );
    warnings_are(&r.warnings, &[]);
    server.stop().await;
}

#[tokio::test]
async fn batch_saturation_from_tension_example_is_true() {
    let server = TestServer::start().await;
    let r = dissociation(&server)
        .await
        .batch_saturation_from_tension(batch_saturation_example())
        .await
        .expect("computes")
        .into_inner();
    assert_eq!(r.results.len(), 3);
    let ok = |index: usize| match &r.results[index].result {
        Some(saturation_from_tension_result::Result::Response(response)) => response.clone(),
        other => panic!("item {index}: {other:?}"),
    };
    let first = ok(0);
    printed(first.saturation_fraction, "0.96741");
    quantity(&first.p50_at_conditions, "26.857", "mm[Hg]");
    printed(first.hill_slope, "2.9620");
    let third = ok(2);
    printed(third.saturation_fraction, "0.77458");
    printed(third.hill_slope, "2.8433");
    let po2_used = &third.provenance.as_ref().unwrap().inputs_used[0];
    assert_eq!(po2_used.name, "po2");
    quantity(&po2_used.value, "42.003", "mm[Hg]");
    let Some(saturation_from_tension_result::Result::Error(status)) = &r.results[1].result else {
        panic!("item 1 refused: {:?}", r.results[1]);
    };
    assert_eq!(status.code, 3);
    // The description, and so the message, carries the item's prefix too.
    let po2_unit = "requests[1].po2.unit has a unit code this field does not accept (UCUM \
writes it `mm[Hg]`); accepted UCUM codes (case-sensitive): mm[Hg], kPa";
    assert_eq!(status.message, po2_unit);
    let (violations, info) = details(&status.details);
    assert_eq!(
        violations,
        [(
            "requests[1].po2.unit".to_owned(),
            "UNIT_NOT_ACCEPTED".to_owned(),
            po2_unit.to_owned()
        )]
    );
    assert_eq!(info.reason, "UNIT_NOT_ACCEPTED");
    assert_eq!(info.domain, "oxbind.v1");
    metadata(
        &info,
        &[
            ("accepted_units", "mm[Hg], kPa"),
            ("field", "requests[1].po2.unit"),
            ("violation_count", "1"),
        ],
    );
    server.stop().await;
}

/// API.md 7.7, "Provenance once per batch": the same three rows with
/// PROVENANCE_PLACEMENT_SHARED.
#[tokio::test]
async fn shared_provenance_batch_example_is_true() {
    let server = TestServer::start().await;
    let mut request = batch_saturation_example();
    request.provenance_placement = ProvenancePlacement::Shared as i32;
    let r = dissociation(&server)
        .await
        .batch_saturation_from_tension(request)
        .await
        .expect("computes")
        .into_inner();
    assert_eq!(r.results.len(), 3);
    for (index, saturation, slope) in [(0, "0.96741", "2.9620"), (2, "0.77458", "2.8433")] {
        let Some(saturation_from_tension_result::Result::Response(response)) =
            &r.results[index].result
        else {
            panic!("item {index}: {:?}", r.results[index]);
        };
        printed(response.saturation_fraction, saturation);
        quantity(&response.p50_at_conditions, "26.857", "mm[Hg]");
        printed(response.hill_slope, slope);
        assert!(response.provenance.is_none());
        assert_eq!(r.results[index].shared_provenance_index, 0);
    }
    assert!(matches!(
        r.results[1].result,
        Some(saturation_from_tension_result::Result::Error(_))
    ));
    assert_eq!(r.shared_provenance.len(), 1);
    let entry = Some(r.shared_provenance[0].clone());
    model_of(&entry, "severinghaus-1979", "1.0.0", true);
    assert!(r.shared_provenance[0].inputs_used.is_empty());
    server.stop().await;
}

#[tokio::test]
async fn batch_tension_from_saturation_example_is_true() {
    let server = TestServer::start().await;
    let r = dissociation(&server)
        .await
        .batch_tension_from_saturation(batch_tension_example())
        .await
        .expect("computes")
        .into_inner();
    assert_eq!(r.results.len(), 3);
    for (index, po2, change) in [(0, "61.041", "2.5502"), (2, "40.040", "0.75489")] {
        match &r.results[index].result {
            Some(tension_from_saturation_result::Result::Response(response)) => {
                quantity(&response.po2, po2, "mm[Hg]");
                quantity(&response.po2_change_per_percent, change, "mm[Hg]/%");
                warnings_are(&response.warnings, &[]);
            }
            other => panic!("item {index}: {other:?}"),
        }
    }
    let Some(tension_from_saturation_result::Result::Error(status)) = &r.results[1].result else {
        panic!("item 1 refused: {:?}", r.results[1]);
    };
    assert_eq!(status.code, 3);
    let saturation = "requests[1].saturation_fraction must lie in [0.000001, 0.999999]: PO2 is zero at \
saturation 0 and infinite at 1; the inverse is computed, to 1e-10 relative, for saturations from 1e-6 to 1 - 1e-6 \
(this field takes a fraction between 0 and 1; send per cent divided by 100)";
    assert_eq!(status.message, saturation);
    let (violations, info) = details(&status.details);
    let violations: Vec<(&str, &str, &str)> = violations
        .iter()
        .map(|(f, r, d)| (f.as_str(), r.as_str(), d.as_str()))
        .collect();
    assert_eq!(
        violations,
        [(
            "requests[1].saturation_fraction",
            "SATURATION_OUT_OF_RANGE",
            saturation
        )]
    );
    assert_eq!(info.reason, "SATURATION_OUT_OF_RANGE");
    metadata(
        &info,
        &[
            ("field", "requests[1].saturation_fraction"),
            ("max_fraction", "0.999999"),
            ("max_inclusive", "true"),
            ("min_fraction", "0.000001"),
            ("min_inclusive", "true"),
            ("violation_count", "1"),
        ],
    );
    server.stop().await;
}

#[tokio::test]
async fn oxygen_content_example_is_true() {
    let server = TestServer::start().await;
    let r = OxygenTransportServiceClient::new(server.channel().await)
        .oxygen_content(oxygen_content_example())
        .await
        .expect("computes")
        .into_inner();
    quantity(&r.arterial_content, "14.499", "mL/dL");
    quantity(&r.venous_content, "10.317", "mL/dL");
    quantity(&r.arteriovenous_difference, "4.1824", "mL/dL");
    printed(r.extraction_fraction.expect("extraction"), "0.28845");
    quantity(&r.oxygen_capacity, "15.008", "mL/dL");
    quantity(&r.delivery, "666.97", "mL/min");
    quantity(&r.consumption, "192.39", "mL/min");
    model_of(&r.provenance, "", "1", true);
    // Measured saturations: the samples' conditions are not read, and the
    // Hüfner factor used is recorded.
    let expected_inputs = [
        ("hemoglobin", "11.2", "g/dL", false),
        ("arterial.po2", "78", "mm[Hg]", false),
        ("arterial.saturation_fraction", "0.95", "1", false),
        ("venous.po2", "36", "mm[Hg]", false),
        ("venous.saturation_fraction", "0.68", "1", false),
        ("cardiac_output", "4.6", "L/min", false),
        ("hufner_factor_ml_per_g", "1.34", "mL/g", true),
    ];
    inputs_used(&r.provenance, &expected_inputs);
    warnings_are(&r.warnings, &[]);

    // The same request with conditions beside the measured arterial
    // saturation: same result, same inputs, one warning.
    let mut with_conditions = oxygen_content_example();
    with_conditions.arterial.as_mut().unwrap().conditions = Some(BloodConditions {
        ph: Some(7.31),
        temperature: q(38.5, "Cel"),
        ..Default::default()
    });
    let w = OxygenTransportServiceClient::new(server.channel().await)
        .oxygen_content(with_conditions)
        .await
        .expect("computes")
        .into_inner();
    assert_eq!(w.arterial_content, r.arterial_content);
    assert_eq!(w.venous_content, r.venous_content);
    assert_eq!(w.consumption, r.consumption);
    inputs_used(&w.provenance, &expected_inputs);
    warnings_are(
        &w.warnings,
        &[(
            WarningCode::ConditionNotModelled,
            "arterial.conditions",
            WarningSeverity::Informational,
        )],
    );
    assert_eq!(
        w.warnings[0].message,
        "conditions and model are used only to calculate a missing saturation; with a \
measured saturation they were not used"
    );
    server.stop().await;
}

#[tokio::test]
async fn gas_exchange_example_is_true() {
    let server = TestServer::start().await;
    let r = OxygenTransportServiceClient::new(server.channel().await)
        .gas_exchange(gas_exchange_example())
        .await
        .expect("computes")
        .into_inner();
    quantity(&r.alveolar_po2, "241.46", "mm[Hg]");
    quantity(&r.alveolar_arterial_gradient, "169.46", "mm[Hg]");
    printed(r.pao2_fio2_ratio.expect("P/F"), "180.00");
    printed(r.spo2_fio2_ratio.expect("S/F"), "232.50");
    quantity(&r.imputed_pao2, "67.005", "mm[Hg]");
    printed(r.imputed_pao2_fio2_ratio.expect("imputed P/F"), "167.51");
    printed(r.oxygenation_index.expect("OI"), "7.7778");
    printed(r.oxygen_saturation_index.expect("OSI"), "6.0215");
    assert_eq!(r.shunt_fraction, None);
    model_of(&r.provenance, "", "1", true);
    inputs_used(
        &r.provenance,
        &[
            ("fio2", "0.4", "1", false),
            ("paco2", "38", "mm[Hg]", false),
            ("pao2", "72", "mm[Hg]", false),
            ("spo2_fraction", "0.93", "1", false),
            ("mean_airway_pressure", "14", "cm[H2O]", false),
            ("barometric_pressure", "760", "mm[Hg]", true),
            ("respiratory_quotient", "0.8", "1", true),
            ("body_temperature", "37", "Cel", true),
        ],
    );
    warnings_are(&r.warnings, &[]);
    server.stop().await;
}

#[tokio::test]
async fn list_models_example_is_true() {
    let server = TestServer::start().await;
    let r = ModelCatalogServiceClient::new(server.channel().await)
        .list_models(ListModelsRequest {})
        .await
        .expect("lists")
        .into_inner();
    let models: Vec<(i32, &str, bool)> = r
        .models
        .iter()
        .map(|m| (m.model, m.model_id.as_str(), m.is_default))
        .collect();
    assert_eq!(
        models,
        [
            (Model::Severinghaus1979 as i32, "severinghaus-1979", true),
            (Model::Kelman1966 as i32, "kelman-1966", false),
            (Model::Hill as i32, "hill", false),
            (Model::Adair as i32, "adair", false),
            (
                Model::SiggaardAndersen1984 as i32,
                "siggaard-andersen-1984",
                false
            ),
            (Model::Dash2016 as i32, "dash-2016", false),
            (
                Model::SiggaardAndersen1990 as i32,
                "siggaard-andersen-1990",
                false
            ),
        ]
    );
    let severinghaus = &r.models[0];
    assert_eq!(severinghaus.doi, "10.1152/jappl.1979.46.3.599");
    assert_eq!(severinghaus.model_version, "1.0.0");
    assert_eq!(
        severinghaus.honoured_conditions,
        [
            ShiftFactor::Ph as i32,
            ShiftFactor::Temperature as i32,
            ShiftFactor::BaseExcess as i32,
            ShiftFactor::Cohb as i32
        ]
    );
    let ranges: Vec<(&str, f64, f64, &str)> = severinghaus
        .validated_ranges
        .iter()
        .map(|v| {
            let (min, max) = (v.min.as_ref().unwrap(), v.max.as_ref().unwrap());
            (v.input.as_str(), min.value, max.value, min.unit.as_str())
        })
        .collect();
    assert_eq!(
        ranges,
        [
            ("conditions.ph", 6.8, 7.8, "[pH]"),
            ("conditions.temperature", 20.0, 43.0, "Cel"),
            ("conditions.base_excess", -30.0, 30.0, "mmol/L"),
        ]
    );
    // The model summary table of API.md 7.11: honoured conditions and
    // validated ranges (input, min, max) of every model.
    use ShiftFactor as F;
    type Ranges<'a> = Vec<(&'a str, f64, f64)>;
    let summary: Vec<(Vec<i32>, Ranges<'_>)> = r
        .models
        .iter()
        .map(|m| {
            let ranges = m
                .validated_ranges
                .iter()
                .map(|v| {
                    let (min, max) = (v.min.as_ref().unwrap(), v.max.as_ref().unwrap());
                    (v.input.as_str(), min.value, max.value)
                })
                .collect();
            (m.honoured_conditions.clone(), ranges)
        })
        .collect();
    let ids = |factors: &[F]| factors.iter().map(|f| *f as i32).collect::<Vec<i32>>();
    assert_eq!(
        summary,
        [
            (
                ids(&[F::Ph, F::Temperature, F::BaseExcess, F::Cohb]),
                vec![
                    ("conditions.ph", 6.8, 7.8),
                    ("conditions.temperature", 20.0, 43.0),
                    ("conditions.base_excess", -30.0, 30.0)
                ]
            ),
            (
                ids(&[F::Ph, F::Pco2, F::Temperature, F::Cohb]),
                vec![("po2", 10.0, 7600.0)]
            ),
            (
                ids(&[F::Ph, F::Pco2, F::Temperature, F::Dpg, F::Cohb]),
                vec![("saturation_fraction", 0.1, 0.9)]
            ),
            (ids(&[F::Cohb]), vec![("po2", 5.0, 150.0)]),
            (
                ids(&[F::Ph, F::Temperature, F::Dpg, F::BaseExcess, F::Cohb]),
                vec![
                    ("conditions.ph", 6.8, 7.8),
                    ("conditions.temperature", 20.0, 43.0),
                    ("conditions.dpg", 1.0, 12.0)
                ]
            ),
            (
                ids(&[F::Ph, F::Pco2, F::Temperature, F::Dpg, F::Cohb]),
                vec![
                    ("conditions.ph", 6.8, 7.8),
                    ("conditions.pco2", 10.0, 100.0),
                    ("conditions.temperature", 25.0, 42.0),
                    ("conditions.dpg", 1.0, 12.0)
                ]
            ),
            (
                ids(&[
                    F::Ph,
                    F::Pco2,
                    F::Temperature,
                    F::Dpg,
                    F::Cohb,
                    F::Methb,
                    F::Hbf
                ]),
                vec![
                    ("conditions.ph", 6.8, 7.8),
                    ("conditions.pco2", 10.0, 100.0),
                    ("conditions.temperature", 20.0, 43.0),
                    ("conditions.dpg", 1.0, 12.0),
                    ("conditions.cohb", 0.0, 0.3),
                    ("conditions.methb", 0.0, 0.1)
                ]
            ),
        ]
    );
    // Every model publishes its source notes (API.md 7.11).
    for m in &r.models {
        assert!(!m.source_notes.is_empty(), "{}", m.model_id);
    }
    assert!(r.models[0].source_notes.contains("0.012 at pH 7.0"));
    let kelman = &r.models[1];
    let range = &kelman.validated_ranges[0];
    assert_eq!(range.input, "po2");
    quantity(&range.min, "10", "mm[Hg]");
    quantity(&range.max, "7600", "mm[Hg]");
    let presets: Vec<(i32, f64, f64)> = r.models[2]
        .hill_presets
        .iter()
        .map(|p| (p.preset, p.p50.as_ref().unwrap().value, p.n))
        .collect();
    assert_eq!(
        presets,
        [
            (HillPreset::Adult as i32, 26.8, 2.7),
            (HillPreset::Fetal as i32, 19.5, 2.7),
            (HillPreset::Myoglobin as i32, 2.8, 1.0),
        ]
    );
    assert_eq!(
        r.cautions,
        "Oxbind results are decision support only. They are computed from published \
equations and do not replace measured co-oximetry or the judgement of a licensed clinician. \
Local laboratory policy decides which values are reported, in which units and with which \
model. Pass every warning on with the value it concerns. An uncertainty interval describes the \
arithmetic from the figures stated for the inputs, not the patient; the built-in profiles are \
fallbacks, some not verified at their source (see uncertainty_profiles), and a laboratory's own \
imprecision and a device's own accuracy describe its results better. Pulse-oximetry bias by \
skin pigmentation (and by low perfusion or dyshaemoglobins) is not included in any uncertainty \
unless the caller gives it as a figure: the pulse-oximeter accuracy figures come from \
laboratory studies in healthy volunteers. Consistency findings (ConsistencyService) support the \
laboratory's review of a result and do not reject results: local laboratory policy decides what \
happens to a discordant sample."
    );
    // The limits table of API.md: (input, min, min_inclusive, max, max_inclusive, unit,
    // error reason).
    let limits: Vec<(&str, f64, bool, f64, bool, &str, &str)> = r
        .input_limits
        .iter()
        .map(|l| {
            // An absent max is no upper limit (a finite value is enough).
            let (min, max) = (
                l.min.as_ref().unwrap(),
                l.max.as_ref().map_or(f64::INFINITY, |m| m.value),
            );
            (
                l.input.as_str(),
                min.value,
                l.min_inclusive,
                max,
                l.max_inclusive,
                min.unit.as_str(),
                l.error_reason.as_str(),
            )
        })
        .collect();
    assert_eq!(
        limits,
        [
            ("ph", 6.0, true, 8.5, true, "[pH]", "PH_OUT_OF_RANGE"),
            (
                "pressure",
                0.001,
                true,
                7600.0,
                true,
                "mm[Hg]",
                "PRESSURE_OUT_OF_RANGE"
            ),
            (
                "conditions_pco2",
                0.001,
                true,
                760.0,
                true,
                "mm[Hg]",
                "PCO2_OUT_OF_RANGE"
            ),
            (
                "barometric_pressure",
                150.0,
                true,
                7600.0,
                true,
                "mm[Hg]",
                "BAROMETRIC_PRESSURE_OUT_OF_RANGE"
            ),
            (
                "temperature",
                10.0,
                true,
                46.0,
                true,
                "Cel",
                "TEMPERATURE_OUT_OF_RANGE"
            ),
            (
                "saturation_open",
                1e-6,
                true,
                0.999999,
                true,
                "1",
                "SATURATION_OUT_OF_RANGE"
            ),
            (
                "saturation_measured",
                0.0,
                true,
                1.0,
                true,
                "1",
                "SATURATION_OUT_OF_RANGE"
            ),
            (
                "spo2",
                0.0,
                false,
                1.0,
                true,
                "1",
                "SATURATION_OUT_OF_RANGE"
            ),
            (
                "dyshemoglobin_fraction",
                0.0,
                true,
                1.0,
                false,
                "1",
                "FRACTION_OUT_OF_RANGE"
            ),
            (
                "hbf_fraction",
                0.0,
                true,
                1.0,
                true,
                "1",
                "FRACTION_OUT_OF_RANGE"
            ),
            ("dpg", 0.0, true, 20.0, true, "mmol/L", "DPG_OUT_OF_RANGE"),
            (
                "base_excess",
                -50.0,
                true,
                50.0,
                true,
                "mmol/L",
                "BASE_EXCESS_OUT_OF_RANGE"
            ),
            (
                "hemoglobin",
                0.0,
                false,
                30.0,
                true,
                "g/dL",
                "HEMOGLOBIN_OUT_OF_RANGE"
            ),
            ("fio2", 0.05, true, 1.0, true, "1", "FIO2_OUT_OF_RANGE"),
            ("hill_n", 0.1, true, 4.0, true, "1", "HILL_N_OUT_OF_RANGE"),
            (
                "hufner_factor",
                1.3,
                true,
                1.4,
                true,
                "mL/g",
                "HUFNER_FACTOR_OUT_OF_RANGE"
            ),
            (
                "cardiac_output",
                0.0,
                false,
                40.0,
                true,
                "L/min",
                "CARDIAC_OUTPUT_OUT_OF_RANGE"
            ),
            (
                "respiratory_quotient",
                0.5,
                true,
                2.0,
                true,
                "1",
                "RESPIRATORY_QUOTIENT_OUT_OF_RANGE"
            ),
            (
                "mean_airway_pressure",
                0.0,
                false,
                200.0,
                true,
                "cm[H2O]",
                "MEAN_AIRWAY_PRESSURE_OUT_OF_RANGE"
            ),
            (
                "curve_points",
                2.0,
                true,
                10_000.0,
                true,
                "1",
                "POINT_COUNT_OUT_OF_RANGE"
            ),
            (
                "curve_condition_sets",
                0.0,
                true,
                10.0,
                true,
                "1",
                "TOO_MANY_CONDITION_SETS"
            ),
            (
                "measured_pairs",
                1.0,
                true,
                10_000.0,
                true,
                "1",
                "PAIR_COUNT_OUT_OF_RANGE"
            ),
            (
                "uncertainty_draws",
                10_000.0,
                true,
                1_000_000.0,
                true,
                "1",
                "DRAW_COUNT_OUT_OF_RANGE"
            ),
            (
                "uncertainty_coverage_probability",
                0.5,
                true,
                0.99,
                true,
                "1",
                "COVERAGE_PROBABILITY_OUT_OF_RANGE"
            ),
            (
                "uncertainty_significant_digits",
                1.0,
                true,
                4.0,
                true,
                "1",
                "SIGNIFICANT_DIGITS_OUT_OF_RANGE"
            ),
            (
                "uncertainty_figures",
                0.0,
                true,
                32.0,
                true,
                "1",
                "TOO_MANY_UNCERTAINTY_FIGURES"
            ),
            (
                "uncertainty_absolute",
                0.0,
                true,
                f64::INFINITY,
                false,
                "1",
                "UNCERTAINTY_OUT_OF_RANGE"
            ),
            (
                "uncertainty_relative",
                0.0,
                true,
                1.0,
                true,
                "1",
                "UNCERTAINTY_OUT_OF_RANGE"
            ),
            (
                "uncertainty_bound_coverage",
                0.0,
                false,
                1.0,
                false,
                "1",
                "COVERAGE_PROBABILITY_OUT_OF_RANGE"
            ),
            (
                "uncertainty_coverage_factor",
                0.0,
                false,
                f64::INFINITY,
                false,
                "1",
                "COVERAGE_FACTOR_OUT_OF_RANGE"
            ),
            (
                "uncertainty_trapezoid_ratio",
                0.0,
                true,
                1.0,
                true,
                "1",
                "TRAPEZOID_RATIO_OUT_OF_RANGE"
            ),
            (
                "bicarbonate",
                0.0,
                false,
                100.0,
                true,
                "mmol/L",
                "BICARBONATE_OUT_OF_RANGE"
            ),
            (
                "white_cell_count",
                0.0,
                true,
                1000.0,
                true,
                "10*9/L",
                "WHITE_CELL_COUNT_OUT_OF_RANGE"
            ),
            (
                "batch_items",
                1.0,
                true,
                10_000.0,
                true,
                "1",
                "BATCH_TOO_LARGE"
            ),
        ]
    );
    // The fields column of that table.
    let fields: Vec<(&str, Vec<&str>)> = r
        .input_limits
        .iter()
        .map(|l| {
            (
                l.input.as_str(),
                l.fields.iter().map(String::as_str).collect(),
            )
        })
        .collect();
    let conditions_paths = |name: &str, samples: bool| {
        let mut paths = vec![
            format!("conditions.{name}"),
            format!("condition_sets[].{name}"),
            format!("pairs[].conditions.{name}"),
        ];
        if samples {
            paths.push(format!("arterial.conditions.{name}"));
            paths.push(format!("venous.conditions.{name}"));
        }
        paths
    };
    let mut ph = conditions_paths("ph", true);
    ph.extend(["ph", "sample.ph", "sample.results_at_37_cel.ph"].map(str::to_owned));
    let mut pressure = vec!["po2".to_owned(), "pco2".to_owned()];
    pressure.extend(
        [
            "pao2",
            "paco2",
            "po2_min",
            "po2_max",
            "pairs[].po2",
            "arterial.po2",
            "venous.po2",
            "hill.p50",
            "arterial.hill.p50",
            "venous.hill.p50",
            "sample.po2",
            "sample.results_at_37_cel.po2",
        ]
        .map(str::to_owned),
    );
    let mut temperature = conditions_paths("temperature", true);
    temperature.extend(
        [
            "measured_temperature",
            "target_temperature",
            "body_temperature",
            "sample.temperature",
        ]
        .map(str::to_owned),
    );
    let mut dyshemoglobin = Vec::new();
    for path in [
        "conditions.",
        "condition_sets[].",
        "pairs[].conditions.",
        "arterial.conditions.",
        "venous.conditions.",
        "arterial.",
        "venous.",
    ] {
        dyshemoglobin.push(format!("{path}cohb"));
        dyshemoglobin.push(format!("{path}methb"));
    }
    dyshemoglobin.extend(["sample.cohb", "sample.methb"].map(str::to_owned));
    let mut conditions_pco2 = conditions_paths("pco2", true);
    conditions_pco2.extend(["sample.pco2", "sample.results_at_37_cel.pco2"].map(str::to_owned));
    let mut hbf = conditions_paths("hbf", true);
    hbf.push("sample.hbf".to_owned());
    let owned = |v: &[&str]| v.iter().map(|s| (*s).to_owned()).collect::<Vec<String>>();
    let expected_fields: Vec<(&str, Vec<String>)> = vec![
        ("ph", ph),
        ("pressure", pressure),
        ("conditions_pco2", conditions_pco2),
        (
            "barometric_pressure",
            owned(&["barometric_pressure", "sample.barometric_pressure"]),
        ),
        ("temperature", temperature),
        (
            "saturation_open",
            owned(&["saturation_fraction", "pairs[].saturation_fraction"]),
        ),
        (
            "saturation_measured",
            owned(&[
                "arterial.saturation_fraction",
                "venous.saturation_fraction",
                "sample.so2_fraction",
            ]),
        ),
        ("spo2", owned(&["spo2_fraction", "sample.spo2_fraction"])),
        ("dyshemoglobin_fraction", dyshemoglobin),
        ("hbf_fraction", hbf),
        ("dpg", conditions_paths("dpg", true)),
        ("base_excess", conditions_paths("base_excess", true)),
        ("hemoglobin", owned(&["hemoglobin", "sample.hemoglobin"])),
        ("fio2", owned(&["fio2", "sample.fio2"])),
        (
            "hill_n",
            owned(&["hill.n", "arterial.hill.n", "venous.hill.n"]),
        ),
        ("hufner_factor", owned(&["hufner_factor_ml_per_g"])),
        ("cardiac_output", owned(&["cardiac_output"])),
        ("respiratory_quotient", owned(&["respiratory_quotient"])),
        ("mean_airway_pressure", owned(&["mean_airway_pressure"])),
        ("curve_points", owned(&["point_count"])),
        ("curve_condition_sets", owned(&["condition_sets"])),
        ("measured_pairs", owned(&["pairs"])),
        ("uncertainty_draws", owned(&["uncertainty.draw_count"])),
        (
            "uncertainty_coverage_probability",
            owned(&["uncertainty.coverage_probability"]),
        ),
        (
            "uncertainty_significant_digits",
            owned(&["uncertainty.significant_digits"]),
        ),
        ("uncertainty_figures", owned(&["uncertainty.inputs"])),
        (
            "uncertainty_absolute",
            owned(&[
                "uncertainty.inputs[].standard_uncertainty.absolute",
                "uncertainty.inputs[].bound.half_width.absolute",
            ]),
        ),
        (
            "uncertainty_relative",
            owned(&[
                "uncertainty.inputs[].standard_uncertainty.relative",
                "uncertainty.inputs[].bound.half_width.relative",
            ]),
        ),
        (
            "uncertainty_bound_coverage",
            owned(&["uncertainty.inputs[].bound.coverage_probability"]),
        ),
        (
            "uncertainty_coverage_factor",
            owned(&["uncertainty.inputs[].bound.coverage_factor"]),
        ),
        (
            "uncertainty_trapezoid_ratio",
            owned(&["uncertainty.inputs[].bound.trapezoid_top_ratio"]),
        ),
        ("bicarbonate", owned(&["sample.bicarbonate"])),
        ("white_cell_count", owned(&["sample.white_cell_count"])),
        ("batch_items", owned(&["requests"])),
    ];
    let expected_fields: Vec<(&str, Vec<&str>)> = expected_fields
        .iter()
        .map(|(input, paths)| (*input, paths.iter().map(String::as_str).collect()))
        .collect();
    assert_eq!(fields, expected_fields);
    server.stop().await;
}

/// Two statements of API.md sections 2 and 7.11: with MODEL_DASH_2016 a
/// defaulted `conditions.dpg` reads 4.65 mmol/L (Dash's own standard), and an
/// unknown `unit_system` is refused with UNKNOWN_ENUM_VALUE.
#[tokio::test]
async fn dash_default_dpg_and_unknown_unit_system_are_as_documented() {
    let server = TestServer::start().await;
    let mut client = dissociation(&server).await;
    let r = client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(62.0, "mm[Hg]"),
            model: Model::Dash2016 as i32,
            ..Default::default()
        })
        .await
        .expect("computes")
        .into_inner();
    let used = &r.provenance.as_ref().unwrap().inputs_used;
    let dpg = used
        .iter()
        .find(|i| i.name == "conditions.dpg")
        .expect("dpg listed");
    assert!(dpg.defaulted);
    quantity(&dpg.value, "4.65", "mmol/L");

    let status = client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(62.0, "mm[Hg]"),
            unit_system: 7,
            ..Default::default()
        })
        .await
        .expect_err("refused");
    assert_eq!(status.code(), tonic::Code::InvalidArgument);
    let rpc = pb::Status::decode(status.details()).expect("details decode");
    let (violations, info) = details(&rpc.details);
    let fields: Vec<(&str, &str)> = violations
        .iter()
        .map(|(f, r, _)| (f.as_str(), r.as_str()))
        .collect();
    assert_eq!(fields, [("unit_system", "UNKNOWN_ENUM_VALUE")]);
    assert_eq!(info.reason, "UNKNOWN_ENUM_VALUE");
    server.stop().await;
}

#[tokio::test]
async fn refused_request_example_is_true() {
    let server = TestServer::start().await;
    let status = dissociation(&server)
        .await
        .saturation_from_tension(refused_example())
        .await
        .expect_err("refused");
    assert_eq!(status.code(), tonic::Code::InvalidArgument);
    let po2 = "po2.value must lie in [0.001, 7600] mm[Hg]: below 0.001 mm[Hg] no \
analyser reads and the equations lose all precision; 7600 mm[Hg] (10 atm) is beyond any hyperbaric treatment";
    assert_eq!(
        status.message(),
        format!("{po2} (and 2 more invalid fields)")
    );
    let rpc = pb::Status::decode(status.details()).expect("grpc-status-details-bin decodes");
    assert_eq!(rpc.code, 3);
    assert_eq!(rpc.message, status.message());
    let (violations, info) = details(&rpc.details);
    let expected = [
        ("po2.value", "PRESSURE_OUT_OF_RANGE", po2),
        (
            "conditions.ph",
            "PH_OUT_OF_RANGE",
            "conditions.ph must lie in [6, 8.5] [pH]: a blood pH outside 6.0-8.5 is not \
survivable; such a value is a transcription or unit error",
        ),
        (
            "conditions.temperature.unit",
            "UNIT_NOT_ACCEPTED",
            "conditions.temperature.unit has a unit code this field does not accept (UCUM \
writes it `Cel`); accepted UCUM codes (case-sensitive): Cel, [degF]",
        ),
    ];
    let violations: Vec<(&str, &str, &str)> = violations
        .iter()
        .map(|(f, r, d)| (f.as_str(), r.as_str(), d.as_str()))
        .collect();
    assert_eq!(violations, expected);
    assert_eq!(info.reason, "PRESSURE_OUT_OF_RANGE");
    assert_eq!(info.domain, "oxbind.v1");
    metadata(
        &info,
        &[
            ("field", "po2.value"),
            ("max_inclusive", "true"),
            ("max_mmhg", "7600"),
            ("min_inclusive", "true"),
            ("min_mmhg", "0.001"),
            ("violation_count", "3"),
        ],
    );
    server.stop().await;
}

/// API.md section 7.12: the answer of a server with the default settings is
/// the one printed, setting by setting (the identity is a placeholder
/// there).
#[tokio::test]
async fn get_server_settings_example_is_true() {
    let document = include_str!("../../proto/API.md");
    let section = document
        .split("### 7.12 GetServerSettings")
        .nth(1)
        .expect("API.md has section 7.12");
    let block = section
        .split("```json")
        .nth(1)
        .and_then(|rest| rest.split("```").next())
        .expect("section 7.12 prints the answer");
    let printed: serde_json::Value = serde_json::from_str(block).expect("the answer is JSON");
    let server = TestServer::start().await;
    let answer = ModelCatalogServiceClient::new(server.channel().await)
        .get_server_settings(oxbind_client::v1::GetServerSettingsRequest {})
        .await
        .expect("answers")
        .into_inner();
    assert_eq!(printed["apiVersion"], answer.api_version.as_str());
    assert_eq!(answer.service_version, env!("CARGO_PKG_VERSION"));
    // A value printed as a placeholder (`<cores>`: it depends on the
    // machine) stands for whatever the server reports.
    let settings: Vec<serde_json::Value> = answer
        .settings
        .iter()
        .zip(printed["settings"].as_array().into_iter().flatten())
        .map(|(s, shown)| {
            let placeholder = shown["value"].as_str().is_some_and(|v| v.starts_with('<'));
            let value = if placeholder {
                shown["value"].as_str().unwrap_or_default()
            } else {
                s.value.as_str()
            };
            serde_json::json!({"name": s.name, "value": value, "meaning": s.meaning})
        })
        .collect();
    assert_eq!(
        printed["settings"].as_array().map(Vec::len),
        Some(answer.settings.len())
    );
    assert_eq!(printed["settings"], serde_json::Value::Array(settings));
    server.stop().await;
}

/// API.md section 10.1: PaO2 imputed from SpO2 0.94 with u 3 percentage
/// points, seeded Monte Carlo.
#[tokio::test]
async fn uncertainty_imputation_example_is_true() {
    use oxbind_client::v1::{
        input_uncertainty::Figure, CoverageIntervalKind, FigureOrigin, InputDistribution,
        ModelComponentStatus, NotConsideredReason, SensitivityMethod, UncertaintyAmount,
        UncertaintyMethod, UncertaintyRequest,
    };
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    let r = client
        .gas_exchange(GasExchangeRequest {
            fio2: q(21.0, "%"),
            spo2_fraction: Some(0.94),
            uncertainty: Some(UncertaintyRequest {
                inputs: vec![oxbind_client::v1::InputUncertainty {
                    field: "spo2_fraction".to_owned(),
                    figure: Some(Figure::StandardUncertainty(UncertaintyAmount {
                        absolute: q(3.0, "%"),
                        relative: None,
                    })),
                }],
                method: UncertaintyMethod::MonteCarlo as i32,
                draw_count: 100_000,
                seed: 94,
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    printed(r.spo2_fio2_ratio.unwrap(), "447.619");
    quantity(&r.imputed_pao2, "70.8714", "mm[Hg]");
    printed(r.imputed_pao2_fio2_ratio.unwrap(), "337.483");
    warnings_are(
        &r.warnings,
        &[(
            WarningCode::UncertaintyNotEvaluated,
            "",
            WarningSeverity::Informational,
        )],
    );
    assert!(r.warnings[0]
        .message
        .starts_with("no uncertainty is evaluated for spo2_fio2_ratio: "));
    assert_eq!(r.uncertainties.len(), 2);
    let u = &r.uncertainties[0];
    assert_eq!(u.value, "imputed_pao2");
    quantity(&u.estimate, "70.8714", "mm[Hg]");
    quantity(&u.standard_uncertainty, "26.18", "mm[Hg]");
    let interval = u.interval.as_ref().unwrap();
    quantity(&interval.low, "54.90", "mm[Hg]");
    quantity(&interval.high, "132.84", "mm[Hg]");
    assert_eq!(interval.probability, 0.95);
    assert_eq!(
        interval.kind,
        CoverageIntervalKind::ProbabilisticallySymmetric as i32
    );
    assert_eq!(u.method, UncertaintyMethod::MonteCarlo as i32);
    assert_eq!(u.method_version, "1");
    assert!(u.method_reference.starts_with("JCGM 100:2008 "));
    let fo = u.first_order.as_ref().unwrap();
    quantity(&fo.standard_uncertainty, "12.81", "mm[Hg]");
    printed(fo.coverage_factor, "1.95996");
    let fo_interval = fo.interval.as_ref().unwrap();
    quantity(&fo_interval.low, "45.76", "mm[Hg]");
    quantity(&fo_interval.high, "95.99", "mm[Hg]");
    assert_eq!(
        fo_interval.kind,
        CoverageIntervalKind::FirstOrderNormal as i32
    );
    let mc = u.monte_carlo.as_ref().unwrap();
    assert_eq!((mc.draw_count, mc.seed), (100_000, 94));
    assert!(mc.generator.starts_with("ChaCha8 (rand_chacha 0.9.0, "));
    assert!(mc.generator.contains("rand_distr 0.5.1"));
    quantity(&mc.mean, "76.37", "mm[Hg]");
    quantity(&mc.standard_uncertainty, "26.18", "mm[Hg]");
    assert_eq!(mc.interval, u.interval);
    assert_eq!(mc.redrawn_outside_domain_count, 2371);
    assert_eq!(mc.redrawn_refused_count, 0);
    let stability = mc.stability.as_ref().unwrap();
    assert_eq!(
        (stability.block_count, stability.block_draw_count),
        (10, 10_000)
    );
    quantity(&stability.tolerance, "0.5", "mm[Hg]");
    // "the block spread of the upper end, 0.66 mm[Hg]" (section 10.1 prose).
    quantity(&stability.high_spread, "0.66", "mm[Hg]");
    assert!(!stability.stable);
    let v = u.validation.as_ref().unwrap();
    assert_eq!(v.significant_digits, 2);
    quantity(&v.tolerance, "0.5", "mm[Hg]");
    quantity(&v.lower_difference, "9.15", "mm[Hg]");
    quantity(&v.upper_difference, "36.85", "mm[Hg]");
    assert!(!v.passed);
    assert_eq!(u.budget.len(), 1);
    let line = &u.budget[0];
    assert_eq!(line.field, "spo2_fraction");
    quantity(&line.estimate, "0.94", "1");
    quantity(&line.standard_uncertainty, "0.03", "1");
    printed(line.sensitivity, "427.119");
    assert_eq!(line.sensitivity_method, SensitivityMethod::Exact as i32);
    quantity(&line.contribution, "12.81", "mm[Hg]");
    assert_eq!(line.variance_share, 1.0);
    assert_eq!(line.origin, FigureOrigin::Stated as i32);
    assert_eq!(line.divisor, 1.0);
    assert_eq!(line.distribution, InputDistribution::Normal as i32);
    let m = u.model_component.as_ref().unwrap();
    assert_eq!(m.status, ModelComponentStatus::Computed as i32);
    quantity(&m.standard_uncertainty, "1.49", "mm[Hg]");
    quantity(&m.half_range, "2.58", "mm[Hg]");
    quantity(&m.combined_standard_uncertainty, "26.22", "mm[Hg]");
    assert_eq!(m.values.len(), 6, "the six adult models");
    assert_eq!(m.values[0].model_id, "severinghaus-1979");
    quantity(&m.values[0].value, "70.8714", "mm[Hg]");
    assert!(m.includes_chosen_model);
    assert!(u.not_considered.is_empty());
    warnings_are(
        &u.warnings,
        &[
            (
                WarningCode::UncertaintyFirstOrderNotValidated,
                "",
                WarningSeverity::Caution,
            ),
            (
                WarningCode::UncertaintyAsymmetricInterval,
                "",
                WarningSeverity::Caution,
            ),
            (
                WarningCode::UncertaintyDrawsRedrawn,
                "",
                WarningSeverity::Caution,
            ),
            (
                WarningCode::UncertaintyDrawsBeyondValidatedRange,
                "spo2_fraction",
                WarningSeverity::Caution,
            ),
            (
                WarningCode::UncertaintyMonteCarloNotStable,
                "",
                WarningSeverity::Caution,
            ),
        ],
    );
    assert_eq!(
        u.warnings[0].message,
        "the first-order interval differs from the Monte Carlo interval by more than the numerical tolerance 5e-1 (JCGM 101 clause 8): rely on the Monte Carlo interval"
    );
    assert!(u.warnings[2]
        .message
        .starts_with("2.3 % of Monte Carlo draws"));
    assert_eq!(
        u.warnings[3].message,
        "23.6 % of Monte Carlo draws of spo2 lay beyond the range the method was validated for"
    );
    assert!(u.warnings[4].message.ends_with("ask for more draws"));
    // The prose: 16.0 below and 62.0 above the value.
    let (low, high) = (
        interval.low.as_ref().unwrap().value,
        interval.high.as_ref().unwrap().value,
    );
    let estimate = u.estimate.as_ref().unwrap().value;
    printed(estimate - low, "16.0");
    printed(high - estimate, "62.0");
    let ratio = &r.uncertainties[1];
    assert_eq!(ratio.value, "imputed_pao2_fio2_ratio");
    assert_eq!(ratio.not_considered.len(), 1);
    assert_eq!(ratio.not_considered[0].field, "fio2");
    assert_eq!(
        ratio.not_considered[0].reason,
        NotConsideredReason::NoFigure as i32
    );
    server.stop().await;
}

/// API.md section 10.2: saturation from PO2, first order, with a profile for
/// pH.
#[tokio::test]
async fn uncertainty_first_order_example_is_true() {
    use oxbind_client::v1::{
        input_uncertainty::Figure, CoverageIntervalKind, FigureOrigin, InputUncertainty,
        ModelComponentStatus, ProfileVerification, SensitivityMethod, UncertaintyAmount,
        UncertaintyMethod, UncertaintyRequest,
    };
    let server = TestServer::start().await;
    let mut client = dissociation(&server).await;
    let r = client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(62.0, "mm[Hg]"),
            conditions: Some(BloodConditions {
                ph: Some(7.31),
                ..Default::default()
            }),
            uncertainty: Some(UncertaintyRequest {
                inputs: vec![
                    InputUncertainty {
                        field: "po2".to_owned(),
                        figure: Some(Figure::StandardUncertainty(UncertaintyAmount {
                            absolute: q(3.0, "mm[Hg]"),
                            relative: None,
                        })),
                    },
                    InputUncertainty {
                        field: "conditions.ph".to_owned(),
                        figure: Some(Figure::ProfileId(
                            "analytical-goal-harding-fraser-1987-ph".to_owned(),
                        )),
                    },
                ],
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    printed(r.saturation_fraction, "0.889645");
    quantity(&r.p50_at_conditions, "29.8551", "mm[Hg]");
    printed(r.hill_slope, "2.96181");
    warnings_are(
        &r.warnings,
        &[(
            WarningCode::UncertaintyNotEvaluated,
            "",
            WarningSeverity::Informational,
        )],
    );
    let u = &r.uncertainties[0];
    assert_eq!(u.value, "saturation_fraction");
    quantity(&u.estimate, "0.889645", "1");
    quantity(&u.standard_uncertainty, "0.014268", "1");
    let interval = u.interval.as_ref().unwrap();
    quantity(&interval.low, "0.861681", "1");
    quantity(&interval.high, "0.917610", "1");
    assert_eq!(interval.kind, CoverageIntervalKind::FirstOrderNormal as i32);
    assert_eq!(u.method, UncertaintyMethod::FirstOrder as i32);
    let fo = u.first_order.as_ref().unwrap();
    assert_eq!(fo.standard_uncertainty, u.standard_uncertainty);
    assert_eq!(fo.interval, u.interval);
    printed(fo.coverage_factor, "1.95996");
    assert!(u.monte_carlo.is_none() && u.validation.is_none());
    let (po2, ph) = (&u.budget[0], &u.budget[1]);
    assert_eq!(po2.field, "po2");
    quantity(&po2.estimate, "62", "mm[Hg]");
    quantity(&po2.standard_uncertainty, "3", "mm[Hg]");
    printed(po2.sensitivity, "0.0046900");
    assert_eq!(po2.sensitivity_method, SensitivityMethod::Exact as i32);
    quantity(&po2.contribution, "0.014070", "1");
    printed(po2.variance_share, "0.972452");
    assert_eq!(po2.origin, FigureOrigin::Stated as i32);
    assert_eq!(ph.field, "conditions.ph");
    quantity(&ph.estimate, "7.31", "[pH]");
    quantity(&ph.standard_uncertainty, "0.008", "[pH]");
    printed(ph.sensitivity, "0.296016");
    assert_eq!(ph.sensitivity_method, SensitivityMethod::Numerical as i32);
    assert!(ph.sensitivity_error_estimate > 0.0 && ph.sensitivity_error_estimate < 1e-8);
    quantity(&ph.contribution, "0.002368", "1");
    printed(ph.variance_share, "0.027548");
    assert_eq!(ph.origin, FigureOrigin::Profile as i32);
    assert_eq!(ph.profile_id, "analytical-goal-harding-fraser-1987-ph");
    assert_eq!(
        ph.profile_verification,
        ProfileVerification::Verified as i32
    );
    let m = u.model_component.as_ref().unwrap();
    assert_eq!(m.status, ModelComponentStatus::Computed as i32);
    quantity(&m.standard_uncertainty, "0.003527", "1");
    quantity(&m.half_range, "0.006108", "1");
    quantity(&m.combined_standard_uncertainty, "0.014697", "1");
    let models: Vec<&str> = m.values.iter().map(|v| v.model_id.as_str()).collect();
    assert_eq!(
        models,
        [
            "severinghaus-1979",
            "kelman-1966",
            "siggaard-andersen-1984",
            "dash-2016",
            "hill"
        ]
    );
    assert_eq!(m.excluded.len(), 1);
    assert_eq!(m.excluded[0].model_id, "adair");
    assert_eq!(m.excluded[0].reason, "does not take ph into account");
    warnings_are(
        &u.warnings,
        &[
            (
                WarningCode::UncertaintyDefaultFigures,
                "",
                WarningSeverity::Caution,
            ),
            (
                WarningCode::UncertaintyNonlinear,
                "po2",
                WarningSeverity::Caution,
            ),
            (
                WarningCode::UncertaintyFirstOrderNotValidated,
                "",
                WarningSeverity::Informational,
            ),
        ],
    );
    assert!(u.warnings[0].message.starts_with(
        "built-in default figures were used (analytical-goal-harding-fraser-1987-ph, verified); "
    ));
    // "u(PO2) gives 97 % of the variance" (section 10.2 prose).
    assert_eq!((po2.variance_share * 100.0).round(), 97.0);
    server.stop().await;
}
