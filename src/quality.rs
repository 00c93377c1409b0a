//! Signal and result quality: every value the kernel reports carries one,
//! and the fault vocabulary that says why a value is not good
//! ([`FaultCode`], used by the signal front end and the flow elements).
//!
//! Three levels, ordered from best to worst, as in common process-control
//! practice (good / uncertain / bad), and a fourth state, not applicable,
//! for a value that does not exist in this configuration or query (the next
//! stage's temperature rise when a pump or nothing follows; efficiencies of
//! a rating-point query without a discharge temperature). It is not a
//! fault: alarms key on bad, never on not applicable. A derived value takes
//! the worst quality of the values it was computed from ([`Quality::worst`];
//! not applicable dominates, since a value computed from something that does
//! not exist does not exist either).

use crate::real::Real;

/// How far a value can be trusted.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Quality {
    /// Valid input, consistent result.
    #[default]
    Good,
    /// Usable with care: substituted, outside a validated range, or
    /// physically suspicious (for example an efficiency above 1).
    Uncertain,
    /// Not usable. The value is a finite placeholder (zero) and must not be
    /// trended, alarmed on or controlled with.
    Bad,
    /// Does not apply here (not a fault). The value is a finite placeholder
    /// (zero).
    NotApplicable,
}

impl Quality {
    /// The worse of two qualities.
    #[inline]
    #[must_use]
    pub fn worst(self, other: Quality) -> Quality {
        if other > self {
            other
        } else {
            self
        }
    }

    /// `true` for [`Quality::Good`].
    #[inline]
    pub fn is_good(self) -> bool {
        self == Quality::Good
    }

    /// `true` for [`Quality::Good`] and [`Quality::Uncertain`] (a value
    /// exists and may be used with its quality).
    #[inline]
    pub fn is_usable(self) -> bool {
        matches!(self, Quality::Good | Quality::Uncertain)
    }
}

/// Why a channel (or a derived value) is not good. `None` when good.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(u8)]
pub enum FaultCode {
    /// No fault.
    #[default]
    None = 0,
    /// NE 43 failure signal, low (at or below 3.6 mA): open loop, failed
    /// transmitter.
    Ne43FailureLow = 1,
    /// NE 43 failure signal, high (at or above 21.0 mA).
    Ne43FailureHigh = 2,
    /// Between the NE 43 measuring range and the failure threshold, low
    /// side (above 3.6 and below 3.8 mA): saturated, uncertain.
    Ne43SaturatedLow = 3,
    /// Between the NE 43 measuring range and the failure threshold, high
    /// side (above 20.5 and below 21.0 mA): saturated, uncertain.
    Ne43SaturatedHigh = 4,
    /// A voltage or count signal beyond its span by more than the allowance.
    SignalOutOfRange = 5,
    /// The sample is NaN or infinite.
    NotFinite = 6,
    /// The sample time did not advance since the previous sample.
    TimeNotAdvancing = 7,
    /// The value is outside the channel's plausibility limits.
    OutOfRange = 8,
    /// The rate of change exceeds the channel's limit (spike).
    Spike = 9,
    /// No variation beyond the noise floor over the whole frozen window.
    Frozen = 10,
    /// An analytical-redundancy cross-check failed.
    CrossCheck = 11,
    /// A differential-pressure zero offset persists at no-flow conditions.
    ZeroOffset = 12,
    // 13 is retired (a validity-limit code no calculation produced; the
    // orifice reports `within_limits` instead). Codes are never reused.
    /// A derived value whose input was bad.
    InputBad = 14,
    /// The sample clock stepped back and the channel resynchronised; the
    /// first samples after it are uncertain (see [`crate::clock`]).
    ClockStep = 15,
}

impl FaultCode {
    /// The quality a sample with this fault gets (before substitution).
    pub fn quality(self) -> Quality {
        use FaultCode::*;
        match self {
            None => Quality::Good,
            Ne43SaturatedLow | Ne43SaturatedHigh | Frozen | CrossCheck | ZeroOffset | ClockStep => {
                Quality::Uncertain
            }
            Ne43FailureLow | Ne43FailureHigh | SignalOutOfRange | NotFinite | TimeNotAdvancing
            | OutOfRange | Spike | InputBad => Quality::Bad,
        }
    }

    /// The numeric code (stable; for registers and logs).
    pub fn code(self) -> u8 {
        self as u8
    }
}

/// A value with its quality.
///
/// Construct kernel outputs with [`Measured::derived`], which never lets a NaN
/// or an infinity through: a non-finite value becomes `0` with
/// [`Quality::Bad`].
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Measured<V> {
    /// The value, in the unit the field documents.
    pub value: V,
    /// How far the value can be trusted.
    pub quality: Quality,
}

impl<V> Measured<V> {
    /// A value with [`Quality::Good`].
    #[inline]
    pub const fn good(value: V) -> Self {
        Measured {
            value,
            quality: Quality::Good,
        }
    }

    /// A value with an explicit quality.
    #[inline]
    pub const fn new(value: V, quality: Quality) -> Self {
        Measured { value, quality }
    }

    /// Applies `f` to the value, keeping the quality (unit conversions).
    #[inline]
    pub fn map<U>(self, f: impl FnOnce(V) -> U) -> Measured<U> {
        Measured {
            value: f(self.value),
            quality: self.quality,
        }
    }
}

impl<T: Real> Measured<T> {
    /// A placeholder for a value that could not be computed: `0`, bad.
    #[inline]
    pub fn bad() -> Self {
        Measured {
            value: T::ZERO,
            quality: Quality::Bad,
        }
    }

    /// A placeholder for a value that does not apply: `0`, not applicable.
    #[inline]
    pub fn not_applicable() -> Self {
        Measured {
            value: T::ZERO,
            quality: Quality::NotApplicable,
        }
    }

    /// A computed value: keeps `quality` if `value` is finite and `quality`
    /// is usable; `0` with [`Quality::NotApplicable`] if `quality` is not
    /// applicable; otherwise `0` with [`Quality::Bad`].
    #[inline]
    pub fn derived(value: T, quality: Quality) -> Self {
        if quality == Quality::NotApplicable {
            Self::not_applicable()
        } else if T::is_finite(value) && quality != Quality::Bad {
            Measured { value, quality }
        } else {
            Self::bad()
        }
    }

    /// Downgrades the quality to at least `q`.
    #[inline]
    #[must_use]
    pub fn at_most(self, q: Quality) -> Self {
        Self::derived(self.value, self.quality.worst(q))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worst_is_ordered() {
        use Quality::*;
        assert_eq!(Good.worst(Uncertain), Uncertain);
        assert_eq!(Bad.worst(Good), Bad);
        assert_eq!(Uncertain.worst(Good), Uncertain);
        assert_eq!(Bad.worst(NotApplicable), NotApplicable);
        assert!(!NotApplicable.is_usable() && !Bad.is_usable() && Uncertain.is_usable());
        let na = Measured::derived(3.0_f32, NotApplicable);
        assert_eq!((na.value, na.quality), (0.0, NotApplicable));
    }

    #[test]
    fn derived_never_lets_non_finite_through() {
        for v in [f32::NAN, f32::INFINITY, f32::NEG_INFINITY] {
            let m = Measured::derived(v, Quality::Good);
            assert_eq!(m.value, 0.0);
            assert_eq!(m.quality, Quality::Bad);
        }
        let m = Measured::derived(5.0_f32, Quality::Uncertain);
        assert_eq!((m.value, m.quality), (5.0, Quality::Uncertain));
        assert_eq!(Measured::derived(5.0_f32, Quality::Bad).value, 0.0);
    }
}
