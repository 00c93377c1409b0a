//! `orifice`: ISO 5167-2 orifice-plate mass flow as a desk calculation
//! through the kernel (`polytrope::flow::Orifice`: Reader–Harris/Gallagher
//! discharge coefficient, expansibility, Reynolds iteration, the standard's
//! validity limits).

use clap::Args;
use polytrope::flow::orifice::{OrificeConfig, OrificeInputs};
use polytrope::flow::Orifice;
use polytrope::gas::{GasSpec, BUILTIN_GASES, MOLAR_GAS_CONSTANT};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::Measured;

use crate::check::presentation;
use crate::cli::CliError;
use crate::config;
use crate::out::{self, Grid};
use crate::units::{self, did_you_mean, sig};

/// Options of `orifice`.
#[derive(Debug, Args)]
pub struct OrificeArgs {
    /// Pipe internal diameter D, mm.
    #[arg(long, value_name = "MM")]
    pub pipe_mm: f64,
    /// Orifice bore d, mm.
    #[arg(long, value_name = "MM")]
    pub bore_mm: f64,
    /// Tappings: corner, flange or d-and-d/2.
    #[arg(long, default_value = "flange")]
    pub taps: String,
    /// Differential pressure (25mbar, 2.5kPa, 250Pa).
    #[arg(long, value_name = "DP")]
    pub dp: String,
    /// Upstream pressure with a/g (5bara, 4barg).
    #[arg(long, value_name = "P")]
    pub p1: String,
    /// Upstream temperature (30degC, 303.15K).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub t1: String,
    /// Built-in gas (air, nitrogen, methane, ...).
    #[arg(long, value_name = "NAME", default_value = "air")]
    pub gas: String,
    /// Isentropic exponent (default: the gas's k).
    #[arg(long)]
    pub kappa: Option<f64>,
    /// Compressibility at the upstream tapping.
    #[arg(long, default_value_t = 1.0)]
    pub z: f64,
    /// Dynamic viscosity, Pa s (air at 20 degC: 1.81e-5, common practice).
    #[arg(long, value_name = "PA_S", default_value_t = 1.81e-5)]
    pub viscosity: f64,
    /// Local atmosphere for a gauge --p1 (default 1013.25mbara).
    #[arg(long, value_name = "P")]
    pub atm: Option<String>,
    /// Output units (e.g. `kg/h` or `t/h`); SI by default.
    #[arg(long, value_name = "LIST")]
    pub units: Option<String>,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

/// Runs `orifice`.
pub fn run(a: &OrificeArgs) -> Result<String, CliError> {
    let show = presentation(a.units.as_deref())?;
    let inp = |o: &'static str| move |e: String| CliError::Input(format!("--{o}: {e}"));
    let Some(spec) = GasSpec::by_name(&a.gas) else {
        let names: Vec<&str> = BUILTIN_GASES.iter().map(|g| g.name).collect();
        let hint = did_you_mean(&a.gas, &names)
            .map(|n| format!("; did you mean '{n}'?"))
            .unwrap_or_default();
        return Err(CliError::Input(format!(
            "--gas: unknown gas '{}'{hint}; built-in: {}",
            a.gas,
            names.join(", ")
        )));
    };
    let taps = config::tap_type(&a.taps).map_err(inp("taps"))?;
    let atm = match &a.atm {
        Some(t) => units::atmosphere(t).map_err(inp("atm"))?,
        None => polytrope::units::STANDARD_ATMOSPHERE_PA,
    };
    let p1 = units::pressure(&a.p1).map_err(inp("p1"))?.absolute(atm);
    let t1 = units::temperature(&a.t1).map_err(inp("t1"))?;
    let dp = config::differential_pressure(&a.dp).map_err(inp("dp"))?;
    let orifice = Orifice::new(OrificeConfig {
        pipe_diameter: a.pipe_mm / 1e3,
        bore_diameter: a.bore_mm / 1e3,
        taps,
        isentropic_exponent: a.kappa.unwrap_or(spec.k),
        viscosity: a.viscosity,
        gas_constant: MOLAR_GAS_CONSTANT * 1e3 / spec.molar_mass,
    })
    .map_err(|e| {
        let (opt, why) = match config::kernel_path(&e).0 {
            "orifice.pipe_diameter" if matches!(e.problem, polytrope::Problem::NotAbove { .. }) => {
                ("pipe-mm", "a pipe diameter above --bore-mm")
            }
            "orifice.pipe_diameter" => ("pipe-mm", "a positive pipe diameter"),
            "orifice.bore_diameter" => ("bore-mm", "a bore above 0 and below the pipe diameter"),
            "orifice.viscosity" => ("viscosity", "a positive viscosity in Pa s"),
            "orifice.isentropic_exponent" => ("kappa", "an isentropic exponent above 1"),
            _ => ("gas", "a valid gas"),
        };
        CliError::Input(format!("--{opt}: needs {why}"))
    })?;
    let f = orifice.evaluate(&OrificeInputs {
        differential_pressure: Measured::good(dp),
        upstream_pressure: Measured::good(PressureAbs::from_pa(p1)),
        upstream_temperature: Measured::good(Kelvin::new(t1)),
        compressibility: Measured::good(a.z),
    });
    let rows: [(&str, &str, Measured<f64>, String); 5] = [
        (
            "Mass flow",
            "mass_flow_kg_per_s",
            f.mass_flow,
            show.flow(f.mass_flow.value),
        ),
        (
            "Discharge coefficient C",
            "discharge_coefficient",
            f.discharge_coefficient,
            format!("{:.5}", f.discharge_coefficient.value),
        ),
        (
            "Expansibility factor",
            "expansibility",
            f.expansibility,
            format!("{:.5}", f.expansibility.value),
        ),
        (
            "Pipe Reynolds number",
            "reynolds_number",
            f.reynolds,
            sig(f.reynolds.value),
        ),
        (
            "Upstream density",
            "density_kg_per_m3",
            f.density,
            format!("{} kg/m3", sig(f.density.value)),
        ),
    ];
    if a.json {
        let mut o = serde_json::Map::new();
        o.insert("command".into(), "orifice".into());
        o.insert("caution".into(), out::CAUTION.into());
        o.insert("beta".into(), orifice.beta().into());
        o.insert("within_iso5167_limits".into(), f.within_limits.into());
        for (_, key, m, _) in &rows {
            o.insert(
                (*key).into(),
                serde_json::json!({"value": m.quality.is_usable().then_some(m.value), "quality": out::quality_word(m.quality)}),
            );
        }
        return Ok(format!(
            "{}\n",
            serde_json::to_string_pretty(&serde_json::Value::Object(o)).unwrap_or_default()
        ));
    }
    let mut s = format!(
        "{} orifice: ISO 5167-2, {} tappings, D = {} mm, d = {} mm, beta = {:.4}; gas {}\n{}\n\
         Upstream {} at {}, differential pressure {}\n",
        crate::BIN,
        a.taps,
        sig(a.pipe_mm),
        sig(a.bore_mm),
        orifice.beta(),
        spec.name,
        out::CAUTION,
        show.pressure_abs(p1),
        show.temperature(t1),
        show.pressure_diff(dp)
    );
    let mut g = Grid::new(&["quantity", "value", "quality"]);
    for (label, _, m, text) in rows {
        g.row(vec![
            label.into(),
            if m.quality.is_usable() {
                text
            } else {
                "--".into()
            },
            out::quality_word(m.quality).into(),
        ]);
    }
    g.render(&mut s);
    s.push_str(if f.within_limits {
        "Within the ISO 5167-2 validity limits.\n"
    } else {
        "Outside the ISO 5167-2 validity limits (beta, bore, pipe size, Reynolds number or pressure ratio): the flow is uncertain.\n"
    });
    Ok(s)
}
