//! Regressions of issue 9 on the kernel's surge path (defects 1, 2, 5, 9,
//! 11, 12 and the nonsense settings), and the seeded noise soak of the
//! monitor + controller chain. Today's values (measured on the code before
//! this change, or as the adversarial run reported them) are in the
//! comments. The map and every operating point are invented demo data.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use polytrope::control::{
    ControllerInputs, Mode, RecycleConfig, RecycleController, UncertainMargin,
};
use polytrope::signal::cross_check::{mass_balance, DischargeTemperatureConfig};
use polytrope::surge::{
    demo_map, DetectionConfig, DetectionScan, MonitorConfig, SurgeDetector, SurgeFault, SurgeLine,
    SurgeMonitor, SurgeScan,
};
use polytrope::units::PressureAbs;
use polytrope::{Measured, Quality};

const RU: f64 = 8_314.462_618_153_24; // J/(kmol K), CODATA 2018 (exact)
const C_ELEM: f64 = demo_map::FLOW_COEFFICIENT; // m2, in Δp = ρ (Q/C)²
const PS: f64 = demo_map::MAP_SUCTION_PRESSURE_PA;
const TS: f64 = demo_map::MAP_SUCTION_TEMPERATURE_K;
const M_AIR: f64 = demo_map::MAP_MOLAR_MASS;

/// The monitor on the crate's invented surge map (`surge::demo_map`).
fn monitor() -> SurgeMonitor<f64, 4> {
    let points = demo_map::points::<f64>();
    let line = SurgeLine::new(&demo_map::line_config(&points)).unwrap();
    SurgeMonitor::new(line, demo_map::monitor_config()).unwrap()
}

/// Flow element Δp of air at the map's suction for volume flow `q` (m³/s):
/// Δp = ρ (q/C)², ρ = p M / (R T) (ideal gas; the orifice law, not the
/// kernel's transform).
fn dp_of(q: f64) -> f64 {
    let rho = PS * M_AIR / (RU * TS);
    rho * (q / C_ELEM) * (q / C_ELEM)
}

fn scan(ps: f64, pd: f64, dp: f64) -> SurgeScan<f64> {
    SurgeScan::pressures_only(
        Measured::good(PressureAbs::from_pa(ps)),
        Measured::good(PressureAbs::from_pa(pd)),
        Measured::good(dp),
    )
}

/// The surge-sim tuning (examples-host/src/greitzer.rs).
fn sim_controller() -> RecycleController<f64> {
    RecycleController::new(
        RecycleConfig {
            scan_period: 0.02,
            gain: 2.0,
            integral_time: 2.0,
            closing_rate: 0.05,
            quick_open_step: 0.15,
            quick_open_fraction: 0.5,
            quick_open_interval: 1.0,
            min_output: 0.0,
            max_output: 1.0,
            fail_safe_output: 1.0,
            anticipation_time: 3.0,
            anticipation_threshold: 0.1,
            on_uncertain: UncertainMargin::HoldOrOpen,
        },
        Mode::Automatic,
        0.0,
    )
    .unwrap()
}

const AUTO: ControllerInputs<f64> = ControllerInputs {
    manual_output: 0.0,
    tracking_value: 0.0,
    force_open: false,
};

/// xorshift64* with Box–Muller (Marsaglia 2003; Box & Muller 1958, from
/// memory): a seeded standard normal source for the soak.
struct Gauss(u64);
impl Gauss {
    fn uniform(&mut self) -> f64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        ((x.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    fn next(&mut self) -> f64 {
        let (u1, u2) = (self.uniform(), self.uniform());
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

/// Defect 2. Today: suction and discharge pressure in bar where Pa is
/// expected give margin 389.8, *good*, and the controller closes the valve.
#[test]
fn an_impossible_flow_dp_over_suction_pressure_is_bad() {
    let mut m = monitor();
    let st = *m.update(&scan(1.0, 2.2, 2500.0), 0.0, 0.02);
    assert_eq!(st.margin.quality, Quality::Bad);
    assert_eq!(st.fault, SurgeFault::FlowDpImpossible);
    let mut c = sim_controller();
    let out = c.update(&st, &AUTO, 0.02);
    assert!(out.fail_safe && out.demand.value == 1.0);
    assert_ne!(out.demand.quality, Quality::Good);
    // Between the ISO 5167 validity bound (0.25) and the choke bound
    // (0.52): usable but uncertain.
    let st = m.evaluate(&scan(PS, 1.8 * PS, 0.3 * PS), 0.0);
    assert_eq!(st.margin.quality, Quality::Uncertain);
    assert_eq!(st.fault, SurgeFault::FlowDpOutsideValidity);
    // Discharge below suction: bad.
    let st = m.evaluate(&scan(PS, 0.9 * PS, dp_of(2.0)), 0.0);
    assert_eq!(st.margin.quality, Quality::Bad);
    assert_eq!(st.fault, SurgeFault::DischargeBelowSuction);
    // Beyond the mapped ratios: uncertain, with the reason.
    let st = m.evaluate(&scan(PS, 3.0 * PS, dp_of(3.0)), 0.0);
    assert_eq!(st.margin.quality, Quality::Uncertain);
    assert_eq!(st.fault, SurgeFault::BeyondMap);
    // A plausible point stays good.
    let st = m.evaluate(&scan(PS, 2.0 * PS, dp_of(2.2)), 0.0);
    assert_eq!(
        (st.margin.quality, st.fault),
        (Quality::Good, SurgeFault::None)
    );
}

fn detector(scan_period: f64) -> SurgeDetector<f64, 32, 4> {
    SurgeDetector::new(DetectionConfig {
        scan_period,
        window: 0.64,
        flow_lag: 0.1,
        flow_dp_drop: 0.5,
        min_flow_dp: 200.0,
        pressure_rise_drop: 0.1,
        suction_temperature_rise: 3.0,
        holdoff: 0.5,
        added_margin_per_cycle: 0.03,
        max_added_margin: 0.09,
        trip_count: 3,
        trip_window: 60.0,
    })
    .unwrap()
}

fn det_scan(dp: f64, ps: f64, pd: f64) -> DetectionScan<f64> {
    DetectionScan {
        flow_dp: Measured::good(dp),
        suction_pressure: Measured::good(PressureAbs::from_pa(ps)),
        discharge_pressure: Measured::good(PressureAbs::from_pa(pd)),
        suction_temperature: None,
    }
}

/// Defect 5. Today one garbage but "good" sample (Δp = discharge pressure
/// = f32::MAX for one scan) creates a surge event, moves the control line
/// and counts toward a trip.
#[test]
fn a_single_sample_excursion_cannot_create_a_surge_event() {
    let mut d = SurgeDetector::<f32, 32, 4>::new(DetectionConfig {
        scan_period: 0.02,
        window: 0.64,
        flow_lag: 0.1,
        flow_dp_drop: 0.5,
        min_flow_dp: 200.0,
        pressure_rise_drop: 0.1,
        suction_temperature_rise: 3.0,
        holdoff: 0.5,
        added_margin_per_cycle: 0.03,
        max_added_margin: 0.09,
        trip_count: 3,
        trip_window: 60.0,
    })
    .unwrap();
    let s = |dp: f32, pd: f32| DetectionScan {
        flow_dp: Measured::good(dp),
        suction_pressure: Measured::good(PressureAbs::from_pa(1.0e5)),
        discharge_pressure: Measured::good(PressureAbs::from_pa(pd)),
        suction_temperature: None,
    };
    for k in 0..500 {
        let st = if k == 100 {
            *d.update(&s(f32::MAX, f32::MAX), 0.02)
        } else if k == 300 {
            // ...nor a single dropout.
            *d.update(&s(0.0, 1.0e5), 0.02)
        } else {
            *d.update(&s(3000.0, 2.0e5), 0.02)
        };
        assert!(!st.surge_this_scan, "scan {k}");
    }
    assert_eq!(d.state().event_count, 0);
    assert_eq!(d.state().added_margin, 0.0);
    // The monitor calls the same sample bad, not good.
    let st = monitor().evaluate(&scan(1.0e5, f64::from(f32::MAX), f64::from(f32::MAX)), 0.0);
    assert_eq!(st.margin.quality, Quality::Bad);
}

/// Defect 9. Today the detection window is 32 scans: at 100 ms scans it
/// spans 3.2 s and a slow 3 s process ramp (flow falling 60 %, discharge
/// pressure falling 20 % of the rise) is counted as a surge event. Here the
/// window is 0.64 s at every scan period.
#[test]
fn a_slow_process_ramp_is_not_surge_at_any_scan_period() {
    for period in [0.001, 0.02, 0.1] {
        let mut d = detector(period);
        let n_ramp = (3.0 / period) as usize;
        let mut events = 0;
        for k in 0..(2 * n_ramp) {
            let f = (k as f64 / n_ramp as f64).min(1.0);
            let dp = 5000.0 * (1.0 - 0.6 * f);
            let pd = 2.0e5 - 0.2 * 1.0e5 * f;
            events += u32::from(d.update(&det_scan(dp, 1.0e5, pd), period).surge_this_scan);
        }
        assert_eq!(events, 0, "{period} s");
    }
}

/// Defect 11. Today the pressure test is 2 % of the absolute discharge
/// pressure (3 % in the tests' tuning): on a 60 bar suction, ratio 1.15
/// machine a mild cycle that drops discharge pressure by 15 % of the rise
/// (2 % of pd) is missed. Relative to the rise, it is detected.
#[test]
fn a_mild_cycle_on_a_high_pressure_low_ratio_machine_is_detected() {
    let ps = 60.0e5;
    let pd0 = 1.15 * ps;
    let rise = pd0 - ps;
    let mut d = detector(0.01);
    let mut events = 0;
    for _ in 0..100 {
        events += u32::from(d.update(&det_scan(20_000.0, ps, pd0), 0.01).surge_this_scan);
    }
    for i in 1..=10 {
        let f = f64::from(i) / 10.0;
        let dp = 20_000.0 * (1.0 - 0.8 * f);
        let pd = pd0 - 0.15 * rise * f;
        events += u32::from(d.update(&det_scan(dp, ps, pd), 0.01).surge_this_scan);
    }
    assert!((0.15 * rise / pd0 - 0.0196).abs() < 1e-3, "2 % of pd");
    assert_eq!(events, 1);
}

/// Defect 1 (seeded soak, bounded: 30 000 scans, 10 minutes of machine
/// time). Today, with the surge-sim tuning and margin noise σ = 0.004 at a
/// point 25 % in flow on the safe side of the control line, the demand
/// reaches 0.91 after 10 s and stays near 1. Here: Δp noise σ = 0.8 % of
/// the reading (margin σ about 0.005), pressure noise 100 / 200 Pa, three
/// seeds, through the kernel's monitor (its rate filter) and controller:
/// the demand never leaves 0 and no fast opening fires.
#[test]
fn noise_soak_keeps_the_valve_closed_far_from_surge() {
    for seed in [11_u64, 22, 33] {
        let mut g = Gauss(seed);
        let mut m = monitor();
        let mut c = sim_controller();
        // Ratio 2.0 (surge flow 1.82 m³/s, control line 0.10): 1.35 × the
        // surge flow, 25 % in flow above the control line.
        let q = 1.82 * 1.35;
        let dp0 = dp_of(q);
        let mut worst = 0.0_f64;
        let mut quick = 0;
        let mut anticipating = 0;
        for _ in 0..30_000 {
            let s = scan(
                PS + 100.0 * g.next(),
                2.0 * PS + 200.0 * g.next(),
                dp0 * (1.0 + 0.008 * g.next()),
            );
            let st = *m.update(&s, 0.0, 0.02);
            let out = c.update(&st, &AUTO, 0.02);
            worst = worst.max(out.demand.value);
            quick += u32::from(out.quick_opened);
            anticipating += u32::from(out.anticipation > 0.0);
            assert!(out.demand.quality.is_usable());
        }
        println!("seed {seed}: largest demand {worst}, anticipating scans {anticipating}");
        assert_eq!(worst, 0.0, "seed {seed}");
        assert_eq!(quick, 0);
    }
}

/// Defect 12. Today only positive raw 8-sample slopes count and the
/// allowance also moves the fast-opening line, so noise turns into a
/// one-sided bias and fires steps. Here, at a steady point 5 % in flow
/// above the control line with the same noise, the filtered rate stays
/// under the anticipation threshold in at least 99.9 % of scans and the
/// fast opening never fires.
#[test]
fn rate_noise_does_not_bias_the_control_line() {
    let mut g = Gauss(7);
    let mut m = monitor();
    let mut c = sim_controller();
    let q = 1.82 * 1.15;
    let dp0 = dp_of(q);
    let (mut anticipating, mut quick, mut n) = (0u32, 0u32, 0u32);
    for _ in 0..20_000 {
        let s = scan(
            PS + 100.0 * g.next(),
            2.0 * PS + 200.0 * g.next(),
            dp0 * (1.0 + 0.008 * g.next()),
        );
        let st = *m.update(&s, 0.0, 0.02);
        let out = c.update(&st, &AUTO, 0.02);
        anticipating += u32::from(out.anticipation > 0.0);
        quick += u32::from(out.quick_opened);
        n += 1;
    }
    println!("anticipating in {anticipating} of {n} scans");
    assert!(f64::from(anticipating) / f64::from(n) < 1e-3);
    assert_eq!(quick, 0);
}

/// Issue 9's list of nonsense settings accepted today, each refused naming
/// the field.
#[test]
fn nonsense_settings_are_refused_naming_the_field() {
    let line = monitor().line().clone();
    let mon = |scan_period: f64, rate_filter_time: f64| {
        SurgeMonitor::<f64, 4>::new(
            line.clone(),
            MonitorConfig {
                scan_period,
                time_to_surge_horizon: 60.0,
                rate_filter_time,
            },
        )
        .err()
        .map(|e| e.field)
    };
    assert_eq!(mon(1e-30, 0.05), Some("surge_monitor.scan_period"));
    assert_eq!(mon(1e30, 0.05), Some("surge_monitor.scan_period"));
    assert_eq!(mon(0.02, 0.001), Some("surge_monitor.rate_filter_time"));
    let base = DetectionConfig {
        scan_period: 0.02,
        window: 0.64,
        flow_lag: 0.1,
        flow_dp_drop: 0.5,
        min_flow_dp: 200.0,
        pressure_rise_drop: 0.1,
        suction_temperature_rise: 3.0,
        holdoff: 0.5,
        added_margin_per_cycle: 0.03,
        max_added_margin: 0.09,
        trip_count: 3,
        trip_window: 60.0,
    };
    let det = |f: &dyn Fn(&mut DetectionConfig<f64>)| {
        let mut c = base;
        f(&mut c);
        SurgeDetector::<f64, 32, 4>::new(c).err().map(|e| e.field)
    };
    assert_eq!(det(&|_| ()), None);
    assert_eq!(
        det(&|c| c.scan_period = 1e-30),
        Some("surge_detection.scan_period")
    );
    assert_eq!(det(&|c| c.holdoff = 1e30), Some("surge_detection.holdoff"));
    assert_eq!(
        det(&|c| c.min_flow_dp = 1e30),
        Some("surge_detection.min_flow_dp")
    );
    assert_eq!(
        det(&|c| c.max_added_margin = 5.0),
        Some("surge_detection.max_added_margin")
    );
    // A window shorter than 4 flow-measurement lags cannot hold a lagged
    // collapse.
    assert_eq!(det(&|c| c.window = 0.3), Some("surge_detection.window"));
    let dtc = DischargeTemperatureConfig {
        tolerance_k: 5.0,
        smoothing: 0.1,
        relearn_scans: 0,
    };
    assert_eq!(
        dtc.validate().err().map(|e| e.field),
        Some("cross_check.relearn_scans")
    );
    // A NaN or negative mass-balance tolerance cannot check: every usable
    // flow is marked uncertain (today: nothing is marked, the check passes).
    for tol in [f64::NAN, -0.1] {
        let mut flows = [Some(Measured::good(10.0)), Some(Measured::good(10.0)), None];
        assert_eq!(mass_balance(&mut flows, &[0.0; 3], tol), 2);
        assert_eq!(flows[0].unwrap().quality, Quality::Uncertain);
    }
}
