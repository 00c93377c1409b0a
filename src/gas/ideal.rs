//! Ideal gas with a compressibility factor.
//!
//! Source: the ideal-gas relations (R = Ru/M, cp - cv = R, k = cp/cv) and the
//! "ideal gas with average Z" approximation used for compressor heads
//! (Çengel & Boles ch. 7; the same convention as the Python package
//! `fluids.compressible`, where Z multiplies the work only). The mean cp over
//! an interval is the exact integral of the cp polynomial divided by the
//! interval.

use super::{builtin::GasSpec, GasModel, PathProperties, PropertyInputs, MOLAR_GAS_CONSTANT};
use crate::error::{check_range, ConfigError, Problem};
use crate::plausibility::COMPRESSIBILITY_RANGE;
use crate::quality::Quality;

/// Largest heat-capacity ratio of an ideal gas: 5/3 (monatomic), as 1.67
/// (tables quote it to two decimals).
pub const MAX_IDEAL_GAS_K: f64 = 1.67;
use crate::real::Real;

/// How the heat capacity is modelled.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum HeatCapacity<T> {
    /// Constant heat-capacity ratio k.
    ConstantK(T),
    /// Ideal-gas cp(T) = a + bT + cT² + dT³ in J/(mol K), evaluated with T
    /// clamped to [t_min, t_max] K (the fit's validity range).
    Polynomial {
        /// a, b, c, d in J/(mol K), T in K.
        coefficients: [T; 4],
        /// Lowest valid temperature, K.
        t_min: T,
        /// Highest valid temperature, K.
        t_max: T,
    },
}

/// An ideal gas with a mean compressibility factor; validated at
/// construction.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct IdealGas<T> {
    gas_constant: T,
    /// cp model, stored per kg: `ConstantK(k)` or polynomial in J/(kg K).
    heat_capacity: HeatCapacity<T>,
    compressibility: T,
}

impl<T: Real> IdealGas<T> {
    /// A gas from its molar mass (kg/kmol), heat-capacity model and mean
    /// compressibility factor Z.
    pub fn new(
        molar_mass: T,
        heat_capacity: HeatCapacity<T>,
        compressibility: T,
    ) -> Result<Self, ConfigError> {
        // Hydrogen (2.016) is the lightest process gas; 500 kg/kmol is above
        // any gas a compressor handles (common practice).
        check_range("gas.molar_mass", molar_mass, 1.0, 500.0)?;
        check_range(
            "gas.compressibility",
            compressibility,
            COMPRESSIBILITY_RANGE.0,
            COMPRESSIBILITY_RANGE.1,
        )?;
        let gas_constant = T::of(MOLAR_GAS_CONSTANT * 1.0e3) / molar_mass;
        if !T::is_finite(gas_constant) {
            return Err(ConfigError::out_of_range(
                "gas.molar_mass",
                0.0,
                f64::INFINITY,
            ));
        }
        let heat_capacity = match heat_capacity {
            HeatCapacity::ConstantK(k) => {
                // An ideal gas has 1 < k <= 5/3 (a monatomic gas is the
                // upper limit: cp >= 5R/2; Çengel & Boles Table A-2).
                check_range("gas.k", k, 1.0, MAX_IDEAL_GAS_K)?;
                if !(k > T::ONE) {
                    return Err(ConfigError::out_of_range("gas.k", 1.0, MAX_IDEAL_GAS_K));
                }
                HeatCapacity::ConstantK(k)
            }
            HeatCapacity::Polynomial {
                coefficients,
                t_min,
                t_max,
            } => {
                let per_kg = T::of(1.0e3) / molar_mass;
                let c = coefficients.map(|c| c * per_kg);
                if !(T::is_finite(t_min) && T::is_finite(t_max) && t_min > T::ZERO && t_max > t_min)
                {
                    return Err(ConfigError::new(
                        "gas.cp_polynomial.t_max",
                        Problem::NotAbove {
                            other: "gas.cp_polynomial.t_min",
                        },
                    ));
                }
                // cp must exceed R (k > 1, k < 3) and stay finite across
                // the whole range: checked exactly at the ends and at the
                // cubic's critical points inside (its minimum is at one of
                // them), not at samples.
                let ok = |t: T| {
                    let cp = cubic(&c, t);
                    let k = cp / (cp - gas_constant);
                    T::is_finite(cp) && T::is_finite(k) && cp > gas_constant && k < T::of(3.0)
                };
                let [inner_a, inner_b] = cubic_critical_points(&c);
                let inside = |t: Option<T>| t.filter(|&t| t > t_min && t < t_max);
                let points = [Some(t_min), Some(t_max), inside(inner_a), inside(inner_b)];
                if points.iter().flatten().any(|&t| !ok(t)) {
                    return Err(ConfigError::new(
                        "gas.cp_polynomial.coefficients",
                        Problem::NotAbove {
                            other: "gas constant R (cp must exceed R)",
                        },
                    ));
                }
                HeatCapacity::Polynomial {
                    coefficients: c,
                    t_min,
                    t_max,
                }
            }
        };
        Ok(IdealGas {
            gas_constant,
            heat_capacity,
            compressibility,
        })
    }

    /// A built-in gas with constant k (`polynomial = false`) or cp(T).
    pub fn from_spec(
        spec: &GasSpec,
        polynomial: bool,
        compressibility: T,
    ) -> Result<Self, ConfigError> {
        let hc = if polynomial {
            HeatCapacity::Polynomial {
                coefficients: spec.cp.coefficients.map(T::of),
                t_min: T::of(spec.cp.t_min),
                t_max: T::of(spec.cp.t_max),
            }
        } else {
            HeatCapacity::ConstantK(T::of(spec.k))
        };
        Self::new(T::of(spec.molar_mass), hc, compressibility)
    }

    /// Mean compressibility factor used when none is supplied per scan.
    pub fn compressibility(&self) -> T {
        self.compressibility
    }

    /// Mean cp over [t1, t2], J/(kg K).
    pub fn mean_cp(&self, t1: T, t2: T) -> T {
        match self.heat_capacity {
            HeatCapacity::ConstantK(k) => k * self.gas_constant / (k - T::ONE),
            HeatCapacity::Polynomial {
                coefficients: c,
                t_min,
                t_max,
            } => {
                let a = T::clamp(t1, t_min, t_max);
                let b = T::clamp(t2, t_min, t_max);
                mean_cubic(&c, a, b)
            }
        }
    }
}

#[inline]
fn cubic<T: Real>(c: &[T; 4], t: T) -> T {
    let [a, b, cc, d] = *c;
    a + t * (b + t * (cc + t * d))
}

/// The real roots of d(cp)/dT = c1 + 2·c2·T + 3·c3·T² (the cubic's
/// critical points), if any.
#[inline]
fn cubic_critical_points<T: Real>(c: &[T; 4]) -> [Option<T>; 2] {
    let [_, c1, c2, c3] = *c;
    let (a, b) = (T::of(3.0) * c3, T::of(2.0) * c2);
    if a == T::ZERO {
        return [if b == T::ZERO { None } else { Some(-c1 / b) }, None];
    }
    let disc = b * b - T::of(4.0) * a * c1;
    if !(disc >= T::ZERO) {
        return [None, None];
    }
    let r = T::sqrt(disc);
    let two_a = T::of(2.0) * a;
    [Some((-b - r) / two_a), Some((-b + r) / two_a)]
}

/// (1/(b-a)) ∫_a^b cp dT in closed form; no division by (b - a), so it is
/// exact and finite also for a == b.
#[inline]
fn mean_cubic<T: Real>(c: &[T; 4], a: T, b: T) -> T {
    let [c0, c1, c2, c3] = *c;
    let s = a + b;
    let q = a * a + b * b;
    c0 + c1 * s * T::of(0.5) + c2 * (q + a * b) * T::of(1.0 / 3.0) + c3 * s * q * T::of(0.25)
}

impl<T: Real> GasModel<T> for IdealGas<T> {
    #[inline]
    fn gas_constant(&self) -> T {
        self.gas_constant
    }

    #[inline]
    fn path(&self, _p1: T, t1: T, _p2: T, t2: T, z_supplied: Option<T>) -> PathProperties<T> {
        let cp = self.mean_cp(t1, t2);
        let k = match self.heat_capacity {
            HeatCapacity::ConstantK(k) => k,
            HeatCapacity::Polynomial { .. } => cp / (cp - self.gas_constant),
        };
        let z = match z_supplied {
            Some(z) if T::is_finite(z) && z > T::ZERO && z <= T::of(2.0) => z,
            _ => self.compressibility,
        };
        PathProperties {
            gas_constant: self.gas_constant,
            k,
            cp,
            z,
        }
    }

    /// A cp(T) polynomial is valid over its fit range only: outside it the
    /// mean cp is that of the clamped temperature (uncertain).
    #[inline]
    fn fit_quality(&self, t_a: T, t_b: T) -> Quality {
        match self.heat_capacity {
            HeatCapacity::ConstantK(_) => Quality::Good,
            HeatCapacity::Polynomial { t_min, t_max, .. } => {
                if T::min(t_a, t_b) >= t_min && T::max(t_a, t_b) <= t_max {
                    Quality::Good
                } else {
                    Quality::Uncertain
                }
            }
        }
    }

    #[inline]
    fn property_inputs(&self) -> PropertyInputs {
        PropertyInputs {
            temperature: matches!(self.heat_capacity, HeatCapacity::Polynomial { .. }),
            pressure: false,
            compressibility_from_state: false,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::gas::{AIR, BUILTIN_GASES};

    #[test]
    fn air_gas_constant_matches_cengel_table_a1() {
        // Çengel & Boles Table A-1: R(air) = 0.2870 kJ/(kg K).
        let g = IdealGas::<f64>::from_spec(&AIR, false, 1.0).unwrap();
        assert!((g.gas_constant() - 287.0).abs() < 0.1);
        // cp = kR/(k-1) = 1.0045 kJ/(kg K) (A-2a lists 1.005).
        assert!((g.mean_cp(300.0, 300.0) - 1004.5).abs() < 1.0);
    }

    #[test]
    fn polynomial_mean_equals_numeric_average() {
        let g = IdealGas::<f64>::from_spec(&AIR, true, 1.0).unwrap();
        let (a, b) = (300.0, 700.0);
        let n = 4000;
        let num: f64 = (0..n)
            .map(|i| {
                g.mean_cp(
                    a + (b - a) * (i as f64 + 0.5) / n as f64,
                    a + (b - a) * (i as f64 + 0.5) / n as f64,
                )
            })
            .sum::<f64>()
            / n as f64;
        assert!((g.mean_cp(a, b) - num).abs() < 1e-6 * num);
    }

    #[test]
    fn a_cp_dip_between_samples_is_refused() {
        // Issue 11: a cubic that dips below R between the 33 samples the old
        // check used was accepted (k < 0, good heads). Here cp(T) =
        // R·(0.5 + 0.01·(T - T0)²), a dip placed between two
        // sample points of [273, 1000]: the minimum at T0 = 284.36 K (a
        // critical point) is 0.5·R; the samples at 273 + 727·i/32 are
        // 11.36 K either side, where cp is 1.79·R (k = 2.27, accepted).
        let r = MOLAR_GAS_CONSTANT;
        let t0: f64 = 273.0 + 727.0 * 0.5 / 32.0; // between samples 0 and 1
        let w = 1e-2;
        let (a, b, c) = (r * (0.5 + w * t0 * t0), -2.0 * r * w * t0, r * w);
        let dip = HeatCapacity::Polynomial {
            coefficients: [a, b, c, 0.0],
            t_min: 273.0,
            t_max: 1000.0,
        };
        // The old 33-sample test would pass: every sample exceeds R.
        let cp = |t: f64| a + t * (b + t * c);
        assert!((0..=32).all(|i| cp(273.0 + 727.0 * f64::from(i) / 32.0) > r * 1.7));
        assert!(cp(t0) < r);
        assert_eq!(
            IdealGas::<f64>::new(28.0, dip, 1.0).map(|_| ()),
            Err(ConfigError::new(
                "gas.cp_polynomial.coefficients",
                Problem::NotAbove {
                    other: "gas constant R (cp must exceed R)"
                }
            ))
        );
        assert_eq!(
            cubic_critical_points(&[a, b, c, 0.0])[0].map(|t| (t - t0).abs() < 1e-9),
            Some(true)
        );
    }

    #[test]
    fn every_builtin_is_valid_both_ways() {
        for spec in BUILTIN_GASES {
            assert!(
                IdealGas::<f32>::from_spec(&spec, false, 1.0).is_ok(),
                "{}",
                spec.name
            );
            assert!(
                IdealGas::<f32>::from_spec(&spec, true, 1.0).is_ok(),
                "{}",
                spec.name
            );
        }
    }

    #[test]
    fn bad_configuration_names_the_field() {
        // Issue 11: molar mass 1e-30 and 1e30, k 2.99 and Z 0.01 were
        // accepted.
        let k = HeatCapacity::ConstantK(1.4);
        let range = |f, lo, hi| Err(ConfigError::out_of_range(f, lo, hi));
        for m in [0.0, -28.0, 1e-30, 1e30, 0.5, 600.0] {
            assert_eq!(
                IdealGas::<f64>::new(m, k, 1.0),
                range("gas.molar_mass", 1.0, 500.0),
                "{m}"
            );
        }
        assert_eq!(
            IdealGas::<f64>::new(f64::NAN, k, 1.0),
            Err(ConfigError::not_finite("gas.molar_mass"))
        );
        for kv in [1.0, 0.9, 2.99, 1.7] {
            assert_eq!(
                IdealGas::<f64>::new(28.0, HeatCapacity::ConstantK(kv), 1.0),
                range("gas.k", 1.0, MAX_IDEAL_GAS_K),
                "{kv}"
            );
        }
        assert!(IdealGas::<f64>::new(4.0, HeatCapacity::ConstantK(1.67), 1.0).is_ok());
        for z in [0.0, 0.01, 2.5] {
            assert_eq!(
                IdealGas::<f64>::new(28.0, k, z),
                range("gas.compressibility", 0.05, 2.0),
                "{z}"
            );
        }
        assert_eq!(
            IdealGas::<f64>::new(28.0, k, f64::INFINITY),
            Err(ConfigError::not_finite("gas.compressibility"))
        );
        let bad_poly = HeatCapacity::Polynomial {
            coefficients: [1.0, 0.0, 0.0, 0.0],
            t_min: 273.0,
            t_max: 1000.0,
        };
        assert_eq!(
            IdealGas::<f64>::new(28.0, bad_poly, 1.0),
            Err(ConfigError::new(
                "gas.cp_polynomial.coefficients",
                Problem::NotAbove {
                    other: "gas constant R (cp must exceed R)"
                }
            ))
        );
    }

    #[test]
    fn supplied_compressibility_overrides_only_when_valid() {
        let g = IdealGas::<f64>::from_spec(&AIR, false, 0.95).unwrap();
        assert_eq!(g.path(1e5, 300.0, 2e5, 350.0, Some(0.9)).z, 0.9);
        assert_eq!(g.path(1e5, 300.0, 2e5, 350.0, Some(f64::NAN)).z, 0.95);
        assert_eq!(g.path(1e5, 300.0, 2e5, 350.0, None).z, 0.95);
    }
}
