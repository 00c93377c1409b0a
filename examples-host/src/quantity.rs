//! Numbers with explicit units from the command line, converted to SI with
//! `polytrope::units`.
//!
//! Pressures name their unit *and* whether they are absolute or gauge:
//! `Pa`, `kPa`, `MPa`, `bar`, `mbar`, `hPa`, `psi` or `kgf/cm2` followed by
//! `a` (absolute) or `g` (gauge), e.g. `100kPaa`, `1013mbara`, `4.5barg`;
//! `(a)` / `(g)` are accepted too (`100kPa(a)`). A bare `100kPa` is refused
//! as ambiguous. Temperatures end in `K`, `degC`/`C` or `degF`. Mass flows
//! end in `kg/s`, `kg/h` or `t/h`. The parsing lives in [`crate::units`].

use polytrope::units::{Kelvin, PressureAbs, PressureGauge};

use crate::cli::CliError;
use crate::units;

/// A pressure as typed: absolute or gauge, in Pa.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Pressure {
    /// Absolute.
    Abs(PressureAbs<f64>),
    /// Gauge (above local atmosphere).
    Gauge(PressureGauge<f64>),
}

fn input(msg: String) -> CliError {
    CliError::Input(msg)
}

/// Parses a finite number, naming the option in the error.
pub fn number(option: &str, text: &str) -> Result<f64, CliError> {
    units::number(text).map_err(|e| input(format!("--{option}: {e}")))
}

/// Parses a pressure such as `100kPaa`, `1013mbara`, `14.7psia` or `4.5barg`
/// (every unit of [`units::PRESSURE_UNITS`], with `a` or `g`).
pub fn pressure(option: &str, text: &str) -> Result<Pressure, CliError> {
    let p = units::pressure(text).map_err(|e| input(format!("--{option}: {e}")))?;
    Ok(match p.reference {
        units::Reference::Absolute => Pressure::Abs(PressureAbs::from_pa(p.pa)),
        units::Reference::Gauge => Pressure::Gauge(PressureGauge::from_pa(p.pa)),
    })
}

/// Parses a temperature such as `300K`, `26.85degC`, `26.85C` or `80degF`, returned in K.
pub fn temperature(option: &str, text: &str) -> Result<Kelvin<f64>, CliError> {
    units::temperature(text)
        .map(Kelvin::new)
        .map_err(|e| input(format!("--{option}: {e}")))
}

/// Parses a mass flow such as `2.5kg/s`, `9000kg/h` or `32t/h`, returned in
/// kg/s. Standard volume flows need a gas and are refused here.
pub fn mass_flow(option: &str, text: &str) -> Result<f64, CliError> {
    match units::flow(text).map_err(|e| input(format!("--{option}: {e}")))? {
        units::FlowIn::Mass(m) => Ok(m),
        units::FlowIn::StandardVolume { reference, .. } => Err(input(format!(
            "--{option}: '{text}' is a standard volume flow ({} at {}); give a mass flow \
             (kg/s, kg/h, t/h) here",
            reference.name, reference.source
        ))),
    }
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
            "100kPa", "1bar", "100", "abcbara", "NaNbara", "infkPaa", "", "5torra",
        ] {
            assert!(pressure("p", bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn temperatures_and_flows() {
        assert_eq!(temperature("t", "300K").unwrap().kelvin(), 300.0);
        assert!((temperature("t", "26.85degC").unwrap().kelvin() - 300.0).abs() < 1e-9);
        for bad in ["300", "-5K", "-300degC", "300R", "xK"] {
            assert!(temperature("t", bad).is_err(), "{bad}");
        }
        assert_eq!(mass_flow("m", "3600kg/h").unwrap(), 1.0);
        assert_eq!(mass_flow("m", "2.5kg/s").unwrap(), 2.5);
        assert!(mass_flow("m", "2.5").is_err());
        assert!(mass_flow("m", "-1kg/s").is_err());
    }
}
