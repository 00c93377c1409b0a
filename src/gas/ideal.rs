//! Ideal gas with a compressibility factor.
//!
//! Source: the ideal-gas relations (R = Ru/M, cp - cv = R, k = cp/cv) and the
//! "ideal gas with average Z" approximation used for compressor heads
//! (Çengel & Boles ch. 7; the same convention as the Python package
//! `fluids.compressible`, where Z multiplies the work only). The mean cp over
//! an interval is the exact integral of the cp polynomial divided by the
//! interval.

use super::{builtin::GasSpec, GasModel, PathProperties, MOLAR_GAS_CONSTANT};
use crate::error::{check_positive, ConfigError, Problem};
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
        check_positive("gas.molar_mass", molar_mass)?;
        if !(T::is_finite(compressibility)
            && compressibility > T::ZERO
            && compressibility <= T::of(2.0))
        {
            return Err(if T::is_finite(compressibility) {
                ConfigError::out_of_range("gas.compressibility", 0.0, 2.0)
            } else {
                ConfigError::not_finite("gas.compressibility")
            });
        }
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
                if !(T::is_finite(k) && k > T::ONE && k < T::of(3.0)) {
                    return Err(if T::is_finite(k) {
                        ConfigError::out_of_range("gas.k", 1.0, 3.0)
                    } else {
                        ConfigError::not_finite("gas.k")
                    });
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
                // cp must exceed R (k > 1) and stay finite across the range.
                let steps = 32;
                for i in 0..=steps {
                    let t = t_min + (t_max - t_min) * T::of(i as f64 / steps as f64);
                    let cp = cubic(&c, t);
                    let k = cp / (cp - gas_constant);
                    if !(T::is_finite(cp) && T::is_finite(k) && cp > gas_constant && k < T::of(3.0))
                    {
                        return Err(ConfigError::new(
                            "gas.cp_polynomial.coefficients",
                            Problem::NotAbove {
                                other: "gas constant R (cp must exceed R)",
                            },
                        ));
                    }
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
        let k = HeatCapacity::ConstantK(1.4);
        assert_eq!(
            IdealGas::<f64>::new(0.0, k, 1.0),
            Err(ConfigError::out_of_range(
                "gas.molar_mass",
                0.0,
                f64::INFINITY
            ))
        );
        assert_eq!(
            IdealGas::<f64>::new(-28.0, k, 1.0),
            Err(ConfigError::out_of_range(
                "gas.molar_mass",
                0.0,
                f64::INFINITY
            ))
        );
        assert_eq!(
            IdealGas::<f64>::new(f64::NAN, k, 1.0),
            Err(ConfigError::not_finite("gas.molar_mass"))
        );
        assert_eq!(
            IdealGas::<f64>::new(28.0, HeatCapacity::ConstantK(1.0), 1.0),
            Err(ConfigError::out_of_range("gas.k", 1.0, 3.0))
        );
        assert_eq!(
            IdealGas::<f64>::new(28.0, HeatCapacity::ConstantK(0.9), 1.0),
            Err(ConfigError::out_of_range("gas.k", 1.0, 3.0))
        );
        assert_eq!(
            IdealGas::<f64>::new(28.0, k, 0.0),
            Err(ConfigError::out_of_range("gas.compressibility", 0.0, 2.0))
        );
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
