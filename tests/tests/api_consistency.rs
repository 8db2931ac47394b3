//! ConsistencyService through a real server on port 0 (issue 14): the
//! client crate's typed methods, the generated stubs, and the Connect door.
//!
//! The samples are invented cases of the fictional Larchmere Valley
//! Infirmary. The thresholds' own checks (each just inside and just outside,
//! with its source) are in `service/tests/physiology_consistency.rs`; here
//! the contract's shape, refusals, units and doors are checked.

use oxbind_client::{
    v1::{
        input_uncertainty::Figure, BicarbonateSource, BloodGasResults, BloodGasSampleType,
        BoundShape, CheckBloodGasRequest, CheckBloodGasResponse, ConsistencyCheck,
        ConsistencyFinding, ConsistencyThresholdRule, ConsistencyUncertainty, ConsistencyVerdict,
        FigureOrigin, FindingDirection, InputUncertainty, NotConsideredReason, ProfileVerification,
        ReportedTemperature, ResultsAt37Cel, SaturationKind, ThresholdBasis, UncertaintyAmount,
        UncertaintyBound, UnitSystem,
    },
    Code, OxbindClient,
};
use oxbind_tests::{
    http::{connect_post, send, Version},
    q, refusal_of, Refusal, TestServer,
};

/// Case LV-4102, Larchmere Valley Infirmary (invented): a routine arterial
/// gas on room air, every result the laboratory has.
pub fn normal_arterial() -> BloodGasResults {
    BloodGasResults {
        po2: q(94.0, "mm[Hg]"),
        pco2: q(39.0, "mm[Hg]"),
        ph: Some(7.41),
        temperature: q(36.8, "Cel"),
        reported_at: ReportedTemperature::At37Cel as i32,
        sample_type: BloodGasSampleType::Arterial as i32,
        so2_fraction: Some(0.968),
        so2_kind: SaturationKind::Functional as i32,
        cohb: q(1.2, "%"),
        methb: q(0.6, "%"),
        hemoglobin: q(13.9, "g/dL"),
        spo2_fraction: Some(0.97),
        fio2: q(21.0, "%"),
        barometric_pressure: q(752.0, "mm[Hg]"),
        bicarbonate: q(25.4, "mmol/L"),
        bicarbonate_source: BicarbonateSource::MeasuredTotalCo2 as i32,
        white_cell_count: q(7.8, "10*9/L"),
        results_at_37_cel: Some(ResultsAt37Cel {
            ph: Some(7.41),
            pco2: q(39.0, "mm[Hg]"),
            po2: q(94.0, "mm[Hg]"),
        }),
        ..Default::default()
    }
}

/// Case LV-4117 (invented): an arterial sample that sat with an air bubble.
pub fn air_in_the_syringe() -> BloodGasResults {
    BloodGasResults {
        po2: q(121.0, "mm[Hg]"),
        pco2: q(31.0, "mm[Hg]"),
        ph: Some(7.47),
        sample_type: BloodGasSampleType::Arterial as i32,
        spo2_fraction: Some(0.91),
        fio2: q(21.0, "%"),
        ..Default::default()
    }
}

/// Case LV-4130 (invented): labelled arterial, but drawn from a vein.
pub fn venous_labelled_arterial() -> BloodGasResults {
    BloodGasResults {
        po2: q(38.0, "mm[Hg]"),
        pco2: q(47.0, "mm[Hg]"),
        ph: Some(7.36),
        sample_type: BloodGasSampleType::Arterial as i32,
        so2_fraction: Some(0.71),
        spo2_fraction: Some(0.96),
        fio2: q(28.0, "%"),
        ..Default::default()
    }
}

fn request(sample: BloodGasResults) -> CheckBloodGasRequest {
    CheckBloodGasRequest {
        sample: Some(sample),
        ..Default::default()
    }
}

fn finding(response: &CheckBloodGasResponse, check: ConsistencyCheck) -> &ConsistencyFinding {
    response
        .findings
        .iter()
        .find(|f| f.check == check as i32)
        .unwrap_or_else(|| panic!("no finding for {check:?}"))
}

fn verdict(response: &CheckBloodGasResponse, check: ConsistencyCheck) -> ConsistencyVerdict {
    ConsistencyVerdict::try_from(finding(response, check).verdict).unwrap()
}

async fn client(server: &TestServer) -> OxbindClient {
    OxbindClient::connect(server.uri()).await.expect("connect")
}

#[tokio::test]
async fn a_normal_arterial_sample_has_no_discordant_finding_and_every_finding_in_order() {
    let server = TestServer::start().await;
    let r = client(&server)
        .await
        .check_blood_gas(request(normal_arterial()))
        .await
        .expect("checked");
    let checks: Vec<i32> = r.findings.iter().map(|f| f.check).collect();
    let expected: Vec<i32> = (1..=11).collect();
    assert_eq!(checks, expected, "one finding per check, in enum order");
    assert_eq!(r.discordant_count, 0);
    for f in &r.findings {
        assert_eq!(
            f.verdict,
            ConsistencyVerdict::Consistent as i32,
            "{:?}: {} {}",
            ConsistencyCheck::try_from(f.check),
            f.not_evaluable_reason,
            f.note
        );
        assert!(f.statistic.is_some() && f.threshold.is_some());
        assert!(!f.causes.is_empty() && f.causes.iter().all(|c| !c.source.is_empty()));
        assert!(!f.threshold_source.is_empty() && !f.rule.is_empty());
    }
    assert!(r.cautions.contains("do not reject results"));
    assert!(r.cautions.contains("Local laboratory policy"));
    assert_eq!(r.rules_version, "1");
    let provenance = r.provenance.as_ref().expect("provenance");
    assert_eq!(provenance.model_id, "severinghaus-1979");
    assert!(provenance
        .inputs_used
        .iter()
        .any(|i| i.name == "sample.white_cell_count"));
    // The published thresholds decide by default, and the uncertainty-based
    // limit is reported beside them.
    let gap = finding(&r, ConsistencyCheck::PulseOximetryGap);
    assert_eq!(gap.threshold_basis, ThresholdBasis::Published as i32);
    assert!(gap.threshold_source.contains("Akhtar"));
    let u = gap.uncertainty.as_ref().expect("uncertainty");
    assert!((u.coverage_factor - 1.959_964).abs() < 1e-6);
    assert!(u.components.iter().any(|c| c
        .source
        .contains("pulse-oximeter-fda-2013-transmittance-spo2")));
    let alveolar = finding(&r, ConsistencyCheck::AboveAlveolar);
    assert_eq!(
        alveolar.threshold_basis,
        ThresholdBasis::UncertaintyBased as i32
    );
    assert!(alveolar
        .threshold_source
        .starts_with("uncertainty-based rule"));
    let not_considered = &alveolar.uncertainty.as_ref().unwrap().inputs_not_considered;
    for field in ["sample.fio2", "sample.barometric_pressure"] {
        let n = not_considered
            .iter()
            .find(|n| n.field == field)
            .unwrap_or_else(|| panic!("{field} not in {not_considered:?}"));
        assert_eq!(n.reason, NotConsideredReason::NoFigure as i32);
    }
    // A built-in figure names its profile, as a budget line of the other
    // RPCs does.
    let po2 = alveolar
        .uncertainty
        .as_ref()
        .unwrap()
        .components
        .iter()
        .find(|c| c.name == "sample.po2")
        .expect("PO2 component");
    assert_eq!(po2.origin, FigureOrigin::Profile as i32);
    assert_eq!(po2.profile_id, "clia-2024-po2");
    assert_eq!(
        po2.profile_verification,
        ProfileVerification::Unverified as i32
    );
    server.stop().await;
}

#[tokio::test]
async fn air_in_the_syringe_and_a_venous_sample_are_discordant_and_still_answered() {
    let server = TestServer::start().await;
    let c = client(&server).await;
    let air = c
        .check_blood_gas(request(air_in_the_syringe()))
        .await
        .expect("a discordant sample is answered, never refused");
    assert_eq!(
        verdict(&air, ConsistencyCheck::RoomAirExposure),
        ConsistencyVerdict::Discordant
    );
    let f = finding(&air, ConsistencyCheck::RoomAirExposure);
    assert_eq!(f.direction, FindingDirection::Above as i32);
    assert!(f.causes.iter().any(|c| c.cause.contains("Air bubble")));
    let venous = c
        .check_blood_gas(request(venous_labelled_arterial()))
        .await
        .expect("answered");
    assert_eq!(
        verdict(&venous, ConsistencyCheck::VenousPattern),
        ConsistencyVerdict::Discordant
    );
    let f = finding(&venous, ConsistencyCheck::VenousPattern);
    assert_eq!(f.direction, FindingDirection::Below as i32);
    assert_eq!(f.threshold_basis, ThresholdBasis::UncertaintyBased as i32);
    assert_eq!(
        verdict(&venous, ConsistencyCheck::PulseOximetryGap),
        ConsistencyVerdict::Discordant
    );
    assert!(venous.discordant_count >= 2);
    server.stop().await;
}

#[tokio::test]
async fn absent_inputs_give_not_evaluable_with_the_reason_and_the_fields() {
    let server = TestServer::start().await;
    let r = client(&server)
        .await
        .check_blood_gas(request(BloodGasResults {
            po2: q(80.0, "mm[Hg]"),
            ..Default::default()
        }))
        .await
        .expect("checked");
    assert_eq!(r.findings.len(), 11);
    for f in &r.findings {
        assert_eq!(f.verdict, ConsistencyVerdict::NotEvaluable as i32);
        assert!(!f.not_evaluable_reason.is_empty());
        assert!(f.statistic.is_none() && f.threshold.is_none());
        assert_eq!(f.direction, FindingDirection::Unspecified as i32);
    }
    let measured = finding(&r, ConsistencyCheck::MeasuredSaturation);
    assert_eq!(
        measured.missing_inputs,
        ["sample.so2_fraction", "sample.ph"]
    );
    assert!(measured.not_evaluable_reason.contains("not given"));
    let acid_base = finding(&r, ConsistencyCheck::AcidBase);
    assert_eq!(
        acid_base.missing_inputs,
        ["sample.bicarbonate", "sample.ph", "sample.pco2"]
    );
    let temperature = finding(&r, ConsistencyCheck::TemperatureCorrectionPo2);
    assert_eq!(temperature.missing_inputs, ["sample.results_at_37_cel.po2"]);
    server.stop().await;
}

fn refused(status: &tonic::Status) -> Vec<(String, String)> {
    let (violations, info) = refusal_of(status);
    assert_eq!(info.expect("ErrorInfo").1, "oxbind.v1");
    violations
        .into_iter()
        .map(|Refusal { field, reason }| (field, reason))
        .collect()
}

#[tokio::test]
async fn bad_input_is_refused_naming_each_field() {
    let server = TestServer::start().await;
    let c = client(&server).await;
    let mut stub = oxbind_client::v1::consistency_service_client::ConsistencyServiceClient::new(
        server.channel().await,
    );
    let no_sample = stub
        .check_blood_gas(CheckBloodGasRequest::default())
        .await
        .unwrap_err();
    assert_eq!(
        refused(&no_sample),
        [("sample".to_owned(), "FIELD_REQUIRED".to_owned())]
    );
    let bad = request(BloodGasResults {
        po2: q(80.0, "mmHg"),
        ph: Some(8.9),
        bicarbonate: q(24.0, "mmol/L"),
        reported_at: ReportedTemperature::AtPatientTemperature as i32,
        white_cell_count: q(5.0, "g/L"),
        ..Default::default()
    });
    let status = c.check_blood_gas(bad).await.unwrap_err();
    assert_eq!(status.code(), Code::InvalidArgument);
    let fields: Vec<(String, String)> = status
        .field_violations()
        .iter()
        .map(|v| (v.field.clone(), v.reason.clone()))
        .collect();
    for wanted in [
        ("sample.po2.unit", "UNIT_NOT_ACCEPTED"),
        ("sample.ph", "PH_OUT_OF_RANGE"),
        ("sample.temperature", "FIELD_REQUIRED"),
        ("sample.bicarbonate_source", "FIELD_REQUIRED"),
        ("sample.white_cell_count.unit", "UNIT_NOT_ACCEPTED"),
    ] {
        assert!(
            fields.contains(&(wanted.0.to_owned(), wanted.1.to_owned())),
            "{wanted:?} not in {fields:?}"
        );
    }
    // A message names fields and limits, never the values sent.
    assert!(!status.to_string().contains("8.9"));
    // Figures are read as every RPC reads them (InputUncertainty), with the
    // same refusals.
    let figure = |field: &str, figure: Figure| InputUncertainty {
        field: field.to_owned(),
        figure: Some(figure),
    };
    let absolute = |value: f64, unit: &str| UncertaintyAmount {
        absolute: q(value, unit),
        relative: None,
    };
    let figures = CheckBloodGasRequest {
        sample: Some(normal_arterial()),
        uncertainty: Some(ConsistencyUncertainty {
            inputs: vec![
                figure("sample.ph", Figure::ProfileId("clia-2024-po2".to_owned())),
                figure(
                    "sample.po2",
                    Figure::ProfileId("no-such-profile".to_owned()),
                ),
                figure(
                    "sample.spo2_fraction",
                    Figure::StandardUncertainty(UncertaintyAmount {
                        absolute: None,
                        relative: q(200.0, "%"),
                    }),
                ),
                figure(
                    "sample.temperature",
                    Figure::StandardUncertainty(absolute(0.1, "Cel")),
                ),
                figure(
                    "sample.results_at_37_cel.po2",
                    Figure::StandardUncertainty(absolute(3.0, "mm[Hg]")),
                ),
                figure(
                    "sample.pco2",
                    Figure::StandardUncertainty(absolute(3.0, "mmHg")),
                ),
                figure(
                    "sample.fio2",
                    Figure::Bound(UncertaintyBound {
                        half_width: Some(absolute(0.02, "1")),
                        shape: BoundShape::CoverageFactor as i32,
                        coverage_factor: 1e-300,
                        ..Default::default()
                    }),
                ),
            ],
            profile_sets: vec!["no-such-set".to_owned()],
            coverage_probability: 0.999,
            ..Default::default()
        }),
        ..Default::default()
    };
    let status = stub.check_blood_gas(figures).await.unwrap_err();
    assert_eq!(
        refused(&status),
        [
            (
                "uncertainty.inputs[0].profile_id".to_owned(),
                "UNCERTAINTY_FIGURE_NOT_USABLE".to_owned()
            ),
            (
                "uncertainty.inputs[1].profile_id".to_owned(),
                "UNCERTAINTY_FIGURE_NOT_USABLE".to_owned()
            ),
            (
                "uncertainty.inputs[2].standard_uncertainty.relative".to_owned(),
                "UNCERTAINTY_OUT_OF_RANGE".to_owned()
            ),
            (
                "uncertainty.inputs[3].field".to_owned(),
                "UNCERTAINTY_FIELD_UNKNOWN".to_owned()
            ),
            (
                "uncertainty.inputs[4].field".to_owned(),
                "UNCERTAINTY_FIGURE_NOT_USABLE".to_owned()
            ),
            (
                "uncertainty.inputs[5].standard_uncertainty.absolute.unit".to_owned(),
                "UNIT_NOT_ACCEPTED".to_owned()
            ),
            (
                "uncertainty.inputs[6].bound.half_width.absolute".to_owned(),
                "UNCERTAINTY_OUT_OF_RANGE".to_owned()
            ),
            (
                "uncertainty.profile_sets[0]".to_owned(),
                "UNCERTAINTY_FIGURE_NOT_USABLE".to_owned()
            ),
            (
                "uncertainty.coverage_probability".to_owned(),
                "COVERAGE_PROBABILITY_OUT_OF_RANGE".to_owned()
            ),
        ]
    );
    server.stop().await;
}

#[tokio::test]
async fn kpa_and_mm_hg_give_the_same_findings_and_si_answers_in_kpa() {
    let server = TestServer::start().await;
    let c = client(&server).await;
    let mut kpa = air_in_the_syringe();
    kpa.po2 = q(121.0 * 0.133_322_387_415, "kPa");
    kpa.pco2 = q(31.0 * 0.133_322_387_415, "kPa");
    let a = c
        .check_blood_gas(request(air_in_the_syringe()))
        .await
        .unwrap();
    let b = c.check_blood_gas(request(kpa)).await.unwrap();
    for (x, y) in a.findings.iter().zip(&b.findings) {
        assert_eq!(x.verdict, y.verdict);
        if let (Some(sx), Some(sy)) = (&x.statistic, &y.statistic) {
            assert!((sx.value - sy.value).abs() <= 1e-9 * sx.value.abs().max(1.0));
        }
    }
    let si = c
        .check_blood_gas(CheckBloodGasRequest {
            unit_system: UnitSystem::Si as i32,
            ..request(air_in_the_syringe())
        })
        .await
        .unwrap();
    let mm = finding(&a, ConsistencyCheck::AboveAlveolar);
    let k = finding(&si, ConsistencyCheck::AboveAlveolar);
    let (mm, k) = (
        mm.statistic.as_ref().unwrap(),
        k.statistic.as_ref().unwrap(),
    );
    assert_eq!((mm.unit.as_str(), k.unit.as_str()), ("mm[Hg]", "kPa"));
    assert!((k.value - mm.value * 0.133_322_387_415).abs() < 1e-9);
    server.stop().await;
}

#[tokio::test]
async fn the_uncertainty_rule_can_be_asked_for_and_states_its_figures() {
    let server = TestServer::start().await;
    let r = client(&server)
        .await
        .check_blood_gas(CheckBloodGasRequest {
            sample: Some(normal_arterial()),
            threshold_rule: ConsistencyThresholdRule::UncertaintyBased as i32,
            uncertainty: Some(ConsistencyUncertainty {
                inputs: vec![InputUncertainty {
                    field: "sample.spo2_fraction".to_owned(),
                    figure: Some(Figure::StandardUncertainty(UncertaintyAmount {
                        absolute: q(2.0, "%"),
                        relative: None,
                    })),
                }],
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap();
    let gap = finding(&r, ConsistencyCheck::PulseOximetryGap);
    assert_eq!(gap.threshold_basis, ThresholdBasis::UncertaintyBased as i32);
    assert!(gap.note.contains("published threshold is 0.05"));
    let spo2 = gap
        .uncertainty
        .as_ref()
        .unwrap()
        .components
        .iter()
        .find(|c| c.name == "sample.spo2_fraction")
        .expect("SpO2 component");
    assert_eq!(spo2.source, "stated in the request");
    assert_eq!(spo2.origin, FigureOrigin::Stated as i32);
    assert_eq!(
        spo2.input_standard_uncertainty.as_ref().unwrap().value,
        0.02
    );
    server.stop().await;
}

/// One component of a finding's uncertainty, by name.
fn component<'a>(
    f: &'a ConsistencyFinding,
    name: &str,
) -> Option<&'a oxbind_client::v1::UncertaintyComponent> {
    f.uncertainty
        .as_ref()
        .and_then(|u| u.components.iter().find(|c| c.name == name))
}

#[tokio::test]
async fn figures_are_given_as_for_every_rpc_with_bounds_and_profile_sets() {
    let server = TestServer::start().await;
    let c = client(&server).await;
    // FiO2 known to within ±2 percentage points, every value in that band
    // equally likely: u = 0.02/√3 (rectangular, JCGM 100:2008 4.3.7).
    let fio2 = InputUncertainty {
        field: "sample.fio2".to_owned(),
        figure: Some(Figure::Bound(UncertaintyBound {
            half_width: Some(UncertaintyAmount {
                absolute: q(2.0, "%"),
                relative: None,
            }),
            shape: BoundShape::Rectangular as i32,
            ..Default::default()
        })),
    };
    let r = c
        .check_blood_gas(CheckBloodGasRequest {
            sample: Some(air_in_the_syringe()),
            uncertainty: Some(ConsistencyUncertainty {
                inputs: vec![fio2.clone()],
                profile_sets: vec!["analytical-goal-harding-fraser-1987".to_owned()],
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap();
    let alveolar = finding(&r, ConsistencyCheck::AboveAlveolar);
    let f = component(alveolar, "sample.fio2").expect("FiO2 component");
    assert_eq!(f.origin, FigureOrigin::Stated as i32);
    let u = f.input_standard_uncertainty.as_ref().unwrap();
    assert!((u.value - 0.02 / 3f64.sqrt()).abs() < 1e-12, "{u:?}");
    // The set covers PCO2 (and pH); its figure wins over the built-in one:
    // u 0.9 mm[Hg], Harding and Fraser, Clin Chem 1987 (profiles.csv).
    let pco2 = component(alveolar, "sample.pco2").expect("PCO2 component");
    assert_eq!(pco2.profile_id, "analytical-goal-harding-fraser-1987-pco2");
    assert_eq!(
        pco2.profile_verification,
        ProfileVerification::Verified as i32
    );
    let u = pco2.input_standard_uncertainty.as_ref().unwrap();
    assert!((u.value - 0.9).abs() < 1e-12, "{u:?}");
    // PO2 has no figure in the request or the set: the built-in one fills in.
    let po2 = component(alveolar, "sample.po2").expect("PO2 component");
    assert_eq!(po2.profile_id, "clia-2024-po2");
    let missing: Vec<&str> = alveolar
        .uncertainty
        .as_ref()
        .unwrap()
        .inputs_not_considered
        .iter()
        .map(|n| n.field.as_str())
        .collect();
    assert_eq!(missing, ["sample.barometric_pressure"]);

    // Without the built-in figures only what was given counts.
    let r = c
        .check_blood_gas(CheckBloodGasRequest {
            sample: Some(air_in_the_syringe()),
            uncertainty: Some(ConsistencyUncertainty {
                inputs: vec![fio2],
                no_built_in_figures: true,
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap();
    let alveolar = finding(&r, ConsistencyCheck::AboveAlveolar);
    assert!(component(alveolar, "sample.po2").is_none());
    let missing: Vec<&str> = alveolar
        .uncertainty
        .as_ref()
        .unwrap()
        .inputs_not_considered
        .iter()
        .map(|n| n.field.as_str())
        .collect();
    for field in ["sample.po2", "sample.pco2", "sample.barometric_pressure"] {
        assert!(missing.contains(&field), "{field} not in {missing:?}");
    }
    server.stop().await;
}

#[tokio::test]
async fn a_batch_checks_every_item_and_refuses_only_the_bad_one() {
    let server = TestServer::start().await;
    let c = client(&server).await;
    let bad = BloodGasResults {
        po2: q(-3.0, "mm[Hg]"),
        ..Default::default()
    };
    let results = c
        .batch_check_blood_gas(vec![
            request(normal_arterial()),
            request(bad),
            request(venous_labelled_arterial()),
        ])
        .await
        .expect("the batch is answered");
    assert_eq!(results.len(), 3);
    assert_eq!(results[0].as_ref().unwrap().discordant_count, 0);
    let refused = results[1].as_ref().unwrap_err();
    assert_eq!(refused.code(), Code::InvalidArgument);
    assert_eq!(
        refused.field_violations()[0].field,
        "requests[1].sample.po2.value"
    );
    assert!(results[2].as_ref().unwrap().discordant_count >= 2);
    let empty = c.batch_check_blood_gas(Vec::new()).await.unwrap_err();
    assert_eq!(empty.field_violations()[0].reason, "BATCH_EMPTY");
    let too_many = c
        .batch_check_blood_gas(vec![request(air_in_the_syringe()); 1001])
        .await
        .unwrap_err();
    assert_eq!(too_many.field_violations()[0].reason, "BATCH_TOO_LARGE");
    server.stop().await;
}

#[tokio::test]
async fn a_connect_json_call_gives_the_grpc_findings() {
    let server = TestServer::start().await;
    let grpc = client(&server)
        .await
        .check_blood_gas(request(venous_labelled_arterial()))
        .await
        .unwrap();
    let body = serde_json::json!({
        "sample": {
            "po2": {"value": 38, "unit": "mm[Hg]"},
            "pco2": {"value": 47, "unit": "mm[Hg]"},
            "ph": 7.36,
            "sampleType": "BLOOD_GAS_SAMPLE_TYPE_ARTERIAL",
            "so2Fraction": 0.71,
            "spo2Fraction": 0.96,
            "fio2": {"value": 28, "unit": "%"}
        }
    });
    for version in [Version::Http1, Version::Http2] {
        let answer = send(
            server.address(),
            version,
            connect_post(
                "/oxbind.v1.ConsistencyService/CheckBloodGas",
                "application/json",
                serde_json::to_vec(&body).unwrap(),
            ),
        )
        .await;
        assert_eq!(
            answer.status,
            200,
            "{}",
            String::from_utf8_lossy(&answer.body)
        );
        let json = answer.json();
        let findings = json["findings"].as_array().expect("findings");
        assert_eq!(findings.len(), grpc.findings.len());
        for (j, g) in findings.iter().zip(&grpc.findings) {
            let check = ConsistencyCheck::try_from(g.check).unwrap().as_str_name();
            assert_eq!(j["check"], check);
            let verdict = ConsistencyVerdict::try_from(g.verdict)
                .unwrap()
                .as_str_name();
            assert_eq!(j["verdict"], verdict, "{check}");
            if let Some(s) = &g.statistic {
                assert_eq!(
                    j["statistic"]["value"].as_f64().unwrap(),
                    s.value,
                    "{check}"
                );
            }
        }
        assert_eq!(json["discordantCount"], grpc.discordant_count);
        assert!(json["cautions"].as_str().unwrap().contains("do not reject"));
    }
    let refused = send(
        server.address(),
        Version::Http1,
        connect_post(
            "/oxbind.v1.ConsistencyService/CheckBloodGas",
            "application/json",
            r#"{"sample": {"po2": {"value": 80, "unit": "mm[Hg]"}, "so2Kind": "SATURATION_KIND_FRACTIONAL"}}"#,
        ),
    )
    .await;
    assert_eq!(refused.status, 400);
    let error = refused.json();
    assert_eq!(error["code"], "invalid_argument");
    assert!(error["message"]
        .as_str()
        .unwrap()
        .starts_with("sample.so2_kind"));
    server.stop().await;
}
