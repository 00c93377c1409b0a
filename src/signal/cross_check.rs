//! Analytical redundancy between channels: relations the physics guarantees,
//! used to expose a wrong transmitter that passes its own checks.
//!
//! - A compressor's discharge pressure is above its suction pressure.
//! - A cooler's gas outlet is below its gas inlet and above its coolant
//!   inlet (second law; common practice in heat-exchanger monitoring).
//! - A differential pressure across a flow element is not negative beyond
//!   its noise (forward flow).
//! - The discharge temperature follows from the pressure ratio and the
//!   stage's polytropic efficiency, T2 = T1·r^((k−1)/(k·ηp)) (the polytropic
//!   relation; e.g. Saravanamuttoo et al., *Gas Turbine Theory*). The
//!   efficiency moves slowly; a large, sudden disagreement is far more
//!   likely a failing sensor than a collapsing machine.
//! - Mass balance along the train (steady state, known side draws).
//!
//! Each check that fails marks the values involved uncertain with
//! [`FaultCode::CrossCheck`]; it never hides them.

use super::pipeline::ChannelOutput;
use super::FaultCode;
use crate::error::{check_positive, check_range, ConfigError};
use crate::quality::{Measured, Quality};
use crate::real::Real;

fn usable<T: Real>(c: &ChannelOutput<T>) -> bool {
    c.status.quality.is_usable()
}

/// Discharge pressure must not be below suction pressure by more than
/// `allowance` (Pa; the two instruments' tolerances). On failure both are
/// marked uncertain (which one is wrong cannot be told). Returns `true` if
/// the check passed or could not be made (a bad input).
pub fn discharge_above_suction<T: Real>(
    suction: &mut ChannelOutput<T>,
    discharge: &mut ChannelOutput<T>,
    allowance: T,
) -> bool {
    if !(usable(suction) && usable(discharge)) {
        return true;
    }
    if discharge.filtered.value < suction.filtered.value - allowance {
        suction.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        discharge.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        return false;
    }
    true
}

/// A cooler's gas outlet temperature must be below its gas inlet and above
/// its coolant inlet, each within `allowance` (K). A failing pair is marked
/// uncertain. Returns `true` if both relations hold (or could not be
/// checked).
pub fn cooler_temperatures<T: Real>(
    gas_inlet: &mut ChannelOutput<T>,
    gas_outlet: &mut ChannelOutput<T>,
    coolant_inlet: &mut ChannelOutput<T>,
    allowance: T,
) -> bool {
    let mut ok = true;
    if usable(gas_inlet)
        && usable(gas_outlet)
        && gas_outlet.filtered.value > gas_inlet.filtered.value + allowance
    {
        gas_inlet.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        gas_outlet.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        ok = false;
    }
    if usable(gas_outlet)
        && usable(coolant_inlet)
        && gas_outlet.filtered.value < coolant_inlet.filtered.value - allowance
    {
        gas_outlet.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        coolant_inlet.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        ok = false;
    }
    ok
}

/// A differential pressure below `-noise` (Pa) is marked uncertain
/// (reverse flow or swapped impulse lines). Returns `true` if it passed.
pub fn differential_not_negative<T: Real>(dp: &mut ChannelOutput<T>, noise: T) -> bool {
    if usable(dp) && dp.raw.value < -noise {
        dp.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        return false;
    }
    true
}

/// Settings of the discharge-temperature check.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DischargeTemperatureConfig<T> {
    /// Largest accepted |measured − predicted| discharge temperature, K.
    pub tolerance_k: T,
    /// Weight of a new good scan in the efficiency estimate, (0, 1].
    pub smoothing: T,
    /// After this many consecutive disagreeing scans the disagreement is
    /// taken as the new operating state and the efficiency is re-learned.
    pub relearn_scans: u16,
}

impl<T: Real> DischargeTemperatureConfig<T> {
    /// Checks the fields.
    pub fn validate(&self) -> Result<(), ConfigError> {
        check_range(
            "cross_check.tolerance_k",
            self.tolerance_k,
            0.0,
            f64::INFINITY,
        )?;
        check_positive("cross_check.smoothing", self.smoothing)?;
        check_range("cross_check.smoothing", self.smoothing, 0.0, 1.0)?;
        if self.relearn_scans == 0 {
            // 0 would re-learn on the first disagreeing scan: the check
            // could never fail.
            return Err(ConfigError::out_of_range(
                "cross_check.relearn_scans",
                1.0,
                f64::from(u16::MAX),
            ));
        }
        Ok(())
    }
}

/// Outcome of one discharge-temperature check.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DischargeCheck<T> {
    /// Predicted discharge temperature, K (bad if it could not be made).
    pub predicted: Measured<T>,
    /// The recent good polytropic efficiency the prediction used.
    pub polytropic_efficiency: Measured<T>,
    /// `false` if the measured temperature was marked uncertain.
    pub passed: bool,
}

/// State of the discharge-temperature check for one stage.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DischargeTemperatureCheck<T> {
    eta_p: Option<T>,
    disagreeing: u16,
}

impl<T: Real> DischargeTemperatureCheck<T> {
    /// No efficiency learned yet.
    pub const fn new() -> Self {
        DischargeTemperatureCheck {
            eta_p: None,
            disagreeing: 0,
        }
    }

    /// Checks measured discharge temperature `t2` against the prediction
    /// from suction `p1`, `t1`, discharge pressure `p2` (SI) and the
    /// isentropic exponent `k` (> 1, from the gas model). Only all-good
    /// inputs teach the efficiency estimate.
    pub fn check(
        &mut self,
        cfg: &DischargeTemperatureConfig<T>,
        k: T,
        p1: Measured<T>,
        t1: Measured<T>,
        p2: Measured<T>,
        t2: &mut ChannelOutput<T>,
    ) -> DischargeCheck<T> {
        let none = DischargeCheck {
            predicted: Measured::bad(),
            polytropic_efficiency: self.eta_p.map_or(Measured::bad(), Measured::good),
            passed: true,
        };
        let q_in = p1.quality.worst(t1.quality).worst(p2.quality);
        if q_in == Quality::Bad || !usable(t2) || !(k > T::ONE) || p1.value <= T::ZERO {
            return none;
        }
        let ln_r = T::ln(p2.value / p1.value);
        let x = (k - T::ONE) / k;
        let t2v = t2.filtered.value;
        let all_good = q_in == Quality::Good && t2.status.quality == Quality::Good;
        // Measured efficiency (only meaningful for compression with a rise).
        let eta_meas = if ln_r > T::of(1e-3) && t2v > t1.value && t1.value > T::ZERO {
            let sigma = T::ln(t2v / t1.value) / ln_r;
            let e = x / sigma;
            (T::is_finite(e) && e > T::of(0.2) && e <= T::ONE).then_some(e)
        } else {
            None
        };
        let Some(eta) = self.eta_p else {
            if all_good {
                self.eta_p = eta_meas;
            }
            return DischargeCheck {
                polytropic_efficiency: self.eta_p.map_or(Measured::bad(), Measured::good),
                ..none
            };
        };
        if !(ln_r > T::ZERO) {
            return none;
        }
        let predicted = t1.value * T::exp(x / eta * ln_r);
        let q_pred = q_in;
        let result = |passed| DischargeCheck {
            predicted: Measured::derived(predicted, q_pred),
            polytropic_efficiency: Measured::good(eta),
            passed,
        };
        if T::abs(t2v - predicted) <= cfg.tolerance_k {
            self.disagreeing = 0;
            if let (true, Some(e)) = (all_good, eta_meas) {
                self.eta_p = Some(eta + cfg.smoothing * (e - eta));
            }
            return result(true);
        }
        self.disagreeing = self.disagreeing.saturating_add(1);
        if self.disagreeing > cfg.relearn_scans {
            if eta_meas.is_some() && all_good {
                self.eta_p = eta_meas;
            }
            self.disagreeing = 0;
            return result(true);
        }
        t2.downgrade(Quality::Uncertain, FaultCode::CrossCheck);
        result(false)
    }
}

/// Mass balance along a train of `N` stages. `flows[i]` is the measured
/// mass flow through stage `i` (kg/s), `side_draws[i]` the known flow
/// leaving between stage `i` and `i + 1` (kg/s). Each usable flow is
/// referred to stage 0 by adding the draws upstream of it. With two usable
/// flows disagreeing by more than `tolerance` (fraction of the larger) both
/// are marked uncertain; with three or more, those farther than `tolerance`
/// from the median are (a drifting transmitter is outvoted). Returns how
/// many flows were marked. A `tolerance` that is not finite or outside
/// [0, 1] cannot check anything: every usable flow is marked uncertain
/// (fail safe: the check never silently passes).
pub fn mass_balance<T: Real, const N: usize>(
    flows: &mut [Option<Measured<T>>; N],
    side_draws: &[T; N],
    tolerance: T,
) -> u8 {
    let mut referred = [T::ZERO; N];
    let mut used = [false; N];
    let mut upstream_draws = T::ZERO;
    let mut count = 0usize;
    for (((f, d), r), u) in flows
        .iter()
        .zip(side_draws.iter())
        .zip(referred.iter_mut())
        .zip(used.iter_mut())
    {
        if let Some(m) = f {
            if m.quality.is_usable() && T::is_finite(m.value) {
                *r = m.value + upstream_draws;
                *u = true;
                count += 1;
            }
        }
        if T::is_finite(*d) {
            upstream_draws += *d;
        }
    }
    let tolerance_ok = T::is_finite(tolerance) && tolerance >= T::ZERO && tolerance <= T::ONE;
    if !tolerance_ok {
        let mut marked = 0u8;
        for (f, _) in flows.iter_mut().zip(used.iter()).filter(|(_, u)| **u) {
            if let Some(v) = f {
                *v = v.at_most(Quality::Uncertain);
                marked = marked.saturating_add(1);
            }
        }
        return marked;
    }
    if count < 2 {
        return 0;
    }
    // Median of the referred usable flows (N·N/2 comparisons at most).
    let mut sorted = [T::ZERO; N];
    let mut n = 0usize;
    for (r, _) in referred.iter().zip(used.iter()).filter(|(_, u)| **u) {
        if let Some(s) = sorted.get_mut(n) {
            *s = *r;
            n += 1;
        }
    }
    let s = sorted.get_mut(..n).unwrap_or(&mut []);
    super::filter::sort_ascending(s);
    let lo = s.first().copied().unwrap_or(T::ZERO);
    let hi = s.last().copied().unwrap_or(T::ZERO);
    let scale = |a: T, b: T| T::max(T::max(T::abs(a), T::abs(b)), T::EPSILON);
    let mut marked = 0u8;
    let mark = |m: &mut Option<Measured<T>>| {
        if let Some(v) = m {
            *v = v.at_most(Quality::Uncertain);
        }
    };
    if n == 2 {
        if hi - lo > tolerance * scale(lo, hi) {
            for (f, _) in flows.iter_mut().zip(used.iter()).filter(|(_, u)| **u) {
                mark(f);
                marked = marked.saturating_add(1);
            }
        }
        return marked;
    }
    let median = s.get(n / 2).copied().unwrap_or(T::ZERO);
    for ((f, r), _) in flows
        .iter_mut()
        .zip(referred.iter())
        .zip(used.iter())
        .filter(|(_, u)| **u)
    {
        if T::abs(*r - median) > tolerance * scale(*r, median) {
            mark(f);
            marked = marked.saturating_add(1);
        }
    }
    marked
}
