//! Recycle valve PI controller: position-form PI against a hand calculation
//! (Åström & Hägglund, PID Controllers, 2nd ed., position form with
//! back-calculation, from memory), anti-windup, bumpless transfer, fast
//! opening, slow closing, modes, fail-safe open, measured scan time, and
//! the regressions of issue 9 (defects 1, 3, 4, 7, 12: today's values in the
//! comments are those measured on the code before this change).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use polytrope::control::{
    ControllerInputs, Mode, RecycleConfig, RecycleController, UncertainMargin,
};
use polytrope::surge::SurgeState;
use polytrope::{Measured, Problem, Quality};

const DT: f64 = 0.02;

fn config() -> RecycleConfig<f64> {
    RecycleConfig {
        scan_period: DT,
        gain: 2.0,
        integral_time: 1.0,
        closing_rate: 0.1,
        quick_open_step: 0.2,
        quick_open_fraction: 0.5,
        quick_open_interval: 1.0,
        min_output: 0.0,
        max_output: 1.0,
        fail_safe_output: 1.0,
        anticipation_time: 0.0,
        anticipation_threshold: 0.0,
        on_uncertain: UncertainMargin::HoldOrOpen,
    }
}

/// A margin state with control margin 0.10.
fn state(margin: f64) -> SurgeState<f64> {
    let mut s = SurgeState::bad();
    s.margin = Measured::good(margin);
    s.control_margin = Measured::good(0.10);
    s.clearance = Measured::good(margin - 0.10);
    s.fault = polytrope::surge::SurgeFault::None;
    s
}

const AUTO: ControllerInputs<f64> = ControllerInputs {
    manual_output: 0.0,
    tracking_value: 0.0,
    force_open: false,
};

#[test]
fn position_form_matches_hand_calculation() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.2).unwrap();
    // e = 0.01: I = 0.2 + 2*0.02/1*0.01 = 0.2004; u = 2*0.01 + I.
    let u1 = c.update(&state(0.09), &AUTO, DT).demand.value;
    assert!((u1 - 0.2204).abs() < 1e-15, "{u1}");
    // e = 0.03: I = 0.2004 + 0.04*0.03 = 0.2016; u = 0.06 + I.
    let u2 = c.update(&state(0.07), &AUTO, DT).demand.value;
    assert!((u2 - 0.2616).abs() < 1e-15, "{u2}");
}

#[test]
fn no_windup_after_long_saturation() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.5).unwrap();
    for _ in 0..500 {
        // 10 s well inside the control line (but above the quick-open line).
        c.update(&state(0.06), &AUTO, DT);
    }
    assert_eq!(c.output(), 1.0);
    // Back to the safe side: the valve starts closing on the first scan,
    // at the closing rate, and keeps closing at it.
    let out = c.update(&state(0.30), &AUTO, DT);
    assert!(out.rate_limited);
    assert!((out.demand.value - (1.0 - 0.1 * DT)).abs() < 1e-12);
    for _ in 0..49 {
        c.update(&state(0.30), &AUTO, DT);
    }
    assert!((c.output() - (1.0 - 0.1 * 50.0 * DT)).abs() < 1e-9);
    // And it closes fully (no integral left holding it open).
    for _ in 0..1000 {
        c.update(&state(0.30), &AUTO, DT);
    }
    assert_eq!(c.output(), 0.0);
}

#[test]
fn quick_opening_is_fast_and_rationed() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.1).unwrap();
    c.update(&state(0.12), &AUTO, DT);
    let before = c.output();
    // Below the quick-open line (0.5 * 0.10 = 0.05): one step now...
    let out = c.update(&state(0.04), &AUTO, DT);
    assert!(out.quick_opened);
    assert!(out.demand.value >= before + 0.2 - 1e-12);
    // ...and none again before quick_open_interval has passed.
    let mut steps = 0;
    for _ in 0..(0.9 / DT) as usize {
        steps += usize::from(c.update(&state(0.04), &AUTO, DT).quick_opened);
    }
    assert_eq!(steps, 0);
    for _ in 0..10 {
        steps += usize::from(c.update(&state(0.04), &AUTO, DT).quick_opened);
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
    c.update(&state(0.10), &manual, DT);
    assert_eq!(c.output(), 0.37);
    c.set_mode(Mode::Automatic);
    // On the control line: no bump.
    assert!((c.update(&state(0.10), &AUTO, DT).demand.value - 0.37).abs() < 1e-15);
    c.set_mode(Mode::Tracking);
    let tracking = ControllerInputs {
        tracking_value: 0.8,
        ..AUTO
    };
    assert_eq!(c.update(&state(0.10), &tracking, DT).demand.value, 0.8);
    c.set_mode(Mode::Automatic);
    assert!((c.update(&state(0.10), &AUTO, DT).demand.value - 0.8).abs() < 1e-15);
    // Off the line, the integral took the proportional part into account.
    c.set_mode(Mode::Manual);
    let manual = ControllerInputs {
        manual_output: 0.5,
        ..AUTO
    };
    c.update(&state(0.20), &manual, DT);
    c.set_mode(Mode::Automatic);
    let u = c.update(&state(0.20), &AUTO, DT).demand.value;
    // The integral took the proportional part into account: the PI asks
    // for 0.5 - 2 * 0.02 * 0.1 = 0.496, and the closing rate allows 0.498.
    assert!((u - (0.5 - 0.1 * DT)).abs() < 1e-12, "{u}");
}

#[test]
fn fail_safe_open_on_bad_margin_and_forced_open() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.1).unwrap();
    let out = c.update(&SurgeState::bad(), &AUTO, DT);
    assert!(out.fail_safe);
    assert_eq!(out.demand.value, 1.0);
    assert_eq!(out.demand.quality, Quality::Uncertain);
    // NaN in a hand-made state with good quality is still never output.
    let mut s = state(0.2);
    s.clearance = Measured::new(f64::NAN, Quality::Good);
    let out = c.update(&s, &AUTO, DT);
    assert!(out.demand.value.is_finite() && out.fail_safe);
    // Manual is not overridden by bad margin, but is by a forced open.
    c.set_mode(Mode::Manual);
    let manual = ControllerInputs {
        manual_output: 0.3,
        ..AUTO
    };
    assert_eq!(c.update(&SurgeState::bad(), &manual, DT).demand.value, 0.3);
    let forced = ControllerInputs {
        force_open: true,
        ..manual
    };
    assert_eq!(c.update(&state(0.3), &forced, DT).demand.value, 1.0);
}

#[test]
fn settings_are_validated_with_the_field_named() {
    let err = |f: &dyn Fn(&mut RecycleConfig<f64>)| {
        let mut cfg = config();
        f(&mut cfg);
        RecycleController::new(cfg, Mode::Automatic, 0.0)
            .err()
            .map(|e| e.field)
    };
    let named = |field: &'static str| Some(field);
    assert_eq!(err(&|_| ()), None);
    assert_eq!(
        err(&|c| c.integral_time = 0.0),
        named("recycle.integral_time")
    );
    assert_eq!(err(&|c| c.max_output = 0.0), named("recycle.max_output"));
    // Issue 9, defect 4: today fail_safe_output = 0 (or below min_output)
    // is accepted, so forced-open and bad-margin fail-safe close the valve.
    assert_eq!(
        err(&|c| c.fail_safe_output = 0.0),
        named("recycle.fail_safe_output")
    );
    assert_eq!(
        err(&|c| {
            c.min_output = 0.2;
            c.fail_safe_output = 0.1;
        }),
        named("recycle.fail_safe_output")
    );
    assert_eq!(
        err(&|c| {
            c.max_output = 0.9;
            c.fail_safe_output = 0.8;
        }),
        named("recycle.fail_safe_output")
    );
    // Issue 9: nonsense accepted today (scan period 1e-30 or 1e30 s, gain
    // 1e30).
    assert_eq!(
        err(&|c| c.scan_period = 1e-30),
        named("recycle.scan_period")
    );
    assert_eq!(err(&|c| c.scan_period = 1e30), named("recycle.scan_period"));
    assert_eq!(err(&|c| c.gain = 1e30), named("recycle.gain"));
    assert_eq!(err(&|c| c.gain = f64::NAN), named("recycle.gain"));
    assert_eq!(
        err(&|c| c.anticipation_time = 1e3),
        named("recycle.anticipation_time")
    );
    assert_eq!(
        err(&|c| c.quick_open_fraction = 1.0),
        named("recycle.quick_open_fraction")
    );
    // The problem says what is wrong, with the range.
    let mut cfg = config();
    cfg.fail_safe_output = 0.5;
    let e = RecycleController::new(cfg, Mode::Automatic, 0.0)
        .err()
        .unwrap();
    assert_eq!(
        e.problem,
        Problem::Inconsistent {
            with: "recycle.max_output"
        }
    );
    let mut cfg = config();
    cfg.gain = f64::NAN;
    let e = RecycleController::new(cfg, Mode::Automatic, 0.0)
        .err()
        .unwrap();
    assert_eq!(e.problem, Problem::NotFinite);
    let mut cfg = config();
    cfg.max_output = 0.0;
    let e = RecycleController::new(cfg, Mode::Automatic, 0.0)
        .err()
        .unwrap();
    assert!(matches!(e.problem, Problem::NotAbove { .. }));
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
fn anticipation_opens_earlier_when_approaching() {
    let mut cfg = config();
    cfg.anticipation_time = 1.0;
    let mut with = RecycleController::new(cfg, Mode::Automatic, 0.0).unwrap();
    let mut without = RecycleController::new(config(), Mode::Automatic, 0.0).unwrap();
    // Margin 0.16 (above the 0.10 control line) falling at 0.2 /s.
    let mut s = state(0.16);
    s.rate_of_approach = Measured::good(0.2);
    let out = with.update(&s, &AUTO, DT);
    without.update(&s, &AUTO, DT);
    // Anticipation 1 s * 0.2/s = 0.2: e = 0.2 - 0.06 = 0.14,
    // I = 2*0.02*0.14 = 0.0056, u = 2*0.14 + I (above the quick-open line
    // 0.5 * 0.30).
    assert!((out.anticipation - 0.2).abs() < 1e-15);
    assert!((with.output() - 0.2856).abs() < 1e-12, "{}", with.output());
    assert_eq!(without.output(), 0.0);
    // Above a threshold of 0.1/s only the excess counts: 0.1 anticipation.
    cfg.anticipation_threshold = 0.1;
    let mut gated = RecycleController::new(cfg, Mode::Automatic, 0.0).unwrap();
    assert!((gated.update(&s, &AUTO, DT).anticipation - 0.1).abs() < 1e-15);
    // Moving away from surge gives none; nor does an uncertain rate.
    s.rate_of_approach = Measured::good(-0.2);
    let mut away = RecycleController::new(cfg, Mode::Automatic, 0.0).unwrap();
    away.update(&s, &AUTO, DT);
    assert_eq!(away.output(), 0.0);
    s.rate_of_approach = Measured::new(5.0, Quality::Uncertain);
    let mut unsure = RecycleController::new(cfg, Mode::Automatic, 0.0).unwrap();
    assert_eq!(unsure.update(&s, &AUTO, DT).anticipation, 0.0);
}

/// Issue 9, defect 3: today an uncertain margin gives a *good* demand.
#[test]
fn uncertain_margin_gives_uncertain_demand_and_the_configured_action() {
    let mut s = state(0.30);
    s.margin.quality = Quality::Uncertain;
    s.clearance.quality = Quality::Uncertain;
    // Hold or open: the valve does not close on an uncertain margin.
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.4).unwrap();
    for _ in 0..100 {
        let out = c.update(&s, &AUTO, DT);
        assert_eq!(out.demand.quality, Quality::Uncertain);
    }
    assert_eq!(c.output(), 0.4);
    // ...but it still opens on it (the safe direction).
    let mut low = state(0.02);
    low.margin.quality = Quality::Uncertain;
    assert!(c.update(&low, &AUTO, DT).demand.value > 0.4);
    // Toward fail-safe: moves open at the closing rate.
    let mut cfg = config();
    cfg.on_uncertain = UncertainMargin::TowardFailSafe;
    let mut c = RecycleController::new(cfg, Mode::Automatic, 0.4).unwrap();
    for _ in 0..50 {
        c.update(&s, &AUTO, DT);
    }
    assert!((c.output() - (0.4 + 0.1 * 50.0 * DT)).abs() < 1e-9);
    // A good margin gives a good demand.
    assert_eq!(
        c.update(&state(0.30), &AUTO, DT).demand.quality,
        Quality::Good
    );
}

/// Issue 9, defect 7: today the controller takes no time input, so a scan
/// called every 40 ms while configured for 20 ms integrates and closes at
/// half speed.
#[test]
fn the_measured_scan_time_drives_integral_and_closing_rate() {
    let mut c = RecycleController::new(config(), Mode::Automatic, 1.0).unwrap();
    let out = c.update(&state(0.30), &AUTO, 0.04);
    assert!((out.demand.value - (1.0 - 0.1 * 0.04)).abs() < 1e-12);
    assert_eq!(out.demand.quality, Quality::Good);
    // Integral: e = 0.01 over 40 ms adds 2 * 0.04 * 0.01.
    let mut c = RecycleController::new(config(), Mode::Automatic, 0.2).unwrap();
    let u = c.update(&state(0.09), &AUTO, 0.04).demand.value;
    assert!((u - (0.2 + 0.0008 + 0.02)).abs() < 1e-15, "{u}");
    // Nonsense time: the nominal period is used and the demand is
    // uncertain; a long stall is clamped to 10 periods.
    for dt in [f64::NAN, 0.0, -1.0] {
        let mut c = RecycleController::new(config(), Mode::Automatic, 1.0).unwrap();
        let out = c.update(&state(0.30), &AUTO, dt);
        assert_eq!(out.demand.quality, Quality::Uncertain);
        assert!((out.demand.value - (1.0 - 0.1 * DT)).abs() < 1e-12);
    }
    let mut c = RecycleController::new(config(), Mode::Automatic, 1.0).unwrap();
    let out = c.update(&state(0.30), &AUTO, 100.0);
    assert_eq!(out.demand.quality, Quality::Uncertain);
    assert!((out.demand.value - (1.0 - 0.1 * 10.0 * DT)).abs() < 1e-12);
}
