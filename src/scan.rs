//! One scan of measured values, as the train update takes it, and the
//! sensor-boundary checks applied to it.
//!
//! Values arrive as unit newtypes ([`PressureAbs`], [`Kelvin`]) with a
//! [`Quality`] from the signal front end (or [`Measured::good`] when the
//! caller has none). [`pressure_pa`] and [`temperature_k`] strip the units
//! and mark physically impossible values bad, so the equations behind them
//! may assume finite, positive inputs whenever the quality is not bad.

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

/// Measurements around one stage (compressor or pump) and the cooler after it.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StageScan<T> {
    /// Suction (inlet) pressure.
    pub suction_pressure: Measured<PressureAbs<T>>,
    /// Suction (inlet) temperature.
    pub suction_temperature: Measured<Kelvin<T>>,
    /// Discharge (outlet) pressure.
    pub discharge_pressure: Measured<PressureAbs<T>>,
    /// Discharge (outlet) temperature.
    pub discharge_temperature: Measured<Kelvin<T>>,
    /// Mass flow through the stage, kg/s, if measured. Without it the stage
    /// uses the nearest measured flow upstream (side streams not modelled).
    pub mass_flow: Option<Measured<T>>,
    /// Mean compressibility factor for this scan (from an analyser or a
    /// real-gas calculation); without it the gas model's configured Z.
    pub compressibility: Option<Measured<T>>,
    /// The cooler after this stage, if it has one and it is instrumented.
    pub cooler: Option<CoolerScan<T>>,
}

/// Measurements around one cooler. The gas inlet is the stage discharge.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoolerScan<T> {
    /// Gas outlet temperature.
    pub gas_outlet_temperature: Measured<Kelvin<T>>,
    /// Gas outlet pressure; without it, the next stage's suction pressure.
    pub gas_outlet_pressure: Option<Measured<PressureAbs<T>>>,
    /// Coolant inlet temperature.
    pub coolant_inlet_temperature: Measured<Kelvin<T>>,
    /// Coolant outlet temperature, if measured.
    pub coolant_outlet_temperature: Option<Measured<Kelvin<T>>>,
    /// Coolant mass flow, kg/s, if measured.
    pub coolant_mass_flow: Option<Measured<T>>,
}

/// One scan of a train of `N` stages.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Scan<T, const N: usize> {
    /// Per stage, in flow order.
    pub stages: [StageScan<T>; N],
}

impl<T: Real> StageScan<T> {
    /// A stage scan from good values in SI units (Pa absolute, K), without
    /// flow, compressibility or cooler; a convenience for tests and tools.
    pub fn from_si(p1: T, t1: T, p2: T, t2: T) -> Self {
        StageScan {
            suction_pressure: Measured::good(PressureAbs::from_pa(p1)),
            suction_temperature: Measured::good(Kelvin::new(t1)),
            discharge_pressure: Measured::good(PressureAbs::from_pa(p2)),
            discharge_temperature: Measured::good(Kelvin::new(t2)),
            mass_flow: None,
            compressibility: None,
            cooler: None,
        }
    }
}

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
