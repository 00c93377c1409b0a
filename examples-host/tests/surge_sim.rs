//! Closed-loop surge protection on the Greitzer (1976) lumped model
//! (examples-host/src/greitzer.rs; invented demo scenario): through a fast
//! load loss the kernel's monitor + controller keep the true surge margin
//! positive; with the valve held closed the model surges (flow reversal,
//! repeated cycles) and the kernel's detector counts the cycles.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

#[path = "../src/greitzer.rs"]
#[allow(dead_code)]
mod greitzer;

use greitzer::{run, Scenario};

#[test]
fn protection_keeps_margin_positive_through_a_load_loss() {
    let out = run(&Scenario::default()).unwrap();
    println!(
        "protected: min margin {:.4}, min flow {:.4}, events {}",
        out.min_margin, out.min_flow, out.events
    );
    assert!(out.min_margin > 0.0, "min margin {}", out.min_margin);
    assert!(out.min_flow > 0.0);
    assert_eq!(out.events, 0);
    assert!(!out.trip);
    // The load loss really needed the valve: it ends open (closing slowly)
    // with the operating point on the safe side of the control line, and
    // the recirculation costs power.
    let last = out.samples.last().unwrap();
    assert!(last.position > 0.2, "valve {}", last.position);
    assert!(last.margin_true > last.control_margin - 0.02);
    assert!(last.recycle_power_kw > 0.0);
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

#[test]
fn scan_rate_sensitivity() {
    let mut previous = f64::INFINITY;
    for ms in [5.0, 20.0, 50.0, 100.0] {
        let out = run(&Scenario {
            scan_period: ms / 1e3,
            ..Scenario::default()
        })
        .unwrap();
        println!("scan {ms:>5} ms: min margin {:.4}", out.min_margin);
        // This scenario needs a scan of 20 ms or faster; slower scans lose
        // margin (measured, see the report table).
        if ms <= 20.0 {
            assert!(out.min_margin > 0.0, "{ms} ms: {}", out.min_margin);
        }
        assert!(out.min_margin <= previous + 1e-3, "{ms} ms");
        previous = out.min_margin;
    }
}
