//! Steady-state detection on a fixed window.
//!
//! Efficiency and cooler approach computed during a transient are
//! misleading (stored heat in casings and coolers, transmitter lags), so
//! practitioners filter them out before trending (common practice). This
//! detector marks a stage steady when, over the last `W` scans, the spread
//! (max - min) of its discharge temperature, pressure ratio and (when
//! measured) mass flow stays within configured tolerances. A bad input
//! clears the window: steadiness must be re-established.
//!
//! Method: the range test over a moving window (a standard steady-state
//! identification test; see e.g. Cao & Rhinehart, "An efficient method for
//! on-line identification of steady state", J. Process Control 5 (1995),
//! for the family of such tests). Each window keeps its minimum and maximum
//! and the slots holding them as values arrive, and rescans one extreme (W
//! comparisons) only when its slot is overwritten and the new value does not
//! replace it; otherwise a scan costs a few comparisons per window.

use crate::error::{check_positive, ConfigError};
use crate::quality::Measured;
use crate::real::Real;
use crate::window::Window;

/// Tolerances of the steady-state test.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SteadyStateConfig<T> {
    /// Largest discharge-temperature spread over the window, K.
    pub max_temperature_spread: T,
    /// Largest relative spread of the pressure ratio, - (0.005 = 0.5 %).
    pub max_ratio_spread: T,
    /// Largest relative spread of the mass flow, -.
    pub max_flow_spread: T,
}

impl<T: Real> Default for SteadyStateConfig<T> {
    /// 1 K, 1 %, 2 % (a starting point; tune to the instruments' noise).
    fn default() -> Self {
        SteadyStateConfig {
            max_temperature_spread: T::of(1.0),
            max_ratio_spread: T::of(0.01),
            max_flow_spread: T::of(0.02),
        }
    }
}

impl<T: Real> SteadyStateConfig<T> {
    pub(crate) fn validate(&self) -> Result<(), ConfigError> {
        check_positive(
            "steady_state.max_temperature_spread",
            self.max_temperature_spread,
        )?;
        check_positive("steady_state.max_ratio_spread", self.max_ratio_spread)?;
        check_positive("steady_state.max_flow_spread", self.max_flow_spread)?;
        Ok(())
    }
}

/// Result of the steady-state test for one scan.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SteadyState<T> {
    /// Window full and every spread within tolerance.
    pub steady: bool,
    /// Scans in the window so far.
    pub samples: u16,
    /// Discharge-temperature spread over the window, K.
    pub temperature_spread: T,
    /// Relative pressure-ratio spread over the window, -.
    pub ratio_spread: T,
}

impl<T: Real> SteadyState<T> {
    /// Not steady, empty window.
    pub fn unknown() -> Self {
        SteadyState {
            steady: false,
            samples: 0,
            temperature_spread: T::ZERO,
            ratio_spread: T::ZERO,
        }
    }
}

/// A rolling window that tracks its minimum and maximum and a ring slot
/// holding each: when the value leaving the window is in the slot of an
/// extreme, only that extreme is rescanned (a trend costs one rescan of one
/// extreme per scan, not two).
#[derive(Clone, Debug)]
struct RangeWindow<T, const W: usize> {
    values: Window<T, W>,
    /// Minimum and maximum of `values` (0 while empty).
    lo: T,
    hi: T,
    /// A ring slot holding `lo` and one holding `hi`.
    lo_slot: u16,
    hi_slot: u16,
}

impl<T: Real, const W: usize> RangeWindow<T, W> {
    const fn new() -> Self {
        const {
            assert!(
                W <= 65_535,
                "a steady-state window holds at most 65535 scans"
            )
        };
        RangeWindow {
            values: Window::filled_with(T::ZERO),
            lo: T::ZERO,
            hi: T::ZERO,
            lo_slot: 0,
            hi_slot: 0,
        }
    }

    fn clear(&mut self) {
        self.values.clear();
        self.lo = T::ZERO;
        self.hi = T::ZERO;
        self.lo_slot = 0;
        self.hi_slot = 0;
    }

    fn len(&self) -> usize {
        self.values.len()
    }

    /// Adds a finite value. The extremes equal a full rescan's: an extreme is
    /// rescanned only when its slot is overwritten and the new value does not
    /// reach it (a new value at or beyond an extreme is the new extreme
    /// whatever left).
    fn write(&mut self, v: T) {
        // W <= 65535 (asserted in `new`), so a slot fits in u16.
        let slot = u16::try_from(self.values.next_slot()).unwrap_or(0);
        let first = self.values.len() == 0;
        let evicted = self.values.push(v).is_some();
        if first {
            (self.lo, self.hi, self.lo_slot, self.hi_slot) = (v, v, slot, slot);
            return;
        }
        if v <= self.lo {
            (self.lo, self.lo_slot) = (v, slot);
        } else if evicted && slot == self.lo_slot {
            (self.lo, self.lo_slot) = self.rescan(|a, b| a < b);
        }
        if v >= self.hi {
            (self.hi, self.hi_slot) = (v, slot);
        } else if evicted && slot == self.hi_slot {
            (self.hi, self.hi_slot) = self.rescan(|a, b| a > b);
        }
    }

    /// The extreme of the window by `beyond` and its slot (the first slot
    /// on a tie).
    fn rescan(&self, beyond: impl Fn(T, T) -> bool) -> (T, u16) {
        let values = self.values.as_slice();
        let mut best = (values.first().copied().unwrap_or(T::ZERO), 0);
        for (i, &x) in values.iter().enumerate().skip(1) {
            if beyond(x, best.0) {
                best = (x, i);
            }
        }
        (best.0, u16::try_from(best.1).unwrap_or(0))
    }

    /// Spread (max - min) and largest magnitude.
    fn spread(&self) -> (T, T) {
        (self.hi - self.lo, T::max(T::abs(self.hi), T::abs(self.lo)))
    }
}

/// Rolling-window steady-state detector for one stage; `W` scans.
#[derive(Clone, Debug)]
pub struct SteadyStateDetector<T, const W: usize> {
    temperature: RangeWindow<T, W>,
    ratio: RangeWindow<T, W>,
    flow: RangeWindow<T, W>,
}

impl<T: Real, const W: usize> Default for SteadyStateDetector<T, W> {
    fn default() -> Self {
        Self::new()
    }
}

/// Minimum and maximum of `values` (0, 0 when empty).
#[cfg(test)]
fn extremes<T: Real>(values: &[T]) -> (T, T) {
    let mut lo = T::ZERO;
    let mut hi = T::ZERO;
    for (i, &v) in values.iter().enumerate() {
        if i == 0 || v < lo {
            lo = v;
        }
        if i == 0 || v > hi {
            hi = v;
        }
    }
    (lo, hi)
}

impl<T: Real, const W: usize> SteadyStateDetector<T, W> {
    /// An empty detector. `W` must be at least 2 (checked at compile time).
    pub const fn new() -> Self {
        const { assert!(W >= 2, "a steady-state window needs at least 2 scans") };
        SteadyStateDetector {
            temperature: RangeWindow::new(),
            ratio: RangeWindow::new(),
            flow: RangeWindow::new(),
        }
    }

    /// Forgets the window.
    pub fn clear(&mut self) {
        self.temperature.clear();
        self.ratio.clear();
        self.flow.clear();
    }

    /// Adds one scan. `temperature` may be a bad placeholder for stages
    /// without a meaningful discharge temperature (pumps): pass `None`.
    /// `flow` is `None` when the stage has no flow measurement.
    pub fn update(
        &mut self,
        cfg: &SteadyStateConfig<T>,
        ratio: Measured<T>,
        temperature: Option<Measured<T>>,
        flow: Option<Measured<T>>,
    ) -> SteadyState<T> {
        let bad = !ratio.quality.is_usable()
            || temperature.is_some_and(|t| !t.quality.is_usable())
            || flow.is_some_and(|f| !f.quality.is_usable());
        if bad {
            self.clear();
            return SteadyState::unknown();
        }
        self.ratio.write(ratio.value);
        if let Some(t) = temperature {
            self.temperature.write(t.value);
        }
        if let Some(f) = flow {
            self.flow.write(f.value);
        }
        let (t_spread, _) = self.temperature.spread();
        let (r_spread, r_mag) = self.ratio.spread();
        let r_rel = if r_mag > T::ZERO {
            r_spread / r_mag
        } else {
            T::ZERO
        };
        let full = (self.ratio.len() == W)
            && (temperature.is_none() || (self.temperature.len() == W))
            && (flow.is_none() || (self.flow.len() == W));
        // The flow test as a branch of its own: an empty flow window (a
        // stage without a flow reading) has spread and magnitude 0, so its
        // relative spread is 0; written as one expression, the compiler
        // computed the division anyway (a soft-float call on Cortex-M0).
        let flow_quiet = if self.flow.len() == 0 {
            T::ZERO <= cfg.max_flow_spread
        } else {
            self.flow_within(cfg.max_flow_spread)
        };
        SteadyState {
            steady: full
                && t_spread <= cfg.max_temperature_spread
                && r_rel <= cfg.max_ratio_spread
                && flow_quiet,
            samples: u16::try_from(self.ratio.len()).unwrap_or(u16::MAX),
            temperature_spread: t_spread,
            ratio_spread: r_rel,
        }
    }
}

impl<T: Real, const W: usize> SteadyStateDetector<T, W> {
    /// Whether the flow window's relative spread is within `max` (not
    /// inlined: kept out of the path of stages without a flow reading).
    #[inline(never)]
    fn flow_within(&self, max: T) -> bool {
        let (f_spread, f_mag) = self.flow.spread();
        let f_rel = if f_mag > T::ZERO {
            f_spread / f_mag
        } else {
            T::ZERO
        };
        f_rel <= max
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::quality::Quality;

    #[test]
    fn becomes_steady_after_a_full_quiet_window_and_resets_on_a_step() {
        let cfg = SteadyStateConfig::<f32>::default();
        let mut d = SteadyStateDetector::<f32, 4>::new();
        let g = Measured::good;
        for i in 0..3 {
            let s = d.update(&cfg, g(3.0), Some(g(400.0 + 0.1 * i as f32)), None);
            assert!(!s.steady, "window not yet full at scan {i}");
        }
        assert!(d.update(&cfg, g(3.0), Some(g(400.2)), None).steady);
        // A 5 K step in discharge temperature: not steady until it leaves the window.
        assert!(!d.update(&cfg, g(3.0), Some(g(405.0)), None).steady);
        for _ in 0..3 {
            d.update(&cfg, g(3.0), Some(g(405.0)), None);
        }
        assert!(d.update(&cfg, g(3.0), Some(g(405.0)), None).steady);
        // A bad input clears the window.
        let s = d.update(&cfg, Measured::new(3.0, Quality::Bad), Some(g(405.0)), None);
        assert_eq!((s.steady, s.samples), (false, 0));
    }

    #[test]
    fn tracked_extremes_equal_a_full_rescan() {
        // Pseudo-random values from a small set, so extremes repeat and
        // leave the window often; clears in between.
        let mut r = RangeWindow::<f32, 5>::new();
        let mut seed = 12_345_u32;
        for i in 0..4_000 {
            seed = seed.wrapping_mul(1_103_515_245).wrapping_add(12_345);
            // Random values from a small set, then a rising and a falling
            // trend (an extreme leaves at every scan).
            let v = match (i / 500) % 4 {
                1 => i as f32 * 0.25,
                3 => -(i as f32) * 0.5,
                _ => ((seed >> 16) % 7) as f32 - 3.0,
            };
            if i % 301 == 300 {
                r.clear();
            }
            r.write(v);
            let (lo, hi) = extremes(r.values.as_slice());
            assert_eq!((r.lo, r.hi), (lo, hi), "scan {i}");
            assert_eq!(r.spread(), (hi - lo, f32::max(hi.abs(), lo.abs())));
        }
    }

    #[test]
    fn flow_swing_breaks_steadiness() {
        let cfg = SteadyStateConfig::<f64>::default();
        let mut d = SteadyStateDetector::<f64, 3>::new();
        let g = Measured::good;
        let mut last = SteadyState::unknown();
        for f in [10.0, 10.5, 11.0] {
            last = d.update(&cfg, g(2.0), Some(g(380.0)), Some(g(f)));
        }
        assert!(!last.steady, "10 % flow swing");
        assert_eq!(
            SteadyStateConfig {
                max_flow_spread: 0.0,
                ..cfg
            }
            .validate(),
            Err(ConfigError::out_of_range(
                "steady_state.max_flow_spread",
                0.0,
                f64::INFINITY
            ))
        );
    }
}
