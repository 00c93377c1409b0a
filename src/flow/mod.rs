//! Mass flow from differential pressure.
//!
//! [`orifice`]: ISO 5167-2 orifice plates (Reader–Harris/Gallagher discharge
//! coefficient, [`expansibility`], validity limits, Reynolds iteration).
//! [`flow_element`]: a generic element with a calibration coefficient
//! (nozzles, compressor-eye taps). [`low_flow`]: low-flow cut-off and zero
//! check. Every result carries the worst quality of its inputs and is
//! uncertain outside the validity limits of its standard.
//!
//! **Caution.** Not a custody-transfer or certified flow computer; follow
//! the standard's installation requirements and the meter maker's data.

pub mod expansibility;
pub mod flow_element;
pub mod low_flow;
pub mod orifice;

pub use flow_element::FlowElement;
pub use low_flow::{LowFlow, LowFlowConfig};
pub use orifice::{Orifice, OrificeConfig, OrificeFlow, TapType};

use crate::real::Real;

/// Gas density from the ideal-gas law with a compressibility factor,
/// ρ = p / (Z·R·T), kg/m3 (`gas_constant` specific, J/(kg K)).
#[inline]
pub fn gas_density<T: Real>(p_pa: T, t_k: T, z: T, gas_constant: T) -> T {
    p_pa / (z * gas_constant * t_k)
}
