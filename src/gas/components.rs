//! Pure-component constants for the Peng–Robinson model.
//!
//! Sources:
//! - Molar mass, critical temperature, critical pressure and acentric factor:
//!   the values CoolProp 8.0.0 reports for its HEOS fluids (`molar_mass`,
//!   `T_critical`, `p_critical`, `acentric_factor`), which are those of the
//!   reference equations of state it implements (Span et al. 2000 nitrogen,
//!   Schmidt–Wagner 1985 oxygen, Tegeler et al. 1999 argon, Setzmann–Wagner
//!   1991 methane, Bücker–Wagner 2006 ethane, Lemmon et al. 2009 propane,
//!   Bücker–Wagner 2006 n- and i-butane, Span–Wagner 1996 carbon dioxide,
//!   Lemmon–Span 2006 hydrogen sulfide, Leachman et al. 2009 normal hydrogen,
//!   IAPWS-95 water). Printed by
//!   `python3 tests/reference/gen_coolprop_realgas.py components`.
//! - Ideal-gas heat capacity cp0(T) = a + bT + cT² + dT³ in J/(mol K): a
//!   least-squares fit (relative weights) to CoolProp 8.0.0's `cp0molar` over
//!   230–650 K by the same script; the largest fit error is stated beside
//!   each component (at most 0.5 %, the butanes).
//! - Rackett compressibility factors Z_RA (for the Péneloux volume shift):
//!   the tabulated values of Spencer & Danner (1972) as reprinted in Reid,
//!   Prausnitz & Poling, *The Properties of Gases and Liquids*, 4th ed.
//!   (from memory; only the dense-phase density uses them, checked against
//!   CoolProp HEOS for CO2 in `tests/real_gas_coolprop.rs`).
//! - Binary interaction parameters k_ij: see [`binary_interaction`].

/// A pure component.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Component {
    /// Which component.
    pub id: ComponentId,
    /// Molar mass, kg/kmol.
    pub molar_mass: f64,
    /// Critical temperature, K.
    pub critical_temperature: f64,
    /// Critical pressure, Pa.
    pub critical_pressure: f64,
    /// Acentric factor, -.
    pub acentric_factor: f64,
    /// Ideal-gas cp0 = a + bT + cT² + dT³, J/(mol K), valid
    /// [`CP0_T_MIN`]..[`CP0_T_MAX`].
    pub cp0: [f64; 4],
    /// Rackett compressibility Z_RA, -, for the Péneloux volume shift.
    pub rackett_z: f64,
}

/// Lowest temperature of the cp0 fits, K.
pub const CP0_T_MIN: f64 = 230.0;
/// Highest temperature of the cp0 fits, K.
pub const CP0_T_MAX: f64 = 650.0;

/// The components the kernel knows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(u8)]
pub enum ComponentId {
    /// N2
    Nitrogen,
    /// O2
    Oxygen,
    /// Ar
    Argon,
    /// CH4
    Methane,
    /// C2H6
    Ethane,
    /// C3H8
    Propane,
    /// n-C4H10
    NButane,
    /// i-C4H10
    IsoButane,
    /// CO2
    CarbonDioxide,
    /// H2S
    HydrogenSulfide,
    /// H2 (normal hydrogen)
    Hydrogen,
    /// H2O (vapour)
    Water,
}

const fn c(
    id: ComponentId,
    molar_mass: f64,
    critical_temperature: f64,
    critical_pressure: f64,
    acentric_factor: f64,
    cp0: [f64; 4],
    rackett_z: f64,
) -> Component {
    Component {
        id,
        molar_mass,
        critical_temperature,
        critical_pressure,
        acentric_factor,
        cp0,
        rackett_z,
    }
}

use ComponentId as I;

/// Nitrogen (cp0 fit error 0.06 %).
pub const NITROGEN: Component = c(
    I::Nitrogen,
    28.013480,
    126.192,
    3_395_800.4,
    0.0372,
    [2.9738505e+01, -4.5083240e-03, 7.7112469e-06, 1.3560350e-09],
    0.2900,
);
/// Oxygen (cp0 fit error 0.04 %).
pub const OXYGEN: Component = c(
    I::Oxygen,
    31.998800,
    154.59939,
    5_046_410.5,
    0.0222,
    [3.1132659e+01, -2.0260991e-02, 5.9808087e-05, -3.8921518e-08],
    0.2905,
);
/// Argon (cp0 = 5R/2, exact).
pub const ARGON: Component = c(
    I::Argon,
    39.948000,
    150.687,
    4_863_000.5,
    -0.00219,
    [2.0786275e+01, 0.0, 0.0, 0.0],
    0.2923,
);
/// Methane (cp0 fit error 0.25 %).
pub const METHANE: Component = c(
    I::Methane,
    16.042800,
    190.564003,
    4_599_200.5,
    0.01142,
    [3.9833330e+01, -8.0962010e-02, 2.8046616e-04, -1.8371110e-07],
    0.2892,
);
/// Ethane (cp0 fit error 0.36 %).
pub const ETHANE: Component = c(
    I::Ethane,
    30.069040,
    305.322,
    4_872_200.0,
    0.099,
    [2.9653543e+01, 1.3480441e-02, 2.8144042e-04, -2.3052200e-07],
    0.2808,
);
/// Propane (cp0 fit error 0.40 %).
pub const PROPANE: Component = c(
    I::Propane,
    44.095620,
    369.890009,
    4_251_165.3,
    0.1521,
    [2.7381962e+01, 8.9921318e-02, 3.0238863e-04, -2.8581189e-07],
    0.2766,
);
/// n-Butane (cp0 fit error 0.47 %).
pub const N_BUTANE: Component = c(
    I::NButane,
    58.122200,
    425.125,
    3_796_000.0,
    0.20081,
    [4.0004867e+01, 1.0862079e-01, 4.1250159e-04, -3.8975875e-07],
    0.2730,
);
/// Isobutane (cp0 fit error 0.39 %).
pub const ISO_BUTANE: Component = c(
    I::IsoButane,
    58.122200,
    407.81,
    3_629_000.0,
    0.183532,
    [2.7508012e+01, 1.6381969e-01, 3.3571244e-04, -3.5231634e-07],
    0.2754,
);
/// Carbon dioxide (cp0 fit error 0.08 %).
pub const CARBON_DIOXIDE: Component = c(
    I::CarbonDioxide,
    44.009800,
    304.1282,
    7_377_298.4,
    0.22394,
    [1.8626661e+01, 8.1144024e-02, -7.1949738e-05, 2.7402641e-08],
    0.2722,
);
/// Hydrogen sulfide (cp0 fit error 0.09 %).
pub const HYDROGEN_SULFIDE: Component = c(
    I::HydrogenSulfide,
    34.080880,
    373.100875,
    8_998_871.6,
    0.1005,
    [3.4026665e+01, -1.3807487e-02, 5.7831310e-05, -3.4903058e-08],
    0.2855,
);
/// Normal hydrogen (cp0 fit error 0.33 %).
pub const HYDROGEN: Component = c(
    I::Hydrogen,
    2.015880,
    33.144333,
    1_296_357.6,
    -0.219,
    [2.1427634e+01, 4.7564718e-02, -9.5879944e-05, 6.4135626e-08],
    0.3218,
);
/// Water vapour (cp0 fit error 0.03 %).
pub const WATER: Component = c(
    I::Water,
    18.015268,
    647.096,
    22_064_000.0,
    0.344292,
    [3.4884902e+01, -1.5509235e-02, 4.4909155e-05, -2.5075436e-08],
    0.2338,
);

/// Every component, in [`ComponentId`] order.
pub const COMPONENTS: [Component; 12] = [
    NITROGEN,
    OXYGEN,
    ARGON,
    METHANE,
    ETHANE,
    PROPANE,
    N_BUTANE,
    ISO_BUTANE,
    CARBON_DIOXIDE,
    HYDROGEN_SULFIDE,
    HYDROGEN,
    WATER,
];

/// Short lowercase names, in [`ComponentId`] order (host configuration).
pub const COMPONENT_NAMES: [&str; 12] = [
    "nitrogen",
    "oxygen",
    "argon",
    "methane",
    "ethane",
    "propane",
    "n-butane",
    "isobutane",
    "carbon-dioxide",
    "hydrogen-sulfide",
    "hydrogen",
    "water",
];

impl Component {
    /// Looks a component up by its name in [`COMPONENT_NAMES`].
    pub fn by_name(name: &str) -> Option<Component> {
        COMPONENT_NAMES
            .iter()
            .zip(COMPONENTS.iter())
            .find(|(n, _)| **n == name)
            .map(|(_, c)| *c)
    }
}

/// Peng–Robinson binary interaction parameter k_ij (symmetric, 0 on the
/// diagonal and for pairs not listed).
///
/// The listed values are the commonly tabulated Peng–Robinson k_ij of these
/// pairs (from memory, of the order given in the GPSA Engineering Data Book
/// and the DDB tables; not fitted here): methane–CO2 0.10, ethane–CO2 0.13,
/// propane–CO2 0.135, butanes–CO2 0.13, nitrogen–CO2 −0.02, nitrogen–methane
/// 0.03, nitrogen–ethane 0.05, nitrogen–propane 0.08, methane–H2S 0.08,
/// CO2–H2S 0.10, water–CO2 0.19 (vapour phase only), hydrogen with anything
/// 0. The effect on the checked gases is measured against CoolProp HEOS in
/// `tests/real_gas_coolprop.rs`.
pub fn binary_interaction(a: ComponentId, b: ComponentId) -> f64 {
    use ComponentId::*;
    let pair = |x: ComponentId, y: ComponentId| (a == x && b == y) || (a == y && b == x);
    let butane = |x: ComponentId| x == NButane || x == IsoButane;
    if pair(Methane, CarbonDioxide) {
        0.10
    } else if pair(Ethane, CarbonDioxide) {
        0.13
    } else if pair(Propane, CarbonDioxide) {
        0.135
    } else if (a == CarbonDioxide && butane(b)) || (b == CarbonDioxide && butane(a)) {
        0.13
    } else if pair(Nitrogen, CarbonDioxide) {
        -0.02
    } else if pair(Nitrogen, Methane) {
        0.03
    } else if pair(Nitrogen, Ethane) {
        0.05
    } else if pair(Nitrogen, Propane) || pair(Methane, HydrogenSulfide) {
        0.08
    } else if pair(CarbonDioxide, HydrogenSulfide) {
        0.10
    } else if pair(Water, CarbonDioxide) {
        0.19
    } else {
        0.0
    }
}
