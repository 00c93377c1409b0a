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
//! for the family of such tests). Cost: 3·W comparisons per scan.

use crate::error::ConfigError;
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
        for v in [
            self.max_temperature_spread,
            self.max_ratio_spread,
            self.max_flow_spread,
        ] {
            if !(T::is_finite(v) && v > T::ZERO) {
                return Err(ConfigError::SteadyStateTolerance);
            }
        }
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

/// Rolling-window steady-state detector for one stage; `W` scans.
#[derive(Clone, Debug)]
pub struct SteadyStateDetector<T, const W: usize> {
    temperature: Window<T, W>,
    ratio: Window<T, W>,
    flow: Window<T, W>,
}

impl<T: Real, const W: usize> Default for SteadyStateDetector<T, W> {
    fn default() -> Self {
        Self::new()
    }
}

fn spread<T: Real>(values: &[T]) -> (T, T) {
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
    (hi - lo, T::max(T::abs(hi), T::abs(lo)))
}

impl<T: Real, const W: usize> SteadyStateDetector<T, W> {
    /// An empty detector. `W` must be at least 2 (checked at compile time).
    pub const fn new() -> Self {
        const { assert!(W >= 2, "a steady-state window needs at least 2 scans") };
        SteadyStateDetector {
            temperature: Window::filled_with(T::ZERO),
            ratio: Window::filled_with(T::ZERO),
            flow: Window::filled_with(T::ZERO),
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
        let (t_spread, _) = spread(self.temperature.as_slice());
        let (r_spread, r_mag) = spread(self.ratio.as_slice());
        let (f_spread, f_mag) = spread(self.flow.as_slice());
        let r_rel = if r_mag > T::ZERO {
            r_spread / r_mag
        } else {
            T::ZERO
        };
        let f_rel = if f_mag > T::ZERO {
            f_spread / f_mag
        } else {
            T::ZERO
        };
        let full = (self.ratio.len() == W)
            && (temperature.is_none() || (self.temperature.len() == W))
            && (flow.is_none() || (self.flow.len() == W));
        SteadyState {
            steady: full
                && t_spread <= cfg.max_temperature_spread
                && r_rel <= cfg.max_ratio_spread
                && f_rel <= cfg.max_flow_spread,
            samples: u16::try_from(self.ratio.len()).unwrap_or(u16::MAX),
            temperature_spread: t_spread,
            ratio_spread: r_rel,
        }
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
            Err(ConfigError::SteadyStateTolerance)
        );
    }
}
