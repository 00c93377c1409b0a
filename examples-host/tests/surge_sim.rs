//! Closed-loop surge protection on the Greitzer (1976) lumped model
//! (examples-host/src/greitzer.rs; invented demo scenario): through a fast
//! load loss the kernel's monitor + controller keep the true surge margin
//! positive, with and without the stated measurement noise; in calm safe
//! operation the noisy signals never open the valve; the loop settles on the
//! control line; with the valve held closed the model surges and the
//! kernel's detector counts each cycle exactly once at every scan period.
//!
//! Regressions of issue 9 (today's values, measured on the code before this
//! change, in the comments): defects 1, 8, 9, 10 and 13.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

#[path = "../src/greitzer.rs"]
#[allow(dead_code)]
mod greitzer;

use greitzer::{run, Noise, Plant, Scenario, DUCT_AREA, RECYCLE_GAMMA, TIP_SPEED};

#[test]
fn protection_keeps_margin_positive_through_a_load_loss() {
    for noise in [None, Some(Noise::REALISTIC)] {
        let out = run(&Scenario {
            noise,
            ..Scenario::default()
        })
        .unwrap();
        println!(
            "protected (noise {}): min margin {:.4}, min flow {:.4}, events {}",
            noise.is_some(),
            out.min_margin,
            out.min_flow,
            out.events
        );
        assert!(out.min_margin > 0.0, "min margin {}", out.min_margin);
        assert!(out.min_flow > 0.0);
        assert_eq!(out.events, 0);
        assert!(!out.trip);
        // The load loss really needed the valve: it ends open, and the
        // recirculation costs power.
        let last = out.samples.last().unwrap();
        assert!(last.position > 0.2, "valve {}", last.position);
        assert!(last.recycle_power_kw > 0.0);
    }
}

/// Issue 9, defect 8: today the loop hunts (period about 0.7 s) and settles
/// at a margin of 0.18–0.19 instead of the 0.10 control line (valve
/// 0.51–0.55 open where 0.47 is needed). Band asserted: within 0.02 of the
/// control line without noise and 0.03 with the stated noise, and a swing
/// over the last 3 s below 0.02 / 0.06.
#[test]
fn the_loop_settles_on_the_control_line() {
    for (noise, band, swing) in [(None, 0.02, 0.02), (Some(Noise::REALISTIC), 0.03, 0.06)] {
        let out = run(&Scenario {
            noise,
            duration: 40.0,
            ..Scenario::default()
        })
        .unwrap();
        println!(
            "settled (noise {}): margin {:.4}, control line {:.4}, swing {:.4}",
            noise.is_some(),
            out.settled_margin,
            out.settled_control_margin,
            out.settled_swing
        );
        assert!(
            (out.settled_margin - out.settled_control_margin).abs() < band,
            "{} vs {}",
            out.settled_margin,
            out.settled_control_margin
        );
        assert!(out.settled_swing < swing, "swing {}", out.settled_swing);
    }
}

/// Issue 9, defect 1: today, with the surge-sim tuning, margin noise of
/// σ = 0.004 at a point 25 % in flow on the safe side of the control line
/// drives the demand to 0.91 after 10 s. Here the stated noise on every
/// signal, at two steady points (margin 0.22 and 0.52, control line 0.10),
/// for 60 s each, leaves the valve shut.
#[test]
fn noise_does_not_open_the_valve_in_steady_safe_operation() {
    for throttle in [0.8, 1.0] {
        for seed in [1_u64, 2, 3] {
            let out = run(&Scenario {
                noise: Some(Noise {
                    seed,
                    ..Noise::REALISTIC
                }),
                throttle_before: throttle,
                throttle_after: throttle,
                duration: 60.0,
                ..Scenario::default()
            })
            .unwrap();
            let worst = out.samples.iter().map(|s| s.position).fold(0.0, f64::max);
            println!(
                "throttle {throttle} seed {seed}: margin {:.3}, largest valve position {worst:.4}",
                out.samples[0].margin_true
            );
            assert_eq!(worst, 0.0, "throttle {throttle} seed {seed}");
        }
    }
}

#[test]
fn without_protection_the_model_surges() {
    let out = run(&Scenario {
        protection: false,
        ..Scenario::default()
    })
    .unwrap();
    println!(
        "unprotected: min margin {:.4}, min flow {:.4}, sign changes {}, events {}, trip {}",
        out.min_margin, out.min_flow, out.flow_sign_changes, out.events, out.trip
    );
    assert!(out.min_flow < 0.0, "no flow reversal: {}", out.min_flow);
    assert!(out.flow_sign_changes >= 4, "not a limit cycle");
    assert!(out.min_margin < -1.0);
    assert!(out.events >= 2, "detector saw {} cycles", out.events);
    assert!(out.trip);
}

/// Issue 9, defects 9 and 10: today the scan-counted detection window
/// detects 0 of 8 deep-surge cycles at 1–2 ms scans, and counts one cycle
/// twice at 70–80 ms. Here every cycle (flow reversal) counts exactly once
/// at every scan period from 1 to 100 ms, with and without noise.
#[test]
fn each_surge_cycle_counts_once_at_every_scan_period() {
    for ms in [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 70.0, 75.0, 80.0, 100.0] {
        for noise in [None, Some(Noise::REALISTIC)] {
            let out = run(&Scenario {
                protection: false,
                scan_period: ms / 1e3,
                noise,
                ..Scenario::default()
            })
            .unwrap();
            assert!(out.flow_reversals >= 6, "{ms} ms");
            assert_eq!(
                out.events,
                out.flow_reversals,
                "{ms} ms, noise {}",
                noise.is_some()
            );
        }
    }
}

/// Issue 9, defect 13: today the recycle mass flow takes the discharge
/// density with a suction-referred flow coefficient (about 25 % high).
/// Independent check: in the settled state the plenum mass balance says the
/// recycle flow is the compressor flow minus the throttle flow, at the
/// model's (suction) density.
#[test]
fn recycle_flow_closes_the_plenum_mass_balance() {
    let out = run(&Scenario {
        duration: 40.0,
        ..Scenario::default()
    })
    .unwrap();
    let s = out.samples.last().unwrap();
    let balance =
        Plant::demo().suction_density() * (s.phi - s.throttle_flow) * TIP_SPEED * DUCT_AREA;
    println!(
        "recycle {:.4} kg/s, mass balance {:.4} kg/s (valve {:.3}, γr {RECYCLE_GAMMA})",
        s.recycle_mass_flow, balance, s.position
    );
    assert!(balance > 1.0);
    assert!(
        (s.recycle_mass_flow / balance - 1.0).abs() < 0.01,
        "{} vs {}",
        s.recycle_mass_flow,
        balance
    );
}

#[test]
fn scan_rate_sensitivity() {
    for ms in [1.0, 5.0, 20.0, 50.0] {
        for noise in [None, Some(Noise::REALISTIC)] {
            let out = run(&Scenario {
                scan_period: ms / 1e3,
                noise,
                ..Scenario::default()
            })
            .unwrap();
            println!(
                "scan {ms:>5} ms noise {}: min margin {:.4}",
                noise.is_some(),
                out.min_margin
            );
            // This scenario is held at 50 ms or faster (measured, see the
            // README table).
            assert!(out.min_margin > 0.0, "{ms} ms: {}", out.min_margin);
        }
    }
}

/// Issue 9, defect 10 at other plants: today one cycle is counted twice at
/// B = 0.8–2 (the refilled window still holds the pre-blowdown values).
/// Here no cycle is ever counted twice at B = 1, 1.5, 2 and 4, at 20 and
/// 80 ms scans, and every cycle counts for B >= 2. Measured limit: at B = 1
/// the cycle (0.46 s) is shorter than the 0.5 s hold-off, so every other
/// cycle is counted (44–45 of 87); at B = 1.5 and 80 ms, 57 of 58. The
/// hold-off must be set below the machine's surge-cycle period.
#[test]
fn each_surge_cycle_counts_once_at_other_greitzer_b() {
    for b in [1.0, 1.5, 2.0, 4.0] {
        for ms in [20.0, 80.0] {
            let out = run(&Scenario {
                protection: false,
                greitzer_b: b,
                scan_period: ms / 1e3,
                duration: 40.0,
                ..Scenario::default()
            })
            .unwrap();
            println!(
                "B {b} scan {ms} ms: reversals {}, events {}, min flow {:.3}",
                out.flow_reversals, out.events, out.min_flow
            );
            assert!(out.flow_reversals >= 2, "B {b}: no deep surge");
            assert!(
                out.events <= out.flow_reversals,
                "B {b}, {ms} ms: counted twice"
            );
            if b >= 2.0 {
                assert_eq!(out.events, out.flow_reversals, "B {b}, {ms} ms");
            } else {
                assert!(2 * out.events + 2 >= out.flow_reversals, "B {b}, {ms} ms");
            }
        }
    }
}
