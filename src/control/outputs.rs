//! Field outputs through embedded-hal 1.0 traits: the valve demand as a PWM
//! duty cycle ([`SetDutyCycle`], e.g. a PWM feeding an I/P converter or a
//! 4–20 mA output stage) and the surge alarm and trip request as digital
//! outputs ([`OutputPin`]).
//!
//! Signal scaling: the demand `u` (0 closed, 1 open) maps linearly to a duty
//! fraction `signal_at_closed + u · (signal_at_open − signal_at_closed)`.
//! For a 4–20 mA stage driven 0–100 % duty as 0–20 mA, closed = 0.2 and
//! open = 1.0; for a valve that opens on loss of signal (air-to-close), swap
//! them. Pins can be energised when healthy (de-energise to alarm or trip,
//! the usual fail-safe wiring: a broken wire reads as an alarm) or
//! energised to alarm.
//!
//! A non-finite demand is written as fully open.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;

use crate::error::{outside_documented_range, ConfigError};
use crate::real::Real;

/// Output scaling and pin polarity.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OutputConfig<T> {
    /// Duty fraction for a closed valve, in [0, 1].
    pub signal_at_closed: T,
    /// Duty fraction for a fully open valve, in [0, 1], not equal to closed.
    pub signal_at_open: T,
    /// Pins are high when healthy and go low on alarm / trip.
    pub energised_when_healthy: bool,
}

/// Which output failed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum OutputError<V, A, R> {
    /// The valve PWM.
    Valve(V),
    /// The surge alarm pin.
    Alarm(A),
    /// The trip request pin.
    Trip(R),
}

/// The error of [`RecycleOutputs::write`] for peripherals `V`, `A`, `R`.
pub type WriteError<V, A, R> = OutputError<
    <V as embedded_hal::pwm::ErrorType>::Error,
    <A as embedded_hal::digital::ErrorType>::Error,
    <R as embedded_hal::digital::ErrorType>::Error,
>;

/// The three field outputs of one recycle loop.
#[derive(Debug)]
pub struct RecycleOutputs<T, V, A, R> {
    config: OutputConfig<T>,
    valve: V,
    alarm: A,
    trip: R,
}

impl<T: Real, V: SetDutyCycle, A: OutputPin, R: OutputPin> RecycleOutputs<T, V, A, R> {
    /// Wraps the outputs. Errors name `signal_at_closed` / `signal_at_open`.
    pub fn new(config: OutputConfig<T>, valve: V, alarm: A, trip: R) -> Result<Self, ConfigError> {
        let unit = |x: T| T::is_finite(x) && x >= T::ZERO && x <= T::ONE;
        if !unit(config.signal_at_closed) {
            return Err(outside_documented_range("recycle_outputs.signal_at_closed"));
        }
        if !unit(config.signal_at_open) || config.signal_at_open == config.signal_at_closed {
            return Err(outside_documented_range("recycle_outputs.signal_at_open"));
        }
        Ok(RecycleOutputs {
            config,
            valve,
            alarm,
            trip,
        })
    }

    /// The PWM duty (0..=max) written for demand `u`.
    pub fn duty_for(&self, demand: T) -> u16 {
        let c = &self.config;
        let u = if T::is_finite(demand) {
            T::clamp(demand, T::ZERO, T::ONE)
        } else {
            T::ONE
        };
        let fraction = c.signal_at_closed + u * (c.signal_at_open - c.signal_at_closed);
        let max = self.valve.max_duty_cycle();
        let d = (fraction * T::of(f64::from(max)) + T::of(0.5)).to_f64();
        if d <= 0.0 {
            0
        } else if d >= f64::from(max) {
            max
        } else {
            d as u16
        }
    }

    /// Writes the valve demand, the alarm and the trip request, in that
    /// order (the valve first: it is the protective action).
    pub fn write(
        &mut self,
        demand: T,
        alarm: bool,
        trip_request: bool,
    ) -> Result<(), WriteError<V, A, R>> {
        let duty = self.duty_for(demand);
        self.valve
            .set_duty_cycle(duty)
            .map_err(OutputError::Valve)?;
        let level = |active: bool| active != self.config.energised_when_healthy;
        set(&mut self.alarm, level(alarm)).map_err(OutputError::Alarm)?;
        set(&mut self.trip, level(trip_request)).map_err(OutputError::Trip)?;
        Ok(())
    }

    /// Gives the peripherals back.
    pub fn release(self) -> (V, A, R) {
        (self.valve, self.alarm, self.trip)
    }
}

fn set<P: OutputPin>(pin: &mut P, high: bool) -> Result<(), P::Error> {
    if high {
        pin.set_high()
    } else {
        pin.set_low()
    }
}
