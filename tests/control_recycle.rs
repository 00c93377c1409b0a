//! Recycle valve PI controller: velocity-form increments against a hand
//! calculation (Åström & Hägglund, PID Controllers, incremental form, from
//! memory), anti-windup, bumpless transfer, open-loop step, slow closing,
//! modes and fail-safe open.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use polytrope::control::{ControllerInputs, Mode, RecycleConfig, RecycleController};
use polytrope::surge::SurgeState;
use polytrope::{Measured, Quality};

const DT: f64 = 0.02;

fn config() -> RecycleConfig<f64> {
    RecycleConfig {
        scan_period: DT,
        gain: 2.0,
        integral_time: 1.0,
        closing_rate: 0.1,
        step: 0.2,
        step_line_fraction: 0.5,
        step_interval: 1.0,
        min_output: 0.0,
        max_output: 1.0,
        fail_safe_output: 1.0,
        rate_allowance: 0.0,
    }
}

/// A margin state with control margin 0.10.
fn state(margin: f64) -> SurgeState<f64> {
    let mut s = SurgeState::bad();
    s.margin = Measured::good(margin);
    s.control_margin = Measured::good(0.10);
    s.deviation = Measured::good(margin - 0.10);
    s
}

const AUTO: ControllerInputs<f64> = ControllerInputs {
    manual_output: 0.0,
    tracking_value: 0.0,
    force_open: false,
};

#[test]
fn velocity_form_matches_hand_calculation() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.2).unwrap();
    // First scan: no previous error, integral only: 2 * 0.02 / 1 * 0.01.
    let u1 = c.update(&state(0.09), &AUTO).demand.value;
    assert!((u1 - (0.2 + 0.0004)).abs() < 1e-15);
    // Second: error 0.03 (margin 0.07): Kp*(0.03-0.01) + Kp*dt/Ti*0.03.
    let u2 = c.update(&state(0.07), &AUTO).demand.value;
    assert!((u2 - (u1 + 2.0 * 0.02 + 0.04 * 0.03)).abs() < 1e-15);
}

#[test]
fn no_windup_after_long_saturation() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.5).unwrap();
    for _ in 0..500 {
        // 10 s well inside the control line (but above the step line).
        c.update(&state(0.06), &AUTO);
    }
    assert_eq!(c.output(), 1.0);
    // Back to the safe side: the valve starts closing on the first scan,
    // at the closing rate.
    let out = c.update(&state(0.30), &AUTO);
    assert!(out.rate_limited);
    assert!((out.demand.value - (1.0 - 0.1 * DT)).abs() < 1e-12);
    for _ in 0..49 {
        c.update(&state(0.30), &AUTO);
    }
    assert!((c.output() - (1.0 - 0.1 * 50.0 * DT)).abs() < 1e-9);
}

#[test]
fn open_loop_step_is_fast_and_rationed() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.1).unwrap();
    c.update(&state(0.12), &AUTO);
    let before = c.output();
    // Below the step line (0.5 * 0.10 = 0.05): one step now...
    let out = c.update(&state(0.04), &AUTO);
    assert!(out.step_applied);
    assert!(out.demand.value >= before + 0.2 - 1e-12);
    // ...and none again before step_interval has passed.
    let mut steps = 0;
    for _ in 0..(0.9 / DT) as usize {
        steps += usize::from(c.update(&state(0.04), &AUTO).step_applied);
    }
    assert_eq!(steps, 0);
    for _ in 0..10 {
        steps += usize::from(c.update(&state(0.04), &AUTO).step_applied);
    }
    assert_eq!(steps, 1);
}

#[test]
fn bumpless_manual_to_automatic_and_tracking() {
    let mut c = RecycleController::new(config(), Mode::Manual, 0.0).unwrap();
    let manual = ControllerInputs {
        manual_output: 0.37,
        ..AUTO
    };
    c.update(&state(0.10), &manual);
    assert_eq!(c.output(), 0.37);
    c.set_mode(Mode::Automatic);
    // On the control line: no bump.
    assert!((c.update(&state(0.10), &AUTO).demand.value - 0.37).abs() < 1e-15);
    c.set_mode(Mode::Tracking);
    let tracking = ControllerInputs {
        tracking_value: 0.8,
        ..AUTO
    };
    assert_eq!(c.update(&state(0.10), &tracking).demand.value, 0.8);
    c.set_mode(Mode::Automatic);
    assert!((c.update(&state(0.10), &AUTO).demand.value - 0.8).abs() < 1e-15);
}

#[test]
fn fail_safe_open_on_bad_margin_and_forced_open() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.1).unwrap();
    let out = c.update(&SurgeState::bad(), &AUTO);
    assert!(out.fail_safe);
    assert_eq!(out.demand.value, 1.0);
    assert_eq!(out.demand.quality, Quality::Uncertain);
    // NaN in a hand-made state with good quality is still never output.
    let mut s = state(0.2);
    s.deviation = Measured::new(f64::NAN, Quality::Good);
    assert!(c.update(&s, &AUTO).demand.value.is_finite());
    // Manual is not overridden by bad margin, but is by a forced open.
    c.set_mode(Mode::Manual);
    let manual = ControllerInputs {
        manual_output: 0.3,
        ..AUTO
    };
    assert_eq!(c.update(&SurgeState::bad(), &manual).demand.value, 0.3);
    let forced = ControllerInputs {
        force_open: true,
        ..manual
    };
    assert_eq!(c.update(&state(0.3), &forced).demand.value, 1.0);
}

#[test]
fn settings_are_validated() {
    let mut cfg = config();
    cfg.integral_time = 0.0;
    assert_eq!(
        RecycleController::new(cfg, Mode::Automatic, 0.0)
            .err()
            .map(|e| e.field),
        Some("recycle.integral_time")
    );
    let mut cfg = config();
    cfg.max_output = 0.0;
    assert_eq!(
        RecycleController::new(cfg, Mode::Automatic, 0.0)
            .err()
            .map(|e| e.field),
        Some("recycle.max_output")
    );
}

#[test]
fn recycle_power_and_valve_flow_consistency_by_hand() {
    use polytrope::control::{recycle_power, valve_mass_flow};
    // 2 kg/s recirculated at 100 kJ/kg actual work: 200 kW lost.
    let p = recycle_power(Measured::good(2.0_f64), Measured::good(100e3));
    assert_eq!((p.value, p.quality), (200e3, Quality::Good));
    let p = recycle_power(Measured::good(2.0_f64), Measured::new(1.0, Quality::Bad));
    assert_eq!(p.quality, Quality::Bad);
    // Consistency check, not an independent reference: the module's own
    // formula (the IEC 60534-2-1 gas form, SI) evaluated by hand: x = 0.6, Fγ xT = 0.7,
    // Y = 1 - 0.6/2.1 = 0.714 286, m = 0.01*0.5*Y*sqrt(2*5.8*0.6*5e5)
    // = 0.003 571 43 * 1865.476 = 6.662 4 kg/s.
    let m = valve_mass_flow(0.01_f64, 0.7, 0.5, 5e5, 2e5, 5.8, 1.4);
    assert!((m.value - 6.6624).abs() < 1e-3, "{}", m.value);
    assert_eq!(m.quality, Quality::Good);
    // Choked: x held at its limit, flagged uncertain.
    let m = valve_mass_flow(0.01_f64, 0.7, 0.5, 10e5, 1e5, 11.6, 1.4);
    assert_eq!(m.quality, Quality::Uncertain);
    assert_eq!(
        valve_mass_flow(f64::NAN, 0.7, 0.5, 5e5, 2e5, 5.8, 1.4).quality,
        Quality::Bad
    );
}

#[test]
fn rate_allowance_opens_earlier_when_approaching() {
    let mut cfg = config();
    cfg.rate_allowance = 1.0;
    let mut with = RecycleController::new(cfg, Mode::Automatic, 0.0).unwrap();
    let mut without = RecycleController::new(config(), Mode::Automatic, 0.0).unwrap();
    // Margin 0.16 (above the 0.10 control line) falling at 0.2 /s.
    let mut s = state(0.16);
    s.rate_of_approach = Measured::good(0.2);
    with.update(&s, &AUTO);
    without.update(&s, &AUTO);
    // Effective control line 0.10 + 0.2 = 0.30: error 0.14, integral step
    // (above the step line 0.5 * 0.30).
    assert!((with.output() - 2.0 * DT * 0.14).abs() < 1e-15);
    assert_eq!(without.output(), 0.0);
    // Moving away from surge gives no allowance.
    s.rate_of_approach = Measured::good(-0.2);
    let mut away = RecycleController::new(cfg, Mode::Automatic, 0.0).unwrap();
    away.update(&s, &AUTO);
    assert_eq!(away.output(), 0.0);
}
