//! Gas property models: the seam between the stage equations and the
//! equation of state.
//!
//! A [`GasModel`] gives state functions at (p, T): compressibility factor,
//! specific volume, enthalpy and entropy (one consistent reference state per
//! model), cp and the speed of sound ([`GasState`]), and the isentropic state
//! at a second pressure (entropy match). Every state carries a [`Validity`]:
//! a model outside the range where it is trustworthy says so, with a
//! [`ValidityReason`] the host tool prints, and never reports good.
//!
//! Two models implement the seam:
//! - [`IdealGas`]: ideal gas with a configured mean compressibility factor Z
//!   (constant k or cp(T); [`IdealGasConstantK`] admits only a constant k,
//!   and links less code). Read as an equation of state v = Z·R·T/p with
//!   constant Z it is an ideal gas with gas constant Z·R, so its cp is
//!   Z·R·k/(k−1) and enthalpy differences are Z·cp·ΔT: the heads it gave
//!   before this seam existed are unchanged, and cooler duty now uses the same
//!   Z·cp (it used cp without Z).
//! - [`PengRobinson`]: the Peng–Robinson cubic equation of state for pure
//!   gases and mixtures of up to `C` components ([`peng_robinson`]).
//!
//! Stage and cooler code ask the model for [`CompressionStates`] (the
//! differences a compressor stage needs) and for enthalpy drops; a model may
//! specialise those for speed (the ideal gas does, in closed form) as long as
//! they agree with its state functions.

mod builtin;
pub mod components;
mod ideal;
pub mod peng_robinson;
pub mod table;
mod table_seam;

pub use builtin::{
    CpPolynomial, GasSpec, AIR, BUILTIN_GASES, CARBON_DIOXIDE, ETHANE, HYDROGEN, LEAN_NATURAL_GAS,
    METHANE, NITROGEN,
};
pub use components::{Component, ComponentId};
pub use ideal::{HeatCapacity, IdealGas, IdealGasConstantK, IDEAL_GAS_MAX_REDUCED_PRESSURE};
pub use peng_robinson::PengRobinson;

use crate::quality::Quality;
use crate::real::Real;

/// Molar gas constant, J/(mol K) (CODATA 2018, exact since the 2019 SI
/// redefinition).
pub const MOLAR_GAS_CONSTANT: f64 = 8.314_462_618_153_24;

/// Reference temperature of enthalpy and entropy, K (h = 0 and s = 0 for the
/// ideal gas at this temperature and [`REFERENCE_PRESSURE`]).
pub const REFERENCE_TEMPERATURE: f64 = 298.15;
/// Reference pressure of entropy, Pa.
pub const REFERENCE_PRESSURE: f64 = 1.0e5;

/// Why a model's value is not good (or [`ValidityReason::InRange`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ValidityReason {
    /// Inside the model's declared range.
    InRange,
    /// Ideal gas above [`IDEAL_GAS_MAX_REDUCED_PRESSURE`]: the real-gas
    /// correction it ignores exceeds about one point of polytropic
    /// efficiency (uncertain).
    IdealGasReducedPressure,
    /// Temperature outside the model's range (heat-capacity fit) (uncertain).
    TemperatureOutOfRange,
    /// Pressure outside the model's range (uncertain).
    PressureOutOfRange,
    /// Near the (pseudo-)critical point, where a cubic equation of state
    /// is inaccurate (uncertain).
    NearCritical,
    /// Within a few per cent of the model's saturation pressure: the gas may
    /// be metastable or condensing (uncertain; the device runs no phase
    /// split).
    NearSaturation,
    /// Three roots and the liquid is the stable phase: the gas would
    /// condense (bad).
    NoVapourRoot,
    /// The only root is liquid-like (v below the critical v/b): a liquid or
    /// dense supercritical state; bad for a gas compressor, uncertain as a
    /// cooler outlet or pump suction.
    LiquidLike,
    /// A liquid-like dense state whose density comes from the cubic (a pump
    /// suction): several per cent uncertain without volume translation.
    DenseEstimate,
    /// An iteration hit its cap before converging (uncertain).
    NotConverged,
    /// Inputs or results not finite or not physical (bad).
    Invalid,
}

/// Quality of a model value with its reason.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Validity {
    /// Good, uncertain or bad.
    pub quality: Quality,
    /// Why.
    pub reason: ValidityReason,
}

impl Validity {
    /// Good, in range.
    pub const IN_RANGE: Validity = Validity {
        quality: Quality::Good,
        reason: ValidityReason::InRange,
    };
    /// Bad, invalid.
    pub const INVALID: Validity = Validity {
        quality: Quality::Bad,
        reason: ValidityReason::Invalid,
    };

    /// Uncertain with `reason`.
    #[inline]
    pub const fn uncertain(reason: ValidityReason) -> Self {
        Validity {
            quality: Quality::Uncertain,
            reason,
        }
    }

    /// Bad with `reason`.
    #[inline]
    pub const fn bad(reason: ValidityReason) -> Self {
        Validity {
            quality: Quality::Bad,
            reason,
        }
    }

    /// The worse of two (the first on a tie, so the earliest reason stays).
    #[inline]
    #[must_use]
    pub fn worst(self, other: Validity) -> Validity {
        if other.quality > self.quality {
            other
        } else {
            self
        }
    }
}

/// State functions of a gas at one (p, T); per kg.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GasState<T> {
    /// Pressure, Pa.
    pub pressure: T,
    /// Temperature, K.
    pub temperature: T,
    /// Compressibility factor p·v/(R·T), -.
    pub z: T,
    /// Specific volume, m³/kg.
    pub volume: T,
    /// Specific enthalpy from the model's reference state, J/kg.
    pub enthalpy: T,
    /// Specific entropy from the model's reference state, J/(kg K).
    pub entropy: T,
    /// Isobaric specific heat, J/(kg K).
    pub cp: T,
    /// Speed of sound, m/s.
    pub speed_of_sound: T,
    /// How far these values can be trusted.
    pub validity: Validity,
}

impl<T: Real> GasState<T> {
    /// A placeholder state with bad validity.
    pub fn invalid(pressure: T, temperature: T) -> Self {
        GasState {
            pressure,
            temperature,
            z: T::ONE,
            volume: T::ZERO,
            enthalpy: T::ZERO,
            entropy: T::ZERO,
            cp: T::ZERO,
            speed_of_sound: T::ZERO,
            validity: Validity::INVALID,
        }
    }
}

/// What a compressor stage needs from the model: differences between the
/// suction state 1, the discharge state 2 and the isentropic discharge state
/// 2s (same entropy as 1 at p2); per kg.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CompressionStates<T> {
    /// Suction compressibility factor, -.
    pub suction_z: T,
    /// Isentropic discharge temperature, K.
    pub isentropic_temperature: T,
    /// Isentropic head h(p2, s1) − h1, J/kg.
    pub isentropic_enthalpy_rise: T,
    /// p2·v2s − p1·v1, J/kg.
    pub isentropic_pv_rise: T,
    /// ln(p2·v2s / (p1·v1)), -. With ln(p2/p1) it gives the isentropic
    /// volume exponent: ns/(ns−1) = ln(p2/p1) / this.
    pub isentropic_ln_pv_ratio: T,
    /// Isentropic volume exponent ns = ln(p2/p1)/ln(v1/v2s) (ideal gas: k), -.
    pub isentropic_exponent: T,
    /// Schultz's polytropic head factor
    /// f = (h2s − h1) / [ns/(ns−1)·(p2·v2s − p1·v1)] (ideal gas: 1 exactly), -.
    pub head_factor: T,
    /// Validity of states 1 and 2s.
    pub isentropic_validity: Validity,
    /// Whether the discharge fields below were computed (discharge
    /// temperature usable).
    pub has_discharge: bool,
    /// Discharge compressibility factor, -.
    pub discharge_z: T,
    /// Actual enthalpy rise h2 − h1, J/kg.
    pub enthalpy_rise: T,
    /// Entropy rise s2 − s1, J/(kg K).
    pub entropy_rise: T,
    /// p2·v2 − p1·v1, J/kg.
    pub pv_rise: T,
    /// ln(p2·v2 / (p1·v1)), -: n/(n−1) = ln(p2/p1) / this.
    pub ln_pv_ratio: T,
    /// Validity of states 1, 2s and 2.
    pub validity: Validity,
}

impl<T: Real> CompressionStates<T> {
    /// Everything bad.
    pub fn invalid() -> Self {
        CompressionStates {
            suction_z: T::ONE,
            isentropic_temperature: T::ZERO,
            isentropic_enthalpy_rise: T::ZERO,
            isentropic_pv_rise: T::ZERO,
            isentropic_ln_pv_ratio: T::ZERO,
            isentropic_exponent: T::ONE,
            head_factor: T::ONE,
            isentropic_validity: Validity::INVALID,
            has_discharge: false,
            discharge_z: T::ONE,
            enthalpy_rise: T::ZERO,
            entropy_rise: T::ZERO,
            pv_rise: T::ZERO,
            ln_pv_ratio: T::ZERO,
            validity: Validity::INVALID,
        }
    }
}

/// Mean ideal-gas-like properties along one path from (p1, T1) to (p2, T2),
/// for the whole-train ideal references and the pump's gas comparison.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PathProperties<T> {
    /// Specific gas constant R = Ru / M, J/(kg K).
    pub gas_constant: T,
    /// Mean heat-capacity ratio (isentropic exponent) over the path.
    pub k: T,
    /// Mean isobaric specific heat over the path, J/(kg K).
    pub cp: T,
    /// Mean compressibility factor (average of the two ends).
    pub z: T,
}

/// Which measurements a gas model's path properties depend on, for the
/// dependency rule ([`crate::dependency`]): an output computed from k or cp
/// takes the quality of the measurements those were evaluated at.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PropertyInputs {
    /// k and cp depend on the path temperatures.
    pub temperature: bool,
    /// k and cp depend on the path pressures.
    pub pressure: bool,
    /// Z is computed from the state (pressures and temperatures as above),
    /// not only configured or supplied.
    pub compressibility_from_state: bool,
    /// The properties are functions of each state (p, T), not means over
    /// the path: the suction Z uses only the suction state, the isentropic
    /// state only the suction state and p2 (not the discharge temperature).
    /// `false` is always safe.
    pub state_functions: bool,
}

/// A gas property model.
///
/// Implementations never panic and return finite values; where they cannot
/// (outside their range, no vapour root, no convergence) the
/// [`Validity`] says so. Pressures in Pa absolute, temperatures in K.
pub trait GasModel<T: Real> {
    /// Specific gas constant Ru/M, J/(kg K).
    fn gas_constant(&self) -> T;

    /// Mean ideal-gas-like properties along the path (p1, t1) -> (p2, t2).
    /// `z_supplied` is a measured or computed mean compressibility for this
    /// scan; models that compute Z themselves ignore it.
    fn path(&self, p1: T, t1: T, p2: T, t2: T, z_supplied: Option<T>) -> PathProperties<T>;

    /// State functions at (p, t).
    fn state(&self, p: T, t: T, z_supplied: Option<T>) -> GasState<T>;

    /// The state at `p2` with the entropy of `inlet` (entropy match; each
    /// model says how it solves it and caps its iterations).
    fn isentropic_state(&self, inlet: &GasState<T>, p2: T, z_supplied: Option<T>) -> GasState<T>;

    /// Specific enthalpy drop h(p_in, t_in) − h(p_out, t_out), J/kg, with the
    /// validity of both states (cooler duty).
    fn enthalpy_drop(
        &self,
        p_in: T,
        t_in: T,
        p_out: T,
        t_out: T,
        z_supplied: Option<T>,
    ) -> (T, Validity) {
        let a = self.state(p_in, t_in, z_supplied);
        let b = self.state(p_out, t_out, z_supplied);
        (a.enthalpy - b.enthalpy, a.validity.worst(b.validity))
    }

    /// The differences a compressor stage needs, from the suction state
    /// (p1, t1) to p2 (`ln_ratio` = ln(p2/p1)) and, if `t2` is given, the
    /// measured discharge state (p2, t2). The default evaluates
    /// [`GasModel::state`] three times and [`GasModel::isentropic_state`].
    fn compression(
        &self,
        p1: T,
        t1: T,
        p2: T,
        ln_ratio: T,
        t2: Option<T>,
        z_supplied: Option<T>,
    ) -> CompressionStates<T> {
        let s1 = self.state(p1, t1, z_supplied);
        if s1.validity.quality == Quality::Bad {
            return CompressionStates {
                isentropic_validity: s1.validity,
                validity: s1.validity,
                ..CompressionStates::invalid()
            };
        }
        let s2s = self.isentropic_state(&s1, p2, z_supplied);
        let pv1 = s1.pressure * s1.volume;
        let pv2s = s2s.pressure * s2s.volume;
        let iso_validity = s1.validity.worst(s2s.validity);
        let iso_ln_pv = T::ln(pv2s / pv1);
        let dhs = s2s.enthalpy - s1.enthalpy;
        let mut out = CompressionStates {
            suction_z: s1.z,
            isentropic_temperature: s2s.temperature,
            isentropic_enthalpy_rise: dhs,
            isentropic_pv_rise: pv2s - pv1,
            isentropic_ln_pv_ratio: iso_ln_pv,
            isentropic_exponent: ln_ratio / (ln_ratio - iso_ln_pv),
            head_factor: dhs * iso_ln_pv / (ln_ratio * (pv2s - pv1)),
            isentropic_validity: iso_validity,
            validity: iso_validity,
            ..CompressionStates::invalid()
        };
        if let Some(t2) = t2 {
            let s2 = self.state(p2, t2, z_supplied);
            let pv2 = s2.pressure * s2.volume;
            out.has_discharge = true;
            out.discharge_z = s2.z;
            out.enthalpy_rise = s2.enthalpy - s1.enthalpy;
            out.entropy_rise = s2.entropy - s1.entropy;
            out.pv_rise = pv2 - pv1;
            out.ln_pv_ratio = T::ln(pv2 / pv1);
            out.validity = iso_validity.worst(s2.validity);
        }
        out
    }

    /// What a compressor stage needs besides [`GasModel::compression`] when
    /// there is no compression (p2 not above p1): the suction Z, the
    /// validity of the suction state, that of the suction and (with `t2`)
    /// discharge states, and the path-mean k of [`GasModel::path`] (to
    /// `t2`, or `t1` without it). The default evaluates
    /// [`GasModel::state`] once or twice; a model may give the same values
    /// more cheaply.
    fn uncompressed(
        &self,
        p1: T,
        t1: T,
        p2: T,
        t2: Option<T>,
        z_supplied: Option<T>,
    ) -> (T, Validity, Validity, T) {
        let s1 = self.state(p1, t1, z_supplied);
        let validity = match t2 {
            Some(t2) => s1.validity.worst(self.state(p2, t2, z_supplied).validity),
            None => s1.validity,
        };
        let k = self.path(p1, t1, p2, t2.unwrap_or(t1), z_supplied).k;
        (s1.z, s1.validity, validity, k)
    }

    /// Density of a liquid-like or dense state at (p, t), kg/m³, with its
    /// validity, if the model can give one (a pump's suction). `None` for
    /// models that only describe gases.
    fn dense_density(&self, p: T, t: T) -> Option<(T, Validity)> {
        let _ = (p, t);
        None
    }

    /// Reversible isothermal work from (p1, t) to (p2, t), J/kg: the rise
    /// of the Gibbs energy, Δh − T·Δs = ∫v dp at constant T, with the
    /// validity of both states (`ln_ratio` = ln(p2/p1)). The default
    /// evaluates [`GasModel::state`] twice; the ideal gas gives
    /// Z·R·T·ln(p2/p1) in closed form.
    fn isothermal_work(
        &self,
        p1: T,
        p2: T,
        ln_ratio: T,
        t: T,
        z_supplied: Option<T>,
    ) -> (T, Validity) {
        let _ = ln_ratio;
        let a = self.state(p1, t, z_supplied);
        let b = self.state(p2, t, z_supplied);
        (
            (b.enthalpy - a.enthalpy) - t * (b.entropy - a.entropy),
            a.validity.worst(b.validity),
        )
    }

    /// For a model whose isentropic head at a fixed pressure ratio is
    /// proportional to the suction temperature (the ideal gas with constant
    /// k): the head from suction temperature `t` for the same pressures as a
    /// head `head` computed from `t1`, i.e. `head · t / t1`, with the
    /// validity at (`p_high`, `t`). `None` (the default) where that does not
    /// hold; the caller then evaluates [`GasModel::compression`].
    fn isentropic_head_rescaled(
        &self,
        head: T,
        t1: T,
        t: T,
        p_high: T,
        z_supplied: Option<T>,
    ) -> Option<(T, Validity)> {
        let _ = (head, t1, t, p_high, z_supplied);
        None
    }

    /// `true` if [`GasModel::compression`]'s isentropic results (with no
    /// discharge temperature) depend on the pressures only through the
    /// `ln_ratio` passed, and their validity only on the higher pressure
    /// (the ideal gas). Whole-train references ([`crate::ledger`]) then
    /// evaluate one stage for several equal ones. Default `false`.
    fn ratio_only(&self) -> bool {
        false
    }

    /// `true` if [`GasModel::compression`] asked for a discharge state at
    /// the suction temperature (`t2 = Some(t1)`) gives, besides the
    /// discharge fields, exactly what it gives without one (`t2 = None`):
    /// the same suction and isentropic results, the same validities, and
    /// nothing else done (the ideal gas, whose discharge state is a few
    /// products apart). A stage then evaluates every case on one code path
    /// and drops the discharge state where it has none. Default `false`.
    fn discharge_separable(&self) -> bool {
        false
    }

    /// What [`GasModel::path`] depends on. The default (everything) is
    /// always safe; a model that ignores an input says so to keep outputs
    /// good when that measurement fails.
    fn property_inputs(&self) -> PropertyInputs {
        PropertyInputs {
            temperature: true,
            pressure: true,
            compressibility_from_state: true,
            state_functions: false,
        }
    }

    /// Quality of the properties over the temperatures `t_a`..`t_b` (either
    /// order): good inside the model's fitted range, uncertain outside it
    /// (the model extrapolates or clamps there). The default is good.
    fn fit_quality(&self, _t_a: T, _t_b: T) -> Quality {
        Quality::Good
    }
}
