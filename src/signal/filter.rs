//! Filters on fixed memory: a short running median (spike rejection) and a
//! first-order low-pass (noise).
//!
//! The low-pass is the discretised first-order lag y += a·(x − y) with
//! a = Δt/(τ + Δt) (backward-Euler discretisation; a textbook form, e.g.
//! Seborg, Edgar & Mellichamp, *Process Dynamics and Control*, exponential
//! filter). The median of the last `M` samples is the classic
//! impulse-noise filter (common practice). Both delay the signal; see the
//! module note in [`super`] on the surge path.

use super::below;
use crate::real::{Real, HARD_FLOAT};

/// First-order low-pass with time constant `tau_s`, driven by sample
/// timestamps ([`LowPass::update`]) or by the time elapsed between samples
/// ([`LowPass::update_after`]).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LowPass<T> {
    /// The output, once a sample was seen.
    y: Option<T>,
    /// The stamp of the previous [`LowPass::update`].
    t_last: u32,
}

impl<T: Real> Default for LowPass<T> {
    fn default() -> Self {
        Self::new()
    }
}

/// The low-pass gain a = Δt/(τ + Δt) for `dt_ms` elapsed and time constant
/// `tau_s`, or `None` when τ + Δt is not positive (the output then stays).
#[inline]
pub fn low_pass_gain<T: Real>(dt_ms: u32, tau_s: T) -> Option<T> {
    // An exact u32 -> f64 lets the f32 build convert in one instruction.
    let dt = T::of(f64::from(dt_ms)) * T::of(1.0e-3);
    let denom = tau_s + dt;
    if denom > T::ZERO {
        Some(dt / denom)
    } else {
        None
    }
}

/// One step of [`LowPass::update_with`] on a state kept in one value: `y`
/// the output, NaN before the first sample (for `None`), and `a` the gain,
/// NaN for no gain (`None`; a gain of [`low_pass_gain`] is never NaN: Δt
/// finite over a positive τ + Δt). The same result: y + a·(x − y) is NaN
/// when either is, which sends the step to the rare branch, and there a
/// finite (seen) `y` with a NaN gain is kept and anything else gives `x`,
/// as [`LowPass::update_with`] does. The usual step (seen, a gain, finite
/// result) costs no test of either state.
#[inline(always)]
pub(crate) fn low_pass_step<T: Real>(y: T, x: T, a: T) -> T {
    let next = y + a * (x - y);
    if T::is_finite(next) {
        next
    } else if T::is_finite(y) && !T::is_finite(a) {
        y
    } else {
        x
    }
}

impl<T: Real> LowPass<T> {
    /// Uninitialised: the first sample passes through.
    pub const fn new() -> Self {
        LowPass { y: None, t_last: 0 }
    }

    /// Filters sample `x` taken at `t_ms` (a 32-bit tick; the interval is
    /// the wrapping difference from the previous stamp, and a stamp behind
    /// the previous one counts as no time). Assumes `x` finite and
    /// `tau_s >= 0` (validated configuration); a time that does not advance
    /// leaves the output unchanged.
    pub fn update(&mut self, x: T, t_ms: u32, tau_s: T) -> T {
        let d = t_ms.wrapping_sub(self.t_last);
        let dt_ms = if d > i32::MAX as u32 { 0 } else { d };
        self.t_last = t_ms;
        self.update_with(x, low_pass_gain(dt_ms, tau_s))
    }

    /// Filters sample `x` taken `dt_ms` after the previous one (same
    /// assumptions as [`LowPass::update`]).
    pub fn update_after(&mut self, x: T, dt_ms: u32, tau_s: T) -> T {
        self.update_with(x, low_pass_gain(dt_ms, tau_s))
    }

    /// Filters sample `x` with gain `gain` ([`low_pass_gain`] of the time
    /// since the previous sample): y += a·(x − y), or y kept for `None`; the
    /// first sample, and a non-finite result, give `x`.
    #[inline]
    pub fn update_with(&mut self, x: T, gain: Option<T>) -> T {
        let y = match (self.y, gain) {
            (None, _) => x,
            (Some(y), Some(a)) => y + a * (x - y),
            (Some(y), None) => y,
        };
        let y = if T::is_finite(y) { y } else { x };
        self.y = Some(y);
        y
    }

    /// Current output, if any sample was seen.
    pub fn value(&self) -> Option<T> {
        self.y
    }

    /// Forgets the state.
    pub fn reset(&mut self) {
        self.y = None;
    }
}

/// Running median of the last `M` samples (`M` odd, 1..=15; checked at
/// compile time).
///
/// The samples are also kept sorted (a private `SortedWindow`): each update writes
/// the new sample over the evicted one in the sorted copy and moves it to
/// its place (at most `2 M` compares and moves) instead of sorting a copy of
/// the window (up to `M·M/2`); the median is the same value.
#[derive(Clone, Copy, Debug)]
pub struct Median<T, const M: usize> {
    /// The samples in arrival order (a ring; `next` is the oldest once
    /// full).
    ring: [T; M],
    /// The samples held, ascending.
    sorted: SortedWindow<T, M>,
    /// The ring slot the next sample goes to, `< M`.
    next: usize,
    /// Samples held, `<= M`.
    len: usize,
}

impl<T: Real, const M: usize> Default for Median<T, M> {
    fn default() -> Self {
        Self::new()
    }
}

impl<T: Real, const M: usize> Median<T, M> {
    /// Empty window.
    pub fn new() -> Self {
        Median {
            ring: [T::ZERO; M],
            sorted: SortedWindow::new(),
            next: 0,
            len: 0,
        }
    }

    /// Adds finite sample `x` and returns the median of the samples held
    /// (the lower middle while fewer than `M`, even count).
    #[inline]
    pub fn update(&mut self, x: T) -> T {
        let next = self.next.min(M - 1);
        self.next = if next + 1 >= M { 0 } else { next + 1 };
        let evicted = match self.ring.get_mut(next) {
            Some(slot) => core::mem::replace(slot, x),
            None => x,
        };
        let held = self.len;
        let leaving = if held >= M {
            Some(evicted)
        } else {
            self.len = held + 1;
            None
        };
        self.sorted.update(x, leaving, held)
    }

    /// Forgets the window.
    pub fn reset(&mut self) {
        self.next = 0;
        self.len = 0;
    }
}

/// The last `M` samples of a stream, ascending, for a running median whose
/// arrival order is kept elsewhere (by [`Median`], or by a channel's frozen
/// window, which holds the same samples). `M` odd, 1..=15 (checked at
/// compile time).
#[derive(Clone, Copy, Debug)]
pub(crate) struct SortedWindow<T, const M: usize> {
    /// The first `held` entries (the caller's count): the samples held,
    /// ascending.
    sorted: [T; M],
}

impl<T: Real, const M: usize> SortedWindow<T, M> {
    /// Empty (the caller holds no sample).
    pub(crate) fn new() -> Self {
        const {
            assert!(
                M % 2 == 1 && M <= 15,
                "median window must be odd and at most 15"
            )
        };
        SortedWindow {
            sorted: [T::ZERO; M],
        }
    }

    /// Adds finite sample `x` to the `held` samples and returns the median
    /// (the lower middle while fewer than `M`, even count). `leaving` is the
    /// sample that drops out, given exactly when `M` (or more, then `held`
    /// is not read) were held (it is among the last `M`); otherwise
    /// `held < M`.
    #[inline]
    pub(crate) fn update(&mut self, x: T, leaving: Option<T>, held: usize) -> T {
        self.update_by(x, leaving, held, below, true)
    }

    /// As [`SortedWindow::update`] for samples that are all positive and
    /// finite (a channel whose plausible range lies above zero): every
    /// compare on the bit patterns ([`Real::less_positive_bits`], the same
    /// answer as the float compare for such values, so the same order and
    /// the same median), an integer compare where a float one is a
    /// soft-float call (Cortex-M0).
    /// No sample is then zero, so the evicted one is found by its bits
    /// alone (no zero test).
    #[inline]
    pub(crate) fn update_positive(&mut self, x: T, leaving: Option<T>, held: usize) -> T {
        self.update_by(x, leaving, held, T::less_positive_bits, false)
    }

    /// [`SortedWindow::update`] with `a < b` decided by `less` (NaN-free
    /// values), `zeros` if a sample may be zero.
    #[inline(always)]
    fn update_by(
        &mut self,
        x: T,
        leaving: Option<T>,
        held: usize,
        less: impl Fn(T, T) -> bool + Copy,
        zeros: bool,
    ) -> T {
        if let Some(evicted) = leaving {
            // Full: the evicted sample's place in the sorted copy (it is
            // there; the last place is never reached otherwise): the first
            // entry equal to it.
            let at = evicted_place(&self.sorted, evicted, HARD_FLOAT, less, zeros);
            place_in_full(&mut self.sorted, at, x, less);
            self.sorted.get(M / 2).copied().unwrap_or(x)
        } else {
            let used = self.sorted.get_mut(..=held).unwrap_or(&mut []);
            place_sorted(used, held, x, less);
            used.get(held / 2).copied().unwrap_or(x)
        }
    }
}

/// The place of `evicted` in ascending `s` that holds it: its first entry
/// equal to it (as a float compare says). With a floating-point unit
/// (`hard_float`): by the bits (for a finite value other than ±0, equal is
/// the same bits: an integer comparison), and by value for a zero. Without
/// one the zero test is a soft-float call (the compiler turns the test of
/// the bits into a float compare), so: the first entry not below it, which
/// in an ascending array holding it is the first equal one, compared on the
/// bits ([`Real::less_than`]; finite values), by `less`.
#[inline(always)]
fn evicted_place<T: Real, const M: usize>(
    s: &[T; M],
    evicted: T,
    hard_float: bool,
    less: impl Fn(T, T) -> bool,
    zeros: bool,
) -> usize {
    if hard_float {
        let mut at = first_index(s, |e| T::same_bits(e, evicted));
        if zeros && T::same_bits(T::abs(evicted), T::ZERO) {
            at = first_index(s, |e| e == evicted);
        }
        at
    } else {
        first_index(s, |e| !less(e, evicted))
    }
}

/// The index of the first entry of `s` for which `is` holds, `M − 1` if
/// none does.
#[inline(always)]
fn first_index<T: Copy, const M: usize>(s: &[T; M], is: impl Fn(T) -> bool) -> usize {
    for (i, &e) in s.iter().enumerate() {
        if is(e) {
            return i;
        }
    }
    M - 1
}

/// [`place_sorted`] on a whole array (every index provably in bounds, so
/// no checks are left in the loops). After a move up no move down is
/// possible (the entry below is then one that was below `v`): with a
/// floating-point unit the first compare picks the direction and the other
/// pass is skipped; without one both passes run as in [`place_sorted`]
/// (measured: fewer instructions each way, see the commit).
#[inline]
fn place_in_full<T: Real, const M: usize>(
    s: &mut [T; M],
    at: usize,
    v: T,
    less: impl Fn(T, T) -> bool,
) {
    let mut j = at.min(M - 1);
    if HARD_FLOAT {
        if let Some(&first) = s.get(j + 1).filter(|&&a| less(a, v)) {
            let mut up = first;
            loop {
                if let Some(e) = s.get_mut(j) {
                    *e = up;
                }
                j += 1;
                match s.get(j + 1) {
                    Some(&a) if less(a, v) => up = a,
                    _ => break,
                }
            }
            if let Some(e) = s.get_mut(j) {
                *e = v;
            }
            return;
        }
        // Down, in the same form (the first compare, then a loop that
        // carries the entry moved).
        if let Some(&first) = j
            .checked_sub(1)
            .and_then(|i| s.get(i))
            .filter(|&&b| less(v, b))
        {
            let mut down = first;
            loop {
                if let Some(e) = s.get_mut(j) {
                    *e = down;
                }
                j -= 1;
                match j.checked_sub(1).and_then(|i| s.get(i)) {
                    Some(&b) if less(v, b) => down = b,
                    _ => break,
                }
            }
        }
        if let Some(e) = s.get_mut(j) {
            *e = v;
        }
        return;
    } else {
        while j + 1 < M {
            let up = match s.get(j + 1) {
                Some(&a) if less(a, v) => a,
                _ => break,
            };
            if let Some(e) = s.get_mut(j) {
                *e = up;
            }
            j += 1;
        }
    }
    while j > 0 {
        let down = match s.get(j - 1) {
            Some(&b) if less(v, b) => b,
            _ => break,
        };
        if let Some(e) = s.get_mut(j) {
            *e = down;
        }
        j -= 1;
    }
    if let Some(e) = s.get_mut(j) {
        *e = v;
    }
}

/// Writes `v` into ascending `s` at slot `at`, whose old content is
/// discarded, and moves it up or down to its place (the other entries stay
/// ascending): one pass of an insertion sort. NaN-free values assumed
/// (`less`: `a < b`, [`below`] or an equivalent).
fn place_sorted<T: Real>(s: &mut [T], at: usize, v: T, less: impl Fn(T, T) -> bool) {
    let mut j = at;
    while let Some(&up) = s.get(j + 1) {
        if !less(up, v) {
            break;
        }
        if let Some(e) = s.get_mut(j) {
            *e = up;
        }
        j += 1;
    }
    while j > 0 {
        match s.get(j - 1) {
            Some(&b) if less(v, b) => {
                if let Some(e) = s.get_mut(j) {
                    *e = b;
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
            state = crate::lcg64_step(state);
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

    /// A [`SortedWindow`] fed from a rolling window of `W >= M` samples
    /// (what a channel does with its frozen window) gives what [`Median`]
    /// gives on the same samples, through resets (consistency check of the
    /// shared form; `W` a power of two or not).
    fn shared_window_matches_median<const W: usize, const M: usize>(seed: u64) {
        let mut m = Median::<f64, M>::new();
        let mut w = crate::window::Window::<f64, W>::filled_with(0.0);
        let mut s = SortedWindow::<f64, M>::new();
        // The positive form on the same samples shifted above zero.
        let mut m_pos = Median::<f64, M>::new();
        let mut s_pos = SortedWindow::<f64, M>::new();
        let mut state = seed;
        for i in 0..3000 {
            state = crate::lcg64_step(state);
            let x = ((state >> 33) % 9) as f64 * 0.5 - 2.0;
            if (state >> 20) % 89 == 0 {
                m.reset();
                m_pos.reset();
                w.clear();
            }
            let (leaving, held) = (w.back(M), w.len());
            w.write(x);
            assert_eq!(s.update(x, leaving, held), m.update(x), "sample {i}");
            let got = s_pos.update_positive(x + 3.0, leaving.map(|l| l + 3.0), held);
            assert_eq!(got.to_bits(), m_pos.update(x + 3.0).to_bits(), "sample {i}");
        }
    }

    /// The evicted sample's place found by bits (zero: by value), and the
    /// one found as the first entry not below it (the form without a
    /// floating-point unit), is the first entry equal to it as a float
    /// (consistency check), over sorted windows with repeats and both zeros.
    #[test]
    fn evicted_place_by_bits_is_the_first_equal_entry() {
        let values = [-1.5_f32, -0.0, 0.0, 0.5, 2.0];
        let mut state = 5_u64;
        for _ in 0..20_000 {
            let mut w = [0.0_f32; 5];
            for x in w.iter_mut() {
                state = crate::lcg64_step(state);
                *x = values[((state >> 33) % 5) as usize];
            }
            sort_ascending(&mut w);
            let evicted = w[((state >> 20) % 5) as usize];
            let mut s = SortedWindow::<f32, 5> { sorted: w };
            let want = w.iter().position(|&e| e == evicted).unwrap();
            // Both forms (with and without a floating-point unit).
            assert_eq!(
                evicted_place(&w, evicted, true, below, true),
                want,
                "{w:?} {evicted}"
            );
            assert_eq!(
                evicted_place(&w, evicted, false, below, true),
                want,
                "{w:?} {evicted}"
            );
            // The positive form on the same window shifted above zero.
            let p = w.map(|e| e + 4.0);
            let pw = p.iter().position(|&e| e == evicted + 4.0).unwrap();
            for hard_float in [true, false] {
                let by_bits = evicted_place(
                    &p,
                    evicted + 4.0,
                    hard_float,
                    f32::less_positive_bits,
                    false,
                );
                assert_eq!(by_bits, pw, "{p:?}");
            }
            // Replacing the evicted entry by a value above all shows where
            // it was found.
            s.update(9.0, Some(evicted), 5);
            let mut rest: std::vec::Vec<u32> = w.iter().map(|e| e.to_bits()).collect();
            rest.remove(want);
            let got: std::vec::Vec<u32> = s.sorted[..4].iter().map(|e| e.to_bits()).collect();
            assert_eq!(got, rest, "{w:?} evicting {evicted}");
        }
    }

    #[test]
    fn median_on_a_shared_window_equals_the_running_median() {
        shared_window_matches_median::<8, 5>(11);
        shared_window_matches_median::<5, 5>(12);
        shared_window_matches_median::<7, 3>(13);
        shared_window_matches_median::<4, 1>(14);
        shared_window_matches_median::<16, 15>(15);
    }

    /// [`low_pass_step`] with NaN for `None` gives the bits of
    /// [`LowPass::update_with`] (consistency check) over a seeded stream of
    /// samples (including ones that overflow x − y), gains (including none)
    /// and restarts.
    #[test]
    fn low_pass_step_equals_update_with() {
        let mut lp = LowPass::<f32>::new();
        let mut y = f32::NAN;
        let mut state = 11_u64;
        for i in 0..20_000 {
            state = crate::lcg64_step(state);
            let x = match (state >> 33) % 5 {
                0 => f32::MAX,
                1 => -f32::MAX,
                2 => -0.0,
                _ => ((state >> 40) % 1000) as f32 * 0.37 - 150.0,
            };
            let gain = match (state >> 20) % 6 {
                0 => None,
                1 => Some(1.0),
                _ => low_pass_gain((state >> 24) as u32 % 200, 0.05_f32),
            };
            if i % 101 == 100 {
                lp.reset();
                y = f32::NAN;
            }
            let want = lp.update_with(x, gain);
            y = low_pass_step(y, x, gain.unwrap_or(f32::NAN));
            assert_eq!(y.to_bits(), want.to_bits(), "step {i}: {x} {gain:?}");
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
