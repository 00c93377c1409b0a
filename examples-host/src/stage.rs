//! `stage`: a single-point desk calculator for one compressor stage, with
//! an optional staging comparison (equal-ratio interstage pressures, ideal
//! intercooled stages against one uncooled stage and the isothermal ideal).
//!
//! The numbers come from the kernel: `polytrope::stage::evaluate_compressor`
//! for the stage and `polytrope::staging` for the comparison; this module
//! only parses, converts units and reports.

use polytrope::compression::isentropic_discharge_temperature;
use polytrope::fields::StageInput;
use polytrope::gas::{GasModel, GasSpec, HeatCapacity, IdealGas, BUILTIN_GASES};
use polytrope::scan::{
    mass_flow_kg_s, pressure_pa, temperature_k, MAX_PRESSURE_PA, MAX_TEMPERATURE_K,
    MIN_PRESSURE_PA, MIN_TEMPERATURE_K,
};
use polytrope::stage::{evaluate_compressor, CompressorInputs, StageCondition};
use polytrope::staging::{equal_ratio_interstage_pressure, ideal_references};
use polytrope::units::{Kelvin, PressureAbs, STANDARD_ATMOSPHERE_PA};
use polytrope::{Measured, Quality, Real};

use crate::cli::{count, CliError, Parsed, Precision};
use crate::keys as k;
use crate::out::{self, disp, Detail, Json, Obj, Val};
use crate::quantity::{self, Pressure};
use crate::unit_system::{self, Dimension};

/// Custom or built-in gas.
#[derive(Clone, Copy, Debug)]
enum GasChoice {
    Builtin { spec: GasSpec, polynomial: bool },
    Custom { k: f64, molar_mass: f64 },
}

/// Everything the user gave, in SI.
#[derive(Clone, Debug)]
struct Inputs {
    gas: GasChoice,
    z: f64,
    p1: f64,
    p2: f64,
    t1: f64,
    t2: Option<f64>,
    flow: Option<f64>,
    atmosphere: Option<f64>,
    atmosphere_assumed: bool,
    stages: Option<u32>,
    notes: Vec<String>,
}

fn required<'a>(args: &'a Parsed, name: &str, example: &str) -> Result<&'a str, CliError> {
    args.get(name)
        .ok_or_else(|| CliError::Usage(format!("missing --{name} (e.g. --{name} {example})")))
}

fn gas_choice(args: &Parsed) -> Result<GasChoice, CliError> {
    let custom = args.has("k") || args.has("molar-mass");
    match (args.get("gas"), custom) {
        (Some(_), true) => Err(CliError::Usage(
            "give either --gas NAME or a custom gas (--k with --molar-mass), not both".into(),
        )),
        (Some(name), false) => match GasSpec::by_name(name) {
            Some(spec) => Ok(GasChoice::Builtin {
                spec,
                polynomial: args.has("cp-poly"),
            }),
            None => {
                let names: Vec<&str> = BUILTIN_GASES.iter().map(|g| g.name).collect();
                Err(CliError::Input(format!(
                    "unknown gas '{name}' (built-in gases: {}; or give --k and --molar-mass)",
                    names.join(", ")
                )))
            }
        },
        (None, true) => {
            if args.has("cp-poly") {
                return Err(CliError::Usage(
                    "--cp-poly applies to a built-in --gas only".into(),
                ));
            }
            let k = quantity::number("k", required(args, "k", "1.4")?)?;
            let m = args.get("molar-mass").ok_or_else(|| {
                CliError::Usage("a custom gas needs --molar-mass (kg/kmol) with --k".into())
            })?;
            let m = m.trim();
            let m = m
                .strip_suffix("kg/kmol")
                .or_else(|| m.strip_suffix("g/mol"))
                .unwrap_or(m);
            Ok(GasChoice::Custom {
                k,
                molar_mass: quantity::number("molar-mass", m)?,
            })
        }
        (None, false) => Err(CliError::Usage(
            "give --gas NAME (e.g. --gas air) or a custom gas with --k and --molar-mass".into(),
        )),
    }
}

fn check_pressure(option: &str, pa: f64) -> Result<f64, CliError> {
    let m = pressure_pa(Measured::good(PressureAbs::from_pa(pa)));
    if m.quality == Quality::Bad {
        return Err(CliError::Input(format!(
            "--{option}: {pa} Pa absolute is outside the accepted range [{MIN_PRESSURE_PA}, {MAX_PRESSURE_PA:e}] Pa"
        )));
    }
    Ok(pa)
}

fn check_temperature(option: &str, t: Kelvin<f64>) -> Result<f64, CliError> {
    if temperature_k(Measured::good(t)).quality == Quality::Bad {
        return Err(CliError::Input(format!(
            "--{option}: {} K is outside the accepted range [{MIN_TEMPERATURE_K}, {MAX_TEMPERATURE_K}] K",
            t.kelvin()
        )));
    }
    Ok(t.kelvin())
}

fn read_inputs(args: &Parsed) -> Result<Inputs, CliError> {
    let gas = gas_choice(args)?;
    let z = match args.get("z") {
        Some(t) => quantity::number("z", t)?,
        None => 1.0,
    };
    let p1 = quantity::pressure("p1", required(args, "p1", "100kPaa")?)?;
    let p2 = quantity::pressure("p2", required(args, "p2", "900kPaa")?)?;
    let atm = match args.get("atm") {
        Some(t) => match quantity::pressure("atm", t)? {
            Pressure::Abs(p) => Some(check_pressure("atm", p.pa())?),
            Pressure::Gauge(_) => {
                return Err(CliError::Input(
                    "--atm must be an absolute pressure (e.g. 98.7kPaa)".into(),
                ))
            }
        },
        None => None,
    };
    let mut notes = Vec::new();
    let any_gauge = matches!(p1, Pressure::Gauge(_)) || matches!(p2, Pressure::Gauge(_));
    let atmosphere_assumed = any_gauge && atm.is_none();
    if atmosphere_assumed {
        notes.push(format!(
            "gauge pressure converted with the standard atmosphere, {STANDARD_ATMOSPHERE_PA} Pa; \
             give --atm for the local value"
        ));
    }
    let atmosphere = any_gauge.then(|| atm.unwrap_or(STANDARD_ATMOSPHERE_PA));
    let to_abs = |option: &str, p: Pressure| -> Result<f64, CliError> {
        let pa = match p {
            Pressure::Abs(a) => a.pa(),
            Pressure::Gauge(g) => g
                .to_absolute(PressureAbs::from_pa(
                    atmosphere.unwrap_or(STANDARD_ATMOSPHERE_PA),
                ))
                .pa(),
        };
        check_pressure(option, pa).map_err(|e| match (p, e) {
            (Pressure::Gauge(_), CliError::Input(m)) => CliError::Input(format!(
                "{m} (gauge value plus atmosphere {} Pa)",
                atmosphere.unwrap_or(STANDARD_ATMOSPHERE_PA)
            )),
            (_, e) => e,
        })
    };
    let p1 = to_abs("p1", p1)?;
    let p2 = to_abs("p2", p2)?;
    let t1 = check_temperature(
        "t1",
        quantity::temperature("t1", required(args, "t1", "300K")?)?,
    )?;
    let t2 = match args.get("t2") {
        Some(t) => Some(check_temperature("t2", quantity::temperature("t2", t)?)?),
        None => {
            notes.push(
                "no --t2: actual work, efficiencies, polytropic exponent and power need the \
                 measured discharge temperature"
                    .into(),
            );
            None
        }
    };
    let flow = match args.get("flow") {
        Some(t) => {
            let f = quantity::mass_flow("flow", t)?;
            if mass_flow_kg_s(Measured::good(f)).quality == Quality::Bad {
                return Err(CliError::Input(format!(
                    "--flow: {f} kg/s is outside the accepted range"
                )));
            }
            Some(f)
        }
        None => {
            notes.push("no --flow: power values need the mass flow".into());
            None
        }
    };
    let stages = match args.get("stages") {
        Some(t) => Some(count("stages", t, 1, 20)?),
        None => None,
    };
    if let GasChoice::Builtin {
        spec,
        polynomial: true,
    } = gas
    {
        let (lo, hi) = (spec.cp.t_min, spec.cp.t_max);
        if [Some(t1), t2].iter().flatten().any(|&t| t < lo || t > hi) {
            notes.push(format!(
                "a temperature lies outside the cp polynomial's range {lo}-{hi} K; cp is evaluated \
                 at the nearest end of the range"
            ));
        }
    }
    Ok(Inputs {
        gas,
        z,
        p1,
        p2,
        t1,
        t2,
        flow,
        atmosphere,
        atmosphere_assumed,
        stages,
        notes,
    })
}

/// Runs the subcommand.
pub fn run(args: &Parsed) -> Result<String, CliError> {
    let inputs = read_inputs(args)?;
    let precision = Precision::from_option(args.get("precision"), Precision::F64)?;
    match precision {
        Precision::F32 => calculate::<f32>(&inputs, precision, args.has("json")),
        Precision::F64 => calculate::<f64>(&inputs, precision, args.has("json")),
    }
}

/// The staging comparison, widened to f64.
struct Staging {
    stages: u32,
    stage_ratio: Val,
    /// Per stage: equal-ratio discharge pressure (Pa), isentropic T2 (K).
    per_stage: Vec<(Val, Val)>,
    isothermal: Val,
    single: Val,
    staged: Val,
    saving: Val,
}

fn staging<T: Real>(gas: &IdealGas<T>, inp: &Inputs, n: u32) -> Option<Staging> {
    let (p1, p2, t1) = (T::of(inp.p1), T::of(inp.p2), T::of(inp.t1));
    let ratio = p2 / p1;
    if ratio.partial_cmp(&T::ONE) != Some(core::cmp::Ordering::Greater) {
        return None;
    }
    let props = gas.path(p1, t1, p2, t1, None);
    let (iso, single, staged) =
        ideal_references(props.z, props.gas_constant, t1, ratio, props.k, n);
    let g = |x: T| Val::of(Measured::derived(x, Quality::Good));
    let first = equal_ratio_interstage_pressure(p1, ratio, n, 0);
    let stage_ratio = first / p1;
    let t2s = isentropic_discharge_temperature(t1, stage_ratio, props.k);
    let per_stage = (0..n)
        .map(|i| (g(equal_ratio_interstage_pressure(p1, ratio, n, i)), g(t2s)))
        .collect();
    Some(Staging {
        stages: n,
        stage_ratio: g(stage_ratio),
        per_stage,
        isothermal: g(iso),
        single: g(single),
        staged: g(staged),
        saving: g(single - staged),
    })
}

fn condition_note(c: StageCondition) -> Option<&'static str> {
    match c {
        StageCondition::Normal => None,
        StageCondition::InputBad => None,
        StageCondition::NoCompression => {
            Some("discharge pressure is not above suction pressure: no compression to evaluate")
        }
        StageCondition::NoTemperatureRise => Some(
            "discharge temperature is not above suction temperature: work and efficiencies \
             cannot come from the temperature rise",
        ),
        StageCondition::OutsideGasModel => Some(
            "the gas model has no valid gas state here (liquid-like or dense, or not finite): \
             heads and efficiencies are bad",
        ),
        StageCondition::EfficiencyAboveOne => Some(
            "discharge temperature is below the isentropic one (efficiency above 1): the process \
             is cooled or a reading is off; efficiencies are marked uncertain or bad",
        ),
        StageCondition::RatingPoint => Some(
            "no discharge temperature given: a rating point; the work and efficiencies do not apply",
        ),
        StageCondition::RatioOutOfRange => {
            Some("the pressure ratio is above the plausible maximum for one stage: check the units")
        }
        StageCondition::ImplausibleTemperatureRise => Some(
            "the temperature rise is too large for the pressure ratio (n not above 1): a reading \
             is off",
        ),
        StageCondition::Stationary => {
            Some("zero flow: the machine is stationary; work and efficiencies are marked uncertain")
        }
        StageCondition::BelowResolution => Some(
            "the temperature rise or pressure ratio is small against the instrument accuracy: \
             efficiencies are marked uncertain",
        ),
    }
}

fn calculate<T: Real>(inp: &Inputs, precision: Precision, json: bool) -> Result<String, CliError> {
    let (gas, gas_name, model, molar_mass) = match inp.gas {
        GasChoice::Builtin { spec, polynomial } => (
            IdealGas::<T>::from_spec(&spec, polynomial, T::of(inp.z))?,
            spec.name,
            if polynomial {
                "cp-polynomial"
            } else {
                "constant-k"
            },
            spec.molar_mass,
        ),
        GasChoice::Custom { k, molar_mass } => (
            IdealGas::<T>::new(
                T::of(molar_mass),
                HeatCapacity::ConstantK(T::of(k)),
                T::of(inp.z),
            )?,
            "custom",
            "constant-k",
            molar_mass,
        ),
    };
    let g = |x: f64| Measured::good(T::of(x));
    let stage_inputs = CompressorInputs {
        suction_pressure: pressure_pa(Measured::good(PressureAbs::from_pa(T::of(inp.p1)))),
        suction_temperature: temperature_k(Measured::good(Kelvin::new(T::of(inp.t1)))),
        discharge_pressure: pressure_pa(Measured::good(PressureAbs::from_pa(T::of(inp.p2)))),
        discharge_temperature: inp.t2.map_or(Measured::not_applicable(), |t| {
            temperature_k(Measured::good(Kelvin::new(T::of(t))))
        }),
        mass_flow: inp.flow.map_or(Measured::bad(), |f| mass_flow_kg_s(g(f))),
        compressibility: None,
    };
    let r = evaluate_compressor(&gas, &stage_inputs);
    let mut notes = inp.notes.clone();
    if let Some(n) = condition_note(r.condition) {
        notes.push(n.to_string());
    }
    let staging = match inp.stages {
        Some(n) => {
            let s = staging(&gas, inp, n);
            if s.is_none() {
                notes.push("no staging comparison: the duty has no pressure rise".into());
            }
            s
        }
        None => None,
    };
    let gas_constant = Val::of(Measured::good(gas.gas_constant())).value;
    let results = out::fields_of(&r);

    if json {
        let opt = |x: Option<f64>| x.map_or(Json::Null, Json::Num);
        let mut i = Obj::new();
        i.str(&k::GAS, gas_name)
            .str(&k::HEAT_CAPACITY_MODEL, model)
            .num(&k::MOLAR_MASS, molar_mass)
            .num(&k::GAS_CONSTANT, gas_constant)
            .num(&k::input(StageInput::Compressibility), inp.z)
            .num(&k::input(StageInput::SuctionPressure), inp.p1)
            .num(&k::input(StageInput::DischargePressure), inp.p2)
            .num(&k::input(StageInput::SuctionTemperature), inp.t1)
            .put(&k::input(StageInput::DischargeTemperature), opt(inp.t2))
            .put(&k::input(StageInput::MassFlow), opt(inp.flow))
            .put(&k::ATMOSPHERE, opt(inp.atmosphere))
            .put(&k::ATMOSPHERE_ASSUMED, Json::Bool(inp.atmosphere_assumed));
        let mut res = Obj::new();
        out::put_fields(&mut res, &results);
        let mut o = Obj::new();
        o.str(&k::COMMAND_NAME, "stage")
            .str(&k::CAUTION, out::CAUTION)
            .str(&k::PRECISION, precision.word())
            .put(&k::INPUTS, i.done())
            .put(&k::RESULTS, res.done());
        if let Some(s) = &staging {
            let per: Vec<Json> = s
                .per_stage
                .iter()
                .enumerate()
                .map(|(n, (p, t))| {
                    let mut e = Obj::new();
                    e.put(&k::STAGE, Json::Int(n as i64 + 1))
                        .val(&k::OPTIMUM_P2, *p)
                        .val(&k::IDEAL_STAGED_T2, *t);
                    e.done()
                })
                .collect();
            let mut st = Obj::new();
            st.put(&k::STAGE_COUNT, Json::Int(i64::from(s.stages)))
                .val(&k::STAGE_RATIO, s.stage_ratio)
                .put(&k::INTERSTAGE, Json::Arr(per))
                .val(&k::ISOTHERMAL_WORK, s.isothermal)
                .val(&k::SINGLE_STAGE, s.single)
                .val(&k::IDEAL_STAGED, s.staged)
                .val(&k::IDEAL_SAVING, s.saving);
            o.put(&k::STAGING, st.done());
        }
        o.put(
            &k::NOTES,
            Json::Arr(notes.iter().map(|n| Json::Str(n.clone())).collect()),
        );
        return Ok(o.done().to_text());
    }

    let system = unit_system::chosen().map_or("SI", |u| u.name());
    let mut s = format!(
        "{} stage — single-point stage calculation ({} build)\n{}\n{}\n\nInputs ({system})\n",
        crate::BIN,
        precision.word(),
        out::CAUTION,
        out::LEGEND
    );
    let mut g = out::Grid::new(&["input", "value", "unit"]);
    let mut add = |a: &str, (b, c): (String, &str)| g.row(vec![a.into(), b, c.into()]);
    let p = |v: f64| input_cell(v, Dimension::PressureAbs, 1, "Pa abs");
    let t = |v: Option<f64>| input_or_blank(v, Dimension::Temperature, 2, "K");
    add("Gas", (format!("{gas_name} ({model})"), "-"));
    add("Molar mass", (format!("{molar_mass:.3}"), "kg/kmol"));
    add("Gas constant R", (format!("{gas_constant:.2}"), "J/(kg K)"));
    add("Compressibility Z", (format!("{:.4}", inp.z), "-"));
    add("Suction pressure p1", p(inp.p1));
    add("Discharge pressure p2", p(inp.p2));
    if let Some(a) = inp.atmosphere {
        add("Atmosphere (for gauge)", p(a));
    }
    add("Suction temperature T1", t(Some(inp.t1)));
    add("Discharge temperature T2", t(inp.t2));
    add(
        "Mass flow",
        input_or_blank(inp.flow, Dimension::MassFlow, 4, "kg/s"),
    );
    g.render(&mut s);

    s.push_str("\nStage results\n");
    out::field_list_table(&results, Detail::Fine).render(&mut s);

    if let Some(st) = &staging {
        s.push_str(&format!(
            "\nStaging comparison: {} equal-ratio stages, perfect intercooling to T1\n",
            st.stages
        ));
        let p_disp = out::disp_or(Dimension::PressureAbs, disp::BAR_A);
        let t_disp = out::disp_or(Dimension::Temperature, disp::KELVIN2);
        let w_disp = out::disp_or(Dimension::SpecificWork, disp::KJ_PER_KG);
        let p_head = format!("discharge {}", p_disp.unit);
        let t_head = format!("T2s {}", t_disp.unit);
        let mut g = out::Grid::new(&["stage", &p_head, "stage ratio", &t_head]);
        for (n, (p, t)) in st.per_stage.iter().enumerate() {
            g.row(vec![
                format!("{}", n + 1),
                out::cell(*p, p_disp),
                out::cell(st.stage_ratio, disp::RATIO4),
                out::cell(*t, t_disp),
            ]);
        }
        g.render(&mut s);
        let mut g = out::Grid::new(&["ideal work for the whole duty", "value", "unit"]);
        for (label, v) in [
            ("Isothermal (the limit)", st.isothermal),
            ("Staged isentropic, ideal", st.staged),
            ("One uncooled isentropic stage", st.single),
            ("Saving by staging", st.saving),
        ] {
            g.row(vec![label.into(), out::cell(v, w_disp), w_disp.unit.into()]);
        }
        g.render(&mut s);
    }
    if !notes.is_empty() {
        s.push_str("\nNotes\n");
        for n in &notes {
            s.push_str(&format!("- {n}\n"));
        }
    }
    Ok(s)
}

/// An input value and its unit: in the chosen unit system (`--units`), or
/// in SI with `si_decimals` as without a choice.
fn input_cell(
    v: f64,
    d: Dimension,
    si_decimals: usize,
    si_unit: &'static str,
) -> (String, &'static str) {
    match unit_system::chosen() {
        Some(u) => {
            let sh = u.shown(d);
            (format!("{:.*}", sh.decimals, sh.of(v)), sh.unit)
        }
        None => (format!("{v:.si_decimals$}"), si_unit),
    }
}

/// [`input_cell`] for an optional input (`--` when not given).
fn input_or_blank(
    v: Option<f64>,
    d: Dimension,
    si_decimals: usize,
    si_unit: &'static str,
) -> (String, &'static str) {
    let (text, unit) = input_cell(v.unwrap_or(0.0), d, si_decimals, si_unit);
    (if v.is_some() { text } else { "--".into() }, unit)
}
