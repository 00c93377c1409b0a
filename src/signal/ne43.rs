//! NAMUR NE 43 diagnostics of a 4–20 mA current signal.
//!
//! Source: NAMUR recommendation NE 43, "Standardization of the signal level
//! for the failure information of digital transmitters" (thresholds from
//! memory, matching the values widely reprinted by transmitter makers):
//! measurement information 3.8 mA to 20.5 mA; a failure signal at or below
//! 3.6 mA or at or above 21.0 mA. The bands in between (3.6–3.8 mA and
//! 20.5–21.0 mA) are neither: this kernel treats them as a saturated,
//! uncertain reading.

use super::FaultCode;
use crate::real::Real;

/// Lower end of the measuring range, mA (4 mA = 0 % of span).
pub const RANGE_LOW_MA: f64 = 4.0;
/// Upper end of the measuring range, mA (20 mA = 100 % of span).
pub const RANGE_HIGH_MA: f64 = 20.0;
/// Lowest current still carrying measurement information, mA (NE 43).
pub const VALID_LOW_MA: f64 = 3.8;
/// Highest current still carrying measurement information, mA (NE 43).
pub const VALID_HIGH_MA: f64 = 20.5;
/// At or below this current the signal is a failure signal, mA (NE 43).
pub const FAILURE_LOW_MA: f64 = 3.6;
/// At or above this current the signal is a failure signal, mA (NE 43).
pub const FAILURE_HIGH_MA: f64 = 21.0;

/// Classifies a loop current in mA. NaN or infinite gives
/// [`FaultCode::NotFinite`].
///
/// The measuring band is tested first (two comparisons for a healthy loop,
/// and a current inside it is finite), then finiteness, then the failure and
/// saturation bands.
#[inline]
pub fn classify<T: Real>(ma: T) -> FaultCode {
    // (`ma >= 3.8 && ma <= 20.5`, by the bit patterns.)
    if T::within_positive(ma, T::of(VALID_LOW_MA), T::of(VALID_HIGH_MA)) {
        FaultCode::None
    } else if !T::is_finite(ma) {
        FaultCode::NotFinite
    } else if ma <= T::of(FAILURE_LOW_MA) {
        FaultCode::Ne43FailureLow
    } else if ma >= T::of(FAILURE_HIGH_MA) {
        FaultCode::Ne43FailureHigh
    } else if ma < T::of(VALID_LOW_MA) {
        FaultCode::Ne43SaturatedLow
    } else {
        FaultCode::Ne43SaturatedHigh
    }
}

/// Fraction of span of a loop current: 4 mA gives 0, 20 mA gives 1.
#[inline]
pub fn fraction<T: Real>(ma: T) -> T {
    (ma - T::of(RANGE_LOW_MA)) / T::of(RANGE_HIGH_MA - RANGE_LOW_MA)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The measuring-band test by bit patterns is the float test
    /// `3.8 <= I <= 20.5` (consistency check): every f32 near and across the
    /// band edges, seeded bit patterns of every exponent, sign and NaN
    /// payload, in f32 and f64.
    #[test]
    fn band_test_by_bits_is_the_float_test() {
        fn check<T: Real + PartialOrd + core::fmt::Debug>(ma: T) {
            let by_float = ma >= T::of(VALID_LOW_MA) && ma <= T::of(VALID_HIGH_MA);
            let by_bits = T::within_positive(ma, T::of(VALID_LOW_MA), T::of(VALID_HIGH_MA));
            assert_eq!(by_bits, by_float, "{ma:?}");
        }
        for edge in [VALID_LOW_MA as f32, VALID_HIGH_MA as f32] {
            let b = edge.to_bits();
            for d in 0..200_u32 {
                for x in [f32::from_bits(b + d), f32::from_bits(b - d)] {
                    check(x);
                    check(-x);
                    check(f64::from(x));
                }
            }
        }
        for edge in [VALID_LOW_MA, VALID_HIGH_MA] {
            let b = edge.to_bits();
            for d in 0..200_u64 {
                for x in [f64::from_bits(b + d), f64::from_bits(b - d)] {
                    check(x);
                    check(-x);
                }
            }
        }
        let mut state = 9_u64;
        for _ in 0..200_000 {
            state = crate::lcg64_step(state);
            check(f32::from_bits((state >> 32) as u32));
            check(f64::from_bits(state));
        }
        for x in [
            0.0_f32,
            -0.0,
            f32::INFINITY,
            f32::NEG_INFINITY,
            f32::NAN,
            -f32::NAN,
        ] {
            check(x);
            check(f64::from(x));
        }
    }
}
