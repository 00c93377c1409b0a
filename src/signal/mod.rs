//! The signal front end: from raw transmitter signals to validated
//! engineering values, each with a [`Quality`] and a
//! [`FaultCode`] saying why not good.
//!
//! Per channel ([`Channel`]): scaling ([`channel`]), NAMUR NE 43 current
//! diagnostics ([`ne43`]), the sample clock — frozen, stepped back or
//! jumping stamps ([`clock`]) — plausibility — not finite, range, rate of
//! change (spike), frozen value ([`plausibility`],
//! with instrument tolerances from IEC 60751 in [`rtd_class`]) — filtering
//! (short median, then first-order low-pass, [`filter`]) and substitution
//! (hold the last good value as uncertain, then bad, [`substitution`]).
//! Quality transitions go to a fixed-capacity [`EventLog`] ([`events`]).
//! Between channels: analytical redundancy ([`cross_check`]). The results
//! fill a [`crate::scan::StageScan`] ([`scan_builder`]).
//!
//! Both the raw (validated, unfiltered) and the filtered value are kept.
//! Surge protection should take the raw one: a low-pass or median filter
//! delays the signal, and a delayed flow or pressure reading shows the
//! machine further from surge than it is.
//!
//! **Caution.** This is not a certified safety function; instrument
//! diagnostics here complement, never replace, the instrument maker's
//! diagnostics, the machine maker's data and licensed practice.
//!
//! Time is a free-running 32-bit millisecond tick passed in by the caller
//! (no clocks in the kernel; it may wrap, see [`clock`]); it should advance
//! between samples of one channel. A frozen, backward or jumping tick is
//! handled by [`clock`]: it ends in bad (frozen) or in a bounded uncertain
//! resynchronisation, never in a stuck channel.

pub mod channel;
pub use crate::clock;
pub mod cross_check;
pub mod events;
pub mod filter;
pub mod ne43;
pub mod pipeline;
pub mod plausibility;
pub mod rtd_class;
pub mod scan_builder;
pub mod substitution;

pub use channel::{ChannelConfig, InstrumentClass, SignalKind, Unit};
pub use events::{Event, EventLog};
pub use pipeline::{Channel, ChannelOutput};
pub use rtd_class::RtdClass;

pub use crate::quality::FaultCode;
use crate::quality::Quality;
use crate::real::Real;

/// `a < b` for values that are not NaN (the channel's accepted samples,
/// its validated limits and the differences of finite values; infinities
/// allowed): the float compare where it is an instruction, the compare on
/// the bit patterns ([`Real::less_than`], the same answer for every non-NaN
/// pair, `-0.0` equal to `+0.0`) where it is a soft-float call (Cortex-M0).
#[inline(always)]
pub(crate) fn below<T: Real>(a: T, b: T) -> bool {
    T::less_not_nan(a, b)
}

/// `a > b`, as [`below`] (written as the float compare it replaces, which
/// keeps the code with a floating-point unit as it was).
#[inline(always)]
pub(crate) fn above<T: Real>(a: T, b: T) -> bool {
    T::greater_not_nan(a, b)
}

/// Per-channel status after the latest sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ChannelStatus {
    /// Channel id from the configuration.
    pub channel: u8,
    /// Quality of the value the channel reports now.
    pub quality: Quality,
    /// Fault of the latest sample (`None` if it was good).
    pub fault: FaultCode,
    /// `true` while the reported value is a held last good value.
    pub substituted: bool,
    /// Time of the last good sample, ms (the caller's 32-bit tick; 0 if
    /// none yet).
    pub last_good_ms: u32,
}
