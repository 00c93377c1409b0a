//! Rating a compressor stage: from an *assumed* polytropic or isentropic
//! efficiency, predict the discharge temperature, the heads, the actual work
//! and the gas power for given suction conditions and discharge pressure
//! (the desk question "what will this stage do at ηp = 0.78?").
//!
//! Sources (ideal gas with a mean compressibility Z and a constant k, as in
//! [`crate::compression`]):
//! - Çengel & Boles, *Thermodynamics: An Engineering Approach*, ch. 7
//!   (isentropic and polytropic work of an ideal gas; isentropic efficiency
//!   of a compressor, ηs = ws / wa).
//! - The polytropic relations of `fluids.compressible` (Caleb Bell):
//!   n from k and ηp (`polytropic_exponent`), ηs from ηp
//!   (`isentropic_efficiency`); the committed oracle data of
//!   `tests/fluids_oracle.rs` checks this file in `tests/rating.rs`.
//!
//! Given ηp: σ = (k−1)/(k·ηp), T2 = T1·r^σ, polytropic head
//! Hp = Z R T1 (r^σ − 1)/σ, actual work w = Hp/ηp.
//! Given ηs: w = Hs/ηs with the isentropic head Hs, T2 = T1 + (T2s − T1)/ηs,
//! σ = ln(T2/T1)/ln r, ηp = ((k−1)/k)/σ.

use crate::compression::{
    isentropic_discharge_temperature, isentropic_exponent_term, isentropic_head, isothermal_head,
};
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// The efficiency assumed for the rating.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum AssumedEfficiency<T> {
    /// Polytropic efficiency ηp, (0, 1].
    Polytropic(T),
    /// Isentropic efficiency ηs, (0, 1].
    Isentropic(T),
}

/// Inputs of a rating (SI: Pa absolute, K, J/(kg K), kg/s).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RatingInputs<T> {
    /// Suction pressure, Pa absolute.
    pub suction_pressure: T,
    /// Suction temperature, K.
    pub suction_temperature: T,
    /// Discharge pressure, Pa absolute.
    pub discharge_pressure: T,
    /// Heat-capacity ratio k (> 1).
    pub k: T,
    /// Specific gas constant, J/(kg K).
    pub gas_constant: T,
    /// Mean compressibility factor, (0, 2].
    pub compressibility: T,
    /// The assumed efficiency.
    pub efficiency: AssumedEfficiency<T>,
    /// Mass flow, kg/s, for the power (`None`: power bad).
    pub mass_flow: Option<T>,
}

/// Predicted performance; every value bad when an input is outside its
/// domain (no compression, efficiency outside (0, 1], k not above 1, ...).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RatingResult<T> {
    /// Pressure ratio, -.
    pub pressure_ratio: Measured<T>,
    /// Predicted discharge temperature, K.
    pub discharge_temperature: Measured<T>,
    /// Isentropic discharge temperature, K.
    pub isentropic_discharge_temperature: Measured<T>,
    /// Isentropic head, J/kg.
    pub isentropic_head: Measured<T>,
    /// Polytropic head, J/kg.
    pub polytropic_head: Measured<T>,
    /// Isothermal head, J/kg.
    pub isothermal_head: Measured<T>,
    /// Actual specific work, J/kg.
    pub actual_work: Measured<T>,
    /// Polytropic efficiency (assumed, or implied by the assumed ηs), -.
    pub polytropic_efficiency: Measured<T>,
    /// Isentropic efficiency (assumed, or implied by the assumed ηp), -.
    pub isentropic_efficiency: Measured<T>,
    /// Polytropic exponent n, -.
    pub polytropic_exponent: Measured<T>,
    /// Gas power, W.
    pub gas_power: Measured<T>,
}

impl<T: Real> RatingResult<T> {
    /// Every value bad.
    pub fn bad() -> Self {
        let b = Measured::bad();
        RatingResult {
            pressure_ratio: b,
            discharge_temperature: b,
            isentropic_discharge_temperature: b,
            isentropic_head: b,
            polytropic_head: b,
            isothermal_head: b,
            actual_work: b,
            polytropic_efficiency: b,
            isentropic_efficiency: b,
            polytropic_exponent: b,
            gas_power: b,
        }
    }
}

fn positive<T: Real>(x: T) -> bool {
    T::is_finite(x) && x > T::ZERO
}

/// Rates one compressor stage (see the module docs). Never panics; an input
/// outside its domain gives [`RatingResult::bad`], a result that is not
/// finite is bad.
pub fn rate_compressor<T: Real>(inp: &RatingInputs<T>) -> RatingResult<T> {
    let (p1, t1, p2) = (
        inp.suction_pressure,
        inp.suction_temperature,
        inp.discharge_pressure,
    );
    let (k, r_gas, z) = (inp.k, inp.gas_constant, inp.compressibility);
    let eta = match inp.efficiency {
        AssumedEfficiency::Polytropic(e) | AssumedEfficiency::Isentropic(e) => e,
    };
    let ok = positive(p1)
        && positive(t1)
        && positive(p2)
        && p2 > p1
        && T::is_finite(k)
        && k > T::ONE
        && positive(r_gas)
        && positive(z)
        && z <= T::of(2.0)
        && positive(eta)
        && eta <= T::ONE;
    if !ok {
        return RatingResult::bad();
    }
    let g = Quality::Good;
    let ratio = p2 / p1;
    let m = isentropic_exponent_term(k);
    let lr = T::ln(ratio);
    let t2s = isentropic_discharge_temperature(t1, ratio, k);
    let hs = isentropic_head(z, r_gas, t1, ratio, k);
    let (t2, sigma, work, eta_p, eta_s) = match inp.efficiency {
        AssumedEfficiency::Polytropic(eta_p) => {
            let sigma = m / eta_p;
            let t2 = t1 * T::exp(sigma * lr);
            let hp = z * r_gas * t1 * (T::exp(sigma * lr) - T::ONE) / sigma;
            let work = hp / eta_p;
            (t2, sigma, work, eta_p, hs / work)
        }
        AssumedEfficiency::Isentropic(eta_s) => {
            let t2 = t1 + (t2s - t1) / eta_s;
            let sigma = T::ln(t2 / t1) / lr;
            let work = hs / eta_s;
            (t2, sigma, work, m / sigma, eta_s)
        }
    };
    let hp = work * eta_p;
    let n = T::ONE / (T::ONE - sigma);
    let d = |x: T| Measured::derived(x, g);
    RatingResult {
        pressure_ratio: d(ratio),
        discharge_temperature: d(t2),
        isentropic_discharge_temperature: d(t2s),
        isentropic_head: d(hs),
        polytropic_head: d(hp),
        isothermal_head: d(isothermal_head(z, r_gas, t1, ratio)),
        actual_work: d(work),
        polytropic_efficiency: d(eta_p),
        isentropic_efficiency: d(eta_s),
        polytropic_exponent: if sigma < T::ONE {
            d(n)
        } else {
            Measured::bad()
        },
        gas_power: match inp.mass_flow {
            Some(f) if T::is_finite(f) && f >= T::ZERO => d(f * work),
            _ => Measured::bad(),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn air(eff: AssumedEfficiency<f64>) -> RatingResult<f64> {
        rate_compressor(&RatingInputs {
            suction_pressure: 100e3,
            suction_temperature: 300.0,
            discharge_pressure: 900e3,
            k: 1.4,
            gas_constant: 287.0,
            compressibility: 1.0,
            efficiency: eff,
            mass_flow: Some(2.0),
        })
    }

    #[test]
    fn reversible_rating_is_the_isentropic_case() {
        // Çengel & Boles ch. 7 worked example (air, 100 -> 900 kPa, 300 K,
        // k = 1.4, R = 0.287 kJ/(kg K)): isentropic T2 = 562 K, work 263.2 kJ/kg.
        for e in [
            AssumedEfficiency::Polytropic(1.0),
            AssumedEfficiency::Isentropic(1.0),
        ] {
            let r = air(e);
            assert!((r.discharge_temperature.value - 562.0).abs() < 0.1);
            assert!((r.actual_work.value / 1e3 - 263.2).abs() < 0.05);
            assert_eq!(r.gas_power.quality, Quality::Good);
        }
    }

    #[test]
    fn both_routes_agree_and_bad_inputs_are_bad() {
        // Consistency check (the project's own relations): rating at ηp and at
        // the ηs it implies gives the same stage.
        let p = air(AssumedEfficiency::Polytropic(0.8));
        let s = air(AssumedEfficiency::Isentropic(p.isentropic_efficiency.value));
        assert!((p.discharge_temperature.value - s.discharge_temperature.value).abs() < 1e-9);
        assert!((p.polytropic_efficiency.value - s.polytropic_efficiency.value).abs() < 1e-12);
        assert!(p.discharge_temperature.value > 562.0);
        for bad in [0.0, -0.1, 1.2, f64::NAN] {
            let r = air(AssumedEfficiency::Polytropic(bad));
            assert_eq!(r.actual_work.quality, Quality::Bad);
            assert_eq!(r.actual_work.value, 0.0);
        }
    }
}
