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
//! Time is a millisecond counter passed in by the caller (no clocks in the
//! kernel); it should advance between samples of one channel. A frozen,
//! backward or jumping counter is handled by [`clock`]: it ends in bad (frozen)
//! or in a bounded uncertain resynchronisation, never in a stuck channel.

pub mod channel;
pub mod clock;
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

use crate::quality::Quality;

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
    /// A flow calculation outside the validity limits of its standard.
    OutsideValidity = 13,
    /// A derived value whose input was bad.
    InputBad = 14,
    /// The sample clock stepped back and the channel resynchronised; the
    /// first samples after it are uncertain (see [`clock`]).
    ClockStep = 15,
}

impl FaultCode {
    /// The quality a sample with this fault gets (before substitution).
    pub fn quality(self) -> Quality {
        use FaultCode::*;
        match self {
            None => Quality::Good,
            Ne43SaturatedLow | Ne43SaturatedHigh | Frozen | CrossCheck | ZeroOffset
            | OutsideValidity | ClockStep => Quality::Uncertain,
            Ne43FailureLow | Ne43FailureHigh | SignalOutOfRange | NotFinite | TimeNotAdvancing
            | OutOfRange | Spike | InputBad => Quality::Bad,
        }
    }

    /// The numeric code (stable; for registers and logs).
    pub fn code(self) -> u8 {
        self as u8
    }
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
    /// Time of the last good sample, ms (0 if none yet).
    pub last_good_ms: u64,
}
