//! Recycle (anti-surge) valve controller on the deviation from the control
//! line.
//!
//! Method: PI control in velocity (incremental) form, which gives
//! anti-windup and bumpless transfer by construction, because the integral
//! state *is* the applied output (Åström & Hägglund, *PID Controllers:
//! Theory, Design and Tuning*, 2nd ed., ISA 1995, sections on incremental
//! algorithms and windup, from memory). The fast open-loop step, the slow
//! closing rate and fail-safe open on bad margin are common anti-surge
//! practice (Botros & Henderson 1994, from memory).
//!
//! Per scan, with `e = −deviation + max(a, 0) · Ta` (positive when the
//! operating point is on the surge side of the control line; `a` the rate of
//! approach, `Ta` the rate allowance, which moves the control line out while
//! the point approaches surge, a derivative-like action common in practice)
//! and `u` the valve demand (0 closed, 1 open):
//!
//! ```text
//! Δu = Kp · (e − e_prev) + Kp · dt / Ti · e
//! u  = clamp(u_prev + Δu, u_min, u_max)
//! u  = max(u, u_prev − closing_rate · dt)              (close slowly)
//! if SM < step_line_fraction · control margin and the step timer ran out:
//!     u = max(u, min(u_prev + step, u_max))            (open fast)
//! ```
//!
//! Modes: `Automatic` (above), `Manual` (the operator's value; the
//! controller state follows, so returning to automatic is bumpless),
//! `Tracking` (follows an external value, e.g. during start-up sequences).
//! In automatic and tracking a bad margin, or a forced-open request (a trip),
//! drives the output to `fail_safe_output` (open). Manual is the operator's
//! responsibility and is not overridden except by the forced-open request.
//!
//! **Caution.** Not a certified safety function (IEC 61508 / IEC 61511);
//! tuning comes from commissioning tests on the machine.

use crate::error::{outside_documented_range, ConfigError};
use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::surge::SurgeState;

/// Controller settings.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RecycleConfig<T> {
    /// Scan period, s (> 0).
    pub scan_period: T,
    /// Proportional gain, valve fraction per unit margin deviation (> 0).
    pub gain: T,
    /// Integral time, s (> 0).
    pub integral_time: T,
    /// Largest closing speed, fraction of stroke per second (> 0).
    pub closing_rate: T,
    /// Open-loop step size, fraction of stroke (in [0, 1]).
    pub step: T,
    /// The step line as a fraction of the effective control margin (in
    /// [0, 1)): step when SM falls below this fraction of it.
    pub step_line_fraction: T,
    /// Least time between steps, s (>= 0).
    pub step_interval: T,
    /// Lowest demand in automatic, in [0, 1).
    pub min_output: T,
    /// Highest demand, in (min_output, 1].
    pub max_output: T,
    /// Demand on bad margin or a forced-open request, in [0, 1] (1 = open).
    pub fail_safe_output: T,
    /// Rate allowance, s (>= 0): while approaching surge the control line
    /// moves out by `rate_of_approach · rate_allowance` (the margin the
    /// operating point would lose in that time; 0 disables it).
    pub rate_allowance: T,
}

/// Operating mode.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Mode {
    /// Operator sets the demand.
    Manual,
    /// PI on the deviation from the control line.
    Automatic,
    /// The demand follows an external tracking value.
    Tracking,
}

/// External inputs besides the margin.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ControllerInputs<T> {
    /// Operator demand for manual mode, in [0, 1].
    pub manual_output: T,
    /// Tracking value for tracking mode, in [0, 1].
    pub tracking_value: T,
    /// Open to `fail_safe_output` now, in every mode (trip, emergency stop).
    pub force_open: bool,
}

/// Controller output for one scan.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ControllerOutput<T> {
    /// Valve demand, fraction of stroke (0 closed, 1 open). Always finite.
    pub demand: Measured<T>,
    /// The fail-safe value is being output.
    pub fail_safe: bool,
    /// An open-loop step was applied on this scan.
    pub step_applied: bool,
    /// The closing rate limit is holding the output.
    pub rate_limited: bool,
    /// Mode in force.
    pub mode: Mode,
}

/// The recycle valve controller.
#[derive(Clone, Debug)]
pub struct RecycleController<T> {
    config: RecycleConfig<T>,
    mode: Mode,
    output: T,
    previous_error: Option<T>,
    step_timer: T,
}

impl<T: Real> RecycleController<T> {
    /// A controller starting in `mode` with the valve at `initial_output`
    /// (clamped to [0, 1]). Errors name the offending field.
    pub fn new(
        config: RecycleConfig<T>,
        mode: Mode,
        initial_output: T,
    ) -> Result<Self, ConfigError> {
        let c = &config;
        let fin = |x: T| T::is_finite(x);
        let unit = |x: T| fin(x) && x >= T::ZERO && x <= T::ONE;
        let checks = [
            (
                fin(c.scan_period) && c.scan_period > T::ZERO,
                "recycle.scan_period",
            ),
            (fin(c.gain) && c.gain > T::ZERO, "recycle.gain"),
            (
                fin(c.integral_time) && c.integral_time > T::ZERO,
                "recycle.integral_time",
            ),
            (
                fin(c.closing_rate) && c.closing_rate > T::ZERO,
                "recycle.closing_rate",
            ),
            (unit(c.step), "recycle.step"),
            (
                unit(c.step_line_fraction) && c.step_line_fraction < T::ONE,
                "recycle.step_line_fraction",
            ),
            (
                fin(c.step_interval) && c.step_interval >= T::ZERO,
                "recycle.step_interval",
            ),
            (
                unit(c.min_output) && c.min_output < T::ONE,
                "recycle.min_output",
            ),
            (
                unit(c.max_output) && c.max_output > c.min_output,
                "recycle.max_output",
            ),
            (unit(c.fail_safe_output), "recycle.fail_safe_output"),
            (
                fin(c.rate_allowance) && c.rate_allowance >= T::ZERO,
                "recycle.rate_allowance",
            ),
        ];
        for (ok, field) in checks {
            if !ok {
                return Err(outside_documented_range(field));
            }
        }
        Ok(RecycleController {
            config,
            mode,
            output: clamp01(initial_output, config.fail_safe_output),
            previous_error: None,
            step_timer: T::ZERO,
        })
    }

    /// Changes mode; bumpless (the output carries over).
    pub fn set_mode(&mut self, mode: Mode) {
        self.mode = mode;
    }

    /// Present mode.
    pub fn mode(&self) -> Mode {
        self.mode
    }

    /// Last demand.
    pub fn output(&self) -> T {
        self.output
    }

    /// One scan. Never panics; the demand is always finite and in [0, 1].
    pub fn update(
        &mut self,
        state: &SurgeState<T>,
        inputs: &ControllerInputs<T>,
    ) -> ControllerOutput<T> {
        let c = self.config;
        let dt = c.scan_period;
        let prev = self.output;
        self.step_timer = T::max(self.step_timer - dt, T::ZERO);
        let usable = state.deviation.quality.is_usable() && state.margin.quality.is_usable();
        // Rate allowance: only from a usable rate, only when approaching.
        let allowance = if state.rate_of_approach.quality.is_usable() {
            T::max(state.rate_of_approach.value, T::ZERO) * c.rate_allowance
        } else {
            T::ZERO
        };
        let error = allowance - state.deviation.value;
        let mut out = ControllerOutput {
            demand: Measured::good(prev),
            fail_safe: false,
            step_applied: false,
            rate_limited: false,
            mode: self.mode,
        };
        let fail_safe = inputs.force_open || (!usable && self.mode != Mode::Manual);
        let u = if fail_safe {
            out.fail_safe = true;
            c.fail_safe_output
        } else {
            match self.mode {
                Mode::Manual => clamp01(inputs.manual_output, prev),
                Mode::Tracking => clamp01(inputs.tracking_value, prev),
                Mode::Automatic => {
                    let de = self.previous_error.map_or(T::ZERO, |p| error - p);
                    let du = c.gain * de + c.gain * dt / c.integral_time * error;
                    let mut u = T::clamp(prev + du, c.min_output, c.max_output);
                    let floor = prev - c.closing_rate * dt;
                    if u < floor {
                        u = floor;
                        out.rate_limited = true;
                    }
                    let step_line = c.step_line_fraction * (state.control_margin.value + allowance);
                    if state.margin.value < step_line && self.step_timer <= T::ZERO {
                        let stepped = T::min(prev + c.step, c.max_output);
                        if stepped > u {
                            u = stepped;
                        }
                        out.step_applied = true;
                        self.step_timer = c.step_interval;
                    }
                    u
                }
            }
        };
        // Error memory only from usable margins: after bad data the first
        // good scan has no proportional kick.
        self.previous_error = if usable { Some(error) } else { None };
        self.output = clamp01(u, c.fail_safe_output);
        let q = if usable {
            Quality::Good
        } else {
            Quality::Uncertain
        };
        out.demand = Measured::new(self.output, q);
        out
    }
}

/// Clamps to [0, 1]; a non-finite value becomes `fallback`.
fn clamp01<T: Real>(x: T, fallback: T) -> T {
    if T::is_finite(x) {
        T::clamp(x, T::ZERO, T::ONE)
    } else {
        fallback
    }
}
