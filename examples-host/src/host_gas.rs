//! The gas model a train file chooses (`[gas] model = ...`), as one type the
//! host's trains are instantiated with: an ideal gas (built-in or custom),
//! Peng–Robinson (Peng & Robinson 1976) with a composition by component
//! name, or a GERG-2008 property table read from a blob file (written by
//! `polytrope-host tables --out`). Every [`GasModel`] call is passed through
//! to the chosen kernel model unchanged, so each result keeps that model's
//! validity (in range, uncertain or bad, with its reason).
//!
//! Caution: the models are only as good as their ranges; outside them the
//! kernel marks results uncertain or bad. Not a certified safety function.

use polytrope::gas::components::COMPONENTS;
use polytrope::gas::table::{PropertyTable, TableGas};
use polytrope::gas::{
    CompressionStates, GasModel, GasState, IdealGas, PathProperties, PengRobinson, PropertyInputs,
};
use polytrope::{Measured, Quality, Real};

/// Number of Peng–Robinson components the host instantiates: all the
/// kernel knows, absent ones with mole fraction 0 (the mixture constants
/// are precomputed, so a state costs the same whatever the count).
pub const PR_COMPONENTS: usize = COMPONENTS.len();

/// Capacity of a table read from a file (nodes, cells): the same as the
/// table tests use; a larger table is refused naming `gas.table_file`.
pub type HostTable = PropertyTable<4096, 8192>;

/// The chosen gas model at precision `T`.
// One value per train (never in arrays or moved per scan): the size of the
// Peng–Robinson variant (its 12 component records) costs nothing measurable.
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Copy, Debug)]
pub enum HostGas<T> {
    /// Ideal gas with a configured mean Z.
    Ideal(IdealGas<T>),
    /// Peng–Robinson over [`COMPONENTS`] (absent components at 0).
    PengRobinson(PengRobinson<T, PR_COMPONENTS>),
    /// GERG-2008 property table (loaded once, kept for the process).
    Table(TableGas<'static, T>),
}

macro_rules! each {
    ($self:ident, $g:ident => $e:expr) => {
        match $self {
            HostGas::Ideal($g) => $e,
            HostGas::PengRobinson($g) => $e,
            HostGas::Table($g) => $e,
        }
    };
}

impl<T: Real> GasModel<T> for HostGas<T> {
    fn gas_constant(&self) -> T {
        each!(self, g => GasModel::<T>::gas_constant(g))
    }
    fn path(&self, p1: T, t1: T, p2: T, t2: T, z_supplied: Option<T>) -> PathProperties<T> {
        each!(self, g => GasModel::<T>::path(g, p1, t1, p2, t2, z_supplied))
    }
    fn state(&self, p: T, t: T, z_supplied: Option<T>) -> GasState<T> {
        each!(self, g => GasModel::<T>::state(g, p, t, z_supplied))
    }
    fn isentropic_state(&self, inlet: &GasState<T>, p2: T, z_supplied: Option<T>) -> GasState<T> {
        each!(self, g => GasModel::<T>::isentropic_state(g, inlet, p2, z_supplied))
    }
    fn enthalpy_drop(
        &self,
        p_in: T,
        t_in: T,
        p_out: T,
        t_out: T,
        z_supplied: Option<T>,
    ) -> (T, polytrope::gas::Validity) {
        each!(self, g => GasModel::<T>::enthalpy_drop(g, p_in, t_in, p_out, t_out, z_supplied))
    }
    fn compression(
        &self,
        p1: T,
        t1: T,
        p2: T,
        ln_ratio: T,
        t2: Option<T>,
        z_supplied: Option<T>,
    ) -> CompressionStates<T> {
        each!(self, g => GasModel::<T>::compression(g, p1, t1, p2, ln_ratio, t2, z_supplied))
    }
    fn dense_density(&self, p: T, t: T) -> Option<(T, polytrope::gas::Validity)> {
        each!(self, g => GasModel::<T>::dense_density(g, p, t))
    }
    fn isothermal_work(
        &self,
        p1: T,
        p2: T,
        ln_ratio: T,
        t: T,
        z_supplied: Option<T>,
    ) -> (T, polytrope::gas::Validity) {
        each!(self, g => GasModel::<T>::isothermal_work(g, p1, p2, ln_ratio, t, z_supplied))
    }
    fn isentropic_head_rescaled(
        &self,
        head: T,
        t1: T,
        t: T,
        p_high: T,
        z_supplied: Option<T>,
    ) -> Option<(T, polytrope::gas::Validity)> {
        each!(self, g => GasModel::<T>::isentropic_head_rescaled(g, head, t1, t, p_high, z_supplied))
    }
    fn ratio_only(&self) -> bool {
        each!(self, g => GasModel::<T>::ratio_only(g))
    }
    fn property_inputs(&self) -> PropertyInputs {
        each!(self, g => GasModel::<T>::property_inputs(g))
    }
    fn fit_quality(&self, t_a: T, t_b: T) -> Quality {
        each!(self, g => GasModel::<T>::fit_quality(g, t_a, t_b))
    }
}

impl<T: Real> HostGas<T> {
    /// The compressibility factor for an orifice at the suction state: the
    /// configured Z of an ideal gas (good), or the real-gas model's Z at
    /// (p, t), with the worst quality of p, t and the model's validity
    /// there (bad without usable p and t).
    pub fn orifice_z(&self, p: Measured<T>, t: Measured<T>) -> Measured<T> {
        match self {
            HostGas::Ideal(g) => Measured::good(g.compressibility()),
            _ => {
                if !(p.quality.is_usable() && t.quality.is_usable()) {
                    return Measured::bad();
                }
                let st = GasModel::<T>::state(self, p.value, t.value, None);
                let q = p.quality.worst(t.quality).worst(st.validity.quality);
                Measured::new(st.z, q)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use polytrope::gas::components::Component;

    /// The pass-through changes nothing: the host enum gives bit-identical
    /// states to the kernel model it wraps (consistency check).
    #[test]
    fn pass_through_is_exact() {
        let mut fr = [0.0f64; PR_COMPONENTS];
        // Dry air by mole fraction (N2 0.7812, O2 0.2096, Ar 0.0092: the
        // usual three-component air, common practice).
        fr[0] = 0.7812;
        fr[1] = 0.2096;
        fr[2] = 0.0092;
        let pr = PengRobinson::<f64, PR_COMPONENTS>::new(COMPONENTS, fr).unwrap();
        let three = PengRobinson::<f64, 3>::new(
            [
                Component::by_name("nitrogen").unwrap(),
                Component::by_name("oxygen").unwrap(),
                Component::by_name("argon").unwrap(),
            ],
            [0.7812, 0.2096, 0.0092],
        )
        .unwrap();
        let host = HostGas::PengRobinson(pr);
        for (p, t) in [(1.0e5, 290.0), (8.0e5, 400.0), (40.0e5, 320.0)] {
            let a = host.state(p, t, None);
            let b = three.state(p, t, None);
            assert!(
                (a.enthalpy - b.enthalpy).abs() < 1e-6 * b.cp.abs() && (a.z - b.z).abs() < 1e-12,
                "{p} Pa {t} K: zero-fraction padding changed the state: {a:?} vs {b:?}"
            );
        }
    }
}
