//! The accuracy table: how far the f32 device build may differ from the f64
//! reference build, per output quantity. The one source of truth used by
//! `tests/f32_vs_f64.rs` and quoted in the README (a test checks the README
//! quotes these numbers).
//!
//! A value `a` (f32 build) agrees with `b` (f64 build) when
//! `|a - b| <= atol + rtol·|b|`. With the `approx-math` feature the f32
//! build uses `micromath` approximations; their looser bounds are the
//! `approx_*` columns, and [`Tolerance::accepts`] applies them automatically
//! when the feature is on.
//!
//! It stays in the device library although tests are its main reader: it is
//! the published accuracy contract of the f32 build (the README quotes it),
//! [`QuantityKind::tolerance`](crate::fields::QuantityKind::tolerance) ties
//! every output field to an entry, and tools on the device or host may
//! report it; it is constant data that costs nothing unless used.

/// Tolerance for one quantity.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Tolerance {
    /// Quantity name (as in the README table).
    pub quantity: &'static str,
    /// Relative tolerance, -.
    pub rtol: f64,
    /// Absolute tolerance, in the quantity's SI unit.
    pub atol: f64,
    /// Relative tolerance with `approx-math`, -.
    pub approx_rtol: f64,
    /// Absolute tolerance with `approx-math`, SI unit.
    pub approx_atol: f64,
}

impl Tolerance {
    /// `true` if `device` agrees with `reference` (this build's bounds).
    pub fn accepts(&self, device: f64, reference: f64) -> bool {
        let (rtol, atol) = self.active();
        let d = device - reference;
        let d = if d < 0.0 { -d } else { d };
        let r = if reference < 0.0 {
            -reference
        } else {
            reference
        };
        d <= atol + rtol * r
    }

    /// (rtol, atol) of this build: the `approx_*` pair with `approx-math`.
    pub const fn active(&self) -> (f64, f64) {
        if cfg!(feature = "approx-math") {
            (self.approx_rtol, self.approx_atol)
        } else {
            (self.rtol, self.atol)
        }
    }
}

const fn tol(
    quantity: &'static str,
    rtol: f64,
    atol: f64,
    approx_rtol: f64,
    approx_atol: f64,
) -> Tolerance {
    Tolerance {
        quantity,
        rtol,
        atol,
        approx_rtol,
        approx_atol,
    }
}

/// Pressure ratio, -.
pub const PRESSURE_RATIO: Tolerance = tol("pressure ratio", 1e-7, 0.0, 1e-6, 0.0);
/// Temperatures, K.
pub const TEMPERATURE: Tolerance = tol("temperature (K)", 1e-6, 1e-3, 5e-3, 1e-3);
/// Temperature differences (rise, drop, approach, LMTD), K.
pub const TEMPERATURE_DIFFERENCE: Tolerance =
    tol("temperature difference (K)", 2e-5, 5e-4, 5e-2, 2.0);
/// Heads and specific work, J/kg.
pub const SPECIFIC_WORK: Tolerance = tol("head / specific work (J/kg)", 2e-5, 0.5, 5e-2, 50.0);
/// Efficiencies and effectiveness, -.
pub const EFFICIENCY: Tolerance = tol("efficiency / effectiveness", 2e-5, 2e-5, 5e-2, 1e-2);
/// Polytropic exponent, -.
pub const EXPONENT: Tolerance = tol("polytropic exponent", 5e-6, 5e-6, 1e-2, 5e-3);
/// Power and heat duty, W.
pub const POWER: Tolerance = tol("power / duty (W)", 2e-6, 0.1, 5e-3, 1.0);
/// Pressures and pressure differences, Pa.
pub const PRESSURE: Tolerance = tol("pressure (Pa)", 1e-6, 0.05, 5e-3, 0.05);

/// Compressibility factor and density from the gas model, -, kg/m³
/// (Peng–Robinson in f32: the cubic's root and the entropy match).
pub const COMPRESSIBILITY: Tolerance =
    tol("compressibility factor / density", 4e-6, 0.0, 5e-3, 0.0);

/// Surge margin (dimensionless distance from the surge line), -. Exercised
/// by `tests/surge_margin.rs` (invariance sweep) rather than the train sweep.
pub const SURGE_MARGIN: Tolerance = tol("surge margin", 0.0, 2e-5, 0.0, 1e-3);

/// The whole table, in README order.
pub const TABLE: [Tolerance; 10] = [
    PRESSURE_RATIO,
    TEMPERATURE,
    TEMPERATURE_DIFFERENCE,
    SPECIFIC_WORK,
    EFFICIENCY,
    EXPONENT,
    POWER,
    PRESSURE,
    COMPRESSIBILITY,
    SURGE_MARGIN,
];
