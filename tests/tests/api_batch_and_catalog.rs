//! Batches keep request order and give each bad item its own status; the
//! catalog lists every model and the hard limits.

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient,
    model_catalog_service_client::ModelCatalogServiceClient, saturation_from_tension_result,
    tension_from_saturation_result, BatchSaturationFromTensionRequest,
    BatchTensionFromSaturationRequest, ListModelsRequest, SaturationFromTensionRequest,
    TensionFromSaturationRequest,
};
use oxbind_service::Config;
use oxbind_tests::{decode_details, q, refusal_of, TestServer};

fn item(po2: f64, unit: &str) -> SaturationFromTensionRequest {
    SaturationFromTensionRequest {
        po2: q(po2, unit),
        ..Default::default()
    }
}

#[tokio::test]
async fn a_batch_with_bad_items_computes_the_rest_in_order() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let requests = vec![
        item(40.0, "mm[Hg]"),
        item(-1.0, "mm[Hg]"),
        item(100.0, "mm[Hg]"),
        item(60.0, "mmHg"),
        item(20.0, "mm[Hg]"),
    ];
    let response = client
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest { requests })
        .await
        .unwrap()
        .into_inner();
    assert_eq!(response.results.len(), 5);
    // Severinghaus Eq. 1 at 40 / 100 / 20 mmHg: 0.749465 / 0.977465 / 0.319767
    // (derived, methods.md section 1).
    for (index, expected) in [(0, 0.749_465), (2, 0.977_465), (4, 0.319_767)] {
        match &response.results[index].result {
            Some(saturation_from_tension_result::Result::Response(r)) => {
                assert!(
                    (r.saturation_fraction - expected).abs() < 1e-6,
                    "item {index}"
                )
            }
            other => panic!("item {index}: {other:?}"),
        }
    }
    for (index, field, reason) in [
        (1, "requests[1].po2.value", "PRESSURE_OUT_OF_RANGE"),
        (3, "requests[3].po2.unit", "UNIT_NOT_ACCEPTED"),
    ] {
        match &response.results[index].result {
            Some(saturation_from_tension_result::Result::Error(status)) => {
                assert_eq!(status.code, tonic::Code::InvalidArgument as i32);
                let (violations, info) = decode_details(&status.details);
                assert_eq!(violations[0].field, field);
                assert_eq!(violations[0].reason, reason);
                assert_eq!(info.unwrap(), (reason.to_owned(), "oxbind.v1".to_owned()));
            }
            other => panic!("item {index}: {other:?}"),
        }
    }
    server.stop().await;
}

#[tokio::test]
async fn the_inverse_batch_gives_per_item_errors_too() {
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let requests = [0.5, 1.0, 0.9]
        .iter()
        .map(|&s| TensionFromSaturationRequest {
            saturation_fraction: s,
            ..Default::default()
        })
        .collect();
    let response = client
        .batch_tension_from_saturation(BatchTensionFromSaturationRequest { requests })
        .await
        .unwrap()
        .into_inner();
    // Ellis inverse: S 0.5 -> 26.8568, S 0.9 -> 58.6554 mmHg (derived,
    // methods.md section 2).
    for (index, expected) in [(0, 26.8568), (2, 58.6554)] {
        match &response.results[index].result {
            Some(tension_from_saturation_result::Result::Response(r)) => {
                assert!((r.po2.as_ref().unwrap().value - expected).abs() < 1e-3)
            }
            other => panic!("item {index}: {other:?}"),
        }
    }
    match &response.results[1].result {
        Some(tension_from_saturation_result::Result::Error(status)) => {
            let (violations, _) = decode_details(&status.details);
            assert_eq!(violations[0].field, "requests[1].saturation_fraction");
        }
        other => panic!("{other:?}"),
    }
    server.stop().await;
}

#[tokio::test]
async fn empty_and_oversized_batches_are_refused_naming_the_limit() {
    let server = TestServer::start_with(Config {
        max_batch_items: 3,
        ..Config::default()
    })
    .await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let empty = client
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest { requests: vec![] })
        .await
        .unwrap_err();
    let (violations, info) = refusal_of(&empty);
    assert_eq!(violations[0].field, "requests");
    assert_eq!(info.unwrap().0, "BATCH_EMPTY");

    let oversized = client
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
            requests: vec![item(40.0, "mm[Hg]"); 4],
        })
        .await
        .unwrap_err();
    let (violations, info) = refusal_of(&oversized);
    assert_eq!(violations[0].field, "requests");
    assert_eq!(info.unwrap().0, "BATCH_TOO_LARGE");
    assert!(oversized.message().contains('3'), "{}", oversized.message());
    server.stop().await;
}

#[tokio::test]
async fn the_catalog_lists_every_model_with_its_cautions_and_limits() {
    let server = TestServer::start().await;
    let mut client = ModelCatalogServiceClient::new(server.channel().await);
    let response = client
        .list_models(ListModelsRequest {})
        .await
        .unwrap()
        .into_inner();
    let ids: Vec<&str> = response
        .models
        .iter()
        .map(|m| m.model_id.as_str())
        .collect();
    assert_eq!(
        ids,
        [
            "severinghaus-1979",
            "kelman-1966",
            "hill",
            "adair",
            "siggaard-andersen-1984",
            "dash-2016"
        ]
    );
    let defaults: Vec<&str> = response
        .models
        .iter()
        .filter(|m| m.is_default)
        .map(|m| m.model_id.as_str())
        .collect();
    assert_eq!(defaults, ["severinghaus-1979"]);
    assert!(response
        .models
        .iter()
        .all(|m| !m.reference.is_empty() && !m.title.is_empty()));
    assert!(response.cautions.contains("decision support"));
    assert!(response.cautions.contains("co-oximetry"));
    let ph = response
        .input_limits
        .iter()
        .find(|l| l.input == "ph")
        .expect("pH limit listed");
    assert_eq!(
        (
            ph.min.as_ref().unwrap().value,
            ph.max.as_ref().unwrap().value
        ),
        (6.0, 8.5)
    );
    let batch = response
        .input_limits
        .iter()
        .find(|l| l.input == "batch_items")
        .expect("batch limit listed");
    assert_eq!(batch.max.as_ref().unwrap().value, 10_000.0);
    let hill = response
        .models
        .iter()
        .find(|m| m.model_id == "hill")
        .unwrap();
    assert_eq!(hill.hill_presets.len(), 3);
    server.stop().await;
}
