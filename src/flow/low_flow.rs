//! Low-flow cut-off and zero check for differential-pressure flow.
//!
//! Flow goes with √Δp: near zero flow the square root amplifies transmitter
//! noise and zero drift (a 0.1 % of span zero error reads as about 3 % of
//! full flow). Common practice: report zero flow below a small Δp cut-off,
//! and at known no-flow conditions (machine stopped, block valves shut)
//! check that the transmitter reads zero; a zero offset that persists is
//! flagged ([`FaultCode::ZeroOffset`]) until a later no-flow check passes.

use crate::clock::SampleClock;
use crate::error::{check_range, ConfigError};
use crate::quality::FaultCode;
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// Settings of the cut-off and the zero check.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LowFlowConfig<T> {
    /// Below this differential pressure the flow is reported as zero, Pa.
    pub cutoff_dp: T,
    /// At no flow, |Δp| above this is a zero offset, Pa.
    pub zero_tolerance: T,
    /// How long an offset must persist at no flow before it is flagged, ms.
    pub zero_persist_ms: u32,
}

/// The differential pressure after cut-off and zero check.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LowFlowOutput<T> {
    /// Differential pressure to compute flow from, Pa (0 below cut-off).
    pub differential_pressure: Measured<T>,
    /// `true` if the cut-off acted on this sample.
    pub cut_off: bool,
    /// [`FaultCode::ZeroOffset`] while a zero offset is flagged, else
    /// `None`.
    pub fault: FaultCode,
}

/// Cut-off and zero-check state of one flow measurement.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LowFlow<T> {
    config: LowFlowConfig<T>,
    clock: SampleClock,
    offset_for_ms: Option<u32>,
    zero_offset: bool,
}

impl<T: Real> LowFlow<T> {
    /// Validates the settings.
    pub fn new(config: LowFlowConfig<T>) -> Result<Self, ConfigError> {
        check_range("low_flow.cutoff_dp", config.cutoff_dp, 0.0, f64::INFINITY)?;
        check_range(
            "low_flow.zero_tolerance",
            config.zero_tolerance,
            0.0,
            f64::INFINITY,
        )?;
        Ok(LowFlow {
            config,
            clock: SampleClock::new(),
            offset_for_ms: None,
            zero_offset: false,
        })
    }

    /// `true` while a zero offset is flagged.
    pub fn zero_offset(&self) -> bool {
        self.zero_offset
    }

    /// Forgets the zero check's timing and flag.
    pub fn reset(&mut self) {
        self.clock.reset();
        self.offset_for_ms = None;
        self.zero_offset = false;
    }

    /// Applies the zero check (when `no_flow` is known to hold) and the
    /// cut-off to `dp` at `t_ms` (a free-running 32-bit millisecond tick that
    /// may wrap; see [`crate::clock`]). The persistence time is counted on the
    /// sanitised clock of [`crate::signal::clock`]: a frozen or backward
    /// stamp counts one estimated sample period, so the check neither stalls
    /// nor restarts on a bad clock.
    pub fn apply(&mut self, dp: Measured<T>, no_flow: bool, t_ms: u32) -> LowFlowOutput<T> {
        let gap_ms = self.config.zero_persist_ms.max(1);
        let (_, dt_ms) = self.clock.tick(t_ms, gap_ms);
        let usable = dp.quality.is_usable() && T::is_finite(dp.value);
        if usable && no_flow {
            if T::abs(dp.value) > self.config.zero_tolerance {
                let persisted = match self.offset_for_ms {
                    Some(ms) => ms.saturating_add(dt_ms),
                    None => 0,
                };
                self.offset_for_ms = Some(persisted);
                if persisted >= self.config.zero_persist_ms {
                    self.zero_offset = true;
                }
            } else {
                self.offset_for_ms = None;
                self.zero_offset = false;
            }
        } else if !no_flow {
            self.offset_for_ms = None;
        }
        let fault = if self.zero_offset {
            FaultCode::ZeroOffset
        } else {
            FaultCode::None
        };
        let mut out = if usable { dp } else { Measured::bad() };
        let cut_off = usable && out.value < self.config.cutoff_dp;
        if cut_off {
            out.value = T::ZERO;
        }
        if self.zero_offset {
            out = out.at_most(Quality::Uncertain);
        }
        LowFlowOutput {
            differential_pressure: Measured::derived(out.value, out.quality),
            cut_off,
            fault,
        }
    }
}
