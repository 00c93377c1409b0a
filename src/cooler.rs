//! Intercooler (and aftercooler) performance from temperatures, pressures
//! and flows.
//!
//! Sources:
//! - Thermal effectiveness as the ratio of the gas temperature drop to the
//!   largest possible drop, (Tg,in - Tg,out) / (Tg,in - Tc,in): the
//!   effectiveness definition of Incropera & DeWitt, *Fundamentals of Heat
//!   and Mass Transfer*, ch. 11 (effectiveness-NTU method), with the gas as
//!   the stream of smaller heat-capacity rate (common practice for
//!   gas-to-water intercoolers, where the water rate is several times larger).
//! - Counterflow log-mean temperature difference and UA = Q / LMTD
//!   (Incropera & DeWitt ch. 11), available when the coolant outlet is
//!   measured; a falling UA at steady state is the usual fouling indicator
//!   (common practice).
//! - Approach temperature, gas outlet minus coolant inlet (common practice).
//! - Heat duty from the gas side as m·(h_in − h_out) with the enthalpies of
//!   the configured gas model (first law, steady flow), the same basis as the
//!   stage work, so a stage's gas power and the following cooler's duty
//!   balance. For the ideal gas with compressibility Z this is m·Z·cp·ΔT
//!   (before the gas-model seam it was m·cp·ΔT, without Z).

use crate::quality::{Measured, Quality};
use crate::real::Real;

/// Smallest inlet temperature difference (gas in - coolant in) for which the
/// effectiveness is defined, K.
pub const MIN_EFFECTIVENESS_SPAN_K: f64 = 0.5;
/// Temperature noise tolerated before "outlet above inlet" is declared, K.
pub const TEMPERATURE_NOISE_K: f64 = 0.5;

/// Configuration of a cooler after a stage.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoolerConfig<T> {
    /// Coolant specific heat, J/(kg K) (water about 4180, common practice).
    pub coolant_cp: T,
}

/// What the cooler evaluation found about its inputs, besides qualities.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CoolerCondition {
    /// Consistent.
    Normal,
    /// A temperature needed for the result is bad.
    InputBad,
    /// Gas outlet warmer than gas inlet (beyond noise).
    OutletAboveInlet,
    /// Gas outlet colder than the coolant inlet (impossible).
    OutletBelowCoolant,
    /// Gas inlet not warmer than the coolant inlet: nothing to cool.
    NoDrivingDifference,
}

/// Results of one cooler.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoolerResult<T> {
    /// Gas temperature drop Tg,in - Tg,out, K.
    pub gas_temperature_drop: Measured<T>,
    /// Approach Tg,out - Tc,in, K.
    pub approach: Measured<T>,
    /// Thermal effectiveness, -.
    pub effectiveness: Measured<T>,
    /// Heat removed from the gas, m·(h_in − h_out), W.
    pub heat_duty: Measured<T>,
    /// Gas-side pressure drop, Pa.
    pub pressure_drop: Measured<T>,
    /// Gas-side pressure drop over inlet pressure, -.
    pub relative_pressure_drop: Measured<T>,
    /// Coolant temperature rise, K (bad if the outlet is not measured).
    pub coolant_temperature_rise: Measured<T>,
    /// Counterflow log-mean temperature difference, K.
    pub lmtd: Measured<T>,
    /// Overall conductance Q / LMTD, W/K.
    pub ua: Measured<T>,
    /// (gas duty - coolant duty) / gas duty, - (needs coolant flow).
    pub heat_balance_error: Measured<T>,
    /// Temperature rise across the next stage, K (the interstage temperature
    /// rise the cooler's performance feeds into; bad for the last stage).
    pub next_stage_temperature_rise: Measured<T>,
    /// What the evaluation found.
    pub condition: CoolerCondition,
}

impl<T: Real> CoolerResult<T> {
    /// All results bad.
    pub fn bad() -> Self {
        let b = Measured::bad();
        CoolerResult {
            gas_temperature_drop: b,
            approach: b,
            effectiveness: b,
            heat_duty: b,
            pressure_drop: b,
            relative_pressure_drop: b,
            coolant_temperature_rise: b,
            lmtd: b,
            ua: b,
            heat_balance_error: b,
            next_stage_temperature_rise: b,
            condition: CoolerCondition::InputBad,
        }
    }
}

/// Validated cooler inputs in SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoolerInputs<T> {
    /// Gas inlet temperature (the stage discharge), K.
    pub gas_inlet_temperature: Measured<T>,
    /// Gas outlet temperature, K.
    pub gas_outlet_temperature: Measured<T>,
    /// Coolant inlet temperature, K.
    pub coolant_inlet_temperature: Measured<T>,
    /// Coolant outlet temperature, K (bad if not measured).
    pub coolant_outlet_temperature: Measured<T>,
    /// Gas inlet pressure, Pa.
    pub gas_inlet_pressure: Measured<T>,
    /// Gas outlet pressure, Pa.
    pub gas_outlet_pressure: Measured<T>,
    /// Gas mass flow, kg/s.
    pub gas_mass_flow: Measured<T>,
    /// Coolant mass flow, kg/s (bad if not measured).
    pub coolant_mass_flow: Measured<T>,
    /// Gas enthalpy drop h(inlet) − h(outlet) from the gas model, J/kg,
    /// with the model's quality for the two states.
    pub gas_enthalpy_drop: Measured<T>,
    /// Coolant cp, J/(kg K).
    pub coolant_cp: T,
}

/// Counterflow LMTD from the two terminal differences; returns `None` unless
/// both are positive. Equal differences give the difference itself (the
/// limit), so there is no 0/0.
#[inline]
pub fn lmtd_counterflow<T: Real>(dt_a: T, dt_b: T) -> Option<T> {
    if !(dt_a > T::ZERO && dt_b > T::ZERO) {
        return None;
    }
    let diff = dt_a - dt_b;
    if T::abs(diff) <= T::of(1e-6) * dt_a {
        return Some(T::of(0.5) * (dt_a + dt_b));
    }
    Some(diff / T::ln(dt_a / dt_b))
}

/// Evaluates one cooler; [`evaluate_cooler_into`] returning the result.
pub fn evaluate_cooler<T: Real>(inp: &CoolerInputs<T>) -> CoolerResult<T> {
    let mut out = CoolerResult::bad();
    evaluate_cooler_into(inp, &mut out);
    out
}

/// Evaluates one cooler into `out` (every field overwritten; no result
/// copy). Inputs passed the sensor boundary; never panics.
pub fn evaluate_cooler_into<T: Real>(inp: &CoolerInputs<T>, out: &mut CoolerResult<T>) {
    *out = CoolerResult::bad();
    let (tin, tout, tc) = (
        inp.gas_inlet_temperature,
        inp.gas_outlet_temperature,
        inp.coolant_inlet_temperature,
    );

    let q_p = inp
        .gas_inlet_pressure
        .quality
        .worst(inp.gas_outlet_pressure.quality);
    if q_p.is_usable() {
        let dp = inp.gas_inlet_pressure.value - inp.gas_outlet_pressure.value;
        let q = if dp < T::ZERO {
            q_p.worst(Quality::Uncertain)
        } else {
            q_p
        };
        out.pressure_drop = Measured::derived(dp, q);
        out.relative_pressure_drop = Measured::derived(dp / inp.gas_inlet_pressure.value, q);
    }

    let q_gas = tin.quality.worst(tout.quality);
    if q_gas == Quality::Bad {
        return;
    }
    let drop = tin.value - tout.value;
    if drop < -T::of(TEMPERATURE_NOISE_K) {
        out.condition = CoolerCondition::OutletAboveInlet;
        out.gas_temperature_drop = Measured::derived(drop, Quality::Uncertain.worst(q_gas));
        return;
    }
    out.gas_temperature_drop = Measured::derived(drop, q_gas);
    let q_flow = q_gas
        .worst(inp.gas_mass_flow.quality)
        .worst(inp.gas_enthalpy_drop.quality);
    let duty = inp.gas_mass_flow.value * inp.gas_enthalpy_drop.value;
    if q_flow.is_usable() {
        out.heat_duty = Measured::derived(duty, q_flow);
    }
    out.condition = CoolerCondition::Normal;

    let q_c = q_gas.worst(tc.quality);
    if q_c == Quality::Bad {
        out.condition = CoolerCondition::InputBad;
        return;
    }
    let approach = tout.value - tc.value;
    let span = tin.value - tc.value;
    let q_approach = if approach < -T::of(TEMPERATURE_NOISE_K) {
        out.condition = CoolerCondition::OutletBelowCoolant;
        q_c.worst(Quality::Uncertain)
    } else {
        q_c
    };
    out.approach = Measured::derived(approach, q_approach);
    if span > T::of(MIN_EFFECTIVENESS_SPAN_K) {
        let eff = drop / span;
        let q = if eff > T::ONE || eff < T::ZERO {
            q_approach.worst(Quality::Uncertain)
        } else {
            q_approach
        };
        out.effectiveness = Measured::derived(eff, q);
    } else {
        out.condition = CoolerCondition::NoDrivingDifference;
    }

    let tco = inp.coolant_outlet_temperature;
    let q_co = q_c.worst(tco.quality);
    if q_co.is_usable() {
        let rise = tco.value - tc.value;
        out.coolant_temperature_rise = Measured::derived(rise, q_co);
        if let Some(lmtd) = lmtd_counterflow(tin.value - tco.value, tout.value - tc.value) {
            out.lmtd = Measured::derived(lmtd, q_co);
            if q_flow.is_usable() {
                out.ua = Measured::derived(duty / lmtd, q_co.worst(q_flow));
            }
        }
        let mc = inp.coolant_mass_flow;
        let q_bal = q_co.worst(q_flow).worst(mc.quality);
        if q_bal.is_usable() && duty > T::ZERO {
            let coolant_duty = mc.value * inp.coolant_cp * rise;
            out.heat_balance_error = Measured::derived((duty - coolant_duty) / duty, q_bal);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn inputs() -> CoolerInputs<f64> {
        let g = Measured::good;
        CoolerInputs {
            gas_inlet_temperature: g(420.0),
            gas_outlet_temperature: g(310.0),
            coolant_inlet_temperature: g(300.0),
            coolant_outlet_temperature: g(315.0),
            gas_inlet_pressure: g(3.0e5),
            gas_outlet_pressure: g(2.95e5),
            gas_mass_flow: g(2.0),
            coolant_mass_flow: g(3.5),
            gas_enthalpy_drop: g(1005.0 * 110.0),
            coolant_cp: 4180.0,
        }
    }

    #[test]
    fn hand_calculation() {
        let r = evaluate_cooler(&inputs());
        assert_eq!(r.condition, CoolerCondition::Normal);
        assert_eq!(r.gas_temperature_drop.value, 110.0);
        assert_eq!(r.approach.value, 10.0);
        assert!((r.effectiveness.value - 110.0 / 120.0).abs() < 1e-12);
        assert!((r.heat_duty.value - 2.0 * 1005.0 * 110.0).abs() < 1e-6);
        assert!((r.pressure_drop.value - 5000.0).abs() < 1e-6);
        // LMTD of 105 K and 10 K terminal differences: 95/ln(10.5).
        assert!((r.lmtd.value - 95.0 / 10.5_f64.ln()).abs() < 1e-9);
        assert!((r.ua.value - r.heat_duty.value / r.lmtd.value).abs() < 1e-6);
        let coolant = 3.5 * 4180.0 * 15.0;
        assert!((r.heat_balance_error.value - (221_100.0 - coolant) / 221_100.0).abs() < 1e-12);
    }

    #[test]
    fn outlet_above_inlet_is_flagged() {
        let mut i = inputs();
        i.gas_outlet_temperature = Measured::good(430.0);
        let r = evaluate_cooler(&i);
        assert_eq!(r.condition, CoolerCondition::OutletAboveInlet);
        assert_eq!(r.effectiveness.quality, Quality::Bad);
        assert_eq!(r.heat_duty.quality, Quality::Bad);
    }

    #[test]
    fn outlet_below_coolant_is_uncertain_and_equal_lmtd_is_finite() {
        let mut i = inputs();
        i.gas_outlet_temperature = Measured::good(295.0);
        let r = evaluate_cooler(&i);
        assert_eq!(r.condition, CoolerCondition::OutletBelowCoolant);
        assert_eq!(r.approach.quality, Quality::Uncertain);
        assert_eq!(r.effectiveness.quality, Quality::Uncertain);
        assert_eq!(lmtd_counterflow(10.0_f64, 10.0), Some(10.0));
        assert_eq!(lmtd_counterflow(10.0_f64, -1.0), None);
    }
}
