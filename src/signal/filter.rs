//! Filters on fixed memory: a short running median (spike rejection) and a
//! first-order low-pass (noise).
//!
//! The low-pass is the discretised first-order lag y += a·(x − y) with
//! a = Δt/(τ + Δt) (backward-Euler discretisation; a textbook form, e.g.
//! Seborg, Edgar & Mellichamp, *Process Dynamics and Control*, exponential
//! filter). The median of the last `M` samples is the classic
//! impulse-noise filter (common practice). Both delay the signal; see the
//! module note in [`super`] on the surge path.

use crate::real::Real;
use crate::window::Window;

/// First-order low-pass with time constant `tau_s`, driven by sample
/// timestamps.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LowPass<T> {
    state: Option<(T, u64)>,
}

impl<T: Real> Default for LowPass<T> {
    fn default() -> Self {
        Self::new()
    }
}

impl<T: Real> LowPass<T> {
    /// Uninitialised: the first sample passes through.
    pub const fn new() -> Self {
        LowPass { state: None }
    }

    /// Filters sample `x` taken at `t_ms`. Assumes `x` finite and
    /// `tau_s >= 0` (validated configuration); a time that does not advance
    /// leaves the output unchanged.
    pub fn update(&mut self, x: T, t_ms: u64, tau_s: T) -> T {
        let y = match self.state {
            None => x,
            Some((y, t_last)) => {
                let ms = u32::try_from(t_ms.saturating_sub(t_last)).unwrap_or(u32::MAX);
                let dt = T::of(f64::from(ms)) * T::of(1.0e-3);
                let denom = tau_s + dt;
                if denom > T::ZERO {
                    y + dt / denom * (x - y)
                } else {
                    y
                }
            }
        };
        let y = if T::is_finite(y) { y } else { x };
        self.state = Some((y, t_ms));
        y
    }

    /// Current output, if any sample was seen.
    pub fn value(&self) -> Option<T> {
        self.state.map(|(y, _)| y)
    }

    /// Forgets the state.
    pub fn reset(&mut self) {
        self.state = None;
    }
}

/// Running median of the last `M` samples (`M` odd, 1..=15; checked at
/// compile time).
#[derive(Clone, Debug)]
pub struct Median<T, const M: usize> {
    window: Window<T, M>,
}

impl<T: Real, const M: usize> Default for Median<T, M> {
    fn default() -> Self {
        Self::new()
    }
}

impl<T: Real, const M: usize> Median<T, M> {
    /// Empty window.
    pub fn new() -> Self {
        const {
            assert!(
                M % 2 == 1 && M <= 15,
                "median window must be odd and at most 15"
            )
        };
        Median {
            window: Window::filled_with(T::ZERO),
        }
    }

    /// Adds finite sample `x` and returns the median of the samples held
    /// (the lower middle while fewer than `M`, even count).
    pub fn update(&mut self, x: T) -> T {
        self.window.write(x);
        let mut sorted = [T::ZERO; M];
        let n = self.window.len();
        for (dst, &src) in sorted.iter_mut().zip(self.window.as_slice()) {
            *dst = src;
        }
        let used = sorted.get_mut(..n).unwrap_or(&mut []);
        // At most M·M/2 = 112 comparisons.
        sort_ascending(used);
        used.get(n.saturating_sub(1) / 2).copied().unwrap_or(x)
    }

    /// Forgets the window.
    pub fn reset(&mut self) {
        self.window.clear();
    }
}

/// Sorts a short slice in place, ascending (insertion sort: at most
/// len·len/2 comparisons, no allocation; NaN-free values assumed). Shared by
/// the median filter and the mass-balance median.
pub(crate) fn sort_ascending<T: PartialOrd + Copy>(s: &mut [T]) {
    for i in 1..s.len() {
        let mut j = i;
        while j > 0 && s.get(j - 1) > s.get(j) {
            s.swap(j - 1, j);
            j -= 1;
        }
    }
}
