//! The sensor boundary: strips the units of a measured value and marks a
//! physically impossible one bad, so the equations behind it may assume
//! finite, positive inputs whenever the quality is not bad. Used by the
//! train's scan ([`crate::scan`]) and the flow elements ([`crate::flow`]).

use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::units::{Kelvin, PressureAbs};

use crate::plausibility::{Limits, COMPRESSIBILITY_RANGE};
pub use crate::plausibility::{
    MAX_MASS_FLOW_KG_S, MAX_PRESSURE_PA, MAX_TEMPERATURE_K, MIN_PRESSURE_PA, MIN_TEMPERATURE_K,
};

/// Pressure in Pa; bad unless finite and in [[`MIN_PRESSURE_PA`],
/// [`MAX_PRESSURE_PA`]] (the default [`Limits`]; the train uses its own).
#[inline]
pub fn pressure_pa<T: Real>(m: Measured<PressureAbs<T>>) -> Measured<T> {
    Limits::default().pressure(m.map(PressureAbs::pa))
}

/// Temperature in K; bad unless finite and in [[`MIN_TEMPERATURE_K`],
/// [`MAX_TEMPERATURE_K`]] (the default [`Limits`]).
#[inline]
pub fn temperature_k<T: Real>(m: Measured<Kelvin<T>>) -> Measured<T> {
    Limits::default().temperature(m.map(Kelvin::kelvin))
}

/// Mass flow in kg/s; bad unless finite and in [0, [`MAX_MASS_FLOW_KG_S`]]
/// (zero flow is a valid reading).
#[inline]
pub fn mass_flow_kg_s<T: Real>(m: Measured<T>) -> Measured<T> {
    Limits::default().mass_flow(m)
}

/// Compressibility factor; `None` unless finite, within
/// [`COMPRESSIBILITY_RANGE`] and usable.
#[inline]
pub fn compressibility<T: Real>(m: Option<Measured<T>>) -> Option<(T, Quality)> {
    match m {
        Some(z)
            if z.quality.is_usable()
                && T::is_finite(z.value)
                && z.value >= T::of(COMPRESSIBILITY_RANGE.0)
                && z.value <= T::of(COMPRESSIBILITY_RANGE.1) =>
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
        assert_eq!(t(1500.0).quality, Quality::Bad);
        assert_eq!(t(25.0).quality, Quality::Bad); // degC taken as K
        assert_eq!(p(1e-30).quality, Quality::Bad); // underflow
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
