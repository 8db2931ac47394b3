//! Warnings carry a severity (issue 18, finding 4): a condition the model
//! ignores is informational while its value lies inside its standard
//! physiological range and a caution outside it; every other finding that
//! bears on how far a number can be trusted is a caution; and the server
//! never leaves the severity unset.

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient, BloodConditions, BloodSample,
    Model, OxygenContentRequest, SaturationFromTensionRequest, TensionFromSaturationRequest,
    Warning, WarningCode, WarningSeverity,
};
use oxbind_tests::{q, TestServer};

fn find(warnings: &[Warning], code: WarningCode, field: &str) -> Warning {
    warnings
        .iter()
        .find(|w| w.code == code as i32 && w.field == field)
        .cloned()
        .unwrap_or_else(|| panic!("no {code:?} on {field}: {warnings:?}"))
}

fn severity(w: &Warning) -> WarningSeverity {
    WarningSeverity::try_from(w.severity).expect("a known severity")
}

#[tokio::test]
async fn an_ignored_condition_is_graded_by_its_standard_range() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    // Severinghaus 1979 does not take PCO2 into account (ListModels). The
    // standard adult arterial PCO2 is 35-45 mm[Hg] (common practice, e.g.
    // StatPearls "Arterial Blood Gas", NCBI Bookshelf NBK536919).
    let cases = [
        (q(40.0, "mm[Hg]"), WarningSeverity::Informational),
        (q(5.3, "kPa"), WarningSeverity::Informational),
        (q(70.0, "mm[Hg]"), WarningSeverity::Caution),
        (q(25.0, "mm[Hg]"), WarningSeverity::Caution),
    ];
    for (pco2, expected) in cases {
        let answer = client
            .saturation_from_tension(SaturationFromTensionRequest {
                po2: q(80.0, "mm[Hg]"),
                conditions: Some(BloodConditions {
                    pco2: pco2.clone(),
                    ..Default::default()
                }),
                model: Model::Severinghaus1979 as i32,
                ..Default::default()
            })
            .await
            .unwrap()
            .into_inner();
        let w = find(
            &answer.warnings,
            WarningCode::ConditionNotModelled,
            "conditions.pco2",
        );
        assert_eq!(severity(&w), expected, "{pco2:?}: {}", w.message);
        assert!(w.message.contains("35 to 45 mm[Hg]"), "{}", w.message);
    }
    server.stop().await;
}

#[tokio::test]
async fn soft_limits_that_bear_on_trust_are_cautions() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let plateau = client
        .tension_from_saturation(TensionFromSaturationRequest {
            saturation_fraction: 0.985,
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let w = find(
        &plateau.warnings,
        WarningCode::PlateauPoorlyDetermined,
        "saturation_fraction",
    );
    assert_eq!(severity(&w), WarningSeverity::Caution);

    // pH 6.9 lies outside Severinghaus 1979's validated range (ListModels).
    let outside = client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(60.0, "mm[Hg]"),
            conditions: Some(BloodConditions {
                ph: Some(6.5),
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let w = find(
        &outside.warnings,
        WarningCode::OutsideValidatedRange,
        "conditions.ph",
    );
    assert_eq!(severity(&w), WarningSeverity::Caution);
    // The message names the input and the range with its unit.
    assert!(w.message.starts_with("ph lies outside"), "{}", w.message);

    let mut transport = OxygenTransportServiceClient::new(server.channel().await);
    let content = transport
        .oxygen_content(OxygenContentRequest {
            hemoglobin: q(14.0, "g/dL"),
            arterial: Some(BloodSample {
                po2: q(90.0, "mm[Hg]"),
                ..Default::default()
            }),
            venous: Some(BloodSample {
                po2: q(40.0, "mm[Hg]"),
                saturation_fraction: Some(0.75),
                conditions: Some(BloodConditions {
                    ph: Some(7.36),
                    ..Default::default()
                }),
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let calculated = find(
        &content.warnings,
        WarningCode::SaturationCalculated,
        "arterial.saturation_fraction",
    );
    assert_eq!(severity(&calculated), WarningSeverity::Caution);
    // Conditions beside a measured saturation were not needed: recorded,
    // informational.
    let unused = find(
        &content.warnings,
        WarningCode::ConditionNotModelled,
        "venous.conditions",
    );
    assert_eq!(severity(&unused), WarningSeverity::Informational);
    for w in content
        .warnings
        .iter()
        .chain(&plateau.warnings)
        .chain(&outside.warnings)
    {
        assert_ne!(w.severity, WarningSeverity::Unspecified as i32, "{w:?}");
    }
    server.stop().await;
}
