//! The Peng–Robinson model's remembered states (consistency checks: the
//! model against itself). A cooler's enthalpy drop and the isothermal
//! reference may reuse states that `compression` evaluated; every result
//! must be bit for bit what a model that never evaluated them returns, with
//! the same validity, and what the trait's documented definitions give
//! from `GasModel::state` (the default `isothermal_work`).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use polytrope::gas::components::{CARBON_DIOXIDE, ETHANE, METHANE, NITROGEN, PROPANE};
use polytrope::gas::{GasModel, PengRobinson, Validity};
use polytrope::real::Real;

fn natural_gas<T: Real>(y: [f64; 5]) -> PengRobinson<T, 5> {
    PengRobinson::new(
        [METHANE, ETHANE, PROPANE, NITROGEN, CARBON_DIOXIDE],
        y.map(T::of),
    )
    .unwrap()
}

const NG: [f64; 5] = [0.90, 0.05, 0.02, 0.01, 0.02];
const RICH: [f64; 5] = [0.70, 0.15, 0.10, 0.03, 0.02];

/// Suction (p, T) and discharge (p, T) of four stages with three coolers
/// whose outlet is the next suction (the usual sensor layout: the memo then
/// holds both ends of every cooler). Invented values.
fn stages<T: Real>() -> [(T, T, T, T); 4] {
    [
        (10.0e5, 300.0, 25.0e5, 383.3),
        (24.5e5, 310.0, 60.0e5, 392.0),
        (59.0e5, 311.0, 140.0e5, 385.0),
        (139.0e5, 312.0, 300.0e5, 371.0),
    ]
    .map(|(a, b, c, d)| (T::of(a), T::of(b), T::of(c), T::of(d)))
}

/// The train's order: every stage's compression, then the coolers, then
/// the isothermal reference from the first suction.
fn run<T: Real>(g: &PengRobinson<T, 5>, s: &[(T, T, T, T); 4]) -> [(T, Validity); 5] {
    for &(p1, t1, p2, t2) in s {
        g.compression(p1, t1, p2, T::ln(p2 / p1), Some(t2), None);
    }
    let mut out = [(T::ZERO, Validity::INVALID); 5];
    for i in 0..3 {
        out[i] = g.enthalpy_drop(s[i].2, s[i].3, s[i + 1].0, s[i + 1].1, None);
    }
    // A cooler whose outlet was never evaluated (half remembered).
    out[3] = g.enthalpy_drop(s[3].2, s[3].3, s[3].2 * T::of(0.98), T::of(320.0), None);
    let ln_r = T::ln(s[3].2 / s[0].0);
    out[4] = g.isothermal_work(s[0].0, s[3].2, ln_r, s[0].1, None);
    out
}

/// The same calls on a model that has evaluated nothing before each.
fn fresh<T: Real>(y: [f64; 5], s: &[(T, T, T, T); 4]) -> [(T, Validity); 5] {
    let g = || natural_gas::<T>(y);
    let ln_r = T::ln(s[3].2 / s[0].0);
    [
        g().enthalpy_drop(s[0].2, s[0].3, s[1].0, s[1].1, None),
        g().enthalpy_drop(s[1].2, s[1].3, s[2].0, s[2].1, None),
        g().enthalpy_drop(s[2].2, s[2].3, s[3].0, s[3].1, None),
        g().enthalpy_drop(s[3].2, s[3].3, s[3].2 * T::of(0.98), T::of(320.0), None),
        g().isothermal_work(s[0].0, s[3].2, ln_r, s[0].1, None),
    ]
}

fn same_bits<T: Real>(a: &[(T, Validity); 5], b: &[(T, Validity); 5], what: &str) {
    for (i, (x, y)) in a.iter().zip(b).enumerate() {
        assert_eq!(
            x.0.to_f64().to_bits(),
            y.0.to_f64().to_bits(),
            "{what} {i}: {} vs {}",
            x.0.to_f64(),
            y.0.to_f64()
        );
        assert_eq!(x.1, y.1, "{what} {i}");
    }
}

fn remembered_equals_fresh<T: Real>() {
    let s = stages::<T>();
    let g = natural_gas::<T>(NG);
    let first = run(&g, &s);
    same_bits(&first, &fresh(NG, &s), "first scan");
    // A second scan over the same states (all remembered) and a clone.
    same_bits(&run(&g, &s), &first, "second scan");
    same_bits(&run(&g.clone(), &s), &first, "clone");
    // A new composition forgets the old states.
    let mut g = g;
    g.set_composition(RICH.map(T::of)).unwrap();
    let rich = fresh(RICH, &s);
    assert_ne!(rich[0].0.to_f64(), first[0].0.to_f64());
    same_bits(&run(&g, &s), &rich, "after set_composition");
}

#[test]
fn remembered_states_give_bit_identical_results_f32() {
    remembered_equals_fresh::<f32>();
}

#[test]
fn remembered_states_give_bit_identical_results_f64() {
    remembered_equals_fresh::<f64>();
}

/// `isothermal_work` against the trait's documented definition from two
/// `GasModel::state` evaluations, bit for bit and with the same validity,
/// remembered or not, in range and at edge states (outside the cp0 fit,
/// very hot where the fitted cp0 is no longer physical, liquid-like, zero,
/// NaN).
#[test]
fn isothermal_work_is_the_documented_state_difference() {
    fn check<T: Real>(p1: f64, p2: f64, t: f64) {
        let (p1, p2, t) = (T::of(p1), T::of(p2), T::of(t));
        let g = natural_gas::<T>(NG);
        let a = g.state(p1, t, None);
        let b = g.state(p2, t, None);
        let want = (
            (b.enthalpy - a.enthalpy) - t * (b.entropy - a.entropy),
            a.validity.worst(b.validity),
        );
        let ln_r = T::ln(p2 / p1);
        for remembered in [false, true] {
            if remembered {
                // Puts (p1, t) among the remembered suction states.
                g.compression(p1, t, p2, ln_r, Some(t), None);
            }
            let got = g.isothermal_work(p1, p2, ln_r, t, None);
            assert_eq!(
                got.0.to_f64().to_bits(),
                want.0.to_f64().to_bits(),
                "p1 {} p2 {} t {} remembered {remembered}: {} vs {}",
                p1.to_f64(),
                p2.to_f64(),
                t.to_f64(),
                got.0.to_f64(),
                want.0.to_f64()
            );
            assert_eq!(got.1, want.1);
        }
    }
    let cases = [
        (10.0e5, 60.0e5, 300.0),
        (1.0e5, 2.0e5, 250.0),
        (20.0e5, 200.0e5, 190.0),
        (50.0e5, 80.0e5, 3000.0),
        (1.0e5, 5.0e5, 1.0e6),
        (1.0e5, 5.0e5, 1.0e9),
        (0.0, 5.0e5, 300.0),
        (1.0e5, f64::NAN, 300.0),
        (1.0e5, 5.0e5, f64::NAN),
    ];
    for (p1, p2, t) in cases {
        check::<f32>(p1, p2, t);
        check::<f64>(p1, p2, t);
    }
}
