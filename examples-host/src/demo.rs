//! `demo`: runs the invented demonstration train of `polytrope::demo`
//! (four intercooled CO2 compressor stages and a dense-phase pump) through
//! the kernel for a number of scans and reports the last snapshot: per-stage
//! and per-cooler tables, the pump against gas compression, interstage
//! pressures against the equal-ratio optimum, and the train totals.

use polytrope::cooler::CoolerResult;
use polytrope::fields::{Derivation, FieldSpec, FieldValue, QuantityKind, StageInput, STAGE_KIND};
use polytrope::scan::StageScan;
use polytrope::stage::PumpResult;
use polytrope::train::{Snapshot, StageResult, StageWork};
use polytrope::{Measured, Real};

use crate::cli::{count, CliError, Parsed, Precision};
use crate::keys::{self as k, Key};
use crate::out::{self, disp, Detail, Field, Json, Obj, Val};

const DEFAULT_SCANS: u32 = 20;

const SCENARIO: &str = "Invented scenario: a made-up carbon-dioxide train of four \
intercooled compressor stages and a dense-phase pump, with synthesised measurements. \
It is not data from any real machine.";

/// Runs the subcommand.
pub fn run(args: &Parsed) -> Result<String, CliError> {
    let scans = match args.get("scans") {
        Some(t) => count("scans", t, 1, 1_000_000)?,
        None => DEFAULT_SCANS,
    };
    let precision = Precision::from_option(args.get("precision"), Precision::F32)?;
    let json = args.has("json");
    match precision {
        Precision::F32 => report::<f32>(scans, precision, json),
        Precision::F64 => report::<f64>(scans, precision, json),
    }
}

/// A compressor or pump stage's fields as reported: the measured inputs,
/// the stage results, the steady-state mark (all from the kernel's lists).
fn stage_fields<T: Real>(scan: &StageScan<T>, st: &StageResult<T>) -> Vec<Field<T>> {
    let mut f = vec![(&STAGE_KIND, FieldValue::Tag(st.work.as_str()))];
    f.extend(out::inputs_of(scan, &k::STAGE_INPUTS));
    match &st.work {
        StageWork::Compressor(c) => f.extend(out::fields_of(c)),
        StageWork::Pump(p) => f.extend(out::fields_of(p)),
    }
    f.extend(out::fields_of(&st.steady_state));
    f
}

/// A cooler's fields: gas inlet (the stage discharge), its inputs, results.
fn cooler_fields<T: Real>(scan: &StageScan<T>, c: &CoolerResult<T>) -> Vec<Field<T>> {
    let t_in = scan
        .input(StageInput::DischargeTemperature)
        .unwrap_or_else(Measured::bad);
    let mut f = vec![(&GAS_INLET, FieldValue::Real(t_in))];
    f.extend(out::inputs_of(scan, &k::COOLER_INPUTS));
    f.extend(out::fields_of(c));
    f
}

/// The cooler gas inlet temperature: the stage's discharge temperature.
static GAS_INLET: FieldSpec = FieldSpec {
    name: "gas_inlet_temperature",
    key: k::GAS_INLET_T.name,
    label: "Gas in",
    unit: "K",
    kind: QuantityKind::Temperature,
    derivation: Derivation::PassThrough,
    meaning: k::GAS_INLET_T.meaning,
};

/// Percentage of `part` in `whole` when both are usable.
fn share(part: Val, whole: Val) -> Option<f64> {
    (part.quality.is_usable() && whole.quality.is_usable() && whole.value > 0.0)
        .then(|| 100.0 * part.value / whole.value)
}

pub(crate) struct Parts<T: Real> {
    compressors: Vec<(usize, Vec<Field<T>>)>,
    pumps: Vec<(usize, Vec<Field<T>>, Pump<T>)>,
    coolers: Vec<(usize, Vec<Field<T>>)>,
}

type Pump<T> = PumpResult<T>;

pub(crate) fn split<T: Real, const N: usize>(
    scan: &[StageScan<T>; N],
    snap: &Snapshot<T, N>,
) -> Parts<T> {
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
        match &st.work {
            StageWork::Compressor(_) => parts.compressors.push((i + 1, stage_fields(s, st))),
            StageWork::Pump(p) => parts.pumps.push((i + 1, stage_fields(s, st), *p)),
        }
        if let Some(c) = cooler {
            parts.coolers.push((i + 1, cooler_fields(s, c)));
        }
    }
    parts
}

fn report<T: Real>(scans: u32, precision: Precision, json: bool) -> Result<String, CliError> {
    let mut train = polytrope::demo::train::<T>()?;
    let mut scan = polytrope::demo::scan::<T>(0);
    for i in 0..scans {
        scan = polytrope::demo::scan::<T>(i);
        train.update(&scan);
    }
    let snap = train.snapshot();
    let parts = split(&scan.stages, snap);
    // The loss ledger of the last scan (polytrope::ledger).
    let ledger = crate::ledger_view::ledger(&train, &scan);
    if json {
        let mut j = to_json(("demo", SCENARIO), scans, precision, snap, &parts);
        if let Json::Obj(o) = &mut j {
            o.put(&k::LEDGER, crate::ledger_view::json(&ledger));
        }
        Ok(j.to_text())
    } else {
        let lines = crate::ledger_view::lines(&ledger);
        Ok(to_text(("demo", SCENARIO), scans, precision, snap, &parts)
            + &crate::ledger_view::text(&lines))
    }
}

pub(crate) fn to_json<T: Real, const N: usize>(
    (command, scenario): (&str, &str),
    scans: u32,
    precision: Precision,
    snap: &Snapshot<T, N>,
    parts: &Parts<T>,
) -> Json {
    let numbered = |key: &Key, n: usize, fields: &[Field<T>]| {
        let mut o = Obj::new();
        o.put(key, Json::Int(n as i64));
        out::put_fields(&mut o, fields);
        o.done()
    };
    let mut stages: Vec<(usize, Json)> = parts
        .compressors
        .iter()
        .map(|(n, f)| (*n, numbered(&k::STAGE, *n, f)))
        .collect();
    stages.extend(
        parts
            .pumps
            .iter()
            .map(|(n, f, _)| (*n, numbered(&k::STAGE, *n, f))),
    );
    stages.sort_by_key(|(n, _)| *n);
    let coolers = parts
        .coolers
        .iter()
        .map(|(n, f)| numbered(&k::AFTER_STAGE, *n, f))
        .collect();
    let interstage = snap
        .interstage
        .iter()
        .enumerate()
        .filter_map(|(i, p)| p.map(|p| numbered(&k::STAGE, i + 1, &out::fields_of(&p))))
        .collect();
    let mut totals = Obj::new();
    out::put_fields(&mut totals, &out::fields_of(&snap.totals));

    let mut o = Obj::new();
    o.str(&k::COMMAND_NAME, command)
        .str(&k::SCENARIO, scenario)
        .str(&k::CAUTION, out::CAUTION)
        .str(&k::PRECISION, precision.word())
        .put(&k::SCANS, Json::Int(i64::from(scans)))
        .put(
            &k::STAGES,
            Json::Arr(stages.into_iter().map(|(_, j)| j).collect()),
        )
        .put(&k::COOLERS, Json::Arr(coolers))
        .put(&k::INTERSTAGE, Json::Arr(interstage))
        .put(&k::TOTALS, totals.done());
    o.done()
}

pub(crate) fn to_text<T: Real, const N: usize>(
    (command, scenario): (&str, &str),
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
        "{} {command}\n{scenario}\nKernel: {build}; {scans} scans run, results of the last scan.\n{}\n{}\n",
        crate::BIN,
        out::CAUTION,
        out::LEGEND
    );

    s.push_str("\nCompressor stages\n");
    let items: Vec<(String, Vec<Field<T>>)> = parts
        .compressors
        .iter()
        .map(|(n, f)| (format!("S{n}"), f.clone()))
        .collect();
    out::field_column_table(&items, Detail::Summary).render(&mut s);

    s.push_str("\nCoolers (column = the cooler after that stage)\n");
    let items: Vec<(String, Vec<Field<T>>)> = parts
        .coolers
        .iter()
        .map(|(n, f)| (format!("after S{n}"), f.clone()))
        .collect();
    out::field_column_table(&items, Detail::Summary).render(&mut s);

    for (n, f, p) in &parts.pumps {
        s.push_str(&format!("\nPump (stage {n}, dense phase)\n"));
        out::field_list_table(f, Detail::Summary).render(&mut s);
        let w = Val::of(p.shaft_work);
        let gas = Val::of(p.gas_compression_equivalent);
        if let Some(pct) = share(w, gas) {
            let wd = out::disp_or(crate::unit_system::Dimension::SpecificWork, disp::KJ_PER_KG);
            s.push_str(&format!(
                "Pumping the dense phase takes {} {u}; compressing the gas over the same \
                 ratio from the same temperature would take {} {u} ({pct:.1} % of it).\n",
                out::cell(w, wd),
                out::cell(gas, wd),
                u = wd.unit
            ));
        }
    }

    s.push_str("\nInterstage pressures against the equal-ratio optimum\n");
    let pd = out::disp_or(crate::unit_system::Dimension::PressureAbs, disp::BAR_A);
    let (measured, optimum) = (
        format!("measured {}", pd.unit),
        format!("equal-ratio {}", pd.unit),
    );
    let mut g = out::Grid::new(&["after stage", &measured, &optimum, "deviation %"]);
    for (i, p) in snap.interstage.iter().enumerate() {
        if let Some(p) = p {
            g.row(vec![
                format!("S{}", i + 1),
                out::cell(Val::of(p.measured), pd),
                out::cell(Val::of(p.optimum), pd),
                out::cell(Val::of(p.deviation), disp::PERCENT),
            ]);
        }
    }
    g.render(&mut s);

    s.push_str("\nTrain totals\n");
    out::field_list_table(&out::fields_of(&snap.totals), Detail::Summary).render(&mut s);
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
