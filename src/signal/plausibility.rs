//! Per-sample plausibility of one channel: sample time, range, rate of
//! change (spike) and frozen value over a rolling window.
//!
//! The tests are common practice in process instrumentation (limit, rate
//! and "stuck value" checks); the thresholds are per-channel configuration.
//! Cost per sample: one pass over the `W`-sample window.

use super::channel::ChannelConfig;
use super::FaultCode;
use crate::real::Real;
use crate::window::Window;

/// Plausibility state of one channel with a frozen window of `W` samples.
#[derive(Clone, Debug)]
pub struct Plausibility<T, const W: usize> {
    window: Window<T, W>,
    last_time_ms: Option<u64>,
    last_accepted: Option<(T, u64)>,
}

impl<T: Real, const W: usize> Default for Plausibility<T, W> {
    fn default() -> Self {
        Self::new()
    }
}

impl<T: Real, const W: usize> Plausibility<T, W> {
    /// Empty state. `W` (frozen window, samples) must be at least 2; this is
    /// checked at compile time.
    pub fn new() -> Self {
        const { assert!(W >= 2, "the frozen window needs at least 2 samples") };
        Plausibility {
            window: Window::filled_with(T::ZERO),
            last_time_ms: None,
            last_accepted: None,
        }
    }

    /// Checks one scaled sample `v` (SI) taken at `t_ms` whose signal-level
    /// fault is `signal_fault`, and returns the fault of the sample (the
    /// first that applies: signal level if bad, not finite, time not
    /// advancing, out of range, spike, frozen, signal level if uncertain).
    pub fn check(
        &mut self,
        cfg: &ChannelConfig<T>,
        v: T,
        t_ms: u64,
        signal_fault: FaultCode,
    ) -> FaultCode {
        let time_ok = self.last_time_ms.is_none_or(|last| t_ms > last);
        if time_ok {
            self.last_time_ms = Some(t_ms);
        } else {
            return FaultCode::TimeNotAdvancing;
        }
        if signal_fault.quality() == crate::Quality::Bad {
            return signal_fault;
        }
        if !T::is_finite(v) {
            return FaultCode::NotFinite;
        }
        if v < cfg.plausible_low || v > cfg.plausible_high {
            return FaultCode::OutOfRange;
        }
        if let Some((last, t_last)) = self.last_accepted {
            // t_ms > t_last here: times only ever advance.
            let dt_s = T::of(t_ms.saturating_sub(t_last) as f64) * T::of(1.0e-3);
            if T::abs(v - last) > cfg.max_rate * dt_s {
                return FaultCode::Spike;
            }
        }
        self.last_accepted = Some((v, t_ms));
        self.window.write(v);
        if self.window.len() >= W {
            let mut lo = v;
            let mut hi = v;
            for &x in self.window.as_slice() {
                lo = T::min(lo, x);
                hi = T::max(hi, x);
            }
            if hi - lo <= cfg.noise_floor {
                return FaultCode::Frozen;
            }
        }
        signal_fault
    }

    /// Forgets the history (after a configuration change or restart).
    pub fn reset(&mut self) {
        self.window.clear();
        self.last_time_ms = None;
        self.last_accepted = None;
    }
}
