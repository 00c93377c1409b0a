//! Peng–Robinson equation of state for pure gases and mixtures.
//!
//! Sources:
//! - D.-Y. Peng and D. B. Robinson, "A New Two-Constant Equation of State",
//!   *Ind. Eng. Chem. Fundam.* 15 (1976) 59–64: P = RT/(v−b) − a(T)/(v² + 2bv
//!   − b²), a = 0.45724 R²Tc²/Pc·α(T), b = 0.07780 R Tc/Pc,
//!   α = (1 + κ(1 − √Tr))², κ = 0.37464 + 1.54226ω − 0.26992ω² (the exact
//!   Ω_a = 0.457235529, Ω_b = 0.0777960739 are used), the cubic in Z and the
//!   enthalpy and entropy departure functions.
//! - van der Waals one-fluid mixing: a = ΣΣ yᵢyⱼ√(aᵢaⱼ)(1 − kᵢⱼ),
//!   b = Σ yᵢbᵢ (same paper; Poling, Prausnitz & O'Connell, *The Properties
//!   of Gases and Liquids*, 5th ed., ch. 5). With temperature-independent
//!   kᵢⱼ the mixture a(T) is exactly a₀ − a₁√T + a₂T, so a state needs one
//!   square root whatever the number of components; a₀, a₁, a₂ are computed
//!   once per composition ([`PengRobinson::set_composition`]), outside the
//!   scan path.
//! - Residual cv and cp, speed of sound, X and Y from the standard
//!   thermodynamic identities (Poling et al. ch. 4; Schultz 1962 for X and Y).
//! - Péneloux volume translation (A. Péneloux, E. Rauzy, R. Fréze, "A
//!   consistent correction for Redlich–Kwong–Soave volumes", *Fluid Phase
//!   Equilib.* 8 (1982) 7–23; the PR form c = 0.40768·(0.29441 − Z_RA)·RTc/Pc
//!   with the Rackett Z_RA of [`super::components`]) is applied to the
//!   dense-phase density only ([`GasModel::dense_density`]), where it
//!   improves the largest error against CoolProp HEOS for dense CO2 from
//!   7.5 % to 4.9 % (79 bar a, 293 K: 783 → 830 kg/m³ against 826; 298 K:
//!   716 → 754 against 774; 150 bar a, 300 K: 853 → 908 against 866), so
//!   dense densities are always uncertain; gas states stay untranslated (the translation
//!   would move Z by p·c/RT, under 0.3 % at the checked gas states, and
//!   leaves heads unchanged except through p·v).
//!
//! Roots: Newton on the cubic from Z = 1 + B, an upper bound of the largest
//! root (Z − B ≤ 1 for any PR root), converges monotonically to the largest
//! (vapour-like) root, at most [`CUBIC_ITERATIONS`] steps. A root with
//! v < 3.95·b (the PR critical v/b) is liquid-like: no vapour root, bad.
//! When three real roots exist the fugacities of the largest and smallest
//! decide whether the vapour is the stable phase (pseudo-pure one-fluid test
//! for mixtures; no phase split on the device).

use super::components::{binary_interaction, Component, CP0_T_MAX, CP0_T_MIN};
use super::{
    CompressionStates, GasModel, GasState, PathProperties, PropertyInputs, Validity,
    ValidityReason, MOLAR_GAS_CONSTANT, REFERENCE_PRESSURE, REFERENCE_TEMPERATURE,
};
use crate::error::{ConfigError, Problem};
use crate::quality::Quality;
use crate::real::Real;

/// Ω_a of Peng–Robinson (exact value of the critical-point condition).
pub const OMEGA_A: f64 = 0.457_235_529;
/// Ω_b of Peng–Robinson.
pub const OMEGA_B: f64 = 0.077_796_073_9;
/// Critical v/b of Peng–Robinson (Z_c/B_c = 0.307401/0.0777961): roots
/// below it are liquid-like.
pub const CRITICAL_VOLUME_RATIO: f64 = 3.951;
/// Iteration cap of the cubic root.
pub const CUBIC_ITERATIONS: usize = 24;
/// Iteration cap of the entropy match.
pub const ISENTROPIC_ITERATIONS: usize = 12;
/// Tolerance on the sum of mole fractions.
pub const FRACTION_SUM_TOLERANCE: f64 = 1.0e-4;
/// Largest pressure of the model's declared range, Pa.
pub const MAX_PRESSURE: f64 = 1.0e8;
/// Near-critical band, pseudo-reduced (Kay's rule): temperature
/// [`NEAR_CRITICAL_TR`] and pressure [`NEAR_CRITICAL_PR`]; uncertain inside.
/// Set from the CoolProp HEOS stage comparison: a CO2 stage from Tr 1.03,
/// Pr 0.35 misses the HEOS polytropic efficiency by 2.6 points, one from
/// Tr 1.05, Pr 1.08 by 3.5; outside the band the checked stages stay within
/// 0.91 points.
pub const NEAR_CRITICAL_TR: (f64, f64) = (0.93, 1.10);
/// See [`NEAR_CRITICAL_TR`].
pub const NEAR_CRITICAL_PR: (f64, f64) = (0.30, 1.60);
/// Vapour fugacity within this margin (ln φ) of the liquid root's: near
/// saturation, uncertain.
pub const SATURATION_MARGIN: f64 = 0.05;

/// Largest temperature difference (K) at which [`GasModel::enthalpy_drop`]
/// uses the trapezoid of the derivatives instead of an enthalpy difference.
pub const CLOSE_STATES_K: f64 = 2.0;

/// Relative size below which the entropy match's last Newton step is applied
/// to first order (see `entropy_match`): at 300 K a step of up to 1.5 K,
/// leaving about 0.003 K in T2s and 2 J/kg in h2s (Newton's quadratic error
/// with (∂cp/∂T)_p of a few J/(kg K²)); `tests/real_gas_coolprop.rs` checks
/// it against a converged bisection.
pub const LINEAR_STEP: f64 = 5.0e-3;

const SQRT2: f64 = core::f64::consts::SQRT_2;

/// Validity of a state used as a dense phase: liquid-like is uncertain.
fn dense_validity(v: Validity) -> Validity {
    match v.reason {
        ValidityReason::LiquidLike => Validity::uncertain(ValidityReason::DenseEstimate),
        _ => v,
    }
}

/// d ln T / d ln p along an isentrope at a state: (p/cp)·(∂v/∂T)_p =
/// −p·(∂P/∂T)_v / (cp·(∂P/∂v)_T) (molar), the first-order start of the
/// entropy match.
#[inline]
fn isentropic_temperature_exponent<T: Real>(p: T, c: &Core<T>) -> T {
    -p * c.dp_dt / (c.cp * c.dp_dv)
}

/// A Peng–Robinson gas of up to `C` components with precomputed mixture
/// constants. Construct with [`PengRobinson::new`]; replace the composition
/// at run time with [`PengRobinson::set_composition`] (no allocation).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PengRobinson<T, const C: usize> {
    components: [Component; C],
    fractions: [T; C],
    /// kg/mol
    molar_mass: T,
    /// J/(kg K)
    gas_constant: T,
    /// mol/kg
    per_kg: T,
    /// a(T) = a0 − a1·√T + a2·T, Pa m⁶/mol².
    a: [T; 3],
    /// m³/mol
    b: T,
    /// 1/(2√2·b), mol/m³
    inv_2s2b: T,
    /// Péneloux volume shift, m³/mol.
    volume_shift: T,
    /// cp0 coefficients, J/(mol K).
    cp0: [T; 4],
    pseudo_critical_temperature: T,
    pseudo_critical_pressure: T,
}

/// Intermediate results of one (p, T) evaluation, molar.
#[derive(Clone, Copy)]
struct Core<T> {
    z: T,
    /// J/mol
    h: T,
    /// J/(mol K)
    s: T,
    cp: T,
    cv: T,
    /// m³/mol
    v: T,
    /// (∂P/∂v)_T, Pa mol/m³
    dp_dv: T,
    /// (∂P/∂T)_v, Pa/K
    dp_dt: T,
    validity: Validity,
}

impl<T: Real, const C: usize> PengRobinson<T, C> {
    /// A mixture of `components` with mole `fractions` (validated: each in
    /// [0, 1] and finite, sum 1 within [`FRACTION_SUM_TOLERANCE`], no
    /// component twice; the fractions are then normalised to sum 1).
    pub fn new(components: [Component; C], fractions: [T; C]) -> Result<Self, ConfigError> {
        const { assert!(C >= 1 && C <= 32, "1 to 32 components") };
        for (i, ci) in components.iter().enumerate() {
            if components.iter().take(i).any(|cj| cj.id == ci.id) {
                return Err(ConfigError::new(
                    "gas.composition.component",
                    Problem::Inconsistent {
                        with: "gas.composition.component",
                    },
                )
                .at(i));
            }
        }
        let mut gas = PengRobinson {
            components,
            fractions,
            molar_mass: T::ONE,
            gas_constant: T::ONE,
            per_kg: T::ONE,
            a: [T::ZERO; 3],
            b: T::ONE,
            inv_2s2b: T::ONE,
            volume_shift: T::ZERO,
            cp0: [T::ZERO; 4],
            pseudo_critical_temperature: T::ONE,
            pseudo_critical_pressure: T::ONE,
        };
        gas.set_composition(fractions)?;
        Ok(gas)
    }

    /// A pure gas.
    pub fn pure(component: Component) -> Result<PengRobinson<T, 1>, ConfigError> {
        PengRobinson::<T, 1>::new([component], [T::ONE])
    }

    /// Replaces the mole fractions (same components, same order), e.g. after
    /// a gas-chromatograph update, and recomputes the mixture constants
    /// (O(C²), no allocation). On error the previous composition stays.
    pub fn set_composition(&mut self, fractions: [T; C]) -> Result<(), ConfigError> {
        let mut sum = 0.0;
        for (i, y) in fractions.iter().enumerate() {
            let y = y.to_f64();
            if !<f64 as Real>::is_finite(y) {
                return Err(ConfigError::not_finite("gas.composition.fraction").at(i));
            }
            if !(0.0..=1.0).contains(&y) {
                return Err(ConfigError::out_of_range("gas.composition.fraction", 0.0, 1.0).at(i));
            }
            sum += y;
        }
        if !(<f64 as Real>::abs(sum - 1.0) <= FRACTION_SUM_TOLERANCE) {
            // The sum is the problem, not one entry: no index.
            return Err(ConfigError::out_of_range(
                "gas.composition.fraction_sum",
                1.0 - FRACTION_SUM_TOLERANCE,
                1.0 + FRACTION_SUM_TOLERANCE,
            ));
        }
        let y: [f64; C] = fractions.map(|f| f.to_f64() / sum);
        let r = MOLAR_GAS_CONSTANT;
        // √aᵢ(T) = Aᵢ − Bᵢ√T.
        let ab: [(f64, f64); C] = self.components.map(|c| {
            let tc = c.critical_temperature;
            let ac = OMEGA_A * r * r * tc * tc / c.critical_pressure;
            let w = c.acentric_factor;
            let kappa = 0.37464 + 1.54226 * w - 0.26992 * w * w;
            let sa = <f64 as Real>::sqrt(ac);
            (sa * (1.0 + kappa), sa * kappa / <f64 as Real>::sqrt(tc))
        });
        let (mut a0, mut a1, mut a2, mut b, mut m, mut tpc, mut ppc) =
            (0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0);
        let mut cp0 = [0.0; 4];
        let mut shift = 0.0;
        for ((ci, &yi), &(ai, bi)) in self.components.iter().zip(y.iter()).zip(ab.iter()) {
            for ((cj, &yj), &(aj, bj)) in self.components.iter().zip(y.iter()).zip(ab.iter()) {
                let w = yi * yj * (1.0 - binary_interaction(ci.id, cj.id));
                a0 += w * ai * aj;
                a1 += w * (ai * bj + aj * bi);
                a2 += w * bi * bj;
            }
            b += yi * OMEGA_B * r * ci.critical_temperature / ci.critical_pressure;
            m += yi * ci.molar_mass * 1.0e-3;
            tpc += yi * ci.critical_temperature;
            shift += yi * 0.40768 * (0.29441 - ci.rackett_z) * r * ci.critical_temperature
                / ci.critical_pressure;
            ppc += yi * ci.critical_pressure;
            for (acc, c) in cp0.iter_mut().zip(ci.cp0.iter()) {
                *acc += yi * c;
            }
        }
        self.fractions = y.map(T::of);
        self.a = [T::of(a0), T::of(a1), T::of(a2)];
        self.b = T::of(b);
        self.inv_2s2b = T::of(1.0 / (2.0 * SQRT2 * b));
        self.volume_shift = T::of(shift);
        self.molar_mass = T::of(m);
        self.per_kg = T::of(1.0 / m);
        self.gas_constant = T::of(r / m);
        self.cp0 = cp0.map(T::of);
        self.pseudo_critical_temperature = T::of(tpc);
        self.pseudo_critical_pressure = T::of(ppc);
        Ok(())
    }

    /// The components.
    pub fn components(&self) -> &[Component; C] {
        &self.components
    }

    /// The (normalised) mole fractions.
    pub fn fractions(&self) -> &[T; C] {
        &self.fractions
    }

    /// Molar mass, kg/kmol.
    pub fn molar_mass(&self) -> T {
        self.molar_mass * T::of(1.0e3)
    }

    /// Pseudo-critical temperature (K) and pressure (Pa), Kay's rule.
    pub fn pseudo_critical(&self) -> (T, T) {
        (
            self.pseudo_critical_temperature,
            self.pseudo_critical_pressure,
        )
    }

    /// Schultz's compressibility functions at (p, t):
    /// X = (T/v)(∂v/∂T)_p − 1 and Y = −(p/v)(∂v/∂p)_T.
    pub fn compressibility_functions(&self, p: T, t: T) -> (T, T) {
        let c = self.core(p, t);
        let x = -t * c.dp_dt / (c.v * c.dp_dv) - T::ONE;
        let y = -p / (c.v * c.dp_dv);
        (x, y)
    }

    /// Ideal-gas cp0 (J/(mol K)) and the ideal-gas h (J/mol) and s at p0
    /// (J/(mol K)) from the reference temperature.
    #[inline]
    fn ideal(&self, t: T) -> (T, T, T) {
        let [c0, c1, c2, c3] = self.cp0;
        let t0 = T::of(REFERENCE_TEMPERATURE);
        let d = t - t0;
        let sum = t + t0;
        let sq = t * t + t0 * t0;
        let cube = sq + t * t0;
        let cp0 = c0 + t * (c1 + t * (c2 + t * c3));
        let h = d
            * (c0
                + c1 * T::of(0.5) * sum
                + c2 * T::of(1.0 / 3.0) * cube
                + c3 * T::of(0.25) * sum * sq);
        let s =
            c0 * T::ln(t / t0) + d * (c1 + c2 * T::of(0.5) * sum + c3 * T::of(1.0 / 3.0) * cube);
        (cp0, h, s)
    }

    fn core(&self, p: T, t: T) -> Core<T> {
        let r = T::of(MOLAR_GAS_CONSTANT);
        let invalid = Core {
            z: T::ONE,
            h: T::ZERO,
            s: T::ZERO,
            cp: T::ONE,
            cv: T::ONE,
            v: T::ONE,
            dp_dv: -T::ONE,
            dp_dt: T::ZERO,
            validity: Validity::INVALID,
        };
        if !(T::is_finite(p) && T::is_finite(t) && p > T::ZERO && t > T::ZERO) {
            return invalid;
        }
        // Reciprocals once: a division costs about 12 instructions on
        // Cortex-M4F and 180 on Cortex-M0.
        let sqrt_t = T::sqrt(t);
        let inv_sqrt_t = T::ONE / sqrt_t;
        let inv_t = T::ONE / t;
        let inv_p = T::ONE / p;
        let [a0, a1, a2] = self.a;
        let a = a0 - a1 * sqrt_t + a2 * t;
        let da = a2 - T::of(0.5) * a1 * inv_sqrt_t;
        let d2a = T::of(0.25) * a1 * inv_sqrt_t * inv_t;
        let b = self.b;
        let rt = r * t;
        let inv_rt = inv_t * T::of(1.0 / MOLAR_GAS_CONSTANT);
        let big_b = b * p * inv_rt;
        let big_a = a * p * inv_rt * inv_rt;
        // Z³ + c2 Z² + c1 Z + c0 = 0
        let c2 = big_b - T::ONE;
        let c1 = big_a - T::of(3.0) * big_b * big_b - T::of(2.0) * big_b;
        let c0 = -(big_a * big_b - big_b * big_b - big_b * big_b * big_b);
        let tol = T::of(1e-12) + T::of(16.0) * T::EPSILON;
        let newton = |mut z: T| {
            for _ in 0..CUBIC_ITERATIONS {
                let f = ((z + c2) * z + c1) * z + c0;
                let df = (T::of(3.0) * z + T::of(2.0) * c2) * z + c1;
                let step = f / df;
                if !T::is_finite(step) {
                    return (z, false);
                }
                z = z - step;
                if T::abs(step) <= tol * z {
                    return (z, true);
                }
            }
            (z, false)
        };
        // Start from the second-virial estimate Z = 1 + B − A (two or three
        // steps at gas densities). The result is the largest root exactly
        // when it lies above the inflection point (1 − B)/3 with a positive
        // slope; otherwise restart from 1 + B, an upper bound of the largest
        // root, from which Newton descends monotonically to it.
        let (mut z, mut converged) = newton(T::ONE + big_b - big_a);
        let slope = (T::of(3.0) * z + T::of(2.0) * c2) * z + c1;
        if !(converged && z > (T::ONE - big_b) * T::of(1.0 / 3.0) && slope > T::ZERO) {
            (z, converged) = newton(T::ONE + big_b);
        }
        if !(T::is_finite(z) && z > big_b) {
            return invalid;
        }
        let mut validity = if converged {
            Validity::IN_RANGE
        } else {
            Validity::uncertain(ValidityReason::NotConverged)
        };
        let s2 = T::of(SQRT2);
        let log_term = |zz: T| T::ln((zz + (T::ONE + s2) * big_b) / (zz + (T::ONE - s2) * big_b));
        let l = log_term(z);
        if z < T::of(CRITICAL_VOLUME_RATIO) * big_b {
            validity = Validity::bad(ValidityReason::LiquidLike);
        } else {
            // Other real roots: deflate to Z² + q1 Z + q0.
            let q1 = c2 + z;
            let q0 = c1 + z * q1;
            let disc = q1 * q1 - T::of(4.0) * q0;
            if disc > T::ZERO {
                let zl = T::of(0.5) * (-q1 - T::sqrt(disc));
                if zl > big_b {
                    let k = big_a / (T::of(2.0) * s2 * big_b);
                    let ln_phi = |zz: T, ll: T| zz - T::ONE - T::ln(zz - big_b) - k * ll;
                    let margin = ln_phi(z, l) - ln_phi(zl, log_term(zl));
                    if margin > T::ZERO {
                        validity = Validity::bad(ValidityReason::NoVapourRoot);
                    } else if margin > -T::of(SATURATION_MARGIN) {
                        validity =
                            validity.worst(Validity::uncertain(ValidityReason::NearSaturation));
                    }
                }
            }
        }
        let tr = t / self.pseudo_critical_temperature;
        let pr = p / self.pseudo_critical_pressure;
        if tr > T::of(NEAR_CRITICAL_TR.0)
            && tr < T::of(NEAR_CRITICAL_TR.1)
            && pr > T::of(NEAR_CRITICAL_PR.0)
            && pr < T::of(NEAR_CRITICAL_PR.1)
        {
            validity = validity.worst(Validity::uncertain(ValidityReason::NearCritical));
        }
        if t < T::of(CP0_T_MIN) || t > T::of(CP0_T_MAX) {
            validity = validity.worst(Validity::uncertain(ValidityReason::TemperatureOutOfRange));
        }
        if p > T::of(MAX_PRESSURE) {
            validity = validity.worst(Validity::uncertain(ValidityReason::PressureOutOfRange));
        }

        let (cp0, h0, s0) = self.ideal(t);
        let k = l * self.inv_2s2b;
        let v = z * rt * inv_p;
        let h = h0 + rt * (z - T::ONE) + (t * da - a) * k;
        let s = s0 + r * T::ln((z - big_b) * T::of(REFERENCE_PRESSURE) * inv_p) + da * k;
        let cv = cp0 - r + t * d2a * k;
        let inv_vb = T::ONE / (v - b);
        let inv_den = T::ONE / (v * v + T::of(2.0) * b * v - b * b);
        let dp_dt = r * inv_vb - da * inv_den;
        let dp_dv = -rt * inv_vb * inv_vb + T::of(2.0) * a * (v + b) * inv_den * inv_den;
        let cp = cv - t * dp_dt * dp_dt / dp_dv;
        Core {
            z,
            h,
            s,
            cp,
            cv,
            v,
            dp_dv,
            dp_dt,
            validity,
        }
    }

    /// The temperature at `p2` with the molar entropy `target`: Newton on
    /// ln T with (∂s/∂ln T)_p = cp from `t_start`, steps limited to ±20 %,
    /// bisection inside the bracket the iterates have established whenever
    /// a step leaves it; a last step below [`LINEAR_STEP`]·T is applied to
    /// h and Z to first order instead of re-evaluating the state (its error
    /// is second order in the step).
    /// At most [`ISENTROPIC_ITERATIONS`] evaluations, else not converged.
    fn entropy_match(&self, target: T, p2: T, t_start: T, t1: T) -> (T, Core<T>, bool) {
        let mut t = t_start;
        let (mut lo, mut hi) = (t1 * T::of(0.3), t1 * T::of(4.0));
        let mut c = self.core(p2, t);
        for _ in 0..ISENTROPIC_ITERATIONS {
            if c.validity.quality == Quality::Bad {
                return (t, c, false);
            }
            let ds = target - c.s;
            if ds > T::ZERO {
                lo = T::max(lo, t);
            } else {
                hi = T::min(hi, t);
            }
            // Newton in ln T (exact for constant cp: T·exp(Δs/cp)), to
            // second order: the curvature of s = cp·ln T is taken out.
            let x = ds / c.cp;
            let step = t * x * (T::ONE + T::of(0.5) * x);
            if T::abs(step) <= T::of(LINEAR_STEP) * t {
                // First order at constant p: dh = cp·dT,
                // dv = (∂v/∂T)_p·dT = −(∂P/∂T)_v/(∂P/∂v)_T·dT, Z ∝ v/T.
                let dv = -c.dp_dt / c.dp_dv * step;
                c.h += c.cp * step;
                let t_new = t + step;
                c.z = c.z * (c.v + dv) / c.v * t / t_new;
                c.v += dv;
                return (t_new, c, true);
            }
            let mut next = t + T::clamp(step, -t * T::of(0.2), t * T::of(0.2));
            if !(T::is_finite(next) && next > lo && next < hi) {
                next = T::of(0.5) * (lo + hi);
            }
            t = next;
            c = self.core(p2, t);
        }
        (t, c, false)
    }

    fn make_state(&self, p: T, t: T, c: &Core<T>) -> GasState<T> {
        if c.validity == Validity::INVALID {
            return GasState::invalid(p, t);
        }
        let w2 = -(c.v * c.v / self.molar_mass) * (c.cp / c.cv) * c.dp_dv;
        let out = GasState {
            pressure: p,
            temperature: t,
            z: c.z,
            volume: c.v / self.molar_mass,
            enthalpy: c.h * self.per_kg,
            entropy: c.s * self.per_kg,
            cp: c.cp * self.per_kg,
            speed_of_sound: T::sqrt(T::max(w2, T::ZERO)),
            validity: c.validity,
        };
        let finite = T::is_finite(out.enthalpy)
            && T::is_finite(out.entropy)
            && T::is_finite(out.cp)
            && T::is_finite(out.speed_of_sound)
            && out.cp > T::ZERO;
        if finite {
            out
        } else {
            GasState::invalid(p, t)
        }
    }
}

impl<T: Real, const C: usize> GasModel<T> for PengRobinson<T, C> {
    /// Every property is a function of the state (p, T): Z from the suction
    /// state, the isentropic state from the suction state and p2.
    #[inline]
    fn property_inputs(&self) -> PropertyInputs {
        PropertyInputs {
            temperature: true,
            pressure: true,
            compressibility_from_state: true,
            state_functions: true,
        }
    }

    #[inline]
    fn gas_constant(&self) -> T {
        self.gas_constant
    }

    /// Ideal-gas cp0 averaged over the two ends, k = cp0/(cp0 − R), and Z:
    /// `z_supplied` when given (the train passes the mean of its stages'
    /// suction Z for its whole-train ideal references), else the mean of
    /// the two ends' Z from the equation of state.
    fn path(&self, p1: T, t1: T, p2: T, t2: T, z_supplied: Option<T>) -> PathProperties<T> {
        let cp = T::of(0.5) * (self.ideal(t1).0 + self.ideal(t2).0) * self.per_kg;
        let z = match z_supplied {
            Some(z) if T::is_finite(z) && z > T::ZERO && z <= T::of(2.0) => z,
            _ => T::of(0.5) * (self.core(p1, t1).z + self.core(p2, t2).z),
        };
        PathProperties {
            gas_constant: self.gas_constant,
            k: cp / (cp - self.gas_constant),
            cp,
            z,
        }
    }

    fn state(&self, p: T, t: T, _z_supplied: Option<T>) -> GasState<T> {
        let c = self.core(p, t);
        self.make_state(p, t, &c)
    }

    /// Newton on T with (∂s/∂T)_p = cp/T from T1·(p2/p1)^(Z·R/cp), steps
    /// limited to ±20 %, bisection inside the bracket the iterates have
    /// established whenever a step leaves it; at most
    /// [`ISENTROPIC_ITERATIONS`], else uncertain (not converged).
    fn isentropic_state(&self, inlet: &GasState<T>, p2: T, _z_supplied: Option<T>) -> GasState<T> {
        if inlet.validity.quality == Quality::Bad {
            return GasState::invalid(p2, inlet.temperature);
        }
        let t1 = inlet.temperature;
        let c1 = self.core(inlet.pressure, t1);
        let ln_r = T::ln(p2 / inlet.pressure);
        let start = t1 * T::exp(isentropic_temperature_exponent(inlet.pressure, &c1) * ln_r);
        let (t, c, converged) = self.entropy_match(inlet.entropy * self.molar_mass, p2, start, t1);
        let mut out = self.make_state(p2, t, &c);
        if !converged {
            out.validity = out
                .validity
                .worst(Validity::uncertain(ValidityReason::NotConverged));
        }
        out
    }

    /// Specialised for speed: usually three state evaluations (suction,
    /// discharge, one for the entropy match from a second-order start), no
    /// speed of sound, p·v = Z·R·T per kg.
    fn compression(
        &self,
        p1: T,
        t1: T,
        p2: T,
        ln_ratio: T,
        t2: Option<T>,
        _z_supplied: Option<T>,
    ) -> CompressionStates<T> {
        let c1 = self.core(p1, t1);
        if c1.validity.quality == Quality::Bad {
            return CompressionStates {
                isentropic_validity: c1.validity,
                validity: c1.validity,
                ..CompressionStates::invalid()
            };
        }
        // The entropy match starts from the suction state's isentropic
        // exponent only: the isentropic state must not depend on the
        // measured discharge temperature (the dependency rule,
        // `crate::dependency`: the isentropic head does not use T2), not even
        // through the solver's start within its tolerance.
        let c2 = t2.map(|t| (t, self.core(p2, t)));
        let m1 = isentropic_temperature_exponent(p1, &c1);
        let start = t1 * T::exp(m1 * ln_ratio);
        let (t2s, c2s, converged) = self.entropy_match(c1.s, p2, start, t1);
        let mut iso_validity = c1.validity.worst(c2s.validity);
        if !converged {
            iso_validity = iso_validity.worst(Validity::uncertain(ValidityReason::NotConverged));
        }
        let zt1 = c1.z * t1;
        let r = self.gas_constant;
        let dhs = (c2s.h - c1.h) * self.per_kg;
        let iso_pv_rise = r * (c2s.z * t2s - zt1);
        let iso_ln_pv = T::ln(c2s.z * t2s / zt1);
        let mut out = CompressionStates {
            suction_z: c1.z,
            isentropic_temperature: t2s,
            isentropic_enthalpy_rise: dhs,
            isentropic_pv_rise: iso_pv_rise,
            isentropic_ln_pv_ratio: iso_ln_pv,
            isentropic_exponent: ln_ratio / (ln_ratio - iso_ln_pv),
            head_factor: dhs * iso_ln_pv / (ln_ratio * iso_pv_rise),
            isentropic_validity: iso_validity,
            validity: iso_validity,
            ..CompressionStates::invalid()
        };
        if let Some((t2, c2)) = c2 {
            out.has_discharge = true;
            out.discharge_z = c2.z;
            out.enthalpy_rise = (c2.h - c1.h) * self.per_kg;
            out.entropy_rise = (c2.s - c1.s) * self.per_kg;
            out.pv_rise = r * (c2.z * t2 - zt1);
            out.ln_pv_ratio = T::ln(c2.z * t2 / zt1);
            out.validity = iso_validity.worst(c2.validity);
        }
        out
    }

    /// Péneloux-translated density of the state's root; a liquid-like
    /// root is uncertain (a cubic's dense phase, even translated), a
    /// stable-liquid or invalid state bad.
    fn dense_density(&self, p: T, t: T) -> Option<(T, Validity)> {
        let c = self.core(p, t);
        Some((
            self.molar_mass / (c.v - self.volume_shift),
            dense_validity(c.validity),
        ))
    }

    /// Enthalpies of the model's root at both ends; a liquid-like end (a
    /// cooler taking supercritical CO2 into the dense phase) is uncertain,
    /// not bad: no phase change happens above the critical pressure.
    ///
    /// Close states (|ΔT| ≤ [`CLOSE_STATES_K`], |Δp| ≤ 5 %): the trapezoid
    /// ½(cp_in + cp_out)·ΔT + ½(h_p,in + h_p,out)·Δp with
    /// (∂h/∂p)_T = v − T(∂v/∂T)_p, second-order accurate, instead of the
    /// difference of two enthalpies whose f32 rounding (about 1e-3 J/mol of a
    /// dense-phase departure of 1e4 J/mol) would swamp a drop of a few J/kg.
    fn enthalpy_drop(
        &self,
        p_in: T,
        t_in: T,
        p_out: T,
        t_out: T,
        _z_supplied: Option<T>,
    ) -> (T, Validity) {
        let a = self.core(p_in, t_in);
        let b = self.core(p_out, t_out);
        let dt = t_in - t_out;
        let dp = p_in - p_out;
        let close = T::abs(dt) <= T::of(CLOSE_STATES_K) && T::abs(dp) <= T::of(0.05) * p_in;
        let drop = if close {
            let h_p = |c: &Core<T>, t: T| c.v + t * c.dp_dt / c.dp_dv;
            T::of(0.5) * ((a.cp + b.cp) * dt + (h_p(&a, t_in) + h_p(&b, t_out)) * dp)
        } else {
            a.h - b.h
        };
        (
            drop * self.per_kg,
            dense_validity(a.validity).worst(dense_validity(b.validity)),
        )
    }
}
