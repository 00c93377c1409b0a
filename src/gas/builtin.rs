//! Built-in gases.
//!
//! Sources (every constant below comes from one of these):
//! - Molar masses, and the constant heat-capacity ratios k at 300 K:
//!   Çengel & Boles, *Thermodynamics: An Engineering Approach*, Tables A-1
//!   and A-2a (from memory; checked in `tests/gas_properties.rs` against
//!   CoolProp's ideal-gas cp0 within the tolerance stated there).
//! - Ideal-gas cp polynomials cp = a + bT + cT² + dT³ in kJ/(kmol K):
//!   Çengel & Boles, Table A-2c (after B. G. Kyle, *Chemical and Process
//!   Thermodynamics*), valid 273–1800 K (methane and ethane 273–1500 K)
//!   (from memory; checked against CoolProp as above).
//! - Critical temperatures and pressures (for the ideal-gas validity limit): CoolProp 8.0.0
//!   HEOS `Tcrit` and `pcrit` of each pure fluid (the reference equations of state it
//!   implements); for air the pseudo-critical point CoolProp reports for
//!   its pseudo-pure air (132.53 K, 3.786 MPa), and for the lean natural gas
//!   Kay's rule (mole-fraction-weighted critical constants, common practice).
//! - The lean natural gas is an *illustrative* composition (95 % methane,
//!   3 % ethane, 1 % nitrogen, 1 % carbon dioxide by mole), not a sample of
//!   any real field; its properties follow from the ideal-gas mixing rule
//!   (mole-fraction-weighted molar mass and molar cp).

/// A cp polynomial cp = a + bT + cT² + dT³ in J/(mol K), T in K, with its
/// validity range.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CpPolynomial {
    /// Coefficients a, b, c, d of cp in J/(mol K).
    pub coefficients: [f64; 4],
    /// Lowest temperature of the fit, K.
    pub t_min: f64,
    /// Highest temperature of the fit, K.
    pub t_max: f64,
}

/// Constants of a gas, as published.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GasSpec {
    /// Short lowercase name (`"air"`, `"methane"`, ...).
    pub name: &'static str,
    /// Molar mass, kg/kmol.
    pub molar_mass: f64,
    /// Heat-capacity ratio at 300 K.
    pub k: f64,
    /// Ideal-gas cp(T) polynomial.
    pub cp: CpPolynomial,
    /// (Pseudo-)critical temperature, K.
    pub critical_temperature: f64,
    /// (Pseudo-)critical pressure, Pa.
    pub critical_pressure: f64,
}

const fn poly(a: f64, b: f64, c: f64, d: f64, t_max: f64) -> CpPolynomial {
    // Table A-2c lists a..d for cp in kJ/(kmol K) == J/(mol K).
    CpPolynomial {
        coefficients: [a, b, c, d],
        t_min: 273.0,
        t_max,
    }
}

/// Dry air (Çengel & Boles A-1, A-2a, A-2c).
pub const AIR: GasSpec = GasSpec {
    name: "air",
    molar_mass: 28.97,
    k: 1.400,
    cp: poly(28.11, 0.1967e-2, 0.4802e-5, -1.966e-9, 1800.0),
    critical_temperature: 132.53,
    critical_pressure: 3.786e6,
};

/// Nitrogen N2 (Çengel & Boles A-1, A-2a, A-2c).
pub const NITROGEN: GasSpec = GasSpec {
    name: "nitrogen",
    molar_mass: 28.013,
    k: 1.400,
    cp: poly(28.90, -0.1571e-2, 0.8081e-5, -2.873e-9, 1800.0),
    critical_temperature: 126.19,
    critical_pressure: 3.3958e6,
};

/// Methane CH4 (Çengel & Boles A-1, A-2a, A-2c).
pub const METHANE: GasSpec = GasSpec {
    name: "methane",
    molar_mass: 16.043,
    k: 1.299,
    cp: poly(19.89, 5.024e-2, 1.269e-5, -11.01e-9, 1500.0),
    critical_temperature: 190.56,
    critical_pressure: 4.5992e6,
};

/// Ethane C2H6 (Çengel & Boles A-1, A-2a, A-2c); a component of
/// [`LEAN_NATURAL_GAS`].
pub const ETHANE: GasSpec = GasSpec {
    name: "ethane",
    molar_mass: 30.070,
    k: 1.186,
    cp: poly(6.900, 17.27e-2, -6.406e-5, 7.285e-9, 1500.0),
    critical_temperature: 305.32,
    critical_pressure: 4.8722e6,
};

/// Carbon dioxide CO2 (Çengel & Boles A-1, A-2a, A-2c).
pub const CARBON_DIOXIDE: GasSpec = GasSpec {
    name: "carbon-dioxide",
    molar_mass: 44.01,
    k: 1.289,
    cp: poly(22.26, 5.981e-2, -3.501e-5, 7.469e-9, 1800.0),
    critical_temperature: 304.13,
    critical_pressure: 7.3773e6,
};

/// Hydrogen H2 (Çengel & Boles A-1, A-2a, A-2c).
pub const HYDROGEN: GasSpec = GasSpec {
    name: "hydrogen",
    molar_mass: 2.016,
    k: 1.405,
    cp: poly(29.11, -0.1916e-2, 0.4003e-5, -0.8704e-9, 1800.0),
    critical_temperature: 33.145,
    critical_pressure: 1.2964e6,
};

/// Mole fractions of [`LEAN_NATURAL_GAS`]: methane, ethane, nitrogen, CO2.
const LEAN_NG_FRACTIONS: [f64; 4] = [0.95, 0.03, 0.01, 0.01];
const LEAN_NG_PARTS: [GasSpec; 4] = [METHANE, ETHANE, NITROGEN, CARBON_DIOXIDE];

// Evaluated at compile time only: an out-of-range index would be a compile
// error, not a run-time panic.
#[allow(clippy::indexing_slicing)]
const fn lean_natural_gas() -> GasSpec {
    let mut m = 0.0;
    let mut c = [0.0; 4];
    let mut pc = 0.0;
    let mut tc = 0.0;
    let mut i = 0;
    while i < 4 {
        let y = LEAN_NG_FRACTIONS[i];
        let part = LEAN_NG_PARTS[i];
        m += y * part.molar_mass;
        pc += y * part.critical_pressure;
        tc += y * part.critical_temperature;
        let mut j = 0;
        while j < 4 {
            c[j] += y * part.cp.coefficients[j];
            j += 1;
        }
        i += 1;
    }
    // k at 300 K from the mixed molar cp: k = cp / (cp - Ru).
    let t = 300.0;
    let cp300 = c[0] + t * (c[1] + t * (c[2] + t * c[3]));
    let k = cp300 / (cp300 - super::MOLAR_GAS_CONSTANT);
    GasSpec {
        name: "lean-natural-gas",
        molar_mass: m,
        k,
        cp: CpPolynomial {
            coefficients: c,
            t_min: 273.0,
            t_max: 1500.0,
        },
        critical_temperature: tc,
        critical_pressure: pc,
    }
}

/// An illustrative lean natural gas (95 % CH4, 3 % C2H6, 1 % N2, 1 % CO2
/// by mole; ideal-gas mixing rule over the component constants above).
pub const LEAN_NATURAL_GAS: GasSpec = lean_natural_gas();

/// Every built-in gas, for lookup by name.
pub const BUILTIN_GASES: [GasSpec; 7] = [
    AIR,
    NITROGEN,
    METHANE,
    ETHANE,
    CARBON_DIOXIDE,
    HYDROGEN,
    LEAN_NATURAL_GAS,
];

impl GasSpec {
    /// Looks a built-in gas up by its [`GasSpec::name`].
    pub fn by_name(name: &str) -> Option<GasSpec> {
        BUILTIN_GASES.iter().copied().find(|g| g.name == name)
    }
}
