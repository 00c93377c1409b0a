//! `demo`: runs the invented demonstration train of `polytrope::demo`
//! (four intercooled CO2 compressor stages and a dense-phase pump) through
//! the kernel for a number of scans and reports the last snapshot: per-stage
//! and per-cooler tables, the pump against gas compression, interstage
//! pressures against the equal-ratio optimum, and the train totals.

use polytrope::cooler::CoolerResult;
use polytrope::scan::StageScan;
use polytrope::stage::{CompressorResult, PumpResult};
use polytrope::staging::TrainTotals;
use polytrope::train::{Snapshot, StageResult};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{Measured, Real};

use crate::cli::{count, CliError, Command, Opt, Parsed, Precision};
use crate::keys as k;
use crate::out::{self, disp, kebab, Json, Obj, Row, Val};

/// The `demo` subcommand.
pub const COMMAND: Command = Command {
    name: "demo",
    summary:
        "run the invented demo train (4 intercooled CO2 compressor stages + a dense-phase pump)",
    options: OPTIONS,
    run,
};

const OPTIONS: &[Opt] = &[
    Opt {
        name: "scans",
        value: Some("N"),
        help: "scans to run before reporting the last one (default 20, 1..=1000000)",
    },
    Opt {
        name: "precision",
        value: Some("f32|f64"),
        help: "kernel build: f32 device build (default) or f64 reference build",
    },
    Opt {
        name: "ledger-png",
        value: Some("FILE"),
        help: "also draw the loss ledger of the last scan as a waterfall PNG",
    },
    Opt {
        name: "json",
        value: None,
        help: "print JSON (SI units in the keys, quality with every value) instead of tables",
    },
];

const DEFAULT_SCANS: u32 = 20;

const SCENARIO: &str = "Invented scenario: a made-up carbon-dioxide train of four \
intercooled compressor stages and a dense-phase pump, with synthesised measurements. \
It is not data from any real machine.";

fn run(args: &Parsed) -> Result<String, CliError> {
    let scans = match args.get("scans") {
        Some(t) => count("scans", t, 1, 1_000_000)?,
        None => DEFAULT_SCANS,
    };
    let precision = Precision::from_option(args.get("precision"), Precision::F32)?;
    let json = args.has("json");
    match precision {
        Precision::F32 => report::<f32>(args, scans, precision, json),
        Precision::F64 => report::<f64>(args, scans, precision, json),
    }
}

fn pa<T: Real>(m: Measured<PressureAbs<T>>) -> Val {
    Val::of(m.map(PressureAbs::pa))
}
fn kelvin<T: Real>(m: Measured<Kelvin<T>>) -> Val {
    Val::of(m.map(Kelvin::kelvin))
}
fn bad() -> Val {
    Val::of(Measured::<f64>::bad())
}

type Comp<T> = (StageScan<T>, CompressorResult<T>);
type Pump<T> = (StageScan<T>, PumpResult<T>);
type Cool<T> = (StageScan<T>, CoolerResult<T>);

fn compressor_rows<T: Real>() -> Vec<Row<Comp<T>>> {
    vec![
        row!(
            SUCTION_PRESSURE,
            "Suction pressure p1",
            BAR_A,
            |c: &Comp<T>| pa(c.0.suction_pressure)
        ),
        row!(
            DISCHARGE_PRESSURE,
            "Discharge pressure p2",
            BAR_A,
            |c: &Comp<T>| pa(c.0.discharge_pressure)
        ),
        row!(PRESSURE_RATIO, "Pressure ratio", RATIO, |c: &Comp<T>| {
            Val::of(c.1.pressure_ratio)
        }),
        row!(SUCTION_TEMPERATURE, "T1 suction", KELVIN, |c: &Comp<T>| {
            kelvin(c.0.suction_temperature)
        }),
        row!(DISCHARGE_TEMPERATURE, "T2 discharge", KELVIN, |c: &Comp<
            T,
        >| {
            kelvin(c.0.discharge_temperature)
        }),
        row!(ISENTROPIC_T2, "T2s isentropic", KELVIN, |c: &Comp<T>| {
            Val::of(c.1.isentropic_discharge_temperature)
        }),
        row!(TEMPERATURE_RISE, "Temperature rise", KELVIN, |c: &Comp<
            T,
        >| {
            Val::of(c.1.temperature_rise)
        }),
        row!(ISENTROPIC_HEAD, "Isentropic head", KJ_PER_KG, |c: &Comp<
            T,
        >| {
            Val::of(c.1.isentropic_head)
        }),
        row!(POLYTROPIC_HEAD, "Polytropic head", KJ_PER_KG, |c: &Comp<
            T,
        >| {
            Val::of(c.1.polytropic_head)
        }),
        row!(ISOTHERMAL_HEAD, "Isothermal head", KJ_PER_KG, |c: &Comp<
            T,
        >| {
            Val::of(c.1.isothermal_head)
        }),
        row!(
            ACTUAL_WORK,
            "Actual work",
            KJ_PER_KG,
            |c: &Comp<T>| Val::of(c.1.actual_work)
        ),
        row!(
            ISENTROPIC_EFFICIENCY,
            "Isentropic efficiency",
            PERCENT,
            |c: &Comp<T>| Val::of(c.1.isentropic_efficiency)
        ),
        row!(
            POLYTROPIC_EFFICIENCY,
            "Polytropic efficiency",
            PERCENT,
            |c: &Comp<T>| Val::of(c.1.polytropic_efficiency)
        ),
        row!(
            POLYTROPIC_EXPONENT,
            "Polytropic exponent n",
            RATIO,
            |c: &Comp<T>| Val::of(c.1.polytropic_exponent)
        ),
        row!(MASS_FLOW, "Mass flow", KG_PER_S, |c: &Comp<T>| Val::of(
            c.1.mass_flow
        )),
        row!(GAS_POWER, "Gas power", KW, |c: &Comp<T>| Val::of(
            c.1.gas_power
        )),
        row!(
            WORK_ABOVE_ISOTHERMAL,
            "Work above isothermal",
            KJ_PER_KG,
            |c: &Comp<T>| Val::of(c.1.work_above_isothermal)
        ),
        row!(
            POWER_ABOVE_ISOTHERMAL,
            "Power above isothermal",
            KW,
            |c: &Comp<T>| Val::of(c.1.power_above_isothermal)
        ),
    ]
}

fn pump_rows<T: Real>() -> Vec<Row<Pump<T>>> {
    vec![
        row!(
            SUCTION_PRESSURE,
            "Suction pressure p1",
            BAR_A,
            |p: &Pump<T>| pa(p.0.suction_pressure)
        ),
        row!(
            DISCHARGE_PRESSURE,
            "Discharge pressure p2",
            BAR_A,
            |p: &Pump<T>| pa(p.0.discharge_pressure)
        ),
        row!(SUCTION_TEMPERATURE, "T1 suction", KELVIN, |p: &Pump<T>| {
            kelvin(p.0.suction_temperature)
        }),
        row!(PRESSURE_RATIO, "Pressure ratio", RATIO, |p: &Pump<T>| {
            Val::of(p.1.pressure_ratio)
        }),
        row!(PRESSURE_RISE, "Pressure rise", BAR, |p: &Pump<T>| Val::of(
            p.1.pressure_rise
        )),
        row!(
            SUCTION_DENSITY,
            "Suction density (gas model)",
            KG_PER_M3,
            |p: &Pump<T>| Val::of(p.1.density)
        ),
        row!(
            REVERSIBLE_WORK,
            "Reversible work v dP",
            KJ_PER_KG,
            |p: &Pump<T>| Val::of(p.1.reversible_work)
        ),
        row!(SHAFT_WORK, "Shaft work", KJ_PER_KG, |p: &Pump<T>| Val::of(
            p.1.shaft_work
        )),
        row!(MASS_FLOW, "Mass flow", KG_PER_S, |p: &Pump<T>| Val::of(
            p.1.mass_flow
        )),
        row!(PUMP_POWER_STAGE, "Shaft power", KW, |p: &Pump<T>| Val::of(
            p.1.power
        )),
        row!(
            GAS_EQUIVALENT,
            "Gas compression, same ratio",
            KJ_PER_KG,
            |p: &Pump<T>| Val::of(p.1.gas_compression_equivalent)
        ),
        row!(
            WORK_RATIO_TO_GAS,
            "Pump work / gas work",
            PERCENT,
            |p: &Pump<T>| Val::of(p.1.work_ratio_to_gas)
        ),
    ]
}

fn cooler_rows<T: Real>() -> Vec<Row<Cool<T>>> {
    vec![
        row!(GAS_INLET_T, "Gas in", KELVIN, |c: &Cool<T>| kelvin(
            c.0.discharge_temperature
        )),
        row!(GAS_OUTLET_T, "Gas out", KELVIN, |c: &Cool<T>| c
            .0
            .cooler
            .map_or(bad(), |s| kelvin(s.gas_outlet_temperature))),
        row!(COOLANT_INLET_T, "Coolant in", KELVIN, |c: &Cool<T>| c
            .0
            .cooler
            .map_or(bad(), |s| kelvin(s.coolant_inlet_temperature))),
        row!(GAS_DROP, "Gas temperature drop", KELVIN, |c: &Cool<T>| {
            Val::of(c.1.gas_temperature_drop)
        }),
        row!(APPROACH, "Approach", KELVIN, |c: &Cool<T>| Val::of(
            c.1.approach
        )),
        row!(EFFECTIVENESS, "Effectiveness", PERCENT, |c: &Cool<T>| {
            Val::of(c.1.effectiveness)
        }),
        row!(HEAT_DUTY, "Heat duty", KW, |c: &Cool<T>| Val::of(
            c.1.heat_duty
        )),
        row!(PRESSURE_DROP, "Pressure drop", KPA, |c: &Cool<T>| Val::of(
            c.1.pressure_drop
        )),
        row!(
            RELATIVE_PRESSURE_DROP,
            "Relative pressure drop",
            PERCENT,
            |c: &Cool<T>| Val::of(c.1.relative_pressure_drop)
        ),
        row!(COOLANT_RISE, "Coolant rise", KELVIN, |c: &Cool<T>| Val::of(
            c.1.coolant_temperature_rise
        )),
        row!(LMTD, "LMTD (counterflow)", KELVIN, |c: &Cool<T>| Val::of(
            c.1.lmtd
        )),
        row!(UA, "UA", KW_PER_K, |c: &Cool<T>| Val::of(c.1.ua)),
        row!(HEAT_BALANCE, "Heat balance error", PERCENT, |c: &Cool<
            T,
        >| {
            Val::of(c.1.heat_balance_error)
        }),
        row!(
            NEXT_RISE,
            "Next-stage temperature rise",
            KELVIN,
            |c: &Cool<T>| Val::of(c.1.next_stage_temperature_rise)
        ),
    ]
}

fn total_rows<T: Real>() -> Vec<Row<TrainTotals<T>>> {
    type R<T> = TrainTotals<T>;
    vec![
        row!(
            OVERALL_RATIO,
            "Overall pressure ratio (compressors)",
            RATIO,
            |t: &R<T>| Val::of(t.overall_pressure_ratio)
        ),
        row!(COMPRESSOR_POWER, "Compressor gas power", KW, |t: &R<T>| {
            Val::of(t.compressor_power)
        }),
        row!(PUMP_POWER, "Pump shaft power", KW, |t: &R<T>| Val::of(
            t.pump_power
        )),
        row!(TOTAL_POWER, "Total power", KW, |t: &R<T>| Val::of(
            t.total_power
        )),
        row!(
            COMPRESSOR_WORK,
            "Compressor work (sum of stages)",
            KJ_PER_KG,
            |t: &R<T>| Val::of(t.compressor_work)
        ),
        row!(
            ISOTHERMAL_WORK,
            "Isothermal work, overall ratio",
            KJ_PER_KG,
            |t: &R<T>| Val::of(t.isothermal_work)
        ),
        row!(
            ISOTHERMAL_EFFICIENCY,
            "Isothermal efficiency",
            PERCENT,
            |t: &R<T>| Val::of(t.isothermal_efficiency)
        ),
        row!(
            SINGLE_STAGE,
            "One uncooled isentropic stage",
            KJ_PER_KG,
            |t: &R<T>| Val::of(t.single_stage_isentropic_work)
        ),
        row!(
            IDEAL_STAGED,
            "Ideal staged isentropic (equal ratios)",
            KJ_PER_KG,
            |t: &R<T>| Val::of(t.ideal_staged_isentropic_work)
        ),
        row!(
            MEASURED_STAGED,
            "Measured staged isentropic",
            KJ_PER_KG,
            |t: &R<T>| Val::of(t.measured_staged_isentropic_work)
        ),
        row!(
            STAGING_SAVING,
            "Saving by staging, measured",
            KJ_PER_KG,
            |t: &R<T>| Val::of(t.staging_saving)
        ),
        row!(
            IDEAL_SAVING,
            "Saving by staging, ideal",
            KJ_PER_KG,
            |t: &R<T>| Val::of(t.ideal_staging_saving)
        ),
    ]
}

fn steady_cell<T: Real>(s: &StageResult<T>) -> String {
    let word = if s.steady_state.steady { "yes" } else { "no" };
    format!("{word} ({})", s.steady_state.samples)
}

fn condition<C: core::fmt::Debug>(c: C) -> String {
    kebab(&format!("{c:?}"))
}

/// Percentage of `part` in `whole` when both are usable.
fn share(part: Val, whole: Val) -> Option<f64> {
    (part.quality.is_usable() && whole.quality.is_usable() && whole.value > 0.0)
        .then(|| 100.0 * part.value / whole.value)
}

struct Parts<T: Real> {
    compressors: Vec<(usize, Comp<T>, StageResult<T>)>,
    pumps: Vec<(usize, Pump<T>, StageResult<T>)>,
    coolers: Vec<(usize, Cool<T>)>,
}

fn split<T: Real, const N: usize>(scan: &[StageScan<T>; N], snap: &Snapshot<T, N>) -> Parts<T> {
    let mut parts = Parts {
        compressors: Vec::new(),
        pumps: Vec::new(),
        coolers: Vec::new(),
    };
    for (i, ((s, st), cooler)) in scan
        .iter()
        .zip(snap.stages.iter())
        .zip(snap.coolers.iter())
        .enumerate()
    {
        if let Some(c) = st.compressor() {
            parts.compressors.push((i + 1, (*s, *c), *st));
        }
        if let Some(p) = st.pump() {
            parts.pumps.push((i + 1, (*s, *p), *st));
        }
        if let Some(c) = cooler {
            parts.coolers.push((i + 1, (*s, *c)));
        }
    }
    parts
}

fn report<T: Real>(
    args: &Parsed,
    scans: u32,
    precision: Precision,
    json: bool,
) -> Result<String, CliError> {
    let mut train = polytrope::demo::train::<T>()?;
    let mut scan = polytrope::demo::scan::<T>(0);
    for i in 0..scans {
        scan = polytrope::demo::scan::<T>(i);
        train.update(&scan);
    }
    let snap = train.snapshot();
    let parts = split(&scan.stages, snap);
    let ledger = crate::ledger_view::lines(&train, &scan);
    if let Some(path) = args.get("ledger-png") {
        let heading = format!(
            "Where the power goes: invented demo CO2 train, scan {scans} ({})",
            precision.word()
        );
        crate::ledger_plot::waterfall(std::path::Path::new(path), &heading, &ledger)?;
    }
    if json {
        let mut j = to_json(scans, precision, snap, &parts);
        if let Json::Obj(o) = &mut j {
            o.put(&k::LEDGER, crate::ledger_view::json(&ledger));
        }
        Ok(j.to_text())
    } else {
        Ok(to_text(scans, precision, snap, &parts) + &crate::ledger_view::text(&ledger))
    }
}

fn to_json<T: Real, const N: usize>(
    scans: u32,
    precision: Precision,
    snap: &Snapshot<T, N>,
    parts: &Parts<T>,
) -> Json {
    let mut stages = Vec::new();
    let crows = compressor_rows::<T>();
    for (n, c, st) in &parts.compressors {
        let mut o = Obj::new();
        o.put(&k::STAGE, Json::Int(*n as i64))
            .str(&k::KIND, "compressor");
        out::put_rows(&mut o, &crows, c);
        o.num(
            &k::COMPRESSIBILITY,
            Val::of(Measured::good(c.1.compressibility)).value,
        )
        .num(
            &k::HEAT_CAPACITY_RATIO,
            Val::of(Measured::good(c.1.k)).value,
        )
        .str(&k::POLYTROPIC_METHOD, &condition(c.1.polytropic_method))
        .str(&k::GAS_MODEL_VALIDITY, &condition(c.1.gas_validity.reason))
        .put(&k::STEADY_STATE, Json::Bool(st.steady_state.steady))
        .put(
            &k::STEADY_SAMPLES,
            Json::Int(i64::from(st.steady_state.samples)),
        )
        .str(&k::CONDITION, &condition(c.1.condition));
        stages.push(o.done());
    }
    let prows = pump_rows::<T>();
    for (n, p, st) in &parts.pumps {
        let mut o = Obj::new();
        o.put(&k::STAGE, Json::Int(*n as i64)).str(&k::KIND, "pump");
        out::put_rows(&mut o, &prows, p);
        o.put(&k::STEADY_STATE, Json::Bool(st.steady_state.steady))
            .put(
                &k::STEADY_SAMPLES,
                Json::Int(i64::from(st.steady_state.samples)),
            );
        stages.push(o.done());
    }
    let krows = cooler_rows::<T>();
    let coolers = parts
        .coolers
        .iter()
        .map(|(n, c)| {
            let mut o = Obj::new();
            o.put(&k::AFTER_STAGE, Json::Int(*n as i64));
            out::put_rows(&mut o, &krows, c);
            o.str(&k::CONDITION, &condition(c.1.condition));
            o.done()
        })
        .collect();
    let interstage = snap
        .interstage
        .iter()
        .enumerate()
        .filter_map(|(i, p)| p.map(|p| (i, p)))
        .map(|(i, p)| {
            let mut o = Obj::new();
            o.put(&k::STAGE, Json::Int(i as i64 + 1))
                .val(&k::MEASURED_P2, Val::of(p.measured))
                .val(&k::OPTIMUM_P2, Val::of(p.optimum))
                .val(&k::DEVIATION, Val::of(p.deviation));
            o.done()
        })
        .collect();
    let mut totals = Obj::new();
    totals.put(
        &k::STAGE_COUNT,
        Json::Int(i64::from(snap.totals.compressor_stages)),
    );
    out::put_rows(&mut totals, &total_rows::<T>(), &snap.totals);

    let mut o = Obj::new();
    o.str(&k::COMMAND_NAME, "demo")
        .str(&k::SCENARIO, SCENARIO)
        .str(&k::CAUTION, out::CAUTION)
        .str(&k::PRECISION, precision.word())
        .put(&k::SCANS, Json::Int(i64::from(scans)))
        .put(&k::STAGES, Json::Arr(stages))
        .put(&k::COOLERS, Json::Arr(coolers))
        .put(&k::INTERSTAGE, Json::Arr(interstage))
        .put(&k::TOTALS, totals.done());
    o.done()
}

fn to_text<T: Real, const N: usize>(
    scans: u32,
    precision: Precision,
    snap: &Snapshot<T, N>,
    parts: &Parts<T>,
) -> String {
    let build = match precision {
        Precision::F32 => "f32 (device build)",
        Precision::F64 => "f64 (reference build)",
    };
    let mut s = format!(
        "{} demo\n{SCENARIO}\nKernel: {build}; {scans} scans run, results of the last scan.\n{}\n{}\n",
        crate::BIN,
        out::CAUTION,
        out::LEGEND
    );

    s.push_str("\nCompressor stages\n");
    let items: Vec<(String, Comp<T>)> = parts
        .compressors
        .iter()
        .map(|(n, c, _)| (format!("S{n}"), *c))
        .collect();
    let mut g = out::column_table(&compressor_rows::<T>(), &items);
    let extra: [(&str, Vec<String>); 6] = [
        (
            "Compressibility Z used",
            parts
                .compressors
                .iter()
                .map(|(_, c, _)| format!("{:.3}", c.1.compressibility))
                .collect(),
        ),
        (
            "Isentropic exponent used",
            parts
                .compressors
                .iter()
                .map(|(_, c, _)| format!("{:.3}", c.1.k))
                .collect(),
        ),
        (
            "Polytropic method",
            parts
                .compressors
                .iter()
                .map(|(_, c, _)| condition(c.1.polytropic_method))
                .collect(),
        ),
        (
            "Gas model",
            parts
                .compressors
                .iter()
                .map(|(_, c, _)| condition(c.1.gas_validity.reason))
                .collect(),
        ),
        (
            "Steady (window samples)",
            parts
                .compressors
                .iter()
                .map(|(_, _, st)| steady_cell(st))
                .collect(),
        ),
        (
            "Condition",
            parts
                .compressors
                .iter()
                .map(|(_, c, _)| condition(c.1.condition))
                .collect(),
        ),
    ];
    for (label, cells) in extra {
        let mut row = vec![label.to_string(), "-".to_string()];
        row.extend(cells);
        g.row(row);
    }
    g.render(&mut s);

    s.push_str("\nCoolers (column = the cooler after that stage)\n");
    let items: Vec<(String, Cool<T>)> = parts
        .coolers
        .iter()
        .map(|(n, c)| (format!("after S{n}"), *c))
        .collect();
    let mut g = out::column_table(&cooler_rows::<T>(), &items);
    let mut row = vec!["Condition".to_string(), "-".to_string()];
    row.extend(parts.coolers.iter().map(|(_, c)| condition(c.1.condition)));
    g.row(row);
    g.render(&mut s);

    for (n, p, st) in &parts.pumps {
        s.push_str(&format!("\nPump (stage {n}, dense phase)\n"));
        let mut g = out::list_table(&pump_rows::<T>(), p);
        g.row(vec![
            "Steady (window samples)".to_string(),
            steady_cell(st),
            "-".to_string(),
        ]);
        g.render(&mut s);
        let w = Val::of(p.1.shaft_work);
        let gas = Val::of(p.1.gas_compression_equivalent);
        if let Some(pct) = share(w, gas) {
            s.push_str(&format!(
                "Pumping the dense phase takes {:.1} kJ/kg; compressing the gas over the same \
                 ratio from the same temperature would take {:.1} kJ/kg ({pct:.1} % of it).\n",
                w.value / 1e3,
                gas.value / 1e3
            ));
        }
    }

    s.push_str("\nInterstage pressures against the equal-ratio optimum\n");
    let mut g = out::Grid::new(&[
        "after stage",
        "measured bar a",
        "equal-ratio bar a",
        "deviation %",
    ]);
    for (i, p) in snap.interstage.iter().enumerate() {
        if let Some(p) = p {
            g.row(vec![
                format!("S{}", i + 1),
                out::cell(Val::of(p.measured), disp::BAR_A),
                out::cell(Val::of(p.optimum), disp::BAR_A),
                out::cell(Val::of(p.deviation), disp::PERCENT),
            ]);
        }
    }
    g.render(&mut s);

    s.push_str(&format!(
        "\nTrain totals ({} compressor stages)\n",
        snap.totals.compressor_stages
    ));
    out::list_table(&total_rows::<T>(), &snap.totals).render(&mut s);
    let t = &snap.totals;
    let single = Val::of(t.single_stage_isentropic_work);
    if let (Some(m), Some(i)) = (
        share(Val::of(t.staging_saving), single),
        share(Val::of(t.ideal_staging_saving), single),
    ) {
        s.push_str(&format!(
            "Staging with intercooling saves {m:.1} % of the single uncooled stage's isentropic \
             work as measured ({i:.1} % with ideal equal-ratio stages and perfect intercooling).\n"
        ));
    }
    s
}
