//! Per-sample plausibility of one channel: range, rate of change (spike)
//! and frozen value over a rolling window. Sample time is judged by the
//! channel's [`super::clock::SampleClock`] before this runs.
//!
//! The tests are common practice in process instrumentation (limit, rate
//! and "stuck value" checks); the thresholds are per-channel configuration.
//! Cost per sample: one pass over the `W`-sample window.

use super::channel::ChannelConfig;
use super::{above, below, FaultCode};
use crate::quality::Quality;
use crate::real::Real;
use crate::window::Window;

/// Plausibility state of one channel with a frozen window of `W` samples.
#[derive(Clone, Copy, Debug)]
pub struct Plausibility<T, const W: usize> {
    /// The last `W` accepted samples; the latest is the reference of the
    /// rate test.
    window: Window<T, W>,
    since_accepted_ms: u32,
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
        dt_ms: u32,
        signal_fault: FaultCode,
    ) -> FaultCode {
        if signal_fault.quality() != Quality::Bad && !T::is_finite(v) {
            self.since_accepted_ms = self.since_accepted_ms.saturating_add(dt_ms);
            return FaultCode::NotFinite;
        }
        self.check_scaled(
            cfg,
            v,
            dt_ms,
            (signal_fault, signal_fault.quality()),
            false,
            |ms| rate_allowance(cfg.max_rate, ms),
        )
        .0
    }

    /// As [`Plausibility::check`] for a sample that is finite unless its
    /// signal-level fault is bad (what [`ChannelConfig::scale`] returns),
    /// with the allowed change over `ms` milliseconds given by `allowance`
    /// (the channel caches it: [`rate_allowance`] of the usual interval).
    /// `signal` is the signal-level fault with its quality
    /// (`fault.quality()`, which the scaling knows on its usual path).
    /// `by_bits` may be set when the plausible range lies above zero and
    /// the noise floor is not −0: the compares are then made on the bit
    /// patterns (the same answers; see below), for a core whose float
    /// compare is a soft-float call.
    /// Returns the fault and its quality (`fault.quality()`, known on every
    /// path, so the caller need not classify the fault again).
    #[inline]
    pub(crate) fn check_scaled(
        &mut self,
        cfg: &ChannelConfig<T>,
        v: T,
        dt_ms: u32,
        signal: (FaultCode, Quality),
        by_bits: bool,
        allowance: impl FnOnce(u32) -> T,
    ) -> (FaultCode, Quality) {
        // The time since the last accepted sample grows by `dt_ms` if this
        // one is rejected; an accepted one restarts it at 0.
        let (signal_fault, signal_quality) = signal;
        if signal_quality == Quality::Bad {
            self.since_accepted_ms = self.since_accepted_ms.saturating_add(dt_ms);
            return (signal_fault, Quality::Bad);
        }
        // `v` is finite here, the limits are (validated): compares by
        // [`below`] and [`above`] (no soft-float call on a Cortex-M0).
        // By the bits (`by_bits`): `plausible_low <= v <= plausible_high`
        // for finite `v` and limits 0 < low < high ([`Real::within_positive`]).
        let out_of_range = if by_bits {
            !T::within_positive(v, cfg.plausible_low, cfg.plausible_high)
        } else {
            below(v, cfg.plausible_low) || above(v, cfg.plausible_high)
        };
        if out_of_range {
            self.since_accepted_ms = self.since_accepted_ms.saturating_add(dt_ms);
            return (FaultCode::OutOfRange, Quality::Bad);
        }
        // A step from the previous accepted value wider than the noise
        // floor already makes the window's band wider (max − min is at
        // least the step, and rounding keeps the order), so the window
        // scan is needed only after a step within the floor.
        let mut calm = true;
        // The previous accepted sample (every accepted sample, and only
        // those, goes to the window; a reset clears it).
        if let Some(last) = self.window.back(1) {
            let step = T::abs(v - last);
            let since = self.since_accepted_ms.saturating_add(dt_ms);
            // `step` may be infinite, never NaN (two finite values). It,
            // the allowance (a positive rate times a time, never NaN) and,
            // with `by_bits`, the noise floor have a clear sign bit: by the
            // bits, the same answers ([`Real::less_positive_bits`]).
            let allowed = allowance(since);
            let spike = if by_bits {
                T::less_positive_bits(allowed, step)
            } else {
                above(step, allowed)
            };
            if spike {
                self.since_accepted_ms = since;
                return (FaultCode::Spike, Quality::Bad);
            }
            calm = if by_bits {
                !T::less_positive_bits(cfg.noise_floor, step)
            } else {
                !above(step, cfg.noise_floor)
            };
        }
        self.since_accepted_ms = 0;
        self.window.write(v);
        if calm && self.window.len() >= W && within_band(self.window.as_slice(), v, cfg.noise_floor)
        {
            return (FaultCode::Frozen, Quality::Uncertain);
        }
        (signal_fault, signal_quality)
    }

    /// The accepted sample `k` accepted samples ago (1: the latest), if
    /// still in the frozen window, and how many the window holds (a
    /// channel's median takes its samples from here: it filters exactly the
    /// accepted samples).
    #[inline]
    pub(crate) fn accepted_back(&self, k: usize) -> (Option<T>, usize) {
        (self.window.back(k), self.window.len())
    }

    /// Forgets the history (after a configuration change or restart).
    pub fn reset(&mut self) {
        self.window.clear();
        self.since_accepted_ms = 0;
    }
}

/// The largest plausible change over `ms` milliseconds at `max_rate` per
/// second.
#[inline]
pub fn rate_allowance<T: Real>(max_rate: T, ms: u32) -> T {
    // An exact u32 -> f64 lets the f32 build convert in one instruction.
    let dt_s = T::of(f64::from(ms)) * T::of(1.0e-3);
    max_rate * dt_s
}

/// `true` if `v` and every value of `values` lie within a band `floor` wide
/// (`max − min <= floor`). Stops at the first value that widens the band
/// beyond `floor`: the running range only grows, so the answer is that of
/// the whole window, and a live signal is told from a frozen one after a
/// sample or two instead of a pass over the window. NaN-free values and
/// `floor >= 0` (validated) assumed: the band is tested where it widens
/// only (a value inside it leaves the answer as it was, and the band of
/// `v` alone, 0, is within any such floor). One exit, taken where the band
/// widens, which also keeps the loop one copy (Cortex-M4F: not unrolled).
fn within_band<T: Real>(values: &[T], v: T, floor: T) -> bool {
    let mut lo = v;
    let mut hi = v;
    for &x in values {
        if below(x, lo) {
            lo = x;
        } else if above(x, hi) {
            hi = x;
        } else {
            continue;
        }
        if above(hi - lo, floor) {
            return false;
        }
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::signal::{InstrumentClass, SignalKind, Unit};

    /// The plausibility tests by the bit patterns (`by_bits`, for a range
    /// above zero and a noise floor that is not −0) give the faults and
    /// qualities of the float compares (consistency check), over a seeded
    /// stream of samples in, at the edges of and outside the range (zero,
    /// negative), steps within and beyond the noise floor and the rate
    /// allowance, and intervals including 0 ms.
    #[test]
    fn checks_by_bits_equal_the_float_checks() {
        for (noise_floor, low) in [(0.0_f32, 1.0_f32), (0.5, 1.0e-30), (2.0, 10.0)] {
            let cfg = ChannelConfig {
                id: 0,
                signal: SignalKind::Engineering,
                unit: Unit::Other,
                range_low: 0.0,
                range_high: 100.0,
                plausible_low: low,
                plausible_high: 90.0,
                noise_floor,
                instrument: InstrumentClass::Absolute(0.0),
                max_rate: 400.0,
                filter_time_constant_s: 0.0,
                hold_ms: 0,
            };
            let (mut a, mut b) = (Plausibility::<f32, 4>::new(), Plausibility::<f32, 4>::new());
            let mut state = 17_u64;
            for i in 0..20_000 {
                state = crate::lcg64_step(state);
                let v = match (state >> 33) % 9 {
                    0 => low,
                    1 => 90.0,
                    2 => 0.0,
                    3 => -5.0,
                    4 => 95.0,
                    _ => 40.0 + ((state >> 40) % 64) as f32 * 0.25,
                };
                let dt = ((state >> 20) % 30) as u32;
                let rate = |ms| rate_allowance(cfg.max_rate, ms);
                let ok = (FaultCode::None, Quality::Good);
                let want = a.check_scaled(&cfg, v, dt, ok, false, rate);
                let got = b.check_scaled(&cfg, v, dt, ok, true, rate);
                assert_eq!(got, want, "sample {i}: {v} after {dt} ms");
            }
        }
    }

    /// The early-exit band test gives the full-window answer
    /// (`max − min <= floor` over all values; consistency check) on a
    /// seeded set of windows, floors 0 and up.
    #[test]
    fn within_band_equals_the_full_range_test() {
        let mut state = 7_u64;
        for _ in 0..5000 {
            let mut w = [0.0_f32; 8];
            for x in w.iter_mut() {
                state = crate::lcg64_step(state);
                *x = 100.0 + ((state >> 40) % 9) as f32 * 0.25;
            }
            let v = 100.5_f32;
            let floor = ((state >> 20) % 10) as f32 * 0.25;
            let lo = w.iter().fold(v, |a, &b| <f32 as Real>::min(a, b));
            let hi = w.iter().fold(v, |a, &b| <f32 as Real>::max(a, b));
            assert_eq!(within_band(&w, v, floor), hi - lo <= floor, "{w:?} {floor}");
        }
    }
}
