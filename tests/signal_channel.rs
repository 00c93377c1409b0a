//! Channel scaling, configuration errors, filters and the event log.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use polytrope::signal::filter::{LowPass, Median};
use polytrope::signal::{
    Channel, ChannelConfig, Event, EventLog, FaultCode, InstrumentClass, RtdClass, SignalKind, Unit,
};
use polytrope::units::PressureAbs;
use polytrope::{ConfigError, Problem, Quality};

fn base(signal: SignalKind<f64>, unit: Unit<f64>, lo: f64, hi: f64) -> ChannelConfig<f64> {
    ChannelConfig {
        id: 7,
        signal,
        unit,
        range_low: lo,
        range_high: hi,
        plausible_low: -1e9,
        plausible_high: 1e9,
        noise_floor: 0.0,
        instrument: InstrumentClass::FractionOfSpan(0.001),
        max_rate: 1e12,
        filter_time_constant_s: 0.0,
        hold_ms: 0,
    }
}

#[test]
fn scaling_of_every_signal_kind_and_unit() {
    let atm = PressureAbs::from_pa(101_325.0);
    // 12 mA = 50 % of 0..10 bar g = 5 bar g = 601325 Pa a.
    let c = base(
        SignalKind::Current4To20,
        Unit::PressureGauge { atmosphere: atm },
        0.0,
        10e5,
    );
    assert_eq!(c.scale(12.0), (601_325.0, FaultCode::None));
    // 4 mA on -50..150 degC = -50 degC = 223.15 K.
    let c = base(SignalKind::Current4To20, Unit::Celsius, -50.0, 150.0);
    let (v, f) = c.scale(4.0);
    assert!((v - 223.15).abs() < 1e-12 && f == FaultCode::None);
    // 2.5 V on 0..10 V, 0..40 kPa differential = 10 kPa.
    let c = base(
        SignalKind::Voltage0To10,
        Unit::DifferentialPressure,
        0.0,
        4e4,
    );
    assert_eq!(c.scale(2.5), (1e4, FaultCode::None));
    assert_eq!(c.scale(10.3).1, FaultCode::SignalOutOfRange);
    assert_eq!(
        c.scale(10.2).1,
        FaultCode::None,
        "within the 2.5 % allowance"
    );
    // Counts 6400..32000 on 0..100 K offset range.
    let c = base(
        SignalKind::Counts {
            zero: 6400.0,
            full: 32000.0,
        },
        Unit::Kelvin,
        200.0,
        300.0,
    );
    assert_eq!(c.scale(19200.0), (250.0, FaultCode::None));
    assert_eq!(c.scale(0.0).1, FaultCode::SignalOutOfRange);
    // Engineering: unit conversion only.
    let c = base(SignalKind::Engineering, Unit::Celsius, 0.0, 1.0);
    assert!((c.scale(25.0).0 - 298.15).abs() < 1e-12);
    // Non-finite raw values.
    assert_eq!(c.scale(f64::NAN).1, FaultCode::NotFinite);
    // A huge count gives an infinite fraction: out of range, value 0.
    let c = base(
        SignalKind::Counts {
            zero: 0.0,
            full: 1e-300,
        },
        Unit::Other,
        0.0,
        1.0,
    );
    assert_eq!(c.scale(1e300).1, FaultCode::SignalOutOfRange);
}

#[test]
fn configuration_errors_name_the_field() {
    let good = base(SignalKind::Current4To20, Unit::Kelvin, 0.0, 1.0);
    assert!(good.validate().is_ok());
    let err = |f: &dyn Fn(&mut ChannelConfig<f64>)| {
        let mut c = good;
        f(&mut c);
        c.validate().unwrap_err()
    };
    assert_eq!(
        err(&|c| c.range_high = 0.0),
        ConfigError::new(
            "channel.range_high",
            Problem::NotAbove {
                other: "channel.range_low"
            }
        )
        .at(7)
    );
    assert_eq!(
        err(&|c| c.range_low = f64::NAN),
        ConfigError::not_finite("channel.range_low").at(7)
    );
    assert_eq!(
        err(&|c| c.signal = SignalKind::Counts {
            zero: 5.0,
            full: 5.0
        }),
        ConfigError::new(
            "channel.signal",
            Problem::Inconsistent {
                with: "itself (zero and full scale are equal)"
            }
        )
        .at(7)
    );
    assert_eq!(
        err(&|c| c.unit = Unit::PressureGauge {
            atmosphere: PressureAbs::from_pa(-1.0)
        }),
        ConfigError::out_of_range("channel.unit.atmosphere", 0.0, f64::INFINITY).at(7)
    );
    assert_eq!(
        err(&|c| c.plausible_low = 2e9),
        ConfigError::new(
            "channel.plausible_high",
            Problem::NotAbove {
                other: "channel.plausible_low"
            }
        )
        .at(7)
    );
    assert_eq!(
        err(&|c| c.noise_floor = -1.0),
        ConfigError::out_of_range("channel.noise_floor", 0.0, f64::INFINITY).at(7)
    );
    assert_eq!(
        err(&|c| c.instrument = InstrumentClass::Absolute(f64::INFINITY)),
        ConfigError::not_finite("channel.instrument").at(7)
    );
    assert_eq!(
        err(&|c| c.max_rate = 0.0),
        ConfigError::out_of_range("channel.max_rate", 0.0, f64::INFINITY).at(7)
    );
    assert_eq!(
        err(&|c| c.filter_time_constant_s = -0.1),
        ConfigError::out_of_range("channel.filter_time_constant_s", 0.0, f64::INFINITY).at(7)
    );
    let msg = format!("{}", err(&|c| c.max_rate = 0.0));
    assert!(msg.contains("channel[7].max_rate"), "{msg}");
    assert!(Channel::<f64, 4, 3>::new(ChannelConfig {
        max_rate: -1.0,
        ..good
    })
    .is_err());
}

#[test]
fn instrument_tolerance_from_iec60751_class() {
    let mut c = base(SignalKind::Current4To20, Unit::Celsius, 0.0, 200.0);
    c.instrument = InstrumentClass::Rtd(RtdClass::B);
    // Class B at 100 degC: 0.30 + 0.005 * 100 = 0.80 K (IEC 60751).
    assert!((c.tolerance(373.15) - 0.80).abs() < 1e-9);
    c.instrument = InstrumentClass::FractionOfSpan(0.001);
    assert!((c.tolerance(373.15) - 0.2).abs() < 1e-12);
}

/// The discrete first-order lag against the continuous step response
/// 1 - exp(-t/tau) (textbook first-order system): with dt = tau/100 the
/// backward-Euler form lags it by well under 1 % of the step.
#[test]
fn low_pass_follows_the_first_order_step_response() {
    let mut lp = LowPass::<f64>::new();
    let tau = 2.0;
    lp.update(0.0, 0, tau);
    let mut worst = 0.0_f64;
    for k in 1..=1000u32 {
        let t_ms = k * 20;
        let y = lp.update(1.0, t_ms, tau);
        let exact = 1.0 - (-(t_ms as f64) / 1000.0 / tau).exp();
        worst = worst.max((y - exact).abs());
    }
    assert!(worst < 0.005, "{worst}");
    // tau = 0: pass-through.
    let mut lp = LowPass::<f64>::new();
    lp.update(3.0, 0, 0.0);
    assert_eq!(lp.update(5.0, 10, 0.0), 5.0);
}

#[test]
fn median_rejects_a_single_spike() {
    let mut m = Median::<f64, 5>::new();
    let xs = [1.0, 1.1, 0.9, 50.0, 1.05, 0.95];
    let out: Vec<f64> = xs.iter().map(|&x| m.update(x)).collect();
    assert_eq!(out[3], 1.0, "spike not passed");
    assert_eq!(out[5], 1.05); // median of 1.1, 0.9, 50, 1.05, 0.95
    assert!(out.iter().all(|&y| y < 2.0));
}

#[test]
fn raw_is_unfiltered_and_filtered_lags() {
    let mut c = base(SignalKind::Engineering, Unit::Other, 0.0, 100.0);
    c.filter_time_constant_s = 1.0;
    c.noise_floor = 0.001;
    let mut ch = Channel::<f64, 4, 1>::new(c).unwrap();
    ch.update(10.0, 0);
    let o = ch.update(20.0, 100);
    assert_eq!(o.raw.value, 20.0);
    assert!(
        o.filtered.value > 10.0 && o.filtered.value < 12.0,
        "{}",
        o.filtered.value
    );
    assert_eq!(o.raw.quality, Quality::Good);
}

#[test]
fn event_log_drops_oldest_and_counts() {
    let mut log = EventLog::<3>::new();
    let ev = |t| Event {
        time_ms: t,
        channel: 1,
        from: Quality::Good,
        to: Quality::Bad,
        fault: FaultCode::Spike,
    };
    for t in 0..5 {
        log.push(ev(t));
    }
    assert_eq!(log.len(), 3);
    assert_eq!(log.dropped(), 2);
    let times: Vec<u32> = log.iter().map(|e| e.time_ms).collect();
    assert_eq!(times, vec![2, 3, 4]);
    assert_eq!(log.pop().unwrap().time_ms, 2);
    assert_eq!(log.len(), 2);
}

#[test]
fn channel_logs_transitions_only() {
    let c = base(SignalKind::Current4To20, Unit::Other, 0.0, 1.0);
    let mut ch = Channel::<f64, 4, 1>::new(ChannelConfig {
        noise_floor: 0.0,
        ..c
    })
    .unwrap();
    let mut log = EventLog::<8>::new();
    ch.update_logged(12.0, 1, &mut log); // bad (start) -> good
    ch.update_logged(12.1, 2, &mut log); // good, no event
    ch.update_logged(2.0, 3, &mut log); // good -> bad (hold 0 ms: the sample is 1 ms after the last good)
    let e: Vec<(Quality, Quality, FaultCode)> =
        log.iter().map(|e| (e.from, e.to, e.fault)).collect();
    assert_eq!(
        e,
        vec![
            (Quality::Bad, Quality::Good, FaultCode::None),
            (Quality::Good, Quality::Bad, FaultCode::Ne43FailureLow),
        ]
    );
    assert_eq!(FaultCode::Ne43FailureLow.code(), 1);
}

/// `Channel::new_in` (built in place) is `Channel::new`: the same refusal,
/// and for a good configuration the same outputs over a run of samples
/// (a step, a spike, a gap; consistency check of the two constructors).
#[test]
fn new_in_builds_what_new_builds() {
    let mut good = base(SignalKind::Current4To20, Unit::Other, 0.0, 100.0);
    good.filter_time_constant_s = 0.5;
    good.max_rate = 500.0;
    good.hold_ms = 300;
    let mut slot = core::mem::MaybeUninit::uninit();
    let mut a = Channel::<f64, 4, 3>::new(good).unwrap();
    let b = Channel::<f64, 4, 3>::new_in(&mut slot, good).unwrap();
    for (k, raw) in [8.0, 8.1, 12.0, 19.5, 12.1, 3.0, 12.2, 12.2]
        .into_iter()
        .enumerate()
    {
        let t = 100 * k as u32 + if k > 5 { 1000 } else { 0 };
        assert_eq!(a.update(raw, t), b.update(raw, t), "sample {k}");
    }
    let mut bad = good;
    bad.max_rate = -1.0;
    let mut slot = core::mem::MaybeUninit::uninit();
    assert_eq!(
        Channel::<f64, 4, 3>::new(bad).map(|_| ()),
        Channel::<f64, 4, 3>::new_in(&mut slot, bad).map(|_| ())
    );
    assert!(Channel::<f64, 4, 3>::new(bad).is_err());
}
