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

use super::compressor::{key_slots, slot_key};
use crate::compression::isentropic_head;
use crate::dependency::{check, property_slots, pump_uses, Grades, Slots, Use};
use crate::gas::GasModel;
use crate::plausibility::Limits;
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// What the pump evaluation found, besides qualities.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PumpCondition {
    /// Consistent.
    Normal,
    /// A pressure needed for the result is bad.
    InputBad,
    /// Discharge not above suction pressure: no pumping (the pressure rise
    /// is uncertain, the work bad).
    NoPressureRise,
    /// The pressure ratio is above the configured stage maximum.
    RatioOutOfRange,
    /// Flow at or below the stationary threshold.
    Stationary,
}

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
    /// What the evaluation found.
    pub condition: PumpCondition,
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
            condition: PumpCondition::InputBad,
        }
    }
}

/// Evaluates a pump stage with the default [`Limits`]. `density` (kg/m3,
/// used when the gas model gives no dense-phase density) and `efficiency`
/// were validated at construction (finite, positive, efficiency <= 1);
/// pressures and temperature passed the sensor boundary.
pub fn evaluate_pump<T: Real, G: GasModel<T>>(
    gas: &G,
    density: T,
    efficiency: T,
    p1: Measured<T>,
    p2: Measured<T>,
    t1: Measured<T>,
    mass_flow: Measured<T>,
) -> PumpResult<T> {
    let limits = Limits::default();
    evaluate_pump_within(gas, density, efficiency, [p1, p2, t1, mass_flow], &limits)
}

/// Evaluates a pump stage from `[p1, p2, t1, mass_flow]` against `limits`;
/// qualities by the dependency rule ([`crate::dependency::pump_uses`]).
pub fn evaluate_pump_within<T: Real, G: GasModel<T>>(
    gas: &G,
    density: T,
    efficiency: T,
    [p1, p2, t1, mass_flow]: [Measured<T>; 4],
    limits: &Limits<T>,
) -> PumpResult<T> {
    let mut out = PumpResult::bad();
    // Computed outputs (bit i: the i-th field in declaration order).
    let mut done: u16 = 0;
    let p_ok = p1.quality.is_usable() && p2.quality.is_usable();
    let dp = p2.value - p1.value;
    let ratio = p2.value / p1.value;
    // The slots' grades from their qualities' discriminants by shifts, as
    // `Grades::slot` for each gives them (see `key_slots`); a pump has no
    // T2 or Z slot (good: a zero pair).
    let key = slot_key([
        p1.quality,
        t1.quality,
        p2.quality,
        Quality::Good,
        mass_flow.quality,
        Quality::Good,
    ]);
    let (lo, hi) = (key_slots(key, 0), key_slots(key, 1));
    let mut g = Grades::of_slots(Slots(lo & !hi), Slots(hi & !lo), Slots(lo & hi));
    let mut condition = PumpCondition::Normal;
    if mass_flow.quality.is_usable() {
        out.mass_flow.value = mass_flow.value;
        done |= 1 << 4;
        if !(mass_flow.value > limits.stationary_flow) {
            condition = PumpCondition::Stationary;
        }
    }
    // Suction density from the gas model's dense phase where it gives one
    // (P1, T1 and its validity: MODEL), else the configured value.
    let model_density = gas.dense_density(p1.value, t1.value);
    let p1_t1_ok = p1.quality.is_usable() && t1.quality.is_usable();
    let density = match model_density {
        Some((rho, validity)) if p1_t1_ok && T::is_finite(rho) && rho > T::ZERO => {
            g.check(check::MODEL, validity.quality);
            Some(rho)
        }
        Some(_) => None,
        None => Some(density),
    };
    let density_ok = density.is_some();
    let density = if let Some(rho) = density {
        out.density.value = rho;
        done |= 1 << 8;
        rho
    } else {
        T::ONE
    };
    if p_ok {
        out.pressure_ratio.value = ratio;
        out.pressure_rise.value = dp;
        done |= 1 << 0 | 1 << 1;
        if !(ratio <= limits.max_stage_ratio) {
            g.check(check::RATIO, Quality::Bad);
            condition = PumpCondition::RatioOutOfRange;
        }
        if dp > T::ZERO {
            let w_rev = dp / density;
            let w = w_rev / efficiency;
            if density_ok {
                out.reversible_work.value = w_rev;
                out.shaft_work.value = w;
                done |= 1 << 2 | 1 << 3;
            }
            if density_ok && mass_flow.quality.is_usable() {
                out.power.value = mass_flow.value * w;
                done |= 1 << 5;
            }
            if t1.quality.is_usable() {
                // As documented on the field: the same mass compressed as an
                // ideal gas (Z = 1, the model's ideal-gas cp) over the same
                // ratio from the same temperature. A real-gas model's Z at a
                // dense suction would describe the liquid, not a gas.
                let props = gas.path(p1.value, t1.value, p2.value, t1.value, Some(T::ONE));
                g.check(check::MODEL, gas.fit_quality(t1.value, t1.value));
                let h = isentropic_head(props.z, props.gas_constant, t1.value, ratio, props.k);
                out.gas_compression_equivalent.value = h;
                done |= 1 << 6;
                if density_ok {
                    out.work_ratio_to_gas.value = w / h;
                    done |= 1 << 7;
                }
            }
        } else {
            // A pressure fall across a pump: possible (stopped, or flow
            // through it) but not pumping; the reading is suspect.
            condition = PumpCondition::NoPressureRise;
        }
    } else {
        condition = PumpCondition::InputBad;
    }
    let (props, _) = property_slots(gas.property_inputs(), false);
    let u = pump_uses(props, model_density.is_some());
    let falling = condition == PumpCondition::NoPressureRise;
    // One loop over the outputs in the order of `done`, over one
    // out-of-line copy of the rule (nine inlined copies were 904 bytes more
    // flash in the Cortex-M4F controller); only the pressure rise is
    // suspect (falling pressure).
    let uses = [
        u.pressure_ratio,
        u.pressure_rise,
        u.reversible_work,
        u.shaft_work,
        u.mass_flow,
        u.power,
        u.gas_compression_equivalent,
        u.work_ratio_to_gas,
        u.density,
    ];
    let mut bit: u16 = 1;
    for (m, u) in pump_outputs(&mut out).into_iter().zip(uses) {
        *m = settle_pump_output(&g, *m, done & bit != 0, falling && bit == 1 << 1, u);
        bit <<= 1;
    }
    out.condition = condition;
    out
}

/// One output by the rule ([`Grades::settle_suspect`]), out of line: one
/// copy for the nine outputs. By value (in registers), so that the result
/// is not kept in memory for it.
#[inline(never)]
fn settle_pump_output<T: Real>(
    g: &Grades,
    mut m: Measured<T>,
    computed: bool,
    suspect: bool,
    u: Use,
) -> Measured<T> {
    g.settle_suspect(&mut m, computed, suspect, u);
    m
}

/// The outputs of a pump result in the order of the bits of `done` in
/// [`evaluate_pump_within`].
#[inline(always)]
fn pump_outputs<T>(o: &mut PumpResult<T>) -> [&mut Measured<T>; 9] {
    [
        &mut o.pressure_ratio,
        &mut o.pressure_rise,
        &mut o.reversible_work,
        &mut o.shaft_work,
        &mut o.mass_flow,
        &mut o.power,
        &mut o.gas_compression_equivalent,
        &mut o.work_ratio_to_gas,
        &mut o.density,
    ]
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
        // Regression (issue 11): discharge below suction gave a pressure
        // rise of -10 bar, good; now uncertain with the reason.
        assert_eq!(r.pressure_rise.quality, Quality::Uncertain);
        assert_eq!(r.condition, PumpCondition::NoPressureRise);
    }
}
