//! Surge margin: invariance to suction conditions and gas, table
//! validation, out-of-range flagging and rate of approach.
//!
//! The invariance reference is the similarity (fan) law of turbomachines
//! (Dixon & Hall, *Fluid Mechanics and Thermodynamics of Turbomachinery*,
//! ch. 1-2, from memory): a machine at the same flow coefficient, head
//! coefficient and machine Mach number is in the same aerodynamic state, so
//! it is the same distance from surge. The tests here build that "same
//! operating point" for other gases with the ideal-gas polytropic head at
//! the *configured* exponent and Z·R·T: a consistency check of the
//! transform's algebra (suction pressure, temperature, molar mass, Z), not of
//! the physics of a gas with another exponent. That check, against CoolProp
//! real-gas paths, is tests/surge_exponent.rs.
//! The map is invented demo data (an invented scenario,
//! `polytrope::surge::demo_map`).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use polytrope::surge::{
    demo_map, MapConditions, SurgeLine, SurgeLineConfig, SurgeMonitor, SurgePoint, SurgeScan,
};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{ConfigError, Measured, Problem, Quality, Real};
use proptest::prelude::*;

const RU: f64 = 8314.46261815324; // J/(kmol K), CODATA 2018 (exact)
                                  // The invented surge map of the tests (one copy: `polytrope::surge::demo_map`).
const N_EXP: f64 = demo_map::POLYTROPIC_EXPONENT;
const C_ELEM: f64 = demo_map::FLOW_COEFFICIENT; // m2
const MAP_P: f64 = demo_map::MAP_SUCTION_PRESSURE_PA;
const MAP_T: f64 = demo_map::MAP_SUCTION_TEMPERATURE_K;
const MAP_M: f64 = demo_map::MAP_MOLAR_MASS;
const MAP_Z: f64 = demo_map::MAP_COMPRESSIBILITY;

/// The invented 4-speed surge line (demo data).
fn points<T: Real>() -> [SurgePoint<T>; 4] {
    demo_map::points()
}

fn monitor<T: Real>() -> SurgeMonitor<T, 6> {
    let pts = points::<T>();
    let line = SurgeLine::new(&demo_map::line_config(&pts)).unwrap();
    SurgeMonitor::new(line, demo_map::monitor_config()).unwrap()
}

#[derive(Clone, Copy, Debug)]
struct Gas {
    p: f64,
    t: f64,
    m: f64,
    z: f64,
}

const MAP_GAS: Gas = Gas {
    p: MAP_P,
    t: MAP_T,
    m: MAP_M,
    z: MAP_Z,
};

/// Measured signals (ps, pd, Δp) of the aerodynamic state that has volume
/// flow `q_ref` and pressure ratio `r_ref` in the map gas, when the machine
/// runs on `gas` at the same machine Mach number.
fn signals(q_ref: f64, r_ref: f64, gas: Gas) -> (f64, f64, f64) {
    let a2 = |g: Gas| g.z * RU / g.m * g.t; // Z R T = a*²
    let sigma = (N_EXP - 1.0) / N_EXP;
    let head_ref = a2(MAP_GAS) * (r_ref.powf(sigma) - 1.0) / sigma;
    let speed_scale = (a2(gas) / a2(MAP_GAS)).sqrt(); // N/N_ref at equal Mach
    let q = q_ref * speed_scale;
    let head = head_ref * speed_scale * speed_scale;
    let r = (1.0 + sigma * head / a2(gas)).powf(1.0 / sigma);
    let rho = gas.p * gas.m / (gas.z * RU * gas.t);
    let dp = rho * (q / C_ELEM).powi(2);
    (gas.p, gas.p * r, dp)
}

fn scan<T: Real>(s: (f64, f64, f64)) -> SurgeScan<T> {
    SurgeScan::pressures_only(
        Measured::good(PressureAbs::from_pa(T::of(s.0))),
        Measured::good(PressureAbs::from_pa(T::of(s.1))),
        Measured::good(T::of(s.2)),
    )
}

fn margin<T: Real>(m: &SurgeMonitor<T, 6>, s: (f64, f64, f64)) -> (f64, Quality) {
    let st = m.evaluate(&scan::<T>(s), T::ZERO);
    (st.margin.value.to_f64(), st.margin.quality)
}

/// A surge line fixed in uncorrected terms (mass flow against pressure
/// ratio, drawn for `drawn_for` gas), fed a perfectly measured mass flow:
/// what goes wrong when the gas changes.
fn naive_margin(s: (f64, f64, f64), gas: Gas, drawn_for: Gas) -> f64 {
    let a2 = |g: Gas| g.z * RU / g.m * g.t;
    let speed_scale = (a2(drawn_for) / a2(MAP_GAS)).sqrt();
    let rho_map = drawn_for.p * drawn_for.m / (drawn_for.z * RU * drawn_for.t);
    let rho = gas.p * gas.m / (gas.z * RU * gas.t);
    let mass_flow = C_ELEM * (rho * s.2).sqrt(); // Δp = ρ (Q/C)²
    let pts = points::<f64>();
    let r = s.1 / s.0;
    let seg = pts
        .windows(2)
        .find(|w| r <= w[1].pressure_ratio)
        .unwrap_or(&pts[2..4]);
    let f = (r - seg[0].pressure_ratio) / (seg[1].pressure_ratio - seg[0].pressure_ratio);
    let q_s =
        seg[0].suction_volume_flow + f * (seg[1].suction_volume_flow - seg[0].suction_volume_flow);
    mass_flow / (rho_map * q_s * speed_scale) - 1.0
}

#[test]
fn margin_is_invariant_over_a_sweep_and_reports_its_error() {
    let m64 = monitor::<f64>();
    let m32 = monitor::<f32>();
    let (mut e64, mut e32) = (0.0_f64, 0.0_f64);
    let mut cases = 0;
    for &q in &[1.5, 1.9, 2.3, 2.8] {
        for &r in &[1.6, 1.9, 2.2] {
            let (reference, quality) = margin(&m64, signals(q, r, MAP_GAS));
            assert_eq!(quality, Quality::Good);
            for &p in &[0.6e5, 1.0e5, 8.0e5, 45.0e5] {
                for &t in &[255.0, 300.0, 340.0] {
                    for &(mm, z) in &[(16.04, 0.9), (19.5, 0.93), (28.96, 1.0), (44.0, 0.8)] {
                        let g = Gas { p, t, m: mm, z };
                        e64 = e64.max((margin(&m64, signals(q, r, g)).0 - reference).abs());
                        e32 = e32.max((margin(&m32, signals(q, r, g)).0 - reference).abs());
                        cases += 1;
                    }
                }
            }
        }
    }
    println!("margin invariance over {cases} cases: max |dSM| f64 {e64:.3e}, f32 {e32:.3e}");
    assert!(e64 < 1e-12, "f64 invariance error {e64}");
    // The surge-margin entry of src/tolerance.rs (measured: 3.2e-7 with
    // libm, 6.5e-5 with approx-math).
    let (_, atol) = polytrope::tolerance::SURGE_MARGIN.active();
    assert!(e32 < atol, "f32 invariance error {e32}");
}

#[test]
fn molar_mass_swing_moves_a_fixed_uncorrected_line_but_not_the_margin() {
    // A gas-composition swing: lean natural gas 17.4 -> rich 21.5 kg/kmol at
    // the same suction pressure and temperature (invented, typical range).
    let m = monitor::<f64>();
    let lean = Gas {
        p: 20e5,
        t: 303.15,
        m: 17.4,
        z: 0.95,
    };
    let rich = Gas { m: 21.5, ..lean };
    // On a map ratio, so both lines interpolate alike.
    let (a, b) = (signals(2.0, 2.0, lean), signals(2.0, 2.0, rich));
    let (sa, sb) = (margin(&m, a).0, margin(&m, b).0);
    let (na, nb) = (naive_margin(a, lean, lean), naive_margin(b, rich, lean));
    // Drawn for the lean gas, the uncorrected line agrees there.
    assert!((na - sa).abs() < 1e-9);
    println!("reduced SM lean {sa:.6} rich {sb:.6}; uncorrected lean {na:.4} rich {nb:.4}");
    assert!((sa - sb).abs() < 1e-12);
    // The uncorrected line sees the same aerodynamic state as a different
    // distance from surge.
    assert!((na - nb).abs() > 0.05, "naive {na} vs {nb}");
}

proptest! {
    #[test]
    fn margin_invariant_for_any_gas_and_suction(
        q in 1.2_f64..3.0, r in 1.5_f64..2.4,
        p in 0.3e5_f64..100e5, t in 230.0_f64..380.0,
        mm in 2.0_f64..60.0, z in 0.7_f64..1.05,
    ) {
        let m = monitor::<f64>();
        let reference = margin(&m, signals(q, r, MAP_GAS));
        let other = margin(&m, signals(q, r, Gas { p, t, m: mm, z }));
        prop_assert!((reference.0 - other.0).abs() < 1e-10);
        prop_assert_eq!(reference.1, other.1);
    }

    #[test]
    fn surge_flow_rises_with_head(h1 in 0.0_f64..2.0, dh in 0.0_f64..1.0) {
        let m = monitor::<f64>();
        let a = m.line().lookup(h1).surge_flow_number;
        let b = m.line().lookup(h1 + dh).surge_flow_number;
        prop_assert!(b >= a);
    }
}

#[test]
fn outside_the_mapped_heads_the_margin_is_uncertain() {
    let m = monitor::<f64>();
    let pts = points::<f64>();
    // Inside: good. Below the lowest ratio and above the highest: uncertain.
    assert_eq!(margin(&m, signals(2.0, 1.8, MAP_GAS)).1, Quality::Good);
    assert_eq!(margin(&m, signals(2.0, 1.3, MAP_GAS)).1, Quality::Uncertain);
    assert_eq!(margin(&m, signals(2.5, 2.6, MAP_GAS)).1, Quality::Uncertain);
    // On a map surge point the margin is zero and the control margin is that
    // speed line's.
    let st = m.evaluate(&scan::<f64>(signals(1.82, 2.0, MAP_GAS)), 0.0);
    assert!(st.margin.value.abs() < 1e-12);
    assert!((st.control_margin.value - pts[2].control_margin).abs() < 1e-12);
    // 10 % more flow at the same ratio (same head): SM = 0.10.
    let st = m.evaluate(&scan::<f64>(signals(1.82 * 1.1, 2.0, MAP_GAS)), 0.02);
    assert!((st.margin.value - 0.10).abs() < 1e-12);
    assert!((st.clearance.value - (0.10 - 0.12)).abs() < 1e-12);
    // Between speed lines the control margin is interpolated.
    let st = m.evaluate(&scan::<f64>(signals(2.0, 1.65, MAP_GAS)), 0.0);
    assert!(st.control_margin.value < 0.14 && st.control_margin.value > 0.12);
}

#[test]
fn bad_inputs_give_bad_margin_and_never_nan() {
    let mut m = monitor::<f32>();
    for s in [
        (f64::NAN, 2e5, 3000.0),
        (1e5, -1.0, 3000.0),
        (0.0, 2e5, 3000.0),
        (1e5, 2e5, f64::INFINITY),
    ] {
        let st = *m.update(&scan::<f32>(s), 0.0, 0.02);
        assert_eq!(st.margin.quality, Quality::Bad);
        assert!(st.margin.value.is_finite() && st.time_to_surge.value.is_finite());
    }
    let mut sc = scan::<f32>(signals(2.0, 1.8, MAP_GAS));
    sc.flow_dp = Measured::new(sc.flow_dp.value, Quality::Bad);
    assert_eq!(m.update(&sc, 0.0, 0.02).margin.quality, Quality::Bad);
    // Reverse flow (bidirectional transmitter): margin below -1, usable.
    let mut sc = scan::<f32>(signals(2.0, 1.8, MAP_GAS));
    sc.flow_dp.value = -sc.flow_dp.value;
    let st = m.update(&sc, 0.0, 0.02);
    assert!(st.margin.value < -1.0 && st.margin.quality == Quality::Good);
}

#[test]
fn rate_of_approach_and_time_to_surge_from_a_ramp() {
    let mut m = monitor::<f64>();
    // Flow falls so that the margin falls linearly by 0.01 per 20 ms scan:
    // -0.5/s. The two-pole filter tracks a ramp's slope exactly once
    // settled (a first-order lag passes a ramp's slope unchanged).
    let surge_q = 1.82;
    let mut last = None;
    for i in 0..60 {
        let sm = 0.90 - 0.01 * i as f64;
        last = Some(*m.update(
            &scan::<f64>(signals(surge_q * (1.0 + sm), 2.0, MAP_GAS)),
            0.0,
            0.02,
        ));
        if i == 3 {
            assert_eq!(last.unwrap().rate_of_approach.quality, Quality::Uncertain);
        }
    }
    let st = last.unwrap();
    assert_eq!(st.rate_of_approach.quality, Quality::Good);
    assert!(
        (st.rate_of_approach.value - 0.5).abs() < 1e-6,
        "{}",
        st.rate_of_approach.value
    );
    assert!((st.time_to_surge.value - st.margin.value / st.rate_of_approach.value).abs() < 1e-9);
    // The same ramp sampled every 40 ms (a missed scan each time) gives the
    // same rate: the filter works in seconds.
    let mut m2 = monitor::<f64>();
    for i in 0..30 {
        let sm = 0.90 - 0.02 * i as f64;
        last = Some(*m2.update(
            &scan::<f64>(signals(surge_q * (1.0 + sm), 2.0, MAP_GAS)),
            0.0,
            0.04,
        ));
    }
    assert!((last.unwrap().rate_of_approach.value - 0.5).abs() < 1e-6);
    // Holding steady: not approaching, time at the horizon.
    for _ in 0..100 {
        last = Some(*m.update(
            &scan::<f64>(signals(surge_q * 1.3, 2.0, MAP_GAS)),
            0.0,
            0.02,
        ));
    }
    assert_eq!(last.unwrap().time_to_surge.value, 60.0);
}

#[test]
fn table_validation_names_the_problem() {
    let map = MapConditions {
        suction_pressure: PressureAbs::from_pa(MAP_P),
        suction_temperature: Kelvin::new(MAP_T),
        molar_mass: MAP_M,
        compressibility: MAP_Z,
    };
    let cfg = |pts: &[SurgePoint<f64>]| {
        SurgeLine::<f64, 4>::new(&SurgeLineConfig {
            points: pts,
            map,
            polytropic_exponent: N_EXP,
            flow_coefficient: C_ELEM,
        })
        .err()
    };
    let good = points::<f64>();
    assert_eq!(cfg(&good), None);
    assert_eq!(
        cfg(&good[..1]).map(|e| e.problem),
        Some(Problem::Count { min: 2, max: 4 })
    );
    let mut five = [good[0]; 5];
    five[..4].copy_from_slice(&good);
    assert_eq!(
        cfg(&five).map(|e| (e.field, e.problem)),
        Some(("surge_line.points", Problem::Count { min: 2, max: 4 }))
    );
    let mut bent = good;
    bent[2].suction_volume_flow = 1.5; // flow falls while head rises
    assert_eq!(
        cfg(&bent),
        Some(ConfigError::new("surge_line.points", Problem::NotIncreasing).at(2))
    );
    let mut flat = good;
    flat[1].pressure_ratio = 1.55;
    assert_eq!(
        cfg(&flat),
        Some(ConfigError::new("surge_line.points", Problem::NotIncreasing).at(1))
    );
    let mut nan = good;
    nan[3].control_margin = f64::NAN;
    assert_eq!(
        cfg(&nan).map(|e| (e.field, e.index)),
        Some(("surge_line.points", Some(3)))
    );
    let r = SurgeLine::<f64, 4>::new(&SurgeLineConfig {
        points: &good,
        map,
        polytropic_exponent: 0.9,
        flow_coefficient: C_ELEM,
    });
    assert_eq!(
        r.err().map(|e| e.field),
        Some("surge_line.polytropic_exponent")
    );
}

/// `SurgeMonitor::new_in` (built in place) is `SurgeMonitor::new`: the same
/// refusal, and for good settings the same states over a falling-flow ramp
/// (consistency check of the two constructors).
#[test]
fn new_in_builds_what_new_builds() {
    let pts = points::<f64>();
    let line = SurgeLine::<f64, 6>::new(&demo_map::line_config(&pts)).unwrap();
    let mut a = SurgeMonitor::new(line.clone(), demo_map::monitor_config()).unwrap();
    let mut slot = core::mem::MaybeUninit::uninit();
    let b = SurgeMonitor::new_in(&mut slot, line.clone(), demo_map::monitor_config()).unwrap();
    for i in 0..30 {
        let s = scan::<f64>(signals(1.82 * (1.9 - 0.03 * f64::from(i)), 2.0, MAP_GAS));
        assert_eq!(
            *a.update(&s, 0.0, 0.02),
            *b.update(&s, 0.0, 0.02),
            "scan {i}"
        );
    }
    let mut bad = demo_map::monitor_config::<f64>();
    bad.rate_filter_time = bad.scan_period / 2.0;
    let mut slot = core::mem::MaybeUninit::uninit();
    let refused = SurgeMonitor::new(line.clone(), bad)
        .map(|_| ())
        .unwrap_err();
    assert_eq!(
        SurgeMonitor::new_in(&mut slot, line, bad).map(|_| ()),
        Err(refused)
    );
}
