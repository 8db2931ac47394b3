//! Every hard limit is refused with INVALID_ARGUMENT, a BadRequest naming the
//! field path and an ErrorInfo reason in domain `oxbind.v1`.

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient, BloodConditions, BloodSample,
    GasExchangeRequest, HillParameters, Model, OxygenContentRequest, SaturationFromTensionRequest,
    TensionFromSaturationRequest,
};
use oxbind_tests::{q, refusal_of, Refusal, TestServer};

fn saturation_request(
    po2: Option<oxbind_client::v1::Quantity>,
    conditions: BloodConditions,
) -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2,
        conditions: Some(conditions),
        ..Default::default()
    }
}

/// Send `request` and assert it is refused on exactly `field` with `reason`.
async fn assert_refused(
    client: &mut DissociationServiceClient<tonic::transport::Channel>,
    request: SaturationFromTensionRequest,
    field: &str,
    reason: &str,
) {
    let status = client
        .saturation_from_tension(request.clone())
        .await
        .expect_err(&format!("{request:?} must be refused"));
    let (violations, info) = refusal_of(&status);
    assert!(
        violations.contains(&Refusal {
            field: field.to_owned(),
            reason: reason.to_owned(),
        }),
        "expected {field} {reason}, got {violations:?}"
    );
    let (info_reason, domain) = info.expect("an ErrorInfo");
    assert_eq!(domain, "oxbind.v1");
    assert_eq!(info_reason, violations[0].reason);
    assert!(!status.message().is_empty());
}

#[tokio::test]
async fn hard_limits_of_the_forward_call() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let good = || q(60.0, "mm[Hg]");
    let cases: Vec<(SaturationFromTensionRequest, &str, &str)> = vec![
        (
            saturation_request(None, BloodConditions::default()),
            "po2",
            "FIELD_REQUIRED",
        ),
        (
            saturation_request(q(f64::NAN, "mm[Hg]"), BloodConditions::default()),
            "po2.value",
            "VALUE_NOT_FINITE",
        ),
        (
            saturation_request(q(f64::INFINITY, "mm[Hg]"), BloodConditions::default()),
            "po2.value",
            "VALUE_NOT_FINITE",
        ),
        (
            saturation_request(q(-3.0, "mm[Hg]"), BloodConditions::default()),
            "po2.value",
            "PRESSURE_OUT_OF_RANGE",
        ),
        (
            saturation_request(q(0.0, "kPa"), BloodConditions::default()),
            "po2.value",
            "PRESSURE_OUT_OF_RANGE",
        ),
        (
            saturation_request(q(60.0, "mmHg"), BloodConditions::default()),
            "po2.unit",
            "UNIT_NOT_ACCEPTED",
        ),
        (
            saturation_request(q(60.0, "Pa"), BloodConditions::default()),
            "po2.unit",
            "UNIT_NOT_ACCEPTED",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    ph: Some(8.6),
                    ..Default::default()
                },
            ),
            "conditions.ph",
            "PH_OUT_OF_RANGE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    ph: Some(5.9),
                    ..Default::default()
                },
            ),
            "conditions.ph",
            "PH_OUT_OF_RANGE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    ph: Some(f64::NAN),
                    ..Default::default()
                },
            ),
            "conditions.ph",
            "VALUE_NOT_FINITE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    temperature: q(47.0, "Cel"),
                    ..Default::default()
                },
            ),
            "conditions.temperature.value",
            "TEMPERATURE_OUT_OF_RANGE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    temperature: q(48.0, "[degF]"),
                    ..Default::default()
                },
            ),
            "conditions.temperature.value",
            "TEMPERATURE_OUT_OF_RANGE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    pco2: q(-1.0, "kPa"),
                    ..Default::default()
                },
            ),
            "conditions.pco2.value",
            "PCO2_OUT_OF_RANGE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    cohb: q(60.0, "%"),
                    methb: q(0.5, "1"),
                    ..Default::default()
                },
            ),
            "conditions.cohb",
            "FRACTIONS_EXCEED_ONE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    hbf: q(120.0, "%"),
                    ..Default::default()
                },
            ),
            "conditions.hbf.value",
            "FRACTION_OUT_OF_RANGE",
        ),
        (
            saturation_request(
                good(),
                BloodConditions {
                    dpg: q(-1.0, "mmol/L"),
                    ..Default::default()
                },
            ),
            "conditions.dpg.value",
            "DPG_OUT_OF_RANGE",
        ),
        (
            SaturationFromTensionRequest {
                po2: good(),
                model: 99,
                ..Default::default()
            },
            "model",
            "UNKNOWN_ENUM_VALUE",
        ),
        (
            SaturationFromTensionRequest {
                po2: good(),
                model: Model::Severinghaus1979 as i32,
                hill: Some(HillParameters::default()),
                ..Default::default()
            },
            "hill",
            "PARAMETER_NOT_APPLICABLE",
        ),
        (
            SaturationFromTensionRequest {
                po2: good(),
                model: Model::Hill as i32,
                hill: Some(HillParameters {
                    n: 5.0,
                    ..Default::default()
                }),
                ..Default::default()
            },
            "hill.n",
            "HILL_N_OUT_OF_RANGE",
        ),
        (
            // Kelman 1966 above its domain: a virtual PO2 beyond 8949.9 mmHg,
            // where the rational function exceeds 1 (7600 mmHg at 20 Cel).
            SaturationFromTensionRequest {
                po2: q(7600.0, "mm[Hg]"),
                conditions: Some(BloodConditions {
                    temperature: q(20.0, "Cel"),
                    ..Default::default()
                }),
                model: Model::Kelman1966 as i32,
                ..Default::default()
            },
            "po2.value",
            "OUTSIDE_MODEL_DOMAIN",
        ),
    ];
    for (request, field, reason) in cases {
        assert_refused(&mut client, request, field, reason).await;
    }
    server.stop().await;
}

#[tokio::test]
async fn every_bad_field_is_listed_in_one_refusal() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let status = client
        .saturation_from_tension(saturation_request(
            q(f64::NAN, "mm[Hg]"),
            BloodConditions {
                ph: Some(9.0),
                temperature: q(37.0, "C"),
                ..Default::default()
            },
        ))
        .await
        .unwrap_err();
    let (violations, _) = refusal_of(&status);
    let fields: Vec<&str> = violations.iter().map(|v| v.field.as_str()).collect();
    assert_eq!(
        fields,
        ["po2.value", "conditions.ph", "conditions.temperature.unit"]
    );
    // Messages name fields and limits but never echo the values sent.
    assert!(!status.message().contains("NaN") && !status.message().contains("9"));
    server.stop().await;
}

#[tokio::test]
async fn the_inverse_refuses_saturations_of_zero_and_one() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    for saturation in [0.0, 1.0, -0.2, 1.3, f64::NAN] {
        let status = client
            .tension_from_saturation(TensionFromSaturationRequest {
                saturation_fraction: saturation,
                ..Default::default()
            })
            .await
            .unwrap_err();
        let (violations, info) = refusal_of(&status);
        let expected = if saturation.is_nan() {
            "VALUE_NOT_FINITE"
        } else {
            "SATURATION_OUT_OF_RANGE"
        };
        assert_eq!(
            violations,
            [Refusal {
                field: "saturation_fraction".to_owned(),
                reason: expected.to_owned(),
            }],
            "S = {saturation}"
        );
        assert_eq!(info.unwrap().0, expected);
    }
    server.stop().await;
}

#[tokio::test]
async fn hard_limits_of_the_transport_calls() {
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    let arterial = || {
        Some(BloodSample {
            saturation_fraction: Some(0.97),
            po2: q(95.0, "mm[Hg]"),
            ..Default::default()
        })
    };
    let cases = [
        (
            OxygenContentRequest {
                hemoglobin: q(31.0, "g/dL"),
                arterial: arterial(),
                ..Default::default()
            },
            "hemoglobin.value",
            "HEMOGLOBIN_OUT_OF_RANGE",
        ),
        (
            OxygenContentRequest {
                hemoglobin: q(0.0, "g/L"),
                arterial: arterial(),
                ..Default::default()
            },
            "hemoglobin.value",
            "HEMOGLOBIN_OUT_OF_RANGE",
        ),
        (
            OxygenContentRequest {
                hemoglobin: q(14.0, "g/dL"),
                ..Default::default()
            },
            "arterial",
            "FIELD_REQUIRED",
        ),
        (
            OxygenContentRequest {
                hemoglobin: q(14.0, "g/dL"),
                arterial: Some(BloodSample {
                    saturation_fraction: Some(1.2),
                    po2: q(95.0, "mm[Hg]"),
                    ..Default::default()
                }),
                ..Default::default()
            },
            "arterial.saturation_fraction",
            "SATURATION_OUT_OF_RANGE",
        ),
        (
            OxygenContentRequest {
                hemoglobin: q(14.0, "g/dL"),
                arterial: arterial(),
                hufner_factor_ml_per_g: Some(1.5),
                ..Default::default()
            },
            "hufner_factor_ml_per_g",
            "HUFNER_FACTOR_OUT_OF_RANGE",
        ),
    ];
    for (request, field, reason) in cases {
        let status = client.oxygen_content(request).await.unwrap_err();
        let (violations, _) = refusal_of(&status);
        assert!(
            violations
                .iter()
                .any(|v| v.field == field && v.reason == reason),
            "{field} {reason}: {violations:?}"
        );
    }
    for (fio2, reason) in [
        (q(0.01, "1"), "FIO2_OUT_OF_RANGE"),
        (q(101.0, "%"), "FIO2_OUT_OF_RANGE"),
        (None, "FIELD_REQUIRED"),
    ] {
        let status = client
            .gas_exchange(GasExchangeRequest {
                fio2,
                paco2: q(40.0, "mm[Hg]"),
                ..Default::default()
            })
            .await
            .unwrap_err();
        let (violations, _) = refusal_of(&status);
        assert!(
            violations
                .iter()
                .any(|v| v.field.starts_with("fio2") && v.reason == reason),
            "{reason}: {violations:?}"
        );
    }
    server.stop().await;
}
