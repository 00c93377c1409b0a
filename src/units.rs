//! Unit newtypes for the API boundary: absolute vs gauge pressure and kelvin
//! vs degrees Celsius cannot be mixed up silently.
//!
//! Inside the kernel everything is SI (Pa absolute, K, kg/s, J/kg, W). The
//! newtypes have no arithmetic; they are converted explicitly.
//!
//! A gauge pressure is not an absolute pressure:
//!
//! ```compile_fail
//! use polytrope::units::{PressureAbs, PressureGauge};
//! let g = PressureGauge::from_pa(5.0e5_f64);
//! let a: PressureAbs<f64> = g; // error: expected `PressureAbs`, found `PressureGauge`
//! ```
//!
//! A Celsius temperature is not a kelvin temperature:
//!
//! ```compile_fail
//! use polytrope::units::{Celsius, Kelvin};
//! fn suction(t: Kelvin<f32>) -> f32 { t.kelvin() }
//! suction(Celsius::new(25.0_f32)); // error: expected `Kelvin`, found `Celsius`
//! ```
//!
//! The explicit conversions:
//!
//! ```
//! use polytrope::units::{Celsius, Kelvin, PressureAbs, PressureGauge};
//! let atm = PressureAbs::from_pa(101_325.0_f64);
//! let p = PressureGauge::from_pa(400_000.0).to_absolute(atm);
//! assert_eq!(p.pa(), 501_325.0);
//! let t = Kelvin::from(Celsius::new(25.0_f64));
//! assert!((t.kelvin() - 298.15).abs() < 1e-12);
//! ```

use crate::real::Real;

/// Standard atmosphere, Pa (ISO 2533; exact by definition).
pub const STANDARD_ATMOSPHERE_PA: f64 = 101_325.0;
/// 0 degC in kelvin (exact by definition of the Celsius scale).
pub const ZERO_CELSIUS_K: f64 = 273.15;

/// Absolute pressure, Pa.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PressureAbs<T>(T);

/// Gauge pressure (above local atmosphere), Pa.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PressureGauge<T>(T);

/// Thermodynamic temperature, K.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Kelvin<T>(T);

/// Temperature in degrees Celsius.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Celsius<T>(T);

impl<T: Real> PressureAbs<T> {
    /// From pascal absolute.
    #[inline]
    pub fn from_pa(pa: T) -> Self {
        PressureAbs(pa)
    }
    /// From kPa absolute.
    #[inline]
    pub fn from_kpa(kpa: T) -> Self {
        PressureAbs(kpa * T::of(1.0e3))
    }
    /// From bar absolute.
    #[inline]
    pub fn from_bar(bar: T) -> Self {
        PressureAbs(bar * T::of(1.0e5))
    }
    /// Pascal absolute.
    #[inline]
    pub fn pa(self) -> T {
        self.0
    }
}

impl<T: Real> PressureGauge<T> {
    /// From pascal gauge.
    #[inline]
    pub fn from_pa(pa: T) -> Self {
        PressureGauge(pa)
    }
    /// From bar gauge.
    #[inline]
    pub fn from_bar(bar: T) -> Self {
        PressureGauge(bar * T::of(1.0e5))
    }
    /// Pascal gauge.
    #[inline]
    pub fn pa(self) -> T {
        self.0
    }
    /// Absolute pressure, given the local atmospheric pressure.
    #[inline]
    pub fn to_absolute(self, atmosphere: PressureAbs<T>) -> PressureAbs<T> {
        PressureAbs(self.0 + atmosphere.0)
    }
}

impl<T: Real> Kelvin<T> {
    /// From kelvin.
    #[inline]
    pub fn new(k: T) -> Self {
        Kelvin(k)
    }
    /// Kelvin.
    #[inline]
    pub fn kelvin(self) -> T {
        self.0
    }
    /// Degrees Celsius.
    #[inline]
    pub fn celsius(self) -> T {
        self.0 - T::of(ZERO_CELSIUS_K)
    }
}

impl<T: Real> Celsius<T> {
    /// From degrees Celsius.
    #[inline]
    pub fn new(c: T) -> Self {
        Celsius(c)
    }
    /// Degrees Celsius.
    #[inline]
    pub fn degrees(self) -> T {
        self.0
    }
}

impl<T: Real> From<Celsius<T>> for Kelvin<T> {
    #[inline]
    fn from(c: Celsius<T>) -> Self {
        Kelvin(c.0 + T::of(ZERO_CELSIUS_K))
    }
}

impl<T: Real> From<Kelvin<T>> for Celsius<T> {
    #[inline]
    fn from(k: Kelvin<T>) -> Self {
        Celsius(k.0 - T::of(ZERO_CELSIUS_K))
    }
}
