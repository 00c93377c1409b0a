//! The one numeric seam: [`Real`], implemented for `f32` (the device build)
//! and `f64` (the reference build).
//!
//! Every transcendental function forwards to a `libm` free function, so the
//! host runs exactly the maths the device runs (calling `x.powf(y)` on a host
//! would silently use the platform's `std` maths instead). With the
//! `approx-math` feature the `f32` logarithm, exponential and square root go to
//! `micromath` approximations; their error is measured separately (see
//! [`crate::tolerance`]).
//!
//! Call the functions as associated functions (`T::ln(x)`), never as methods:
//! for a concrete `f32` on a `std` host a method call would resolve to the
//! inherent `std` method.

use core::fmt::{Debug, Display};
use core::ops::{Add, AddAssign, Div, Mul, Neg, Sub};

/// A floating-point scalar the kernel can compute with.
pub trait Real:
    Copy
    + Debug
    + Display
    + Default
    + PartialOrd
    + Add<Output = Self>
    + AddAssign
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + 'static
{
    /// 0
    const ZERO: Self;
    /// 1
    const ONE: Self;
    /// Machine epsilon of the type.
    const EPSILON: Self;

    /// Converts an `f64` constant (configuration data, physical constants).
    fn of(x: f64) -> Self;
    /// Widens to `f64` (for reporting and tests).
    fn to_f64(self) -> f64;
    /// Natural logarithm.
    fn ln(x: Self) -> Self;
    /// Exponential.
    fn exp(x: Self) -> Self;
    /// Square root.
    fn sqrt(x: Self) -> Self;
    /// `x` raised to `y`; prefer `exp(y * ln(x))` with a reused logarithm.
    fn powf(x: Self, y: Self) -> Self;
    /// Absolute value.
    fn abs(x: Self) -> Self;
    /// `true` unless NaN or infinite.
    fn is_finite(x: Self) -> bool;

    /// The smaller of two values (NaN-free inputs assumed).
    #[inline]
    fn min(a: Self, b: Self) -> Self {
        if b < a {
            b
        } else {
            a
        }
    }
    /// The larger of two values (NaN-free inputs assumed).
    #[inline]
    fn max(a: Self, b: Self) -> Self {
        if b > a {
            b
        } else {
            a
        }
    }
}

macro_rules! impl_real {
    ($t:ty, $ln:path, $exp:path, $sqrt:path, $pow:path, $abs:path) => {
        impl Real for $t {
            const ZERO: Self = 0.0;
            const ONE: Self = 1.0;
            const EPSILON: Self = <$t>::EPSILON;
            #[inline]
            fn of(x: f64) -> Self {
                x as $t
            }
            #[inline]
            fn to_f64(self) -> f64 {
                self as f64
            }
            #[inline]
            fn ln(x: Self) -> Self {
                $ln(x)
            }
            #[inline]
            fn exp(x: Self) -> Self {
                $exp(x)
            }
            #[inline]
            fn sqrt(x: Self) -> Self {
                $sqrt(x)
            }
            #[inline]
            fn powf(x: Self, y: Self) -> Self {
                $pow(x, y)
            }
            #[inline]
            fn abs(x: Self) -> Self {
                $abs(x)
            }
            #[inline]
            fn is_finite(x: Self) -> bool {
                <$t>::is_finite(x)
            }
        }
    };
}

impl_real!(f64, libm::log, libm::exp, libm::sqrt, libm::pow, libm::fabs);

#[cfg(not(feature = "approx-math"))]
impl_real!(
    f32,
    libm::logf,
    libm::expf,
    libm::sqrtf,
    libm::powf,
    libm::fabsf
);

#[cfg(feature = "approx-math")]
mod approx {
    use micromath::F32Ext;
    #[inline]
    pub fn ln(x: f32) -> f32 {
        F32Ext::ln(x)
    }
    #[inline]
    pub fn exp(x: f32) -> f32 {
        F32Ext::exp(x)
    }
    #[inline]
    pub fn sqrt(x: f32) -> f32 {
        F32Ext::sqrt(x)
    }
    #[inline]
    pub fn pow(x: f32, y: f32) -> f32 {
        F32Ext::powf(x, y)
    }
}

#[cfg(feature = "approx-math")]
impl_real!(
    f32,
    approx::ln,
    approx::exp,
    approx::sqrt,
    approx::pow,
    libm::fabsf
);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn f32_and_f64_agree_on_basic_functions() {
        for &x in &[0.5_f64, 1.0, 2.0, 10.0, 300.0] {
            let a = <f32 as Real>::ln(x as f32) as f64;
            let b = <f64 as Real>::ln(x);
            assert!((a - b).abs() <= 1e-6 * (1.0 + b.abs()), "ln({x})");
            let a = <f32 as Real>::exp((x / 100.0) as f32) as f64;
            let b = <f64 as Real>::exp(x / 100.0);
            assert!((a - b).abs() <= 2e-3 * b, "exp({x})");
        }
        assert!(!<f32 as Real>::is_finite(f32::NAN));
        assert_eq!(<f64 as Real>::min(1.0, 2.0), 1.0);
        assert_eq!(<f64 as Real>::max(1.0, 2.0), 2.0);
    }
}
