//! Ideal compression work (head) of a gas: isentropic, polytropic and
//! isothermal, and the polytropic relations between exponents and
//! efficiencies.
//!
//! Sources:
//! - Çengel & Boles, *Thermodynamics: An Engineering Approach*, ch. 7,
//!   "Reversible steady-flow work" / "Minimizing the compressor work"
//!   (isentropic, polytropic and isothermal work of an ideal gas, and
//!   multistage compression with intercooling).
//! - The Python package `fluids.compressible` (Caleb Bell), whose functions
//!   `isothermal_work_compression`, `isentropic_work_compression`,
//!   `isentropic_T_rise_compression`, `isentropic_efficiency` and
//!   `polytropic_exponent` implement the same relations; it is the oracle
//!   of `tests/fluids_oracle.rs`.
//! - Z multiplies the work ("ideal gas with average compressibility"), as in
//!   `fluids` and common practice for compressor heads.
//!
//! All heads are positive for compression, J/kg. Functions are pure and
//! assume validated inputs (`t1 > 0`, `ratio > 0`, `k > 1`, `n > 1`,
//! `gas_constant > 0`, `z > 0`); they never panic, but may return
//! non-finite values outside that domain, which callers turn into bad
//! quality ([`crate::quality::Measured::derived`]).

use crate::real::Real;

/// (k - 1) / k, the isentropic temperature exponent.
#[inline]
pub fn isentropic_exponent_term<T: Real>(k: T) -> T {
    (k - T::ONE) / k
}

/// Isentropic discharge temperature T2s = T1 · r^((k-1)/k), K.
#[inline]
pub fn isentropic_discharge_temperature<T: Real>(t1: T, ratio: T, k: T) -> T {
    t1 * T::exp(isentropic_exponent_term(k) * T::ln(ratio))
}

/// Isentropic head Z·R·T1 · k/(k-1) · (r^((k-1)/k) - 1), J/kg.
#[inline]
pub fn isentropic_head<T: Real>(z: T, gas_constant: T, t1: T, ratio: T, k: T) -> T {
    isentropic_head_from_log(z, gas_constant, t1, T::ln(ratio), k)
}

/// [`isentropic_head`] from `ln_ratio` = ln r (the same value bit for bit).
#[inline]
pub fn isentropic_head_from_log<T: Real>(z: T, gas_constant: T, t1: T, ln_ratio: T, k: T) -> T {
    let m = isentropic_exponent_term(k);
    z * gas_constant * t1 * (T::exp(m * ln_ratio) - T::ONE) / m
}

/// Polytropic head Z·R·T1 · n/(n-1) · (r^((n-1)/n) - 1), J/kg.
#[inline]
pub fn polytropic_head<T: Real>(z: T, gas_constant: T, t1: T, ratio: T, n: T) -> T {
    isentropic_head(z, gas_constant, t1, ratio, n)
}

/// Isothermal head Z·R·T1 · ln r, J/kg (the ideal limit of compression).
#[inline]
pub fn isothermal_head<T: Real>(z: T, gas_constant: T, t1: T, ratio: T) -> T {
    isothermal_head_from_log(z, gas_constant, t1, T::ln(ratio))
}

/// [`isothermal_head`] from `ln_ratio` = ln(p2/p1) (a caller that has the
/// logarithm already; the same value bit for bit).
#[inline]
pub fn isothermal_head_from_log<T: Real>(z: T, gas_constant: T, t1: T, ln_ratio: T) -> T {
    z * gas_constant * t1 * ln_ratio
}

/// Polytropic exponent n from the measured end states:
/// (n-1)/n = ln(T2/T1) / ln(p2/p1). Returns `None` unless 0 < (n-1)/n < 1
/// (a compression with a temperature rise).
#[inline]
pub fn polytropic_exponent_from_temperatures<T: Real>(ratio: T, t1: T, t2: T) -> Option<T> {
    let sigma = T::ln(t2 / t1) / T::ln(ratio);
    if T::is_finite(sigma) && sigma > T::ZERO && sigma < T::ONE {
        Some(T::ONE / (T::ONE - sigma))
    } else {
        None
    }
}

/// Polytropic exponent from k and the polytropic efficiency:
/// n = k·ηp / (1 + k·(ηp - 1)) (`fluids.compressible.polytropic_exponent`).
#[inline]
pub fn polytropic_exponent_from_efficiency<T: Real>(k: T, eta_p: T) -> T {
    k * eta_p / (T::ONE + k * (eta_p - T::ONE))
}

/// Polytropic efficiency from k and n: ηp = ((k-1)/k) / ((n-1)/n).
#[inline]
pub fn polytropic_efficiency_from_exponent<T: Real>(k: T, n: T) -> T {
    isentropic_exponent_term(k) / isentropic_exponent_term(n)
}

/// Isentropic efficiency of a compression with polytropic efficiency ηp:
/// ηs = (r^((k-1)/k) - 1) / (r^((k-1)/(k·ηp)) - 1)
/// (`fluids.compressible.isentropic_efficiency`).
#[inline]
pub fn isentropic_efficiency_from_polytropic<T: Real>(ratio: T, k: T, eta_p: T) -> T {
    let m = isentropic_exponent_term(k);
    let lr = T::ln(ratio);
    (T::exp(m * lr) - T::ONE) / (T::exp(m / eta_p * lr) - T::ONE)
}

/// Ideal work of `stages` equal-ratio polytropic stages with perfect
/// intercooling back to T1 (Çengel & Boles, multistage compression with
/// intercooling): stages · polytropic_head(r^(1/stages)), J/kg.
#[inline]
pub fn staged_polytropic_work<T: Real>(
    z: T,
    gas_constant: T,
    t1: T,
    overall_ratio: T,
    n: T,
    stages: u32,
) -> T {
    let s = T::of(stages as f64);
    let stage_ratio = T::exp(T::ln(overall_ratio) / s);
    s * polytropic_head(z, gas_constant, t1, stage_ratio, n)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponent_round_trips() {
        let n = polytropic_exponent_from_efficiency(1.4_f64, 0.78);
        assert!((polytropic_efficiency_from_exponent(1.4, n) - 0.78).abs() < 1e-12);
        let t2 = isentropic_discharge_temperature(300.0, 4.0, n);
        let n2 = polytropic_exponent_from_temperatures(4.0, 300.0, t2).unwrap();
        assert!((n - n2).abs() < 1e-10);
        assert!(polytropic_exponent_from_temperatures(4.0, 300.0, 290.0).is_none());
        assert!(polytropic_exponent_from_temperatures(1.0, 300.0, 310.0).is_none());
    }
}
