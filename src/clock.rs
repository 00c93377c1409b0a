//! A sample clock that survives a bad time source: the caller's millisecond
//! stamps are checked against the previous one, and every call yields a
//! sanitised elapsed time, so hold timers and filters keep counting when the
//! clock freezes, steps back or jumps ahead.
//!
//! Stamps are a free-running 32-bit millisecond tick (`u32`), as a
//! microcontroller's system timer gives it: it wraps after 2^32 ms (about
//! 49.7 days), and the interval between two stamps is their wrapping
//! difference, so the wrap is an ordinary interval. A caller with a wider
//! counter passes its low 32 bits (`t as u32`). An interval is read as a
//! signed 32-bit number: a stamp up to 2^31 − 1 ms (about 24.8 days) ahead
//! of the previous one advances, a stamp behind it (or 2^31 ms or more
//! ahead, which a 32-bit tick cannot tell from behind) steps back.
//!
//! Rules (chosen here; the usual fail-safe reading of a monotonic tick):
//! - a stamp that advances by at most the gap limit is normal;
//! - a stamp that advances by more is a gap (filters restart; the full time
//!   counts toward hold timers);
//! - a stamp equal to the previous one is a stall: the sample is not trusted,
//!   and one estimated sample period counts toward hold timers, so a frozen
//!   clock still ends in a timeout;
//! - a stamp behind the previous one is a step back: the clock resynchronises
//!   to the new stamp (one estimated period counts), and the caller marks a
//!   bounded number of samples uncertain.
//!
//! The period estimate is the last normal interval (1 ms before any). The
//! first interval after a start or reset is never a gap: it sets the
//! estimate. All arithmetic is 32-bit (one instruction per step on a
//! Cortex-M; a 64-bit stamp costs several per step and a soft-float
//! conversion where it meets the filters).

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
    /// The previous stamp (meaningless until `started`).
    last_ms: u32,
    /// The last normal interval, ms; 0 until one was seen (a normal
    /// interval is at least 1 ms).
    period_ms: u32,
    /// `true` once a stamp was seen.
    started: bool,
}

/// Intervals above this are steps back (a negative signed 32-bit
/// difference).
const LARGEST_ADVANCE_MS: u32 = i32::MAX as u32;

impl SampleClock {
    /// No stamp seen yet.
    pub const fn new() -> Self {
        SampleClock {
            last_ms: 0,
            period_ms: 0,
            started: false,
        }
    }

    /// The estimated sample period, ms (at least 1; 1 before any normal
    /// interval was seen).
    #[inline]
    pub fn period_ms(&self) -> u32 {
        self.period_ms.max(1)
    }

    /// `true` once a normal interval has given a period estimate.
    pub fn has_period(&self) -> bool {
        self.period_ms != 0
    }

    /// Classifies stamp `t_ms`, with a gap above `gap_ms`, and returns the
    /// sanitised time elapsed since the previous stamp, ms.
    pub fn tick(&mut self, t_ms: u32, gap_ms: u32) -> (Tick, u32) {
        self.tick_gap_if(t_ms, |dt, _| dt > gap_ms)
    }

    /// As [`SampleClock::tick`], with the gap decided by `is_gap(dt_ms,
    /// period_ms)` (called only for an advancing stamp once a period is
    /// known), for a caller whose gap limit depends on the period.
    #[inline]
    pub fn tick_gap_if(&mut self, t_ms: u32, is_gap: impl FnOnce(u32, u32) -> bool) -> (Tick, u32) {
        if !self.started {
            self.started = true;
            self.last_ms = t_ms;
            return (Tick::First, 0);
        }
        let dt = t_ms.wrapping_sub(self.last_ms);
        if dt == 0 {
            return (Tick::Stalled, self.period_ms());
        }
        self.last_ms = t_ms;
        if dt > LARGEST_ADVANCE_MS {
            (Tick::SteppedBack, self.period_ms())
        } else if self.period_ms != 0 && is_gap(dt, self.period_ms) {
            (Tick::Gap, dt)
        } else {
            self.period_ms = dt;
            (Tick::Normal, dt)
        }
    }

    /// The previous stamp (meaningless before the first).
    #[inline]
    pub(crate) fn last_ms(&self) -> u32 {
        self.last_ms
    }

    /// Records stamp `t_ms`, `dt_ms` after the previous one, as a normal
    /// interval: what [`SampleClock::tick_gap_if`] does for a started clock
    /// and `1 <= dt_ms <= 2^31 − 1` that is not a gap. For a caller that
    /// knows this of the stamp (and then has `(Tick::Normal, dt_ms)`).
    #[inline]
    pub(crate) fn advance_normal(&mut self, t_ms: u32, dt_ms: u32) {
        self.last_ms = t_ms;
        self.period_ms = dt_ms;
    }

    /// Forgets every stamp.
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every rule of the module docs, including the 32-bit wrap: an interval
    /// across 2^32 is an ordinary one, a stamp behind (or 2^31 ms or more
    /// ahead) is a step back.
    #[test]
    fn classifies_every_kind_of_stamp() {
        let mut c = SampleClock::new();
        assert_eq!(c.tick(u32::MAX - 30, 100), (Tick::First, 0));
        assert!(!c.has_period());
        // The first interval sets the estimate, whatever its size.
        assert_eq!(c.tick(u32::MAX - 10, 5), (Tick::Normal, 20));
        assert_eq!(c.period_ms(), 20);
        // Across the wrap: 20 ms.
        assert_eq!(c.tick(9, 100), (Tick::Normal, 20));
        assert_eq!(c.tick(9, 100), (Tick::Stalled, 20));
        assert_eq!(c.tick(5, 100), (Tick::SteppedBack, 20));
        // Resynchronised to 5: 25 is 20 ms later.
        assert_eq!(c.tick(25, 100), (Tick::Normal, 20));
        assert_eq!(c.tick(226, 100), (Tick::Gap, 201));
        // A gap does not change the estimate.
        assert_eq!(c.period_ms(), 20);
        // The largest advance, then one ms more than it (a step back).
        let t = 226_u32.wrapping_add(LARGEST_ADVANCE_MS);
        assert_eq!(c.tick(t, u32::MAX), (Tick::Normal, LARGEST_ADVANCE_MS));
        let t2 = t.wrapping_add(LARGEST_ADVANCE_MS + 1);
        assert_eq!(
            c.tick(t2, u32::MAX),
            (Tick::SteppedBack, LARGEST_ADVANCE_MS)
        );
        c.reset();
        assert_eq!(c, SampleClock::new());
        assert_eq!(c.period_ms(), 1);
        assert_eq!(c.tick(3, 1), (Tick::First, 0));
        assert_eq!(c.tick(3, 1), (Tick::Stalled, 1));
    }
}
