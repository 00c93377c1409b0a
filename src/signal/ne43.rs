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
    if ma >= T::of(VALID_LOW_MA) && ma <= T::of(VALID_HIGH_MA) {
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
