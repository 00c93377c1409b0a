//! Staging with intercooling: the whole-train ideal references.
//!
//! Sources: Çengel & Boles, *Thermodynamics: An Engineering Approach*,
//! ch. 7, "Multistage compression with intercooling": with perfect
//! intercooling back to the suction temperature, the total work of N ideal
//! stages is least when every stage has the same pressure ratio,
//! r_stage = r^(1/N), so the optimum interstage pressures are
//! p_i = p_suction · r^(i/N). The isothermal work Z·R·T1·ln r is the limit as
//! N grows; one uncooled isentropic stage is the other extreme.

use crate::compression::{
    isentropic_exponent_term, isentropic_head_from_log, isothermal_head_from_log,
};
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

/// [`isentropic_references_from_log`] (the same staged reference bit for
/// bit: ln r · 1/stages equals ln r / stages exactly for a power of two,
/// and the head's factors are formed in the same order; `inverse` =
/// 1/`stages`), with one exponential instead of two for a power-of-two
/// number of compressor stages up to 8 where the pressure ratio is not
/// close to one (else the same single-stage reference bit for bit too).
/// The single-stage one then uses
/// r^m - 1 = e^s - 1 with e = r^(m/s), s = `stages` = 2^j, and the
/// factorisation e^s - 1 = (e - 1)·(e + 1)·(e² + 1)···(e^(s/2) + 1) (an
/// algebraic identity): its error is that of e relative to e - 1 (e - 1
/// itself is exact for e up to 2, Sterbenz's lemma) plus a few roundings,
/// so it is used from e - 1 = 1/16 on (there at most about 17 roundings of
/// e; below, the single-stage exponential as before, bit for bit). A
/// rounding change only: never more than 2e-6 relative above the
/// two-exponential form's error (unit test below), inside
/// `tolerance::SPECIFIC_WORK`. `count` (`stages` as `T`) and `halving`
/// ([`halving_applies`]`(stages)`) are constants of the train, computed
/// once at construction.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
pub(crate) fn isentropic_references_halving<T: Real>(
    z: T,
    gas_constant: T,
    t1: T,
    ln_overall: T,
    k: T,
    stages: u8,
    count: T,
    inverse: T,
    halving: bool,
) -> (T, T) {
    let m = isentropic_exponent_term(k);
    let zrt = z * gas_constant * t1;
    let s = count;
    // ln r / stages: exactly ln r · 1/stages for a power of two.
    let stage_log = if halving {
        ln_overall * inverse
    } else {
        ln_overall / s
    };
    let e = T::exp(m * stage_log);
    let e_minus_one = e - T::ONE;
    // Near a ratio of one, e - 1 cancels: its relative error (that of e
    // over e - 1) would pass to the single-stage reference `stages` times
    // magnified. From e - 1 = 1/16 on it is at most about 17 roundings of
    // e; below, the single-stage exponential of its own, as before.
    let single_factor = if halving && T::greater_not_nan(e_minus_one, T::of(0.0625)) {
        let mut factor = e_minus_one;
        let mut power = e;
        let mut left = stages;
        while left > 1 {
            factor = factor * (power + T::ONE);
            power = power * power;
            left >>= 1;
        }
        factor
    } else {
        T::exp(m * ln_overall) - T::ONE
    };
    let single = zrt * single_factor / m;
    let staged = s * (zrt * e_minus_one / m);
    (single, staged)
}

/// Whether [`isentropic_references_halving`] may take its one-exponential
/// form for `stages` compressor stages: a power of two up to 8.
#[inline]
pub(crate) fn halving_applies(stages: u8) -> bool {
    stages.is_power_of_two() && stages <= 8
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
    /// [`Sum::add`] without the count, for a caller that knows how many
    /// terms it adds.
    #[inline(always)]
    pub fn add_term(&mut self, m: Measured<T>) {
        self.value += m.value;
        self.quality = self.quality.worst(m.quality);
    }
    /// [`Sum::get`] of a sum known to have at least one term.
    #[inline(always)]
    pub fn total(&self) -> Measured<T> {
        Measured::derived(self.value, self.quality)
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

    /// Consistency check (the project's own isentropic references, two
    /// forms, against their f64 evaluation from the same f32 inputs): the
    /// one-exponential form gives the staged reference bit for bit for
    /// every stage count, the single-stage one too for stage counts that
    /// are not a power of two up to 8, and for those never more than 2e-6
    /// (relative) less accurate than the two-exponential form, over seeded
    /// random ratios (1.02 to 1000), k, Z, R and suction temperatures.
    #[test]
    fn halving_references_equal_the_two_exponential_ones() {
        // With `approx-math` the f32 `exp` is micromath's, whose own error
        // (against the f64 reference) the one-exponential form carries into
        // e^s - 1, where two exponentials partly cancel theirs: a looser
        // slack there (measured: worse by at most 2.4e-3, halving form 3.1e-3
        // from the f64 value, inside that build's 5e-2 specific-work
        // tolerance).
        const SLACK: f64 = if cfg!(feature = "approx-math") {
            5e-3
        } else {
            2e-6
        };
        let mut next = crate::xorshift32(0x5eed_c001);
        let mut unit = || f64::from(next()) / f64::from(u32::MAX);
        let mut worst = (0.0_f64, 0.0_f64);
        let mut worse_by = 0.0_f64;
        for _ in 0..20_000 {
            let ratio = 10f64.powf(0.0086 + 2.99 * unit()) as f32;
            let k = (1.05 + 0.62 * unit()) as f32;
            let t1 = (250.0 + 150.0 * unit()) as f32;
            let z = (0.8 + 0.2 * unit()) as f32;
            let r = (100.0 + 400.0 * unit()) as f32;
            let ln = <f32 as Real>::ln(ratio);
            for stages in [1_u8, 2, 3, 4, 5, 6, 8, 16] {
                let inverse = 1.0 / f32::from(stages);
                let (single, staged) = isentropic_references_halving(
                    z,
                    r,
                    t1,
                    ln,
                    k,
                    stages,
                    f32::from(stages),
                    inverse,
                    halving_applies(stages),
                );
                let (single_ref, staged_ref) =
                    isentropic_references_from_log(z, r, t1, ln, k, u32::from(stages));
                assert_eq!(
                    staged.to_bits(),
                    staged_ref.to_bits(),
                    "{ratio} {k} {stages}"
                );
                let (exact, _) = isentropic_references_from_log(
                    f64::from(z),
                    f64::from(r),
                    f64::from(t1),
                    f64::from(ln),
                    f64::from(k),
                    u32::from(stages),
                );
                let rel = |x: f32| ((f64::from(x) - exact) / exact).abs();
                worst = (worst.0.max(rel(single)), worst.1.max(rel(single_ref)));
                worse_by = worse_by.max(rel(single) - rel(single_ref));
                // Never more than SLACK (relative) worse than two
                // exponentials (whose own error near a ratio of one is
                // larger than 2e-6).
                assert!(
                    rel(single) <= rel(single_ref) + SLACK,
                    "{ratio} {k} {stages}: {} {}",
                    rel(single),
                    rel(single_ref)
                );
            }
        }
        std::println!(
            "worst relative error: halving {:.2e}, two exponentials {:.2e}, worse by at most {:.2e}",
            worst.0,
            worst.1,
            worse_by
        );
    }
}
