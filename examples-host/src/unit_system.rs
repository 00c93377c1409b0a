//! One unit presentation for every result a user sees: a single choice
//! (`--units si | bar-degc | us-field`) that `demo`, `evaluate`, `replay`
//! and `rate` apply to their tables, their results-CSV column names and
//! their plots. The quantity of each number comes from the kernel's field
//! list (`polytrope::fields`, [`QuantityKind`] and the SI key suffix), so
//! there is one place that says what a number is and one (here) that says
//! how it is shown.
//!
//! Conversion factors (exact where marked): NIST Special Publication 811
//! (2008), Appendix B.8 — bar = 1e5 Pa (exact); psi (lbf/in²) =
//! 6.894 757 E+03 Pa; Btu_IT/lb = 2.326 E+03 J/kg (exact); horsepower (550
//! ft·lbf/s) = 7.456 999 E+02 W; lb/h = 1.259 979 E-04 kg/s; t/h = 1/3.6
//! kg/s (exact); Btu_IT/h = 2.930 711 E-01 W; lb/ft³ = 1.601 846 E+01
//! kg/m³; t/°C = T/K − 273.15 and t/°F = 1.8·T/K − 459.67 (exact, NIST SP
//! 811 §4.2.1.1 and B.9). Unit tests check each factor against those
//! numbers and round trips.
//!
//! The JSON keys stay SI whatever the choice (they are the documented
//! interface); the choice changes what a person reads.

use std::sync::OnceLock;

use polytrope::fields::QuantityKind;

/// The unit systems.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum UnitSystem {
    /// SI: Pa, K, J/kg, W, kg/s.
    Si,
    /// bar (absolute `bar a`), °C, kJ/kg, kW, t/h.
    BarDegC,
    /// psi (absolute `psi a`), °F, Btu/lb, hp, lb/h.
    UsField,
}

/// Names accepted by `--units`, in [`UnitSystem`] order.
pub const NAMES: [&str; 3] = ["si", "bar-degc", "us-field"];

/// Pa per psi (NIST SP 811 B.8).
pub const PA_PER_PSI: f64 = 6_894.757;
/// J/kg per Btu_IT/lb (NIST SP 811 B.8, exact).
pub const J_PER_KG_PER_BTU_PER_LB: f64 = 2_326.0;
/// W per horsepower (550 ft·lbf/s; NIST SP 811 B.8).
pub const W_PER_HP: f64 = 745.699_9;
/// kg/s per lb/h (NIST SP 811 B.8).
pub const KG_S_PER_LB_H: f64 = 1.259_979e-4;
/// W per Btu_IT/h (NIST SP 811 B.8).
pub const W_PER_BTU_H: f64 = 0.293_071_1;
/// kg/m³ per lb/ft³ (NIST SP 811 B.8).
pub const KG_M3_PER_LB_FT3: f64 = 16.018_46;

/// How one quantity is shown: `shown = si · scale + offset`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Shown {
    /// Unit label in tables and on plot axes.
    pub unit: &'static str,
    /// Suffix in CSV column names (replaces the SI suffix of the key).
    pub suffix: &'static str,
    /// Multiplier from SI.
    pub scale: f64,
    /// Offset after scaling (absolute temperatures only).
    pub offset: f64,
    /// Decimals in tables.
    pub decimals: usize,
}

impl Shown {
    /// The shown number of an SI value.
    pub fn of(&self, si: f64) -> f64 {
        si * self.scale + self.offset
    }
}

const fn s(unit: &'static str, suffix: &'static str, scale: f64, decimals: usize) -> Shown {
    Shown {
        unit,
        suffix,
        scale,
        offset: 0.0,
        decimals,
    }
}

/// A quantity the unit choice applies to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Dimension {
    /// Absolute pressure.
    PressureAbs,
    /// Pressure difference (drop, rise, differential).
    PressureDiff,
    /// Absolute temperature.
    Temperature,
    /// Temperature difference.
    TemperatureDiff,
    /// Specific work or head.
    SpecificWork,
    /// Power (gas, shaft, recycle, ledger lines).
    Power,
    /// Heat flow (a cooler's duty): Btu/h in US field units, W or kW otherwise.
    HeatFlow,
    /// Mass flow.
    MassFlow,
    /// Thermal conductance UA.
    Conductance,
    /// Density.
    Density,
}

impl Dimension {
    /// The SI suffix of a key of this dimension.
    pub const fn si_suffix(self) -> &'static str {
        match self {
            Dimension::PressureAbs | Dimension::PressureDiff => "_Pa",
            Dimension::Temperature | Dimension::TemperatureDiff => "_K",
            Dimension::SpecificWork => "_J_per_kg",
            Dimension::Power | Dimension::HeatFlow => "_W",
            Dimension::MassFlow => "_kg_per_s",
            Dimension::Conductance => "_W_per_K",
            Dimension::Density => "_kg_per_m3",
        }
    }

    /// The dimension of a kernel field (`kind` from its spec, `key` to tell
    /// a pressure difference from an absolute pressure); `None` for
    /// dimensionless and non-numeric fields.
    pub fn of_field(kind: QuantityKind, key: &str) -> Option<Dimension> {
        let difference = ["drop", "rise", "differential", "dp_"]
            .iter()
            .any(|w| key.contains(w));
        match kind {
            QuantityKind::Pressure if difference => Some(Dimension::PressureDiff),
            QuantityKind::Pressure => Some(Dimension::PressureAbs),
            QuantityKind::Temperature => Some(Dimension::Temperature),
            QuantityKind::TemperatureDifference => Some(Dimension::TemperatureDiff),
            QuantityKind::SpecificWork => Some(Dimension::SpecificWork),
            QuantityKind::Power if key.contains("duty") => Some(Dimension::HeatFlow),
            QuantityKind::Power => Some(Dimension::Power),
            QuantityKind::MassFlow => Some(Dimension::MassFlow),
            QuantityKind::Conductance => Some(Dimension::Conductance),
            QuantityKind::Density => Some(Dimension::Density),
            _ => None,
        }
    }
}

impl UnitSystem {
    /// From a `--units` name (case-insensitive), with "did you mean".
    pub fn parse(name: &str) -> Result<UnitSystem, String> {
        let lower = name.trim().to_ascii_lowercase();
        match lower.as_str() {
            "si" => Ok(UnitSystem::Si),
            "bar-degc" => Ok(UnitSystem::BarDegC),
            "us-field" => Ok(UnitSystem::UsField),
            _ => {
                let hint = crate::units::did_you_mean(&lower, &NAMES)
                    .map(|n| format!("; did you mean '{n}'?"))
                    .unwrap_or_default();
                Err(format!(
                    "unknown unit system '{name}'; known: {}{hint}",
                    NAMES.join(", ")
                ))
            }
        }
    }

    /// The name `--units` takes.
    pub fn name(self) -> &'static str {
        match self {
            UnitSystem::Si => "si",
            UnitSystem::BarDegC => "bar-degc",
            UnitSystem::UsField => "us-field",
        }
    }

    /// How a quantity of dimension `d` is shown.
    pub fn shown(self, d: Dimension) -> Shown {
        use Dimension as D;
        match (self, d) {
            (UnitSystem::Si, D::PressureAbs) => s("Pa a", "_Pa", 1.0, 0),
            (UnitSystem::Si, D::PressureDiff) => s("Pa", "_Pa", 1.0, 0),
            (UnitSystem::Si, D::Temperature | D::TemperatureDiff) => s("K", "_K", 1.0, 2),
            (UnitSystem::Si, D::SpecificWork) => s("J/kg", "_J_per_kg", 1.0, 0),
            (UnitSystem::Si, D::Power | D::HeatFlow) => s("W", "_W", 1.0, 0),
            (UnitSystem::Si, D::MassFlow) => s("kg/s", "_kg_per_s", 1.0, 4),
            (UnitSystem::Si, D::Conductance) => s("W/K", "_W_per_K", 1.0, 0),
            (UnitSystem::Si, D::Density) => s("kg/m3", "_kg_per_m3", 1.0, 2),
            (UnitSystem::BarDegC, D::PressureAbs) => s("bar a", "_bar_a", 1e-5, 4),
            (UnitSystem::BarDegC, D::PressureDiff) => s("mbar", "_mbar", 1e-2, 1),
            (UnitSystem::BarDegC, D::Temperature) => Shown {
                offset: -273.15,
                ..s("degC", "_degC", 1.0, 1)
            },
            (UnitSystem::BarDegC, D::TemperatureDiff) => s("K", "_K", 1.0, 1),
            (UnitSystem::BarDegC, D::SpecificWork) => s("kJ/kg", "_kJ_per_kg", 1e-3, 2),
            (UnitSystem::BarDegC, D::Power | D::HeatFlow) => s("kW", "_kW", 1e-3, 1),
            (UnitSystem::BarDegC, D::MassFlow) => s("t/h", "_t_per_h", 3.6, 3),
            (UnitSystem::BarDegC, D::Conductance) => s("kW/K", "_kW_per_K", 1e-3, 2),
            (UnitSystem::BarDegC, D::Density) => s("kg/m3", "_kg_per_m3", 1.0, 2),
            (UnitSystem::UsField, D::PressureAbs) => s("psi a", "_psia", 1.0 / PA_PER_PSI, 2),
            (UnitSystem::UsField, D::PressureDiff) => s("psi", "_psi", 1.0 / PA_PER_PSI, 3),
            (UnitSystem::UsField, D::Temperature) => Shown {
                offset: -459.67,
                ..s("degF", "_degF", 1.8, 1)
            },
            (UnitSystem::UsField, D::TemperatureDiff) => s("degF diff", "_degF_diff", 1.8, 1),
            (UnitSystem::UsField, D::SpecificWork) => {
                s("Btu/lb", "_Btu_per_lb", 1.0 / J_PER_KG_PER_BTU_PER_LB, 2)
            }
            (UnitSystem::UsField, D::Power) => s("hp", "_hp", 1.0 / W_PER_HP, 1),
            (UnitSystem::UsField, D::HeatFlow) => s("Btu/h", "_Btu_per_h", 1.0 / W_PER_BTU_H, 0),
            (UnitSystem::UsField, D::MassFlow) => s("lb/h", "_lb_per_h", 1.0 / KG_S_PER_LB_H, 0),
            (UnitSystem::UsField, D::Conductance) => s(
                "Btu/(h degF)",
                "_Btu_per_h_degF",
                1.0 / (W_PER_BTU_H * 1.8),
                0,
            ),
            (UnitSystem::UsField, D::Density) => {
                s("lb/ft3", "_lb_per_ft3", 1.0 / KG_M3_PER_LB_FT3, 4)
            }
        }
    }

    /// A CSV column key in this system: the SI suffix of `key` replaced by
    /// this system's (unchanged if the key does not end in the SI suffix).
    pub fn key(self, key: &str, d: Dimension) -> String {
        match key.strip_suffix(d.si_suffix()) {
            Some(base) => format!("{base}{}", self.shown(d).suffix),
            None => key.to_string(),
        }
    }
}

static CHOSEN: OnceLock<UnitSystem> = OnceLock::new();

/// Sets the process's unit choice (once; later calls are ignored).
pub fn choose(u: UnitSystem) {
    let _ = CHOSEN.set(u);
}

/// Sets the choice from an optional `--units` value.
pub fn choose_from(name: Option<&str>) -> Result<(), String> {
    if let Some(n) = name {
        choose(UnitSystem::parse(n)?);
    }
    Ok(())
}

/// The process's unit choice, if the user made one (otherwise each output
/// keeps its default: SI keys in CSV and JSON, the tables' mixed default).
pub fn chosen() -> Option<UnitSystem> {
    CHOSEN.get().copied()
}

/// A CSV key in the chosen system (SI without a choice), interned: the
/// same text gives the same `&'static str` (a few hundred keys at most).
pub fn csv_key(key: &'static str, d: Option<Dimension>) -> &'static str {
    use std::collections::HashMap;
    use std::sync::Mutex;
    static INTERNED: OnceLock<Mutex<HashMap<String, &'static str>>> = OnceLock::new();
    let (Some(u), Some(d)) = (chosen(), d) else {
        return key;
    };
    let k = u.key(key, d);
    if k == key {
        return key;
    }
    let map = INTERNED.get_or_init(|| Mutex::new(HashMap::new()));
    let Ok(mut m) = map.lock() else {
        return key;
    };
    if let Some(v) = m.get(&k) {
        return v;
    }
    let leaked: &'static str = Box::leak(k.clone().into_boxed_str());
    m.insert(k, leaked);
    leaked
}

/// An SI value in the chosen system (unchanged without a choice).
pub fn csv_value(si: f64, d: Option<Dimension>) -> f64 {
    match (chosen(), d) {
        (Some(u), Some(d)) => u.shown(d).of(si),
        _ => si,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(1e-300)
    }

    /// Each factor against NIST SP 811 (2008) Appendix B.8/B.9, and one
    /// textbook value per unit.
    #[test]
    fn factors_match_nist_sp_811() {
        let u = UnitSystem::UsField;
        // 1 atm = 101 325 Pa (exact) = 14.695 95 psi (NIST SP 811 B.8).
        assert!(close(
            u.shown(Dimension::PressureAbs).of(101_325.0),
            14.695_95,
            1e-6
        ));
        // Water boils at 212 degF = 373.15 K (ITS-90 rounding, NIST SP 811 B.9).
        assert!(close(
            u.shown(Dimension::Temperature).of(373.15),
            212.0,
            1e-12
        ));
        // 0 degF = 255.372 222 K.
        assert!(u.shown(Dimension::Temperature).of(255.372_222).abs() < 1e-5);
        // A 10 K difference is 18 degF of difference.
        assert!(close(
            u.shown(Dimension::TemperatureDiff).of(10.0),
            18.0,
            1e-12
        ));
        // 1 Btu_IT/lb = 2326 J/kg (exact).
        assert!(close(
            u.shown(Dimension::SpecificWork).of(2326.0),
            1.0,
            1e-12
        ));
        // 1 hp = 745.6999 W.
        assert!(close(u.shown(Dimension::Power).of(745.699_9), 1.0, 1e-12));
        // Btu_IT/h = 0.293 071 1 W (NIST SP 811, B.8).
        assert!(close(
            u.shown(Dimension::HeatFlow).of(0.293_071_1),
            1.0,
            1e-12
        ));
        assert_eq!(
            Dimension::of_field(QuantityKind::Power, "heat_duty_W"),
            Some(Dimension::HeatFlow)
        );
        // 1 kg/s = 7936.641 lb/h (1 / 1.259 979 E-04).
        assert!(close(u.shown(Dimension::MassFlow).of(1.0), 7_936.641, 1e-6));
        // 1 lb/ft3 = 16.018 46 kg/m3.
        assert!(close(u.shown(Dimension::Density).of(16.018_46), 1.0, 1e-12));
        // 1 W/K = 1/(0.293 071 1 · 1.8) Btu/(h degF) = 1.895 634.
        assert!(close(
            u.shown(Dimension::Conductance).of(1.0),
            1.895_634,
            1e-6
        ));
        let m = UnitSystem::BarDegC;
        assert!(close(
            m.shown(Dimension::PressureAbs).of(101_325.0),
            1.013_25,
            1e-12
        ));
        assert!(close(
            m.shown(Dimension::PressureDiff).of(400.0),
            4.0,
            1e-12
        ));
        assert!(m.shown(Dimension::Temperature).of(273.15).abs() < 1e-12);
        assert!(close(
            m.shown(Dimension::Temperature).of(300.0),
            26.85,
            1e-12
        ));
        assert!(close(m.shown(Dimension::MassFlow).of(1.0), 3.6, 1e-12));
        assert!(close(
            m.shown(Dimension::SpecificWork).of(65_900.0),
            65.9,
            1e-12
        ));
        assert!(close(m.shown(Dimension::Power).of(123_000.0), 123.0, 1e-12));
        // SI is the identity.
        for d in [
            Dimension::PressureAbs,
            Dimension::Temperature,
            Dimension::SpecificWork,
            Dimension::Power,
            Dimension::MassFlow,
        ] {
            assert_eq!(UnitSystem::Si.shown(d).of(1234.5), 1234.5);
        }
    }

    #[test]
    fn keys_and_names() {
        let u = UnitSystem::BarDegC;
        assert_eq!(u.key("gas_power_W", Dimension::Power), "gas_power_kW");
        assert_eq!(
            u.key("suction_pressure_Pa", Dimension::PressureAbs),
            "suction_pressure_bar_a"
        );
        assert_eq!(
            UnitSystem::UsField.key("approach_K", Dimension::TemperatureDiff),
            "approach_degF_diff"
        );
        // UA ends in _K too: the conductance suffix is taken whole.
        assert_eq!(
            UnitSystem::UsField.key("ua_W_per_K", Dimension::Conductance),
            "ua_Btu_per_h_degF"
        );
        assert_eq!(UnitSystem::parse("US-Field"), Ok(UnitSystem::UsField));
        let e = UnitSystem::parse("bar-degF").unwrap_err();
        assert!(e.contains("did you mean 'bar-degc'"), "{e}");
        assert_eq!(
            Dimension::of_field(QuantityKind::Pressure, "pressure_drop_Pa"),
            Some(Dimension::PressureDiff)
        );
        assert_eq!(
            Dimension::of_field(QuantityKind::Pressure, "suction_pressure_Pa"),
            Some(Dimension::PressureAbs)
        );
    }
}
