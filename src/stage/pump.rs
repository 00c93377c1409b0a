//! A pump stage for a liquid or dense phase.
//!
//! Source: steady-flow work of an incompressible fluid, w = v·ΔP
//! (Çengel & Boles ch. 7, "reversible steady-flow work"; the same book's
//! comparison of pump and compressor work for the same pressure rise), and
//! shaft work = v·ΔP / η with a configured pump efficiency.
//!
//! The density is the gas model's at the suction state when the model gives
//! one for a dense phase ([`GasModel::dense_density`], Peng–Robinson), with
//! its validity; otherwise the configured density.
//!
//! For the comparison the user sees live, the result also carries the
//! isentropic work an ideal-gas compressor (Z = 1) would need for the same
//! pressure ratio from the pump's suction temperature, with the train's gas
//! constant and ideal-gas heat-capacity ratio.

use crate::compression::isentropic_head;
use crate::gas::GasModel;
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// Results of one pump stage.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PumpResult<T> {
    /// Discharge over suction pressure, -.
    pub pressure_ratio: Measured<T>,
    /// Suction density used, kg/m³ (from the gas model, or configured).
    pub density: Measured<T>,
    /// Pressure rise, Pa.
    pub pressure_rise: Measured<T>,
    /// Reversible work v·ΔP, J/kg.
    pub reversible_work: Measured<T>,
    /// Shaft work v·ΔP/η, J/kg.
    pub shaft_work: Measured<T>,
    /// Mass flow used, kg/s.
    pub mass_flow: Measured<T>,
    /// Shaft power, W.
    pub power: Measured<T>,
    /// Isentropic work an ideal-gas compressor would need for the same
    /// pressure ratio from the same suction temperature, J/kg.
    pub gas_compression_equivalent: Measured<T>,
    /// Pump shaft work over that gas compression work, -.
    pub work_ratio_to_gas: Measured<T>,
}

impl<T: Real> PumpResult<T> {
    /// All results bad (used before the first scan).
    pub fn bad() -> Self {
        let b = Measured::bad();
        PumpResult {
            pressure_ratio: b,
            density: b,
            pressure_rise: b,
            reversible_work: b,
            shaft_work: b,
            mass_flow: b,
            power: b,
            gas_compression_equivalent: b,
            work_ratio_to_gas: b,
        }
    }
}

/// Evaluates a pump stage. `density` (kg/m3, used when the gas model gives
/// no dense-phase density) and `efficiency` were validated at construction
/// (finite, positive, efficiency <= 1); pressures and temperature passed the
/// sensor boundary.
pub fn evaluate_pump<T: Real, G: GasModel<T>>(
    gas: &G,
    density: T,
    efficiency: T,
    p1: Measured<T>,
    p2: Measured<T>,
    t1: Measured<T>,
    mass_flow: Measured<T>,
) -> PumpResult<T> {
    let mut out = PumpResult::bad();
    let q = p1.quality.worst(p2.quality);
    if q == Quality::Bad {
        return out;
    }
    let dp = p2.value - p1.value;
    let ratio = p2.value / p1.value;
    out.pressure_ratio = Measured::derived(ratio, q);
    out.pressure_rise = Measured::derived(dp, q);
    if !(dp > T::ZERO) {
        return out;
    }
    let (density, q) = match gas.dense_density(p1.value, t1.value) {
        Some((rho, validity)) => (rho, q.worst(t1.quality).worst(validity.quality)),
        None => (density, q),
    };
    out.density = Measured::derived(density, q);
    if q == Quality::Bad {
        return out;
    }
    let w_rev = dp / density;
    let w = w_rev / efficiency;
    out.reversible_work = Measured::derived(w_rev, q);
    out.shaft_work = Measured::derived(w, q);
    out.mass_flow = mass_flow;
    if mass_flow.quality.is_usable() {
        out.power = Measured::derived(mass_flow.value * w, q.worst(mass_flow.quality));
    }
    let q_gas = q.worst(t1.quality);
    if q_gas != Quality::Bad {
        let props = gas.path(p1.value, t1.value, p2.value, t1.value, None);
        let h = isentropic_head(T::ONE, props.gas_constant, t1.value, ratio, props.k);
        out.gas_compression_equivalent = Measured::derived(h, q_gas);
        out.work_ratio_to_gas = Measured::derived(w / h, q_gas);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::gas::{IdealGas, CARBON_DIOXIDE};

    #[test]
    fn dense_co2_pump_work_is_small_next_to_gas_compression() {
        // Dense CO2 at about 800 kg/m3 (order of magnitude, common practice)
        // pumped 80 -> 150 bar: v·dP = 7e6/800 = 8750 J/kg.
        let gas = IdealGas::<f64>::from_spec(&CARBON_DIOXIDE, false, 1.0).unwrap();
        let g = Measured::good;
        let r = evaluate_pump(&gas, 800.0, 0.75, g(80e5), g(150e5), g(308.0), g(10.0));
        assert!((r.reversible_work.value - 8750.0).abs() < 1e-6);
        assert!((r.shaft_work.value - 8750.0 / 0.75).abs() < 1e-6);
        assert!((r.power.value - 10.0 * 8750.0 / 0.75).abs() < 1e-3);
        assert!(r.work_ratio_to_gas.value < 0.5);
        let r = evaluate_pump(&gas, 800.0, 0.75, g(80e5), g(70e5), g(308.0), g(10.0));
        assert_eq!(r.shaft_work.quality, Quality::Bad);
    }
}
