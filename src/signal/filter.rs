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
///
/// The samples are also kept sorted: each update writes the new sample
/// over the evicted one in the sorted copy and moves it to its place (at
/// most `2 M` compares and moves) instead of sorting a copy of the window
/// (up to `M·M/2`); the median is the same value.
#[derive(Clone, Debug)]
pub struct Median<T, const M: usize> {
    window: Window<T, M>,
    /// The first `window.len()` entries: the window's samples, ascending.
    sorted: [T; M],
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
            sorted: [T::ZERO; M],
        }
    }

    /// Adds finite sample `x` and returns the median of the samples held
    /// (the lower middle while fewer than `M`, even count).
    pub fn update(&mut self, x: T) -> T {
        let held = self.window.len();
        let n = match self.window.push(x) {
            Some(evicted) => {
                let used = self.sorted.get_mut(..held).unwrap_or(&mut []);
                let at = used
                    .iter()
                    .position(|&e| e == evicted)
                    .unwrap_or(held.saturating_sub(1));
                place_sorted(used, at, x);
                held
            }
            None => {
                let used = self.sorted.get_mut(..=held).unwrap_or(&mut []);
                place_sorted(used, held, x);
                held + 1
            }
        };
        self.sorted
            .get(n.saturating_sub(1) / 2)
            .copied()
            .unwrap_or(x)
    }

    /// Forgets the window.
    pub fn reset(&mut self) {
        self.window.clear();
    }
}

/// Writes `v` into ascending `s` at slot `at`, whose old content is
/// discarded, and moves it up or down to its place (the other entries stay
/// ascending): one pass of an insertion sort. NaN-free values assumed.
fn place_sorted<T: PartialOrd + Copy>(s: &mut [T], at: usize, v: T) {
    let mut j = at;
    while let Some(&above) = s.get(j + 1) {
        if !(above < v) {
            break;
        }
        if let Some(e) = s.get_mut(j) {
            *e = above;
        }
        j += 1;
    }
    while j > 0 {
        match s.get(j - 1) {
            Some(&below) if below > v => {
                if let Some(e) = s.get_mut(j) {
                    *e = below;
                }
                j -= 1;
            }
            _ => break,
        }
    }
    if let Some(e) = s.get_mut(j) {
        *e = v;
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

#[cfg(test)]
#[allow(clippy::indexing_slicing)]
mod tests {
    use super::*;

    /// The running median equals the middle of a sorted copy of the last
    /// `M` samples (the definition; consistency check of the kept-sorted
    /// form), over a seeded sequence with repeats, and after resets.
    fn matches_sorted_copy<const M: usize>(seed: u64) {
        let mut m = Median::<f64, M>::new();
        let mut history: std::vec::Vec<f64> = std::vec::Vec::new();
        let mut state = seed;
        for i in 0..2000 {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            // Few distinct values, so repeats and ties are common.
            let x = ((state >> 33) % 7) as f64 - 3.0;
            if i % 97 == 96 {
                m.reset();
                history.clear();
            }
            history.push(x);
            let from = history.len().saturating_sub(M);
            let mut last: std::vec::Vec<f64> = history[from..].to_vec();
            sort_ascending(&mut last);
            let want = last[(last.len() - 1) / 2];
            assert_eq!(m.update(x), want, "sample {i}, window {last:?}");
        }
    }

    #[test]
    fn median_equals_the_middle_of_a_sorted_window() {
        matches_sorted_copy::<1>(1);
        matches_sorted_copy::<3>(2);
        matches_sorted_copy::<5>(3);
        matches_sorted_copy::<9>(4);
        matches_sorted_copy::<15>(5);
    }
}
