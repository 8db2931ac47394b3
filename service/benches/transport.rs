//! Criterion benchmarks: oxygen content, the alveolar gas equation and
//! blood-gas temperature correction.
//!
//! Run with `cargo bench --bench transport -- --warm-up-time 1 --measurement-time 2`;
//! figures are recorded in `BENCHMARKS-transport.md`.

// criterion_group! generates an undocumented public function.
#![allow(missing_docs)]

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use oxbind_service::physiology::content::{
    oxygen_content_ml_per_dl, oxygen_transport, BloodOxygenSample, OxygenTransportInput,
};
use oxbind_service::physiology::gas_exchange::{
    alveolar_po2_mmhg, impute_pao2_from_spo2, shunt_fraction, AlveolarGasForm, AlveolarGasInput,
    ShuntInput,
};
use oxbind_service::physiology::temperature::{
    correct_blood_gas, correct_pco2_mmhg, correct_ph, correct_po2_mmhg, BloodGasTemperatureInput,
};

fn content(c: &mut Criterion) {
    c.bench_function("content/plain (Hb, S, PO2, k)", |b| {
        b.iter(|| {
            oxygen_content_ml_per_dl(
                black_box(15.0),
                black_box(0.98),
                black_box(100.0),
                black_box(1.34),
            )
        })
    });
    let input = OxygenTransportInput {
        hemoglobin_g_per_dl: 15.0,
        arterial: BloodOxygenSample::functional(0.98, 100.0),
        venous: Some(BloodOxygenSample::functional(0.75, 40.0)),
        cardiac_output_l_per_min: Some(5.0),
        hufner_factor_ml_per_g: None,
    };
    c.bench_function("content/transport (Ca, Cv, a-v, O2ER, DO2, VO2)", |b| {
        b.iter(|| oxygen_transport(black_box(&input)))
    });
}

fn gas_exchange(c: &mut Criterion) {
    let input = AlveolarGasInput {
        fio2_fraction: 0.21,
        barometric_pressure_mmhg: 760.0,
        paco2_mmhg: 40.0,
        respiratory_quotient: 0.8,
        body_temperature_celsius: 37.0,
    };
    c.bench_function("alveolar gas/full, PH2O from temperature", |b| {
        b.iter(|| alveolar_po2_mmhg(black_box(&input), AlveolarGasForm::Full))
    });
    let shunt = ShuntInput {
        hemoglobin_g_per_dl: 15.0,
        alveolar_po2_mmhg: 99.73,
        arterial: BloodOxygenSample::functional(0.98, 100.0),
        venous: BloodOxygenSample::functional(0.75, 40.0),
        hufner_factor_ml_per_g: None,
    };
    c.bench_function("gas exchange/shunt fraction", |b| {
        b.iter(|| shunt_fraction(black_box(&shunt)))
    });
    c.bench_function("gas exchange/PaO2 imputed from SpO2", |b| {
        b.iter(|| impute_pao2_from_spo2(black_box(0.92)))
    });
}

fn temperature(c: &mut Criterion) {
    c.bench_function("temperature/pH 37 -> 33", |b| {
        b.iter(|| correct_ph(black_box(7.40), black_box(37.0), black_box(33.0)))
    });
    c.bench_function("temperature/PCO2 37 -> 33", |b| {
        b.iter(|| correct_pco2_mmhg(black_box(40.0), black_box(37.0), black_box(33.0)))
    });
    c.bench_function("temperature/PO2 37 -> 33 (exact Eq. 3 map)", |b| {
        b.iter(|| correct_po2_mmhg(black_box(80.0), black_box(37.0), black_box(33.0)))
    });
    c.bench_function("temperature/PO2 37 -> 20 (exact Eq. 3 map)", |b| {
        b.iter(|| correct_po2_mmhg(black_box(80.0), black_box(37.0), black_box(20.0)))
    });
    let gas = BloodGasTemperatureInput {
        ph: Some(7.40),
        pco2_mmhg: Some(40.0),
        po2_mmhg: Some(80.0),
        measured_celsius: 37.0,
        target_celsius: 33.0,
    };
    c.bench_function("temperature/whole blood gas 37 -> 33", |b| {
        b.iter(|| correct_blood_gas(black_box(&gas)))
    });
}

criterion_group!(benches, content, gas_exchange, temperature);
criterion_main!(benches);
