//! Seeded property test: arbitrary f32 raw signals (NaN, ±inf, huge,
//! negative, subnormal, and plausible loop currents), arbitrary sample-time
//! steps (including time standing still) and no-flow flags, through the
//! whole front end (tests/signal_support) and `Train::update`, in the f32
//! device build. Properties: no panic; no NaN or infinity in any output;
//! quality consistent with the inputs (a good result only from good
//! channels; a bad channel reports 0).
//!
//! Cases: `SIGNAL_PROPTEST_CASES` (default 128); seed:
//! `SIGNAL_PROPTEST_SEED` (default fixed). `ci/checks.d/signal_long_proptest.sh`
//! runs a long, time-bounded batch.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod signal_support;

use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};
use signal_support::*;

use polytrope::Quality;

fn raw_value() -> impl Strategy<Value = f32> {
    prop_oneof![
        4 => 3.0_f32..22.0,          // around the loop-current range
        1 => proptest::num::f32::ANY, // everything, NaN and infinities included
        1 => Just(f32::NAN),
        1 => prop_oneof![Just(f32::INFINITY), Just(f32::NEG_INFINITY), Just(f32::MAX),
                         Just(-f32::MAX), Just(f32::MIN_POSITIVE / 4.0), Just(0.0), Just(-0.0)],
    ]
}

fn scan() -> impl Strategy<Value = ([f32; CH], [u32; CH], bool)> {
    (
        proptest::array::uniform9(raw_value()),
        proptest::array::uniform9(
            prop_oneof![8 => 50_u32..300, 1 => Just(0_u32), 1 => 0_u32..100_000],
        ),
        proptest::bool::weighted(0.1),
    )
}

fn check_sequence(seq: &[([f32; CH], [u32; CH], bool)]) -> Result<(), TestCaseError> {
    let mut fe = FrontEnd::<f32>::new();
    // A healthy start, so that substitution and learned states are exercised.
    fe.warm_up(0, 12);
    let mut t = [12 * SCAN_MS; CH];
    for (raw, dt, no_flow) in seq {
        for (ti, d) in t.iter_mut().zip(dt) {
            *ti = ti.wrapping_add(*d);
        }
        let s = fe.step_at(*raw, t, *no_flow);
        for (i, o) in s.out.iter().enumerate() {
            prop_assert!(
                o.raw.value.is_finite() && o.filtered.value.is_finite(),
                "ch {i}"
            );
            prop_assert_eq!(o.raw.quality, o.status.quality);
            if o.status.quality == Quality::Bad {
                prop_assert_eq!(o.raw.value, 0.0);
                prop_assert_eq!(o.filtered.value, 0.0);
            }
            if o.status.fault.quality() != Quality::Good {
                prop_assert!(o.status.quality != Quality::Good, "ch {i} {:?}", o.status);
            }
        }
        for m in [
            s.flow.mass_flow,
            s.flow.discharge_coefficient,
            s.flow.expansibility,
            s.flow.reynolds,
            s.flow.density,
            s.dp.differential_pressure,
        ] {
            prop_assert!(m.value.is_finite());
            if m.quality == Quality::Bad {
                prop_assert_eq!(m.value, 0.0);
            }
        }
        if s.flow.mass_flow.quality == Quality::Good {
            for ch in [DP, P1A, T1A] {
                prop_assert_eq!(s.out[ch].status.quality, Quality::Good);
            }
            prop_assert!(s.flow.mass_flow.value >= 0.0);
        }
        for v in snapshot_values(&s.snapshot) {
            prop_assert!(v.value.is_finite());
        }
        for (st, chans) in [[P1A, T1A, P2A, T2A], [P1B, T1B, P2B, T2B]]
            .iter()
            .enumerate()
        {
            let c = s.snapshot.stages[st].compressor().unwrap();
            if c.isentropic_efficiency.quality == Quality::Good {
                for &ch in chans {
                    prop_assert_eq!(
                        s.out[ch].status.quality,
                        Quality::Good,
                        "stage {} ch {}",
                        st,
                        ch
                    );
                }
            }
            if c.gas_power.quality == Quality::Good {
                prop_assert_eq!(s.flow.mass_flow.quality, Quality::Good);
            }
        }
    }
    Ok(())
}

#[test]
fn arbitrary_f32_through_front_end_and_train() {
    let cases: u32 = std::env::var("SIGNAL_PROPTEST_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(128);
    let seed: u64 = std::env::var("SIGNAL_PROPTEST_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(0x5EED_0003);
    let mut seed_bytes = [0u8; 32];
    seed_bytes[..8].copy_from_slice(&seed.to_le_bytes());
    let config = Config {
        cases,
        failure_persistence: None,
        rng_algorithm: RngAlgorithm::ChaCha,
        ..Config::default()
    };
    let mut runner = TestRunner::new_with_rng(
        config,
        TestRng::from_seed(RngAlgorithm::ChaCha, &seed_bytes),
    );
    let ran = std::sync::atomic::AtomicU32::new(0);
    let result = runner.run(&proptest::collection::vec(scan(), 1..40), |seq| {
        ran.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
        check_sequence(&seq)
    });
    println!(
        "signal proptest: seed {seed:#x}, {} cases run ({} requested)",
        ran.load(std::sync::atomic::Ordering::Relaxed),
        cases
    );
    result.unwrap();
}
