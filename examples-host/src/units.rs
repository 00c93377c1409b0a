//! Field units: parsing quantities as people write them (`1013 mbara`,
//! `14.7psia`, `80degF`, `26.85C`, `12 t/h`, `5000 Nm3/h`) into SI, and
//! showing SI values in a unit the user asked for.
//!
//! Pressures always say absolute or gauge: the unit is followed by `a` or
//! `g` (or `(a)` / `(g)`); a bare `bar` is refused as ambiguous. Conversion
//! factors: 1 psi = 6894.757293168 Pa and 1 kgf/cm² = 98066.5 Pa (NIST SP 811,
//! Appendix B); 1 bar = 1e5 Pa, 1 mbar = 1 hPa = 100 Pa (SI Brochure,
//! 9th ed., Table 8). Standard volume flows convert with the ideal gas at
//! their reference conditions (Z = 1): `Nm3/h` at 0 °C and 101.325 kPa
//! (DIN 1343), `Sm3/h` at 15 °C and 101.325 kPa (ISO 13443).

use polytrope::gas::MOLAR_GAS_CONSTANT;

/// Whether a pressure is absolute or above the local atmosphere.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Reference {
    /// Absolute.
    Absolute,
    /// Gauge (above the local atmosphere).
    Gauge,
}

/// A pressure as written: Pa, absolute or gauge.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PressureIn {
    /// Value in Pa (absolute, or above atmosphere for gauge).
    pub pa: f64,
    /// Absolute or gauge.
    pub reference: Reference,
}

impl PressureIn {
    /// Absolute pressure, Pa, given the local atmosphere (absolute, Pa).
    pub fn absolute(self, atmosphere_pa: f64) -> f64 {
        match self.reference {
            Reference::Absolute => self.pa,
            Reference::Gauge => self.pa + atmosphere_pa,
        }
    }
}

/// A mass flow as written: a mass flow or a standard volume flow.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum FlowIn {
    /// kg/s.
    Mass(f64),
    /// Standard volume flow, m³/s at the reference conditions.
    StandardVolume {
        /// m³/s at the reference conditions.
        m3_per_s: f64,
        /// The reference conditions.
        reference: StandardConditions,
    },
}

/// Reference conditions of a standard volume flow.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StandardConditions {
    /// Unit word (`Nm3/h`, `Sm3/h`).
    pub name: &'static str,
    /// Temperature, K.
    pub temperature_k: f64,
    /// Pressure, Pa absolute.
    pub pressure_pa: f64,
    /// Where the convention comes from.
    pub source: &'static str,
}

/// Normal cubic metres: 0 °C, 101.325 kPa (DIN 1343).
pub const NORMAL: StandardConditions = StandardConditions {
    name: "Nm3/h",
    temperature_k: 273.15,
    pressure_pa: 101_325.0,
    source: "0 degC and 101.325 kPa a (DIN 1343)",
};
/// Standard cubic metres: 15 °C, 101.325 kPa (ISO 13443).
pub const STANDARD: StandardConditions = StandardConditions {
    name: "Sm3/h",
    temperature_k: 288.15,
    pressure_pa: 101_325.0,
    source: "15 degC and 101.325 kPa a (ISO 13443)",
};

impl FlowIn {
    /// kg/s; standard volume flows need the gas molar mass (kg/kmol).
    pub fn kg_per_s(self, molar_mass: f64) -> f64 {
        match self {
            FlowIn::Mass(m) => m,
            FlowIn::StandardVolume {
                m3_per_s,
                reference,
            } => {
                let rho = reference.pressure_pa * molar_mass
                    / (MOLAR_GAS_CONSTANT * 1e3 * reference.temperature_k);
                m3_per_s * rho
            }
        }
    }
}

/// Pressure units: name, Pa per unit.
pub const PRESSURE_UNITS: &[(&str, f64)] = &[
    ("Pa", 1.0),
    ("kPa", 1.0e3),
    ("MPa", 1.0e6),
    ("bar", 1.0e5),
    ("mbar", 100.0),
    ("hPa", 100.0),
    ("psi", 6_894.757_293_168),
    ("kgf/cm2", 98_066.5),
    ("kgf/cm²", 98_066.5),
];

/// Temperature units as accepted.
pub const TEMPERATURE_UNITS: &[&str] = &["K", "degC", "C", "°C", "degF", "F", "°F"];

/// Mass and standard volume flow units as accepted.
pub const FLOW_UNITS: &[&str] = &["kg/s", "kg/h", "t/h", "Nm3/h", "Nm³/h", "Sm3/h", "Sm³/h"];

/// Splits `text` into its longest leading number and the rest (trimmed).
fn split_number(text: &str) -> Option<(f64, &str)> {
    let t = text.trim();
    let mut best = None;
    for (i, _) in t.char_indices().skip(1).chain([(t.len(), ' ')]) {
        if let Some(head) = t.get(..i) {
            if let Ok(x) = head.trim().parse::<f64>() {
                best = Some((x, t.get(i..).unwrap_or("").trim()));
            }
        }
    }
    best
}

/// Edit distance (case-insensitive), for "did you mean".
pub fn distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.to_lowercase().chars().collect();
    let b: Vec<char> = b.to_lowercase().chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.iter().enumerate() {
        let mut cur = vec![i + 1];
        for (j, cb) in b.iter().enumerate() {
            let sub = prev.get(j).copied().unwrap_or(0) + usize::from(ca != cb);
            let del = prev.get(j + 1).copied().unwrap_or(0) + 1;
            let ins = cur.get(j).copied().unwrap_or(0) + 1;
            cur.push(sub.min(del).min(ins));
        }
        prev = cur;
    }
    prev.last().copied().unwrap_or(0)
}

/// The closest of `known` to `word` if it is close enough to be a typo.
pub fn did_you_mean<'a>(word: &str, known: &[&'a str]) -> Option<&'a str> {
    // Ties go to the candidate sharing the longest prefix with the word.
    let prefix = |k: &str| {
        k.to_lowercase()
            .chars()
            .zip(word.to_lowercase().chars())
            .take_while(|(a, b)| a == b)
            .count()
    };
    let (best, d) = known
        .iter()
        .map(|k| (*k, distance(word, k)))
        .min_by_key(|(k, d)| (*d, core::cmp::Reverse(prefix(k))))?;
    (d > 0 && d <= 2.max(word.chars().count() / 3)).then_some(best)
}

fn unknown(what: &str, text: &str, unit: &str, known: &[&str]) -> String {
    if unit.starts_with(',') && unit.chars().nth(1).is_some_and(|c| c.is_ascii_digit()) {
        return format!("'{text}' is not a finite number: write the decimal point as '.', not ','");
    }
    let hint = match did_you_mean(unit, known) {
        Some(k) => format!("; did you mean '{k}'?"),
        None => String::new(),
    };
    format!(
        "'{text}': unknown {what} unit '{unit}'; known: {}{hint}",
        known.join(", ")
    )
}

fn finite(text: &str, x: f64) -> Result<f64, String> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(format!("'{text}' is not a finite number"))
    }
}

/// Every accepted pressure spelling (unit and a/g marker).
pub fn pressure_spellings() -> Vec<String> {
    PRESSURE_UNITS
        .iter()
        .flat_map(|(u, _)| [format!("{u}a"), format!("{u}g")])
        .collect()
}

fn pressure_scale(unit: &str) -> Option<f64> {
    PRESSURE_UNITS
        .iter()
        .find(|(u, _)| *u == unit)
        .or_else(|| {
            PRESSURE_UNITS
                .iter()
                .find(|(u, _)| u.eq_ignore_ascii_case(unit))
        })
        .map(|(_, s)| *s)
}

/// Parses a pressure with unit and absolute/gauge marker.
pub fn pressure(text: &str) -> Result<PressureIn, String> {
    let hint = "write e.g. 1.013bara, 1013mbara, 14.7psia (absolute) or 4.5barg, 250kPag (gauge)";
    let Some((x, unit)) = split_number(text) else {
        return Err(format!(
            "'{text}' is not a number with a pressure unit; {hint}"
        ));
    };
    if unit.is_empty() {
        return Err(format!("'{text}' has no pressure unit; {hint}"));
    }
    if pressure_scale(unit).is_some() {
        return Err(format!(
            "'{text}' does not say absolute or gauge: append a or g to the unit; {hint}"
        ));
    }
    let lower = unit.to_ascii_lowercase();
    let (base, reference) = if let Some(b) = lower.strip_suffix("(a)") {
        (b, Reference::Absolute)
    } else if let Some(b) = lower.strip_suffix("(g)") {
        (b, Reference::Gauge)
    } else if let Some(b) = lower.strip_suffix('a') {
        (b, Reference::Absolute)
    } else if let Some(b) = lower.strip_suffix('g') {
        (b, Reference::Gauge)
    } else {
        ("", Reference::Absolute)
    };
    let base_orig = unit.get(..base.len()).unwrap_or(base).trim();
    let Some(scale) = (!base.is_empty())
        .then(|| pressure_scale(base_orig))
        .flatten()
    else {
        let spellings = pressure_spellings();
        let known: Vec<&str> = spellings.iter().map(String::as_str).collect();
        return Err(unknown("pressure", text, unit, &known));
    };
    let x = finite(text, x)?;
    Ok(PressureIn {
        pa: x * scale,
        reference,
    })
}

/// Parses a temperature (`K`, `degC`/`C`/`°C`, `degF`/`F`/`°F`), in K.
/// At or below absolute zero is refused.
pub fn temperature(text: &str) -> Result<f64, String> {
    let Some((x, unit)) = split_number(text) else {
        return Err(format!(
            "'{text}' is not a number with a temperature unit; write e.g. 300K, 26.85degC or 80degF"
        ));
    };
    let x = finite(text, x)?;
    let k = match unit {
        "K" | "k" => x,
        "degC" | "C" | "°C" | "degc" | "c" => x + 273.15,
        "degF" | "F" | "°F" | "degf" | "f" => (x - 32.0) * 5.0 / 9.0 + 273.15,
        "" => {
            return Err(format!(
                "'{text}' has no temperature unit; write e.g. 300K, 26.85degC or 80degF"
            ))
        }
        other => return Err(unknown("temperature", text, other, TEMPERATURE_UNITS)),
    };
    if k <= 0.0 {
        return Err(format!("'{text}' is at or below absolute zero"));
    }
    Ok(k)
}

/// A temperature unit as an exact affine map to kelvin: K = a + b·x.
pub fn temperature_affine(unit: &str) -> Option<(f64, f64)> {
    match unit.trim() {
        "K" | "k" => Some((0.0, 1.0)),
        "degC" | "C" | "°C" | "degc" | "c" => Some((273.15, 1.0)),
        "degF" | "F" | "°F" | "degf" | "f" => Some((273.15 - 32.0 * 5.0 / 9.0, 5.0 / 9.0)),
        _ => None,
    }
}

/// Parses a mass flow or standard volume flow; negative is refused.
pub fn flow(text: &str) -> Result<FlowIn, String> {
    let Some((x, unit)) = split_number(text) else {
        return Err(format!(
            "'{text}' is not a number with a flow unit; write e.g. 2.5kg/s, 32t/h or 5000Nm3/h"
        ));
    };
    let x = finite(text, x)?;
    if x < 0.0 {
        return Err(format!("flow '{text}' is negative"));
    }
    let f = match unit {
        "kg/s" => FlowIn::Mass(x),
        "kg/h" => FlowIn::Mass(x / 3600.0),
        "t/h" => FlowIn::Mass(x / 3.6),
        "Nm3/h" | "Nm³/h" => FlowIn::StandardVolume {
            m3_per_s: x / 3600.0,
            reference: NORMAL,
        },
        "Sm3/h" | "Sm³/h" => FlowIn::StandardVolume {
            m3_per_s: x / 3600.0,
            reference: STANDARD,
        },
        "" => {
            return Err(format!(
                "'{text}' has no flow unit; write e.g. 2.5kg/s, 32t/h or 5000Nm3/h"
            ))
        }
        other => return Err(unknown("flow", text, other, FLOW_UNITS)),
    };
    Ok(f)
}

/// Parses a plain number (no unit).
pub fn number(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(x),
        _ => Err(format!("'{text}' is not a finite number")),
    }
}

/// Lowest plausible atmosphere, Pa (0.3 bar: above any inhabited altitude; common practice).
pub const ATMOSPHERE_MIN_PA: f64 = 0.3e5;
/// Highest plausible atmosphere, Pa (1.1 bar: above any sea-level weather; common practice).
pub const ATMOSPHERE_MAX_PA: f64 = 1.1e5;

/// Checks a local atmosphere: absolute and within 0.3–1.1 bar.
pub fn atmosphere(text: &str) -> Result<f64, String> {
    let p = pressure(text)?;
    if p.reference == Reference::Gauge {
        return Err(format!(
            "'{text}': the atmosphere must be an absolute pressure (e.g. 1013mbara)"
        ));
    }
    if !(ATMOSPHERE_MIN_PA..=ATMOSPHERE_MAX_PA).contains(&p.pa) {
        return Err(format!(
            "'{text}' is not a plausible atmosphere: it must lie between 0.3 and 1.1 bar a \
             ({ATMOSPHERE_MIN_PA} to {ATMOSPHERE_MAX_PA} Pa)"
        ));
    }
    Ok(p.pa)
}

/// Output units chosen by the user (`--units`); SI when `None`.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Presentation {
    /// Pressure unit and Pa per unit (absolute values get an `a` marker).
    pub pressure: Option<(&'static str, f64)>,
    /// Temperature: `degC` or `degF` instead of K.
    pub temperature: Option<&'static str>,
    /// Power: `kW` or `MW` instead of W.
    pub power: Option<(&'static str, f64)>,
    /// Specific work: `kJ/kg` instead of J/kg.
    pub work: Option<(&'static str, f64)>,
    /// Mass flow: `kg/h` or `t/h` instead of kg/s.
    pub flow: Option<(&'static str, f64)>,
}

/// Units `--units` accepts (or one unit system: si, bar-degc, us-field).
pub const PRESENTATION_UNITS: &[&str] = &[
    "SI", "bar-degc", "us-field", "Pa", "kPa", "MPa", "bar", "mbar", "hPa", "psi", "K", "degC",
    "degF", "W", "kW", "MW", "J/kg", "kJ/kg", "kg/s", "kg/h", "t/h",
];

impl Presentation {
    /// From a comma-separated list such as `bar,degC,kW,kJ/kg,t/h` (or `SI`).
    pub fn parse(text: &str) -> Result<Presentation, String> {
        // A whole unit system (`si`, `bar-degc`, `us-field`): the same
        // choice the tables, CSV and plots use.
        if let Ok(u) = crate::unit_system::UnitSystem::parse(text) {
            crate::unit_system::choose(u);
            return Ok(Presentation::of_system(u));
        }
        let mut p = Presentation::default();
        for word in text.split(',').map(str::trim).filter(|w| !w.is_empty()) {
            match word {
                "SI" | "si" => {}
                "K" => p.temperature = None,
                "degC" | "C" => p.temperature = Some("degC"),
                "degF" | "F" => p.temperature = Some("degF"),
                "W" => p.power = None,
                "kW" => p.power = Some(("kW", 1e3)),
                "MW" => p.power = Some(("MW", 1e6)),
                "J/kg" => p.work = None,
                "kJ/kg" => p.work = Some(("kJ/kg", 1e3)),
                "kg/s" => p.flow = None,
                "kg/h" => p.flow = Some(("kg/h", 1.0 / 3600.0)),
                "t/h" => p.flow = Some(("t/h", 1.0 / 3.6)),
                other => match PRESSURE_UNITS.iter().find(|(u, _)| *u == other) {
                    Some((u, s)) if *u == "Pa" => {
                        let _ = s;
                        p.pressure = None;
                    }
                    Some((u, s)) => p.pressure = Some((u, *s)),
                    None => return Err(unknown("output", text, other, PRESENTATION_UNITS)),
                },
            }
        }
        Ok(p)
    }

    /// The presentation of a whole unit system (factors from
    /// [`crate::unit_system`]).
    pub fn of_system(u: crate::unit_system::UnitSystem) -> Presentation {
        use crate::unit_system::{self as us, UnitSystem};
        match u {
            UnitSystem::Si => Presentation::default(),
            UnitSystem::BarDegC => Presentation {
                pressure: Some(("bar", 1e5)),
                temperature: Some("degC"),
                power: Some(("kW", 1e3)),
                work: Some(("kJ/kg", 1e3)),
                flow: Some(("t/h", 1.0 / 3.6)),
            },
            UnitSystem::UsField => Presentation {
                pressure: Some(("psi", us::PA_PER_PSI)),
                temperature: Some("degF"),
                power: Some(("hp", us::W_PER_HP)),
                work: Some(("Btu/lb", us::J_PER_KG_PER_BTU_PER_LB)),
                flow: Some(("lb/h", us::KG_S_PER_LB_H)),
            },
        }
    }

    /// An absolute pressure with its unit (`Pa a` in SI).
    pub fn pressure_abs(&self, pa: f64) -> String {
        match self.pressure {
            Some((u, s)) => format!("{} {u} a", sig(pa / s)),
            None => format!("{} Pa a", sig(pa)),
        }
    }
    /// A pressure difference with its unit.
    pub fn pressure_diff(&self, pa: f64) -> String {
        match self.pressure {
            Some((u, s)) => format!("{} {u}", sig(pa / s)),
            None => format!("{} Pa", sig(pa)),
        }
    }
    /// A temperature with its unit.
    pub fn temperature(&self, k: f64) -> String {
        match self.temperature {
            Some("degC") => format!("{:.2} degC", k - 273.15),
            Some(_) => format!("{:.2} degF", (k - 273.15) * 9.0 / 5.0 + 32.0),
            None => format!("{k:.2} K"),
        }
    }
    /// A power with its unit.
    pub fn power(&self, w: f64) -> String {
        match self.power {
            Some((u, s)) => format!("{} {u}", sig(w / s)),
            None => format!("{} W", sig(w)),
        }
    }
    /// A specific work or head with its unit.
    pub fn work(&self, j_per_kg: f64) -> String {
        match self.work {
            Some((u, s)) => format!("{} {u}", sig(j_per_kg / s)),
            None => format!("{} J/kg", sig(j_per_kg)),
        }
    }
    /// A mass flow with its unit.
    pub fn flow(&self, kg_s: f64) -> String {
        match self.flow {
            Some((u, s)) => format!("{} {u}", sig(kg_s / s)),
            None => format!("{} kg/s", sig(kg_s)),
        }
    }
}

/// A number with about six significant digits, no exponent for everyday magnitudes.
pub fn sig(x: f64) -> String {
    if !x.is_finite() {
        return "--".into();
    }
    let a = x.abs();
    if a != 0.0 && !(1e-3..1e9).contains(&a) {
        return format!("{x:.5e}");
    }
    let digits = if a == 0.0 {
        0
    } else {
        (5 - a.log10().floor() as i32).clamp(0, 8) as usize
    };
    let s = format!("{x:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn abs(t: &str) -> f64 {
        let p = pressure(t).unwrap();
        assert_eq!(p.reference, Reference::Absolute, "{t}");
        p.pa
    }
    fn gauge(t: &str) -> f64 {
        let p = pressure(t).unwrap();
        assert_eq!(p.reference, Reference::Gauge, "{t}");
        p.pa
    }
    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(1e-300)
    }

    #[test]
    fn pressures_in_field_units() {
        assert_eq!(abs("1013mbara"), 101_300.0);
        assert_eq!(abs("1013 hPaa"), 101_300.0);
        assert_eq!(abs("100kPa(a)"), 100e3);
        assert_eq!(abs("2MPaa"), 2e6);
        assert_eq!(abs("101325Paa"), 101_325.0);
        // 14.7 psi = 101352.93 Pa (NIST SP 811 factor 6894.757).
        assert!(close(abs("14.7psia"), 101_352.93, 1e-6));
        // 1 kgf/cm² = 98066.5 Pa exactly (NIST SP 811).
        assert_eq!(gauge("1kgf/cm2g"), 98_066.5);
        assert_eq!(gauge("1 kgf/cm²g"), 98_066.5);
        assert_eq!(gauge("4.5barg"), 4.5e5);
        assert_eq!(gauge("-0.2bar(g)"), -0.2e5);
    }

    #[test]
    fn pressure_errors_say_what_is_valid() {
        let e = pressure("1bar").unwrap_err();
        assert!(e.contains("absolute or gauge"), "{e}");
        let e = pressure("5 psa").unwrap_err();
        assert!(e.contains("unknown pressure unit 'psa'"), "{e}");
        assert!(e.contains("did you mean 'psia'"), "{e}");
        assert!(e.contains("known: Paa, Pag"), "{e}");
        let e = pressure("5 torra").unwrap_err();
        assert!(
            e.contains("unknown pressure unit") && !e.contains("did you mean"),
            "{e}"
        );
        for bad in ["", "abc", "NaNbara", "infkPaa", "100"] {
            assert!(pressure(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn temperatures_and_flows() {
        assert!(close(temperature("26.85C").unwrap(), 300.0, 1e-12));
        assert!(close(temperature("26.85degC").unwrap(), 300.0, 1e-12));
        // 80 °F = 299.8167 K (definition of the Fahrenheit scale).
        assert!(close(temperature("80degF").unwrap(), 299.816_666_7, 1e-9));
        assert_eq!(temperature("300 K").unwrap(), 300.0);
        let e = temperature("300 degK").unwrap_err();
        assert!(e.contains("unknown temperature unit"), "{e}");
        assert!(temperature("-300C").is_err());
        assert_eq!(flow("3.6t/h").unwrap(), FlowIn::Mass(1.0));
        assert_eq!(flow("3600kg/h").unwrap(), FlowIn::Mass(1.0));
        // 1 Nm³ of air (M 28.97) weighs 1.2925 kg: p M / (Ru T) at 0 °C, 1 atm.
        let air = flow("3600Nm3/h").unwrap().kg_per_s(28.97);
        assert!(close(air, 1.2925, 1e-3), "{air}");
        let e = flow("5 kg/min").unwrap_err();
        assert!(e.contains("known: kg/s"), "{e}");
        assert!(flow("-1kg/s").is_err());
        let e = flow("5 Nm3/hr").unwrap_err();
        assert!(e.contains("did you mean 'Nm3/h'"), "{e}");
    }

    #[test]
    fn atmosphere_is_checked() {
        assert_eq!(atmosphere("1013mbara").unwrap(), 101_300.0);
        assert!(atmosphere("0.2bara").unwrap_err().contains("0.3 and 1.1"));
        assert!(atmosphere("1.2bara").is_err());
        assert!(atmosphere("0.01barg").unwrap_err().contains("absolute"));
    }

    #[test]
    fn presentation() {
        let p = Presentation::parse("bar,degC,kW,kJ/kg,t/h").unwrap();
        assert_eq!(p.pressure_abs(1.5e5), "1.5 bar a");
        assert_eq!(p.temperature(300.0), "26.85 degC");
        assert_eq!(p.power(2500.0), "2.5 kW");
        assert_eq!(p.flow(1.0), "3.6 t/h");
        let si = Presentation::default();
        assert_eq!(si.pressure_abs(1.5e5), "150000 Pa a");
        let e = Presentation::parse("bars").unwrap_err();
        assert!(e.contains("did you mean 'bar'"), "{e}");
    }
}
