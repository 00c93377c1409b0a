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
fn warmed(n: u32) -> (Channel<f64, 8, 5>, u32) {
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
    for k in 1..=200u32 {
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
    for k in 0..20u32 {
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
    // Ahead by 2^30 ms (12 days) and by 2^31 - 1 ms (the largest advance
    // of the 32-bit tick): a gap, then the return is a step back and the
    // next 5 samples (the median refilling) are uncertain. Ahead by 3·2^30
    // ms (more than 2^31: the tick reads it as 2^30 behind): the stamp is
    // itself the step back and starts the 5 uncertain samples, and the
    // return is a gap.
    for (ahead, far, good_from) in [
        (1_u32 << 30, (Quality::Good, FaultCode::None), 6),
        (i32::MAX as u32, (Quality::Good, FaultCode::None), 6),
        (3 << 30, (Quality::Uncertain, FaultCode::ClockStep), 5),
    ] {
        let (mut ch, t) = warmed(100);
        let o = ch.update(50.0, t.wrapping_add(ahead));
        assert_eq!((o.status.quality, o.status.fault), far, "{ahead}");
        for k in 1..=20u32 {
            let o = ch.update(50.0 + (k % 3) as f64 * 0.1, t + k * 20);
            let want = if k < good_from {
                (Quality::Uncertain, FaultCode::ClockStep)
            } else {
                (Quality::Good, FaultCode::None)
            };
            assert_eq!((o.status.quality, o.status.fault), want, "{ahead} {k}");
        }
    }
}

/// The 32-bit tick wraps after 2^32 ms (49.7 days): a channel running
/// across the wrap gives bit for bit the outputs of one running on the same
/// intervals without it (consistency check of the wrapping arithmetic), on
/// a sequence with good samples, a spike, an open loop held and recovered,
/// a stalled stamp and a gap.
#[test]
fn the_tick_wrap_is_an_ordinary_interval() {
    let mut cfg = config();
    cfg.filter_time_constant_s = 0.5;
    let mut a = Channel::<f64, 8, 5>::new(cfg).unwrap();
    let mut b = Channel::<f64, 8, 5>::new(cfg).unwrap();
    let mut t = 0_u32;
    let start = u32::MAX - 1_000;
    let mut seen = Vec::new();
    for k in 0..300u32 {
        let step = match k {
            150 => 0,   // stalled
            200 => 700, // a gap (> hold 500 ms and 8 periods)
            _ => 20,
        };
        t += step;
        let v = match k {
            40 => 90.0,          // spike
            60..=90 => f64::NAN, // lost: held for 500 ms, then bad
            _ => 50.0 + (k % 7) as f64 * 0.3,
        };
        let oa = a.update(v, t);
        let ob = b.update(v, start.wrapping_add(t));
        seen.push((oa.status.fault, oa.status.quality, oa.status.substituted));
        assert_eq!(oa.raw.value.to_bits(), ob.raw.value.to_bits(), "{k}");
        assert_eq!(
            oa.filtered.value.to_bits(),
            ob.filtered.value.to_bits(),
            "{k}"
        );
        assert_eq!(oa.status.quality, ob.status.quality, "{k}");
        assert_eq!(oa.status.fault, ob.status.fault, "{k}");
        assert_eq!(oa.status.substituted, ob.status.substituted, "{k}");
        assert_eq!(
            oa.status.last_good_ms,
            ob.status.last_good_ms.wrapping_sub(start),
            "{k}"
        );
    }
    // The run did cross the wrap, and went through each state.
    assert!(start.wrapping_add(t) < start);
    for state in [
        (FaultCode::Spike, Quality::Uncertain, true),
        (FaultCode::NotFinite, Quality::Uncertain, true),
        (FaultCode::NotFinite, Quality::Bad, false),
        (FaultCode::TimeNotAdvancing, Quality::Uncertain, true),
        (FaultCode::None, Quality::Good, false),
    ] {
        assert!(seen.contains(&state), "{state:?}");
    }
}

/// Today: after a gap the median (and the low-pass) report pre-gap values
/// as good: a median of 5 holding four old samples returns an old one.
#[test]
fn filters_restart_after_a_gap() {
    let mut cfg = config();
    cfg.filter_time_constant_s = 1.0;
    let mut ch = Channel::<f64, 8, 5>::new(cfg).unwrap();
    for k in 0..20u32 {
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
    for k in 0..10u32 {
        lf.apply(dp, false, k * 20);
    }
    // No flow, offset present, clock frozen at 200 ms.
    let mut flagged_at = None;
    for k in 1..=100u32 {
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
