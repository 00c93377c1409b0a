//! A sample clock that survives a bad time source: the caller's millisecond
//! stamps are checked against the previous one, and every call yields a
//! sanitised elapsed time, so hold timers and filters keep counting when the
//! clock freezes, steps back or jumps ahead.
//!
//! Rules (chosen here; the usual fail-safe reading of a monotonic tick):
//! - a stamp that advances by at most the gap limit is normal;
//! - a stamp that advances by more is a gap (filters restart; the full time
//!   counts toward hold timers);
//! - a stamp equal to the previous one is a stall: the sample is not trusted,
//!   and one estimated sample period counts toward hold timers, so a frozen
//!   clock still ends in a timeout;
//! - a stamp below the previous one is a step back: the clock resynchronises
//!   to the new stamp (one estimated period counts), and the caller marks a
//!   bounded number of samples uncertain.
//!
//! The period estimate is the last normal interval (1 ms before any). The
//! first interval after a start or reset is never a gap: it sets the
//! estimate.

/// What one stamp did.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Tick {
    /// The first stamp since construction or reset.
    First,
    /// Advanced normally.
    Normal,
    /// Advanced by more than the gap limit.
    Gap,
    /// Did not advance.
    Stalled,
    /// Went backwards; resynchronised.
    SteppedBack,
}

/// The clock state of one sampled signal.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SampleClock {
    last_ms: Option<u64>,
    period_ms: Option<u64>,
}

impl SampleClock {
    /// No stamp seen yet.
    pub const fn new() -> Self {
        SampleClock {
            last_ms: None,
            period_ms: None,
        }
    }

    /// The estimated sample period, ms (at least 1; 1 before any normal
    /// interval was seen).
    pub fn period_ms(&self) -> u64 {
        self.period_ms.unwrap_or(1).max(1)
    }

    /// `true` once a normal interval has given a period estimate.
    pub fn has_period(&self) -> bool {
        self.period_ms.is_some()
    }

    /// Classifies stamp `t_ms`, with a gap above `gap_ms`, and returns the
    /// sanitised time elapsed since the previous stamp, ms.
    pub fn tick(&mut self, t_ms: u64, gap_ms: u64) -> (Tick, u64) {
        self.tick_gap_if(t_ms, |dt, _| dt > gap_ms)
    }

    /// As [`SampleClock::tick`], with the gap decided by `is_gap(dt_ms,
    /// period_ms)` (called only for an advancing stamp once a period is
    /// known), so a caller whose gap limit is a maximum of several terms
    /// can test them one at a time (`dt > max(a, b)` is `dt > a && dt > b`)
    /// and skip the 64-bit arithmetic of the rare ones.
    #[inline]
    pub fn tick_gap_if(&mut self, t_ms: u64, is_gap: impl FnOnce(u64, u64) -> bool) -> (Tick, u64) {
        let Some(last) = self.last_ms else {
            self.last_ms = Some(t_ms);
            return (Tick::First, 0);
        };
        if t_ms > last {
            let dt = t_ms - last;
            self.last_ms = Some(t_ms);
            if self.period_ms.is_some_and(|p| is_gap(dt, p.max(1))) {
                (Tick::Gap, dt)
            } else {
                self.period_ms = Some(dt);
                (Tick::Normal, dt)
            }
        } else if t_ms == last {
            (Tick::Stalled, self.period_ms())
        } else {
            self.last_ms = Some(t_ms);
            (Tick::SteppedBack, self.period_ms())
        }
    }

    /// Forgets every stamp.
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}
