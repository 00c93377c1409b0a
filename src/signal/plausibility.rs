//! Per-sample plausibility of one channel: range, rate of change (spike)
//! and frozen value over a rolling window. Sample time is judged by the
//! channel's [`super::clock::SampleClock`] before this runs.
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
    last_accepted: Option<T>,
    since_accepted_ms: u64,
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
            last_accepted: None,
            since_accepted_ms: 0,
        }
    }

    /// Checks one scaled sample `v` (SI), taken `dt_ms` (sanitised) after
    /// the previous sample, whose signal-level fault is `signal_fault`, and
    /// returns the fault of the sample (the first that applies: signal level
    /// if bad, not finite, out of range, spike, frozen, signal level if
    /// uncertain).
    pub fn check(
        &mut self,
        cfg: &ChannelConfig<T>,
        v: T,
        dt_ms: u64,
        signal_fault: FaultCode,
    ) -> FaultCode {
        self.since_accepted_ms = self.since_accepted_ms.saturating_add(dt_ms);
        if signal_fault.quality() == crate::Quality::Bad {
            return signal_fault;
        }
        if !T::is_finite(v) {
            return FaultCode::NotFinite;
        }
        if v < cfg.plausible_low || v > cfg.plausible_high {
            return FaultCode::OutOfRange;
        }
        if let Some(last) = self.last_accepted {
            // Through u32 (saturating at 49 days): an exact u32 -> f64 lets
            // the f32 build convert in one instruction.
            let ms = u32::try_from(self.since_accepted_ms).unwrap_or(u32::MAX);
            let dt_s = T::of(f64::from(ms)) * T::of(1.0e-3);
            if T::abs(v - last) > cfg.max_rate * dt_s {
                return FaultCode::Spike;
            }
        }
        self.last_accepted = Some(v);
        self.since_accepted_ms = 0;
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
        self.last_accepted = None;
        self.since_accepted_ms = 0;
    }
}
