//! Staging with intercooling: the whole-train ideal references.
//!
//! Sources: Çengel & Boles, *Thermodynamics: An Engineering Approach*,
//! ch. 7, "Multistage compression with intercooling": with perfect
//! intercooling back to the suction temperature, the total work of N ideal
//! stages is least when every stage has the same pressure ratio,
//! r_stage = r^(1/N), so the optimum interstage pressures are
//! p_i = p_suction · r^(i/N). The isothermal work Z·R·T1·ln r is the limit as
//! N grows; one uncooled isentropic stage is the other extreme.

use crate::compression::{isentropic_head_from_log, isothermal_head_from_log};
use crate::gas::{Validity, ValidityReason};
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// Optimum discharge pressure of stage `i` (zero-based) of `stages` equal-
/// ratio stages: p_suction · r^((i+1)/stages), Pa.
#[inline]
pub fn equal_ratio_interstage_pressure<T: Real>(
    p_suction: T,
    overall_ratio: T,
    stages: u32,
    i: u32,
) -> T {
    // Divide in T: an f64 division is soft-float (about 120 instructions) on
    // Cortex-M4F, and the f32 quotient of two small integers is correctly rounded.
    equal_ratio_interstage_pressure_from_log(p_suction, T::ln(overall_ratio), stages, i)
}

/// [`equal_ratio_interstage_pressure`] from `ln_overall` = ln(overall
/// ratio), for a caller that evaluates every interstage (the same value bit
/// for bit, one logarithm for all).
#[inline]
pub fn equal_ratio_interstage_pressure_from_log<T: Real>(
    p_suction: T,
    ln_overall: T,
    stages: u32,
    i: u32,
) -> T {
    equal_ratio_interstage_pressure_from_fraction(
        p_suction,
        ln_overall,
        equal_ratio_fraction(stages, i),
    )
}

/// The exponent (i + 1)/`stages` of stage `i`'s (zero-based) equal-ratio
/// discharge pressure, p_suction · r^((i+1)/stages): a constant of the
/// train, which computes it once at construction.
#[inline]
pub fn equal_ratio_fraction<T: Real>(stages: u32, i: u32) -> T {
    T::of(f64::from(i) + 1.0) / T::of(f64::from(stages))
}

/// [`equal_ratio_interstage_pressure_from_log`] with the stage's
/// [`equal_ratio_fraction`] given (the same value bit for bit).
#[inline]
pub fn equal_ratio_interstage_pressure_from_fraction<T: Real>(
    p_suction: T,
    ln_overall: T,
    fraction: T,
) -> T {
    p_suction * T::exp(fraction * ln_overall)
}

/// The equal-ratio stage pressure ratio r^(1/`stages`) from `ln_overall`
/// = ln r, for a caller that walks every interstage: the optimum discharge
/// pressures are p_i = p_suction · r_s^(i+1), each the one before times
/// r_s. One exponential for the whole train instead of one per stage; the
/// first optimum is [`equal_ratio_interstage_pressure_from_log`] bit for bit,
/// stage i's is i roundings of a product away from it (below 1e-6
/// relative in f32 for up to 16 stages: inside `tolerance::PRESSURE`).
/// `first_fraction` is [`equal_ratio_fraction`]`(stages, 0)` = 1/`stages`
/// (a constant of the train, computed once).
#[inline]
pub fn equal_ratio_stage_ratio_from_log<T: Real>(ln_overall: T, first_fraction: T) -> T {
    T::exp(first_fraction * ln_overall)
}

/// Interstage pressure of one compressor stage against the equal-ratio
/// optimum.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct InterstagePressure<T> {
    /// Measured discharge pressure, Pa.
    pub measured: Measured<T>,
    /// Equal-ratio optimum, Pa.
    pub optimum: Measured<T>,
    /// measured / optimum - 1, -.
    pub deviation: Measured<T>,
}

/// Whole-train totals and ideal references.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TrainTotals<T> {
    /// Number of compressor stages (pumps excluded).
    pub compressor_stages: u8,
    /// Last compressor discharge over first suction pressure, -.
    pub overall_pressure_ratio: Measured<T>,
    /// Sum of the compressor stages' actual specific work, J/kg.
    pub compressor_work: Measured<T>,
    /// Sum of the compressor stages' gas power, W.
    pub compressor_power: Measured<T>,
    /// Sum of the pump stages' shaft power, W.
    pub pump_power: Measured<T>,
    /// Compressor gas power plus pump shaft power, W: the power the gas
    /// takes up in the compressors (m·Δh, before bearing, seal and gear
    /// losses) plus what the pumps' shafts take (hydraulic power over the
    /// configured efficiency). Not a driver or electrical power.
    pub total_power: Measured<T>,
    /// Reversible isothermal work from the first suction pressure to the
    /// last compressor discharge pressure at the first suction temperature,
    /// J/kg, through the gas model ([`crate::gas::GasModel::isothermal_work`]:
    /// the Gibbs energy rise Δh − T·Δs, Z·R·T·ln r for the ideal gas with the
    /// mean of the compressor stages' Z). The loss ledger starts from it.
    pub isothermal_work: Measured<T>,
    /// isothermal_work / compressor_work, -.
    pub isothermal_efficiency: Measured<T>,
    /// Isentropic work of one uncooled stage for the overall ratio, J/kg.
    pub single_stage_isentropic_work: Measured<T>,
    /// Isentropic work of the same number of equal-ratio stages with perfect
    /// intercooling, J/kg.
    pub ideal_staged_isentropic_work: Measured<T>,
    /// Sum of the stages' isentropic heads at their measured suction
    /// temperatures and ratios, J/kg.
    pub measured_staged_isentropic_work: Measured<T>,
    /// single-stage minus measured-staged isentropic work: what staging and
    /// intercooling save now, J/kg.
    pub staging_saving: Measured<T>,
    /// single-stage minus ideal-staged isentropic work: the most staging
    /// could save, J/kg.
    pub ideal_staging_saving: Measured<T>,
}

impl<T: Real> TrainTotals<T> {
    /// All totals bad.
    pub fn bad(compressor_stages: u8) -> Self {
        let b = Measured::bad();
        TrainTotals {
            compressor_stages,
            overall_pressure_ratio: b,
            compressor_work: b,
            compressor_power: b,
            pump_power: b,
            total_power: b,
            isothermal_work: b,
            isothermal_efficiency: b,
            single_stage_isentropic_work: b,
            ideal_staged_isentropic_work: b,
            measured_staged_isentropic_work: b,
            staging_saving: b,
            ideal_staging_saving: b,
        }
    }
}

/// Ideal references for the overall duty: (isothermal, one uncooled
/// isentropic stage, `stages` ideal intercooled isentropic stages), J/kg.
#[inline]
pub fn ideal_references<T: Real>(
    z: T,
    gas_constant: T,
    t1: T,
    overall_ratio: T,
    k: T,
    stages: u32,
) -> (T, T, T) {
    ideal_references_from_log(z, gas_constant, t1, T::ln(overall_ratio), k, stages)
}

/// [`ideal_references`] from `ln_overall` = ln(overall ratio) (the same
/// values bit for bit; the train has the logarithm already).
#[inline]
pub fn ideal_references_from_log<T: Real>(
    z: T,
    gas_constant: T,
    t1: T,
    ln_overall: T,
    k: T,
    stages: u32,
) -> (T, T, T) {
    let iso = isothermal_head_from_log(z, gas_constant, t1, ln_overall);
    let (single, staged) =
        isentropic_references_from_log(z, gas_constant, t1, ln_overall, k, stages);
    (iso, single, staged)
}

/// The two isentropic references of [`ideal_references_from_log`] without
/// the isothermal one (the train takes that from the gas model): (one
/// uncooled isentropic stage, `stages` ideal intercooled isentropic stages),
/// J/kg. Each equal-ratio stage's head is taken from ln r / `stages`
/// directly (the stage ratio itself is never formed: no exponential and
/// logarithm of it).
#[inline]
pub fn isentropic_references_from_log<T: Real>(
    z: T,
    gas_constant: T,
    t1: T,
    ln_overall: T,
    k: T,
    stages: u32,
) -> (T, T) {
    let single = isentropic_head_from_log(z, gas_constant, t1, ln_overall, k);
    let s = T::of(stages as f64);
    let staged = s * isentropic_head_from_log(z, gas_constant, t1, ln_overall / s, k);
    (single, staged)
}

/// Quality of the isothermal reference's end states. Isothermal
/// compression at the first suction temperature may end in a dense or
/// liquid-like state (CO2 below its critical temperature): the Gibbs
/// energy rise is still the reversible work, but a cubic's dense root is an
/// estimate, so a liquid-like end is uncertain rather than bad.
#[inline]
pub fn isothermal_reference_quality(v: Validity) -> Quality {
    match v.reason {
        ValidityReason::LiquidLike => Quality::Uncertain,
        _ => v.quality,
    }
}

/// Sum of values with the worst of their qualities.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Sum<T> {
    pub value: T,
    pub quality: Quality,
    pub count: u8,
}

impl<T: Real> Sum<T> {
    pub fn new() -> Self {
        Sum {
            value: T::ZERO,
            quality: Quality::Good,
            count: 0,
        }
    }
    pub fn add(&mut self, m: Measured<T>) {
        self.value += m.value;
        self.quality = self.quality.worst(m.quality);
        self.count = self.count.saturating_add(1);
    }
    pub fn get(&self) -> Measured<T> {
        if self.count == 0 {
            Measured::bad()
        } else {
            Measured::derived(self.value, self.quality)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn equal_ratio_pressures_give_equal_stage_ratios() {
        // Çengel & Boles: 100 -> 900 kPa in two stages, interstage 300 kPa.
        let p = equal_ratio_interstage_pressure(100e3_f64, 9.0, 2, 0);
        assert!((p - 300e3).abs() < 1e-6);
        let ps: std::vec::Vec<f64> = (0..4)
            .map(|i| equal_ratio_interstage_pressure(1e5, 16.0, 4, i))
            .collect();
        for w in ps.windows(2) {
            assert!((w[1] / w[0] - 2.0).abs() < 1e-12);
        }
        assert!((ps[3] - 16e5).abs() < 1e-6);
    }

    #[test]
    fn staged_reference_is_stages_times_one_equal_ratio_stage() {
        // Çengel & Boles, ch. 7 (two-stage compression with perfect
        // intercooling): air, 100 kPa -> 900 kPa in two stages of ratio 3
        // from 300 K; isentropic work per stage cp·T1·(3^((k-1)/k) - 1)
        // with cp = k·R/(k-1). The closed form is evaluated here
        // (consistency check of the ln r / N route against the stage ratio).
        let (r, k, t1) = (287.0_f64, 1.4_f64, 300.0_f64);
        let per_stage = k * r / (k - 1.0) * t1 * (3.0_f64.powf((k - 1.0) / k) - 1.0);
        let (single, staged) = isentropic_references_from_log(1.0, r, t1, 9.0_f64.ln(), k, 2);
        assert!((staged - 2.0 * per_stage).abs() < 1e-9 * per_stage);
        let one = k * r / (k - 1.0) * t1 * (9.0_f64.powf((k - 1.0) / k) - 1.0);
        assert!((single - one).abs() < 1e-9 * one);
        // The three-value form carries the same two.
        let (_, s3, st3) = ideal_references(1.0, r, t1, 9.0, k, 2);
        assert_eq!((s3, st3), (single, staged));
    }

    #[test]
    fn isothermal_below_staged_below_single() {
        let (iso, single, staged) = ideal_references(1.0_f64, 287.0, 300.0, 9.0, 1.4, 2);
        assert!(iso < staged && staged < single);
    }
}
