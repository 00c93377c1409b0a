//! One scan of measured values, as the train update takes it.
//!
//! Values arrive as unit newtypes ([`PressureAbs`], [`Kelvin`]) with a
//! [`Quality`](crate::Quality) from the signal front end (or [`Measured::good`] when the
//! caller has none). The sensor-boundary checks applied to them live in
//! [`crate::boundary`] (re-exported here).

use crate::quality::Measured;
use crate::real::Real;
use crate::units::{Kelvin, PressureAbs};

pub use crate::boundary::{
    compressibility, mass_flow_kg_s, pressure_pa, temperature_k, MAX_MASS_FLOW_KG_S,
    MAX_PRESSURE_PA, MAX_TEMPERATURE_K, MIN_PRESSURE_PA, MIN_TEMPERATURE_K,
};

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
