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
//! Roots: Newton on the cubic from the second-virial Z = 1 + B − A; its
//! root is kept when it is the largest (above the inflection point, or the
//! only real root), else Newton restarts from Z = 1 + B, an upper bound of
//! the largest root (Z − B ≤ 1 for any PR root), from which it converges
//! monotonically to the largest (vapour-like) root; at most
//! [`CUBIC_ITERATIONS`] steps each. A root with
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
use core::cell::Cell;

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

/// Step in ln T below which the device (f32) build's entropy match takes its
/// last Newton step without evaluating the state there (see
/// `entropy_match`): at 300 K a step of up to 1.5 K, whose error comes only
/// from the slope of the residual cp (the ideal-gas slope is taken into
/// account). `tests/real_gas_coolprop.rs` checks the f32 result against a
/// converged f64 bisection (measured within 0.003 K of T2s).
pub const LINEAR_STEP: f64 = 5.0e-3;

/// In the f64 reference build the entropy match iterates on evaluated
/// states until the Newton step in ln T is below this (the reported h, Z
/// and T2s then belong to one evaluated state; the f32-vs-f64 comparison
/// shows what the device build's unevaluated last step costs).
pub const EXACT_STEP: f64 = 1.0e-10;

const SQRT2: f64 = core::f64::consts::SQRT_2;

/// Validity of a state used as a dense phase: liquid-like is uncertain.
fn dense_validity(v: Validity) -> Validity {
    match v.reason {
        ValidityReason::LiquidLike => Validity::uncertain(ValidityReason::DenseEstimate),
        _ => v,
    }
}

/// Largest |u| for which [`ln_near_one`] and [`log_departure`] use the
/// series: its first omitted term, u¹³/13, is then below 3.2e-10 relative.
const SERIES_LIMIT: f64 = 0.2;

/// 2·atanh(u) = ln((1 + u)/(1 − u)) by its series to u¹¹ (Abramowitz &
/// Stegun 4.6.22 / 4.1.27), for |u| ≤ [`SERIES_LIMIT`].
#[inline(always)]
fn two_atanh<T: Real>(u: T) -> T {
    let u2 = u * u;
    let tail = T::of(1.0 / 7.0) + u2 * (T::of(1.0 / 9.0) + u2 * T::of(1.0 / 11.0));
    T::of(2.0) * u * (T::ONE + u2 * (T::of(1.0 / 3.0) + u2 * (T::of(1.0 / 5.0) + u2 * tail)))
}

/// ln x: by the series 2·atanh((x − 1)/(x + 1)) for x in about [0.67, 1.5]
/// (one division and eight multiply-adds instead of a `logf` call: the
/// gas-like states of a compressor, where Z − B and ratios of Z stay near
/// one), else `T::ln`.
#[inline(always)]
fn ln_near_one<T: Real>(x: T) -> T {
    ln_ratio_near_one(x, T::ONE)
}

/// ln(x/y) for x/y near one (see [`ln_near_one`]), else `T::ln(x/y)`.
#[inline(always)]
fn ln_ratio_near_one<T: Real>(x: T, y: T) -> T {
    let u = (x - y) / (x + y);
    if T::abs(u) <= T::of(SERIES_LIMIT) {
        two_atanh(u)
    } else {
        ln_out_of_line(x / y)
    }
}

/// The departure functions' logarithm
/// ln[(Z + (1 + √2)B)/(Z + (1 − √2)B)] = 2·atanh(√2·B/(Z + B)).
#[inline(always)]
fn log_departure<T: Real>(z: T, big_b: T) -> T {
    let s2 = T::of(SQRT2);
    let u = s2 * big_b / (z + big_b);
    if u <= T::of(SERIES_LIMIT) {
        two_atanh(u)
    } else {
        ln_out_of_line((z + (T::ONE + s2) * big_b) / (z + (T::ONE - s2) * big_b))
    }
}

/// Temperatures (K) between which [`inv_sqrt_temperature`] iterates from
/// its fitted seed.
const RSQRT_RANGE: (f64, f64) = (150.0, 1000.0);

/// 1/√T: Newton's iteration for the reciprocal square root,
/// y ← y·(3 − T·y²)/2 (no division and no `sqrtf`, a software routine of
/// about 50 instructions on Cortex-M4F), from a quadratic fitted to 1/√T
/// over [`RSQRT_RANGE`] (relative error at most 5.8 %). The relative error
/// e becomes −1.5·e² per step: three steps leave at most 3e-9 (below f32
/// rounding), a fourth in f64 1e-17. Outside the range `1/T::sqrt(t)`.
#[inline(always)]
fn inv_sqrt_temperature<T: Real>(t: T) -> T {
    if t > T::of(RSQRT_RANGE.0) && t < T::of(RSQRT_RANGE.1) {
        let mut y = T::of(0.096_400_898_279_824_05)
            + t * (T::of(-1.417_358_030_547_063_8e-4) + t * T::of(7.879_088_141_897_757e-8));
        let half_t = T::of(0.5) * t;
        let steps = if T::EPSILON < T::of(1e-9) { 4 } else { 3 };
        for _ in 0..steps {
            y = y * (T::of(1.5) - half_t * y * y);
        }
        y
    } else {
        inv_sqrt_out_of_line(t)
    }
}

/// Largest |y| for which [`exp_start`] uses tanh(y/2) by its series.
const EXP_SERIES_LIMIT: f64 = 0.4;

/// e^y for the entropy match's start: in the device (f32) build, for
/// |y| ≤ [`EXP_SERIES_LIMIT`], (1 + u)/(1 − u) with u = tanh(y/2) by its
/// series to (y/2)⁷ (Abramowitz & Stegun 4.5.64; the first omitted term,
/// 62/2835·(y/2)⁹, is below 1.2e-8 relative, under f32 rounding): one
/// division and five multiply-adds instead of an `expf` call. Else (and
/// always in the f64 reference build) `T::exp`.
#[inline]
fn exp_start<T: Real>(y: T) -> T {
    let h = T::of(0.5) * y;
    if T::EPSILON > T::of(1e-9) && T::abs(y) <= T::of(EXP_SERIES_LIMIT) {
        let h2 = h * h;
        let u = h
            * (T::ONE
                - h2 * (T::of(1.0 / 3.0) - h2 * (T::of(2.0 / 15.0) - h2 * T::of(17.0 / 315.0))));
        (T::ONE + u) / (T::ONE - u)
    } else {
        T::exp(y)
    }
}

/// `T::ln` for the series' fallbacks, out of line: `logf` is inlined at
/// every call site otherwise (about 140 bytes each).
#[inline(never)]
fn ln_out_of_line<T: Real>(x: T) -> T {
    T::ln(x)
}

/// ln(p0/p), p0 the reference pressure: the pressure term of an absolute
/// entropy (one expression, so that [`GasModel::isothermal_work`] adds it
/// to a state evaluated relative to its own pressure with the bits a fresh
/// evaluation gives).
#[inline]
fn ln_reference_pressure<T: Real>(p: T) -> T {
    T::ln(T::of(REFERENCE_PRESSURE) * (T::ONE / p))
}

/// 1/√T outside the fitted range, out of line (rare).
#[inline(never)]
fn inv_sqrt_out_of_line<T: Real>(t: T) -> T {
    T::ONE / T::sqrt(t)
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
///
/// It remembers the last [`MEMO_SLOTS`] suction and discharge states its
/// [`GasModel::compression`] evaluated (interior mutability, so it is not
/// `Sync`: one model per train, not shared between threads or interrupt
/// priorities; and not `Copy`): a cooler's inlet is a stage's discharge
/// state, the isothermal reference starts from the first suction state.
/// A remembered value is the one a fresh evaluation returns, bit for bit.
#[derive(Debug, PartialEq)]
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
    /// 1/T_pc and 1/p_pc (the near-critical test multiplies).
    inv_pseudo_critical: (T, T),
    /// The last evaluated states of [`GasModel::compression`].
    memo: StateMemo<T>,
}

/// How many suction states, and how many discharge states, a
/// [`PengRobinson`] model remembers: those of four compressor stages (a
/// longer train's first stages are evaluated again, not wrongly).
pub const MEMO_SLOTS: usize = 4;

/// Values remembered at exact keys (p, T) in a ring of [`MEMO_SLOTS`].
/// Keys start as NaN, which matches nothing; equal keys are equal bits
/// except ±0, where every evaluation gives the same invalid state.
struct Ring<T, V> {
    p: [Cell<T>; MEMO_SLOTS],
    t: [Cell<T>; MEMO_SLOTS],
    value: [Cell<V>; MEMO_SLOTS],
    next: Cell<u8>,
}

impl<T: Real, V: Copy> Ring<T, V> {
    fn new(fill: V) -> Self {
        Ring {
            p: core::array::from_fn(|_| Cell::new(T::of(f64::NAN))),
            t: core::array::from_fn(|_| Cell::new(T::of(f64::NAN))),
            value: core::array::from_fn(|_| Cell::new(fill)),
            next: Cell::new(0),
        }
    }

    /// Forgets every value.
    fn clear(&self) {
        for k in &self.p {
            k.set(T::of(f64::NAN));
        }
    }

    /// The value remembered at exactly (p, t).
    #[inline]
    fn find(&self, p: T, t: T) -> Option<V> {
        for ((kp, kt), v) in self.p.iter().zip(&self.t).zip(&self.value) {
            if kp.get() == p && kt.get() == t {
                return Some(v.get());
            }
        }
        None
    }

    /// Remembers `v` at (p, t), over the oldest.
    #[inline]
    fn insert(&self, p: T, t: T, v: V) {
        let k = usize::from(self.next.get()) % MEMO_SLOTS;
        if let (Some(kp), Some(kt), Some(slot)) = (self.p.get(k), self.t.get(k), self.value.get(k))
        {
            kp.set(p);
            kt.set(t);
            slot.set(v);
        }
        self.next.set(((k + 1) % MEMO_SLOTS) as u8);
    }
}

impl<T: Copy, V: Copy> Clone for Ring<T, V> {
    fn clone(&self) -> Self {
        Ring {
            p: self.p.clone(),
            t: self.t.clone(),
            value: self.value.clone(),
            next: self.next.clone(),
        }
    }
}

/// The states [`GasModel::compression`] evaluated last: whole suction
/// states (evaluated at (p, T) alone, as [`GasModel::state`] does) and the
/// discharge states' molar enthalpy and validity (their entropy used the
/// suction's logarithm, so only h is what a fresh evaluation gives).
struct StateMemo<T> {
    suction: Ring<T, Core<T>>,
    discharge: Ring<T, (T, Validity)>,
}

impl<T: Real> StateMemo<T> {
    fn new() -> Self {
        StateMemo {
            suction: Ring::new(Core::invalid()),
            discharge: Ring::new((T::ZERO, Validity::INVALID)),
        }
    }

    /// Forgets every state (the composition changed).
    fn clear(&self) {
        self.suction.clear();
        self.discharge.clear();
    }
}

impl<T: Copy> Clone for StateMemo<T> {
    fn clone(&self) -> Self {
        StateMemo {
            suction: self.suction.clone(),
            discharge: self.discharge.clone(),
        }
    }
}

/// Remembered states are no part of the model's value.
impl<T> PartialEq for StateMemo<T> {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}

impl<T> core::fmt::Debug for StateMemo<T> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str("StateMemo")
    }
}

#[cfg(feature = "defmt")]
impl<T> defmt::Format for StateMemo<T> {
    fn format(&self, f: defmt::Formatter) {
        defmt::write!(f, "StateMemo")
    }
}

impl<T: Real, const C: usize> Clone for PengRobinson<T, C> {
    fn clone(&self) -> Self {
        PengRobinson {
            memo: self.memo.clone(),
            ..*self
        }
    }
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
    /// m³/mol
    v: T,
    /// (∂P/∂v)_T, Pa mol/m³
    dp_dv: T,
    /// (∂P/∂T)_v, Pa/K
    dp_dt: T,
    /// ln(T/T0) (T0 the reference temperature), -.
    ln_t: T,
    /// ln(p_ref/p), -: p_ref is the reference pressure p0, or a
    /// compression's suction pressure (its entropies are counted from the
    /// suction pressure, which saves a logarithm per stage).
    ln_p: T,
    validity: Validity,
}

impl<T: Real> Core<T> {
    /// Placeholder values with bad validity.
    fn invalid() -> Self {
        Core {
            z: T::ONE,
            h: T::ZERO,
            s: T::ZERO,
            cp: T::ONE,
            v: T::ONE,
            dp_dv: -T::ONE,
            dp_dt: T::ZERO,
            ln_t: T::ZERO,
            ln_p: T::ZERO,
            validity: Validity::INVALID,
        }
    }
}

/// Newton's iteration on Z³ + c2 Z² + c1 Z + c0 from `z`, at most
/// [`CUBIC_ITERATIONS`] steps, and whether it converged: Newton's next
/// step would be about f''/(2f')·step², so it stops when that is within
/// `tol` relative, a few units in the last place (saves the step that only
/// confirms). A NaN step fails the test and runs to the cap (not
/// converged). Always inline: on Cortex-M0 its own frame would sit below
/// the state evaluation's.
#[inline(always)]
fn cubic_newton<T: Real>(mut z: T, [c2, c1, c0]: [T; 3], tol: T) -> (T, bool) {
    for _ in 0..CUBIC_ITERATIONS {
        let f = ((z + c2) * z + c1) * z + c0;
        let df = (T::of(3.0) * z + T::of(2.0) * c2) * z + c1;
        let d2f = T::of(6.0) * z + T::of(2.0) * c2;
        let step = f / df;
        z = z - step;
        if T::abs(d2f) * step * step <= T::of(2.0) * T::abs(df) * tol * z {
            return (z, true);
        }
    }
    (z, false)
}

/// `validity` made worse if the cubic's smallest root `zl` (from the
/// deflated quadratic with `q1` and discriminant `disc` > 0) is a liquid
/// more stable than the vapour root `z` (`l` its departure logarithm):
/// the fugacities of the two roots (pseudo-pure one-fluid test). Out of
/// line: gas states above the critical temperature never get here.
#[inline(never)]
fn saturation_validity<T: Real>(
    validity: Validity,
    z: T,
    l: T,
    q1: T,
    disc: T,
    big_a: T,
    big_b: T,
) -> Validity {
    let zl = T::of(0.5) * (-q1 - T::sqrt(disc));
    if !(zl > big_b) {
        return validity;
    }
    let k = big_a / (T::of(2.0 * SQRT2) * big_b);
    let ln_phi = |zz: T, ll: T| zz - T::ONE - T::ln(zz - big_b) - k * ll;
    let margin = ln_phi(z, l) - ln_phi(zl, log_departure(zl, big_b));
    if margin > T::ZERO {
        Validity::bad(ValidityReason::NoVapourRoot)
    } else if margin > -T::of(SATURATION_MARGIN) {
        validity.worst(Validity::uncertain(ValidityReason::NearSaturation))
    } else {
        validity
    }
}

/// `validity` made worse by the range checks (out of line: most states are
/// in range and skip it).
#[inline(never)]
fn range_validity<T: Real>(validity: Validity, near_critical: bool, t: T, p: T) -> Validity {
    let mut v = validity;
    if near_critical {
        v = v.worst(Validity::uncertain(ValidityReason::NearCritical));
    }
    if t < T::of(CP0_T_MIN) || t > T::of(CP0_T_MAX) {
        v = v.worst(Validity::uncertain(ValidityReason::TemperatureOutOfRange));
    }
    if p > T::of(MAX_PRESSURE) {
        v = v.worst(Validity::uncertain(ValidityReason::PressureOutOfRange));
    }
    v
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
            inv_pseudo_critical: (T::ONE, T::ONE),
            memo: StateMemo::new(),
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
        self.inv_pseudo_critical = (T::of(1.0 / tpc), T::of(1.0 / ppc));
        self.memo.clear();
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
    /// (J/(mol K)) from the reference temperature, given `ln_t` = ln(T/T0).
    #[inline(always)]
    fn ideal(&self, t: T, ln_t: T) -> (T, T, T) {
        let [c0, c1, c2, c3] = self.cp0;
        let t0 = T::of(REFERENCE_TEMPERATURE);
        let d = t - t0;
        let sum = t + t0;
        let sq = t * t + t0 * t0;
        let cube = sq + t * t0;
        let cp0 = self.ideal_cp(t);
        let h = d
            * (c0
                + c1 * T::of(0.5) * sum
                + c2 * T::of(1.0 / 3.0) * cube
                + c3 * T::of(0.25) * sum * sq);
        let s = c0 * ln_t + d * (c1 + c2 * T::of(0.5) * sum + c3 * T::of(1.0 / 3.0) * cube);
        (cp0, h, s)
    }

    /// Ideal-gas cp0, J/(mol K).
    #[inline]
    fn ideal_cp(&self, t: T) -> T {
        let [c0, c1, c2, c3] = self.cp0;
        c0 + t * (c1 + t * (c2 + t * c3))
    }

    /// d cp0 / dT, J/(mol K²).
    #[inline]
    fn ideal_cp_slope(&self, t: T) -> T {
        let [_, c1, c2, c3] = self.cp0;
        c1 + t * (T::of(2.0) * c2 + t * T::of(3.0) * c3)
    }

    fn core(&self, p: T, t: T) -> Core<T> {
        self.core_at::<true, true>(p, t, None, None)
    }

    /// One (p, T) evaluation. `ENTROPY = false` skips the entropy (s = 0);
    /// `DERIVATIVES = false` skips cp, (∂P/∂v)_T and (∂P/∂T)_v (left
    /// at placeholder values): Z, v and h only. `ln_t` = ln(T/T0) and
    /// `ln_p` = ln(p_ref/p) (see `Core::ln_p`) when the caller already
    /// knows them (the states of one compression share them), else
    /// computed here with p_ref = p0. Out of line: one
    /// copy per variant keeps flash and the callers' stack frames small.
    #[inline(never)]
    fn core_at<const ENTROPY: bool, const DERIVATIVES: bool>(
        &self,
        p: T,
        t: T,
        ln_t: Option<T>,
        ln_p: Option<T>,
    ) -> Core<T> {
        let r = T::of(MOLAR_GAS_CONSTANT);
        // Finite and positive (NaN fails every comparison).
        let huge = T::of(1.0e30);
        if !(p > T::ZERO && p < huge && t > T::ZERO && t < huge) {
            return Core::invalid();
        }
        // Reciprocals once: a division costs about 12 instructions on
        // Cortex-M4F and 180 on Cortex-M0.
        let inv_sqrt_t = inv_sqrt_temperature(t);
        let sqrt_t = t * inv_sqrt_t;
        let inv_t = inv_sqrt_t * inv_sqrt_t;
        let inv_p = T::ONE / p;
        let [a0, a1, a2] = self.a;
        let a = a0 - a1 * sqrt_t + a2 * t;
        let da = a2 - T::of(0.5) * a1 * inv_sqrt_t;
        let b = self.b;
        let rt = r * t;
        let inv_rt = inv_t * T::of(1.0 / MOLAR_GAS_CONSTANT);
        let big_b = b * p * inv_rt;
        let big_a = a * p * inv_rt * inv_rt;
        // Z³ + c2 Z² + c1 Z + c0 = 0
        let c2 = big_b - T::ONE;
        let c1 = big_a - T::of(3.0) * big_b * big_b - T::of(2.0) * big_b;
        let c0 = -(big_a * big_b - big_b * big_b - big_b * big_b * big_b);
        let tol = T::of(1e-13) + T::of(2.0) * T::EPSILON;
        let cubic = [c2, c1, c0];
        // Start from the second-virial estimate Z = 1 + B − A (two or three
        // steps at gas densities). With a positive slope the result is the
        // largest root exactly when it lies above the inflection point
        // (1 − B)/3 (the vertex of the deflated quadratic Z² + q1 Z + q0,
        // q1 = c2 + z, q0 = c1 + z·q1, whose roots are the other two), or
        // when it is the only real root (the quadratic's discriminant
        // negative: a dense state above the critical temperature);
        // otherwise restart from 1 + B, an upper bound of the largest root,
        // from which Newton descends monotonically to it.
        let (mut z, mut converged) = cubic_newton(T::ONE + big_b - big_a, cubic, tol);
        let slope = (T::of(3.0) * z + T::of(2.0) * c2) * z + c1;
        let q1 = c2 + z;
        let only_root = q1 * q1 - T::of(4.0) * (c1 + z * q1) < T::ZERO;
        let largest = z > (T::ONE - big_b) * T::of(1.0 / 3.0) || only_root;
        if !(converged && largest && slope > T::ZERO) {
            (z, converged) = cubic_newton(T::ONE + big_b, cubic, tol);
        }
        if !(z > big_b && z < huge) {
            return Core::invalid();
        }
        let mut validity = if converged {
            Validity::IN_RANGE
        } else {
            Validity::uncertain(ValidityReason::NotConverged)
        };
        let l = log_departure(z, big_b);
        if z < T::of(CRITICAL_VOLUME_RATIO) * big_b {
            validity = Validity::bad(ValidityReason::LiquidLike);
        } else {
            // Other real roots: deflate to Z² + q1 Z + q0.
            let q1 = c2 + z;
            let q0 = c1 + z * q1;
            let disc = q1 * q1 - T::of(4.0) * q0;
            if disc > T::ZERO {
                validity = saturation_validity(validity, z, l, q1, disc, big_a, big_b);
            }
        }
        let in_fit = t >= T::of(CP0_T_MIN) && t <= T::of(CP0_T_MAX) && p <= T::of(MAX_PRESSURE);
        let (inv_tpc, inv_ppc) = self.inv_pseudo_critical;
        let tr = t * inv_tpc;
        let pr = p * inv_ppc;
        let near_critical = tr > T::of(NEAR_CRITICAL_TR.0)
            && tr < T::of(NEAR_CRITICAL_TR.1)
            && pr > T::of(NEAR_CRITICAL_PR.0)
            && pr < T::of(NEAR_CRITICAL_PR.1);
        if near_critical || !in_fit {
            validity = range_validity(validity, near_critical, t, p);
        }

        let (ln_t, ln_p) = if ENTROPY {
            (
                ln_t.unwrap_or_else(|| ln_near_one(t * T::of(1.0 / REFERENCE_TEMPERATURE))),
                ln_p.unwrap_or_else(|| ln_reference_pressure(p)),
            )
        } else {
            (T::ZERO, T::ZERO)
        };
        let (cp0, h0, s0) = self.ideal(t, ln_t);
        let k = l * self.inv_2s2b;
        let v = z * rt * inv_p;
        let h = h0 + rt * (z - T::ONE) + (t * da - a) * k;
        let s = if ENTROPY {
            // The pressure term last: a state evaluated with ln_p = 0 (a
            // compression's suction, its own reference pressure) adds it
            // later with the same bits (`isothermal_work`).
            (s0 + r * ln_near_one(z - big_b) + da * k) + r * ln_p
        } else {
            T::ZERO
        };
        let (cp, dp_dv, dp_dt) = if DERIVATIVES {
            let d2a = T::of(0.25) * a1 * inv_sqrt_t * inv_t;
            let cv = cp0 - r + t * d2a * k;
            let inv_vb = T::ONE / (v - b);
            let inv_den = T::ONE / (v * v + T::of(2.0) * b * v - b * b);
            let dp_dt = r * inv_vb - da * inv_den;
            let dp_dv = -rt * inv_vb * inv_vb + T::of(2.0) * a * (v + b) * inv_den * inv_den;
            (cv - t * dp_dt * dp_dt / dp_dv, dp_dv, dp_dt)
        } else {
            (T::ONE, -T::ONE, T::ZERO)
        };
        Core {
            z,
            h,
            s,
            cp,
            v,
            dp_dv,
            dp_dt,
            ln_t,
            ln_p,
            validity,
        }
    }

    /// The temperature at `p2` with the molar entropy `target`: Newton on
    /// ln T with (∂s/∂ln T)_p = cp from `t_start`, steps limited to ±20 %,
    /// bisection inside the bracket the iterates have established whenever
    /// a step leaves it; the step is second order in ln T with the slope of
    /// the ideal-gas cp0 (Newton's error then comes from the residual cp's
    /// slope only). In f32 a last step below [`LINEAR_STEP`] in ln T is
    /// not re-evaluated: h, v, Z and ln T follow it (h to second order, v
    /// to first); in f64 the iteration stops at an evaluated state once the
    /// step is below [`EXACT_STEP`]. `ln_t_start` (ln(T_start/T0), if known) and `ln_p` (ln(p_ref/p2), p_ref that of `target`)
    /// save logarithms. At most [`ISENTROPIC_ITERATIONS`] evaluations, else
    /// not converged.
    fn entropy_match(
        &self,
        target: T,
        p2: T,
        t_start: T,
        t1: T,
        ln_t_start: Option<T>,
        ln_p: Option<T>,
    ) -> (T, Core<T>, bool) {
        let mut t = t_start;
        let (mut lo, mut hi) = (t1 * T::of(0.3), t1 * T::of(4.0));
        let mut c = self.core_at::<true, true>(p2, t, ln_t_start, ln_p);
        let ln_p = Some(c.ln_p);
        // The f64 reference build converges on evaluated states; the f32
        // device build takes the last step without evaluating it.
        let exact = T::EPSILON < T::of(1e-9);
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
            // Newton in ln T: s(ln T) = s + cp·y + ½·T·(dcp/dT)·y², with the
            // ideal-gas slope of cp.
            let x = ds / c.cp;
            let slope = self.ideal_cp_slope(t);
            let y = x * (T::ONE - T::of(0.5) * t * slope / c.cp * x);
            // T·(e^y − 1) to third order.
            let step = t * y * (T::ONE + y * (T::of(0.5) + y * T::of(1.0 / 6.0)));
            if exact {
                if T::abs(y) <= T::of(EXACT_STEP) {
                    return (t, c, true);
                }
            } else if T::abs(y) <= T::of(LINEAR_STEP) {
                // dh = cp·dT + ½·(dcp0/dT)·dT²,
                // dv = (∂v/∂T)_p·dT = −(∂P/∂T)_v/(∂P/∂v)_T·dT, Z ∝ v/T.
                let dv = -c.dp_dt / c.dp_dv * step;
                c.h += step * (c.cp + T::of(0.5) * slope * step);
                let t_new = t + step;
                c.z = c.z * (c.v + dv) / c.v * t / t_new;
                c.v += dv;
                c.ln_t += y;
                return (t_new, c, true);
            }
            let mut next = t + T::clamp(step, -t * T::of(0.2), t * T::of(0.2));
            if !(T::is_finite(next) && next > lo && next < hi) {
                next = T::of(0.5) * (lo + hi);
            }
            t = next;
            c = self.core_at::<true, true>(p2, t, None, ln_p);
        }
        (t, c, false)
    }

    /// The isentropic state at `p2` from the suction state `c1` at
    /// (p1, t1), `ln_ratio` = ln(p2/p1). The start is Heun's step along the
    /// isentrope in (ln p, ln T): the mean of the exponent
    /// m = d ln T/d ln p at the suction and an estimate of it at the
    /// first-order end, where cp has risen by the ideal-gas cp0's rise
    /// (usually within a few 0.1 % of T2s, so one state evaluation and the
    /// second-order last step of [`PengRobinson::entropy_match`] suffice).
    /// The start uses the suction state only, never the measured discharge
    /// temperature (the dependency rule, `crate::dependency`: the
    /// isentropic head does not use T2).
    fn isentropic_from(
        &self,
        c1: &Core<T>,
        p1: T,
        t1: T,
        p2: T,
        ln_ratio: T,
    ) -> (T, Core<T>, bool) {
        let m1 = isentropic_temperature_exponent(p1, c1);
        let y1 = m1 * ln_ratio;
        let t_a = t1 * (T::ONE + y1 * (T::ONE + T::of(0.5) * y1));
        let m_a = m1 * c1.cp / (c1.cp + self.ideal_cp(t_a) - self.ideal_cp(t1));
        // Inside the entropy match's bracket [0.3, 4]·T1.
        let y = T::clamp(T::of(0.5) * (m1 + m_a) * ln_ratio, T::of(-1.2), T::of(1.38));
        let y = if T::is_finite(y) { y } else { y1 };
        self.entropy_match(
            c1.s,
            p2,
            t1 * exp_start(y),
            t1,
            Some(c1.ln_t + y),
            Some(c1.ln_p - ln_ratio),
        )
    }

    /// The squared speed of sound (m²/s²) of `c` at `t`, floored at zero
    /// (NaN stays NaN).
    #[inline]
    fn sound_squared(&self, t: T, c: &Core<T>) -> T {
        // cv = cp + T·(∂P/∂T)_v²/(∂P/∂v)_T.
        let cv = c.cp + t * c.dp_dt * c.dp_dt / c.dp_dv;
        let w2 = -(c.v * c.v / self.molar_mass) * (c.cp / cv) * c.dp_dv;
        T::max(w2, T::ZERO)
    }

    /// Whether `c` at `t` makes a usable state (else
    /// [`PengRobinson::make_state`] gives [`GasState::invalid`]): a vapour
    /// root, and finite enthalpy, entropy, cp > 0 and speed of sound (the
    /// latter tested as its square: the square root of a value in [0, ∞] is
    /// finite exactly when the value is).
    #[inline]
    fn state_usable(&self, t: T, c: &Core<T>) -> bool {
        let cp = c.cp * self.per_kg;
        c.validity != Validity::INVALID
            && T::is_finite(c.h * self.per_kg)
            && T::is_finite(c.s * self.per_kg)
            && T::is_finite(cp)
            && T::is_finite(self.sound_squared(t, c))
            && cp > T::ZERO
    }

    /// Enthalpy (J/kg), entropy (J/(kg K)) and validity of the
    /// [`GasModel::state`] made from `c` at `t`, without the speed of sound.
    fn state_hs(&self, t: T, c: &Core<T>) -> (T, T, Validity) {
        if self.state_usable(t, c) {
            (c.h * self.per_kg, c.s * self.per_kg, c.validity)
        } else {
            (T::ZERO, T::ZERO, Validity::INVALID)
        }
    }

    /// Molar enthalpy (J/mol) and validity at (p, t): remembered, or one
    /// evaluation without entropy and derivatives (the same h).
    #[inline]
    fn enthalpy_at(&self, p: T, t: T) -> (T, Validity) {
        if let Some(hv) = self.memo.discharge.find(p, t) {
            return hv;
        }
        match self.memo.suction.find(p, t) {
            Some(c) => (c.h, c.validity),
            None => {
                let c = self.core_at::<false, false>(p, t, None, None);
                (c.h, c.validity)
            }
        }
    }

    fn make_state(&self, p: T, t: T, c: &Core<T>) -> GasState<T> {
        if !self.state_usable(t, c) {
            return GasState::invalid(p, t);
        }
        GasState {
            pressure: p,
            temperature: t,
            z: c.z,
            volume: c.v / self.molar_mass,
            enthalpy: c.h * self.per_kg,
            entropy: c.s * self.per_kg,
            cp: c.cp * self.per_kg,
            speed_of_sound: T::sqrt(self.sound_squared(t, c)),
            validity: c.validity,
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
        let cp = T::of(0.5) * (self.ideal_cp(t1) + self.ideal_cp(t2)) * self.per_kg;
        let z = match z_supplied {
            Some(z) if T::is_finite(z) && z > T::ZERO && z <= T::of(2.0) => z,
            _ => {
                T::of(0.5)
                    * (self.core_at::<false, false>(p1, t1, None, None).z
                        + self.core_at::<false, false>(p2, t2, None, None).z)
            }
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

    /// The entropy match of [`PengRobinson::compression`] from the inlet's
    /// state; at most [`ISENTROPIC_ITERATIONS`], else uncertain (not
    /// converged).
    fn isentropic_state(&self, inlet: &GasState<T>, p2: T, _z_supplied: Option<T>) -> GasState<T> {
        if inlet.validity.quality == Quality::Bad {
            return GasState::invalid(p2, inlet.temperature);
        }
        let t1 = inlet.temperature;
        let c1 = self.core(inlet.pressure, t1);
        let ln_r = T::ln(p2 / inlet.pressure);
        let (t, c, converged) = self.isentropic_from(&c1, inlet.pressure, t1, p2, ln_r);
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
    /// speed of sound, p·v = Z·R·T per kg, logarithms shared between the
    /// states (ln T and ln p of the suction, ln(p2/p1), the entropy match's
    /// ln T; ratios of Z near one by their series).
    fn compression(
        &self,
        p1: T,
        t1: T,
        p2: T,
        ln_ratio: T,
        t2: Option<T>,
        _z_supplied: Option<T>,
    ) -> CompressionStates<T> {
        // Entropies from the suction pressure (ln_p = 0): only their
        // differences are used, and the discharge states' pressure term is
        // −ln(p2/p1), known.
        let c1 = self.core_at::<true, true>(p1, t1, None, Some(T::ZERO));
        self.memo.suction.insert(p1, t1, c1);
        if c1.validity.quality == Quality::Bad {
            return CompressionStates {
                isentropic_validity: c1.validity,
                validity: c1.validity,
                ..CompressionStates::invalid()
            };
        }
        let (t2s, c2s, converged) = self.isentropic_from(&c1, p1, t1, p2, ln_ratio);
        let mut iso_validity = c1.validity.worst(c2s.validity);
        if !converged {
            iso_validity = iso_validity.worst(Validity::uncertain(ValidityReason::NotConverged));
        }
        let zt1 = c1.z * t1;
        let r = self.gas_constant;
        let dhs = (c2s.h - c1.h) * self.per_kg;
        let iso_pv_rise = r * (c2s.z * t2s - zt1);
        let iso_ln_pv = (c2s.ln_t - c1.ln_t) + ln_ratio_near_one(c2s.z, c1.z);
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
        // The discharge state last, when the isentropic one is reduced to
        // the numbers above (a smaller stack frame).
        if let Some(t2) = t2 {
            let c2 = self.core_at::<true, false>(p2, t2, None, Some(c1.ln_p - ln_ratio));
            self.memo.discharge.insert(p2, t2, (c2.h, c2.validity));
            out.has_discharge = true;
            out.discharge_z = c2.z;
            out.enthalpy_rise = (c2.h - c1.h) * self.per_kg;
            out.entropy_rise = (c2.s - c1.s) * self.per_kg;
            out.pv_rise = r * (c2.z * t2 - zt1);
            out.ln_pv_ratio = (c2.ln_t - c1.ln_t) + ln_ratio_near_one(c2.z, c1.z);
            out.validity = iso_validity.worst(c2.validity);
        }
        out
    }

    /// Péneloux-translated density of the state's root; a liquid-like
    /// root is uncertain (a cubic's dense phase, even translated), a
    /// stable-liquid or invalid state bad.
    fn dense_density(&self, p: T, t: T) -> Option<(T, Validity)> {
        let c = self.core_at::<false, false>(p, t, None, None);
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
        let dt = t_in - t_out;
        let dp = p_in - p_out;
        let close = T::abs(dt) <= T::of(CLOSE_STATES_K) && T::abs(dp) <= T::of(0.05) * p_in;
        if close {
            // (The full evaluation: rare, and one variant less in flash.)
            let a = self.core(p_in, t_in);
            let b = self.core(p_out, t_out);
            let h_p = |c: &Core<T>, t: T| c.v + t * c.dp_dt / c.dp_dv;
            let drop = T::of(0.5) * ((a.cp + b.cp) * dt + (h_p(&a, t_in) + h_p(&b, t_out)) * dp);
            (
                drop * self.per_kg,
                dense_validity(a.validity).worst(dense_validity(b.validity)),
            )
        } else {
            // Enthalpies only; the inlet is usually a stage's discharge
            // state, remembered.
            let (ha, va) = self.enthalpy_at(p_in, t_in);
            let (hb, vb) = self.enthalpy_at(p_out, t_out);
            (
                (ha - hb) * self.per_kg,
                dense_validity(va).worst(dense_validity(vb)),
            )
        }
    }

    /// The default's two [`GasModel::state`] evaluations, without the speed
    /// of sound, the suction state remembered from
    /// [`PengRobinson::compression`] when it was evaluated there (the
    /// train's isothermal reference starts from its first suction state).
    fn isothermal_work(
        &self,
        p1: T,
        p2: T,
        ln_ratio: T,
        t: T,
        _z_supplied: Option<T>,
    ) -> (T, Validity) {
        let _ = ln_ratio;
        // The suction state as `compression` evaluates it (entropy from its
        // own pressure), then the absolute entropy with the bits of
        // `core(p1, t)`; the same ln(T/T0) at p2.
        let mut c1 = match self.memo.suction.find(p1, t) {
            Some(c) => c,
            None => self.core_at::<true, true>(p1, t, None, Some(T::ZERO)),
        };
        c1.s += T::of(MOLAR_GAS_CONSTANT) * ln_reference_pressure(p1);
        let ln_t = (c1.validity != Validity::INVALID).then_some(c1.ln_t);
        let c2 = self.core_at::<true, true>(p2, t, ln_t, None);
        let (h1, s1, v1) = self.state_hs(t, &c1);
        let (h2, s2, v2) = self.state_hs(t, &c2);
        ((h2 - h1) - t * (s2 - s1), v1.worst(v2))
    }
}
