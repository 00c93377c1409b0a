//! Surge protection: a surge line in invariant map coordinates, the
//! live surge margin, the clearance above a control line, rate of approach and
//! time to surge, and surge-cycle detection with a trip request.
//!
//! **Caution.** Anti-surge control protects machinery and people. This crate
//! is not a certified safety function (IEC 61508 / IEC 61511). Surge data
//! come from the machine maker and from commissioning (surge) tests, not from
//! this crate; follow local codes and licensed engineering practice. A trip
//! request from this module is advisory input to a separately engineered
//! protection system.
//!
//! # Surge margin
//!
//! In the map coordinates of [`coordinates`] (this crate's names) — the flow
//! number `X = Δp / ps` (flow element differential pressure over suction
//! pressure) and the head number `Y = (r^σ − 1)/σ`, `σ = (n−1)/n` — the
//! surge margin is
//!
//! ```text
//! m = sign(X)·√|X| / √X_s(Y) − 1
//! ```
//!
//! the fractional excess of flow over the surge flow at the same head
//! number: 0 on the surge line, 0.10 at 10 % more flow (see [`margin`]).
//! σ is the configured one, or, with
//! [`SurgeMonitor::with_measured_exponent`], the one the measured suction
//! and discharge temperatures give (filtered, bounded, with a fallback to the
//! configured σ; see [`exponent`]); a monitor that never needs that is a
//! [`ConfiguredExponentMonitor`], which links none of its code. The
//! control line sits at a per-speed-line control margin (common practice:
//! about 10 % in flow); [`surge_line`] explains how line and margin vary
//! with speed. The clearance is the margin above the control line.
//!
//! ```
//! use polytrope::surge::{MapConditions, MonitorConfig, SurgeLine, SurgeLineConfig,
//!     SurgeMonitor, SurgePoint, SurgeScan};
//! use polytrope::units::{Kelvin, PressureAbs};
//! use polytrope::Measured;
//!
//! // An invented two-speed map, for illustration only.
//! let pt = |rpm: f64, q: f64, r: f64| SurgePoint {
//!     speed_rpm: rpm, suction_volume_flow: q, pressure_ratio: r, control_margin: 0.10 };
//! let points = [pt(8000.0, 1.6, 1.9), pt(10000.0, 2.0, 2.4)];
//! let line = SurgeLine::<f64, 4>::new(&SurgeLineConfig {
//!     points: &points,
//!     map: MapConditions {
//!         suction_pressure: PressureAbs::from_bar(1.0),
//!         suction_temperature: Kelvin::new(300.0),
//!         molar_mass: 28.96,
//!         compressibility: 1.0,
//!     },
//!     polytropic_exponent: 1.5,
//!     flow_coefficient: 0.05,
//! })?;
//! let mut monitor = SurgeMonitor::<f64, 4>::new(line, MonitorConfig {
//!     scan_period: 0.02, time_to_surge_horizon: 60.0, rate_filter_time: 0.1 })?;
//! let state = monitor.update(&SurgeScan::pressures_only(
//!     Measured::good(PressureAbs::from_bar(1.0)),
//!     Measured::good(PressureAbs::from_bar(2.2)),
//!     Measured::good(2500.0),
//! ), 0.0, 0.02);
//! assert!(state.margin.quality.is_good());
//! assert!(state.margin.value > 0.0);
//! # Ok::<(), polytrope::ConfigError>(())
//! ```

pub mod coordinates;
#[cfg(any(test, feature = "demo"))]
pub mod demo_map;
pub mod detection;
pub mod exponent;
pub mod margin;
pub mod surge_line;

pub use detection::{DetectionConfig, DetectionScan, DetectionState, SurgeDetector};
pub use exponent::{ExponentConfig, ExponentFault, ExponentSource, ExponentState};
pub use margin::{
    ConfiguredExponentMonitor, MonitorConfig, SurgeFault, SurgeMonitor, SurgeScan, SurgeState,
};
pub use surge_line::{
    LineLookup, LinePoint, MapConditions, SurgeLine, SurgeLineConfig, SurgePoint,
};

/// Configuration range check shared by the surge and control settings: NaN
/// or infinity ([`crate::Problem::NotFinite`]) or a value outside
/// `[min, max]` ([`crate::Problem::OutOfRange`]) is refused naming `field`
/// (a dotted configuration path, e.g. `"recycle.gain"`).
pub(crate) fn check_setting<T: crate::real::Real>(
    field: &'static str,
    value: T,
    min: f64,
    max: f64,
) -> Result<T, crate::error::ConfigError> {
    crate::error::check_range(field, value, min, max)
}

/// How the surge path compares floats: on their bit patterns (`true`) where
/// a float comparison is a library call (no FPU: Cortex-M0; some 30
/// instructions each), with the FPU's compare (`false`) where there is one
/// (two or three instructions, fewer than the integer forms). The functions
/// that compare take it as a const parameter, so that the tests run both.
pub(crate) const BIT_COMPARES: bool = !crate::real::HARD_FLOAT;

/// `x > 0` for an `x` known finite: the FPU's compare, or
/// [`positive_finite`] on the bits (`BITS`; the same verdict for every
/// finite `x`).
#[inline(always)]
pub(crate) fn above_zero<T: crate::real::Real, const BITS: bool>(x: T) -> bool {
    if BITS {
        positive_finite(x)
    } else {
        x > T::ZERO
    }
}

/// `x <= hi` for `x` from `+0` to `+∞` (not NaN) and a finite `hi > 0`:
/// the FPU's compare, or on the bits (`BITS`; for non-negative floats the
/// order of the bits is the numeric one).
#[inline(always)]
pub(crate) fn at_most<T: crate::real::Real, const BITS: bool>(x: T, hi: T) -> bool {
    if BITS {
        T::within_nonnegative(x, T::ZERO, hi)
    } else {
        x <= hi
    }
}

/// The largest finite value of `T` (`f32` or `f64`; a constant once `T` is
/// known).
#[inline(always)]
pub(crate) fn largest_finite<T: crate::real::Real>() -> T {
    if T::EPSILON > T::of(1.0e-10) {
        T::of(f64::from(f32::MAX))
    } else {
        T::of(f64::MAX)
    }
}

/// The smallest positive (subnormal) value of `T` (`f32` or `f64`).
#[inline(always)]
pub(crate) fn smallest_positive<T: crate::real::Real>() -> T {
    if T::EPSILON > T::of(1.0e-10) {
        T::of(f64::from(f32::from_bits(1)))
    } else {
        T::of(f64::from_bits(1))
    }
}

/// `x > 0 && x` finite, decided on the bit pattern
/// ([`crate::real::Real::within_positive`] from the smallest positive to the
/// largest finite value): one integer comparison, where a float comparison
/// is a library call on a soft-float core (Cortex-M0) and two or three
/// instructions with an FPU. NaN, zeros, negatives and infinities are
/// outside, as in the float comparisons.
#[inline(always)]
pub(crate) fn positive_finite<T: crate::real::Real>(x: T) -> bool {
    T::within_positive(x, smallest_positive(), largest_finite())
}
