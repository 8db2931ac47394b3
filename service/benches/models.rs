//! Criterion benchmarks of the dissociation models: every model's forward and
//! inverse (standard conditions and a full set of conditions), saturation with
//! the Hill slope, P50 and shift factors.
//!
//! Targets (issue 3, 2-core machine): closed-form forward <= 50 ns, Dash 2016
//! forward <= 150 ns, every inverse <= 1 µs. Figures are recorded in
//! BENCHMARKS-engine.md.

// criterion_group! generates an undocumented public function.
#![allow(missing_docs)]

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use oxbind_service::physiology::conditions::Conditions;
use oxbind_service::physiology::model::{catalog, DissociationModel, Model};
use oxbind_service::physiology::shift::{p50_at_conditions_mmhg, shift_factors};

/// Acid-base and temperature conditions without COHb (each model uses those it honours).
const SHIFTED: Conditions = Conditions {
    ph: Some(7.31),
    pco2_mmhg: Some(48.0),
    temperature_celsius: Some(38.2),
    dpg_mmol_per_l: Some(5.6),
    base_excess_mmol_per_l: Some(-3.0),
    cohb_fraction: None,
    methb_fraction: None,
    hbf_fraction: None,
};

/// pH, PCO2 and base excess only, at 37 °C (closed form for every model: no
/// temperature integration in Severinghaus).
const ACID_BASE: Conditions = Conditions {
    ph: Some(7.31),
    pco2_mmhg: Some(48.0),
    base_excess_mmol_per_l: Some(-3.0),
    ..Conditions::STANDARD
};

/// The shifted conditions with 8 % COHb (Haldane path).
const WITH_COHB: Conditions = Conditions {
    cohb_fraction: Some(0.08),
    ..SHIFTED
};

fn models() -> Vec<Model> {
    catalog()
        .iter()
        .map(|i| Model::from_id(i.id).unwrap())
        .collect()
}

fn forward(c: &mut Criterion) {
    for model in models() {
        let id = model.info().id;
        c.bench_function(&format!("forward/{id}/standard"), |b| {
            b.iter(|| model.saturation(black_box(47.3), black_box(&Conditions::STANDARD)))
        });
        c.bench_function(&format!("forward/{id}/acid_base"), |b| {
            b.iter(|| model.saturation(black_box(47.3), black_box(&ACID_BASE)))
        });
        c.bench_function(&format!("forward/{id}/shifted"), |b| {
            b.iter(|| model.saturation(black_box(47.3), black_box(&SHIFTED)))
        });
        c.bench_function(&format!("forward/{id}/cohb"), |b| {
            b.iter(|| model.saturation(black_box(47.3), black_box(&WITH_COHB)))
        });
        // What a SaturationFromTension item needs besides the P50.
        c.bench_function(&format!("saturation_and_slope/{id}/shifted"), |b| {
            b.iter(|| model.saturation_and_slope(black_box(47.3), black_box(&SHIFTED)))
        });
    }
}

fn inverse(c: &mut Criterion) {
    for model in models() {
        let id = model.info().id;
        c.bench_function(&format!("inverse/{id}/standard"), |b| {
            b.iter(|| model.tension_mmhg(black_box(0.83), black_box(&Conditions::STANDARD)))
        });
        c.bench_function(&format!("inverse/{id}/shifted"), |b| {
            b.iter(|| model.tension_mmhg(black_box(0.83), black_box(&SHIFTED)))
        });
        c.bench_function(&format!("inverse/{id}/cohb"), |b| {
            b.iter(|| model.tension_mmhg(black_box(0.83), black_box(&WITH_COHB)))
        });
    }
}

fn p50_and_shift(c: &mut Criterion) {
    for model in models() {
        let id = model.info().id;
        c.bench_function(&format!("p50/{id}/shifted"), |b| {
            b.iter(|| p50_at_conditions_mmhg(black_box(&model), black_box(&SHIFTED)))
        });
        c.bench_function(&format!("shift_factors/{id}/shifted"), |b| {
            b.iter(|| shift_factors(black_box(&model), black_box(&SHIFTED)))
        });
    }
}

criterion_group!(benches, forward, inverse, p50_and_shift);
criterion_main!(benches);
