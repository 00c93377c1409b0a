//! Substitution of a failed channel: hold the last good value, marked
//! uncertain, for a configured time; after that the channel is bad.
//!
//! Hold-last-good-value with a timeout is common practice in control
//! systems (a short transmitter glitch must not trip a machine; a long one
//! must not be hidden).

use crate::quality::Quality;
use crate::real::Real;

/// The last good values of a channel.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Substitution<T> {
    last_good: Option<(T, T, u32)>,
    since_good_ms: u32,
}

/// What a channel reports after substitution.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Substituted<T> {
    /// Raw (validated, unfiltered) value.
    pub raw: T,
    /// Filtered value.
    pub filtered: T,
    /// Quality after substitution.
    pub quality: Quality,
    /// `true` if the values are held ones.
    pub held: bool,
}

impl<T: Real> Substitution<T> {
    /// Nothing held yet.
    pub const fn new() -> Self {
        Substitution {
            last_good: None,
            since_good_ms: 0,
        }
    }

    /// Applies substitution to a sample of quality `q` stamped `t_ms` (the
    /// caller's 32-bit tick, kept as the time of the last good sample),
    /// `elapsed_ms` (sanitised by the channel's clock, so a frozen or
    /// stepped clock still counts) after the previous sample. A good or
    /// uncertain sample passes (a good one is remembered); a bad one is
    /// replaced by the last good values, uncertain, while no more than
    /// `hold_ms` of sanitised time have passed since that good sample, and by
    /// `0`, bad, after. The sanitised time since the good sample saturates at
    /// 2^32 − 1 ms.
    pub fn apply(
        &mut self,
        raw: T,
        filtered: T,
        q: Quality,
        t_ms: u32,
        elapsed_ms: u32,
        hold_ms: u32,
    ) -> Substituted<T> {
        match q {
            Quality::Good => {
                self.last_good = Some((raw, filtered, t_ms));
                self.since_good_ms = 0;
                Substituted {
                    raw,
                    filtered,
                    quality: q,
                    held: false,
                }
            }
            Quality::Uncertain => {
                self.since_good_ms = self.since_good_ms.saturating_add(elapsed_ms);
                Substituted {
                    raw,
                    filtered,
                    quality: q,
                    held: false,
                }
            }
            // A channel never reports "not applicable"; treat it as a fault.
            Quality::Bad | Quality::NotApplicable => {
                self.since_good_ms = self.since_good_ms.saturating_add(elapsed_ms);
                self.held(hold_ms)
            }
        }
    }

    /// The last good values, uncertain, while at most `hold_ms` have passed
    /// since them; 0, bad, after.
    #[inline]
    fn held(&self, hold_ms: u32) -> Substituted<T> {
        match self.last_good {
            Some((r, f, _)) if self.since_good_ms <= hold_ms => Substituted {
                raw: r,
                filtered: f,
                quality: Quality::Uncertain,
                held: true,
            },
            _ => Substituted {
                raw: T::ZERO,
                filtered: T::ZERO,
                quality: Quality::Bad,
                held: false,
            },
        }
    }

    /// Time of the last good sample, ms (the caller's 32-bit tick).
    pub fn last_good_ms(&self) -> Option<u32> {
        self.last_good.map(|(_, _, t)| t)
    }
}
