//! Every refusal names the field the caller got wrong, with a limit a person
//! can read, and the hard-limit table is the only limit there is (issue 18,
//! finding 7).

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient,
    model_catalog_service_client::ModelCatalogServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient, BloodConditions, BloodSample,
    CorrectForTemperatureRequest, GasExchangeRequest, InputLimit, ListModelsRequest, Model,
    OxygenContentRequest, Quantity, SaturationFromTensionRequest, TensionFromSaturationRequest,
};
use oxbind_tests::{q, refusal_of, Refusal, TestServer};
use tonic::transport::Channel;

/// The longest refusal message a person should have to read (the hard-limit
/// descriptions, with their reasons, are about 250 characters).
const READABLE_MESSAGE_CHARS: usize = 300;

fn refused(status: &tonic::Status, field: &str, reason: &str) {
    let (violations, _) = refusal_of(status);
    assert!(
        violations.contains(&Refusal {
            field: field.to_owned(),
            reason: reason.to_owned(),
        }),
        "expected {field} {reason}, got {violations:?} ({})",
        status.message()
    );
    readable(status.message());
}

fn readable(message: &str) {
    assert!(
        message.len() <= READABLE_MESSAGE_CHARS,
        "{} characters: {message}",
        message.len()
    );
    assert!(!message.contains("0.0000000"), "{message}");
}

async fn limits(channel: Channel) -> Vec<InputLimit> {
    ModelCatalogServiceClient::new(channel)
        .list_models(ListModelsRequest {})
        .await
        .unwrap()
        .into_inner()
        .input_limits
}

fn limit_for<'a>(limits: &'a [InputLimit], field: &str) -> &'a InputLimit {
    limits
        .iter()
        .find(|l| l.fields.iter().any(|f| f == field))
        .unwrap_or_else(|| panic!("no hard limit lists {field}"))
}

/// Blood conditions with one condition set to a value.
type ConditionsOf = Box<dyn Fn(f64) -> BloodConditions>;

fn pco2(mmhg: f64) -> BloodConditions {
    BloodConditions {
        pco2: q(mmhg, "mm[Hg]"),
        ..Default::default()
    }
}

#[tokio::test]
async fn the_conditions_pco2_limit_is_the_published_one() {
    let server = TestServer::start().await;
    let limits = limits(server.channel().await).await;
    let limit = limit_for(&limits, "conditions.pco2");
    let max = limit.max.as_ref().unwrap();
    assert_eq!(max.unit, "mm[Hg]");
    let mut client = DissociationServiceClient::new(server.channel().await);
    // 1000 mm[Hg] is refused, for the reason the published table gives and
    // in readable words, naming the field.
    let status = client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(80.0, "mm[Hg]"),
            conditions: Some(pco2(1000.0)),
            ..Default::default()
        })
        .await
        .expect_err("PCO2 1000 mm[Hg] is refused");
    refused(&status, "conditions.pco2.value", &limit.error_reason);
    // The table's own maximum is accepted by every model: no limit hides
    // behind the table.
    for model in [
        Model::Severinghaus1979,
        Model::Kelman1966,
        Model::Hill,
        Model::Adair,
        Model::SiggaardAndersen1984,
        Model::Dash2016,
    ] {
        client
            .saturation_from_tension(SaturationFromTensionRequest {
                po2: q(80.0, "mm[Hg]"),
                conditions: Some(pco2(max.value)),
                model: model as i32,
                ..Default::default()
            })
            .await
            .unwrap_or_else(|e| panic!("{model:?} refuses the table's maximum: {e:?}"));
    }
    server.stop().await;
}

#[tokio::test]
async fn every_condition_limit_edge_is_accepted() {
    // The edges of each BloodConditions limit in the published table are
    // accepted: a value the table allows is never refused by a hidden engine
    // limit (a model's own domain, OUTSIDE_MODEL_DOMAIN, excepted).
    let server = TestServer::start().await;
    let limits = limits(server.channel().await).await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let cases: Vec<(&str, ConditionsOf)> = vec![
        (
            "conditions.ph",
            Box::new(|v| BloodConditions {
                ph: Some(v),
                ..Default::default()
            }),
        ),
        ("conditions.pco2", Box::new(pco2)),
        (
            "conditions.temperature",
            Box::new(|v| BloodConditions {
                temperature: q(v, "Cel"),
                ..Default::default()
            }),
        ),
        (
            "conditions.dpg",
            Box::new(|v| BloodConditions {
                dpg: q(v, "mmol/L"),
                ..Default::default()
            }),
        ),
        (
            "conditions.base_excess",
            Box::new(|v| BloodConditions {
                base_excess: q(v, "mmol/L"),
                ..Default::default()
            }),
        ),
        (
            "conditions.hbf",
            Box::new(|v| BloodConditions {
                hbf: q(v, "1"),
                ..Default::default()
            }),
        ),
    ];
    for (field, conditions) in cases {
        let limit = limit_for(&limits, field);
        let edges = [
            (limit.min_inclusive, limit.min.as_ref().unwrap().value),
            (limit.max_inclusive, limit.max.as_ref().unwrap().value),
        ];
        for value in edges.iter().filter(|e| e.0).map(|e| e.1) {
            for model in [Model::Severinghaus1979, Model::Dash2016, Model::Kelman1966] {
                let answer = client
                    .saturation_from_tension(SaturationFromTensionRequest {
                        po2: q(80.0, "mm[Hg]"),
                        conditions: Some(conditions(value)),
                        model: model as i32,
                        ..Default::default()
                    })
                    .await;
                if let Err(status) = answer {
                    let (violations, _) = refusal_of(&status);
                    assert!(
                        violations
                            .iter()
                            .all(|v| v.reason == "OUTSIDE_MODEL_DOMAIN"),
                        "{field} = {value} with {model:?}: {violations:?}"
                    );
                }
            }
        }
    }
    server.stop().await;
}

fn sample_with_conditions(po2: f64, conditions: BloodConditions) -> Option<BloodSample> {
    Some(BloodSample {
        po2: q(po2, "mm[Hg]"),
        conditions: Some(conditions),
        ..Default::default()
    })
}

#[tokio::test]
async fn a_bad_sample_pco2_is_named_as_the_pco2() {
    let server = TestServer::start().await;
    let mut transport = OxygenTransportServiceClient::new(server.channel().await);
    for pco2_mmhg in [1000.0, 7000.0] {
        let status = transport
            .oxygen_content(OxygenContentRequest {
                hemoglobin: q(14.0, "g/dL"),
                arterial: sample_with_conditions(90.0, pco2(pco2_mmhg)),
                venous: sample_with_conditions(40.0, pco2(pco2_mmhg)),
                ..Default::default()
            })
            .await
            .expect_err("a PCO2 past the table is refused");
        let (violations, _) = refusal_of(&status);
        let fields: Vec<&str> = violations.iter().map(|v| v.field.as_str()).collect();
        assert_eq!(
            fields,
            [
                "arterial.conditions.pco2.value",
                "venous.conditions.pco2.value"
            ],
            "{violations:?}"
        );
        readable(status.message());

        let status = transport
            .gas_exchange(GasExchangeRequest {
                fio2: q(0.4, "1"),
                paco2: q(40.0, "mm[Hg]"),
                pao2: q(80.0, "mm[Hg]"),
                hemoglobin: q(14.0, "g/dL"),
                venous: sample_with_conditions(40.0, pco2(pco2_mmhg)),
                ..Default::default()
            })
            .await
            .expect_err("a PCO2 past the table is refused");
        refused(&status, "venous.conditions.pco2.value", "PCO2_OUT_OF_RANGE");
    }
    server.stop().await;
}

#[tokio::test]
async fn a_gas_exchange_arterial_sample_is_never_ignored() {
    let server = TestServer::start().await;
    let mut transport = OxygenTransportServiceClient::new(server.channel().await);
    let base = || GasExchangeRequest {
        fio2: q(0.4, "1"),
        paco2: q(40.0, "mm[Hg]"),
        pao2: q(90.0, "mm[Hg]"),
        ..Default::default()
    };
    // An arterial PO2 that disagrees with pao2 is refused, even when no
    // shunt is computed.
    let status = transport
        .gas_exchange(GasExchangeRequest {
            arterial: Some(BloodSample {
                po2: q(60.0, "mm[Hg]"),
                saturation_fraction: Some(0.9),
                ..Default::default()
            }),
            ..base()
        })
        .await
        .expect_err("arterial.po2 60 against pao2 90 is refused");
    refused(&status, "arterial.po2", "INPUTS_INCONSISTENT");
    // A venous sample without haemoglobin is not silently dropped: the shunt
    // it serves needs haemoglobin, and the refusal says so.
    let status = transport
        .gas_exchange(GasExchangeRequest {
            venous: Some(BloodSample {
                po2: q(40.0, "mm[Hg]"),
                saturation_fraction: Some(0.75),
                ..Default::default()
            }),
            ..base()
        })
        .await
        .expect_err("a venous sample without haemoglobin is refused");
    refused(&status, "hemoglobin", "FIELD_REQUIRED");
    assert!(status.message().contains("shunt"), "{}", status.message());
    // With every shunt input the shunt is computed.
    let answer = transport
        .gas_exchange(GasExchangeRequest {
            hemoglobin: q(14.0, "g/dL"),
            venous: Some(BloodSample {
                po2: q(40.0, "mm[Hg]"),
                saturation_fraction: Some(0.75),
                ..Default::default()
            }),
            ..base()
        })
        .await
        .expect("every shunt input given")
        .into_inner();
    assert!(answer.shunt_fraction.is_some());
    server.stop().await;
}

#[tokio::test]
async fn temperature_correction_needs_any_one_value_and_says_so() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let status = client
        .correct_for_temperature(CorrectForTemperatureRequest {
            target_temperature: q(32.0, "Cel"),
            ..Default::default()
        })
        .await
        .expect_err("nothing to correct");
    refused(&status, "po2", "FIELD_REQUIRED");
    assert!(
        status.message().contains("unless ph or pco2"),
        "{}",
        status.message()
    );
    // pH alone is enough.
    client
        .correct_for_temperature(CorrectForTemperatureRequest {
            ph: Some(7.3),
            target_temperature: q(32.0, "Cel"),
            ..Default::default()
        })
        .await
        .expect("pH alone is corrected");
    server.stop().await;
}

#[tokio::test]
async fn a_percentage_sent_as_a_fraction_is_refused_with_the_per_cent_spelling() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let status = client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(80.0, "mm[Hg]"),
            conditions: Some(BloodConditions {
                cohb: q(12.0, "1"),
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .expect_err("COHb 12 with unit 1 is refused");
    refused(&status, "conditions.cohb.value", "FRACTION_OUT_OF_RANGE");
    assert!(status.message().contains("`%`"), "{}", status.message());
    let status = client
        .tension_from_saturation(TensionFromSaturationRequest {
            saturation_fraction: 90.0,
            ..Default::default()
        })
        .await
        .expect_err("saturation 90 is refused");
    refused(&status, "saturation_fraction", "SATURATION_OUT_OF_RANGE");
    assert!(
        status.message().contains("divided by 100"),
        "{}",
        status.message()
    );
    // The same value as per cent is computed.
    client
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(80.0, "mm[Hg]"),
            conditions: Some(BloodConditions {
                cohb: Some(Quantity::percent(12.0)),
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .expect("COHb 12 % is computed");
    server.stop().await;
}
