//! Channel and low-flow behaviour under clock faults (issue 9, defect 6):
//! a frozen timestamp, a clock reset to 0, one far-future timestamp, a gap
//! in the samples, and the reset method. Every fault ends in bad or in a
//! bounded recovery; nothing sticks. Today's values (measured on the code
//! before this change) are in the comments.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use polytrope::flow::{LowFlow, LowFlowConfig};
use polytrope::signal::{Channel, ChannelConfig, FaultCode, InstrumentClass, SignalKind, Unit};
use polytrope::{Measured, Quality};

const HOLD_MS: u32 = 500;

fn config() -> ChannelConfig<f64> {
    ChannelConfig {
        id: 3,
        signal: SignalKind::Engineering,
        unit: Unit::Other,
        range_low: 0.0,
        range_high: 100.0,
        plausible_low: 0.0,
        plausible_high: 100.0,
        noise_floor: 0.0,
        instrument: InstrumentClass::Absolute(0.1),
        max_rate: 1000.0,
        filter_time_constant_s: 0.0,
        hold_ms: HOLD_MS,
    }
}

/// A channel fed `n` good, slightly varying samples every 20 ms up to
/// `t_end` ms.
fn warmed(n: u64) -> (Channel<f64, 8, 5>, u64) {
    let mut ch = Channel::<f64, 8, 5>::new(config()).unwrap();
    let mut t = 0;
    for k in 0..n {
        t = k * 20;
        let o = ch.update(50.0 + (k % 3) as f64 * 0.1, t);
        assert_eq!(o.status.quality, Quality::Good, "warm-up {k}");
    }
    (ch, t)
}

/// Today: a frozen timestamp holds the last value as uncertain forever
/// (the hold timeout is measured on the same frozen clock).
#[test]
fn a_frozen_clock_ends_in_bad_after_the_hold_time() {
    let (mut ch, t) = warmed(50);
    let mut first_bad = None;
    for k in 1..=200u64 {
        let o = ch.update(50.0, t);
        assert_eq!(o.status.fault, FaultCode::TimeNotAdvancing);
        if o.status.quality == Quality::Bad && first_bad.is_none() {
            first_bad = Some(k);
        }
        if first_bad.is_none() {
            assert_eq!(o.status.quality, Quality::Uncertain);
            assert!(o.status.substituted);
        }
    }
    // 500 ms hold at the learned 20 ms period: bad from the 26th frozen
    // sample on (25 periods = 500 ms are still within the hold).
    assert_eq!(first_bad, Some(26));
    assert_eq!(ch.output().status.quality, Quality::Bad);
}

/// Today: a clock reset to 0 keeps the channel stale (time not advancing)
/// for as long as the previous uptime (here 100 s).
#[test]
fn a_clock_reset_resynchronises_within_the_median_window() {
    let (mut ch, _) = warmed(5000);
    let mut qualities = Vec::new();
    for k in 0..20u64 {
        let o = ch.update(50.0 + (k % 3) as f64 * 0.1, k * 20);
        qualities.push((o.status.quality, o.status.fault));
    }
    // The step and the next 4 samples (median of 5 refilling) are
    // uncertain, then good again.
    for (q, f) in &qualities[..5] {
        assert_eq!((*q, *f), (Quality::Uncertain, FaultCode::ClockStep));
    }
    for (q, _) in &qualities[5..] {
        assert_eq!(*q, Quality::Good);
    }
}

/// Today: one far-future timestamp kills the channel for good (every
/// later sample is "time not advancing").
#[test]
fn one_far_future_timestamp_does_not_kill_the_channel() {
    let (mut ch, t) = warmed(100);
    let o = ch.update(50.0, u64::MAX / 2);
    assert!(o.status.quality.is_usable());
    let mut good_after = None;
    for k in 1..=20u64 {
        let o = ch.update(50.0 + (k % 3) as f64 * 0.1, t + k * 20);
        if o.status.quality == Quality::Good && good_after.is_none() {
            good_after = Some(k);
        }
    }
    assert_eq!(good_after, Some(6), "recovers after the 5-sample resync");
}

/// Today: after a gap the median (and the low-pass) report pre-gap values
/// as good: a median of 5 holding four old samples returns an old one.
#[test]
fn filters_restart_after_a_gap() {
    let mut cfg = config();
    cfg.filter_time_constant_s = 1.0;
    let mut ch = Channel::<f64, 8, 5>::new(cfg).unwrap();
    for k in 0..20u64 {
        ch.update(10.0 + (k % 2) as f64 * 0.1, k * 20);
    }
    // 10 s of silence, then a new level.
    let o = ch.update(30.0, 20 * 19 + 10_000);
    assert_eq!(o.status.quality, Quality::Good);
    assert_eq!(o.filtered.value, 30.0, "restarted from the new sample");
    assert_eq!(o.raw.value, 30.0);
}

#[test]
fn reset_makes_the_channel_as_new() {
    let (mut ch, _) = warmed(20);
    ch.reset();
    assert_eq!(ch.output().status.quality, Quality::Bad);
    // Any time base is accepted after a reset, and the first sample is good.
    let o = ch.update(42.0, 7);
    assert_eq!((o.status.quality, o.raw.value), (Quality::Good, 42.0));
}

/// Today: the low-flow zero check never flags an offset on a frozen clock
/// and restarts its persistence on a clock reset.
#[test]
fn low_flow_zero_check_counts_time_on_a_frozen_clock() {
    let mut lf = LowFlow::new(LowFlowConfig {
        cutoff_dp: 50.0,
        zero_tolerance: 100.0,
        zero_persist_ms: 1000,
    })
    .unwrap();
    let dp = Measured::good(300.0);
    // Flowing, clock good: learns the 20 ms period.
    for k in 0..10u64 {
        lf.apply(dp, false, k * 20);
    }
    // No flow, offset present, clock frozen at 200 ms.
    let mut flagged_at = None;
    for k in 1..=100u64 {
        let o = lf.apply(dp, true, 200);
        if o.fault == FaultCode::ZeroOffset && flagged_at.is_none() {
            flagged_at = Some(k);
        }
    }
    // 1000 ms of persistence at 20 ms per sample: 50 samples after the
    // first offset sample.
    assert_eq!(flagged_at, Some(51));
    lf.reset();
    assert!(!lf.zero_offset());
}
