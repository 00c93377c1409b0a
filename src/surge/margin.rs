//! Live surge margin, deviation from the control line, rate of approach and
//! time to surge, every scan, in fixed memory.
//!
//! # Definitions
//!
//! With `qr = sign(qr²)·√|qr²|` the live reduced flow and `qr,s(hr)` the surge
//! line's reduced flow at the live reduced head:
//!
//! ```text
//! surge margin      SM = qr / qr,s(hr) − 1
//! control line      SM = m_c + shift       (m_c per speed line, shift from detection)
//! deviation         e  = SM − (m_c + shift)  (> 0: safe side of the control line)
//! rate of approach  a  = −dSM/dt             (least-squares slope over W scans)
//! time to surge     t  = SM / a              (a > 0; else the horizon)
//! ```
//!
//! Because the suction volume flow is proportional to `qr` for a given gas
//! (see [`super::coordinates`]), SM is the fractional excess of the suction
//! flow over the surge flow at the same head: 0 on the surge line, 0.10 at
//! 10 % more flow, −1 at zero flow, below −1 in reverse flow.
//!
//! Cost per scan: one `ln`, one `exp`, two `sqrt`, at most `N` table steps and
//! `W` additions for the slope.

use super::coordinates::{reduced_flow_squared, reduced_head, signed_sqrt};
use super::surge_line::SurgeLine;
use crate::error::{outside_documented_range, ConfigError};
use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::units::PressureAbs;
use crate::window::Window;

/// One scan of the signals the margin needs.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SurgeScan<T> {
    /// Compressor suction pressure.
    pub suction_pressure: Measured<PressureAbs<T>>,
    /// Compressor discharge pressure.
    pub discharge_pressure: Measured<PressureAbs<T>>,
    /// Suction flow element differential pressure, Pa (negative for reverse
    /// flow if the transmitter reads both ways).
    pub flow_dp: Measured<T>,
}

/// Settings of the margin monitor.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MonitorConfig<T> {
    /// Scan period, s.
    pub scan_period: T,
    /// Longest time to surge reported, s (the value when not approaching).
    pub time_to_surge_horizon: T,
}

/// Margin results of one scan.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SurgeState<T> {
    /// Live reduced flow squared Δp/ps, -.
    pub reduced_flow_squared: Measured<T>,
    /// Live reduced head, -.
    pub reduced_head: Measured<T>,
    /// Surge line reduced flow squared at the live head, -.
    pub surge_reduced_flow_squared: Measured<T>,
    /// Surge margin SM, - (see the module docs).
    pub margin: Measured<T>,
    /// Effective control margin m_c + shift, -.
    pub control_margin: Measured<T>,
    /// Deviation from the control line SM − control margin, - (> 0 safe).
    pub deviation: Measured<T>,
    /// Rate of approach −dSM/dt, 1/s (> 0 approaching surge).
    pub rate_of_approach: Measured<T>,
    /// Time to reach SM = 0 at the present rate, s (capped at the horizon).
    pub time_to_surge: Measured<T>,
}

impl<T: Real> SurgeState<T> {
    /// Every value bad (no valid scan yet).
    pub fn bad() -> Self {
        let b = Measured::bad();
        SurgeState {
            reduced_flow_squared: b,
            reduced_head: b,
            surge_reduced_flow_squared: b,
            margin: b,
            control_margin: b,
            deviation: b,
            rate_of_approach: b,
            time_to_surge: b,
        }
    }
}

/// Surge margin monitor for one section: a surge line of up to `N` points
/// and a `W`-scan window for the rate of approach (`W >= 2`).
#[derive(Clone, Debug)]
pub struct SurgeMonitor<T, const N: usize, const W: usize> {
    line: SurgeLine<T, N>,
    config: MonitorConfig<T>,
    history: Window<T, W>,
    state: SurgeState<T>,
}

impl<T: Real, const N: usize, const W: usize> SurgeMonitor<T, N, W> {
    /// A monitor on a validated line. Errors name `scan_period` or
    /// `time_to_surge_horizon` when not finite and positive.
    pub fn new(line: SurgeLine<T, N>, config: MonitorConfig<T>) -> Result<Self, ConfigError> {
        const { assert!(W >= 2, "the rate window needs at least 2 scans") };
        if !(T::is_finite(config.scan_period) && config.scan_period > T::ZERO) {
            return Err(outside_documented_range("surge_monitor.scan_period"));
        }
        if !(T::is_finite(config.time_to_surge_horizon) && config.time_to_surge_horizon > T::ZERO) {
            return Err(outside_documented_range(
                "surge_monitor.time_to_surge_horizon",
            ));
        }
        Ok(SurgeMonitor {
            line,
            config,
            history: Window::filled_with(T::ZERO),
            state: SurgeState::bad(),
        })
    }

    /// The surge line.
    pub fn line(&self) -> &SurgeLine<T, N> {
        &self.line
    }

    /// The last result.
    pub fn state(&self) -> &SurgeState<T> {
        &self.state
    }

    /// The live point in reduced coordinates (qr², hr); bad if an input is
    /// not finite or a pressure is not positive.
    pub fn reduced_point(&self, scan: &SurgeScan<T>) -> (Measured<T>, Measured<T>) {
        let ps = scan.suction_pressure.map(|p| p.pa());
        let pd = scan.discharge_pressure.map(|p| p.pa());
        let dp = scan.flow_dp;
        let inputs_ok = T::is_finite(ps.value)
            && ps.value > T::ZERO
            && T::is_finite(pd.value)
            && pd.value > T::ZERO
            && T::is_finite(dp.value);
        if !inputs_ok {
            return (Measured::bad(), Measured::bad());
        }
        let q = ps.quality.worst(pd.quality);
        let q2 = Measured::derived(
            reduced_flow_squared(dp.value, ps.value),
            q.worst(dp.quality),
        );
        let hr = Measured::derived(reduced_head(pd.value / ps.value, self.line.sigma()), q);
        (q2, hr)
    }

    /// The margin of one operating point, without history (rate and time to
    /// surge bad): a pure function of the scan and the shift.
    pub fn evaluate(&self, scan: &SurgeScan<T>, control_line_shift: T) -> SurgeState<T> {
        let (q2, hr) = self.reduced_point(scan);
        if !q2.quality.is_usable() || !hr.quality.is_usable() {
            return SurgeState::bad();
        }
        let look = self.line.lookup(hr.value);
        let lq = look.quality.worst(hr.quality);
        let surge_q = T::sqrt(look.surge_reduced_flow_squared);
        let margin = Measured::derived(
            signed_sqrt(q2.value) / surge_q - T::ONE,
            lq.worst(q2.quality),
        );
        let shift = if T::is_finite(control_line_shift) {
            T::max(control_line_shift, T::ZERO)
        } else {
            T::ZERO
        };
        let control = Measured::derived(look.control_margin + shift, lq);
        let deviation = Measured::derived(
            margin.value - control.value,
            margin.quality.worst(control.quality),
        );
        SurgeState {
            reduced_flow_squared: q2,
            reduced_head: hr,
            surge_reduced_flow_squared: Measured::derived(look.surge_reduced_flow_squared, lq),
            margin,
            control_margin: control,
            deviation,
            rate_of_approach: Measured::bad(),
            time_to_surge: Measured::bad(),
        }
    }

    /// One scan. `control_line_shift` is the extra margin added after surge
    /// events (from [`super::detection::SurgeDetector`]; 0 without one).
    /// Never panics; bad inputs give bad margin and clear the rate window.
    pub fn update(&mut self, scan: &SurgeScan<T>, control_line_shift: T) -> &SurgeState<T> {
        let mut state = self.evaluate(scan, control_line_shift);
        if state.margin.quality.is_usable() {
            self.history.write(state.margin.value);
        } else {
            self.history.clear();
        }
        let (rate, time) = self.rate_and_time(state.margin);
        state.rate_of_approach = rate;
        state.time_to_surge = time;
        self.state = state;
        &self.state
    }

    /// Least-squares slope of the margin history (oldest first), and the
    /// time to surge. Uncertain until the window is full.
    fn rate_and_time(&self, margin: Measured<T>) -> (Measured<T>, Measured<T>) {
        let n = self.history.len();
        if n < 2 || !margin.quality.is_usable() {
            let b = Measured::bad();
            return (b, b);
        }
        let full = if n == W {
            Quality::Good
        } else {
            Quality::Uncertain
        };
        // x = 0..n-1 centred; history.oldest_ordered() yields oldest first.
        let nf = T::of(n as f64);
        let xm = (nf - T::ONE) / T::of(2.0);
        let mut ym = T::ZERO;
        for &y in self.history.oldest_ordered() {
            ym += y;
        }
        ym = ym / nf;
        let mut sxy = T::ZERO;
        let mut sxx = T::ZERO;
        let mut x = T::ZERO;
        for &y in self.history.oldest_ordered() {
            let dx = x - xm;
            sxy += dx * (y - ym);
            sxx += dx * dx;
            x += T::ONE;
        }
        let slope_per_scan = sxy / sxx;
        let approach = -slope_per_scan / self.config.scan_period;
        let q = full.worst(margin.quality);
        let rate = Measured::derived(approach, q);
        let horizon = self.config.time_to_surge_horizon;
        let t = if margin.value <= T::ZERO {
            T::ZERO
        } else if approach > T::ZERO {
            T::min(margin.value / approach, horizon)
        } else {
            horizon
        };
        (rate, Measured::derived(t, q))
    }
}
