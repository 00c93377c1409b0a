//! The head number's exponent σ = (n − 1)/n from the measured suction and
//! discharge temperatures, filtered, bounded, with a fallback.
//!
//! Source (from memory): along a polytropic path of an ideal gas with
//! constant heat capacities `T2/T1 = r^σ` with `σ = (k − 1)/(k·η_p)`
//! (polytropic efficiency η_p, isentropic exponent k; Schultz, "The
//! polytropic analysis of centrifugal compressors", ASME J. Eng. Power 84
//! (1962), and any compressor textbook), so
//!
//! ```text
//! σ = ln(T2/T1) / ln(p2/p1)
//! ```
//!
//! and the head number becomes `Y = (r^σ − 1)/σ = (T2/T1 − 1)/σ`: the
//! polytropic head over `Z1 R T1`, with the machine's own exponent instead of
//! a configured one. The kernel uses the suction compressibility only (the
//! map's `Z R Ts` scale): a real gas whose Z changes along the path has a
//! volume exponent `ln(Z2 T2/(Z1 T1))/ln r` slightly different from the
//! temperature exponent, and that difference is the error that remains
//! (measured against CoolProp HEOS paths in `tests/surge_exponent.rs`: at
//! most 0.016 of margin for methane at 30 → 120 bar, where Z rises from
//! 0.95 to 1.00; the configured exponent errs by up to 0.10 on heavy gases).
//!
//! # Plausibility and fallback
//!
//! - **Bounds** `σ ∈ [0.04, 0.80]` ([`SIGMA_MIN`], [`SIGMA_MAX`]): real
//!   process gases have `k` from about 1.05 (heavy hydrocarbons,
//!   refrigerants) to 5/3 (helium, argon), and compressor polytropic
//!   efficiencies lie between 0.5 (a badly fouled or recycling machine) and
//!   1, so `(k−1)/(k η_p)` lies in `[0.048, 0.80]`; the lower end is widened
//!   a little for real-gas temperature exponents (n-butane at 85 % gives
//!   0.092 in the reference paths, so the bound is not tight there).
//!   Outside: a wrong temperature (a failed sensor, a thermowell in a
//!   recycle stream) or a wrong pressure.
//! - **Temperature rise** `T2 − T1 ≥ 20 δT` ([`RISE_PER_ACCURACY`], δT the
//!   configured temperature-sensor accuracy): with errors of δT on both
//!   sensors `ln(T2/T1)` errs by up to `2 δT / ΔT`, so 20 accuracies keep σ
//!   within 10 %. With δT = 0.5 K and 300 K suction that is a 10 K rise:
//!   a pressure ratio of about 1.12 at σ = 0.3 and 1.26 at σ = 0.14 (heavy
//!   gas). Below it (start-up, idling at low head) σ is not meaningful.
//! - Temperatures must be **good** (an uncertain temperature may be a held
//!   or frozen value) and finite and positive.
//!
//! A sample failing any check does not enter the filter. The last filtered
//! σ is then held ([`ExponentSource::Held`], uncertain) for one filter time
//! constant after the last valid sample, then the configured σ is used
//! ([`ExponentSource::Fallback`], uncertain). The filter is first order with
//! time constant τ_σ in seconds and uses the measured scan time: σ changes
//! with gas composition and fouling (minutes to months), while the discharge
//! temperature lags the pressure by the thermowell's time constant (tens of
//! seconds), so τ_σ of a minute or more keeps transients out of σ. Until
//! the filter has run one τ_σ after a start the measured σ is used but
//! reported uncertain ([`ExponentFault::Settling`]).
//!
//! Cost per scan in measured mode: one `ln` and three divisions more than
//! the configured mode (`ln r` is taken once per scan and shared with the
//! head number; the filter gain is formed again only when the scan interval
//! changes); the configured mode skips the estimator.

use super::coordinates::LnRatio;
use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::units::Kelvin;

/// Smallest plausible σ = (n − 1)/n (see the module docs).
pub const SIGMA_MIN: f64 = 0.04;
/// Largest plausible σ = (n − 1)/n (see the module docs).
pub const SIGMA_MAX: f64 = 0.80;
/// The temperature rise must be at least this many sensor accuracies.
pub const RISE_PER_ACCURACY: f64 = 20.0;

/// Settings of the measured-exponent mode. Ranges are checked by
/// [`super::SurgeMonitor::with_measured_exponent`]; errors name the field as
/// `surge_monitor.exponent.<field>`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExponentConfig<T> {
    /// Time constant τ_σ of the first-order σ filter, s, in [1, 3600]; a
    /// minute or more (longer than the thermowell's lag) is a sound choice.
    pub filter_time: T,
    /// Accuracy δT of each temperature measurement, K, in [0.01, 5] (about
    /// 0.5 K for a class A RTD with its transmitter: common practice).
    pub temperature_accuracy: T,
}

/// Where the σ of a scan came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ExponentSource {
    /// The configured σ (configured-exponent mode): good.
    #[default]
    Configured,
    /// The filtered σ from the measured temperatures.
    Measured,
    /// The last filtered σ, held after the present sample failed (uncertain).
    Held,
    /// The configured σ because no recent measured σ exists (uncertain).
    Fallback,
}

/// Why the measured σ is not good (`None` when it is, or in configured mode).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ExponentFault {
    /// No fault.
    #[default]
    None,
    /// A temperature or pressure is not good, not finite or not positive.
    InputBad,
    /// The temperature rise is below [`RISE_PER_ACCURACY`] sensor
    /// accuracies (pressure ratio too small).
    RiseTooSmall,
    /// σ outside [[`SIGMA_MIN`], [`SIGMA_MAX`]].
    OutOfBounds,
    /// The filter has run less than one time constant.
    Settling,
}

/// The σ used for one scan and where it came from.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExponentState<T> {
    /// σ = (n − 1)/n used for the head number.
    pub sigma: Measured<T>,
    /// Where it came from.
    pub source: ExponentSource,
    /// Why the measured σ was not used or is not good.
    pub fault: ExponentFault,
}

/// One raw σ from a pair of temperatures and the pressure ratio, checked
/// against the rise and the bounds (see the module docs).
pub fn measured_sigma<T: Real>(
    suction_temperature: Measured<Kelvin<T>>,
    discharge_temperature: Measured<Kelvin<T>>,
    ratio: T,
    temperature_accuracy: T,
) -> Result<T, ExponentFault> {
    measured_sigma_with(
        suction_temperature,
        discharge_temperature,
        ratio,
        temperature_accuracy,
        &mut LnRatio::new(),
    )
}

/// [`measured_sigma`] taking `ln r` from (and leaving it in) `ln_ratio`, so
/// the head number of the same scan reuses it.
fn measured_sigma_with<T: Real>(
    suction_temperature: Measured<Kelvin<T>>,
    discharge_temperature: Measured<Kelvin<T>>,
    ratio: T,
    temperature_accuracy: T,
    ln_ratio: &mut LnRatio<T>,
) -> Result<T, ExponentFault> {
    let t1 = suction_temperature.value.kelvin();
    let t2 = discharge_temperature.value.kelvin();
    // The checks in one pass: good temperatures, `T1 > 0`, the rise and
    // `r > 1`, then σ within its bounds. They accept exactly the samples the
    // documented checks accept (`rejected`): a non-finite `T1` fails the
    // rise (−∞ or NaN); then a non-finite `T2` or `r` gives a σ that is
    // infinite, NaN or 0, outside the bounds; `T2 > 0` and `r > 0` follow
    // from the rise and `r > 1`. A rejected sample is classified in the
    // documented order.
    let early = suction_temperature
        .quality
        .worst(discharge_temperature.quality)
        == Quality::Good
        && t1 > T::ZERO
        && t2 - t1 >= T::of(RISE_PER_ACCURACY) * temperature_accuracy
        && ratio > T::ONE;
    if !early {
        return Err(rejected(suction_temperature, discharge_temperature, ratio));
    }
    let sigma = T::ln(t2 / t1) / ln_ratio.of(ratio);
    if sigma >= T::of(SIGMA_MIN) && sigma <= T::of(SIGMA_MAX) {
        Ok(sigma)
    } else if T::all_finite(&[t1, t2, ratio]) {
        Err(ExponentFault::OutOfBounds)
    } else {
        Err(ExponentFault::InputBad)
    }
}

/// Why a sample failed before σ is formed, in the documented order: a
/// temperature not good, an input not finite or not positive
/// ([`ExponentFault::InputBad`]); the rise too small or `r <= 1`
/// ([`ExponentFault::RiseTooSmall`]).
#[inline(never)]
fn rejected<T: Real>(
    suction_temperature: Measured<Kelvin<T>>,
    discharge_temperature: Measured<Kelvin<T>>,
    ratio: T,
) -> ExponentFault {
    let t1 = suction_temperature.value.kelvin();
    let t2 = discharge_temperature.value.kelvin();
    // Finite and positive: one test on the bits each (the same verdicts).
    let good = suction_temperature
        .quality
        .worst(discharge_temperature.quality)
        == Quality::Good
        && super::positive_finite(t1)
        && super::positive_finite(t2)
        && super::positive_finite(ratio);
    if !good {
        return ExponentFault::InputBad;
    }
    // Only a failed rise or `r <= 1` is left (the one-pass check failed).
    ExponentFault::RiseTooSmall
}

/// The exponent of the head number, per scan: the configured σ, or the
/// filtered σ from the measured temperatures with hold and fallback.
#[derive(Clone, Copy, Debug)]
pub struct ExponentEstimator<T> {
    configured: T,
    measured: Option<ExponentConfig<T>>,
    filtered: Option<T>,
    /// Time the filter has run since it started, s.
    age: T,
    /// Time since the last valid sample, s.
    since_valid: T,
    /// The scan interval the filter gain was last formed for, s (0: none).
    gain_dt: T,
    /// The filter gain `dt / (τ_σ + dt)` for `gain_dt`.
    gain: T,
    state: ExponentState<T>,
}

impl<T: Real> ExponentEstimator<T> {
    /// Configured-exponent mode: always `configured`, good.
    pub fn configured(configured: T) -> Self {
        ExponentEstimator {
            configured,
            measured: None,
            filtered: None,
            age: T::ZERO,
            since_valid: T::ZERO,
            gain_dt: T::ZERO,
            gain: T::ZERO,
            state: ExponentState {
                sigma: Measured::good(configured),
                source: ExponentSource::Configured,
                fault: ExponentFault::None,
            },
        }
    }

    /// Measured-exponent mode (settings assumed checked); the configured σ is
    /// the fallback. Starts in fallback until the first valid sample.
    pub fn measured(configured: T, config: ExponentConfig<T>) -> Self {
        ExponentEstimator {
            measured: Some(config),
            state: ExponentState {
                sigma: Measured::new(configured, Quality::Uncertain),
                source: ExponentSource::Fallback,
                fault: ExponentFault::InputBad,
            },
            ..Self::configured(configured)
        }
    }

    /// Whether σ comes from the measured temperatures (else configured).
    pub fn is_measured(&self) -> bool {
        self.measured.is_some()
    }

    /// The σ of the last scan.
    pub fn state(&self) -> ExponentState<T> {
        self.state
    }

    /// Forgets the filter (after a restart).
    pub fn reset(&mut self) {
        *self = match self.measured {
            Some(c) => Self::measured(self.configured, c),
            None => Self::configured(self.configured),
        };
    }

    /// One scan: temperatures, pressure ratio (`None` if the pressures are
    /// not usable) and the measured time since the previous scan, s (a `dt`
    /// that is not finite or not positive neither advances nor feeds the
    /// filter). Never panics.
    pub fn update(
        &mut self,
        suction_temperature: Measured<Kelvin<T>>,
        discharge_temperature: Measured<Kelvin<T>>,
        ratio: Option<T>,
        dt: T,
    ) -> ExponentState<T> {
        self.update_sharing(
            suction_temperature,
            discharge_temperature,
            ratio,
            dt,
            &mut LnRatio::new(),
        )
    }

    /// [`Self::update`] taking `ln r` from (and leaving it in) `ln_ratio`.
    pub(crate) fn update_sharing(
        &mut self,
        suction_temperature: Measured<Kelvin<T>>,
        discharge_temperature: Measured<Kelvin<T>>,
        ratio: Option<T>,
        dt: T,
        ln_ratio: &mut LnRatio<T>,
    ) -> ExponentState<T> {
        let Some(config) = self.measured else {
            return self.state;
        };
        // Finite and positive: one test on the bits.
        let dt_ok = super::positive_finite(dt);
        let raw = match ratio {
            Some(r) => measured_sigma_with(
                suction_temperature,
                discharge_temperature,
                r,
                config.temperature_accuracy,
                ln_ratio,
            ),
            None => Err(ExponentFault::InputBad),
        };
        let tau = config.filter_time;
        match raw {
            Ok(sigma) => {
                let stale = self.since_valid > tau;
                match self.filtered {
                    Some(_) if stale => {
                        // No valid sample for longer than τ_σ: the gas or
                        // the machine may have changed; start again.
                        self.filtered = Some(sigma);
                        self.age = T::ZERO;
                    }
                    None => {
                        self.filtered = Some(sigma);
                        self.age = T::ZERO;
                    }
                    Some(f) if dt_ok => {
                        // The gain is formed again only when the interval
                        // changes (the same expression, so the same bits).
                        if dt != self.gain_dt {
                            self.gain = dt / (tau + dt);
                            self.gain_dt = dt;
                        }
                        let alpha = self.gain;
                        self.filtered = Some(f + alpha * (sigma - f));
                        self.age = T::min(self.age + dt, tau);
                    }
                    Some(_) => {}
                }
                self.since_valid = T::ZERO;
            }
            Err(_) if dt_ok => {
                self.since_valid = T::min(self.since_valid + dt, tau + tau);
            }
            Err(_) => {}
        }
        self.state = match (raw, self.filtered) {
            (Ok(_), Some(f)) if self.age >= tau => ExponentState {
                sigma: Measured::good(f),
                source: ExponentSource::Measured,
                fault: ExponentFault::None,
            },
            (Ok(_), Some(f)) => ExponentState {
                sigma: Measured::new(f, Quality::Uncertain),
                source: ExponentSource::Measured,
                fault: ExponentFault::Settling,
            },
            (Err(fault), Some(f)) if self.since_valid <= tau => ExponentState {
                sigma: Measured::new(f, Quality::Uncertain),
                source: ExponentSource::Held,
                fault,
            },
            (Err(fault), _) => ExponentState {
                sigma: Measured::new(self.configured, Quality::Uncertain),
                source: ExponentSource::Fallback,
                fault,
            },
            // Unreachable: a valid sample always leaves a filtered value.
            (Ok(_), None) => ExponentState {
                sigma: Measured::new(self.configured, Quality::Uncertain),
                source: ExponentSource::Fallback,
                fault: ExponentFault::InputBad,
            },
        };
        self.state
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    /// The checks exactly as the module docs list them, one after the other.
    fn documented<T: Real>(
        t1: Measured<Kelvin<T>>,
        t2: Measured<Kelvin<T>>,
        ratio: T,
        accuracy: T,
    ) -> Result<T, ExponentFault> {
        let (a, b) = (t1.value.kelvin(), t2.value.kelvin());
        let good = t1.quality == Quality::Good
            && t2.quality == Quality::Good
            && T::is_finite(a)
            && T::is_finite(b)
            && T::is_finite(ratio)
            && a > T::ZERO
            && b > T::ZERO
            && ratio > T::ZERO;
        if !good {
            return Err(ExponentFault::InputBad);
        }
        if !(b - a >= T::of(RISE_PER_ACCURACY) * accuracy) || !(ratio > T::ONE) {
            return Err(ExponentFault::RiseTooSmall);
        }
        let sigma = T::ln(b / a) / T::ln(ratio);
        if T::is_finite(sigma) && sigma >= T::of(SIGMA_MIN) && sigma <= T::of(SIGMA_MAX) {
            Ok(sigma)
        } else {
            Err(ExponentFault::OutOfBounds)
        }
    }

    /// Consistency check: the one-pass checks give the documented verdict
    /// (the same σ bits, or the same fault) over every combination of
    /// special and ordinary temperatures, ratios and qualities.
    fn same_verdict<T: Real>() {
        let values = [
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            0.0,
            -1.0,
            1.0e-40,
            1.0,
            1.0000001,
            1.5,
            3.0,
            250.0,
            300.0,
            305.0,
            380.0,
            450.0,
            1.0e30,
        ];
        let qualities = [Quality::Good, Quality::Uncertain, Quality::Bad];
        let accuracy = T::of(0.5);
        let mut accepted = 0;
        for &a in &values {
            for &b in &values {
                for &r in &values {
                    for &qa in &qualities {
                        for &qb in &qualities[..2] {
                            let t1 = Measured::new(Kelvin::new(T::of(a)), qa);
                            let t2 = Measured::new(Kelvin::new(T::of(b)), qb);
                            let got = measured_sigma(t1, t2, T::of(r), accuracy);
                            let want = documented(t1, t2, T::of(r), accuracy);
                            match (got, want) {
                                (Ok(g), Ok(w)) => {
                                    accepted += 1;
                                    assert_eq!(g.to_f64().to_bits(), w.to_f64().to_bits());
                                }
                                (g, w) => assert_eq!(g, w, "{a} {b} {r} {qa:?} {qb:?}"),
                            }
                        }
                    }
                }
            }
        }
        assert!(accepted > 0);
    }

    #[test]
    fn one_pass_checks_match_the_documented_checks() {
        same_verdict::<f64>();
        same_verdict::<f32>();
    }
}
