//! One channel end to end: scale, diagnose, filter, substitute, log.
//!
//! Order per sample: scaling and signal-level diagnostics (NE 43), then
//! plausibility (time, finite, range, spike, frozen), then — for accepted
//! samples only — median and low-pass, then substitution of a bad sample
//! by the held last good value. Fixed memory: a `W`-sample frozen window
//! and an `M`-sample median.

use core::mem::MaybeUninit;

use super::channel::{ChannelConfig, Scaling};
use super::clock::{SampleClock, Tick};
use super::events::{Event, EventLog};
use super::filter::{low_pass_gain, low_pass_step, SortedWindow};
use super::plausibility::{rate_allowance, Plausibility};
use super::substitution::{Substituted, Substitution};
use super::{ChannelStatus, FaultCode};
use crate::error::ConfigError;
use crate::quality::{Measured, Quality};
use crate::real::{Real, HARD_FLOAT};
use crate::units::{Kelvin, PressureAbs};

/// What a channel reports for one sample.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ChannelOutput<T> {
    /// Validated, unfiltered value, SI (for the surge path).
    pub raw: Measured<T>,
    /// Median- and low-pass-filtered value, SI (for performance).
    pub filtered: Measured<T>,
    /// Status with fault code.
    pub status: ChannelStatus,
}

impl<T: Real> ChannelOutput<T> {
    /// All bad, nothing seen.
    pub fn bad(channel: u8) -> Self {
        ChannelOutput {
            raw: Measured::bad(),
            filtered: Measured::bad(),
            status: ChannelStatus {
                channel,
                quality: Quality::Bad,
                fault: FaultCode::InputBad,
                substituted: false,
                last_good_ms: 0,
            },
        }
    }

    /// The filtered value as an absolute pressure (for a pressure channel).
    pub fn pressure(&self) -> Measured<PressureAbs<T>> {
        self.filtered.map(PressureAbs::from_pa)
    }

    /// The unfiltered value as an absolute pressure.
    pub fn raw_pressure(&self) -> Measured<PressureAbs<T>> {
        self.raw.map(PressureAbs::from_pa)
    }

    /// The filtered value as a temperature (for a temperature channel).
    pub fn temperature(&self) -> Measured<Kelvin<T>> {
        self.filtered.map(Kelvin::new)
    }

    /// Marks the output at most `q` with `fault` (used by cross-checks).
    pub fn downgrade(&mut self, q: Quality, fault: FaultCode) {
        if q > self.status.quality {
            self.status.quality = q;
            self.status.fault = fault;
        }
        self.raw = self.raw.at_most(q);
        self.filtered = self.filtered.at_most(q);
    }
}

/// A configured channel with its state. Laid out in the order written
/// (`repr(C)`), the state every sample reads first: on a Cortex-M0 a load
/// reaches 124 bytes past its base register at most.
#[derive(Clone, Copy, Debug)]
#[repr(C)]
pub struct Channel<T, const W: usize, const M: usize> {
    clock: SampleClock,
    /// Once the clock has started: the largest advance that is a normal
    /// interval whatever the period, ms (`min(gap_floor_ms, 2^31 − 1)`); 0
    /// before (then every stamp takes the clock's full rules).
    normal_max_ms: u32,
    /// Sanitised time since the low-pass last ran, ms (saturating).
    since_filtered_ms: u32,
    /// The low-pass gain of the latest interval (the usual one): interval,
    /// gain (NaN for none, [`low_pass_step`]).
    gain: (u32, T),
    /// The spike allowance of the latest interval: interval, allowance.
    allowance: (u32, T),
    /// The low-pass output ([`super::filter::LowPass`]'s), NaN before the
    /// first filtered sample ([`low_pass_step`]).
    low_pass: T,
    plausibility: Plausibility<T, W>,
    /// The median's samples, ascending: the last `M` accepted ones, whose
    /// arrival order is the frozen window's (every accepted sample, and only
    /// those, goes to both; a reset clears both).
    median: SortedWindow<T, M>,
    resync_left: u32,
    /// `true` where a float compare is a soft-float call (Cortex-M0) and
    /// the plausible range lies above zero and the noise floor is not −0:
    /// the plausibility tests compare on the bit patterns (the same
    /// answers; [`Plausibility`]'s `check_scaled`).
    by_bits: bool,
    /// `true` if the plausible range lies above zero: every accepted sample
    /// is then positive and finite, and without a floating-point unit the
    /// median compares on the bit patterns
    /// ([`SortedWindow::update_positive`]; with one, the float compare
    /// costs the same and one copy of the median serves every channel).
    positive: bool,
    scaling: Scaling<T>,
    /// The smallest gap limit, ms: `max(hold_ms, 1)`.
    gap_floor_ms: u32,
    config: ChannelConfig<T>,
    substitution: Substitution<T>,
    last: ChannelOutput<T>,
}

impl<T: Real, const W: usize, const M: usize> Channel<T, W, M> {
    /// Validates `config` and builds the channel. `W` (frozen window) must
    /// be at least 2 and `M` (median) odd, at most 15 and at most `W` (the
    /// median reads its samples from the frozen window), checked at compile
    /// time:
    ///
    /// ```compile_fail
    /// use polytrope::signal::{Channel, ChannelConfig, InstrumentClass, SignalKind, Unit};
    /// let cfg = ChannelConfig { id: 0, signal: SignalKind::Engineering, unit: Unit::Other,
    ///     range_low: 0.0_f32, range_high: 1.0, plausible_low: 0.0, plausible_high: 1.0,
    ///     noise_floor: 0.0, instrument: InstrumentClass::Absolute(0.0), max_rate: 1.0,
    ///     filter_time_constant_s: 0.0, hold_ms: 0 };
    /// let _ = Channel::<f32, 8, 4>::new(cfg); // an even median window does not compile
    /// ```
    ///
    /// ```compile_fail
    /// use polytrope::signal::{Channel, ChannelConfig, InstrumentClass, SignalKind, Unit};
    /// let cfg = ChannelConfig { id: 0, signal: SignalKind::Engineering, unit: Unit::Other,
    ///     range_low: 0.0_f32, range_high: 1.0, plausible_low: 0.0, plausible_high: 1.0,
    ///     noise_floor: 0.0, instrument: InstrumentClass::Absolute(0.0), max_rate: 1.0,
    ///     filter_time_constant_s: 0.0, hold_ms: 0 };
    /// let _ = Channel::<f32, 4, 5>::new(cfg); // a median wider than the frozen window does not compile
    /// ```
    ///
    /// (and the same channel with `W` = 5 does:)
    ///
    /// ```
    /// use polytrope::signal::{Channel, ChannelConfig, InstrumentClass, SignalKind, Unit};
    /// let cfg = ChannelConfig { id: 0, signal: SignalKind::Engineering, unit: Unit::Other,
    ///     range_low: 0.0_f32, range_high: 1.0, plausible_low: 0.0, plausible_high: 1.0,
    ///     noise_floor: 0.0, instrument: InstrumentClass::Absolute(0.0), max_rate: 1.0,
    ///     filter_time_constant_s: 0.0, hold_ms: 0 };
    /// assert!(Channel::<f32, 5, 5>::new(cfg).is_ok());
    /// ```
    pub fn new(config: ChannelConfig<T>) -> Result<Self, ConfigError> {
        const {
            assert!(
                M <= W,
                "the median window takes its samples from the frozen window: M <= W"
            )
        };
        config.validate()?;
        Ok(Self::build(config))
    }

    /// As [`Channel::new`], built in place in `slot` (for a device that
    /// keeps its channels in one array: no copy of a channel is built on the
    /// stack and moved). On a refusal `slot` is left as it was.
    pub fn new_in(
        slot: &mut MaybeUninit<Self>,
        config: ChannelConfig<T>,
    ) -> Result<&mut Self, ConfigError> {
        config.validate()?;
        Ok(slot.write(Self::build(config)))
    }

    /// The channel of a validated `config` (infallible: built where it is
    /// written).
    #[inline(always)]
    fn build(config: ChannelConfig<T>) -> Self {
        const {
            assert!(
                M <= W,
                "the median window takes its samples from the frozen window: M <= W"
            )
        };
        Channel {
            config,
            scaling: Scaling::for_channel(&config),
            plausibility: Plausibility::new(),
            median: SortedWindow::new(),
            low_pass: T::of(f64::NAN),
            substitution: Substitution::new(),
            clock: SampleClock::new(),
            gap_floor_ms: config.hold_ms.max(1),
            normal_max_ms: 0,
            by_bits: !HARD_FLOAT
                && config.plausible_low > T::ZERO
                && !T::same_bits(config.noise_floor, T::of(-0.0)),
            positive: config.plausible_low > T::ZERO,
            since_filtered_ms: 0,
            resync_left: 0,
            gain: (0, Self::gain_or_nan(0, config.filter_time_constant_s)),
            allowance: (0, rate_allowance(config.max_rate, 0)),
            last: ChannelOutput::bad(config.id),
        }
    }

    /// Forgets every sample, stamp and held value (after a restart, a
    /// maintenance period or a clock change): the channel is as new.
    pub fn reset(&mut self) {
        self.plausibility.reset();
        self.low_pass = T::of(f64::NAN);
        self.substitution = Substitution::new();
        self.clock.reset();
        self.normal_max_ms = 0;
        self.since_filtered_ms = 0;
        self.resync_left = 0;
        self.last = ChannelOutput::bad(self.config.id);
    }

    /// [`low_pass_gain`], NaN for none ([`low_pass_step`]).
    fn gain_or_nan(ms: u32, tau_s: T) -> T {
        low_pass_gain(ms, tau_s).unwrap_or(T::of(f64::NAN))
    }

    /// The validated configuration.
    pub fn config(&self) -> &ChannelConfig<T> {
        &self.config
    }

    /// The latest output (all bad before the first sample).
    pub fn output(&self) -> &ChannelOutput<T> {
        &self.last
    }

    /// Processes raw sample `raw` taken at `t_ms` (a free-running 32-bit
    /// millisecond tick that may wrap; see [`super::clock`]). Any `raw` is
    /// accepted (NaN, infinities, anything): the output is always finite.
    ///
    /// Clock faults (see [`super::clock`]): a stamp that does not advance
    /// makes the sample bad ([`FaultCode::TimeNotAdvancing`]) and one
    /// estimated sample period still counts toward the hold time, so a
    /// frozen clock ends in bad after `hold_ms`; a stamp that steps back
    /// resynchronises the channel, restarts the filters and marks the next
    /// `M` samples at most uncertain ([`FaultCode::ClockStep`]); a jump ahead
    /// by more than the gap limit (`hold_ms`, or 8 sample periods if longer)
    /// restarts the filters from the new sample.
    #[inline]
    pub fn update(&mut self, raw: T, t_ms: u32) -> ChannelOutput<T> {
        *self.update_in_place(raw, t_ms)
    }

    /// [`Channel::update`] leaving the output only where the channel keeps
    /// it (what [`Channel::output`] reads) and returning it by reference:
    /// not built in the caller's frame and copied into the channel, nor
    /// copied out again by a caller that reads a part of it (a controller's
    /// scan). Out of line: one copy of the code for all channels.
    #[inline(never)]
    pub fn update_in_place(&mut self, raw: T, t_ms: u32) -> &ChannelOutput<T> {
        // Gap limit max(hold_ms, 8 periods, 1 ms).
        let gap_floor_ms = self.gap_floor_ms;
        // The usual stamp first: an advance of 1 ms up to the gap floor (and
        // at most 2^31 − 1 ms) of a started clock is normal whatever the
        // period (the gap test below is false for it), which is what the
        // clock's rules make of it.
        let d = t_ms.wrapping_sub(self.clock.last_ms());
        let (tick, dt_ms) = if d.wrapping_sub(1) < self.normal_max_ms {
            self.clock.advance_normal(t_ms, d);
            (Tick::Normal, d)
        } else {
            self.normal_max_ms = gap_floor_ms.min(i32::MAX as u32);
            self.clock.tick_gap_if(t_ms, |dt, period| {
                dt > gap_floor_ms && dt > period.saturating_mul(8)
            })
        };
        if matches!(tick, Tick::Gap | Tick::SteppedBack) {
            self.low_pass = T::of(f64::NAN);
            self.plausibility.reset();
        }
        if tick == Tick::SteppedBack {
            self.resync_left = u32::try_from(M).unwrap_or(u32::MAX).max(1);
        }
        let (v, signal_fault, signal_quality) = self.scaling.scale_classified(raw);
        // The sample leaving the median's last `M` if this one is accepted
        // (read before the plausibility check writes it to the window).
        let (leaving, held) = self.plausibility.accepted_back(M);
        // The fault and its quality (`fault.quality()`).
        let (mut fault, mut q) = if tick == Tick::Stalled {
            (FaultCode::TimeNotAdvancing, Quality::Bad)
        } else {
            // `v` is finite unless the signal fault is bad (`scale`).
            let (max_rate, allowance) = (self.config.max_rate, &mut self.allowance);
            self.plausibility.check_scaled(
                &self.config,
                v,
                dt_ms,
                (signal_fault, signal_quality),
                // (Known false at compile time with a floating-point unit.)
                !HARD_FLOAT && self.by_bits,
                |ms| {
                    if allowance.0 != ms {
                        *allowance = (ms, rate_allowance(max_rate, ms));
                    }
                    allowance.1
                },
            )
        };
        if tick != Tick::Stalled && self.resync_left > 0 {
            self.resync_left -= 1;
            if q == Quality::Good {
                (fault, q) = (FaultCode::ClockStep, Quality::Uncertain);
            }
        }
        // The time since the low-pass last ran grows by `dt_ms` over a bad
        // sample; the low-pass reads it and restarts it.
        let (r, f) = if q == Quality::Bad {
            self.since_filtered_ms = self.since_filtered_ms.saturating_add(dt_ms);
            (T::ZERO, T::ZERO)
        } else {
            // With a floating-point unit the float compare costs what the
            // integer one does: one copy of the median code (the same
            // order, so the same median) instead of two.
            let m = if !HARD_FLOAT && self.positive {
                self.median.update_positive(v, leaving, held)
            } else {
                self.median.update(v, leaving, held)
            };
            let ms = self.since_filtered_ms.saturating_add(dt_ms);
            self.since_filtered_ms = 0;
            if self.gain.0 != ms {
                self.gain = (
                    ms,
                    Self::gain_or_nan(ms, self.config.filter_time_constant_s),
                );
            }
            let f = low_pass_step(self.low_pass, m, self.gain.1);
            self.low_pass = f;
            (v, f)
        };
        // Substitution, with a good sample remembered lazily: a good sample
        // passes as it is (what `apply` returns for it) and stays readable
        // in `self.last` (its output: its values, good, its stamp), which
        // `apply` is given as the good sample it would have recorded once
        // the next sample is not good, before that sample (the same state:
        // no time elapses between the two, and a reset makes `self.last` bad).
        let s = if q == Quality::Good {
            Substituted {
                raw: r,
                filtered: f,
                quality: Quality::Good,
                held: false,
            }
        } else {
            let hold_ms = self.config.hold_ms;
            let last = &self.last;
            if last.status.quality == Quality::Good {
                self.substitution.apply(
                    last.raw.value,
                    last.filtered.value,
                    Quality::Good,
                    last.status.last_good_ms,
                    0,
                    hold_ms,
                );
            }
            self.substitution.apply(r, f, q, t_ms, dt_ms, hold_ms)
        };
        // Both values are finite by construction (a sample that is not is
        // bad and replaced by 0; the low-pass falls back to its finite input;
        // a held value was a good one) and the quality is good, uncertain or
        // bad, never not applicable: `Measured::derived`'s finiteness and
        // quality checks would change nothing (measured: 34 instructions per
        // update on Cortex-M4F).
        // Written in place, all but the channel number: the output kept is
        // `ChannelOutput::bad(config.id)` from construction and every reset
        // on, and only this writes it, so its channel is `config.id`
        // already (a load and a store fewer per sample).
        let last_good_ms = if q == Quality::Good {
            // A good sample is the last good one (as substitution just
            // recorded it).
            t_ms
        } else {
            self.substitution.last_good_ms().unwrap_or(0)
        };
        let last = &mut self.last;
        last.raw = Measured::new(s.raw, s.quality);
        last.filtered = Measured::new(s.filtered, s.quality);
        last.status = ChannelStatus {
            channel: last.status.channel,
            quality: s.quality,
            fault,
            substituted: s.held,
            last_good_ms,
        };
        &self.last
    }

    /// As [`Channel::update`], and logs a quality transition in `log`.
    pub fn update_logged<const E: usize>(
        &mut self,
        raw: T,
        t_ms: u32,
        log: &mut EventLog<E>,
    ) -> ChannelOutput<T> {
        let before = self.last.status.quality;
        let out = self.update(raw, t_ms);
        if out.status.quality != before {
            log.push(Event {
                time_ms: t_ms,
                channel: self.config.id,
                from: before,
                to: out.status.quality,
                fault: out.status.fault,
            });
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::signal::{InstrumentClass, SignalKind, Unit};

    /// The channel's substitution (a good sample remembered lazily) gives
    /// what an eagerly driven [`Substitution`] gives on the same samples
    /// (consistency check): held values, qualities, the held flag and the
    /// last good stamp, over a seeded stream of good, saturated, failed, NaN,
    /// out-of-range and spiking currents, with stalls, steps back and gaps
    /// of the clock, and resets.
    #[test]
    fn lazy_substitution_equals_the_eager_one() {
        let cfg = ChannelConfig {
            id: 3,
            signal: SignalKind::Current4To20,
            unit: Unit::PressureAbs,
            range_low: 0.0_f32,
            range_high: 1.0e6,
            plausible_low: 1.0e4,
            plausible_high: 1.05e6,
            noise_floor: 10.0,
            instrument: InstrumentClass::Absolute(0.0),
            max_rate: 2.0e6,
            filter_time_constant_s: 0.1,
            hold_ms: 100,
        };
        let mut ch = Channel::<f32, 8, 5>::new(cfg).unwrap();
        let mut clock = SampleClock::new();
        let mut eager = Substitution::<f32>::new();
        let mut t = 0_u32;
        let mut state = 23_u64;
        let mut held_seen = 0;
        for i in 0..50_000 {
            state = crate::lcg64_step(state);
            let raw = match (state >> 33) % 16 {
                0 => f32::NAN,
                1 => 2.0,
                2 => 20.8,
                3 => 4.05,
                4 => 19.0 + ((state >> 40) % 4) as f32,
                _ => 8.0 + ((state >> 40) % 100) as f32 * 0.001,
            };
            t = match (state >> 20) % 32 {
                0 => t,
                1 => t.wrapping_sub(30),
                2 => t.wrapping_add(400),
                _ => t.wrapping_add(20),
            };
            if i % 997 == 996 {
                ch.reset();
                clock.reset();
                eager = Substitution::new();
            }
            let out = ch.update(raw, t);
            let gap_floor = cfg.hold_ms.max(1);
            let (_, dt) = clock.tick_gap_if(t, |dt, period| {
                dt > gap_floor && dt > period.saturating_mul(8)
            });
            let q = out.status.fault.quality();
            let s = eager.apply(out.raw.value, out.filtered.value, q, t, dt, cfg.hold_ms);
            held_seen += usize::from(s.held);
            assert_eq!(
                (s.raw.to_bits(), s.filtered.to_bits(), s.quality, s.held),
                (
                    out.raw.value.to_bits(),
                    out.filtered.value.to_bits(),
                    out.status.quality,
                    out.status.substituted
                ),
                "sample {i}"
            );
            let last_good = if q == Quality::Good {
                t
            } else {
                eager.last_good_ms().unwrap_or(0)
            };
            assert_eq!(out.status.last_good_ms, last_good, "sample {i}");
        }
        assert!(held_seen > 1000, "{held_seen} held samples");
    }
}
