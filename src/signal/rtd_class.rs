//! Tolerance classes of industrial platinum resistance thermometers.
//!
//! Source: IEC 60751:2008, "Industrial platinum resistance thermometers and
//! platinum temperature sensors", tolerance classes (values as reprinted in
//! sensor makers' data sheets): AA ±(0.10 + 0.0017·|t|), A ±(0.15 +
//! 0.002·|t|), B ±(0.30 + 0.005·|t|), C ±(0.60 + 0.01·|t|) °C, with `t` the
//! temperature in °C. The class validity ranges below are from memory for
//! wire-wound elements (AA −50…250 °C, A −100…450 °C, B −196…600 °C,
//! C −196…600 °C); check the element's data sheet.

use crate::real::Real;

/// IEC 60751 tolerance class.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RtdClass {
    /// Class AA (formerly 1/3 DIN B).
    AA,
    /// Class A.
    A,
    /// Class B.
    B,
    /// Class C.
    C,
}

impl RtdClass {
    /// (constant °C, slope per °C, lowest °C, highest °C) of the class.
    fn coefficients(self) -> (f64, f64, f64, f64) {
        match self {
            RtdClass::AA => (0.10, 0.0017, -50.0, 250.0),
            RtdClass::A => (0.15, 0.002, -100.0, 450.0),
            RtdClass::B => (0.30, 0.005, -196.0, 600.0),
            RtdClass::C => (0.60, 0.01, -196.0, 600.0),
        }
    }

    /// Tolerance (half-width, K = °C difference) at `celsius`.
    pub fn tolerance<T: Real>(self, celsius: T) -> T {
        let (a, b, _, _) = self.coefficients();
        T::of(a) + T::of(b) * T::abs(celsius)
    }

    /// `true` if `celsius` lies in the class's validity range (from memory,
    /// wire-wound elements).
    pub fn in_validity_range<T: Real>(self, celsius: T) -> bool {
        let (_, _, lo, hi) = self.coefficients();
        celsius >= T::of(lo) && celsius <= T::of(hi)
    }
}
