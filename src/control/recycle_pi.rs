//! Recycle (anti-surge) valve controller on the clearance above the control
//! line.
//!
//! Method: PI control in position form with a clamped integral (conditional
//! integration anti-windup) and a rate limit on the *net* demand only
//! (Åström & Hägglund, *PID Controllers: Theory, Design and Tuning*, 2nd
//! ed., ISA 1995, chapter on windup and on rate limiters, from memory). A fast
//! opening step near the surge line, a slow closing rate and fail-safe open
//! on a bad margin are common practice for recycle valves (Botros &
//! Henderson 1994, from memory).
//!
//! Symbols (this crate's own): `m` surge margin, `m_c` control margin
//! (control line, including margin added after surge cycles), `c = m − m_c`
//! the clearance above the control line (> 0 on the safe side), `a` the rate
//! of approach (1/s, > 0 moving toward surge), `s_a` the anticipation margin,
//! `u` the valve demand (0 closed, 1 open), `dt` the measured time since the
//! previous scan.
//!
//! Per scan, in automatic with a good margin:
//!
//! ```text
//! s_a = max(T_a · (a − a_0),  s_a,prev · T_a / (T_a + dt))   (a good; else decays)
//! e   = s_a − c                                  (> 0: open further)
//! I   = clamp(I + K · dt / T_i · e, u_min, u_max)
//! v   = clamp(K · e + I, u_min, u_max)            (unlimited demand)
//! u   = max(v, u_prev − r_close · dt)            (net demand closes slowly)
//! if m < f_q · (m_c + s_a) and the quick-open timer ran out:
//!     u = max(u, min(u_prev + Δu_q, u_max))      (open fast)
//! I   = clamp(I + dt / T_t · (u − v), u_min, u_max)   (tracking, T_t = T_i)
//! ```
//!
//! Why this shape. The earlier velocity form added `K · (e − e_prev)` to the
//! applied output and rate-limited only the downward steps, so zero-mean
//! noise on the raw margin was rectified into opening (a valve 25 % in flow
//! on the safe side crept open). Here the proportional and integral terms
//! are computed from the margin alone and never from the rate-limited
//! output, so noise moves the unlimited demand `v` symmetrically about its
//! mean; far from the line `v` sits at `u_min` and the valve stays shut.
//! The integral follows the limited output only through the tracking term
//! with time constant `T_t = T_i` (back-calculation; Åström & Hägglund
//! recommend `T_t` up to `T_i`), so a slow close after a fast opening hands
//! over to the PI without a limit cycle, while near the line the noise
//! envelope the rate limit leaves (about the proportional noise band) shifts
//! the settled margin by only `band / K` to the safe side. The
//! anticipation margin `s_a` moves the control line out while the point
//! approaches surge faster than `a_0` and then decays with time constant
//! `T_a`, so the loop settles on the control line (no lasting rate term) and
//! the noisy rate never enters the proportional path as a step.
//!
//! Modes: `Automatic` (above), `Manual` (the operator's value), `Tracking`
//! (follows an external value, e.g. during start-up). Outside automatic the
//! integral tracks the output, so the return to automatic is bumpless. A
//! forced-open request (trip) drives every mode to `fail_safe_output`; a bad
//! margin does so in automatic and tracking. An *uncertain* margin in
//! automatic follows [`UncertainMargin`] (a configured choice) and the demand
//! is never better than uncertain then. The demand's quality is the worst of
//! the margin values it used (the rate only when it was used).
//!
//! **Caution.** Not a certified safety function (IEC 61508 / IEC 61511);
//! tuning comes from commissioning tests on the machine.

use crate::error::{ConfigError, Problem};
use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::surge::{check_setting, SurgeState};

/// What automatic mode does while the margin is uncertain (usable but not
/// good: beyond the mapped heads, a flow element outside its validity, a
/// held transmitter value).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum UncertainMargin {
    /// Keep control running but never close: the demand may rise with the
    /// PI and the fast opening, and holds otherwise.
    HoldOrOpen,
    /// Move toward `fail_safe_output` at `closing_rate` (the safe direction),
    /// ignoring the margin.
    TowardFailSafe,
}

/// Controller settings. Ranges are checked by [`RecycleController::new`];
/// errors name the field as `recycle.<field>`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RecycleConfig<T> {
    /// Nominal scan period, s, in [0.0005, 1]. A measured `dt` above
    /// [`MAX_SCAN_GAP`] nominal periods is clamped and flagged uncertain.
    pub scan_period: T,
    /// Proportional gain K, valve fraction per unit margin, in [0.01, 100].
    pub gain: T,
    /// Integral time T_i, s, in [0.05, 600].
    pub integral_time: T,
    /// Largest closing speed r_close, fraction of stroke per second, in
    /// [0.001, 10].
    pub closing_rate: T,
    /// Fast opening step Δu_q, fraction of stroke, in [0, 1].
    pub quick_open_step: T,
    /// Fast opening line f_q as a fraction of the effective control margin,
    /// in [0, 0.99]: step open when the margin falls below it.
    pub quick_open_fraction: T,
    /// Least time between fast opening steps, s, in [0, 60].
    pub quick_open_interval: T,
    /// Lowest demand in automatic, in [0, 0.99].
    pub min_output: T,
    /// Highest demand in automatic, in (min_output, 1].
    pub max_output: T,
    /// Demand on a bad margin or a forced-open request, in
    /// [max_output, 1]: fail-safe is at least as open as automatic may go.
    pub fail_safe_output: T,
    /// Anticipation time T_a, s, in [0, 10]: while the point approaches
    /// surge faster than `anticipation_threshold`, the control line moves
    /// out by `T_a · (a − a_0)` and relaxes back with time constant `T_a`
    /// (0 disables it).
    pub anticipation_time: T,
    /// Rate of approach a_0 below which nothing is anticipated, 1/s, in
    /// [0, 10] (set above the rate's noise band).
    pub anticipation_threshold: T,
    /// Behaviour on an uncertain margin in automatic.
    pub on_uncertain: UncertainMargin,
}

/// A measured scan interval longer than this many nominal scan periods is
/// clamped to it (and the demand flagged uncertain): the integral and the
/// closing rate never act on more time than that in one scan.
pub const MAX_SCAN_GAP: f64 = 10.0;

/// Operating mode.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Mode {
    /// Operator sets the demand.
    Manual,
    /// PI on the clearance above the control line.
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
    /// Valve demand, fraction of stroke (0 closed, 1 open). Always finite;
    /// quality the worst of the inputs used (see the module docs).
    pub demand: Measured<T>,
    /// The fail-safe value is being output.
    pub fail_safe: bool,
    /// A fast opening step was applied on this scan.
    pub quick_opened: bool,
    /// The closing rate limit is holding the output.
    pub rate_limited: bool,
    /// Anticipation margin s_a added to the control line on this scan, -.
    pub anticipation: T,
    /// Mode in force.
    pub mode: Mode,
}

/// The recycle valve controller.
#[derive(Clone, Debug)]
pub struct RecycleController<T> {
    config: RecycleConfig<T>,
    mode: Mode,
    output: T,
    integral: T,
    anticipation: T,
    quick_open_timer: T,
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
        check_setting("recycle.scan_period", c.scan_period, 5.0e-4, 1.0)?;
        check_setting("recycle.gain", c.gain, 0.01, 100.0)?;
        check_setting("recycle.integral_time", c.integral_time, 0.05, 600.0)?;
        check_setting("recycle.closing_rate", c.closing_rate, 1.0e-3, 10.0)?;
        check_setting("recycle.quick_open_step", c.quick_open_step, 0.0, 1.0)?;
        check_setting(
            "recycle.quick_open_fraction",
            c.quick_open_fraction,
            0.0,
            0.99,
        )?;
        check_setting(
            "recycle.quick_open_interval",
            c.quick_open_interval,
            0.0,
            60.0,
        )?;
        check_setting("recycle.min_output", c.min_output, 0.0, 0.99)?;
        check_setting("recycle.max_output", c.max_output, 0.0, 1.0)?;
        if c.max_output <= c.min_output {
            return Err(ConfigError::new(
                "recycle.max_output",
                Problem::NotAbove {
                    other: "recycle.min_output",
                },
            ));
        }
        check_setting("recycle.fail_safe_output", c.fail_safe_output, 0.0, 1.0)?;
        if c.fail_safe_output < c.max_output {
            // Fail-safe must be at least as open as automatic may go.
            return Err(ConfigError::new(
                "recycle.fail_safe_output",
                Problem::Inconsistent {
                    with: "recycle.max_output",
                },
            ));
        }
        check_setting("recycle.anticipation_time", c.anticipation_time, 0.0, 10.0)?;
        check_setting(
            "recycle.anticipation_threshold",
            c.anticipation_threshold,
            0.0,
            10.0,
        )?;
        let output = clamp01(initial_output, config.fail_safe_output);
        Ok(RecycleController {
            config,
            mode,
            output,
            integral: T::clamp(output, config.min_output, config.max_output),
            anticipation: T::ZERO,
            quick_open_timer: T::ZERO,
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

    /// One scan, `dt` seconds after the previous one (measured). A `dt` that
    /// is not finite or not positive is replaced by the nominal scan period
    /// and one above [`MAX_SCAN_GAP`] periods is clamped; both flag the
    /// demand uncertain. Never panics; the demand is always finite and in
    /// [0, 1].
    pub fn update(
        &mut self,
        state: &SurgeState<T>,
        inputs: &ControllerInputs<T>,
        dt: T,
    ) -> ControllerOutput<T> {
        let c = self.config;
        let max_dt = c.scan_period * T::of(MAX_SCAN_GAP);
        let (dt, time_quality) = if !(T::is_finite(dt) && dt > T::ZERO) {
            (c.scan_period, Quality::Uncertain)
        } else if dt > max_dt {
            (max_dt, Quality::Uncertain)
        } else {
            (dt, Quality::Good)
        };
        let prev = self.output;
        self.quick_open_timer = T::max(self.quick_open_timer - dt, T::ZERO);
        let margin_q = state
            .margin
            .quality
            .worst(state.clearance.quality)
            .worst(state.control_margin.quality);
        let finite = T::is_finite(state.margin.value)
            && T::is_finite(state.clearance.value)
            && T::is_finite(state.control_margin.value);
        let margin_q = if finite { margin_q } else { Quality::Bad };

        // Anticipation: from a good rate only.
        let rate = state.rate_of_approach;
        let rate_used = rate.quality.is_good() && T::is_finite(rate.value);
        self.anticipation = if rate_used {
            c.anticipation_time * T::max(rate.value - c.anticipation_threshold, T::ZERO)
        } else {
            T::ZERO
        };
        let error = self.anticipation - state.clearance.value;

        let mut out = ControllerOutput {
            demand: Measured::good(prev),
            fail_safe: false,
            quick_opened: false,
            rate_limited: false,
            anticipation: self.anticipation,
            mode: self.mode,
        };
        let bad = margin_q == Quality::Bad;
        let fail_safe = inputs.force_open || (bad && self.mode != Mode::Manual);
        let mut quality = time_quality;
        let u = if fail_safe {
            out.fail_safe = true;
            quality = quality.worst(if inputs.force_open {
                Quality::Good
            } else {
                Quality::Uncertain
            });
            c.fail_safe_output
        } else {
            match self.mode {
                Mode::Manual => clamp01(inputs.manual_output, prev),
                Mode::Tracking => {
                    quality = quality.worst(margin_q);
                    clamp01(inputs.tracking_value, prev)
                }
                Mode::Automatic => {
                    quality = quality.worst(margin_q);
                    let toward_safe = margin_q == Quality::Uncertain
                        && c.on_uncertain == UncertainMargin::TowardFailSafe;
                    if toward_safe {
                        let step = c.closing_rate * dt;
                        let target = c.fail_safe_output;
                        if prev < target {
                            T::min(prev + step, target)
                        } else {
                            T::max(prev - step, target)
                        }
                    } else {
                        let u = self.automatic(&mut out, state, error, prev, dt);
                        if margin_q == Quality::Uncertain {
                            // Hold or open: never close on an uncertain margin.
                            T::max(u, prev)
                        } else {
                            u
                        }
                    }
                }
            }
        };
        if rate_used && self.mode == Mode::Automatic && !fail_safe {
            quality = quality.worst(rate.quality);
        }
        self.output = clamp01(u, c.fail_safe_output);
        // Outside automatic (and in fail-safe) the integral tracks the
        // output, so automatic resumes bumplessly.
        if self.mode != Mode::Automatic || fail_safe {
            let p = if bad { T::ZERO } else { c.gain * error };
            let i = self.output - p;
            self.integral = if T::is_finite(i) {
                T::clamp(i, c.min_output, c.max_output)
            } else {
                T::clamp(self.output, c.min_output, c.max_output)
            };
        }
        out.demand = Measured::new(self.output, quality);
        out
    }

    /// The automatic-mode demand for a usable margin (see the module docs).
    fn automatic(
        &mut self,
        out: &mut ControllerOutput<T>,
        state: &SurgeState<T>,
        error: T,
        prev: T,
        dt: T,
    ) -> T {
        let c = self.config;
        let proportional = c.gain * error;
        let integral = T::clamp(
            self.integral + c.gain * dt / c.integral_time * error,
            c.min_output,
            c.max_output,
        );
        if T::is_finite(integral) {
            self.integral = integral;
        }
        let mut u = T::clamp(proportional + self.integral, c.min_output, c.max_output);
        if !T::is_finite(u) {
            u = prev;
        }
        let unlimited = u;
        let floor = prev - c.closing_rate * dt;
        if u < floor {
            u = floor;
            out.rate_limited = true;
        }
        let quick_line = c.quick_open_fraction * (state.control_margin.value + self.anticipation);
        if state.margin.value < quick_line && self.quick_open_timer <= T::ZERO {
            let stepped = T::min(prev + c.quick_open_step, c.max_output);
            if stepped > u {
                u = stepped;
            }
            out.quick_opened = true;
            self.quick_open_timer = c.quick_open_interval;
        }
        // Back-calculation: the integral follows the limited output with
        // the tracking time constant T_t = T_i, so a long slow close hands
        // over to the PI without a limit cycle, while a one-scan noise
        // excursion moves it by only dt/T_i of the difference.
        let tracked = self.integral + dt / c.integral_time * (u - unlimited);
        if T::is_finite(tracked) {
            self.integral = T::clamp(tracked, c.min_output, c.max_output);
        }
        u
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
