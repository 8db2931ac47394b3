//! Criterion benchmarks of the uncertainty engine (issue 13).
//!
//! Targets (2-core machine): the first-order evaluation adds under 1 µs to a
//! saturation; 100,000 Monte Carlo draws for one saturation take under 20 ms on
//! one core. Figures are recorded in BENCHMARKS-uncertainty.md.

// criterion_group! generates an undocumented public function.
#![allow(missing_docs)]

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use oxbind_service::physiology::conditions::Conditions;
use oxbind_service::physiology::model::{DissociationModel, DEFAULT_MODEL};
use oxbind_service::physiology::uncertainty::{
    evaluate_uncertainty, first_order, Amount, FigureSource, ImputedPao2, InputFigure,
    InputQuantity, IntervalKind, MeasurementFunction, Method, MonteCarloOptions,
    SaturationFromTension, Statement, UncertaintyRequest,
};
use std::time::Duration;

const ACID_BASE: Conditions = Conditions {
    ph: Some(7.31),
    base_excess_mmol_per_l: Some(-3.0),
    ..Conditions::STANDARD
};

fn po2_five_percent() -> InputFigure {
    InputFigure {
        input: InputQuantity::Po2,
        source: FigureSource::Stated(Statement::StandardUncertainty(Amount::relative(0.05))),
    }
}

fn first_order_request(figures: Vec<InputFigure>) -> UncertaintyRequest {
    UncertaintyRequest {
        figures,
        model_component: false,
        ..UncertaintyRequest::default()
    }
}

fn monte_carlo_request(figures: Vec<InputFigure>, draws: usize) -> UncertaintyRequest {
    UncertaintyRequest {
        figures,
        method: Method::MonteCarlo(MonteCarloOptions {
            draws,
            seed: 20_240_711,
            interval: IntervalKind::ProbabilisticallySymmetric,
        }),
        model_component: false,
        ..UncertaintyRequest::default()
    }
}

fn first_order_saturation(c: &mut Criterion) {
    // What SaturationFromTension computes without uncertainty.
    c.bench_function("saturation/plain", |b| {
        b.iter(|| DEFAULT_MODEL.saturation_and_slope(black_box(60.0), black_box(&ACID_BASE)))
    });
    // The law of propagation alone on a built function (one exact coefficient).
    let f = SaturationFromTension::new(DEFAULT_MODEL, 60.0, ACID_BASE).unwrap();
    let mut u = vec![None; f.slots().len()];
    u[0] = Some(3.0);
    c.bench_function("saturation/first_order/propagate_only", |b| {
        b.iter(|| first_order::propagate(black_box(&f), black_box(&u), 0.95))
    });
    // The whole evaluation: build the function, resolve the figure, propagate,
    // warnings, no model component.
    let request = first_order_request(vec![po2_five_percent()]);
    c.bench_function("saturation/first_order/evaluate_po2", |b| {
        b.iter(|| {
            let f = SaturationFromTension::new(DEFAULT_MODEL, black_box(60.0), ACID_BASE).unwrap();
            evaluate_uncertainty(&f, black_box(&request))
        })
    });
    // With a pH figure too (numerical ∂logit S/∂pH: four more curve evaluations).
    let request = first_order_request(vec![
        po2_five_percent(),
        InputFigure {
            input: InputQuantity::Ph,
            source: FigureSource::Profile("clia-2024-ph".to_owned()),
        },
    ]);
    c.bench_function("saturation/first_order/evaluate_po2_ph", |b| {
        b.iter(|| {
            let f = SaturationFromTension::new(DEFAULT_MODEL, black_box(60.0), ACID_BASE).unwrap();
            evaluate_uncertainty(&f, black_box(&request))
        })
    });
    // The model component (six adult models).
    let request = UncertaintyRequest {
        model_component: true,
        ..first_order_request(vec![po2_five_percent()])
    };
    c.bench_function(
        "saturation/first_order/evaluate_po2_with_model_component",
        |b| {
            b.iter(|| {
                let f =
                    SaturationFromTension::new(DEFAULT_MODEL, black_box(60.0), ACID_BASE).unwrap();
                evaluate_uncertainty(&f, black_box(&request))
            })
        },
    );
}

fn monte_carlo(c: &mut Criterion) {
    let mut group = c.benchmark_group("monte_carlo");
    group.sample_size(20);
    group.measurement_time(Duration::from_secs(10));
    let f = SaturationFromTension::new(DEFAULT_MODEL, 60.0, ACID_BASE).unwrap();
    let request = monte_carlo_request(vec![po2_five_percent()], 100_000);
    group.bench_function("saturation/100k_draws", |b| {
        b.iter(|| evaluate_uncertainty(black_box(&f), black_box(&request)))
    });
    let shortest = UncertaintyRequest {
        method: Method::MonteCarlo(MonteCarloOptions {
            draws: 100_000,
            seed: 20_240_711,
            interval: IntervalKind::Shortest,
        }),
        ..request.clone()
    };
    group.bench_function("saturation/100k_draws_shortest", |b| {
        b.iter(|| evaluate_uncertainty(black_box(&f), black_box(&shortest)))
    });
    let imputed = ImputedPao2::new(0.94).unwrap();
    let request = monte_carlo_request(
        vec![InputFigure {
            input: InputQuantity::Spo2,
            source: FigureSource::Stated(Statement::StandardUncertainty(Amount::absolute(0.03))),
        }],
        100_000,
    );
    group.bench_function("imputed_pao2/100k_draws", |b| {
        b.iter(|| evaluate_uncertainty(black_box(&imputed), black_box(&request)))
    });
    group.finish();
}

criterion_group!(benches, first_order_saturation, monte_carlo);
criterion_main!(benches);
