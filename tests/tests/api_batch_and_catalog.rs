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
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
            requests,
            ..Default::default()
        })
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
        .batch_tension_from_saturation(BatchTensionFromSaturationRequest {
            requests,
            ..Default::default()
        })
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
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
            requests: vec![],
            ..Default::default()
        })
        .await
        .unwrap_err();
    let (violations, info) = refusal_of(&empty);
    assert_eq!(violations[0].field, "requests");
    assert_eq!(info.unwrap().0, "BATCH_EMPTY");

    let oversized = client
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
            requests: vec![item(40.0, "mm[Hg]"); 4],
            ..Default::default()
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
            "dash-2016",
            "siggaard-andersen-1990"
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

/// With PROVENANCE_PLACEMENT_SHARED the items carry no provenance, name an
/// entry of the shared list (one per model and within_validated_range), and
/// their values are those of the per-item answer.
#[tokio::test]
async fn shared_provenance_is_given_once_per_model_and_range() {
    use oxbind_client::v1::{Model, ProvenancePlacement};
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let kelman = |po2: f64| SaturationFromTensionRequest {
        model: Model::Kelman1966 as i32,
        ..item(po2, "mm[Hg]")
    };
    // Items 0 and 2: Severinghaus inside its range; 1: refused; 3: Kelman;
    // 4: Severinghaus at pH 7.9, outside its validated pH range (6.8-7.8).
    let requests = vec![
        item(40.0, "mm[Hg]"),
        item(-1.0, "mm[Hg]"),
        item(100.0, "mm[Hg]"),
        kelman(60.0),
        SaturationFromTensionRequest {
            conditions: Some(oxbind_client::v1::BloodConditions::standard().with_ph(7.9)),
            ..item(50.0, "mm[Hg]")
        },
    ];
    let each = client
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
            requests: requests.clone(),
            provenance_placement: ProvenancePlacement::EachItem as i32,
        })
        .await
        .unwrap()
        .into_inner();
    let shared = client
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
            requests,
            provenance_placement: ProvenancePlacement::Shared as i32,
        })
        .await
        .unwrap()
        .into_inner();
    assert!(each.shared_provenance.is_empty());
    let entries: Vec<(&str, bool)> = shared
        .shared_provenance
        .iter()
        .map(|p| (p.model_id.as_str(), p.within_validated_range))
        .collect();
    assert_eq!(
        entries,
        [
            ("severinghaus-1979", true),
            ("kelman-1966", true),
            ("severinghaus-1979", false)
        ]
    );
    for entry in &shared.shared_provenance {
        assert!(entry.inputs_used.is_empty());
        assert!(!entry.reference.is_empty() && entry.compute_time.is_some());
    }
    let expected_index = [Some(0), None, Some(0), Some(1), Some(2)];
    for (index, (alone, lean)) in each.results.iter().zip(&shared.results).enumerate() {
        match (&alone.result, &lean.result, expected_index[index]) {
            (
                Some(saturation_from_tension_result::Result::Response(a)),
                Some(saturation_from_tension_result::Result::Response(b)),
                Some(entry),
            ) => {
                assert_eq!(lean.shared_provenance_index, entry, "item {index}");
                assert!(b.provenance.is_none(), "item {index}");
                assert_eq!(a.saturation_fraction, b.saturation_fraction);
                assert_eq!(a.p50_at_conditions, b.p50_at_conditions);
                assert_eq!(a.hill_slope, b.hill_slope);
                assert_eq!(a.warnings, b.warnings);
                let own = a.provenance.as_ref().unwrap();
                let named = &shared.shared_provenance[entry as usize];
                assert_eq!(own.model_id, named.model_id);
                assert_eq!(own.within_validated_range, named.within_validated_range);
                assert_eq!(own.reference, named.reference);
            }
            (
                Some(saturation_from_tension_result::Result::Error(a)),
                Some(saturation_from_tension_result::Result::Error(b)),
                None,
            ) => {
                // ErrorInfo metadata is a map, encoded in no set order.
                assert_eq!((a.code, &a.message), (b.code, &b.message));
                assert_eq!(decode_details(&a.details), decode_details(&b.details));
                assert_eq!(lean.shared_provenance_index, 0);
            }
            other => panic!("item {index}: {other:?}"),
        }
    }
    server.stop().await;
}

/// The inverse batch shares its provenance the same way, and an unknown
/// placement refuses the batch, naming the field.
#[tokio::test]
async fn the_inverse_batch_shares_provenance_and_an_unknown_placement_is_refused() {
    use oxbind_client::v1::ProvenancePlacement;
    let server = TestServer::start().await;
    let mut client = DissociationServiceClient::new(server.channel().await);
    let requests: Vec<_> = [0.5, 0.75]
        .iter()
        .map(|&s| TensionFromSaturationRequest {
            saturation_fraction: s,
            ..Default::default()
        })
        .collect();
    let shared = client
        .batch_tension_from_saturation(BatchTensionFromSaturationRequest {
            requests: requests.clone(),
            provenance_placement: ProvenancePlacement::Shared as i32,
        })
        .await
        .unwrap()
        .into_inner();
    assert_eq!(shared.shared_provenance.len(), 1);
    assert_eq!(shared.shared_provenance[0].model_id, "severinghaus-1979");
    match &shared.results[0].result {
        // The root of Severinghaus 1979 Eq. 1 at S = 0.5, 26.8568 mm[Hg]
        // (derived, methods.md section 1; J Appl Physiol 1979;46:599-602).
        Some(tension_from_saturation_result::Result::Response(r)) => {
            assert!(r.provenance.is_none());
            let po2 = r.po2.as_ref().unwrap().value;
            assert!((po2 - 26.8568).abs() < 1e-3, "{po2}");
        }
        other => panic!("{other:?}"),
    }
    let refused = client
        .batch_tension_from_saturation(BatchTensionFromSaturationRequest {
            requests,
            provenance_placement: 7,
        })
        .await
        .unwrap_err();
    let (violations, info) = refusal_of(&refused);
    assert_eq!(violations[0].field, "provenance_placement");
    assert_eq!(info.unwrap().0, "UNKNOWN_ENUM_VALUE");
    server.stop().await;
}
