//! Ideal gas with a compressibility factor.
//!
//! Source: the ideal-gas relations (R = Ru/M, cp - cv = R, k = cp/cv) and the
//! "ideal gas with average Z" approximation used for compressor heads
//! (Çengel & Boles ch. 7; the same convention as the Python package
//! `fluids.compressible`, where Z multiplies the work only). The mean cp over
//! an interval is the exact integral of the cp polynomial divided by the
//! interval.

use super::{
    builtin::GasSpec, CompressionStates, GasModel, GasState, PathProperties, PropertyInputs,
    Validity, ValidityReason, MOLAR_GAS_CONSTANT, REFERENCE_PRESSURE, REFERENCE_TEMPERATURE,
};
use crate::compression::isentropic_exponent_term;
use crate::error::{check_positive, check_range, ConfigError, Problem};
use crate::plausibility::COMPRESSIBILITY_RANGE;
use crate::quality::Quality;

/// Largest heat-capacity ratio of an ideal gas: 5/3 (monatomic), as 1.67
/// (tables quote it to two decimals).
pub const MAX_IDEAL_GAS_K: f64 = 1.67;
use crate::real::{Real, HARD_FLOAT};

/// Largest value of Pr/Tr³ (reduced pressure over the cube of the reduced
/// temperature) at which the ideal-gas model reports good.
///
/// Pr/Tr³ tracks the size of the second-virial correction the ideal gas
/// ignores (Pitzer's B⁰ ≈ −0.42/Tr^1.6 makes Z − 1 ≈ −0.42·Pr/Tr^2.6) and
/// costs no transcendental function. The limit is derived from the CoolProp
/// 8.0.0 HEOS stage comparison (tests/reference/coolprop_realgas_stages.csv;
/// ideal gas with Z = 1 and k from cp0 at the mean temperature, indicator at
/// discharge pressure and suction temperature): the stages at or below 0.07
/// (air and nitrogen to 30 bar, methane to 9 bar, CO2 to 3.2 bar, hydrogen to
/// 300 bar) miss the real-gas polytropic efficiency by at most 0.4 points,
/// those at 0.16 and above (CO2 from 9 bar, natural gas from 25 bar, methane from
/// 50 bar) by 0.7 to 12.6 points.
pub const IDEAL_GAS_MAX_REDUCED_PRESSURE: f64 = 0.1;

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
///
/// `CP_POLYNOMIAL` (default `true`) says whether the gas may take a cp(T)
/// polynomial ([`HeatCapacity::Polynomial`]). A gas type with
/// `CP_POLYNOMIAL = false` ([`IdealGasConstantK`], built by
/// [`IdealGas::constant_k`] or [`IdealGas::constant_k_from_spec`]) cannot
/// hold one and does not link the polynomial's code: on a device whose gas
/// has a constant k that is less flash (measured on the controller firmware
/// of `ci/firmware`: 808 bytes on Cortex-M4F, 1,008 on Cortex-M0). Its
/// results are those of the same gas with `CP_POLYNOMIAL = true`, bit for
/// bit (seeded and grid tests in `tests/edge_inputs.rs`).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct IdealGas<T, const CP_POLYNOMIAL: bool = true> {
    gas_constant: T,
    /// cp model, stored per kg: `ConstantK(k)` or polynomial in J/(kg K).
    heat_capacity: HeatCapacity<T>,
    compressibility: T,
    /// With constant k: cp = k·R/(k−1) and (k−1)/k, computed once here (not
    /// every scan); zero for a cp polynomial.
    constant_cp: T,
    constant_exponent_term: T,
    /// K = Tc³/(limit·Pc): uncertain where p·K > T³; 0 if the critical
    /// point is not known.
    reduced_limit: T,
}

/// An ideal gas with a constant k only (`CP_POLYNOMIAL = false`): see
/// [`IdealGas`].
pub type IdealGasConstantK<T> = IdealGas<T, false>;

impl<T: Real> IdealGas<T> {
    /// A gas from its molar mass (kg/kmol), heat-capacity model and mean
    /// compressibility factor Z.
    pub fn new(
        molar_mass: T,
        heat_capacity: HeatCapacity<T>,
        compressibility: T,
    ) -> Result<Self, ConfigError> {
        Self::build(molar_mass, heat_capacity, compressibility)
    }

    /// A built-in gas with constant k (`polynomial = false`) or cp(T).
    pub fn from_spec(
        spec: &GasSpec,
        polynomial: bool,
        compressibility: T,
    ) -> Result<Self, ConfigError> {
        Self::build_from_spec(spec, polynomial, compressibility)
    }
}

impl<T: Real> IdealGas<T, false> {
    /// A gas with a constant k from its molar mass (kg/kmol), heat-capacity
    /// ratio k and mean compressibility factor Z: [`IdealGas::new`] with
    /// [`HeatCapacity::ConstantK`] (the same checks and refusals), as the
    /// constant-k type.
    pub fn constant_k(molar_mass: T, k: T, compressibility: T) -> Result<Self, ConfigError> {
        Self::build(molar_mass, HeatCapacity::ConstantK(k), compressibility)
    }

    /// A built-in gas with its constant k: [`IdealGas::from_spec`] with
    /// `polynomial = false`, as the constant-k type.
    pub fn constant_k_from_spec(spec: &GasSpec, compressibility: T) -> Result<Self, ConfigError> {
        Self::build_from_spec(spec, false, compressibility)
    }
}

impl<T: Real, const CP_POLYNOMIAL: bool> IdealGas<T, CP_POLYNOMIAL> {
    /// The one construction of both gas types ([`IdealGas::new`],
    /// [`IdealGas::constant_k`]).
    fn build(
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
                // (Not reached from the constant-k type's constructors,
                // which pass a constant k; refused all the same.)
                if !CP_POLYNOMIAL {
                    return Err(ConfigError::new(
                        "gas.cp_polynomial",
                        Problem::Inconsistent {
                            with: "a gas type with a constant k only (its `CP_POLYNOMIAL` parameter is false)",
                        },
                    ));
                }
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
        let (constant_cp, constant_exponent_term) = match heat_capacity {
            HeatCapacity::ConstantK(k) => {
                (k * gas_constant / (k - T::ONE), isentropic_exponent_term(k))
            }
            HeatCapacity::Polynomial { .. } => (T::ZERO, T::ZERO),
        };
        Ok(IdealGas {
            gas_constant,
            heat_capacity,
            compressibility,
            constant_cp,
            constant_exponent_term,
            reduced_limit: T::ZERO,
        })
    }

    /// Sets the (pseudo-)critical temperature (K) and pressure (Pa), from
    /// which the validity limit [`IDEAL_GAS_MAX_REDUCED_PRESSURE`] follows.
    pub fn with_critical_point(
        mut self,
        critical_temperature: T,
        critical_pressure: T,
    ) -> Result<Self, ConfigError> {
        let critical_pressure = check_positive("gas.critical_pressure", critical_pressure)?;
        let tc = check_positive("gas.critical_temperature", critical_temperature)?;
        self.reduced_limit =
            tc * tc * tc / (critical_pressure * T::of(IDEAL_GAS_MAX_REDUCED_PRESSURE));
        Ok(self)
    }

    /// The heat-capacity model as the type admits it: a gas type without
    /// cp polynomials (`CP_POLYNOMIAL = false`) never holds one (its
    /// construction refuses it and the model cannot be changed after), so
    /// for it every polynomial arm below is known unreachable and is not
    /// compiled in (the placeholder k of the impossible case is never read).
    #[inline(always)]
    fn cp_model(&self) -> HeatCapacity<T> {
        match self.heat_capacity {
            HeatCapacity::Polynomial { .. } if !CP_POLYNOMIAL => HeatCapacity::ConstantK(T::ZERO),
            model => model,
        }
    }

    #[inline]
    fn validity(&self, p: T, t: T) -> Validity {
        if p * self.reduced_limit > t * t * t {
            Validity::uncertain(ValidityReason::IdealGasReducedPressure)
        } else {
            Validity::IN_RANGE
        }
    }

    #[inline]
    fn z_of(&self, z_supplied: Option<T>) -> T {
        match z_supplied {
            Some(z) if supplied_z_usable::<T, { !HARD_FLOAT }>(z) => z,
            _ => self.compressibility,
        }
    }

    /// ∫cp dT from T0 and ∫cp/T dT from T0 (per kg, without Z), and cp(t).
    fn integrals(&self, t: T) -> (T, T, T) {
        let t0 = T::of(REFERENCE_TEMPERATURE);
        match self.cp_model() {
            HeatCapacity::ConstantK(_) => {
                let cp = self.constant_cp;
                (cp * (t - t0), cp * T::ln(t / t0), cp)
            }
            HeatCapacity::Polynomial {
                coefficients: c,
                t_min,
                t_max,
            } => {
                let tc = T::clamp(t, t_min, t_max);
                let [c0, c1, c2, c3] = c;
                let h = mean_cubic(&c, t0, tc) * (tc - t0) + cubic(&c, tc) * (t - tc);
                let s = c0 * T::ln(tc / t0)
                    + c1 * (tc - t0)
                    + c2 * T::of(0.5) * (tc * tc - t0 * t0)
                    + c3 * T::of(1.0 / 3.0) * (tc * tc * tc - t0 * t0 * t0)
                    + cubic(&c, tc) * T::ln(t / tc);
                (h, s, cubic(&c, tc))
            }
        }
    }

    /// The one construction from a built-in gas ([`IdealGas::from_spec`],
    /// [`IdealGas::constant_k_from_spec`]).
    fn build_from_spec(
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
        Self::build(T::of(spec.molar_mass), hc, compressibility)?.with_critical_point(
            T::of(spec.critical_temperature),
            T::of(spec.critical_pressure),
        )
    }

    /// The ideal-gas validity limit K = Tc³/(limit·Pc) set by
    /// [`IdealGas::with_critical_point`] (0 if the critical point is not
    /// known): the configuration blob carries it.
    pub fn validity_limit(&self) -> T {
        self.reduced_limit
    }

    /// This gas with the validity limit `k` (as [`IdealGas::validity_limit`]
    /// returns it; a non-finite or negative `k` clears it).
    #[must_use]
    pub fn with_validity_limit(mut self, k: T) -> Self {
        self.reduced_limit = if T::is_finite(k) && k > T::ZERO {
            k
        } else {
            T::ZERO
        };
        self
    }

    /// Mean compressibility factor used when none is supplied per scan.
    pub fn compressibility(&self) -> T {
        self.compressibility
    }

    /// Mean cp over [t1, t2], J/(kg K).
    pub fn mean_cp(&self, t1: T, t2: T) -> T {
        match self.cp_model() {
            HeatCapacity::ConstantK(_) => self.constant_cp,
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

    /// [`IdealGas::mean_cp`] with a cp polynomial's mean out of line
    /// ([`polynomial_mean_cp`]), for the path properties.
    #[inline]
    fn path_mean_cp(&self, t1: T, t2: T) -> T {
        match self.cp_model() {
            HeatCapacity::ConstantK(_) => self.constant_cp,
            HeatCapacity::Polynomial {
                coefficients,
                t_min,
                t_max,
            } => polynomial_mean_cp(&coefficients, t_min, t_max, t1, t2),
        }
    }
}

/// [`IdealGas::mean_cp`] of a cp polynomial: the mean of the cubic over the
/// temperatures clamped to its fit range (the same expressions). Out of
/// line: one copy for the users of the path properties (the path terms of
/// a stage, the train totals' and the pump's `path`), while constant k stays
/// inline. (The cooler's enthalpy drop keeps [`IdealGas::mean_cp`] inline:
/// through this copy its three coolers took 33 instructions more on
/// Cortex-M4F.)
#[inline(never)]
fn polynomial_mean_cp<T: Real>(c: &[T; 4], t_min: T, t_max: T, t1: T, t2: T) -> T {
    let a = T::clamp(t1, t_min, t_max);
    let b = T::clamp(t2, t_min, t_max);
    mean_cubic(c, a, b)
}

/// The path properties a compression needs, with (k−1)/k.
#[derive(Clone, Copy)]
struct PathTerms<T> {
    z: T,
    cp: T,
    k: T,
    m_k: T,
}

impl<T: Real, const CP_POLYNOMIAL: bool> IdealGas<T, CP_POLYNOMIAL> {
    /// [`PathTerms`] of a cp polynomial: the path means of
    /// [`GasModel::path`].
    #[inline(never)]
    fn polynomial_path_terms(
        &self,
        p1: T,
        t1: T,
        p2: T,
        t2: T,
        z_supplied: Option<T>,
    ) -> PathTerms<T> {
        let props = self.path(p1, t1, p2, t2, z_supplied);
        PathTerms {
            z: props.z,
            cp: props.cp,
            k: props.k,
            m_k: isentropic_exponent_term(props.k),
        }
    }
}

/// Iteration cap of the polynomial model's entropy match.
const ISENTROPIC_ITERATIONS: usize = 4;

/// A supplied Z is used if finite and in (0, 2]. `BITS` (without an FPU,
/// where each float compare is a library call): decided on the bit
/// patterns, [`Real::within_positive`] from the type's smallest positive
/// (subnormal) value to 2, the same result for every value (zeros,
/// negatives, infinities and NaN lie outside either way).
#[inline]
fn supplied_z_usable<T: Real, const BITS: bool>(z: T) -> bool {
    if BITS {
        // 2^-149 (f32) or 2^-1074 (f64), both exact in f64.
        let smallest_positive = if T::EPSILON > T::of(1e-10) {
            f64::from(f32::from_bits(1))
        } else {
            f64::from_bits(1)
        };
        T::within_positive(z, T::of(smallest_positive), T::of(2.0))
    } else {
        T::is_finite(z) && z > T::ZERO && z <= T::of(2.0)
    }
}

/// The ideal gas's states exist at finite, positive pressure and
/// temperature ([`GasModel::state`] and [`GasModel::uncompressed`] test the
/// same domain).
#[inline]
fn in_domain<T: Real>(p: T, t: T) -> bool {
    T::is_finite(p) && T::is_finite(t) && p > T::ZERO && t > T::ZERO
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

impl<T: Real, const CP_POLYNOMIAL: bool> GasModel<T> for IdealGas<T, CP_POLYNOMIAL> {
    #[inline]
    fn gas_constant(&self) -> T {
        self.gas_constant
    }

    #[inline]
    fn path(&self, _p1: T, t1: T, _p2: T, t2: T, z_supplied: Option<T>) -> PathProperties<T> {
        let z = self.z_of(z_supplied);
        let cp = self.path_mean_cp(t1, t2);
        let k = match self.cp_model() {
            HeatCapacity::ConstantK(k) => k,
            HeatCapacity::Polynomial { .. } => cp / (cp - self.gas_constant),
        };
        PathProperties {
            gas_constant: self.gas_constant,
            k,
            cp,
            z,
        }
    }

    fn state(&self, p: T, t: T, z_supplied: Option<T>) -> GasState<T> {
        if !in_domain(p, t) {
            return GasState::invalid(p, t);
        }
        let z = self.z_of(z_supplied);
        let (h, s_t, cp) = self.integrals(t);
        let zr = z * self.gas_constant;
        let k = cp / (cp - self.gas_constant);
        GasState {
            pressure: p,
            temperature: t,
            z,
            volume: zr * t / p,
            enthalpy: z * h,
            entropy: z * s_t - zr * T::ln(p / T::of(REFERENCE_PRESSURE)),
            cp: z * cp,
            speed_of_sound: T::sqrt(k * zr * t),
            validity: self.validity(p, t),
        }
    }

    /// Z and validity as [`GasModel::state`] gives them, without its
    /// enthalpy, entropy and speed of sound (two logarithms and a square
    /// root per state).
    fn uncompressed(
        &self,
        p1: T,
        t1: T,
        p2: T,
        t2: Option<T>,
        z_supplied: Option<T>,
    ) -> (T, Validity, Validity, T) {
        let state = |p: T, t: T| {
            if in_domain(p, t) {
                (self.z_of(z_supplied), self.validity(p, t))
            } else {
                (T::ONE, Validity::INVALID)
            }
        };
        let (z1, v1) = state(p1, t1);
        let validity = match t2 {
            Some(t2) => v1.worst(state(p2, t2).1),
            None => v1,
        };
        // The path k as `path` gives it; for a cp polynomial from the
        // out-of-line path terms (the same `path` call) rather than a
        // second inlined copy of the path means.
        let k = match self.cp_model() {
            HeatCapacity::ConstantK(k) => k,
            HeatCapacity::Polynomial { .. } => {
                self.polynomial_path_terms(p1, t1, p2, t2.unwrap_or(t1), z_supplied)
                    .k
            }
        };
        (z1, v1, validity, k)
    }

    fn isentropic_state(&self, inlet: &GasState<T>, p2: T, z_supplied: Option<T>) -> GasState<T> {
        let ln_r = T::ln(p2 / inlet.pressure);
        let t1 = inlet.temperature;
        let mut t = match self.cp_model() {
            HeatCapacity::ConstantK(_) => t1 * T::exp(self.constant_exponent_term * ln_r),
            HeatCapacity::Polynomial { .. } => {
                let cp = self.mean_cp(t1, t1);
                t1 * T::exp(self.gas_constant / cp * ln_r)
            }
        };
        if let HeatCapacity::Polynomial { .. } = self.cp_model() {
            // s(T, p2) = s1: Newton on T with ds/dT = cp/T (monotone; a
            // few steps from the constant-cp estimate).
            for _ in 0..ISENTROPIC_ITERATIONS {
                let s = self.state(p2, t, z_supplied);
                let step = (inlet.entropy - s.entropy) * t / s.cp;
                if !T::is_finite(step) {
                    break;
                }
                t = T::clamp(t + step, t * T::of(0.8), t * T::of(1.25));
            }
        }
        self.state(p2, t, z_supplied)
    }

    fn enthalpy_drop(
        &self,
        p_in: T,
        t_in: T,
        p_out: T,
        t_out: T,
        z_supplied: Option<T>,
    ) -> (T, Validity) {
        let z = self.z_of(z_supplied);
        (
            z * self.mean_cp(t_out, t_in) * (t_in - t_out),
            self.validity(T::max(p_in, p_out), T::min(t_in, t_out)),
        )
    }

    /// Z·R·T·ln(p2/p1) (the state functions' Gibbs energy rise).
    fn isothermal_work(
        &self,
        p1: T,
        p2: T,
        ln_ratio: T,
        t: T,
        z_supplied: Option<T>,
    ) -> (T, Validity) {
        (
            self.z_of(z_supplied) * self.gas_constant * t * ln_ratio,
            self.validity(T::max(p1, p2), t),
        )
    }

    /// With constant k, T2s/T1 depends on the ratio only, so the head
    /// Z·cp·T1·(T2s/T1 − 1) is proportional to T1.
    fn isentropic_head_rescaled(
        &self,
        head: T,
        t1: T,
        t: T,
        p_high: T,
        _z_supplied: Option<T>,
    ) -> Option<(T, Validity)> {
        match self.cp_model() {
            HeatCapacity::ConstantK(_) => Some((head * (t / t1), self.validity(p_high, t))),
            HeatCapacity::Polynomial { .. } => None,
        }
    }

    #[inline]
    fn ratio_only(&self) -> bool {
        true
    }

    /// The discharge state of [`GasModel::compression`] only adds its own
    /// fields; the path-mean properties are taken to `t2.unwrap_or(t1)`,
    /// and the validity is that of the suction either way.
    #[inline]
    fn discharge_separable(&self) -> bool {
        true
    }

    /// Closed form on the path-mean cp (the `fluids` convention):
    /// T2s = T1·r^((k−1)/k), h2s − h1 = Z·R·T1·k/(k−1)·(r^((k−1)/k) − 1),
    /// h2 − h1 = Z·cp·(T2 − T1), p·v = Z·R·T.
    // Always inlined: with a second caller (the loss ledger) the optimiser
    // outlined it, and one compressor stage got 82 instructions slower on
    // Cortex-M4F (533 -> 615).
    #[inline(always)]
    fn compression(
        &self,
        p1: T,
        t1: T,
        p2: T,
        ln_ratio: T,
        t2: Option<T>,
        z_supplied: Option<T>,
    ) -> CompressionStates<T> {
        // Constant k: cp and (k−1)/k from the construction, nothing
        // divided here; a cp polynomial: the path means, out of line (no
        // division of theirs is hoisted into the constant-k path).
        let props = match self.cp_model() {
            HeatCapacity::ConstantK(k) => PathTerms {
                z: self.z_of(z_supplied),
                cp: self.constant_cp,
                k,
                m_k: self.constant_exponent_term,
            },
            HeatCapacity::Polynomial { .. } => {
                self.polynomial_path_terms(p1, t1, p2, t2.unwrap_or(t1), z_supplied)
            }
        };
        let m_k = props.m_k;
        let zr = props.z * self.gas_constant;
        let zrt1 = zr * t1;
        // Inlined here, as the discharge state's logarithm below: a
        // compressor stage's scan (`Real::ln_inline`).
        let t2s_over_t1 = T::exp_inline(m_k * ln_ratio);
        let validity = self.validity(T::max(p1, p2), t1);
        let mut out = CompressionStates {
            suction_z: props.z,
            isentropic_temperature: t1 * t2s_over_t1,
            isentropic_enthalpy_rise: zrt1 * (t2s_over_t1 - T::ONE) / m_k,
            isentropic_pv_rise: zrt1 * (t2s_over_t1 - T::ONE),
            isentropic_ln_pv_ratio: m_k * ln_ratio,
            isentropic_exponent: props.k,
            // Exactly 1 for an ideal gas on the path-mean cp: h2s − h1 =
            // k/(k−1)·(p2·v2s − p1·v1) with ns = k.
            head_factor: T::ONE,
            isentropic_validity: validity,
            validity,
            ..CompressionStates::invalid()
        };
        if let Some(t2) = t2 {
            let dt = t2 - t1;
            let ln_t = T::ln_inline(t2 / t1);
            out.has_discharge = true;
            out.discharge_z = props.z;
            out.enthalpy_rise = props.z * props.cp * dt;
            out.entropy_rise = props.z * (props.cp * ln_t - self.gas_constant * ln_ratio);
            out.pv_rise = zr * dt;
            out.ln_pv_ratio = ln_t;
        }
        out
    }

    /// A cp(T) polynomial is valid over its fit range only: outside it the
    /// mean cp is that of the clamped temperature (uncertain).
    #[inline]
    fn fit_quality(&self, t_a: T, t_b: T) -> Quality {
        match self.cp_model() {
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
            temperature: matches!(self.cp_model(), HeatCapacity::Polynomial { .. }),
            pressure: false,
            compressibility_from_state: false,
            state_functions: false,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::gas::{AIR, BUILTIN_GASES};

    /// Consistency check (the project's own test of a supplied Z, two
    /// forms): the bit-pattern form gives the float compares' result for
    /// special values and seeded random bit patterns of f32 and f64.
    #[test]
    fn supplied_z_test_on_the_bits_equals_the_float_one() {
        let specials = [
            0.0,
            -0.0,
            1.0,
            2.0,
            -2.0,
            0.97,
            f64::MIN_POSITIVE,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NAN,
            -f64::NAN,
        ];
        for z in specials {
            assert_eq!(
                supplied_z_usable::<f64, true>(z),
                supplied_z_usable::<f64, false>(z),
                "{z}"
            );
            let z = z as f32;
            assert_eq!(
                supplied_z_usable::<f32, true>(z),
                supplied_z_usable::<f32, false>(z),
                "{z}"
            );
        }
        for z in [
            f32::from_bits(1),
            f32::from_bits(0x4000_0001),
            f32::from_bits(0x3fff_ffff),
        ] {
            assert_eq!(
                supplied_z_usable::<f32, true>(z),
                supplied_z_usable::<f32, false>(z),
                "{z}"
            );
        }
        for z in [
            f64::from_bits(1),
            f64::from_bits(2.0f64.to_bits() + 1),
            f64::from_bits(2.0f64.to_bits() - 1),
        ] {
            assert_eq!(
                supplied_z_usable::<f64, true>(z),
                supplied_z_usable::<f64, false>(z),
                "{z}"
            );
        }
        let mut seed = 0x1234_5678_9abc_def1_u64;
        for _ in 0..1_000_000 {
            // The crate's one 64-bit test generator (high bits for f32).
            seed = crate::lcg64_step(seed);
            let a = f32::from_bits((seed >> 32) as u32);
            assert_eq!(
                supplied_z_usable::<f32, true>(a),
                supplied_z_usable::<f32, false>(a),
                "{a}"
            );
            let b = f64::from_bits(seed);
            assert_eq!(
                supplied_z_usable::<f64, true>(b),
                supplied_z_usable::<f64, false>(b),
                "{b}"
            );
            // Near the accepted range too (random bits rarely land there).
            let c = f32::from_bits((seed >> 16) as u32 % 0x4000_0100);
            assert_eq!(
                supplied_z_usable::<f32, true>(c),
                supplied_z_usable::<f32, false>(c),
                "{c}"
            );
        }
    }

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

    /// Consistency check (the model against its own state functions): the
    /// no-compression shortcut gives the Z and validities of
    /// `GasModel::state` and the k of `GasModel::path`, also at invalid
    /// inputs and at high reduced pressure.
    #[test]
    fn uncompressed_matches_the_state_functions() {
        let spec = crate::gas::CARBON_DIOXIDE;
        for g in [
            IdealGas::<f64>::from_spec(&spec, false, 0.95).unwrap(),
            IdealGas::<f64>::from_spec(&spec, true, 1.0).unwrap(),
        ] {
            let values = [f64::NAN, -1.0, 0.0, 1e5, 3e6, 2e7, f64::INFINITY];
            let temps = [f64::NAN, 0.0, 250.0, 300.0, 450.0, 3000.0];
            for &p1 in &values {
                for &t1 in &temps {
                    for (p2, t2) in [(1e5, Some(310.0)), (5e7, Some(f64::NAN)), (2e6, None)] {
                        for z in [None, Some(0.9), Some(f64::NAN)] {
                            let s1 = g.state(p1, t1, z);
                            let v = match t2 {
                                Some(t2) => s1.validity.worst(g.state(p2, t2, z).validity),
                                None => s1.validity,
                            };
                            let k = g.path(p1, t1, p2, t2.unwrap_or(t1), z).k;
                            let (z1, v1, va, ka) = g.uncompressed(p1, t1, p2, t2, z);
                            assert_eq!(
                                (z1.to_bits(), v1, va, ka.to_bits()),
                                (s1.z.to_bits(), s1.validity, v, k.to_bits()),
                                "{p1} {t1} {p2} {t2:?} {z:?}"
                            );
                        }
                    }
                }
            }
        }
    }

    /// The contract of `GasModel::discharge_separable` (consistency check
    /// of the model against itself): asked for a discharge state at T1,
    /// the suction and isentropic results and both validities are those
    /// without one, bit for bit, over ordinary and degenerate inputs, for
    /// constant k and a cp polynomial.
    #[test]
    fn discharge_state_at_t1_changes_nothing_else() {
        let spec = crate::gas::CARBON_DIOXIDE;
        for g in [
            IdealGas::<f64>::from_spec(&spec, false, 0.95).unwrap(),
            IdealGas::<f64>::from_spec(&spec, true, 1.0).unwrap(),
        ] {
            assert!(g.discharge_separable());
            let pressures = [f64::NAN, -1.0, 0.0, 1e5, 3e6, 2e7, f64::INFINITY];
            let temps = [f64::NAN, 0.0, 250.0, 300.0, 450.0, 3000.0];
            for &p1 in &pressures {
                for &t1 in &temps {
                    for &p2 in &pressures {
                        for z in [None, Some(0.9), Some(f64::NAN)] {
                            let ln_r = (p2 / p1).ln();
                            let a = g.compression(p1, t1, p2, ln_r, None, z);
                            let b = g.compression(p1, t1, p2, ln_r, Some(t1), z);
                            let key = |c: &CompressionStates<f64>| {
                                (
                                    [
                                        c.suction_z,
                                        c.isentropic_temperature,
                                        c.isentropic_enthalpy_rise,
                                        c.isentropic_pv_rise,
                                        c.isentropic_ln_pv_ratio,
                                        c.isentropic_exponent,
                                        c.head_factor,
                                    ]
                                    .map(f64::to_bits),
                                    c.isentropic_validity,
                                    c.validity,
                                )
                            };
                            assert_eq!(key(&a), key(&b), "{p1} {t1} {p2} {z:?}");
                            assert!(!a.has_discharge && b.has_discharge);
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn supplied_compressibility_overrides_only_when_valid() {
        let g = IdealGas::<f64>::from_spec(&AIR, false, 0.95).unwrap();
        assert_eq!(g.path(1e5, 300.0, 2e5, 350.0, Some(0.9)).z, 0.9);
        assert_eq!(g.path(1e5, 300.0, 2e5, 350.0, Some(f64::NAN)).z, 0.95);
        assert_eq!(g.path(1e5, 300.0, 2e5, 350.0, None).z, 0.95);
    }
}
