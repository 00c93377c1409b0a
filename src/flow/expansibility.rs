//! Expansibility factor of an orifice plate.
//!
//! Source: ISO 5167-2:2003, equation (5) (Reader–Harris 1998):
//! ε = 1 − (0.351 + 0.256·β⁴ + 0.93·β⁸)·[1 − (p2/p1)^(1/κ)],
//! valid for p2/p1 ≥ 0.75 ([`MIN_PRESSURE_RATIO`]).

use crate::real::Real;

/// Lowest p2/p1 for which ISO 5167-2 gives the expansibility equation.
pub const MIN_PRESSURE_RATIO: f64 = 0.75;

/// Expansibility factor for diameter ratio `beta`, downstream-to-upstream
/// tapping pressure ratio `p2_over_p1` in (0, 1] and isentropic exponent
/// `kappa` (> 1). Uses `exp(ln(x)/κ)` for the power.
pub fn orifice_expansibility<T: Real>(beta: T, p2_over_p1: T, kappa: T) -> T {
    let b4 = beta * beta * beta * beta;
    let r = T::exp(T::ln(p2_over_p1) / kappa);
    T::ONE - (T::of(0.351) + T::of(0.256) * b4 + T::of(0.93) * b4 * b4) * (T::ONE - r)
}

/// `true` if `p2_over_p1` is within the equation's range (≥ 0.75, ≤ 1).
pub fn expansibility_valid<T: Real>(p2_over_p1: T) -> bool {
    p2_over_p1 >= T::of(MIN_PRESSURE_RATIO) && p2_over_p1 <= T::ONE
}
