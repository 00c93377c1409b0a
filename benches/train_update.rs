//! One `Train::update` of the demo train (an invented scenario: four
//! intercooled compressor stages, an aftercooler and a pump) on the host, at
//! f32 (the device build) and f64 (the reference build), and the whole
//! controller scan of the firmware harness (`ci/firmware/src/controller.rs`,
//! shared source: 12 channels, the 4-stage train fed by them, 4 surge
//! monitors; f32). Run with
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

#[path = "../ci/firmware/src/codec.rs"]
#[allow(dead_code)]
mod codec;
#[path = "../ci/firmware/src/controller.rs"]
#[allow(dead_code)]
mod controller;

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

/// The whole controller scan as the firmware harness measures it, warmed
/// (channel windows full, rate filters settled), over the demo scans; each
/// iteration also synthesises the 12 raw samples (a few dozen flops).
fn bench_full_scan(c: &mut Criterion) {
    let demo_cfg = demo::config::<f32>().expect("demo config");
    let mut slot = core::mem::MaybeUninit::uninit();
    let ctl = controller::Controller::build_in(
        &mut slot,
        controller::train_config(&demo_cfg, controller::ideal_gas().expect("gas")),
    )
    .expect("controller");
    let mut slow: Vec<_> = (0..64)
        .map(|i| {
            let full = demo::scan::<f32>(i * 7);
            let mut stages = [full.stages[0]; controller::SECTIONS];
            stages.copy_from_slice(&full.stages[..controller::SECTIONS]);
            stages[controller::SECTIONS - 1].cooler = None;
            polytrope::scan::Scan { stages }
        })
        .collect();
    let mut k = 0_u32;
    for s in slow.iter_mut().take(controller::WARM_SCANS) {
        let raw = ctl.samples(s, k);
        ctl.scan(&raw, k.wrapping_mul(controller::SCAN_MS), s);
        k += 1;
    }
    c.bench_function(&format!("full_scan/f32/{MATHS}"), |b| {
        b.iter(|| {
            let n = slow.len();
            let s = &mut slow[k as usize % n];
            let raw = ctl.samples(s, k);
            let out = ctl.scan(black_box(&raw), k.wrapping_mul(controller::SCAN_MS), s);
            k += 1;
            black_box(out.total_power)
        })
    });
}

fn benches(c: &mut Criterion) {
    bench_full_scan(c);
    bench_update::<f32>(c, "f32");
    bench_update::<f64>(c, "f64");
    bench_stage::<f32>(c, "f32");
    bench_stage::<f64>(c, "f64");
}

criterion_group!(train_update, benches);
criterion_main!(train_update);
