//! One `Train::update` of the demo train (an invented scenario: four
//! intercooled compressor stages, an aftercooler and a pump) on the host, at
//! f32 (the device build) and f64 (the reference build). Run with
//! `--features approx-math` for the approximate-maths f32 build (the bench
//! names say which). Speed is a benchmark, not a test: nothing here asserts
//! a time. On-target instruction counts: `ci/measure.sh`.

// criterion_group! generates an undocumented pub fn; a bench may expect().
#![allow(missing_docs, clippy::expect_used, clippy::indexing_slicing)]

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use polytrope::demo;
use polytrope::quality::Measured;
use polytrope::stage::{evaluate_compressor, CompressorInputs};
use polytrope::Real;

const MATHS: &str = if cfg!(feature = "approx-math") {
    "approx-math"
} else {
    "libm"
};

fn bench_update<T: Real>(c: &mut Criterion, name: &str) {
    let mut train = demo::train::<T>().expect("demo train");
    let scans: Vec<_> = (0..64).map(|i| demo::scan::<T>(i * 7)).collect();
    for s in &scans {
        train.update(s);
    }
    let mut i = 0;
    c.bench_function(&format!("train_update/{name}/{MATHS}"), |b| {
        b.iter(|| {
            i = (i + 1) % scans.len();
            let snap = train.update(black_box(&scans[i]));
            black_box(snap.totals.total_power.value)
        })
    });
}

/// One compressor stage (the demo's second), for the side-by-side with the
/// Python package `fluids` (`ci/bench_fluids.py`).
fn bench_stage<T: Real>(c: &mut Criterion, name: &str) {
    let config = demo::config::<T>().expect("demo config");
    let s = demo::scan::<T>(0).stages[1];
    let inputs = CompressorInputs {
        suction_pressure: s.suction_pressure.map(|p| p.pa()),
        suction_temperature: s.suction_temperature.map(|t| t.kelvin()),
        discharge_pressure: s.discharge_pressure.map(|p| p.pa()),
        discharge_temperature: s.discharge_temperature.map(|t| t.kelvin()),
        mass_flow: Measured::good(T::of(11.5)),
        compressibility: s.compressibility.map(|z| (z.value, z.quality)),
    };
    c.bench_function(&format!("compressor_stage/{name}/{MATHS}"), |b| {
        b.iter(|| evaluate_compressor(black_box(&config.gas), black_box(&inputs)))
    });
}

fn benches(c: &mut Criterion) {
    bench_update::<f32>(c, "f32");
    bench_update::<f64>(c, "f64");
    bench_stage::<f32>(c, "f32");
    bench_stage::<f64>(c, "f64");
}

criterion_group!(train_update, benches);
criterion_main!(train_update);
