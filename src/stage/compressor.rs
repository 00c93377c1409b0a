//! Live performance of one compressor stage from its measured end states.
//!
//! Sources: enthalpy-based stage work (first law for an adiabatic stage,
//! common practice; ASME PTC 10): actual work = h2 − h1, isentropic head
//! = h(p2, s1) − h1, isentropic efficiency = isentropic head / actual work,
//! with the states from the configured [`GasModel`]; the polytropic head and
//! efficiency by a named method of [`crate::polytropic`] (Schultz by
//! default). For the ideal gas these reduce to the relations of
//! [`crate::compression`] (Çengel & Boles ch. 7; `fluids.compressible`):
//! actual work Z·cp·(T2 − T1), polytropic efficiency ((k−1)/k)/((n−1)/n).
//! The isothermal head is Z1·R·T1·ln(p2/p1) with the suction Z.
//!
//! Cost per call (ideal gas): two logarithms, one exponential, about a dozen
//! divisions; Peng–Robinson: see the README's device figures.

use crate::compression::isothermal_head;
use crate::gas::{GasModel, Validity};
use crate::polytropic::{schultz, PolytropicMethod};
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// What the stage evaluation found about its inputs, besides qualities.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StageCondition {
    /// Inputs consistent with a compression.
    Normal,
    /// A pressure or temperature needed for the result is bad.
    InputBad,
    /// Discharge pressure not above suction pressure: no compression.
    NoCompression,
    /// Discharge temperature not above suction temperature: the work and
    /// efficiencies cannot be computed from the temperature rise.
    NoTemperatureRise,
    /// Discharge temperature below the isentropic one (efficiency above 1):
    /// a temperature or pressure measurement is suspect.
    EfficiencyAboveOne,
    /// The gas model has no valid state for these inputs (no vapour root,
    /// non-finite): see [`CompressorResult::gas_validity`].
    OutsideGasModel,
}

/// Results of one compressor stage; every value carries its quality.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CompressorResult<T> {
    /// Discharge over suction pressure (absolute), -.
    pub pressure_ratio: Measured<T>,
    /// Discharge temperature of an isentropic compression, K.
    pub isentropic_discharge_temperature: Measured<T>,
    /// Measured temperature rise T2 - T1, K.
    pub temperature_rise: Measured<T>,
    /// Isentropic head, J/kg.
    pub isentropic_head: Measured<T>,
    /// Polytropic head along the measured path, J/kg.
    pub polytropic_head: Measured<T>,
    /// Isothermal head (the ideal), J/kg.
    pub isothermal_head: Measured<T>,
    /// Actual specific work, the enthalpy rise h2 − h1 (ideal gas:
    /// Z·cp·(T2 − T1)), J/kg.
    pub actual_work: Measured<T>,
    /// Isentropic efficiency, -.
    pub isentropic_efficiency: Measured<T>,
    /// Polytropic efficiency, -.
    pub polytropic_efficiency: Measured<T>,
    /// Polytropic exponent n inferred from the measured states, -.
    pub polytropic_exponent: Measured<T>,
    /// Mass flow used for the power, kg/s.
    pub mass_flow: Measured<T>,
    /// Gas power, mass flow × actual work, W.
    pub gas_power: Measured<T>,
    /// Actual work minus the isothermal ideal, J/kg.
    pub work_above_isothermal: Measured<T>,
    /// Gas power minus isothermal power, W.
    pub power_above_isothermal: Measured<T>,
    /// Compressibility factor at suction (ideal gas: the mean Z used), -.
    pub compressibility: T,
    /// Isentropic exponent used: the isentropic volume exponent
    /// ns = ln(p2/p1)/ln(v1/v2s) (ideal gas: the mean k), -.
    pub k: T,
    /// Which method produced the polytropic head, efficiency and exponent.
    pub polytropic_method: PolytropicMethod,
    /// Validity of the gas model's states (worst of suction, isentropic and
    /// discharge), with its reason; already folded into every quality above.
    pub gas_validity: Validity,
    /// What the evaluation found.
    pub condition: StageCondition,
}

impl<T: Real> CompressorResult<T> {
    /// All results bad (used before the first scan).
    pub fn bad() -> Self {
        let b = Measured::bad();
        CompressorResult {
            pressure_ratio: b,
            isentropic_discharge_temperature: b,
            temperature_rise: b,
            isentropic_head: b,
            polytropic_head: b,
            isothermal_head: b,
            actual_work: b,
            isentropic_efficiency: b,
            polytropic_efficiency: b,
            polytropic_exponent: b,
            mass_flow: b,
            gas_power: b,
            work_above_isothermal: b,
            power_above_isothermal: b,
            compressibility: T::ONE,
            k: T::ONE,
            polytropic_method: PolytropicMethod::Schultz,
            gas_validity: Validity::INVALID,
            condition: StageCondition::InputBad,
        }
    }
}

/// Validated inputs of one compressor stage, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CompressorInputs<T> {
    /// Suction pressure, Pa absolute.
    pub suction_pressure: Measured<T>,
    /// Suction temperature, K.
    pub suction_temperature: Measured<T>,
    /// Discharge pressure, Pa absolute.
    pub discharge_pressure: Measured<T>,
    /// Discharge temperature, K.
    pub discharge_temperature: Measured<T>,
    /// Mass flow, kg/s (bad if unknown).
    pub mass_flow: Measured<T>,
    /// Supplied mean compressibility and its quality, if any.
    pub compressibility: Option<(T, Quality)>,
}

/// Efficiency quality: good in (0, 1], uncertain in (1, 1.25], else bad.
#[inline]
fn efficiency<T: Real>(eta: T, q: Quality) -> Measured<T> {
    if !(eta > T::ZERO) || eta > T::of(1.25) {
        Measured::bad()
    } else if eta > T::ONE {
        Measured::derived(eta, q.worst(Quality::Uncertain))
    } else {
        Measured::derived(eta, q)
    }
}

/// Evaluates one compressor stage; [`evaluate_compressor_into`] returning
/// the result.
pub fn evaluate_compressor<T: Real, G: GasModel<T>>(
    gas: &G,
    inp: &CompressorInputs<T>,
) -> CompressorResult<T> {
    let mut out = CompressorResult::bad();
    evaluate_compressor_into(gas, inp, &mut out);
    out
}

/// Evaluates one compressor stage into `out` (every field overwritten;
/// no result copy, which matters on small devices).
///
/// Assumes inputs passed the sensor boundary ([`crate::scan`]): a value that
/// is not bad is finite and positive. Never panics; every output is finite.
pub fn evaluate_compressor_into<T: Real, G: GasModel<T>>(
    gas: &G,
    inp: &CompressorInputs<T>,
    out: &mut CompressorResult<T>,
) {
    *out = CompressorResult::bad();
    let (p1, t1, p2, t2) = (
        inp.suction_pressure,
        inp.suction_temperature,
        inp.discharge_pressure,
        inp.discharge_temperature,
    );
    let (z_supplied, q_z) = match inp.compressibility {
        Some((z, q)) => (Some(z), q),
        None => (None, Quality::Good),
    };
    let q_ratio = p1.quality.worst(p2.quality);
    let q_ideal = q_ratio.worst(t1.quality).worst(q_z);
    let q_temps = t1.quality.worst(t2.quality);
    let q_all = q_ideal.worst(t2.quality);
    // The ratio needs only the pressures: report it even when a temperature
    // is bad.
    let ratio = p2.value / p1.value;
    out.pressure_ratio = Measured::derived(ratio, q_ratio);
    if q_ideal == Quality::Bad {
        return;
    }

    out.temperature_rise = Measured::derived(t2.value - t1.value, q_temps);
    if !T::is_finite(ratio) {
        // A subnormal suction pressure passes the sensor boundary but
        // overflows the ratio: nothing downstream of it is usable.
        return;
    }
    if !(ratio > T::ONE) {
        out.condition = StageCondition::NoCompression;
        return;
    }

    let ln_r = T::ln(ratio);
    let t2_usable = t2.quality != Quality::Bad;
    let cs = gas.compression(
        p1.value,
        t1.value,
        p2.value,
        ln_r,
        if t2_usable { Some(t2.value) } else { None },
        z_supplied,
    );
    out.gas_validity = cs.isentropic_validity;
    if cs.isentropic_validity.quality == Quality::Bad {
        out.condition = StageCondition::OutsideGasModel;
        return;
    }
    let q_ideal = q_ideal.worst(cs.isentropic_validity.quality);
    out.compressibility = cs.suction_z;
    out.k = cs.isentropic_exponent;
    out.isentropic_discharge_temperature = Measured::derived(cs.isentropic_temperature, q_ideal);
    let hs = cs.isentropic_enthalpy_rise;
    out.isentropic_head = Measured::derived(hs, q_ideal);
    let h_iso = isothermal_head(cs.suction_z, gas.gas_constant(), t1.value, ratio);
    out.isothermal_head = Measured::derived(h_iso, q_ideal);

    if !t2_usable {
        out.condition = StageCondition::InputBad;
        return;
    }
    out.gas_validity = cs.validity;
    if cs.validity.quality == Quality::Bad {
        out.condition = StageCondition::OutsideGasModel;
        return;
    }
    let q_all = q_all.worst(cs.validity.quality);
    let dt = t2.value - t1.value;
    if !(dt > T::ZERO) {
        out.condition = StageCondition::NoTemperatureRise;
        return;
    }
    let actual = cs.enthalpy_rise;
    out.actual_work = Measured::derived(actual, q_all);
    let eta_s = hs / actual;
    out.isentropic_efficiency = efficiency(eta_s, q_all);
    if let Some(poly) = schultz(&cs, ln_r) {
        out.polytropic_method = poly.method;
        out.polytropic_head = Measured::derived(poly.head, q_all);
        out.polytropic_exponent = Measured::derived(poly.exponent, q_all);
        out.polytropic_efficiency = efficiency(poly.efficiency, q_all);
    }
    out.condition = if eta_s > T::ONE {
        StageCondition::EfficiencyAboveOne
    } else {
        StageCondition::Normal
    };

    let m = inp.mass_flow;
    let q_power = q_all.worst(m.quality);
    out.mass_flow = m;
    out.work_above_isothermal = Measured::derived(actual - h_iso, q_all);
    if m.quality.is_usable() {
        out.gas_power = Measured::derived(m.value * actual, q_power);
        out.power_above_isothermal = Measured::derived(m.value * (actual - h_iso), q_power);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compression::isentropic_discharge_temperature;
    use crate::gas::{IdealGas, AIR};

    fn inputs(p1: f64, t1: f64, p2: f64, t2: f64) -> CompressorInputs<f64> {
        CompressorInputs {
            suction_pressure: Measured::good(p1),
            suction_temperature: Measured::good(t1),
            discharge_pressure: Measured::good(p2),
            discharge_temperature: Measured::good(t2),
            mass_flow: Measured::good(2.0),
            compressibility: None,
        }
    }

    #[test]
    fn polytropic_n13_reproduces_cengel_values() {
        // Çengel & Boles worked example: air 100 -> 900 kPa from 300 K;
        // n = 1.3 gives T2 = 498.1 K and 246.4 kJ/kg.
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let t2 = isentropic_discharge_temperature(300.0, 9.0, 1.3);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 900e3, t2));
        // n = 1.3 < k: the book's process is cooled, so T2 is below the
        // isentropic T2 and the adiabatic efficiency (> 1) is flagged.
        assert_eq!(r.condition, StageCondition::EfficiencyAboveOne);
        assert_ne!(r.isentropic_efficiency.quality, Quality::Good);
        assert!((r.polytropic_exponent.value - 1.3).abs() < 1e-9);
        // R here is Ru/28.97 = 287.0 J/(kg K); the book uses 0.287 kJ/(kg K).
        assert!((r.polytropic_head.value / 1e3 - 246.4).abs() < 0.15);
        assert!((r.isentropic_head.value / 1e3 - 263.2).abs() < 0.15);
        assert!((r.isothermal_head.value / 1e3 - 189.2).abs() < 0.15);
        assert!((r.gas_power.value - 2.0 * r.actual_work.value).abs() < 1e-6);
    }

    #[test]
    fn adiabatic_stage_has_polytropic_above_isentropic_efficiency() {
        // n = 1.55 > k = 1.4: an uncooled stage with losses. For compression
        // the polytropic efficiency exceeds the isentropic one (common practice).
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let t2 = isentropic_discharge_temperature(300.0, 4.0, 1.55);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 400e3, t2));
        assert_eq!(r.condition, StageCondition::Normal);
        let (es, ep) = (r.isentropic_efficiency.value, r.polytropic_efficiency.value);
        assert!(0.0 < es && es < ep && ep < 1.0, "{es} {ep}");
        assert!((ep - (0.4 / 1.4) / (0.55 / 1.55)).abs() < 1e-12);
        assert!(r.isothermal_head.value < r.isentropic_head.value);
        assert!(r.isentropic_head.value < r.actual_work.value);
    }

    #[test]
    fn inconsistent_data_is_flagged_not_hidden() {
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 90e3, 320.0));
        assert_eq!(r.condition, StageCondition::NoCompression);
        assert_eq!(r.isentropic_head.quality, Quality::Bad);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 300e3, 295.0));
        assert_eq!(r.condition, StageCondition::NoTemperatureRise);
        assert_eq!(r.isentropic_efficiency.quality, Quality::Bad);
        assert_eq!(r.isentropic_head.quality, Quality::Good);
        // T2 a little below isentropic: efficiency just above 1, uncertain.
        let t2s = isentropic_discharge_temperature(300.0, 3.0, 1.4);
        let r = evaluate_compressor(&gas, &inputs(100e3, 300.0, 300e3, t2s - 2.0));
        assert_eq!(r.condition, StageCondition::EfficiencyAboveOne);
        assert_eq!(r.isentropic_efficiency.quality, Quality::Uncertain);
        assert!(r.isentropic_efficiency.value > 1.0);
    }

    #[test]
    fn bad_suction_temperature_keeps_the_ratio_but_not_the_heads() {
        let gas = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        let mut i = inputs(100e3, 300.0, 300e3, 420.0);
        i.suction_temperature = Measured::new(300.0, Quality::Bad);
        let r = evaluate_compressor(&gas, &i);
        assert_eq!(r.pressure_ratio.quality, Quality::Good);
        assert!((r.pressure_ratio.value - 3.0).abs() < 1e-12);
        assert_eq!(r.isentropic_head.quality, Quality::Bad);
        assert_eq!(r.isentropic_efficiency.quality, Quality::Bad);
    }
}
