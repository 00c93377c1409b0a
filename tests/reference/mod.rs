//! Helpers shared by the tests that check against outside references
//! (`tests/gerg_tables.rs`, `tests/real_gas_coolprop.rs`,
//! `tests/coolprop_tables.rs`): the committed CSV vectors in this folder,
//! the `aga8` crate's published GERG-2008 check point, and one stage
//! evaluated through the gas seam with both polytropic methods.

use aga8::composition::Composition;
use aga8::gerg2008::Gerg2008;
use polytrope::gas::{CompressionStates, GasModel};
use polytrope::polytropic::{sandberg_colby, schultz};

/// Rows of `tests/reference/FILE` (comma-separated, header skipped), as
/// text fields.
pub fn csv_rows(file: &str) -> Vec<Vec<String>> {
    let path = format!("{}/tests/reference/{file}", env!("CARGO_MANIFEST_DIR"));
    std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("{path}: {e}"))
        .lines()
        .skip(1)
        .filter(|l| !l.trim().is_empty())
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect()
}

/// A CSV field as a number.
pub fn num(s: &str) -> f64 {
    s.trim()
        .parse()
        .unwrap_or_else(|_| panic!("'{s}' is not a number"))
}

/// The 21-component gas of GERG-2008's published check point (NIST's
/// reference code for AGA Report No. 8 Part 1 / GERG-2008, as shipped with
/// the `aga8` crate).
pub const CHECK_POINT_GAS: Composition = Composition {
    methane: 0.778_24,
    nitrogen: 0.02,
    carbon_dioxide: 0.06,
    ethane: 0.08,
    propane: 0.03,
    isobutane: 0.001_5,
    n_butane: 0.003,
    isopentane: 0.000_5,
    n_pentane: 0.001_65,
    hexane: 0.002_15,
    heptane: 0.000_88,
    octane: 0.000_24,
    nonane: 0.000_15,
    decane: 0.000_09,
    hydrogen: 0.004,
    oxygen: 0.005,
    carbon_monoxide: 0.002,
    water: 0.000_1,
    hydrogen_sulfide: 0.002_5,
    helium: 0.007,
    argon: 0.001,
};

/// Published values at the check point (400 K, 50 MPa): Z and the molar
/// mass in g/mol.
pub const CHECK_POINT_Z: f64 = 1.174_690_67;
/// See [`CHECK_POINT_Z`].
pub const CHECK_POINT_MOLAR_MASS: f64 = 20.542_744_5;

/// GERG-2008 through `aga8` at the check point: (Z, molar mass g/mol).
pub fn aga8_check_point() -> (f64, f64) {
    let mut g = Gerg2008::new();
    g.set_composition(&CHECK_POINT_GAS).unwrap();
    g.molar_mass();
    g.t = 400.0;
    g.p = 50_000.0;
    g.density(0).unwrap();
    g.properties();
    (g.z, g.mm)
}

/// One compressor stage through the gas seam (`GasModel::compression`
/// from both measured states) with Schultz's and Sandberg–Colby's
/// polytropic efficiencies (`None` where the method refuses).
pub struct SeamStage {
    /// What the model gave.
    pub states: CompressionStates<f64>,
    /// h2s − h1 over h2 − h1.
    pub isentropic_efficiency: f64,
    /// Schultz's polytropic efficiency.
    pub schultz: Option<f64>,
    /// Sandberg–Colby's polytropic efficiency.
    pub sandberg_colby: Option<f64>,
}

/// [`SeamStage`] of `gas` from (p1, t1) to (p2, t2).
pub fn seam_stage<G: GasModel<f64>>(gas: &G, p1: f64, t1: f64, p2: f64, t2: f64) -> SeamStage {
    let ln_r = (p2 / p1).ln();
    let cs = gas.compression(p1, t1, p2, ln_r, Some(t2), None);
    SeamStage {
        states: cs,
        isentropic_efficiency: cs.isentropic_enthalpy_rise / cs.enthalpy_rise,
        schultz: schultz(&cs, ln_r).map(|s| s.efficiency),
        sandberg_colby: sandberg_colby(&cs, ln_r, t1, t2).map(|s| s.efficiency),
    }
}
