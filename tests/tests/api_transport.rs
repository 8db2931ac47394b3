//! OxygenTransportService end to end. Expected values name their source.

use oxbind_client::v1::{
    oxygen_transport_service_client::OxygenTransportServiceClient, AlveolarEquation,
    BloodConditions, BloodSample, GasExchangeRequest, OxygenContentRequest, SaturationKind,
    UnitSystem, WarningCode,
};
use oxbind_tests::{q, TestServer};

fn close(actual: f64, expected: f64, tolerance: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= tolerance,
        "{what}: got {actual}, expected {expected} +/- {tolerance}"
    );
}

fn sample(saturation: f64, po2_mmhg: f64) -> Option<BloodSample> {
    Some(BloodSample {
        saturation_fraction: Some(saturation),
        po2: q(po2_mmhg, "mm[Hg]"),
        ..Default::default()
    })
}

#[tokio::test]
async fn oxygen_content_delivery_and_fick_consumption() {
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    // Hb 15, SaO2 0.98, PaO2 100, functional saturation so k 1.34:
    // CaO2 20.008 mL/dL; SvO2 0.75, PvO2 40: CvO2 15.199; CO 5 L/min: DO2
    // 1000.40, VO2 240.45 mL/min, O2ER 0.2404 (derived, methods.md section 10).
    // A textbook arterial content near 20 mL/dL (common practice).
    let response = client
        .oxygen_content(OxygenContentRequest {
            hemoglobin: q(15.0, "g/dL"),
            arterial: sample(0.98, 100.0),
            venous: sample(0.75, 40.0),
            cardiac_output: q(5.0, "L/min"),
            ..Default::default()
        })
        .await
        .expect("computes")
        .into_inner();
    let arterial = response.arterial_content.unwrap();
    assert_eq!(arterial.unit, "mL/dL");
    close(arterial.value, 20.008, 1e-3, "CaO2");
    close(response.venous_content.unwrap().value, 15.199, 1e-3, "CvO2");
    close(response.delivery.unwrap().value, 1000.40, 0.01, "DO2");
    close(response.consumption.unwrap().value, 240.45, 0.01, "VO2");
    close(response.extraction_fraction.unwrap(), 0.2404, 1e-4, "O2ER");
    assert!(response.warnings.is_empty());

    // The same in g/L and mL/min, answered in SI: 20.008 mL/dL = 8.9266 mmol/L
    // at 22.414 mL/mmol (derived, methods.md section 13).
    let si = client
        .oxygen_content(OxygenContentRequest {
            hemoglobin: q(150.0, "g/L"),
            arterial: sample(0.98, 100.0),
            cardiac_output: q(5000.0, "mL/min"),
            unit_system: UnitSystem::Si as i32,
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let arterial = si.arterial_content.unwrap();
    assert_eq!(arterial.unit, "mmol/L");
    close(arterial.value, 20.008 * 10.0 / 22.414, 1e-4, "CaO2 SI");
    assert_eq!(si.delivery.unwrap().unit, "mmol/min");
    server.stop().await;
}

#[tokio::test]
async fn hemoglobin_units_are_equivalent() {
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    // 1 g/dL = 0.62056 mmol/L on the monomer basis (methods.md section 13,
    // from the 64 458 g/mol tetramer mass).
    let mut values = Vec::new();
    for hemoglobin in [
        q(12.5, "g/dL"),
        q(125.0, "g/L"),
        q(12.5 * 10_000.0 / 16_114.5, "mmol/L"),
    ] {
        let response = client
            .oxygen_content(OxygenContentRequest {
                hemoglobin,
                arterial: sample(0.93, 70.0),
                ..Default::default()
            })
            .await
            .unwrap()
            .into_inner();
        values.push(response.arterial_content.unwrap().value);
    }
    for v in &values {
        assert!((v - values[0]).abs() / values[0] < 1e-12, "{values:?}");
    }
    server.stop().await;
}

#[tokio::test]
async fn a_calculated_saturation_is_flagged() {
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    let response = client
        .oxygen_content(OxygenContentRequest {
            hemoglobin: q(15.0, "g/dL"),
            arterial: Some(BloodSample {
                po2: q(100.0, "mm[Hg]"),
                conditions: Some(BloodConditions::default()),
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    // S(100) = 0.977465 by Eq. 1 (derived, methods.md section 1):
    // 1.34 * 15 * 0.977465 + 0.0031 * 100 = 19.9561 mL/dL.
    close(
        response.arterial_content.unwrap().value,
        19.9561,
        1e-3,
        "CaO2 from PO2",
    );
    assert!(response
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::SaturationCalculated as i32
            && w.field == "arterial.saturation_fraction"));
    server.stop().await;
}

#[tokio::test]
async fn fractional_saturation_uses_the_theoretical_hufner_factor() {
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    // FO2Hb 0.8633 (SO2 0.97 with COHb 0.10, MetHb 0.01; derived, methods.md
    // section 10), Hb 15, PO2 100: 1.39 * 15 * 0.8633 + 0.31 = 18.310 mL/dL.
    let response = client
        .oxygen_content(OxygenContentRequest {
            hemoglobin: q(15.0, "g/dL"),
            arterial: Some(BloodSample {
                saturation_fraction: Some(0.8633),
                saturation_kind: SaturationKind::Fractional as i32,
                po2: q(100.0, "mm[Hg]"),
                cohb: q(10.0, "%"),
                methb: q(1.0, "%"),
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    close(
        response.arterial_content.unwrap().value,
        18.3098,
        1e-3,
        "CaO2 fractional",
    );
    server.stop().await;
}

#[tokio::test]
async fn gas_exchange_indices_at_sea_level() {
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    let response = client
        .gas_exchange(GasExchangeRequest {
            fio2: q(21.0, "%"),
            paco2: q(40.0, "mm[Hg]"),
            pao2: q(90.0, "mm[Hg]"),
            spo2_fraction: Some(0.92),
            mean_airway_pressure: q(15.0, "cm[H2O]"),
            alveolar_equation: AlveolarEquation::Simplified as i32,
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    // Simplified alveolar gas equation, FiO2 0.21, PB 760, PaCO2 40, R 0.8:
    // 99.73 mmHg with PH2O 47 (derived, methods.md section 10); the engine's
    // Buck vapour pressure at 37 C is 47.10 mmHg, 0.021 mmHg lower PAO2.
    // PAO2 near 100 mmHg on room air at sea level (common practice).
    close(
        response.alveolar_po2.as_ref().unwrap().value,
        99.73,
        0.05,
        "PAO2",
    );
    close(
        response.alveolar_arterial_gradient.unwrap().value,
        9.73,
        0.05,
        "A-a",
    );
    close(response.pao2_fio2_ratio.unwrap(), 428.57, 0.01, "P/F");
    // SpO2 92 %: imputed PaO2 63.787 mmHg (derived, methods.md section 11);
    // S/F 92/0.21.
    close(
        response.imputed_pao2.unwrap().value,
        63.787,
        1e-3,
        "imputed PaO2",
    );
    close(response.spo2_fio2_ratio.unwrap(), 92.0 / 0.21, 1e-9, "S/F");
    // OI = 0.21 * 15 * 100 / 90 = 3.5; OSI = 0.21 * 15 * 100 / 92 (formulas of
    // methods.md section 10).
    close(response.oxygenation_index.unwrap(), 3.5, 1e-9, "OI");
    close(
        response.oxygen_saturation_index.unwrap(),
        0.21 * 15.0 * 100.0 / 92.0,
        1e-9,
        "OSI",
    );
    assert!(response.warnings.is_empty(), "{:?}", response.warnings);
    server.stop().await;
}

#[tokio::test]
async fn full_alveolar_equation_shunt_and_the_imputation_limit() {
    let server = TestServer::start().await;
    let mut client = OxygenTransportServiceClient::new(server.channel().await);
    let response = client
        .gas_exchange(GasExchangeRequest {
            fio2: q(0.21, "1"),
            paco2: q(40.0, "mm[Hg]"),
            pao2: q(100.0, "mm[Hg]"),
            hemoglobin: q(15.0, "g/dL"),
            arterial: sample(0.98, 100.0),
            venous: sample(0.75, 40.0),
            spo2_fraction: Some(0.97),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    // Full form: 101.83 mmHg with PH2O 47 (derived, methods.md section 10).
    close(
        response.alveolar_po2.unwrap().value,
        101.83,
        0.05,
        "PAO2 full",
    );
    let shunt = response.shunt_fraction.expect("shunt computed");
    // Room-air shunt with CaO2 20.008, CvO2 15.199 is about 0.08 (derived,
    // methods.md section 10 gives 0.0770 at PAO2 99.73).
    assert!(shunt > 0.0 && shunt < 0.15, "{shunt}");
    // SpO2 97 % lies above Brown et al.'s 96 % validity limit (Chest 2016).
    assert!(response
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::ImputationNotValid as i32 && w.field == "spo2_fraction"));
    server.stop().await;
}
