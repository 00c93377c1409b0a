//! Physical plausibility: the sensor-boundary ranges, the stated instrument
//! accuracy and the limits a good result must respect.
//!
//! Sources and reasoning:
//! - Ranges of a process measurement on a gas compressor train: absolute
//!   pressures from 1 mbar to 1000 MPa, temperatures from 60 K (below it
//!   only hydrogen and helium stay gaseous at these pressures) to 1000 K (no
//!   compressor discharges hotter), one stage's pressure ratio at most 50,
//!   a whole train's at most 2000 (common practice; configure your own).
//! - Instrument accuracy: a platinum RTD of tolerance class A reads within
//!   ±(0.15 + 0.002·|t|) °C (IEC 60751), i.e. about 0.35 K at 100 °C; the
//!   default 0.5 K covers class A up to about 175 °C. A pressure transmitter
//!   of 0.1 % of reading (common practice for a smart transmitter near its
//!   calibrated span).
//! - Resolution of an efficiency from the temperature-rise method: the
//!   relative error of η from the two temperature errors is about
//!   √2·σT/ΔT, and from the two pressure errors about √2·σp/ln r (first-order
//!   propagation of `η = (r^m − 1)·T1/ΔT`). Requiring ΔT and ln r to be at
//!   least [`Limits::resolution_factor`] (default 10) times the accuracy keeps
//!   each contribution below about 14 %; below that an efficiency is
//!   reported uncertain, not good.
//! - An efficiency above one by rounding alone is not "above one": the
//!   allowance is [`efficiency_allowance`] (64 units in the last place of
//!   one, common numerical practice).
//!
//! Not a certified safety function: the ranges are defaults that catch unit
//! slips and dead sensors; defer to the machine maker's data.

use crate::quality::{Measured, Quality};
use crate::real::Real;

/// Lowest absolute pressure a sensor may report, Pa (1 mbar).
pub const MIN_PRESSURE_PA: f64 = 100.0;
/// Highest absolute pressure, Pa (1000 MPa; above any compressor or pump
/// discharge).
pub const MAX_PRESSURE_PA: f64 = 1.0e9;
/// Lowest temperature, K.
pub const MIN_TEMPERATURE_K: f64 = 60.0;
/// Highest temperature, K.
pub const MAX_TEMPERATURE_K: f64 = 1000.0;
/// Highest mass flow, kg/s.
pub const MAX_MASS_FLOW_KG_S: f64 = 1.0e5;
/// Plausible range of a supplied compressibility factor, -.
pub const COMPRESSIBILITY_RANGE: (f64, f64) = (0.05, 2.0);
/// Plausible atmospheric pressure for a gauge reference, Pa (the lowest
/// recorded sea-level pressure is about 87 kPa, the highest about 108 kPa;
/// 50 kPa allows sites up to about 5500 m; common practice).
pub const ATMOSPHERE_RANGE_PA: (f64, f64) = (50.0e3, 110.0e3);

/// Efficiency above one allowed for rounding: 64 units in the last place
/// of one in `T` (about 7.6e-6 in f32, 1.4e-14 in f64). With `approx-math`
/// the allowance covers the approximation's error as well (1e-3, the
/// measured bound of its logarithm and exponential).
#[inline]
pub fn efficiency_allowance<T: Real>() -> T {
    let ulps = T::EPSILON * T::of(64.0);
    if cfg!(feature = "approx-math") && T::EPSILON > T::of(1e-10) {
        T::max(ulps, T::of(1.0e-3))
    } else {
        ulps
    }
}

/// Largest efficiency reported uncertain rather than bad, -: between one
/// (plus the allowance) and this, a reading may be slightly off; beyond it,
/// the data are impossible.
pub const EFFICIENCY_UNCERTAIN_MAX: f64 = 1.25;

/// Per-quantity ranges at the sensor boundary and the accuracy the
/// plausibility checks compare with. [`Limits::default`] gives the values
/// documented on each field; [`Limits::first_invalid`] reports the first
/// field outside its own sane range.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Limits<T> {
    /// Lowest absolute pressure, Pa (default 100; range [1e-3, 1e6]).
    pub min_pressure: T,
    /// Highest absolute pressure, Pa (default 1e9; range (min_pressure, 1e10]).
    pub max_pressure: T,
    /// Lowest temperature, K (default 60; range [1, 1000]).
    pub min_temperature: T,
    /// Highest temperature, K (default 1000; range (min_temperature, 2000]).
    pub max_temperature: T,
    /// Highest mass flow, kg/s (default 1e5; range (0, 1e6]).
    pub max_mass_flow: T,
    /// Highest pressure ratio of one stage, - (default 50; range (1, 1000]).
    pub max_stage_ratio: T,
    /// Highest overall pressure ratio of the train, - (default 2000;
    /// range (1, 1e5]).
    pub max_overall_ratio: T,
    /// Stated temperature measurement accuracy, K (default 0.5; range
    /// [0, 10]).
    pub temperature_accuracy: T,
    /// Stated pressure measurement accuracy, fraction of reading (default
    /// 0.001; range [0, 0.1]).
    pub pressure_accuracy: T,
    /// How many times the accuracy the temperature rise and the logarithm
    /// of the ratio must exceed before efficiencies are good (default 10;
    /// range [1, 100]).
    pub resolution_factor: T,
    /// Mass flow at or below which a machine counts as stationary, kg/s
    /// (default 0: only zero flow; range [0, max_mass_flow)).
    pub stationary_flow: T,
    /// Temperature noise band of a cooler's readings, K (default 0.5; range
    /// [0, 10]).
    pub temperature_noise: T,
}

impl<T: Real> Default for Limits<T> {
    fn default() -> Self {
        Limits {
            min_pressure: T::of(MIN_PRESSURE_PA),
            max_pressure: T::of(MAX_PRESSURE_PA),
            min_temperature: T::of(MIN_TEMPERATURE_K),
            max_temperature: T::of(MAX_TEMPERATURE_K),
            max_mass_flow: T::of(MAX_MASS_FLOW_KG_S),
            max_stage_ratio: T::of(50.0),
            max_overall_ratio: T::of(2000.0),
            temperature_accuracy: T::of(0.5),
            pressure_accuracy: T::of(0.001),
            resolution_factor: T::of(10.0),
            stationary_flow: T::ZERO,
            temperature_noise: T::of(0.5),
        }
    }
}

/// A field of [`Limits`] outside its range: (field name, min, max).
pub type LimitViolation = (&'static str, f64, f64);

impl<T: Real> Limits<T> {
    /// The first field outside its documented range, as (name, min, max)
    /// with the bounds that apply (NaN and infinities are outside).
    pub fn first_invalid(&self) -> Option<LimitViolation> {
        let within = |v: T, lo: f64, hi: f64| T::is_finite(v) && v >= T::of(lo) && v <= T::of(hi);
        let above = |v: T, lo: T, hi: f64| T::is_finite(v) && v > lo && v <= T::of(hi);
        let checks: [(&'static str, bool, f64, f64); 12] = [
            (
                "limits.min_pressure",
                within(self.min_pressure, 1e-3, 1e6),
                1e-3,
                1e6,
            ),
            (
                "limits.max_pressure",
                above(self.max_pressure, self.min_pressure, 1e10),
                self.min_pressure.to_f64(),
                1e10,
            ),
            (
                "limits.min_temperature",
                within(self.min_temperature, 1.0, 1000.0),
                1.0,
                1000.0,
            ),
            (
                "limits.max_temperature",
                above(self.max_temperature, self.min_temperature, 2000.0),
                self.min_temperature.to_f64(),
                2000.0,
            ),
            (
                "limits.max_mass_flow",
                above(self.max_mass_flow, T::ZERO, 1e6),
                0.0,
                1e6,
            ),
            (
                "limits.max_stage_ratio",
                above(self.max_stage_ratio, T::ONE, 1000.0),
                1.0,
                1000.0,
            ),
            (
                "limits.max_overall_ratio",
                above(self.max_overall_ratio, T::ONE, 1e5),
                1.0,
                1e5,
            ),
            (
                "limits.temperature_accuracy",
                within(self.temperature_accuracy, 0.0, 10.0),
                0.0,
                10.0,
            ),
            (
                "limits.pressure_accuracy",
                within(self.pressure_accuracy, 0.0, 0.1),
                0.0,
                0.1,
            ),
            (
                "limits.resolution_factor",
                within(self.resolution_factor, 1.0, 100.0),
                1.0,
                100.0,
            ),
            (
                "limits.stationary_flow",
                T::is_finite(self.stationary_flow)
                    && self.stationary_flow >= T::ZERO
                    && self.stationary_flow < self.max_mass_flow,
                0.0,
                self.max_mass_flow.to_f64(),
            ),
            (
                "limits.temperature_noise",
                within(self.temperature_noise, 0.0, 10.0),
                0.0,
                10.0,
            ),
        ];
        checks
            .iter()
            .find(|c| !c.1)
            .map(|&(name, _, lo, hi)| (name, lo, hi))
    }

    /// Smallest temperature rise for a good efficiency, K.
    #[inline]
    pub fn min_temperature_rise(&self) -> T {
        self.resolution_factor * self.temperature_accuracy
    }

    /// Smallest ln(pressure ratio) for a good efficiency, -.
    #[inline]
    pub fn min_log_ratio(&self) -> T {
        self.resolution_factor * self.pressure_accuracy * T::of(core::f64::consts::SQRT_2)
    }

    /// An absolute pressure in Pa: bad unless finite and within
    /// [`Limits::min_pressure`, `Limits::max_pressure`] (underflow, such as
    /// a subnormal or a bar value taken as Pa, and overflow are bad).
    #[inline]
    pub fn pressure(&self, m: Measured<T>) -> Measured<T> {
        within(m, self.min_pressure, self.max_pressure)
    }

    /// A temperature in K: bad unless within the temperature range (a
    /// Celsius value taken as kelvin falls below it for any process
    /// temperature under 60 °C).
    #[inline]
    pub fn temperature(&self, m: Measured<T>) -> Measured<T> {
        within(m, self.min_temperature, self.max_temperature)
    }

    /// A mass flow in kg/s: bad unless within [0, max]; zero is a valid
    /// reading (a stationary machine, flagged by the stage checks).
    #[inline]
    pub fn mass_flow(&self, m: Measured<T>) -> Measured<T> {
        within(m, T::ZERO, self.max_mass_flow)
    }

    /// [`Limits::pressure`] for limits that passed
    /// [`Limits::first_invalid`] (the train's, checked at construction):
    /// their bounds are finite, so a value within them is finite and the
    /// separate finiteness test is left out (the same result).
    #[inline]
    pub(crate) fn pressure_valid(&self, m: Measured<T>) -> Measured<T> {
        within_finite(m, self.min_pressure, self.max_pressure)
    }

    /// [`Limits::temperature`] for validated limits (as
    /// [`Limits::pressure_valid`]).
    #[inline]
    pub(crate) fn temperature_valid(&self, m: Measured<T>) -> Measured<T> {
        within_finite(m, self.min_temperature, self.max_temperature)
    }

    /// The pressure and temperature ranges in the form of the train's
    /// sensor boundary ([`within_span`]): each as [`Real::positive_span`]
    /// bounds, made once (at the train's construction) instead of a span
    /// per reading. For validated limits (finite, `0 < min < max`).
    pub(crate) fn reading_spans(&self) -> [[T; 2]; 2] {
        [
            T::positive_span(self.min_pressure, self.max_pressure),
            T::positive_span(self.min_temperature, self.max_temperature),
        ]
    }

    /// [`Limits::mass_flow`] for validated limits (as
    /// [`Limits::pressure_valid`]).
    #[inline]
    pub(crate) fn mass_flow_valid(&self, m: Measured<T>) -> Measured<T> {
        within_finite(m, T::ZERO, self.max_mass_flow)
    }
}

/// `m` unchanged if finite and in [lo, hi], else bad (its quality kept
/// otherwise, including not-applicable).
#[inline]
fn within<T: Real>(m: Measured<T>, lo: T, hi: T) -> Measured<T> {
    // One test per condition (this runs for every reading of every scan):
    // a value inside [lo, hi] with a usable quality is kept as it is.
    if m.quality == Quality::NotApplicable {
        Measured::not_applicable()
    } else if m.value >= lo && m.value <= hi && m.quality != Quality::Bad && T::is_finite(m.value) {
        m
    } else {
        Measured::bad()
    }
}

/// [`within`] for finite `lo` and `hi`: a value in [lo, hi] is then finite
/// (NaN fails both comparisons, an infinity one), so the result is the same
/// without the finiteness test.
///
/// With a hard-float ABI the FPU compares; elsewhere on Arm (no FPU: each
/// float compare a library call) the bits are compared as integers
/// ([`Real::within_nonnegative`]; every `lo` here is positive or `+0.0`:
/// validated limits, zero, the compressibility range). Two forms, not one
/// with a branch on the target: as a separate test LLVM no longer
/// short-circuits the compares on Cortex-M4F (measured: slower).
#[cfg(not(all(target_arch = "arm", not(target_abi = "eabihf"))))]
#[inline]
fn within_finite<T: Real>(m: Measured<T>, lo: T, hi: T) -> Measured<T> {
    if m.quality == Quality::NotApplicable {
        Measured::not_applicable()
    } else if m.value >= lo && m.value <= hi && m.quality != Quality::Bad {
        m
    } else {
        Measured::bad()
    }
}

/// [`within_finite`] without an FPU (see there).
#[cfg(all(target_arch = "arm", not(target_abi = "eabihf")))]
#[inline]
fn within_finite<T: Real>(m: Measured<T>, lo: T, hi: T) -> Measured<T> {
    if m.quality == Quality::NotApplicable {
        Measured::not_applicable()
    } else if T::within_nonnegative(m.value, lo, hi) && m.quality != Quality::Bad {
        m
    } else {
        Measured::bad()
    }
}

/// [`within_finite`] for finite bounds `0 < lo <= hi` (validated pressure
/// and temperature limits) given as [`Real::positive_span`] bounds
/// ([`Limits::reading_spans`]), by [`Real::within_positive_span`] (integer
/// compares on the bit patterns: the float compares' result for such
/// bounds, NaN, the infinities, zeros and negative values outside), on
/// every target. The usable reading in range is tested first, in one pass
/// (the common case); a not-applicable reading stays not applicable and
/// anything else is bad, as in [`within_finite`].
#[inline]
pub(crate) fn within_span<T: Real>(m: Measured<T>, bounds: [T; 2]) -> Measured<T> {
    if m.quality.is_usable() && T::within_positive_span(m.value, bounds) {
        m
    } else {
        refused_reading(m.quality)
    }
}

/// The quality of a reading [`within_span`] refuses: not applicable
/// stays not applicable, anything else is bad (the one statement of that
/// rule; the train's sensor boundary reads it for its grading key).
#[inline(always)]
pub(crate) fn refused_quality(q: Quality) -> Quality {
    if q == Quality::NotApplicable {
        Quality::NotApplicable
    } else {
        Quality::Bad
    }
}

/// The placeholder for a reading [`within_span`] refuses: the value 0
/// with [`refused_quality`]. Out of line and cold: the accepted reading is
/// then copied as it is, without a select per field.
#[cold]
#[inline(never)]
fn refused_reading<T: Real>(q: Quality) -> Measured<T> {
    Measured::new(T::ZERO, refused_quality(q))
}

/// A supplied compressibility factor: bad unless finite and within
/// [`COMPRESSIBILITY_RANGE`].
#[inline]
pub fn compressibility<T: Real>(m: Measured<T>) -> Measured<T> {
    within_finite(
        m,
        T::of(COMPRESSIBILITY_RANGE.0),
        T::of(COMPRESSIBILITY_RANGE.1),
    )
}

/// Grade of an efficiency: good in (0, 1 + allowance], uncertain up to
/// [`EFFICIENCY_UNCERTAIN_MAX`], bad otherwise (including non-positive).
#[inline]
pub fn efficiency_grade<T: Real>(eta: T) -> Quality {
    if !(eta > T::ZERO) || !(eta <= T::of(EFFICIENCY_UNCERTAIN_MAX)) {
        Quality::Bad
    } else if eta > T::ONE + efficiency_allowance::<T>() {
        Quality::Uncertain
    } else {
        Quality::Good
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_are_valid_and_each_field_is_checked() {
        let d = Limits::<f64>::default();
        assert_eq!(d.first_invalid(), None);
        assert!((d.min_temperature_rise() - 5.0).abs() < 1e-12);
        assert!((d.min_log_ratio() - 0.014_142_135_623_730_95).abs() < 1e-15);
        type Case = (fn(&mut Limits<f64>), &'static str);
        let cases: [Case; 12] = [
            (|l| l.min_pressure = 0.0, "limits.min_pressure"),
            (|l| l.max_pressure = 50.0, "limits.max_pressure"),
            (|l| l.min_temperature = f64::NAN, "limits.min_temperature"),
            (|l| l.max_temperature = 3000.0, "limits.max_temperature"),
            (|l| l.max_mass_flow = 0.0, "limits.max_mass_flow"),
            (|l| l.max_stage_ratio = 1.0, "limits.max_stage_ratio"),
            (|l| l.max_overall_ratio = 1e30, "limits.max_overall_ratio"),
            (
                |l| l.temperature_accuracy = -0.1,
                "limits.temperature_accuracy",
            ),
            (|l| l.pressure_accuracy = 0.5, "limits.pressure_accuracy"),
            (|l| l.resolution_factor = 0.5, "limits.resolution_factor"),
            (|l| l.stationary_flow = 2e5, "limits.stationary_flow"),
            (
                |l| l.temperature_noise = f64::INFINITY,
                "limits.temperature_noise",
            ),
        ];
        for (set, name) in cases {
            let mut l = d;
            set(&mut l);
            assert_eq!(l.first_invalid().map(|v| v.0), Some(name));
        }
    }

    #[test]
    fn boundary_flags_underflow_and_overflow() {
        let l = Limits::<f32>::default();
        let g = Measured::good;
        assert_eq!(l.pressure(g(1e5)).quality, Quality::Good);
        for v in [1e-30, 1e-40, 0.0, -1.0, 50.0, 2e9, f32::NAN, f32::INFINITY] {
            assert_eq!(l.pressure(g(v)), Measured::bad(), "{v}");
        }
        // 25 degC passed as kelvin; 1500 K.
        assert_eq!(l.temperature(g(25.0)), Measured::bad());
        assert_eq!(l.temperature(g(1500.0)), Measured::bad());
        assert_eq!(l.temperature(g(298.15)).quality, Quality::Good);
        assert_eq!(l.mass_flow(g(0.0)).quality, Quality::Good);
        assert_eq!(l.mass_flow(g(-0.1)), Measured::bad());
        assert_eq!(compressibility(g(0.01_f32)), Measured::bad());
        assert_eq!(compressibility(g(0.9_f32)).quality, Quality::Good);
        assert_eq!(
            l.temperature(Measured::not_applicable()).quality,
            Quality::NotApplicable
        );
    }

    #[test]
    fn the_validated_fast_path_equals_the_general_check() {
        // Consistency check (two implementations of the project's own
        // rule): for validated (finite) limits, the path without the
        // finiteness test gives the same result for every quality and for
        // values inside, at, outside and beyond the bounds, NaN and the
        // infinities included.
        let l = Limits::<f32>::default();
        assert_eq!(l.first_invalid(), None);
        let values = [
            f32::NAN,
            f32::INFINITY,
            f32::NEG_INFINITY,
            -1.0,
            0.0,
            1e-40,
            50.0,
            60.0,
            100.0,
            300.0,
            1000.0,
            1e5,
            1e9,
            2e9,
            f32::MAX,
            -0.0,
            -f32::NAN,
            f32::from_bits(1),
        ];
        // Each bound, and one step of the bit pattern below and above it.
        let bounds = [
            l.min_pressure,
            l.max_pressure,
            l.min_temperature,
            l.max_temperature,
        ];
        let near_bounds = bounds.iter().flat_map(|b| {
            let bits = b.to_bits();
            [f32::from_bits(bits - 1), *b, f32::from_bits(bits + 1)]
        });
        let values: std::vec::Vec<f32> = values.into_iter().chain(near_bounds).collect();
        for q in [
            Quality::Good,
            Quality::Uncertain,
            Quality::Bad,
            Quality::NotApplicable,
        ] {
            for &v in &values {
                let m = Measured::new(v, q);
                let same = |a: Measured<f32>, b: Measured<f32>| {
                    a.quality == b.quality && a.value.to_bits() == b.value.to_bits()
                };
                assert!(same(l.pressure(m), l.pressure_valid(m)), "{v} {q:?}");
                assert!(same(l.temperature(m), l.temperature_valid(m)), "{v} {q:?}");
                assert!(same(l.mass_flow(m), l.mass_flow_valid(m)), "{v} {q:?}");
                // The sensor boundary's form (integer compares on the
                // spans made beforehand, the refused reading out of line).
                let [pressure, temperature] = l.reading_spans();
                assert!(same(l.pressure(m), within_span(m, pressure)), "{v} {q:?}");
                assert!(
                    same(l.temperature(m), within_span(m, temperature)),
                    "{v} {q:?}"
                );
            }
        }
    }

    #[test]
    fn one_ulp_above_one_is_not_an_efficiency_above_one() {
        let one_up = f32::from_bits(1.0_f32.to_bits() + 1);
        assert_eq!(efficiency_grade(one_up), Quality::Good);
        assert_eq!(efficiency_grade(1.0_f32), Quality::Good);
        assert_eq!(efficiency_grade(1.01_f32), Quality::Uncertain);
        assert_eq!(efficiency_grade(1.3_f32), Quality::Bad);
        assert_eq!(efficiency_grade(0.0_f32), Quality::Bad);
        assert_eq!(efficiency_grade(f32::NAN), Quality::Bad);
        assert_eq!(efficiency_grade(1.0 + 1e-14_f64), Quality::Good);
        assert_eq!(efficiency_grade(1.0 + 1e-12_f64), Quality::Uncertain);
    }
}
