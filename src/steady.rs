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
//! for the family of such tests). Each window yields its exact minimum and
//! maximum at a bounded cost per scan (see `RangeWindow`).

use crate::error::ConfigError;
use crate::quality::Measured;
use crate::real::{Real, HARD_FLOAT};

// The windows' compares. Every value they compare is finite (the detector
// takes usable readings only, and the kernel's usable values are finite),
// and the spreads formed from them are never NaN, so a compare on the bit
// patterns ([`Real::less_than`]: -0.0 equals +0.0 as in the float compare)
// gives the float compare's result. With an FPU its own compare is cheaper;
// without one (Cortex-M0) each float compare is a library call.

/// [`Real::max`] for values that are not NaN.
#[inline(always)]
fn larger<T: Real>(a: T, b: T) -> T {
    if T::greater_not_nan(b, a) {
        b
    } else {
        a
    }
}

/// [`Real::min`] for values that are not NaN.
#[inline(always)]
fn smaller<T: Real>(a: T, b: T) -> T {
    if T::less_not_nan(b, a) {
        b
    } else {
        a
    }
}

/// `x <= max` for an `x` that is not NaN (a spread) and any `max` (a
/// configured tolerance): false for a NaN `max`, as the float compare.
#[inline(always)]
fn at_most<T: Real>(x: T, max: T) -> bool {
    if HARD_FLOAT {
        x <= max
    } else {
        at_most_on_bits(x, max)
    }
}

/// [`at_most`], or for a `max` known not to be NaN (`NOT_NAN`: a validated
/// tolerance) the bit-pattern order alone without an FPU.
#[inline(always)]
fn at_most_of<T: Real, const NOT_NAN: bool>(x: T, max: T) -> bool {
    if NOT_NAN && !HARD_FLOAT {
        !T::less_than(max, x)
    } else {
        at_most(x, max)
    }
}

/// [`at_most`] without a float compare: the bit-pattern order, and a NaN
/// `max` (neither finite nor infinite) refused.
#[inline(always)]
fn at_most_on_bits<T: Real>(x: T, max: T) -> bool {
    !T::less_than(max, x) && (T::is_finite(max) || T::same_bits(T::abs(max), T::of(f64::INFINITY)))
}

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
    /// Refuses a tolerance that is not finite and above zero (as
    /// [`crate::error::check_positive`] does: out of `[0, +inf]`, or not
    /// finite), naming the first. The three checks' refusals differ only in
    /// the field: one refusal serves all three, each test on the bit
    /// pattern. Out of line: the train's construction calls it once
    /// (configuration-time flash; inlined, the change of the constructor's
    /// code moved the register allocation of a measured harness function
    /// that inlines a train's construction beside a stage evaluation).
    #[inline(never)]
    pub(crate) fn validate(&self) -> Result<(), ConfigError> {
        let positive_finite = crate::surge::positive_finite::<T>;
        let (field, value) = if !positive_finite(self.max_temperature_spread) {
            (
                "steady_state.max_temperature_spread",
                self.max_temperature_spread,
            )
        } else if !positive_finite(self.max_ratio_spread) {
            ("steady_state.max_ratio_spread", self.max_ratio_spread)
        } else if !positive_finite(self.max_flow_spread) {
            ("steady_state.max_flow_spread", self.max_flow_spread)
        } else {
            return Ok(());
        };
        Err(crate::error::refusal(
            field,
            T::is_finite(value),
            0.0,
            f64::INFINITY,
        ))
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

/// A rolling window of the last `W` values that yields its minimum and
/// maximum exactly at a bounded cost per write (the van Herk / Gil–Werman
/// decomposition of a running extreme into blocks of `W`: M. van Herk, "A
/// fast algorithm for local minimum and maximum filters on rectangular and
/// octagonal kernels", Pattern Recognition Letters 13 (1992); J. Gil and
/// M. Werman, IEEE Trans. PAMI 15 (1993)).
///
/// The ring is filled in laps of `W` writes. After a write at slot `k`, the
/// window holds this lap's slots `0..=k` and the previous lap's slots
/// `k+1..W`; its maximum is the larger of this lap's running maximum and the
/// previous lap's largest value in slots `k+1..W` (its suffix maximum). A
/// lap's suffix extremes are found once, when the lap completes (`W` steps
/// every `W` writes, outlined), so a write costs two comparisons and the
/// extremes two more, whatever the data (the earlier ring rescanned all `W`
/// values whenever an extreme left the window, which a trend does at every
/// scan). The suffix extremes are stored as values (read with no
/// indirection), in arrays beside the values' (one address per slot
/// serves all three), so `W` is limited only by the one-byte slot
/// position: at most 256.
///
/// Exactness: every value compared is a value of the window (or, after a
/// clear, a copy of the first value written, which stays in the window
/// until every slot holding a copy has been overwritten; or an infinite
/// start of a running extreme, which the first value of a lap replaces), so
/// the extremes equal a full rescan's. An empty window's arrays are not
/// read (a forgotten window keeps its old values there until its next
/// write rewrites them all).
#[derive(Clone, Debug)]
struct RangeWindow<T, const W: usize> {
    /// Slot `i`: the value of the lap's `i`-th write (after a clear,
    /// unwritten slots hold the first value).
    values: [T; W],
    /// Slot `i`: the previous lap's largest value in slots `i..W`
    /// (meaningful for slots `next..W`; after a lap completes, that lap's,
    /// for every slot).
    high: [T; W],
    /// Same for the smallest value.
    low: [T; W],
    /// Largest and smallest of this lap's values (slots `0..next`, from the
    /// first write's slot in the first lap after a clear): -inf and +inf at
    /// the start of a lap, 0 while the window is empty.
    lap_high: T,
    lap_low: T,
    /// Slot of the next write, `< W`.
    next: u8,
    /// Slot of the first write after a clear, `< W` (windows of one
    /// detector start at different slots, so their laps complete at
    /// different scans).
    phase: u8,
    /// Values held, `<= W`.
    len: u16,
}

impl<T: Real, const W: usize> RangeWindow<T, W> {
    /// An empty window whose laps start at slot `phase` (taken modulo `W`).
    const fn new(phase: u8) -> Self {
        const {
            assert!(
                W >= 1 && W <= 256,
                "a steady-state window holds 1 to 256 scans"
            )
        };
        // W <= 256, so the remainder fits in u8.
        let phase = (phase as usize % W) as u8;
        RangeWindow {
            values: [T::ZERO; W],
            high: [T::ZERO; W],
            low: [T::ZERO; W],
            lap_high: T::ZERO,
            lap_low: T::ZERO,
            next: phase,
            phase,
            len: 0,
        }
    }

    /// Forgets every value (an empty window's extremes are 0).
    fn clear(&mut self) {
        *self = Self::new(self.phase);
    }

    /// Forgets every value as [`RangeWindow::clear`] does, without
    /// rewriting the three arrays: an empty window's arrays are never read
    /// (its extremes are 0 by `len`, [`RangeWindow::extremes`], and its
    /// next write, the first of a lap, rewrites every slot,
    /// [`RangeWindow::start`]), so only the count, the next slot and the
    /// lap's running extremes are reset. On the scan's path (a stage with a
    /// bad input forgets its windows on every such scan): rewriting the
    /// arrays was a `memclr` call per window, 720 instructions on
    /// Cortex-M4F for the four stages of the harness's train.
    fn forget(&mut self) {
        self.len = 0;
        self.next = self.phase;
        self.lap_high = T::ZERO;
        self.lap_low = T::ZERO;
    }

    #[inline(always)]
    fn len(&self) -> usize {
        usize::from(self.len)
    }

    /// Adds a finite value; returns the window's minimum and maximum.
    #[inline(always)]
    fn write(&mut self, v: T) -> (T, T) {
        let (lo, hi, _) = self.write_counted(v);
        (lo, hi)
    }

    /// [`RangeWindow::write`], and the number of values held after it (`W`
    /// as a constant once the window is full, so that a caller's test for a
    /// full window folds away on that path).
    #[inline(always)]
    fn write_counted(&mut self, v: T) -> (T, T, usize) {
        let held = if usize::from(self.len) < W {
            if self.len == 0 {
                self.start(v);
            }
            self.len += 1;
            usize::from(self.len)
        } else {
            W
        };
        let (lo, hi) = self.write_held(v);
        (lo, hi, held)
    }

    /// The ring part of [`RangeWindow::write`] (`len` already counted).
    #[inline(always)]
    fn write_held(&mut self, v: T) -> (T, T) {
        let at = usize::from(self.next);
        // At the start of a lap the running extremes are -inf and +inf,
        // which `v` (finite) replaces.
        let hi = larger(self.lap_high, v);
        let lo = smaller(self.lap_low, v);
        if at + 1 < W {
            (self.lap_high, self.lap_low) = (hi, lo);
            // W <= 256 (asserted in `new`), so a slot fits in u8. Stored
            // before the value (no reload of `next` after a store).
            self.next = self.next.wrapping_add(1);
            if let Some(slot) = self.values.get_mut(at) {
                *slot = v;
            }
            // The previous lap's suffix extremes from the next slot.
            match (self.low.get(at + 1), self.high.get(at + 1)) {
                (Some(&l), Some(&h)) => (smaller(l, lo), larger(h, hi)),
                _ => (lo, hi),
            }
        } else {
            // The lap is complete: the window is this lap, whose extremes
            // are now slot 0's suffix extremes (read back from there rather
            // than kept across the call: no registers to merge).
            if let Some(slot) = self.values.get_mut(at) {
                *slot = v;
            }
            self.next = 0;
            self.close_lap();
            match (self.low.first(), self.high.first()) {
                (Some(&l), Some(&h)) => (l, h),
                _ => (lo, hi),
            }
        }
    }

    /// First write after a clear: every slot holds `v` and stands for
    /// itself as a suffix extreme (the unwritten slots stand for older
    /// values, and `v` stays in the window until each of them has been
    /// overwritten); this lap so far is `v`.
    #[cold]
    #[inline(never)]
    fn start(&mut self, v: T) {
        (self.values, self.high, self.low) = ([v; W], [v; W], [v; W]);
        (self.lap_high, self.lap_low) = (v, v);
    }

    /// The lap completed: records, for every slot, its largest and smallest
    /// values from that slot on, and starts the next lap's running extremes
    /// at -inf and +inf (so that slot 0's entries, read while the next write
    /// goes to slot 0, are the extremes of the window, this lap).
    #[cold]
    #[inline(never)]
    fn close_lap(&mut self) {
        let mut slots = self
            .values
            .iter()
            .zip(self.high.iter_mut().zip(self.low.iter_mut()))
            .rev();
        if let Some((&last, (h, l))) = slots.next() {
            let (mut hi, mut lo) = (last, last);
            (*h, *l) = (hi, lo);
            for (&x, (h, l)) in slots {
                hi = larger(x, hi);
                lo = smaller(x, lo);
                (*h, *l) = (hi, lo);
            }
        }
        (self.lap_high, self.lap_low) = (T::of(f64::NEG_INFINITY), T::of(f64::INFINITY));
    }

    /// Minimum and maximum of the window (0, 0 when empty, whatever its
    /// arrays hold: see [`RangeWindow::forget`]).
    #[inline(always)]
    fn extremes(&self) -> (T, T) {
        if self.len == 0 {
            return (T::ZERO, T::ZERO);
        }
        let k = usize::from(self.next);
        match (self.low.get(k), self.high.get(k)) {
            (Some(&l), Some(&h)) => (smaller(self.lap_low, l), larger(self.lap_high, h)),
            _ => (self.lap_low, self.lap_high),
        }
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
    /// An empty detector. `W` must be 2 to 256 (checked at compile time).
    pub const fn new() -> Self {
        Self::staggered(0)
    }

    /// An empty detector for the `stage`-th stage of a train: the same
    /// results as [`SteadyStateDetector::new`], but the windows complete
    /// their laps (about `W` comparisons each, once every `W` scans) at
    /// scans that depend on `stage`, so that the detectors of a train do
    /// not all do that work in the same scan.
    pub const fn staggered(stage: usize) -> Self {
        let [ratio, temperature, flow] = Self::phases(stage);
        SteadyStateDetector {
            ratio: RangeWindow::new(ratio),
            temperature: RangeWindow::new(temperature),
            flow: RangeWindow::new(flow),
        }
    }

    /// An empty detector whose windows all start at slot 0 (all bits zero
    /// for a float `T`): a placeholder built in place (a memory fill, not
    /// a copy of a constant) before [`SteadyStateDetector::init_staggered`].
    pub(crate) const fn unstaggered() -> Self {
        SteadyStateDetector {
            ratio: RangeWindow::new(0),
            temperature: RangeWindow::new(0),
            flow: RangeWindow::new(0),
        }
    }

    /// Makes this detector equal to [`SteadyStateDetector::staggered`]`(stage)`
    /// in place (for a train built in place: the windows are reset where
    /// they are, no detector is built elsewhere and copied in).
    pub fn init_staggered(&mut self, stage: usize) {
        let [ratio, temperature, flow] = Self::phases(stage);
        self.ratio.phase = ratio;
        self.temperature.phase = temperature;
        self.flow.phase = flow;
        // Cleared whether empty or not: the phases changed.
        self.temperature.clear();
        self.ratio.clear();
        self.flow.clear();
    }

    /// The first slots of the ratio, temperature and flow windows of the
    /// `stage`-th stage's detector (see [`SteadyStateDetector::staggered`]).
    const fn phases(stage: usize) -> [u8; 3] {
        const { assert!(W >= 2, "a steady-state window needs at least 2 scans") };
        // Offsets modulo W (at most 256, asserted by the windows), so they
        // fit in u8.
        let at = stage % W;
        [at as u8, ((at + W / 2) % W) as u8, ((at + W / 4) % W) as u8]
    }

    /// Forgets the window.
    pub fn clear(&mut self) {
        self.restart();
    }

    /// [`SteadyStateDetector::clear`] out of the scan's path.
    #[cold]
    #[inline(never)]
    fn restart(&mut self) {
        self.temperature.forget();
        self.ratio.forget();
        self.flow.forget();
    }

    /// Adds one scan. `temperature` may be a bad placeholder for stages
    /// without a meaningful discharge temperature (pumps): pass `None`.
    /// `flow` is `None` when the stage has no flow measurement.
    #[inline(never)]
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
            self.restart();
            return SteadyState::unknown();
        }
        let (r_lo, r_hi, samples) = self.ratio.write_counted(ratio.value);
        let (t_lo, t_hi, t_full) = match temperature {
            Some(t) => {
                let (lo, hi, held) = self.temperature.write_counted(t.value);
                (lo, hi, held == W)
            }
            None => {
                let (lo, hi) = self.temperature.extremes();
                (lo, hi, true)
            }
        };
        self.finish::<false>(cfg, (r_lo, r_hi), samples, (t_lo, t_hi), t_full, flow)
    }

    /// [`SteadyStateDetector::update`] for a train's compressor stage,
    /// inlined into the train's scan (no call). Every update of such a
    /// detector passes a temperature: its ratio and temperature windows are
    /// written on the same scans and cleared together, so they always hold
    /// the same number of values, and that count is kept once for both (one
    /// test for a window still filling). Only for a detector whose every
    /// update since it was built passed a temperature, with a `cfg` that
    /// passed [`SteadyStateConfig::validate`] (see
    /// [`SteadyStateDetector::finish`]).
    #[inline(always)]
    pub(crate) fn update_compressor(
        &mut self,
        cfg: &SteadyStateConfig<T>,
        ratio: Measured<T>,
        temperature: Measured<T>,
        flow: Option<Measured<T>>,
    ) -> SteadyState<T> {
        let bad = !ratio.quality.is_usable()
            || !temperature.quality.is_usable()
            || flow.is_some_and(|f| !f.quality.is_usable());
        if bad {
            self.restart();
            return SteadyState::unknown();
        }
        // RangeWindow::write_counted for both windows at once.
        let samples = if self.ratio.len() < W {
            if self.ratio.len == 0 {
                self.ratio.start(ratio.value);
                self.temperature.start(temperature.value);
            }
            self.ratio.len += 1;
            self.temperature.len = self.ratio.len;
            self.ratio.len()
        } else {
            W
        };
        let r = self.ratio.write_held(ratio.value);
        let t = self.temperature.write_held(temperature.value);
        self.finish::<true>(cfg, r, samples, t, true, flow)
    }

    /// The tests of [`SteadyStateDetector::update`] once the ratio and
    /// temperature windows are written: their extremes, the ratio window's
    /// count, whether the temperature window is full (or not written), and
    /// the flow reading. `VALIDATED`: `cfg` passed
    /// [`SteadyStateConfig::validate`] (finite tolerances above zero), so an
    /// empty flow window is always quiet and no tolerance is NaN.
    #[inline(always)]
    fn finish<const VALIDATED: bool>(
        &mut self,
        cfg: &SteadyStateConfig<T>,
        (r_lo, r_hi): (T, T),
        samples: usize,
        (t_lo, t_hi): (T, T),
        t_full: bool,
        flow: Option<Measured<T>>,
    ) -> SteadyState<T> {
        let t_spread = t_hi - t_lo;
        let r_rel = relative_spread(r_lo, r_hi);
        let full = samples == W && t_full;
        // The flow test as a branch of its own: an empty flow window (a
        // stage without a flow reading) has spread and magnitude 0, so its
        // relative spread is 0; written as one expression, the compiler
        // computed the division anyway (a soft-float call on Cortex-M0).
        // Any other case out of line (kept out of the path of stages
        // without a flow reading).
        let flow_quiet = if flow.is_none() && self.flow.len() == 0 {
            VALIDATED || at_most(T::ZERO, cfg.max_flow_spread)
        } else {
            flow_window_quiet(&mut self.flow, flow, cfg.max_flow_spread)
        };
        SteadyState {
            steady: full
                && flow_quiet
                && at_most_of::<T, VALIDATED>(t_spread, cfg.max_temperature_spread)
                && at_most_of::<T, VALIDATED>(r_rel, cfg.max_ratio_spread),
            samples: u16::try_from(samples).unwrap_or(u16::MAX),
            temperature_spread: t_spread,
            ratio_spread: r_rel,
        }
    }
}

/// The flow part of [`SteadyStateDetector::update`]: writes `flow` if there
/// is one (a window not written this scan keeps its values) and tells
/// whether the window is quiet: full if written this scan, and its relative
/// spread, (hi - lo) / max(|hi|, |lo|) (0 when both are 0), within `max`.
#[inline(never)]
fn flow_window_quiet<T: Real, const W: usize>(
    window: &mut RangeWindow<T, W>,
    flow: Option<Measured<T>>,
    max: T,
) -> bool {
    let (lo, hi) = match flow {
        Some(f) => {
            let extremes = window.write(f.value);
            if window.len() != W {
                return false;
            }
            extremes
        }
        None => window.extremes(),
    };
    at_most(relative_spread(lo, hi), max)
}

/// (hi - lo) / max(|hi|, |lo|) of a window's extremes (`lo <= hi`), 0 when
/// both are 0 (never NaN: the extremes are finite).
#[inline(always)]
fn relative_spread<T: Real>(lo: T, hi: T) -> T {
    let spread = hi - lo;
    // With an FPU: as `lo <= hi`, max(|hi|, |lo|) is max(hi, -lo), one
    // negation for two absolute values (the same value; a zero of either
    // sign when both extremes are zeros, which the compare refuses).
    // Without one, the absolute values: an absolute value is +0.0 or
    // above, so above zero unless +0.0 (a bit test).
    let (magnitude, positive) = if HARD_FLOAT {
        let m = larger(hi, -lo);
        (m, m > T::ZERO)
    } else {
        let m = larger(T::abs(hi), T::abs(lo));
        (m, !T::same_bits(m, T::ZERO))
    };
    if positive {
        spread / magnitude
    } else {
        T::ZERO
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::quality::Quality;
    use std::format;
    use std::string::String;

    #[test]
    fn a_constant_temperature_gives_what_no_temperature_gives() {
        // Consistency check for a train's pump stage: the compressor's
        // update with a constant 0 standing in for the temperature gives,
        // bit for bit, what the general update gives without one, through
        // window fills, laps, a bad ratio, a bad flow and flow gaps.
        let cfg = SteadyStateConfig::<f32>::default();
        let mut a = SteadyStateDetector::<f32, 4>::staggered(1);
        let mut b = SteadyStateDetector::<f32, 4>::staggered(1);
        let mut steady_scans = 0;
        for i in 0..40 {
            let q = if i == 13 { Quality::Bad } else { Quality::Good };
            let ratio = Measured::new(2.0 + 0.001 * (i % 7) as f32, q);
            let flow = match i % 11 {
                0 => None,
                5 => Some(Measured::new(10.0, Quality::Bad)),
                _ => Some(Measured::good(10.0 + 0.01 * (i % 3) as f32)),
            };
            let x = a.update(&cfg, ratio, None, flow);
            let y = b.update_compressor(&cfg, ratio, Measured::good(0.0), flow);
            assert_eq!(
                (
                    x.steady,
                    x.samples,
                    x.temperature_spread.to_bits(),
                    x.ratio_spread.to_bits()
                ),
                (
                    y.steady,
                    y.samples,
                    y.temperature_spread.to_bits(),
                    y.ratio_spread.to_bits()
                ),
                "scan {i}"
            );
            steady_scans += usize::from(x.steady);
        }
        // Both outcomes were compared.
        assert!(0 < steady_scans && steady_scans < 40, "{steady_scans}");
    }

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

    /// Feeds `values` (a forget, as on a bad input, where `None`) to a window and to a naive
    /// history of the last `W` values, comparing minimum, maximum and spread
    /// with a full rescan after every write (a consistency check against
    /// the definition of the range over a moving window).
    fn matches_a_full_rescan<const W: usize>(values: &[Option<f32>]) -> Result<(), String> {
        // Laps starting at the first, a middle and the last slot.
        for phase in [0, W / 3, W - 1] {
            let phase = u8::try_from(phase).unwrap();
            matches_a_full_rescan_from::<W>(values, phase)
                .map_err(|e| format!("phase {phase}: {e}"))?;
        }
        Ok(())
    }

    fn matches_a_full_rescan_from<const W: usize>(
        values: &[Option<f32>],
        phase: u8,
    ) -> Result<(), String> {
        let mut r = RangeWindow::<f32, W>::new(phase);
        let mut history: std::collections::VecDeque<f32> = std::collections::VecDeque::new();
        for (i, v) in values.iter().enumerate() {
            let written = match *v {
                Some(v) => {
                    history.push_back(v);
                    if history.len() > W {
                        history.pop_front();
                    }
                    Some(r.write(v))
                }
                None => {
                    // What a detector does on a bad input (the old values
                    // stay in the arrays).
                    r.forget();
                    history.clear();
                    None
                }
            };
            let (lo, hi) = extremes(history.make_contiguous());
            let (got_lo, got_hi) = r.extremes();
            if (got_lo, got_hi) != (lo, hi) || r.len() != history.len() {
                return Err(format!(
                    "W {W}, write {i}: window ({got_lo}, {got_hi}, len {}), rescan ({lo}, {hi}, len {})",
                    r.len(),
                    history.len()
                ));
            }
            if written.is_some_and(|w| w != (lo, hi)) {
                return Err(format!("W {W}, write {i}: write returned {written:?}"));
            }
            // The range (max - min), as the detector forms it.
            if got_hi - got_lo != hi - lo {
                return Err(format!("W {W}, write {i}: range {}", got_hi - got_lo));
            }
        }
        Ok(())
    }

    #[test]
    fn tracked_extremes_equal_a_full_rescan() {
        // Random values from a small set (ties, extremes leaving often),
        // then a rising and a falling trend (an extreme leaves at every
        // scan), clears in between.
        let mut seed = 12_345_u32;
        let values: std::vec::Vec<Option<f32>> = (0..4_000)
            .map(|i| {
                seed = seed.wrapping_mul(1_103_515_245).wrapping_add(12_345);
                if i % 301 == 300 {
                    return None;
                }
                Some(match (i / 500) % 4 {
                    1 => i as f32 * 0.25,
                    3 => -(i as f32) * 0.5,
                    _ => ((seed >> 16) % 7) as f32 - 3.0,
                })
            })
            .collect();
        for check in [
            matches_a_full_rescan::<1>,
            matches_a_full_rescan::<2>,
            matches_a_full_rescan::<5>,
            matches_a_full_rescan::<8>,
            // The largest window (slots 0..=255 in one byte).
            matches_a_full_rescan::<256>,
        ] {
            check(&values).unwrap();
        }
    }

    /// Seeded property test: random NaN-free sequences (values from a
    /// small set for ties, or spread over many magnitudes, signs and
    /// zeros), with clears, through windows of several lengths, including
    /// sequences long enough to wrap the ring many times.
    #[test]
    fn window_extremes_equal_a_naive_rescan_proptest() {
        use proptest::prelude::*;
        use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};
        let mut seed_bytes = [0u8; 32];
        seed_bytes[..8].copy_from_slice(&0x5EED_57EA_u64.to_le_bytes());
        let config = Config {
            cases: 512,
            failure_persistence: None,
            rng_algorithm: RngAlgorithm::ChaCha,
            ..Config::default()
        };
        let mut runner = TestRunner::new_with_rng(
            config,
            TestRng::from_seed(RngAlgorithm::ChaCha, &seed_bytes),
        );
        let value = prop_oneof![
            // Ties: a few distinct values.
            (0_u8..4).prop_map(|n| Some(f32::from(n) - 1.5)),
            // Any normal or subnormal value or zero (no NaN, no infinity).
            (prop::num::f32::NORMAL | prop::num::f32::SUBNORMAL | prop::num::f32::ZERO)
                .prop_map(Some),
            // A plausible process value.
            (300.0_f32..420.0).prop_map(Some),
        ];
        let step = prop_oneof![40 => value, 1 => Just(None)];
        let sequence = prop::collection::vec(step, 0..200);
        runner
            .run(&sequence, |values| {
                for check in [
                    matches_a_full_rescan::<1>,
                    matches_a_full_rescan::<2>,
                    matches_a_full_rescan::<3>,
                    matches_a_full_rescan::<8>,
                    matches_a_full_rescan::<13>,
                ] {
                    check(&values).map_err(TestCaseError::fail)?;
                }
                Ok(())
            })
            .unwrap();
    }

    #[test]
    fn bad_scans_leave_a_detector_that_behaves_as_a_fresh_one() {
        // Consistency check of `RangeWindow::forget` (which leaves the old
        // values in the arrays): after one to three bad scans, a detector
        // that held 0 to 13 scans gives exactly what a fresh detector of
        // its stage gives, scan by scan, over a sequence that refills and
        // laps every window, with and without temperature and flow
        // readings (the first scan without a temperature: the extremes of
        // an emptied window). (The next slot that `forget` resets only
        // decides at which scans the window's laps complete, the
        // staggering of the stages; it does not change the extremes.)
        const W: usize = 8;
        let cfg = SteadyStateConfig::<f32>::default();
        for stage in 0..W + 2 {
            for held in [0_u16, 1, 5, 8, 13] {
                for bad in 1..=3 {
                    let mut d = SteadyStateDetector::<f32, W>::staggered(stage);
                    for i in 0..held {
                        let x = 2.0 + f32::from(i % 5) * 0.01;
                        let flow = (i % 3 != 0).then_some(Measured::good(10.0 * x));
                        let t = Some(Measured::good(300.0 + 7.0 * x));
                        let _ = d.update(&cfg, Measured::good(x), t, flow);
                    }
                    for _ in 0..bad {
                        assert_eq!(
                            d.update(&cfg, Measured::bad(), None, None),
                            SteadyState::unknown()
                        );
                    }
                    let mut fresh = SteadyStateDetector::<f32, W>::staggered(stage);
                    for i in 0..3 * W as u16 {
                        let x = 3.0 + f32::from(i % 7) * 0.002;
                        // No temperature first (an empty window's extremes).
                        let t = (i % 4 != 0).then_some(Measured::good(400.0 - x));
                        let flow = (i % 5 > 1).then_some(Measured::good(5.0 + x));
                        let args = (Measured::good(x), t, flow);
                        assert_eq!(
                            d.update(&cfg, args.0, args.1, args.2),
                            fresh.update(&cfg, args.0, args.1, args.2),
                            "stage {stage}, {held} held, {bad} bad, scan {i}"
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn init_staggered_equals_staggered() {
        // Consistency check: the in-place build is the by-value one, field
        // for field (the whole state, compared through `Debug`), whether the
        // detector was a placeholder or already held values; and they then
        // give the same results.
        const W: usize = 8;
        let cfg = SteadyStateConfig::<f32>::default();
        for stage in 0..=2 * W + 1 {
            let want = SteadyStateDetector::<f32, W>::staggered(stage);
            let mut fresh = SteadyStateDetector::<f32, W>::unstaggered();
            fresh.init_staggered(stage);
            let mut used = SteadyStateDetector::<f32, W>::staggered(stage + 3);
            for i in 0..13_u16 {
                let x = 2.0 + f32::from(i % 5) * 0.01;
                let _ = used.update(
                    &cfg,
                    Measured::good(x),
                    Some(Measured::good(300.0 + x)),
                    Some(Measured::good(10.0 * x)),
                );
            }
            assert_ne!(format!("{used:?}"), format!("{want:?}"));
            used.init_staggered(stage);
            let mut want = want;
            for d in [&mut fresh, &mut used] {
                assert_eq!(format!("{d:?}"), format!("{want:?}"), "stage {stage}");
            }
            for i in 0..3 * W as u16 {
                let x = 3.0 + f32::from(i % 7) * 0.002;
                let args = (
                    Measured::good(x),
                    Some(Measured::good(400.0 - x)),
                    Some(Measured::good(5.0 + x)),
                );
                let w = want.update(&cfg, args.0, args.1, args.2);
                assert_eq!(fresh.update(&cfg, args.0, args.1, args.2), w);
                assert_eq!(used.update(&cfg, args.0, args.1, args.2), w);
            }
        }
    }

    /// The detector at every lap phase against a naive detector (full
    /// rescans of the last `W` values of each signal, the same update rules),
    /// over a pseudo-random sequence with bad inputs, stages without a
    /// temperature and scans without a flow reading (consistency check
    /// against the definition of the test).
    #[test]
    fn staggered_detectors_equal_a_naive_detector() {
        const W: usize = 5;
        type History = std::collections::VecDeque<f64>;
        fn push(h: &mut History, v: f64) {
            h.push_back(v);
            if h.len() > W {
                h.pop_front();
            }
        }
        fn relative(h: &mut History) -> f64 {
            let (lo, hi) = extremes(h.make_contiguous());
            let mag = f64::max(hi.abs(), lo.abs());
            if mag > 0.0 {
                (hi - lo) / mag
            } else {
                0.0
            }
        }
        let cfg = SteadyStateConfig {
            max_temperature_spread: 1.0,
            max_ratio_spread: 0.02,
            max_flow_spread: 0.05,
        };
        for stage in 0..=W + 1 {
            let mut d = SteadyStateDetector::<f64, W>::staggered(stage);
            let (mut r, mut t, mut f) = (History::new(), History::new(), History::new());
            let mut seed = 99_u32 + stage as u32;
            for i in 0..3_000 {
                let mut next = |n: u32| {
                    seed = seed.wrapping_mul(1_103_515_245).wrapping_add(12_345);
                    (seed >> 16) % n
                };
                let ratio = 3.0 + 0.01 * f64::from(next(5));
                let temp = (i % 97 > 10).then(|| 400.0 + 0.3 * f64::from(next(5)));
                let flow = (next(7) > 0).then(|| 10.0 + 0.1 * f64::from(next(5)));
                let bad = next(53) == 0;
                let q = if bad { Quality::Bad } else { Quality::Good };
                let got = d.update(
                    &cfg,
                    Measured::new(ratio, q),
                    temp.map(Measured::good),
                    flow.map(Measured::good),
                );
                if bad {
                    (r, t, f) = (History::new(), History::new(), History::new());
                    assert_eq!(got, SteadyState::unknown(), "stage {stage}, scan {i}");
                    continue;
                }
                push(&mut r, ratio);
                if let Some(v) = temp {
                    push(&mut t, v);
                }
                if let Some(v) = flow {
                    push(&mut f, v);
                }
                let (t_lo, t_hi) = extremes(t.make_contiguous());
                let r_rel = relative(&mut r);
                let full = r.len() == W
                    && (temp.is_none() || t.len() == W)
                    && (flow.is_none() || f.len() == W);
                let steady = full
                    && t_hi - t_lo <= cfg.max_temperature_spread
                    && r_rel <= cfg.max_ratio_spread
                    && relative(&mut f) <= cfg.max_flow_spread;
                let want = SteadyState {
                    steady,
                    samples: r.len() as u16,
                    temperature_spread: t_hi - t_lo,
                    ratio_spread: r_rel,
                };
                assert_eq!(got, want, "stage {stage}, scan {i}");
            }
        }
    }

    /// A train's compressor path (`update_compressor`: one count for the
    /// ratio and temperature windows, validated tolerances) against the
    /// general `update` with the same temperature on every scan, at every
    /// lap phase, over a pseudo-random sequence with bad inputs of each
    /// kind and scans with and without a flow reading (consistency check
    /// against the general detector, itself checked against a naive one).
    #[test]
    fn compressor_path_equals_the_general_update() {
        const W: usize = 6;
        let cfg = SteadyStateConfig {
            max_temperature_spread: 0.5_f32,
            max_ratio_spread: 0.004,
            max_flow_spread: 0.01,
        };
        for stage in 0..=W {
            let mut general = SteadyStateDetector::<f32, W>::staggered(stage);
            let mut compressor = SteadyStateDetector::<f32, W>::staggered(stage);
            let mut seed = 7_u32 + stage as u32;
            let mut steady_scans = 0;
            for i in 0..5_000 {
                let mut next = |n: u32| {
                    seed = seed.wrapping_mul(1_103_515_245).wrapping_add(12_345);
                    (seed >> 16) % n
                };
                let q = |bad: bool| if bad { Quality::Bad } else { Quality::Good };
                let ratio = Measured::new(3.0 + 0.002 * next(4) as f32, q(next(97) == 0));
                let temp = Measured::new(400.0 + 0.1 * next(6) as f32, q(next(89) == 0));
                let flow = (i % 300 > 40)
                    .then(|| Measured::new(10.0 + 0.02 * next(5) as f32, q(next(83) == 0)));
                let want = general.update(&cfg, ratio, Some(temp), flow);
                let got = compressor.update_compressor(&cfg, ratio, temp, flow);
                assert_eq!(got, want, "stage {stage}, scan {i}");
                steady_scans += usize::from(got.steady);
            }
            // Both outcomes occur (the comparison covers steady scans too).
            assert!(steady_scans > 100 && steady_scans < 4_900, "{steady_scans}");
        }
    }

    /// The compares without an FPU (the Cortex-M0 path, which a host build
    /// does not take) against the float compares, over zeros of both signs,
    /// subnormals, infinities and, for the tolerance, NaN (consistency
    /// check against IEEE 754 ordering).
    #[test]
    fn bit_pattern_compares_equal_the_float_compares() {
        let values = [
            0.0_f32,
            -0.0,
            f32::from_bits(1),
            -f32::from_bits(1),
            f32::MIN_POSITIVE,
            1e-3,
            0.01,
            0.5,
            1.0,
            1.0 + f32::EPSILON,
            3.0,
            400.0,
            -2.5,
            -400.0,
            f32::MAX,
            f32::MIN,
            f32::INFINITY,
            f32::NEG_INFINITY,
        ];
        for &a in &values {
            for &b in &values {
                assert_eq!(bits_less(a, b), a < b, "{a} < {b}");
                assert_eq!(at_most_on_bits(a, b), a <= b, "{a} <= {b}");
            }
            for nan in [f32::NAN, -f32::NAN] {
                assert!(!at_most_on_bits(a, nan), "{a} <= NaN");
            }
        }
        fn bits_less(a: f32, b: f32) -> bool {
            <f32 as Real>::less_than(a, b)
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
