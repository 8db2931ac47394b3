//! Uncertainty on request (issue 13), end to end: a real server on port 0,
//! called through the client crate. Every listed RPC answers with an
//! interval, a method, a budget and honest warnings; bad figures are refused
//! naming their field; the first-order u(S) is the analytic derivative times
//! u(PO2); the same seed gives identical answers; the imputation at SpO2 0.94
//! is as asymmetric as first principles say.

use oxbind_client::v1::{
    dissociation_service_client::DissociationServiceClient, input_uncertainty::Figure,
    model_catalog_service_client::ModelCatalogServiceClient,
    oxygen_transport_service_client::OxygenTransportServiceClient,
    saturation_from_tension_result::Result as ItemResult, BatchSaturationFromTensionRequest,
    BloodConditions, BloodSample, BoundShape, CoverageIntervalKind, FigureOrigin,
    GasExchangeRequest, InputNotConsidered, InputUncertainty, ListModelsRequest, Model,
    ModelComponentStatus, NotConsideredReason, OxygenContentRequest, ProfileVerification,
    SaturationFromTensionRequest, SensitivityMethod, ShiftFactorsRequest,
    TensionFromSaturationRequest, UncertaintyAmount, UncertaintyBound, UncertaintyMethod,
    UncertaintyRequest, UncertaintyResult, UnitSystem, Warning, WarningCode, WarningSeverity,
};
use oxbind_service::physiology::uncertainty::normal::{
    standard_normal_cdf, standard_normal_quantile,
};
use oxbind_tests::{q, refusal_of, Refusal, TestServer};
use tonic::transport::Channel;

async fn dissociation(server: &TestServer) -> DissociationServiceClient<Channel> {
    DissociationServiceClient::new(server.channel().await)
}

async fn transport(server: &TestServer) -> OxygenTransportServiceClient<Channel> {
    OxygenTransportServiceClient::new(server.channel().await)
}

/// A standard uncertainty `value unit` for the request input at `field`.
fn standard(field: &str, value: f64, unit: &str) -> InputUncertainty {
    InputUncertainty {
        field: field.to_owned(),
        figure: Some(Figure::StandardUncertainty(UncertaintyAmount {
            absolute: q(value, unit),
            relative: None,
        })),
    }
}

/// First order with these figures.
fn first_order(inputs: Vec<InputUncertainty>) -> Option<UncertaintyRequest> {
    Some(UncertaintyRequest {
        inputs,
        ..Default::default()
    })
}

/// Monte Carlo with these figures, `draws` and `seed`.
fn monte_carlo(inputs: Vec<InputUncertainty>, draws: i32, seed: i64) -> Option<UncertaintyRequest> {
    Some(UncertaintyRequest {
        inputs,
        method: UncertaintyMethod::MonteCarlo as i32,
        draw_count: draws,
        seed,
        ..Default::default()
    })
}

fn has(warnings: &[Warning], code: WarningCode, field: &str) -> bool {
    warnings
        .iter()
        .any(|w| w.code == code as i32 && w.field == field)
}

fn not_considered(list: &[InputNotConsidered], field: &str) -> Option<NotConsideredReason> {
    list.iter()
        .find(|n| n.field == field)
        .map(|n| NotConsideredReason::try_from(n.reason).unwrap())
}

/// What every result must carry: an estimate equal to the reported value,
/// an interval around it with its probability, a method and version, a
/// budget whose shares sum to 1, and a model component status.
fn check_result(r: &UncertaintyResult, value: &str, reported: f64, unit: &str) {
    assert_eq!(r.value, value);
    let estimate = r.estimate.as_ref().unwrap();
    assert_eq!(estimate.unit, unit, "{value}");
    assert!(
        (estimate.value - reported).abs() <= 1e-12 * reported.abs().max(1.0),
        "{value}: estimate {} vs reported {reported}",
        estimate.value
    );
    let interval = r.interval.as_ref().unwrap();
    let (low, high) = (
        interval.low.as_ref().unwrap().value,
        interval.high.as_ref().unwrap().value,
    );
    assert!(
        low < reported && reported < high,
        "{value}: [{low}, {high}]"
    );
    assert_eq!(interval.probability, 0.95);
    assert!(r.standard_uncertainty.as_ref().unwrap().value > 0.0);
    assert_ne!(r.method, UncertaintyMethod::Unspecified as i32);
    assert_eq!(r.method_version, "1");
    assert!(r.method_reference.contains("JCGM 100:2008"));
    assert!(!r.budget.is_empty(), "{value}: a budget");
    let shares: f64 = r.budget.iter().map(|b| b.variance_share).sum();
    assert!((shares - 1.0).abs() < 1e-12, "{value}: shares {shares}");
    assert_ne!(
        r.model_component.as_ref().unwrap().status,
        ModelComponentStatus::Unspecified as i32
    );
    for w in &r.warnings {
        assert_ne!(w.severity, WarningSeverity::Unspecified as i32);
    }
}

#[tokio::test]
async fn every_listed_rpc_answers_with_an_interval_a_method_a_budget_and_warnings() {
    let server = TestServer::start().await;
    let mut d = dissociation(&server).await;
    let mut t = transport(&server).await;
    let conditions = Some(BloodConditions {
        ph: Some(7.31),
        temperature: q(38.5, "Cel"),
        ..Default::default()
    });

    let s = d
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(62.0, "mm[Hg]"),
            conditions: conditions.clone(),
            uncertainty: first_order(vec![
                standard("po2", 3.0, "mm[Hg]"),
                standard("conditions.ph", 0.02, "[pH]"),
            ]),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    assert_eq!(s.uncertainties.len(), 1);
    let r = &s.uncertainties[0];
    check_result(r, "saturation_fraction", s.saturation_fraction, "1");
    assert_eq!(r.method, UncertaintyMethod::FirstOrder as i32);
    let fields: Vec<&str> = r.budget.iter().map(|b| b.field.as_str()).collect();
    assert_eq!(fields, ["po2", "conditions.ph"]);
    // pH acts inside the model: its coefficient is numerical, PO2's exact.
    assert_eq!(
        r.budget[0].sensitivity_method,
        SensitivityMethod::Exact as i32
    );
    assert_eq!(
        r.budget[1].sensitivity_method,
        SensitivityMethod::Numerical as i32
    );
    assert!(
        r.budget[1].sensitivity > 0.0,
        "a higher pH raises S (the Bohr effect, common practice)"
    );
    // The temperature was given without a figure: it adds nothing, and says so.
    assert_eq!(
        not_considered(&r.not_considered, "conditions.temperature"),
        Some(NotConsideredReason::NoFigure)
    );
    // Only the first order: not validated (informational), and the
    // response says which of its values have no evaluation.
    let not_validated = r
        .warnings
        .iter()
        .find(|w| w.code == WarningCode::UncertaintyFirstOrderNotValidated as i32)
        .expect("first order not validated");
    assert_eq!(
        not_validated.severity,
        WarningSeverity::Informational as i32
    );
    assert!(has(&s.warnings, WarningCode::UncertaintyNotEvaluated, ""));
    assert_eq!(
        r.model_component.as_ref().unwrap().status,
        ModelComponentStatus::Computed as i32
    );

    let t1 = d
        .tension_from_saturation(TensionFromSaturationRequest {
            saturation_fraction: 0.88,
            uncertainty: first_order(vec![standard("saturation_fraction", 1.0, "%")]),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    assert_eq!(t1.uncertainties.len(), 2);
    check_result(&t1.uncertainties[0], "po2", t1.po2.unwrap().value, "mm[Hg]");
    let change = t1.po2_change_per_percent.unwrap();
    check_result(
        &t1.uncertainties[1],
        "po2_change_per_percent",
        change.value,
        "mm[Hg]/%",
    );
    // u(PO2) ≈ |dP/dS| u(S) with dP/dS = 100 × po2_change_per_percent.
    let u = t1.uncertainties[0]
        .standard_uncertainty
        .as_ref()
        .unwrap()
        .value;
    assert!((u - 100.0 * change.value * 0.01).abs() < 1e-9 * u);

    let shift = d
        .shift_factors(ShiftFactorsRequest {
            conditions: Some(BloodConditions {
                ph: Some(7.25),
                pco2: q(55.0, "mm[Hg]"),
                ..Default::default()
            }),
            model: Model::Kelman1966 as i32,
            uncertainty: first_order(vec![
                standard("conditions.ph", 0.02, "[pH]"),
                standard("conditions.pco2", 2.0, "mm[Hg]"),
            ]),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    check_result(
        &shift.uncertainties[0],
        "p50_at_conditions",
        shift.p50_at_conditions.unwrap().value,
        "mm[Hg]",
    );
    assert_eq!(shift.uncertainties[0].budget.len(), 2);

    let content = t
        .oxygen_content(OxygenContentRequest {
            hemoglobin: q(15.0, "g/dL"),
            arterial: Some(BloodSample {
                saturation_fraction: Some(0.97),
                po2: q(100.0, "mm[Hg]"),
                ..Default::default()
            }),
            venous: Some(BloodSample {
                saturation_fraction: Some(0.72),
                po2: q(40.0, "mm[Hg]"),
                ..Default::default()
            }),
            uncertainty: first_order(vec![
                InputUncertainty {
                    field: "hemoglobin".to_owned(),
                    figure: Some(Figure::StandardUncertainty(UncertaintyAmount {
                        absolute: None,
                        relative: q(2.0, "%"),
                    })),
                },
                standard("arterial.saturation_fraction", 0.01, "1"),
                standard("venous.saturation_fraction", 0.02, "1"),
            ]),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let values: Vec<&str> = content
        .uncertainties
        .iter()
        .map(|u| u.value.as_str())
        .collect();
    assert_eq!(
        values,
        [
            "arterial_content",
            "venous_content",
            "arteriovenous_difference",
            "extraction_fraction"
        ]
    );
    check_result(
        &content.uncertainties[0],
        "arterial_content",
        content.arterial_content.as_ref().unwrap().value,
        "mL/dL",
    );
    check_result(
        &content.uncertainties[3],
        "extraction_fraction",
        content.extraction_fraction.unwrap(),
        "1",
    );
    // Hb 15 g/dL ± 2 %, SaO2 0.97 ± 0.01: u(CaO2)² = (1.34 × 0.97 × 0.3)² +
    // (1.34 × 15 × 0.01)² (assurance.md A.3, derived): 0.4387 mL/dL.
    let u_arterial = content.uncertainties[0]
        .standard_uncertainty
        .as_ref()
        .unwrap()
        .value;
    let expected = ((1.34 * 0.97 * 0.3_f64).powi(2) + (1.34 * 15.0 * 0.01_f64).powi(2)).sqrt();
    assert!((u_arterial - expected).abs() < 1e-9, "{u_arterial}");
    // A measured saturation: no curve, no model component.
    assert_eq!(
        content.uncertainties[0]
            .model_component
            .as_ref()
            .unwrap()
            .status,
        ModelComponentStatus::NotApplicable as i32
    );
    // The venous figure is not an input of the arterial content.
    assert_eq!(
        not_considered(
            &content.uncertainties[0].not_considered,
            "venous.saturation_fraction"
        ),
        Some(NotConsideredReason::NotAnInput)
    );

    let gas = t
        .gas_exchange(GasExchangeRequest {
            fio2: q(0.4, "1"),
            paco2: q(44.0, "mm[Hg]"),
            pao2: q(88.0, "mm[Hg]"),
            spo2_fraction: Some(0.92),
            uncertainty: first_order(vec![
                standard("fio2", 2.0, "%"),
                standard("paco2", 1.0, "mm[Hg]"),
                standard("pao2", 3.0, "mm[Hg]"),
                standard("spo2_fraction", 2.0, "%"),
            ]),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let values: Vec<&str> = gas.uncertainties.iter().map(|u| u.value.as_str()).collect();
    assert_eq!(
        values,
        [
            "alveolar_po2",
            "alveolar_arterial_gradient",
            "pao2_fio2_ratio",
            "imputed_pao2",
            "imputed_pao2_fio2_ratio"
        ]
    );
    check_result(
        &gas.uncertainties[0],
        "alveolar_po2",
        gas.alveolar_po2.as_ref().unwrap().value,
        "mm[Hg]",
    );
    check_result(
        &gas.uncertainties[1],
        "alveolar_arterial_gradient",
        gas.alveolar_arterial_gradient.as_ref().unwrap().value,
        "mm[Hg]",
    );
    check_result(
        &gas.uncertainties[2],
        "pao2_fio2_ratio",
        gas.pao2_fio2_ratio.unwrap(),
        "mm[Hg]",
    );
    check_result(
        &gas.uncertainties[3],
        "imputed_pao2",
        gas.imputed_pao2.as_ref().unwrap().value,
        "mm[Hg]",
    );
    check_result(
        &gas.uncertainties[4],
        "imputed_pao2_fio2_ratio",
        gas.imputed_pao2_fio2_ratio.unwrap(),
        "mm[Hg]",
    );
    // P/F = PaO2/FiO2: u² = (u_P/F)² + (P u_F/F²)² (derived).
    let u_ratio = gas.uncertainties[2]
        .standard_uncertainty
        .as_ref()
        .unwrap()
        .value;
    let expected = ((3.0_f64 / 0.4).powi(2) + (88.0 * 0.02 / 0.16_f64).powi(2)).sqrt();
    assert!((u_ratio - expected).abs() < 1e-9 * expected, "{u_ratio}");
    // The imputation on the curve's shoulder is nonlinear over ± 2u.
    assert!(has(
        &gas.uncertainties[3].warnings,
        WarningCode::UncertaintyNonlinear,
        "spo2_fraction"
    ));
    server.stop().await;
}

#[tokio::test]
async fn monte_carlo_reports_draws_seed_validation_and_stability() {
    let server = TestServer::start().await;
    let mut d = dissociation(&server).await;
    let s = d
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(60.0, "mm[Hg]"),
            uncertainty: monte_carlo(
                vec![InputUncertainty {
                    field: "po2".to_owned(),
                    figure: Some(Figure::StandardUncertainty(UncertaintyAmount {
                        absolute: None,
                        relative: q(0.05, "1"),
                    })),
                }],
                100_000,
                7,
            ),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let r = &s.uncertainties[0];
    check_result(r, "saturation_fraction", s.saturation_fraction, "1");
    assert_eq!(r.method, UncertaintyMethod::MonteCarlo as i32);
    let mc = r.monte_carlo.as_ref().unwrap();
    assert_eq!(mc.draw_count, 100_000);
    assert_eq!(mc.seed, 7);
    assert!(mc.generator.contains("ChaCha8"));
    assert_eq!(
        mc.interval.as_ref().unwrap().kind,
        CoverageIntervalKind::ProbabilisticallySymmetric as i32
    );
    assert_eq!(mc.stability.as_ref().unwrap().block_count, 10);
    // assurance.md A.3 (derived there, M = 10⁶): at PO2 60 mmHg with 5 %
    // u(PO2) the Monte Carlo 95 % interval is 0.8768-0.9268 and the
    // first-order one fails JCGM 101 clause 8 at two significant digits.
    let interval = r.interval.as_ref().unwrap();
    assert!((interval.low.as_ref().unwrap().value - 0.8768).abs() < 0.001);
    assert!((interval.high.as_ref().unwrap().value - 0.9268).abs() < 0.001);
    let validation = r.validation.as_ref().unwrap();
    assert!(!validation.passed);
    let failed = r
        .warnings
        .iter()
        .find(|w| w.code == WarningCode::UncertaintyFirstOrderNotValidated as i32)
        .expect("validation failure reported");
    assert_eq!(failed.severity, WarningSeverity::Caution as i32);
    // The first-order interval stays beside it.
    let fo = r.first_order.as_ref().unwrap();
    assert_eq!(
        fo.interval.as_ref().unwrap().kind,
        CoverageIntervalKind::FirstOrderNormal as i32
    );
    assert!((fo.interval.as_ref().unwrap().low.as_ref().unwrap().value - 0.8814).abs() < 1e-4);
    server.stop().await;
}

/// dS/dP of Severinghaus 1979 Eq. 1, S = q/(q + 23400) with q = P³ + 150P
/// (Severinghaus JW, J Appl Physiol 1979;46:599-602), by the quotient rule:
/// dS/dP = 23400 (3P² + 150) / (P³ + 150P + 23400)².
fn severinghaus_slope(p: f64) -> f64 {
    let q = p * p * p + 150.0 * p;
    23_400.0 * (3.0 * p * p + 150.0) / ((q + 23_400.0) * (q + 23_400.0))
}

#[tokio::test]
async fn first_order_u_of_saturation_is_the_analytic_derivative_times_u_po2() {
    let server = TestServer::start().await;
    let mut d = dissociation(&server).await;
    // kPa per mm[Hg]: the conventional mm[Hg], 13.5951 g/cm³ × 9.80665 m/s²
    // × 1 mm = 133.322387415 Pa (methods.md section 13; not the torr).
    let kpa = 0.133_322_387_415;
    for (po2, u) in [(20.0, 1.0), (45.0, 2.0), (60.0, 3.0), (95.0, 4.0)] {
        for (system, unit, given) in [
            (UnitSystem::Conventional, "mm[Hg]", u),
            (UnitSystem::Si, "kPa", u * kpa),
        ] {
            let r = d
                .saturation_from_tension(SaturationFromTensionRequest {
                    po2: q(po2, "mm[Hg]"),
                    unit_system: system as i32,
                    uncertainty: first_order(vec![standard("po2", given, unit)]),
                    ..Default::default()
                })
                .await
                .unwrap()
                .into_inner();
            let result = &r.uncertainties[0];
            let u_s = result.standard_uncertainty.as_ref().unwrap().value;
            let expected = severinghaus_slope(po2) * u;
            let relative = (u_s - expected).abs() / expected;
            assert!(relative <= 1e-9, "PO2 {po2} {unit}: {u_s} vs {expected}");
            // The budget's coefficient is per unit of the input as reported.
            let line = &result.budget[0];
            assert_eq!(line.standard_uncertainty.as_ref().unwrap().unit, unit);
            let slope = severinghaus_slope(po2) / if unit == "kPa" { kpa } else { 1.0 };
            assert!((line.sensitivity - slope).abs() <= 1e-9 * slope);
            assert_eq!(line.variance_share, 1.0);
            assert_eq!(line.divisor, 1.0);
            assert_eq!(line.origin, FigureOrigin::Stated as i32);
        }
    }
    server.stop().await;
}

#[tokio::test]
async fn the_same_seed_gives_identical_answers() {
    let server = TestServer::start().await;
    let mut t = transport(&server).await;
    let request = |seed| GasExchangeRequest {
        fio2: q(0.3, "1"),
        paco2: q(41.0, "mm[Hg]"),
        pao2: q(70.0, "mm[Hg]"),
        uncertainty: Some(UncertaintyRequest {
            inputs: vec![
                standard("paco2", 1.5, "mm[Hg]"),
                standard("pao2", 3.0, "mm[Hg]"),
            ],
            method: UncertaintyMethod::MonteCarlo as i32,
            draw_count: 20_000,
            seed,
            interval_kind: CoverageIntervalKind::Shortest as i32,
            ..Default::default()
        }),
        ..Default::default()
    };
    let first = t.gas_exchange(request(-42)).await.unwrap().into_inner();
    let again = t.gas_exchange(request(-42)).await.unwrap().into_inner();
    let other = t.gas_exchange(request(43)).await.unwrap().into_inner();
    assert_eq!(first.uncertainties, again.uncertainties);
    assert_ne!(first.uncertainties, other.uncertainties);
    assert_eq!(
        first.uncertainties[0].monte_carlo.as_ref().unwrap().seed,
        -42
    );
    assert_eq!(
        first.uncertainties[0].interval.as_ref().unwrap().kind,
        CoverageIntervalKind::Shortest as i32
    );
    server.stop().await;
}

/// The Ellis 1989 closed-form inverse of Severinghaus Eq. 1 (methods.md
/// section 11): with a = 11700 S/(1 − S) and b = √(50³ + a²),
/// P = ∛(b + a) − ∛(b − a).
fn severinghaus_inverse(s: f64) -> f64 {
    let a = 11_700.0 * s / (1.0 - s);
    let b = (125_000.0 + a * a).sqrt();
    (b + a).cbrt() - (b - a).cbrt()
}

#[tokio::test]
async fn imputation_at_spo2_094_with_u_3_points_is_asymmetric_as_first_principles_say() {
    let server = TestServer::start().await;
    let mut t = transport(&server).await;
    let (spo2, u) = (0.94, 0.03);
    let r = t
        .gas_exchange(GasExchangeRequest {
            fio2: q(21.0, "%"),
            spo2_fraction: Some(spo2),
            uncertainty: monte_carlo(vec![standard("spo2_fraction", 3.0, "%")], 200_000, 94),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let imputed = &r.uncertainties[0];
    assert_eq!(imputed.value, "imputed_pao2");
    let estimate = imputed.estimate.as_ref().unwrap().value;
    let interval = imputed.interval.as_ref().unwrap();
    let (low, high) = (
        interval.low.as_ref().unwrap().value,
        interval.high.as_ref().unwrap().value,
    );
    // First principles: SpO2 ~ N(0.94, 0.03), redrawn at or above 1 (no
    // PaO2 there), so the truncated normal's quantiles are
    // q(p) = μ + σ Φ⁻¹(p Φ((1 − μ)/σ)); PaO2 rises with SpO2, so the
    // probabilistically symmetric interval is the image of q(0.025), q(0.975).
    let kept = standard_normal_cdf((1.0 - spo2) / u);
    let quantile = |p: f64| spo2 + u * standard_normal_quantile(p * kept);
    let (expected_low, expected_high) = (
        severinghaus_inverse(quantile(0.025)),
        severinghaus_inverse(quantile(0.975)),
    );
    assert!(
        (low - expected_low).abs() < 0.005 * expected_low,
        "low {low} vs {expected_low}"
    );
    assert!(
        (high - expected_high).abs() < 0.02 * expected_high,
        "high {high} vs {expected_high}"
    );
    // Strongly asymmetric: the interval reaches far further above the value
    // than below it.
    assert!(
        high - estimate > 2.0 * (estimate - low),
        "{low} {estimate} {high}"
    );
    assert!(has(
        &imputed.warnings,
        WarningCode::UncertaintyAsymmetricInterval,
        ""
    ));
    assert!(has(
        &imputed.warnings,
        WarningCode::UncertaintyDrawsBeyondValidatedRange,
        "spo2_fraction"
    ));
    assert!(has(
        &imputed.warnings,
        WarningCode::UncertaintyDrawsRedrawn,
        ""
    ));
    server.stop().await;
}

fn violations(status: &tonic::Status) -> Vec<Refusal> {
    refusal_of(status).0
}

fn refused(status: &tonic::Status, field: &str, reason: &str) {
    let v = violations(status);
    assert!(
        v.iter().any(|r| r.field == field && r.reason == reason),
        "expected {reason} on {field}, got {v:?}"
    );
}

#[tokio::test]
async fn bad_figures_are_refused_naming_the_field() {
    let server = TestServer::start().await;
    let mut d = dissociation(&server).await;
    let call = |uncertainty: UncertaintyRequest| SaturationFromTensionRequest {
        po2: q(60.0, "mm[Hg]"),
        uncertainty: Some(uncertainty),
        ..Default::default()
    };
    let with_inputs = |inputs| UncertaintyRequest {
        inputs,
        ..Default::default()
    };
    let cases: Vec<(UncertaintyRequest, &str, &str)> = vec![
        (
            with_inputs(vec![standard("po2", -1.0, "mm[Hg]")]),
            "uncertainty.inputs[0].standard_uncertainty.absolute",
            "UNCERTAINTY_OUT_OF_RANGE",
        ),
        (
            with_inputs(vec![standard("po2", f64::NAN, "mm[Hg]")]),
            "uncertainty.inputs[0].standard_uncertainty.absolute.value",
            "VALUE_NOT_FINITE",
        ),
        (
            with_inputs(vec![standard("po2", 3.0, "mmHg")]),
            "uncertainty.inputs[0].standard_uncertainty.absolute.unit",
            "UNIT_NOT_ACCEPTED",
        ),
        (
            with_inputs(vec![standard("po2", 3.0, "%")]),
            "uncertainty.inputs[0].standard_uncertainty.absolute.unit",
            "UNIT_NOT_ACCEPTED",
        ),
        (
            with_inputs(vec![standard("pao2", 3.0, "mm[Hg]")]),
            "uncertainty.inputs[0].field",
            "UNCERTAINTY_FIELD_UNKNOWN",
        ),
        (
            with_inputs(vec![
                standard("po2", 3.0, "mm[Hg]"),
                standard("po2", 2.0, "mm[Hg]"),
            ]),
            "uncertainty.inputs[1].field",
            "UNCERTAINTY_FIGURE_NOT_USABLE",
        ),
        (
            with_inputs(vec![InputUncertainty {
                field: "po2".to_owned(),
                figure: Some(Figure::StandardUncertainty(UncertaintyAmount {
                    absolute: None,
                    relative: q(150.0, "%"),
                })),
            }]),
            "uncertainty.inputs[0].standard_uncertainty.relative",
            "UNCERTAINTY_OUT_OF_RANGE",
        ),
        (
            with_inputs(vec![InputUncertainty {
                field: "po2".to_owned(),
                figure: None,
            }]),
            "uncertainty.inputs[0]",
            "FIELD_REQUIRED",
        ),
        (
            with_inputs(vec![InputUncertainty {
                field: "po2".to_owned(),
                figure: Some(Figure::Bound(UncertaintyBound {
                    half_width: Some(UncertaintyAmount {
                        absolute: q(15.0, "mm[Hg]"),
                        relative: None,
                    }),
                    ..Default::default()
                })),
            }]),
            "uncertainty.inputs[0].bound.coverage_probability",
            "FIELD_REQUIRED",
        ),
        (
            with_inputs(vec![InputUncertainty {
                field: "po2".to_owned(),
                figure: Some(Figure::Bound(UncertaintyBound {
                    half_width: Some(UncertaintyAmount {
                        absolute: q(15.0, "mm[Hg]"),
                        relative: None,
                    }),
                    shape: BoundShape::Rectangular as i32,
                    coverage_probability: 0.95,
                    ..Default::default()
                })),
            }]),
            "uncertainty.inputs[0].bound.coverage_probability",
            "PARAMETER_NOT_APPLICABLE",
        ),
        (
            with_inputs(vec![InputUncertainty {
                field: "po2".to_owned(),
                figure: Some(Figure::ProfileId("nonesuch".to_owned())),
            }]),
            "uncertainty.inputs[0].profile_id",
            "UNCERTAINTY_FIGURE_NOT_USABLE",
        ),
        (
            with_inputs(vec![InputUncertainty {
                field: "po2".to_owned(),
                figure: Some(Figure::ProfileId(
                    "pulse-oximeter-fda-2013-transmittance-spo2".to_owned(),
                )),
            }]),
            "uncertainty.inputs[0].profile_id",
            "UNCERTAINTY_FIGURE_NOT_USABLE",
        ),
        (
            UncertaintyRequest {
                profile_sets: vec!["nonesuch".to_owned()],
                ..Default::default()
            },
            "uncertainty.profile_sets[0]",
            "UNCERTAINTY_FIGURE_NOT_USABLE",
        ),
        (
            UncertaintyRequest {
                method: UncertaintyMethod::MonteCarlo as i32,
                draw_count: 500,
                ..Default::default()
            },
            "uncertainty.draw_count",
            "DRAW_COUNT_OUT_OF_RANGE",
        ),
        (
            UncertaintyRequest {
                method: UncertaintyMethod::MonteCarlo as i32,
                draw_count: 2_000_000,
                ..Default::default()
            },
            "uncertainty.draw_count",
            "DRAW_COUNT_OUT_OF_RANGE",
        ),
        (
            UncertaintyRequest {
                coverage_probability: 0.999,
                ..Default::default()
            },
            "uncertainty.coverage_probability",
            "COVERAGE_PROBABILITY_OUT_OF_RANGE",
        ),
        (
            UncertaintyRequest {
                significant_digits: 5,
                ..Default::default()
            },
            "uncertainty.significant_digits",
            "SIGNIFICANT_DIGITS_OUT_OF_RANGE",
        ),
        (
            UncertaintyRequest {
                seed: 3,
                ..Default::default()
            },
            "uncertainty.seed",
            "PARAMETER_NOT_APPLICABLE",
        ),
        (
            UncertaintyRequest {
                method: 9,
                ..Default::default()
            },
            "uncertainty.method",
            "UNKNOWN_ENUM_VALUE",
        ),
        (
            UncertaintyRequest {
                method: UncertaintyMethod::MonteCarlo as i32,
                interval_kind: CoverageIntervalKind::FirstOrderNormal as i32,
                ..Default::default()
            },
            "uncertainty.interval_kind",
            "PARAMETER_NOT_APPLICABLE",
        ),
    ];
    for (uncertainty, field, reason) in cases {
        let status = d
            .saturation_from_tension(call(uncertainty))
            .await
            .expect_err(field);
        refused(&status, field, reason);
        // Refusals name fields and limits, never the values received.
        assert!(!status.message().contains("-1 "), "{}", status.message());
    }
    // A bad figure and a bad input are refused together, in one answer.
    let status = d
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(-5.0, "mm[Hg]"),
            uncertainty: first_order(vec![standard("po2", -1.0, "mm[Hg]")]),
            ..Default::default()
        })
        .await
        .unwrap_err();
    refused(&status, "po2.value", "PRESSURE_OUT_OF_RANGE");
    refused(
        &status,
        "uncertainty.inputs[0].standard_uncertainty.absolute",
        "UNCERTAINTY_OUT_OF_RANGE",
    );
    // In OxygenContent a sample's COHb and its conditions' COHb are one
    // input: two figures for it are refused.
    let status = transport(&server)
        .await
        .oxygen_content(OxygenContentRequest {
            hemoglobin: q(14.0, "g/dL"),
            arterial: Some(BloodSample {
                po2: q(80.0, "mm[Hg]"),
                cohb: q(0.05, "1"),
                ..Default::default()
            }),
            uncertainty: first_order(vec![
                standard("arterial.cohb", 1.0, "%"),
                standard("arterial.conditions.cohb", 1.0, "%"),
            ]),
            ..Default::default()
        })
        .await
        .unwrap_err();
    refused(
        &status,
        "uncertainty.inputs[1].field",
        "UNCERTAINTY_FIGURE_NOT_USABLE",
    );
    server.stop().await;
}

#[tokio::test]
async fn batches_honour_the_first_order_per_item_and_refuse_monte_carlo_per_item() {
    let server = TestServer::start().await;
    let mut d = dissociation(&server).await;
    let item = |method: UncertaintyMethod| SaturationFromTensionRequest {
        po2: q(50.0, "mm[Hg]"),
        uncertainty: Some(UncertaintyRequest {
            inputs: vec![standard("po2", 2.0, "mm[Hg]")],
            method: method as i32,
            ..Default::default()
        }),
        ..Default::default()
    };
    let batch = d
        .batch_saturation_from_tension(BatchSaturationFromTensionRequest {
            requests: vec![
                item(UncertaintyMethod::FirstOrder),
                item(UncertaintyMethod::MonteCarlo),
            ],
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let Some(ItemResult::Response(first)) = &batch.results[0].result else {
        panic!("the first-order item computes");
    };
    let u = first.uncertainties[0]
        .standard_uncertainty
        .as_ref()
        .unwrap()
        .value;
    assert!((u - severinghaus_slope(50.0) * 2.0).abs() < 1e-9 * u);
    let Some(ItemResult::Error(status)) = &batch.results[1].result else {
        panic!("the Monte Carlo item is refused");
    };
    let (v, _) = oxbind_tests::decode_details(&status.details);
    assert!(v
        .iter()
        .any(|r| r.field == "requests[1].uncertainty.method"
            && r.reason == "PARAMETER_NOT_APPLICABLE"));
    server.stop().await;
}

#[tokio::test]
async fn profiles_name_their_source_and_inputs_without_figures_say_why() {
    let server = TestServer::start().await;
    let mut t = transport(&server).await;
    // The CLIA 2024 set covers PaO2 and PaCO2 (a PO2 and a PCO2 measured on
    // arterial blood), not FiO2 or the barometric pressure.
    let gas = t
        .gas_exchange(GasExchangeRequest {
            fio2: q(0.5, "1"),
            paco2: q(38.0, "mm[Hg]"),
            pao2: q(110.0, "mm[Hg]"),
            mean_airway_pressure: q(14.0, "cm[H2O]"),
            uncertainty: Some(UncertaintyRequest {
                profile_sets: vec!["clia-2024".to_owned()],
                inputs: vec![standard("mean_airway_pressure", 1.0, "cm[H2O]")],
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let gradient = gas
        .uncertainties
        .iter()
        .find(|u| u.value == "alveolar_arterial_gradient")
        .unwrap();
    let line = |field: &str| gradient.budget.iter().find(|b| b.field == field).unwrap();
    assert_eq!(line("pao2").profile_id, "clia-2024-po2");
    assert_eq!(line("pao2").origin, FigureOrigin::Profile as i32);
    assert_eq!(
        line("pao2").profile_verification,
        ProfileVerification::Unverified as i32
    );
    // ±15 mm[Hg] or ±15 % (greater) read as a 95 % normal bound: at
    // 110 mm[Hg], a = 16.5 and u = 16.5/1.96.
    assert!((line("pao2").divisor - 1.959_964).abs() < 1e-6);
    let u_pao2 = line("pao2").standard_uncertainty.as_ref().unwrap().value;
    assert!((u_pao2 - 16.5 / 1.959_963_984_540_054).abs() < 1e-9);
    assert_eq!(line("paco2").profile_id, "clia-2024-pco2");
    assert!(has(
        &gradient.warnings,
        WarningCode::UncertaintyDefaultFigures,
        ""
    ));
    assert!(has(
        &gradient.warnings,
        WarningCode::UncertaintyUnverifiedFigure,
        "pao2"
    ));
    assert_eq!(
        not_considered(&gradient.not_considered, "fio2"),
        Some(NotConsideredReason::NoFigure)
    );
    assert_eq!(
        not_considered(&gradient.not_considered, "mean_airway_pressure"),
        Some(NotConsideredReason::NotAnInput)
    );
    // The oxygenation index has no uncertainty evaluation, and says so.
    let note = gas
        .warnings
        .iter()
        .find(|w| w.code == WarningCode::UncertaintyNotEvaluated as i32)
        .unwrap();
    assert!(note.message.contains("oxygenation_index"));
    assert_eq!(note.severity, WarningSeverity::Informational as i32);

    // A pulse-oximeter profile: its bias by pigmentation is not included.
    let spo2 = t
        .gas_exchange(GasExchangeRequest {
            fio2: q(0.21, "1"),
            spo2_fraction: Some(0.9),
            uncertainty: Some(UncertaintyRequest {
                profile_sets: vec!["pulse-oximeter-fda-2013-transmittance".to_owned()],
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    assert!(has(
        &spo2.uncertainties[0].warnings,
        WarningCode::UncertaintyPulseOximetryBiasNotIncluded,
        "spo2_fraction"
    ));

    // Conditions: not given, not honoured, and not asked for.
    let mut d = dissociation(&server).await;
    let s = d
        .saturation_from_tension(SaturationFromTensionRequest {
            po2: q(58.0, "mm[Hg]"),
            conditions: Some(BloodConditions {
                pco2: q(52.0, "mm[Hg]"),
                ..Default::default()
            }),
            uncertainty: Some(UncertaintyRequest {
                inputs: vec![
                    standard("conditions.pco2", 2.0, "mm[Hg]"),
                    standard("conditions.dpg", 0.3, "mmol/L"),
                    standard("hill.n", 0.1, "1"),
                ],
                omit_model_component: true,
                ..Default::default()
            }),
            ..Default::default()
        })
        .await
        .unwrap()
        .into_inner();
    let r = &s.uncertainties[0];
    assert_eq!(
        not_considered(&r.not_considered, "conditions.pco2"),
        Some(NotConsideredReason::NotHonouredByModel)
    );
    assert_eq!(
        not_considered(&r.not_considered, "conditions.dpg"),
        Some(NotConsideredReason::ValueNotGiven)
    );
    assert_eq!(
        not_considered(&r.not_considered, "hill.n"),
        Some(NotConsideredReason::NotPropagated)
    );
    assert_eq!(
        not_considered(&r.not_considered, "po2"),
        Some(NotConsideredReason::NoFigure)
    );
    assert!(has(&r.warnings, WarningCode::UncertaintyNoInputFigures, ""));
    assert_eq!(
        r.model_component.as_ref().unwrap().status,
        ModelComponentStatus::Omitted as i32
    );
    server.stop().await;
}

#[tokio::test]
async fn the_catalog_lists_the_profiles_and_the_pigmentation_caution() {
    let server = TestServer::start().await;
    let mut c = ModelCatalogServiceClient::new(server.channel().await);
    let list = c
        .list_models(ListModelsRequest {})
        .await
        .unwrap()
        .into_inner();
    assert!(list.cautions.contains("skin"));
    assert!(list.cautions.contains("pigmentation"));
    let ids: Vec<&str> = list
        .uncertainty_profiles
        .iter()
        .map(|p| p.profile_id.as_str())
        .collect();
    for id in [
        "pulse-oximeter-iso-80601-2-61-spo2",
        "pulse-oximeter-fda-2013-transmittance-spo2",
        "clia-2024-po2",
        "clia-2024-hemoglobin",
        "analytical-goal-harding-fraser-1987-ph",
    ] {
        assert!(ids.contains(&id), "{id}");
    }
    for p in &list.uncertainty_profiles {
        assert!(!p.source.is_empty() && !p.verification_note.is_empty());
        assert_ne!(p.verification, ProfileVerification::Unspecified as i32);
        assert!(p.figure.is_some());
    }
    // The uncertainty limits are in the catalog's one table.
    let draws = list
        .input_limits
        .iter()
        .find(|l| l.input == "uncertainty_draws")
        .unwrap();
    assert_eq!(draws.max.as_ref().unwrap().value, 1_000_000.0);
    let absolute = list
        .input_limits
        .iter()
        .find(|l| l.input == "uncertainty_absolute")
        .unwrap();
    assert!(absolute.max.is_none(), "no upper limit");
    server.stop().await;
}
