//! Numbers with explicit units from the command line, converted to SI with
//! `polytrope::units`.
//!
//! Pressures name their unit *and* whether they are absolute or gauge:
//! `Pa`, `kPa`, `MPa` or `bar` followed by `a` (absolute) or `g` (gauge),
//! e.g. `100kPaa`, `1.0bara`, `4.5barg`, `250kPag`; `(a)` / `(g)` are
//! accepted too (`100kPa(a)`). A bare `100kPa` is refused as ambiguous.
//! Temperatures end in `K` or `degC` (`300K`, `26.85degC`). Mass flows end
//! in `kg/s` or `kg/h`.

use polytrope::units::{Celsius, Kelvin, PressureAbs, PressureGauge};

use crate::cli::CliError;

/// A pressure as typed: absolute or gauge, in Pa.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Pressure {
    /// Absolute.
    Abs(PressureAbs<f64>),
    /// Gauge (above local atmosphere).
    Gauge(PressureGauge<f64>),
}

const PRESSURE_UNITS: [(&str, f64); 4] =
    [("MPa", 1.0e6), ("kPa", 1.0e3), ("bar", 1.0e5), ("Pa", 1.0)];

fn input(msg: String) -> CliError {
    CliError::Input(msg)
}

/// Parses a finite number, naming the option in the error.
pub fn number(option: &str, text: &str) -> Result<f64, CliError> {
    let t = text.trim();
    match t.parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(x),
        _ => Err(input(format!(
            "--{option}: '{text}' is not a finite number"
        ))),
    }
}

/// Splits `text` into (number, suffix) for the longest suffix of `units`
/// that `text` ends with (ASCII case-insensitive).
fn split_unit<'u>(text: &str, units: &[&'u str]) -> Option<(String, &'u str)> {
    let t = text.trim();
    let mut sorted: Vec<&'u str> = units.to_vec();
    sorted.sort_by_key(|u| core::cmp::Reverse(u.len()));
    for u in sorted {
        if t.len() >= u.len() && t.is_char_boundary(t.len() - u.len()) {
            let (num, suf) = t.split_at(t.len() - u.len());
            if suf.eq_ignore_ascii_case(u) {
                return Some((num.trim().to_string(), u));
            }
        }
    }
    None
}

/// Parses a pressure such as `100kPaa`, `1.0bara` or `4.5barg`.
pub fn pressure(option: &str, text: &str) -> Result<Pressure, CliError> {
    let mut suffixes: Vec<String> = Vec::new();
    for (u, _) in PRESSURE_UNITS {
        for marker in ["a", "g", "(a)", "(g)", ""] {
            suffixes.push(format!("{u}{marker}"));
        }
    }
    let refs: Vec<&str> = suffixes.iter().map(String::as_str).collect();
    let hint = "write e.g. 100kPaa or 1.0bara (absolute), 4.5barg or 250kPag (gauge)";
    let Some((num, suffix)) = split_unit(text, &refs) else {
        return Err(input(format!(
            "--{option}: '{text}' has no pressure unit; {hint}"
        )));
    };
    let Some((unit, scale)) = PRESSURE_UNITS.iter().copied().find(|(u, _)| {
        suffix
            .get(..u.len())
            .is_some_and(|s| s.eq_ignore_ascii_case(u))
    }) else {
        return Err(input(format!(
            "--{option}: unknown pressure unit in '{text}'"
        )));
    };
    let marker = suffix.get(unit.len()..).unwrap_or("");
    let x = number(option, &num)?;
    let pa = x * scale;
    match marker {
        "a" | "A" | "(a)" | "(A)" => Ok(Pressure::Abs(PressureAbs::from_pa(pa))),
        "g" | "G" | "(g)" | "(G)" => Ok(Pressure::Gauge(PressureGauge::from_pa(pa))),
        _ => Err(input(format!(
            "--{option}: '{text}' does not say absolute or gauge; {hint}"
        ))),
    }
}

/// Parses a temperature such as `300K` or `26.85degC`, returned in K.
pub fn temperature(option: &str, text: &str) -> Result<Kelvin<f64>, CliError> {
    let Some((num, unit)) = split_unit(text, &["K", "degC", "°C"]) else {
        return Err(input(format!(
            "--{option}: '{text}' has no temperature unit; write e.g. 300K or 26.85degC"
        )));
    };
    let x = number(option, &num)?;
    let k = if unit == "K" {
        Kelvin::new(x)
    } else {
        Kelvin::from(Celsius::new(x))
    };
    if k.kelvin() <= 0.0 {
        return Err(input(format!(
            "--{option}: '{text}' is at or below absolute zero"
        )));
    }
    Ok(k)
}

/// Parses a mass flow such as `2.5kg/s` or `9000kg/h`, returned in kg/s.
pub fn mass_flow(option: &str, text: &str) -> Result<f64, CliError> {
    let Some((num, unit)) = split_unit(text, &["kg/s", "kg/h"]) else {
        return Err(input(format!(
            "--{option}: '{text}' has no mass-flow unit; write e.g. 2.5kg/s or 9000kg/h"
        )));
    };
    let x = number(option, &num)?;
    let kg_s = if unit == "kg/h" { x / 3600.0 } else { x };
    if kg_s < 0.0 {
        return Err(input(format!("--{option}: mass flow '{text}' is negative")));
    }
    Ok(kg_s)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn abs_pa(t: &str) -> f64 {
        match pressure("p", t).unwrap() {
            Pressure::Abs(p) => p.pa(),
            Pressure::Gauge(_) => panic!("{t} parsed as gauge"),
        }
    }
    fn gauge_pa(t: &str) -> f64 {
        match pressure("p", t).unwrap() {
            Pressure::Gauge(p) => p.pa(),
            Pressure::Abs(_) => panic!("{t} parsed as absolute"),
        }
    }

    #[test]
    fn pressures_need_unit_and_reference() {
        assert_eq!(abs_pa("100kPaa"), 100e3);
        assert_eq!(abs_pa("100kPa(a)"), 100e3);
        assert_eq!(abs_pa("1.0bara"), 1e5);
        assert_eq!(abs_pa("2MPaa"), 2e6);
        assert_eq!(abs_pa("101325Paa"), 101_325.0);
        assert_eq!(abs_pa("1e5 Paa"), 1e5);
        assert_eq!(gauge_pa("4.5barg"), 4.5e5);
        assert_eq!(gauge_pa("250kPag"), 250e3);
        assert_eq!(gauge_pa("-0.2bar(g)"), -0.2e5);
        for bad in [
            "100kPa", "1bar", "100", "abcbara", "NaNbara", "infkPaa", "", "5psia",
        ] {
            assert!(pressure("p", bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn temperatures_and_flows() {
        assert_eq!(temperature("t", "300K").unwrap().kelvin(), 300.0);
        assert!((temperature("t", "26.85degC").unwrap().kelvin() - 300.0).abs() < 1e-9);
        for bad in ["300", "-5K", "-300degC", "300F", "xK"] {
            assert!(temperature("t", bad).is_err(), "{bad}");
        }
        assert_eq!(mass_flow("m", "3600kg/h").unwrap(), 1.0);
        assert_eq!(mass_flow("m", "2.5kg/s").unwrap(), 2.5);
        assert!(mass_flow("m", "2.5").is_err());
        assert!(mass_flow("m", "-1kg/s").is_err());
    }
}
