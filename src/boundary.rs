//! The sensor boundary: strips the units of a measured value and marks a
//! physically impossible one bad, so the equations behind it may assume
//! finite, positive inputs whenever the quality is not bad. Used by the
//! train's scan ([`crate::scan`]) and the flow elements ([`crate::flow`]).

use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::units::{Kelvin, PressureAbs};

/// Highest absolute pressure accepted at the sensor boundary, Pa (1000 MPa;
/// above any compressor or pump discharge).
pub const MAX_PRESSURE_PA: f64 = 1.0e9;
/// Highest temperature accepted at the sensor boundary, K.
pub const MAX_TEMPERATURE_K: f64 = 2000.0;
/// Highest mass flow accepted at the sensor boundary, kg/s.
pub const MAX_MASS_FLOW_KG_S: f64 = 1.0e5;

#[inline]
fn bounded<T: Real>(m: Measured<T>, max: f64) -> Measured<T> {
    if T::is_finite(m.value) && m.value > T::ZERO && m.value <= T::of(max) {
        Measured::derived(m.value, m.quality)
    } else {
        Measured::bad()
    }
}

/// Pressure in Pa; bad unless finite and in (0, [`MAX_PRESSURE_PA`]].
#[inline]
pub fn pressure_pa<T: Real>(m: Measured<PressureAbs<T>>) -> Measured<T> {
    bounded(m.map(PressureAbs::pa), MAX_PRESSURE_PA)
}

/// Temperature in K; bad unless finite and in (0, [`MAX_TEMPERATURE_K`]].
#[inline]
pub fn temperature_k<T: Real>(m: Measured<Kelvin<T>>) -> Measured<T> {
    bounded(m.map(Kelvin::kelvin), MAX_TEMPERATURE_K)
}

/// Mass flow in kg/s; bad unless finite and in [0, [`MAX_MASS_FLOW_KG_S`]]
/// (zero flow is a valid reading).
#[inline]
pub fn mass_flow_kg_s<T: Real>(m: Measured<T>) -> Measured<T> {
    if T::is_finite(m.value) && m.value >= T::ZERO && m.value <= T::of(MAX_MASS_FLOW_KG_S) {
        Measured::derived(m.value, m.quality)
    } else {
        Measured::bad()
    }
}

/// Compressibility factor; `None` (use the configured one) unless finite,
/// in (0, 2] and not bad.
#[inline]
pub fn compressibility<T: Real>(m: Option<Measured<T>>) -> Option<(T, Quality)> {
    match m {
        Some(z)
            if z.quality.is_usable()
                && T::is_finite(z.value)
                && z.value > T::ZERO
                && z.value <= T::of(2.0) =>
        {
            Some((z.value, z.quality))
        }
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boundary_rejects_impossible_values() {
        let p = |v: f32| pressure_pa(Measured::good(PressureAbs::from_pa(v)));
        assert_eq!(p(1e5).quality, Quality::Good);
        for v in [0.0, -1.0, f32::NAN, f32::INFINITY, f32::NEG_INFINITY, 2e9] {
            let m = p(v);
            assert_eq!((m.value, m.quality), (0.0, Quality::Bad), "{v}");
        }
        let t = |v: f32| temperature_k(Measured::good(Kelvin::new(v)));
        assert_eq!(t(300.0).quality, Quality::Good);
        assert_eq!(t(0.0).quality, Quality::Bad);
        assert_eq!(t(2500.0).quality, Quality::Bad);
        assert_eq!(
            mass_flow_kg_s(Measured::good(0.0_f32)).quality,
            Quality::Good
        );
        assert_eq!(
            mass_flow_kg_s(Measured::good(-0.1_f32)).quality,
            Quality::Bad
        );
        assert!(compressibility(Some(Measured::good(0.9_f32))).is_some());
        assert!(compressibility(Some(Measured::new(0.9_f32, Quality::Bad))).is_none());
        assert!(compressibility(Some(Measured::good(f32::NAN))).is_none());
    }
}
