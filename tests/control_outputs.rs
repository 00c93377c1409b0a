//! Field outputs through embedded-hal 1.0, checked with embedded-hal-mock
//! (eh1): every expected bus transaction is listed and `done()` fails the
//! test on a missing or extra one.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use std::io::ErrorKind;

use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as Pin};
use embedded_hal_mock::eh1::pwm::{Mock as PwmMock, Transaction as Pwm};
use embedded_hal_mock::eh1::MockError;
use polytrope::control::{OutputConfig, OutputError, RecycleOutputs};

/// 4-20 mA stage driven as 0-20 mA by the PWM: closed = 4 mA = 20 % duty.
const LOOP_4_20: OutputConfig<f32> = OutputConfig {
    signal_at_closed: 0.2,
    signal_at_open: 1.0,
    energised_when_healthy: true,
};

#[test]
fn demand_alarm_and_trip_reach_the_peripherals() {
    let pwm = PwmMock::new(&[
        Pwm::max_duty_cycle(1000),
        Pwm::set_duty_cycle(600), // 0.2 + 0.5 * 0.8 = 0.6 -> 12 mA
        Pwm::max_duty_cycle(1000),
        Pwm::set_duty_cycle(1000), // NaN demand: written fully open
        Pwm::max_duty_cycle(1000),
        Pwm::set_duty_cycle(200), // closed: 4 mA, live zero
    ]);
    // Energised when healthy: no alarm = high, alarm = low.
    let alarm = PinMock::new(&[
        Pin::set(State::High),
        Pin::set(State::Low),
        Pin::set(State::High),
    ]);
    let trip = PinMock::new(&[
        Pin::set(State::High),
        Pin::set(State::Low),
        Pin::set(State::High),
    ]);
    let mut out = RecycleOutputs::new(LOOP_4_20, pwm, alarm, trip).unwrap();
    out.write(0.5, false, false).unwrap();
    out.write(f32::NAN, true, true).unwrap();
    out.write(-0.3, false, false).unwrap();
    let (mut v, mut a, mut t) = out.release();
    v.done();
    a.done();
    t.done();
}

#[test]
fn energise_to_alarm_and_reverse_acting_valve() {
    // Air-to-close valve (opens on loss of signal): open = 0 % duty.
    let cfg = OutputConfig {
        signal_at_closed: 1.0,
        signal_at_open: 0.0,
        energised_when_healthy: false,
    };
    let pwm = PwmMock::new(&[Pwm::max_duty_cycle(255), Pwm::set_duty_cycle(64)]);
    let alarm = PinMock::new(&[Pin::set(State::High)]);
    let trip = PinMock::new(&[Pin::set(State::Low)]);
    let mut out = RecycleOutputs::new(cfg, pwm, alarm, trip).unwrap();
    out.write(0.75_f32, true, false).unwrap(); // 0.25 * 255 = 63.75 -> 64
    let (mut v, mut a, mut t) = out.release();
    v.done();
    a.done();
    t.done();
}

#[test]
fn a_failing_peripheral_is_named() {
    let pwm = PwmMock::new(&[
        Pwm::max_duty_cycle(100),
        Pwm::set_duty_cycle(100).with_error(MockError::Io(ErrorKind::NotConnected)),
        Pwm::max_duty_cycle(100),
        Pwm::set_duty_cycle(100),
    ]);
    let alarm =
        PinMock::new(&[Pin::set(State::High).with_error(MockError::Io(ErrorKind::BrokenPipe))]);
    let trip = PinMock::new(&[]);
    let mut out = RecycleOutputs::new(LOOP_4_20, pwm, alarm, trip).unwrap();
    assert!(matches!(
        out.write(1.0, false, false),
        Err(OutputError::Valve(_))
    ));
    assert!(matches!(
        out.write(1.0, false, false),
        Err(OutputError::Alarm(_))
    ));
    let (mut v, mut a, mut t) = out.release();
    v.done();
    a.done();
    t.done();
}

#[test]
fn scaling_is_validated() {
    let bad = OutputConfig {
        signal_at_closed: 0.5,
        signal_at_open: 0.5,
        energised_when_healthy: true,
    };
    let mut v = PwmMock::new(&[]);
    let mut a = PinMock::new(&[]);
    let mut t = PinMock::new(&[]);
    let r = RecycleOutputs::new(bad, &mut v, &mut a, &mut t);
    assert_eq!(
        r.err().map(|e| e.field),
        Some("recycle_outputs.signal_at_open")
    );
    v.done();
    a.done();
    t.done();
}
