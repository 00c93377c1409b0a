//! ISO 5167-2 orifice plates with corner, flange or D and D/2 tappings.
//!
//! Source: ISO 5167-2:2003, "Measurement of fluid flow by means of pressure
//! differential devices inserted in circular cross-section conduits running
//! full — Part 2: Orifice plates": the Reader–Harris/Gallagher discharge
//! coefficient (equation 4, with the small-pipe term for D < 71.12 mm),
//! the mass flow equation qm = C/√(1−β⁴)·ε·(π/4)·d²·√(2·Δp·ρ1) (ISO 5167-1
//! equation 1), and the validity limits of clause 5.3.1:
//! d ≥ 12.5 mm, 50 mm ≤ D ≤ 1000 mm, 0.1 ≤ β ≤ 0.75, Re_D ≥ 5000 for
//! β ≤ 0.56 and Re_D ≥ 16000·β² above, and for flange tappings also
//! Re_D ≥ 170·β²·D with D in mm (= 170000·β²·D with D in m, as the `fluids`
//! documentation writes it). Checked against `fluids` 1.3.1
//! (`fluids.flow_meter`), see `tests/flow_iso5167_fluids.rs`.
//!
//! Not modelled: thermal expansion of plate and pipe (pass diameters at
//! flowing temperature), drain holes, the standard's uncertainty statement.

use super::expansibility::{expansibility_valid, orifice_expansibility};
use super::gas_density;
use crate::boundary::{pressure_pa, temperature_k};
use crate::error::{check_positive, check_range, ConfigError, Problem};
use crate::gas::MOLAR_GAS_CONSTANT;
use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::units::{Kelvin, PressureAbs};

/// Most Reynolds-number iterations of the flow solution.
pub const MAX_ITERATIONS: u8 = 16;

/// Pressure tapping arrangement.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TapType {
    /// Corner tappings (L1 = L2' = 0).
    Corner,
    /// Flange tappings (L1 = L2' = 25.4 mm / D).
    Flange,
    /// D and D/2 tappings (L1 = 1, L2' = 0.47).
    DAndDHalf,
}

/// Reader–Harris/Gallagher discharge coefficient (ISO 5167-2:2003 eq. 4)
/// for diameter ratio `beta`, pipe Reynolds number `re_d` (> 0) and pipe
/// diameter `pipe_diameter_m`. Assumes `0 < beta < 1` and `re_d > 0`.
pub fn discharge_coefficient<T: Real>(beta: T, re_d: T, pipe_diameter_m: T, taps: TapType) -> T {
    let (l1, l2) = match taps {
        TapType::Corner => (T::ZERO, T::ZERO),
        TapType::Flange => {
            let l = T::of(0.0254) / pipe_diameter_m;
            (l, l)
        }
        TapType::DAndDHalf => (T::ONE, T::of(0.47)),
    };
    let pow = |x: T, y: f64| T::exp(T::of(y) * T::ln(x));
    let b2 = beta * beta;
    let b4 = b2 * b2;
    let b8 = b4 * b4;
    let a = pow(T::of(19000.0) * beta / re_d, 0.8);
    let m2 = T::of(2.0) * l2 / (T::ONE - beta);
    let c_inf = T::of(0.5961) + T::of(0.0261) * b2 - T::of(0.216) * b8
        + T::of(0.000521) * pow(T::of(1.0e6) * beta / re_d, 0.7)
        + (T::of(0.0188) + T::of(0.0063) * a)
            * b2
            * beta
            * T::sqrt(beta)
            * pow(T::of(1.0e6) / re_d, 0.3);
    let upstream = (T::of(0.043) + T::of(0.080) * T::exp(T::of(-10.0) * l1)
        - T::of(0.123) * T::exp(T::of(-7.0) * l1))
        * (T::ONE - T::of(0.11) * a)
        * b4
        / (T::ONE - b4);
    let downstream = if m2 > T::ZERO {
        -T::of(0.031) * (m2 - T::of(0.8) * pow(m2, 1.1)) * pow(beta, 1.3)
    } else {
        T::ZERO
    };
    let mut c = c_inf + upstream + downstream;
    if pipe_diameter_m < T::of(0.07112) {
        c += T::of(0.011) * (T::of(0.75) - beta) * (T::of(2.8) - pipe_diameter_m / T::of(0.0254));
    }
    c
}

/// `true` if the plate and the Reynolds number lie within the ISO 5167-2
/// limits (clause 5.3.1; see the module text).
pub fn within_limits<T: Real>(
    pipe_diameter_m: T,
    bore_diameter_m: T,
    re_d: T,
    taps: TapType,
) -> bool {
    let beta = bore_diameter_m / pipe_diameter_m;
    let b2 = beta * beta;
    let geometry = bore_diameter_m >= T::of(0.0125)
        && pipe_diameter_m >= T::of(0.05)
        && pipe_diameter_m <= T::of(1.0)
        && beta >= T::of(0.1)
        && beta <= T::of(0.75);
    let re_min = if beta <= T::of(0.56) {
        T::of(5000.0)
    } else {
        T::of(16000.0) * b2
    };
    let re_flange = match taps {
        TapType::Flange => T::of(170_000.0) * b2 * pipe_diameter_m,
        TapType::Corner | TapType::DAndDHalf => T::ZERO,
    };
    geometry && re_d >= re_min && re_d >= re_flange
}

/// Orifice meter configuration (plain data, validated by [`Orifice::new`]).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OrificeConfig<T> {
    /// Pipe internal diameter D at flowing conditions, m.
    pub pipe_diameter: T,
    /// Orifice bore d at flowing conditions, m.
    pub bore_diameter: T,
    /// Tapping arrangement.
    pub taps: TapType,
    /// Isentropic exponent κ of the gas (> 1).
    pub isentropic_exponent: T,
    /// Dynamic viscosity of the gas, Pa s.
    pub viscosity: T,
    /// Specific gas constant R/M, J/(kg K) (for the density).
    pub gas_constant: T,
}

/// Measured inputs of one orifice calculation.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OrificeInputs<T> {
    /// Differential pressure, Pa (after the low-flow cut-off, if any).
    pub differential_pressure: Measured<T>,
    /// Pressure at the upstream tapping.
    pub upstream_pressure: Measured<PressureAbs<T>>,
    /// Temperature at upstream conditions.
    pub upstream_temperature: Measured<Kelvin<T>>,
    /// Compressibility factor at upstream conditions.
    pub compressibility: Measured<T>,
}

/// One orifice flow result.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OrificeFlow<T> {
    /// Mass flow, kg/s; uncertain outside the validity limits.
    pub mass_flow: Measured<T>,
    /// Discharge coefficient C, -.
    pub discharge_coefficient: Measured<T>,
    /// Expansibility factor ε, -.
    pub expansibility: Measured<T>,
    /// Pipe Reynolds number, -.
    pub reynolds: Measured<T>,
    /// Upstream density, kg/m3.
    pub density: Measured<T>,
    /// All ISO 5167-2 limits (geometry, Reynolds, p2/p1) met.
    pub within_limits: bool,
    /// Reynolds iterations used.
    pub iterations: u8,
}

/// The pure solution for given Δp, p1 and ρ1 (SI).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct OrificeSolution<T> {
    /// Mass flow, kg/s.
    pub mass_flow: T,
    /// Discharge coefficient, -.
    pub discharge_coefficient: T,
    /// Expansibility, -.
    pub expansibility: T,
    /// Pipe Reynolds number, -.
    pub reynolds: T,
    /// Iterations used.
    pub iterations: u8,
    /// The iteration met its tolerance within [`MAX_ITERATIONS`].
    pub converged: bool,
}

/// A validated orifice meter.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Orifice<T> {
    config: OrificeConfig<T>,
    beta: T,
}

impl<T: Real> Orifice<T> {
    /// Validates the configuration. Geometry outside the ISO 5167-2 limits
    /// is accepted (results are then uncertain); impossible geometry is an
    /// error.
    pub fn new(config: OrificeConfig<T>) -> Result<Self, ConfigError> {
        check_positive("orifice.pipe_diameter", config.pipe_diameter)?;
        check_positive("orifice.bore_diameter", config.bore_diameter)?;
        if !(config.bore_diameter < config.pipe_diameter) {
            return Err(ConfigError::new(
                "orifice.pipe_diameter",
                Problem::NotAbove {
                    other: "orifice.bore_diameter",
                },
            ));
        }
        // Physical ranges (issue 11: an isentropic exponent of 5 was
        // accepted): a gas's isentropic exponent in (1, 2] (common
        // practice; ideal gases end at 5/3), viscosity of a gas or light
        // liquid in [1e-7, 1] Pa s, specific gas constant of a molar mass in
        // [1, 500] kg/kmol (common practice).
        check_range(
            "orifice.isentropic_exponent",
            config.isentropic_exponent,
            1.0,
            2.0,
        )?;
        if !(config.isentropic_exponent > T::ONE) {
            return Err(ConfigError::out_of_range(
                "orifice.isentropic_exponent",
                1.0,
                2.0,
            ));
        }
        check_range("orifice.viscosity", config.viscosity, 1e-7, 1.0)?;
        check_range(
            "orifice.gas_constant",
            config.gas_constant,
            MOLAR_GAS_CONSTANT * 1e3 / 500.0,
            MOLAR_GAS_CONSTANT * 1e3,
        )?;
        Ok(Orifice {
            config,
            beta: config.bore_diameter / config.pipe_diameter,
        })
    }

    /// The validated configuration.
    pub fn config(&self) -> &OrificeConfig<T> {
        &self.config
    }

    /// Diameter ratio β = d/D.
    pub fn beta(&self) -> T {
        self.beta
    }

    /// Solves the mass flow for differential pressure `dp` (Pa, > 0),
    /// upstream pressure `p1` (Pa abs, > dp) and upstream density `rho`
    /// (kg/m3, > 0) by fixed-point iteration on the Reynolds number (at
    /// most [`MAX_ITERATIONS`]; C depends weakly on Re_D, so a few
    /// iterations suffice above Re_D ≈ 1e4).
    pub fn solve(&self, dp: T, p1: T, rho: T) -> OrificeSolution<T> {
        let c = &self.config;
        let b = self.beta;
        let b4 = b * b * b * b;
        let eps = orifice_expansibility(b, (p1 - dp) / p1, c.isentropic_exponent);
        let area = T::of(core::f64::consts::FRAC_PI_4) * c.bore_diameter * c.bore_diameter;
        let k = eps * area * T::sqrt(T::of(2.0) * dp * rho) / T::sqrt(T::ONE - b4);
        let re_per_qm = T::of(4.0) / (T::of(core::f64::consts::PI) * c.viscosity * c.pipe_diameter);
        let tol = T::of(1e-12) + T::of(8.0) * T::EPSILON;
        let mut cd = discharge_coefficient(b, T::of(1.0e8), c.pipe_diameter, c.taps);
        let mut iterations = 0u8;
        let mut converged = false;
        while iterations < MAX_ITERATIONS {
            iterations += 1;
            let re = k * cd * re_per_qm;
            let next = discharge_coefficient(b, re, c.pipe_diameter, c.taps);
            let step = T::abs(next - cd);
            cd = next;
            if !T::is_finite(cd) {
                break;
            }
            if step <= tol * T::abs(cd) {
                converged = true;
                break;
            }
        }
        let qm = k * cd;
        OrificeSolution {
            mass_flow: qm,
            discharge_coefficient: cd,
            expansibility: eps,
            reynolds: qm * re_per_qm,
            iterations,
            converged,
        }
    }

    /// Mass flow from measured values. Quality: the worst of the inputs;
    /// uncertain outside the ISO 5167-2 limits or if the iteration did not
    /// converge; zero flow (with the inputs' quality) for Δp ≤ 0 — apply
    /// [`super::low_flow`] first to cut off noise and check the zero.
    pub fn evaluate(&self, inputs: &OrificeInputs<T>) -> OrificeFlow<T> {
        let dp = inputs.differential_pressure;
        let p1 = pressure_pa(inputs.upstream_pressure);
        let t1 = temperature_k(inputs.upstream_temperature);
        let z = inputs.compressibility;
        let z_ok = T::is_finite(z.value) && z.value > T::ZERO && z.value <= T::of(2.0);
        let mut q = dp
            .quality
            .worst(p1.quality)
            .worst(t1.quality)
            .worst(if z_ok { z.quality } else { Quality::Bad });
        if !T::is_finite(dp.value) {
            q = Quality::Bad;
        }
        let bad = OrificeFlow {
            mass_flow: Measured::bad(),
            discharge_coefficient: Measured::bad(),
            expansibility: Measured::bad(),
            reynolds: Measured::bad(),
            density: Measured::bad(),
            within_limits: false,
            iterations: 0,
        };
        if q == Quality::Bad {
            return bad;
        }
        let rho = gas_density(p1.value, t1.value, z.value, self.config.gas_constant);
        if dp.value <= T::ZERO {
            return OrificeFlow {
                mass_flow: Measured::derived(T::ZERO, q),
                density: Measured::derived(rho, q),
                ..bad
            };
        }
        let ratio = (p1.value - dp.value) / p1.value;
        if !(ratio > T::ZERO) {
            return bad;
        }
        let s = self.solve(dp.value, p1.value, rho);
        let cfg = &self.config;
        let ok = s.converged
            && expansibility_valid(ratio)
            && within_limits(cfg.pipe_diameter, cfg.bore_diameter, s.reynolds, cfg.taps);
        let qf = if ok { q } else { q.worst(Quality::Uncertain) };
        OrificeFlow {
            mass_flow: Measured::derived(s.mass_flow, qf),
            discharge_coefficient: Measured::derived(s.discharge_coefficient, qf),
            expansibility: Measured::derived(s.expansibility, qf),
            reynolds: Measured::derived(s.reynolds, qf),
            density: Measured::derived(rho, q),
            within_limits: ok,
            iterations: s.iterations,
        }
    }
}
