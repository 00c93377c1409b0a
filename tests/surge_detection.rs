//! Surge-cycle detection on synthetic fast signals (invented waveforms
//! shaped like the published surge-cycle signature: flow collapse in about
//! 50 ms with a falling discharge pressure; Greitzer 1976, from memory).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use polytrope::surge::{DetectionConfig, DetectionScan, SurgeDetector};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{ConfigError, Measured, Quality};

const DT: f64 = 0.01;

fn config() -> DetectionConfig<f64> {
    DetectionConfig {
        scan_period: DT,
        window: 0.16,
        flow_lag: 0.0,
        flow_dp_drop: 0.5,
        min_flow_dp: 500.0,
        pressure_rise_drop: 0.05,
        suction_temperature_rise: 3.0,
        holdoff: 0.5,
        added_margin_per_cycle: 0.03,
        max_added_margin: 0.08,
        trip_count: 3,
        trip_window: 60.0,
    }
}

fn scan(dp: f64, pd: f64, ts: Option<f64>) -> DetectionScan<f64> {
    DetectionScan {
        flow_dp: Measured::good(dp),
        suction_pressure: Measured::good(PressureAbs::from_pa(1.0e5)),
        discharge_pressure: Measured::good(PressureAbs::from_pa(pd)),
        suction_temperature: ts.map(|t| Measured::good(Kelvin::new(t))),
    }
}

/// Feeds one surge cycle: 1 s steady, flow collapse over 5 scans with the
/// discharge pressure falling 8 %, then 1 s of recovery. Returns detections.
fn surge_cycle(d: &mut SurgeDetector<f64, 16, 4>, with_pressure: bool, ts_rise: f64) -> u32 {
    let mut hits = 0;
    let mut feed = |d: &mut SurgeDetector<f64, 16, 4>, dp: f64, pd: f64, ts: f64| {
        if d.update(&scan(dp, pd, Some(ts)), DT).surge_this_scan {
            hits += 1;
        }
    };
    for _ in 0..100 {
        feed(d, 5000.0, 3.0e5, 300.0);
    }
    let mut pd_end = 3.0e5;
    for i in 1..=5 {
        let f = i as f64 / 5.0;
        let pd = if with_pressure {
            3.0e5 * (1.0 - 0.08 * f)
        } else {
            3.0e5 * (1.0 + 0.01 * f)
        };
        feed(d, 5000.0 * (1.0 - 0.9 * f), pd, 300.0 + ts_rise * f);
        pd_end = pd;
    }
    for i in 1..=100 {
        let f = i as f64 / 100.0;
        feed(d, 500.0 + 4500.0 * f, pd_end + (3.0e5 - pd_end) * f, 300.0);
    }
    hits
}

#[test]
fn one_cycle_counts_once_and_adds_margin_to_the_control_line() {
    let mut d = SurgeDetector::<f64, 16, 4>::new(config()).unwrap();
    assert_eq!(surge_cycle(&mut d, true, 0.0), 1);
    let s = *d.state();
    assert_eq!(s.event_count, 1);
    assert!((s.added_margin - 0.03).abs() < 1e-15);
    assert!(!s.trip_request);
}

#[test]
fn flow_drop_without_pressure_fall_or_heating_is_not_surge() {
    // A throttle closing: flow falls, discharge pressure rises.
    let mut d = SurgeDetector::<f64, 16, 4>::new(config()).unwrap();
    assert_eq!(surge_cycle(&mut d, false, 0.0), 0);
    // Same flow collapse with hot gas flowing back to suction: surge.
    assert_eq!(surge_cycle(&mut d, false, 6.0), 1);
}

#[test]
fn three_cycles_in_a_minute_request_a_trip_and_resets_work() {
    let mut d = SurgeDetector::<f64, 16, 4>::new(config()).unwrap();
    let mut n = 0;
    for _ in 0..3 {
        n += surge_cycle(&mut d, true, 0.0);
    }
    assert_eq!(n, 3);
    let s = *d.state();
    assert!(s.trip_request);
    assert_eq!(s.events_in_window, 3);
    assert!(
        (s.added_margin - 0.08).abs() < 1e-15,
        "capped at max_added_margin"
    );
    d.reset_trip();
    d.reset_added_margin();
    assert!(!d.state().trip_request);
    assert_eq!(d.state().added_margin, 0.0);
    // Two cycles more than a minute apart do not trip.
    surge_cycle(&mut d, true, 0.0);
    for _ in 0..6100 {
        d.update(&scan(5000.0, 3.0e5, None), DT);
    }
    surge_cycle(&mut d, true, 0.0);
    surge_cycle(&mut d, true, 0.0);
    assert_eq!(d.state().events_in_window, 2);
    assert!(!d.state().trip_request);
}

#[test]
fn bad_data_blinds_without_panic_and_config_is_checked() {
    let mut d = SurgeDetector::<f32, 8, 2>::new(DetectionConfig {
        scan_period: 0.01,
        window: 0.08,
        flow_lag: 0.0,
        flow_dp_drop: 0.5,
        min_flow_dp: 500.0,
        pressure_rise_drop: 0.05,
        suction_temperature_rise: 3.0,
        holdoff: 0.5,
        added_margin_per_cycle: 0.03,
        max_added_margin: 0.08,
        trip_count: 2,
        trip_window: 60.0,
    })
    .unwrap();
    for v in [f32::NAN, f32::INFINITY, -1.0] {
        let s = d.update(
            &DetectionScan {
                flow_dp: Measured::new(v, Quality::Bad),
                suction_pressure: Measured::good(PressureAbs::from_pa(1.0e5)),
                discharge_pressure: Measured::good(PressureAbs::from_pa(v)),
                suction_temperature: None,
            },
            0.01,
        );
        assert!(s.blind && !s.surge_this_scan);
    }
    let mut c = config();
    c.trip_count = 5; // more than the 4 event slots
    assert_eq!(
        SurgeDetector::<f64, 16, 4>::new(c).err(),
        Some(ConfigError::out_of_range(
            "surge_detection.trip_count",
            1.0,
            4.0
        ))
    );
    let mut c = config();
    c.flow_dp_drop = 1.2;
    assert_eq!(
        SurgeDetector::<f64, 16, 4>::new(c).err(),
        Some(ConfigError::out_of_range(
            "surge_detection.flow_dp_drop",
            0.05,
            0.95
        ))
    );
}
