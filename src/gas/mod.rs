//! Gas property models: the seam between the stage equations and the
//! equation of state.
//!
//! The stage, cooler and train code never see an equation of state; they ask
//! a [`GasModel`] for the [`PathProperties`] of one compression or cooling
//! path. Today there is one model, [`IdealGas`] (ideal gas with a
//! compressibility factor, constant k or cp(T) polynomial). A real-gas model
//! (a cubic equation of state, say) implements the same trait.

mod builtin;
mod ideal;

pub use builtin::{
    CpPolynomial, GasSpec, AIR, BUILTIN_GASES, CARBON_DIOXIDE, ETHANE, HYDROGEN, LEAN_NATURAL_GAS,
    METHANE, NITROGEN,
};
pub use ideal::{HeatCapacity, IdealGas};

use crate::quality::Quality;
use crate::real::Real;

/// Molar gas constant, J/(mol K) (CODATA 2018, exact since the 2019 SI
/// redefinition).
pub const MOLAR_GAS_CONSTANT: f64 = 8.314_462_618_153_24;

/// Mean gas properties along one path from (p1, T1) to (p2, T2).
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
}

/// A gas property model.
///
/// Implementations must return finite, physically valid properties
/// (`gas_constant > 0`, `k > 1`, `cp > 0`, `z > 0`) for every temperature in
/// (0, 2000] K and pressure in (0, 1e9] Pa, and must not panic; the stage code
/// relies on it.
pub trait GasModel<T: Real> {
    /// Specific gas constant, J/(kg K).
    fn gas_constant(&self) -> T;

    /// Mean properties along the path (p1, t1) -> (p2, t2); pressures in Pa
    /// absolute, temperatures in K. `z_supplied` is a measured or computed
    /// mean compressibility for this scan, overriding the configured one.
    fn path(&self, p1: T, t1: T, p2: T, t2: T, z_supplied: Option<T>) -> PathProperties<T>;

    /// What [`GasModel::path`] depends on. The default (everything) is
    /// always safe; a model that ignores an input says so to keep outputs
    /// good when that measurement fails.
    fn property_inputs(&self) -> PropertyInputs {
        PropertyInputs {
            temperature: true,
            pressure: true,
            compressibility_from_state: true,
        }
    }

    /// Quality of the properties over the temperatures `t_a`..`t_b` (either
    /// order): good inside the model's fitted range, uncertain outside it
    /// (the model extrapolates or clamps there). The default is good.
    fn fit_quality(&self, _t_a: T, _t_b: T) -> Quality {
        Quality::Good
    }
}
