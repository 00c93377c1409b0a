//! `rate`: predicts a compressor stage's discharge temperature, heads, work
//! and power from an assumed polytropic or isentropic efficiency
//! (`polytrope::rating::rate_compressor`).

use clap::{ArgGroup, Args};
use polytrope::gas::{GasSpec, BUILTIN_GASES, MOLAR_GAS_CONSTANT};
use polytrope::rating::{rate_compressor, AssumedEfficiency, RatingInputs, RatingResult};
use polytrope::{Measured, Real};

use crate::check::presentation;
use crate::cli::{CliError, Precision};
use crate::out::{self, Grid};
use crate::units::{self, did_you_mean, Presentation};

/// Options of `rate`.
#[derive(Debug, Args)]
#[command(group(ArgGroup::new("efficiency").required(true).args(["eta_p", "eta_s"])))]
#[command(group(ArgGroup::new("gasdef").required(true).args(["gas", "k"])))]
pub struct RateArgs {
    /// Built-in gas (constant k): air, nitrogen, methane, ethane, carbon-dioxide, hydrogen, lean-natural-gas.
    #[arg(long, value_name = "NAME")]
    pub gas: Option<String>,
    /// Custom gas: heat-capacity ratio (with --molar-mass).
    #[arg(long, requires = "molar_mass")]
    pub k: Option<f64>,
    /// Custom gas: molar mass, kg/kmol.
    #[arg(long, value_name = "M", requires = "k")]
    pub molar_mass: Option<f64>,
    /// Mean compressibility factor.
    #[arg(long, default_value_t = 1.0)]
    pub z: f64,
    /// Suction pressure with unit and a/g (1.0bara, 1013mbara, 14.7psia, 2barg).
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub p1: String,
    /// Discharge pressure, same syntax.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    pub p2: String,
    /// Suction temperature (300K, 26.85degC, 80degF).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub t1: String,
    /// Local atmosphere for gauge pressures, absolute (default 1013.25mbara, noted).
    #[arg(long, value_name = "P")]
    pub atm: Option<String>,
    /// Mass flow for the power (2.5kg/s, 32t/h, 5000Nm3/h).
    #[arg(long, value_name = "M")]
    pub flow: Option<String>,
    /// Assumed polytropic efficiency, fraction in (0, 1] (0.78) or percent (78%).
    #[arg(long, value_name = "ETA")]
    pub eta_p: Option<String>,
    /// Assumed isentropic efficiency, fraction in (0, 1] (0.75) or percent (75%).
    #[arg(long, value_name = "ETA")]
    pub eta_s: Option<String>,
    /// Kernel build.
    #[arg(long, value_enum, default_value_t = Precision::F64)]
    pub precision: Precision,
    /// Output units, comma-separated (e.g. `bar,degC,kW,kJ/kg`); SI by default.
    #[arg(long, value_name = "LIST")]
    pub units: Option<String>,
    /// Print JSON (SI keys) instead of a table.
    #[arg(long)]
    pub json: bool,
}

fn efficiency(option: &str, text: &str) -> Result<f64, CliError> {
    let t = text.trim();
    let (num, scale) = match t.strip_suffix('%') {
        Some(n) => (n, 0.01),
        None => (t, 1.0),
    };
    let x = units::number(num).map_err(|e| CliError::Input(format!("--{option}: {e}")))? * scale;
    if !(x > 0.0 && x <= 1.0) {
        return Err(CliError::Input(format!(
            "--{option}: '{text}' is not an efficiency in (0, 1] (write 0.78 or 78%)"
        )));
    }
    Ok(x)
}

struct Inputs {
    p1: f64,
    p2: f64,
    t1: f64,
    k: f64,
    r: f64,
    flow: Option<f64>,
    eff: AssumedEfficiency<f64>,
    notes: Vec<String>,
}

fn inputs(a: &RateArgs) -> Result<Inputs, CliError> {
    let inp = |o: &'static str| move |e: String| CliError::Input(format!("--{o}: {e}"));
    let (k, m) = match (&a.gas, a.k, a.molar_mass) {
        (Some(name), None, None) => {
            let Some(spec) = GasSpec::by_name(name) else {
                let names: Vec<&str> = BUILTIN_GASES.iter().map(|g| g.name).collect();
                let hint = did_you_mean(name, &names)
                    .map(|n| format!("; did you mean '{n}'?"))
                    .unwrap_or_default();
                return Err(CliError::Input(format!(
                    "--gas: unknown gas '{name}'{hint}; built-in: {}",
                    names.join(", ")
                )));
            };
            (spec.k, spec.molar_mass)
        }
        (None, Some(k), Some(m)) => (k, m),
        _ => {
            return Err(CliError::Usage(
                "give --gas NAME or --k with --molar-mass, not both".into(),
            ))
        }
    };
    let mut notes = Vec::new();
    let atm = match &a.atm {
        Some(t) => units::atmosphere(t).map_err(inp("atm"))?,
        None => polytrope::units::STANDARD_ATMOSPHERE_PA,
    };
    let p = |o: &'static str, t: &str, notes: &mut Vec<String>| -> Result<f64, CliError> {
        let v = units::pressure(t).map_err(inp(o))?;
        if v.reference == units::Reference::Gauge && a.atm.is_none() {
            notes.push(format!(
                "--{o} is gauge: converted with the standard atmosphere 101325 Pa (give --atm)"
            ));
        }
        Ok(v.absolute(atm))
    };
    let p1 = p("p1", &a.p1, &mut notes)?;
    let p2 = p("p2", &a.p2, &mut notes)?;
    let t1 = units::temperature(&a.t1).map_err(inp("t1"))?;
    if p2 <= p1 {
        return Err(CliError::Input(format!(
            "--p2 ({p2} Pa a) must be above --p1 ({p1} Pa a): a rating needs a compression"
        )));
    }
    let flow = match &a.flow {
        Some(f) => Some(units::flow(f).map_err(inp("flow"))?.kg_per_s(m)),
        None => None,
    };
    let eff = match (&a.eta_p, &a.eta_s) {
        (Some(e), None) => AssumedEfficiency::Polytropic(efficiency("eta-p", e)?),
        (None, Some(e)) => AssumedEfficiency::Isentropic(efficiency("eta-s", e)?),
        _ => return Err(CliError::Usage("give --eta-p or --eta-s".into())),
    };
    Ok(Inputs {
        p1,
        p2,
        t1,
        k,
        r: MOLAR_GAS_CONSTANT * 1e3 / m,
        flow,
        eff,
        notes,
    })
}

fn compute<T: Real>(i: &Inputs, z: f64) -> RatingResult<f64> {
    let eff = match i.eff {
        AssumedEfficiency::Polytropic(e) => AssumedEfficiency::Polytropic(T::of(e)),
        AssumedEfficiency::Isentropic(e) => AssumedEfficiency::Isentropic(T::of(e)),
    };
    let r = rate_compressor(&RatingInputs {
        suction_pressure: T::of(i.p1),
        suction_temperature: T::of(i.t1),
        discharge_pressure: T::of(i.p2),
        k: T::of(i.k),
        gas_constant: T::of(i.r),
        compressibility: T::of(z),
        efficiency: eff,
        mass_flow: i.flow.map(T::of),
    });
    let w = |m: Measured<T>| Measured::new(m.value.to_f64(), m.quality);
    RatingResult {
        pressure_ratio: w(r.pressure_ratio),
        discharge_temperature: w(r.discharge_temperature),
        isentropic_discharge_temperature: w(r.isentropic_discharge_temperature),
        isentropic_head: w(r.isentropic_head),
        polytropic_head: w(r.polytropic_head),
        isothermal_head: w(r.isothermal_head),
        actual_work: w(r.actual_work),
        polytropic_efficiency: w(r.polytropic_efficiency),
        isentropic_efficiency: w(r.isentropic_efficiency),
        polytropic_exponent: w(r.polytropic_exponent),
        gas_power: w(r.gas_power),
    }
}

type Line = (
    &'static str,
    &'static str,
    Measured<f64>,
    fn(&Presentation, f64) -> String,
);

fn lines(r: &RatingResult<f64>) -> Vec<Line> {
    fn temp(p: &Presentation, v: f64) -> String {
        p.temperature(v)
    }
    fn work(p: &Presentation, v: f64) -> String {
        p.work(v)
    }
    fn plain(_: &Presentation, v: f64) -> String {
        units::sig(v)
    }
    fn pct(_: &Presentation, v: f64) -> String {
        format!("{:.2} %", 100.0 * v)
    }
    fn power(p: &Presentation, v: f64) -> String {
        p.power(v)
    }
    vec![
        ("Pressure ratio", "pressure_ratio", r.pressure_ratio, plain),
        (
            "Discharge temperature (predicted)",
            "discharge_temperature_K",
            r.discharge_temperature,
            temp,
        ),
        (
            "Isentropic discharge temperature",
            "isentropic_discharge_temperature_K",
            r.isentropic_discharge_temperature,
            temp,
        ),
        (
            "Isentropic head",
            "isentropic_head_J_per_kg",
            r.isentropic_head,
            work,
        ),
        (
            "Polytropic head",
            "polytropic_head_J_per_kg",
            r.polytropic_head,
            work,
        ),
        (
            "Isothermal head",
            "isothermal_head_J_per_kg",
            r.isothermal_head,
            work,
        ),
        ("Actual work", "actual_work_J_per_kg", r.actual_work, work),
        (
            "Polytropic efficiency",
            "polytropic_efficiency",
            r.polytropic_efficiency,
            pct,
        ),
        (
            "Isentropic efficiency",
            "isentropic_efficiency",
            r.isentropic_efficiency,
            pct,
        ),
        (
            "Polytropic exponent n",
            "polytropic_exponent",
            r.polytropic_exponent,
            plain,
        ),
        ("Gas power", "gas_power_W", r.gas_power, power),
    ]
}

/// Runs `rate`.
pub fn run(a: &RateArgs) -> Result<String, CliError> {
    let show = presentation(a.units.as_deref())?;
    let mut i = inputs(a)?;
    if !(a.z > 0.0 && a.z <= 2.0) {
        return Err(CliError::Input(format!("--z: {} is not in (0, 2]", a.z)));
    }
    let r = match a.precision {
        Precision::F32 => compute::<f32>(&i, a.z),
        Precision::F64 => compute::<f64>(&i, a.z),
    };
    if i.flow.is_none() {
        i.notes
            .push("no --flow: the gas power needs the mass flow".into());
    }
    let assumed = match i.eff {
        AssumedEfficiency::Polytropic(e) => {
            format!("polytropic efficiency {:.2} % assumed", 100.0 * e)
        }
        AssumedEfficiency::Isentropic(e) => {
            format!("isentropic efficiency {:.2} % assumed", 100.0 * e)
        }
    };
    if a.json {
        let mut o = serde_json::Map::new();
        o.insert("command".into(), "rate".into());
        o.insert("caution".into(), out::CAUTION.into());
        o.insert("precision".into(), a.precision.word().into());
        o.insert("assumed".into(), assumed.into());
        o.insert("notes".into(), i.notes.clone().into());
        for (_, key, m, _) in lines(&r) {
            o.insert(
                key.into(),
                serde_json::json!({
                    "value": m.quality.is_usable().then_some(m.value),
                    "quality": out::quality_word(m.quality),
                }),
            );
        }
        return Ok(format!(
            "{}\n",
            serde_json::to_string_pretty(&serde_json::Value::Object(o)).unwrap_or_default()
        ));
    }
    let mut s = format!(
        "{} rate: {}; k = {}, R = {} J/(kg K), Z = {}; kernel {}\n{}\n\n",
        crate::BIN,
        assumed,
        i.k,
        units::sig(i.r),
        a.z,
        a.precision.word(),
        out::CAUTION
    );
    s.push_str(&format!(
        "Suction {} at {}, discharge {}{}\n",
        show.pressure_abs(i.p1),
        show.temperature(i.t1),
        show.pressure_abs(i.p2),
        i.flow
            .map(|f| format!(", flow {}", show.flow(f)))
            .unwrap_or_default()
    ));
    let mut g = Grid::new(&["quantity", "predicted"]);
    for (label, _, m, f) in lines(&r) {
        g.row(vec![
            label.into(),
            if m.quality.is_usable() {
                f(&show, m.value)
            } else {
                "--".into()
            },
        ]);
    }
    g.render(&mut s);
    for n in &i.notes {
        s.push_str(&format!("Note: {n}\n"));
    }
    Ok(s)
}
