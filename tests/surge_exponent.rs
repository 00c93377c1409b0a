//! The head number's exponent from measured temperatures: invariance of the
//! surge margin against physically different gases, and the filter, bounds,
//! hold and fallback of the measured σ.
//!
//! Reference: real-gas polytropic compression paths from CoolProp 8.0.0
//! (HEOS backend) in tests/reference/coolprop_polytropic.csv (generator:
//! tests/reference/gen_coolprop_polytropic.py). Each row gives the suction
//! and discharge states of a constant-efficiency polytropic path and its
//! similarity head number Y = hp/(p1 v1), integrated by the generator from
//! the equation of state without the kernel's formula.
//!
//! The invariance argument (similarity of turbomachines; Dixon & Hall,
//! *Fluid Mechanics and Thermodynamics of Turbomachinery*, ch. 1-2, from
//! memory): the same aerodynamic state has the same flow number
//! X = Δp/ps = (Q/C)²/(p1 v1) and the same head number Y = hp/(p1 v1) in
//! any gas, so the margin there is the same as at the map gas. The test
//! puts every CoolProp path at 10 % more flow than the surge line at its true
//! head number and asks the kernel for the margin from the signals a plant
//! would see (p1, p2, Δp, T1, T2): 0.10 is the answer at the map gas.
//!
//! The surge line is invented demo data: a fan-law parabola X_s = 0.02·Y
//! in map coordinates, drawn for air at 1 bar and 20 °C with the air path's
//! own exponent (85 % efficiency, ratio 3, from the CSV) as the configured
//! exponent.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use polytrope::surge::exponent::{measured_sigma, SIGMA_MAX, SIGMA_MIN};
use polytrope::surge::{
    demo_map, ExponentConfig, ExponentFault, ExponentSource, MapConditions, MonitorConfig,
    SurgeFault, SurgeLine, SurgeLineConfig, SurgeMonitor, SurgePoint, SurgeScan,
};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{Measured, Quality, Real};

const CSV: &str = include_str!("reference/coolprop_polytropic.csv");
const RU: f64 = 8314.46261815324; // J/(kmol K), CODATA 2018 (exact)
                                  // The invented surge map of the tests (`polytrope::surge::demo_map`): its
                                  // flow element and map suction state; its own line and, for the CoolProp
                                  // paths, CoolProp's air molar mass.
const C_ELEM: f64 = demo_map::FLOW_COEFFICIENT; // m2
const LINE_SLOPE: f64 = 0.02; // X_s = 0.02 Y (invented)
const MAP_P: f64 = demo_map::MAP_SUCTION_PRESSURE_PA;
const MAP_T: f64 = demo_map::MAP_SUCTION_TEMPERATURE_K;
const MAP_M: f64 = 28.9586; // CoolProp's pseudo-pure air

#[derive(Clone, Debug)]
struct Path {
    case: String,
    eta: f64,
    ratio: f64,
    p1: f64,
    t1: f64,
    z1: f64,
    p2: f64,
    t2: f64,
    head_number: f64,
}

fn paths() -> Vec<Path> {
    CSV.lines()
        .skip(1)
        .filter(|l| !l.trim().is_empty())
        .map(|l| {
            let c: Vec<&str> = l.split(',').collect();
            let f = |i: usize| c[i].parse::<f64>().unwrap();
            Path {
                case: c[0].to_string(),
                eta: f(2),
                ratio: f(3),
                p1: f(4),
                t1: f(5),
                z1: f(6),
                p2: f(8),
                t2: f(9),
                head_number: f(12),
            }
        })
        .collect()
}

/// The map gas's own exponent: air at 85 % and ratio 3 (CSV).
fn configured_n() -> f64 {
    let air = paths()
        .into_iter()
        .find(|p| p.case == "air" && p.eta == 0.85 && p.ratio == 3.0)
        .unwrap();
    let sigma = (air.t2 / air.t1).ln() / air.ratio.ln();
    1.0 / (1.0 - sigma)
}

fn monitor<T: Real>() -> SurgeMonitor<T, 6> {
    let n = configured_n();
    let sigma = (n - 1.0) / n;
    let z_map = paths().into_iter().find(|p| p.case == "air").unwrap().z1;
    let zrt = z_map * RU / MAP_M * MAP_T;
    // Points on X_s = 0.02 Y, given as the map's (Q, r) (test's own
    // inversion of the head number and of the flow number).
    let pts: Vec<SurgePoint<T>> = [0.5, 0.9, 1.3, 1.7, 2.1]
        .iter()
        .enumerate()
        .map(|(i, &y)| SurgePoint {
            speed_rpm: T::of(6000.0 + 1000.0 * i as f64),
            suction_volume_flow: T::of(C_ELEM * (LINE_SLOPE * y * zrt).sqrt()),
            pressure_ratio: T::of((1.0 + sigma * y).powf(1.0 / sigma)),
            control_margin: T::of(0.10),
        })
        .collect();
    let line = SurgeLine::new(&SurgeLineConfig {
        points: &pts,
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(T::of(MAP_P)),
            suction_temperature: Kelvin::new(T::of(MAP_T)),
            molar_mass: T::of(MAP_M),
            compressibility: T::of(z_map),
        },
        polytropic_exponent: T::of(n),
        flow_coefficient: T::of(C_ELEM),
    })
    .unwrap();
    SurgeMonitor::new(
        line,
        MonitorConfig {
            rate_filter_time: T::of(0.1),
            ..demo_map::monitor_config()
        },
    )
    .unwrap()
}

const EXPONENT: ExponentConfig<f64> = ExponentConfig {
    filter_time: 60.0,
    temperature_accuracy: 0.5,
};

fn measured<T: Real>() -> SurgeMonitor<T, 6> {
    monitor::<T>()
        .with_measured_exponent(ExponentConfig {
            filter_time: T::of(EXPONENT.filter_time),
            temperature_accuracy: T::of(EXPONENT.temperature_accuracy),
        })
        .unwrap()
}

fn scan<T: Real>(p1: f64, p2: f64, dp: f64, t1: f64, t2: f64) -> SurgeScan<T> {
    SurgeScan {
        suction_pressure: Measured::good(PressureAbs::from_pa(T::of(p1))),
        discharge_pressure: Measured::good(PressureAbs::from_pa(T::of(p2))),
        flow_dp: Measured::good(T::of(dp)),
        suction_temperature: Measured::good(Kelvin::new(T::of(t1))),
        discharge_temperature: Measured::good(Kelvin::new(T::of(t2))),
    }
}

/// The plant's signals at 10 % more flow than surge at the path's true head.
fn path_scan<T: Real>(p: &Path) -> SurgeScan<T> {
    let x = LINE_SLOPE * p.head_number * 1.1 * 1.1;
    scan(p.p1, p.p2, x * p.p1, p.t1, p.t2)
}

/// Margin errors (configured σ, measured σ) of one path, kernel in `T`.
fn errors<T: Real>(p: &Path) -> (f64, f64) {
    let s = path_scan::<T>(p);
    let configured = monitor::<T>().evaluate(&s, T::ZERO);
    assert_eq!(configured.exponent.source, ExponentSource::Configured);
    let mut m = measured::<T>();
    let mut st = *m.update(&s, T::ZERO, T::of(1.0));
    for _ in 0..90 {
        st = *m.update(&s, T::ZERO, T::of(1.0));
    }
    assert_eq!(st.exponent.source, ExponentSource::Measured, "{p:?}");
    assert_eq!(st.margin.quality, Quality::Good, "{p:?}");
    assert_eq!(st.fault, SurgeFault::None);
    (
        configured.margin.value.to_f64() - 0.10,
        st.margin.value.to_f64() - 0.10,
    )
}

#[test]
fn measured_exponent_keeps_the_margin_across_real_gases() {
    let all = paths();
    assert_eq!(all.len(), 36);
    let mut worst = std::collections::BTreeMap::<String, (f64, f64)>::new();
    println!("case           eta  ratio  error configured σ  error measured σ");
    for p in &all {
        let (ec, em) = errors::<f64>(p);
        let (_, em32) = errors::<f32>(p);
        println!(
            "{:14} {:.2} {:.1}    {ec:+.4}            {em:+.4}",
            p.case, p.eta, p.ratio
        );
        // f32 device build: same answer to the surge-margin tolerance
        // (src/tolerance.rs).
        let (_, atol) = polytrope::tolerance::SURGE_MARGIN.active();
        assert!(
            (em32 - em).abs() < atol.max(1e-4),
            "{p:?} f32 {em32} f64 {em}"
        );
        let w = worst.entry(p.case.clone()).or_insert((0.0, 0.0));
        if ec.abs() > w.0.abs() {
            w.0 = ec;
        }
        if em.abs() > w.1.abs() {
            w.1 = em;
        }
        // The stated band: with the measured σ every gas stays within 0.016
        // of the map gas's margin (largest: methane at ratio 4, where Z
        // rises from 0.95 to 1.00 along the path and the suction-Z head
        // number cannot see it).
        assert!(em.abs() <= 0.016, "{p:?}: measured-σ error {em}");
    }
    for (case, (ec, em)) in &worst {
        println!("{case:14} worst configured {ec:+.4}, measured {em:+.4}");
    }
    // Regression (measured with this CSV; before this change the configured
    // σ was the only mode, and issue 9 reported ±0.01-0.03 for CO2, methane
    // and hydrogen-rich gas and −0.05 to −0.10 for heavy gases): the
    // configured exponent of an air map is off by up to 0.035 for the light
    // gases and by 0.09-0.10, pessimistic, for the heavy gases.
    let w = |c: &str| worst[c];
    assert!(
        (w("n-butane").0 - -0.1023).abs() < 5e-4,
        "{:?}",
        w("n-butane")
    );
    assert!(
        (w("propane").0 - -0.0895).abs() < 5e-4,
        "{:?}",
        w("propane")
    );
    assert!((w("co2").0 - -0.0348).abs() < 5e-4, "{:?}", w("co2"));
    assert!((w("air").0 - 0.0303).abs() < 5e-4, "{:?}", w("air"));
    assert!((w("hydrogen-rich").0 - 0.0262).abs() < 5e-4);
    assert!((w("methane").0 - -0.0191).abs() < 5e-4);
    // The measured σ cuts the heavy-gas error tenfold.
    assert!(w("n-butane").1.abs() < 0.011 && w("propane").1.abs() < 0.009);
}

#[test]
fn sigma_bounds_and_rise_threshold() {
    let t = |k: f64| Measured::good(Kelvin::new(k));
    // Plain ideal-gas case: T2/T1 = r^0.3.
    let s = measured_sigma(t(300.0), t(300.0 * 3.0_f64.powf(0.3)), 3.0, 0.5).unwrap();
    assert!((s - 0.3).abs() < 1e-12);
    // The bounds follow from k in [1.05, 5/3] and η_p in [0.5, 1].
    // (k − 1)/(k η_p) at the corners: k = 1.05 with η_p = 1, and k = 5/3
    // with η_p = 0.5 (just inside 0.80), are accepted.
    for (k, eta) in [(1.05_f64, 1.0_f64), (5.0 / 3.0, 0.5001)] {
        let sg = (k - 1.0) / (k * eta);
        let r = 4.0_f64;
        let got = measured_sigma(t(300.0), t(300.0 * r.powf(sg)), r, 0.5).unwrap();
        assert!((got - sg).abs() < 1e-12 && (SIGMA_MIN..=SIGMA_MAX).contains(&got));
    }
    assert_eq!(
        measured_sigma(t(300.0), t(300.0 * 3.0_f64.powf(0.9)), 3.0, 0.5),
        Err(ExponentFault::OutOfBounds)
    );
    assert_eq!(
        measured_sigma(t(300.0), t(300.0 * 3.0_f64.powf(0.03)), 3.0, 0.1),
        Err(ExponentFault::OutOfBounds)
    );
    // Rise below 20 δT: 9.9 K with δT = 0.5 K is too small, 10 K is enough.
    assert_eq!(
        measured_sigma(t(300.0), t(309.9), 1.12, 0.5),
        Err(ExponentFault::RiseTooSmall)
    );
    assert!(measured_sigma(t(300.0), t(310.0), 1.12, 0.5).is_ok());
    // Discharge colder than suction, or no ratio: too small a rise.
    assert_eq!(
        measured_sigma(t(300.0), t(290.0), 2.0, 0.5),
        Err(ExponentFault::RiseTooSmall)
    );
    assert_eq!(
        measured_sigma(t(300.0), t(350.0), 1.0, 0.5),
        Err(ExponentFault::RiseTooSmall)
    );
    // Uncertain, NaN or zero temperatures are not used.
    let unc = Measured::new(Kelvin::new(350.0), Quality::Uncertain);
    assert_eq!(
        measured_sigma(t(300.0), unc, 2.0, 0.5),
        Err(ExponentFault::InputBad)
    );
    assert_eq!(
        measured_sigma(t(f64::NAN), t(350.0), 2.0, 0.5),
        Err(ExponentFault::InputBad)
    );
    assert_eq!(
        measured_sigma(t(0.0), t(350.0), 2.0, 0.5),
        Err(ExponentFault::InputBad)
    );
}

/// Signals of an ideal gas with σ = `sigma` at ratio `r`, 20 % above surge.
fn ideal(r: f64, sigma: f64) -> SurgeScan<f64> {
    let y = (r.powf(sigma) - 1.0) / sigma;
    let x = LINE_SLOPE * y * 1.2 * 1.2;
    scan(1.0e5, r * 1.0e5, x * 1.0e5, 300.0, 300.0 * r.powf(sigma))
}

#[test]
fn settling_hold_and_fallback() {
    let mut m = measured::<f64>();
    let cfg_sigma = m.line().sigma();
    // Before any sample: fallback to the configured σ, uncertain.
    assert_eq!(m.exponent().source, ExponentSource::Fallback);
    // First samples: measured σ, uncertain while the filter settles (60 s).
    let st = *m.update(&ideal(3.0, 0.25), 0.0, 1.0);
    assert_eq!(st.exponent.source, ExponentSource::Measured);
    assert_eq!(st.exponent.fault, ExponentFault::Settling);
    assert_eq!(st.margin.quality, Quality::Uncertain);
    assert_eq!(st.fault, SurgeFault::Exponent);
    assert!((st.exponent.sigma.value - 0.25).abs() < 1e-12);
    for _ in 0..60 {
        m.update(&ideal(3.0, 0.25), 0.0, 1.0);
    }
    let st = *m.state();
    assert_eq!(st.exponent.sigma.quality, Quality::Good);
    assert_eq!(st.margin.quality, Quality::Good);
    assert!((st.margin.value - 0.2).abs() < 1e-9, "{}", st.margin.value);
    // Discharge temperature fails: σ held (uncertain) for one filter time
    // constant, then the configured σ (uncertain).
    let mut bad = ideal(3.0, 0.25);
    bad.discharge_temperature.quality = Quality::Bad;
    let st = *m.update(&bad, 0.0, 1.0);
    assert_eq!(st.exponent.source, ExponentSource::Held);
    assert_eq!(st.exponent.fault, ExponentFault::InputBad);
    assert!((st.exponent.sigma.value - 0.25).abs() < 1e-12);
    assert!((st.margin.value - 0.2).abs() < 1e-9);
    assert_eq!(st.margin.quality, Quality::Uncertain);
    for _ in 0..60 {
        m.update(&bad, 0.0, 1.0);
    }
    let st = *m.state();
    assert_eq!(st.exponent.source, ExponentSource::Fallback);
    assert_eq!(st.exponent.sigma.value, cfg_sigma);
    assert_eq!(st.margin.quality, Quality::Uncertain);
    assert!(st.margin.value.is_finite());
    // Back: the filter restarts from the new sample (the gas may have
    // changed during the gap) and settles again.
    let st = *m.update(&ideal(3.0, 0.15), 0.0, 1.0);
    assert_eq!(st.exponent.fault, ExponentFault::Settling);
    assert!((st.exponent.sigma.value - 0.15).abs() < 1e-12);
    // Low ratio (rise below 20 δT = 10 K): held, then fallback.
    let mut m = measured::<f64>();
    for _ in 0..61 {
        m.update(&ideal(1.05, 0.3), 0.0, 1.0);
    }
    assert_eq!(m.exponent().fault, ExponentFault::RiseTooSmall);
    assert_eq!(m.exponent().source, ExponentSource::Fallback);
    // Implausible σ from the temperatures.
    let mut m = measured::<f64>();
    let mut hot = ideal(3.0, 0.3);
    hot.discharge_temperature = Measured::good(Kelvin::new(300.0 * 3.0_f64.powf(0.95)));
    m.update(&hot, 0.0, 1.0);
    assert_eq!(m.exponent().fault, ExponentFault::OutOfBounds);
    assert_eq!(m.exponent().source, ExponentSource::Fallback);
}

#[test]
fn filter_works_in_seconds_and_survives_clock_faults() {
    // A step of σ from 0.25 to 0.30 after settling: after one time
    // constant (60 s) the filter has moved 1 − 1/e of the way, whether the
    // scans come every 0.1 s or every 1 s (first order, dt/(τ + dt) form).
    let run = |dt: f64| {
        let mut m = measured::<f64>();
        let n = (120.0 / dt) as usize;
        for _ in 0..n {
            m.update(&ideal(3.0, 0.25), 0.0, dt);
        }
        for _ in 0..(60.0 / dt) as usize {
            m.update(&ideal(3.0, 0.30), 0.0, dt);
        }
        (m.exponent().sigma.value - 0.25) / 0.05
    };
    let (fast, slow) = (run(0.1), run(1.0));
    let expected = 1.0 - (-1.0_f64).exp();
    assert!((fast - expected).abs() < 0.005, "{fast}");
    assert!((slow - expected).abs() < 0.01, "{slow}");
    // NaN, zero, negative or infinite dt: no panic, σ finite and in bounds.
    let mut m = measured::<f32>();
    for dt in [f32::NAN, 0.0, -1.0, f32::INFINITY, 1e30, 1.0] {
        let s = ideal(2.5, 0.28);
        let s32 = scan::<f32>(
            s.suction_pressure.value.pa(),
            s.discharge_pressure.value.pa(),
            s.flow_dp.value,
            s.suction_temperature.value.kelvin(),
            s.discharge_temperature.value.kelvin(),
        );
        let st = *m.update(&s32, 0.0, dt);
        let sg = st.exponent.sigma.value as f64;
        assert!(
            sg.is_finite() && (SIGMA_MIN..=SIGMA_MAX).contains(&sg),
            "{dt}: {sg}"
        );
        assert!(st.margin.value.is_finite());
    }
}

#[test]
fn configured_mode_ignores_temperatures_and_settings_are_checked() {
    // Configured mode: temperatures are not read; a bad one changes nothing.
    let m = monitor::<f64>();
    let mut s = ideal(2.5, 0.28);
    let a = m.evaluate(&s, 0.0);
    s.discharge_temperature = Measured::new(Kelvin::new(f64::NAN), Quality::Bad);
    let b = m.evaluate(&s, 0.0);
    assert_eq!(a, b);
    assert_eq!(b.margin.quality, Quality::Good);
    assert_eq!(b.exponent.source, ExponentSource::Configured);
    let pressures = SurgeScan::pressures_only(s.suction_pressure, s.discharge_pressure, s.flow_dp);
    assert_eq!(m.evaluate(&pressures, 0.0).margin, a.margin);
    // Settings outside their ranges are refused, naming the field.
    for (cfg, field) in [
        (
            ExponentConfig {
                filter_time: 0.1,
                ..EXPONENT
            },
            "surge_monitor.exponent.filter_time",
        ),
        (
            ExponentConfig {
                filter_time: f64::NAN,
                ..EXPONENT
            },
            "surge_monitor.exponent.filter_time",
        ),
        (
            ExponentConfig {
                temperature_accuracy: 0.0,
                ..EXPONENT
            },
            "surge_monitor.exponent.temperature_accuracy",
        ),
        (
            ExponentConfig {
                temperature_accuracy: 50.0,
                ..EXPONENT
            },
            "surge_monitor.exponent.temperature_accuracy",
        ),
    ] {
        let e = monitor::<f64>().with_measured_exponent(cfg).err().unwrap();
        assert_eq!(e.field, field);
    }
    // Reset returns to the fallback.
    let mut m = measured::<f64>();
    for _ in 0..70 {
        m.update(&ideal(3.0, 0.25), 0.0, 1.0);
    }
    assert_eq!(m.exponent().source, ExponentSource::Measured);
    m.reset();
    assert_eq!(m.exponent().source, ExponentSource::Fallback);
}
