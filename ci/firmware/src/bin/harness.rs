//! The on-target harness. Runs the demo train (an invented scenario) over
//! the committed scan table and prints every output as f32 bit patterns for
//! `tests/firmware_outputs.rs`; then runs the regions the instruction-count
//! plugin measures, the stack high-water test and the state sizes.
//!
//! Output lines (semihosting stdout):
//! - `V scan index group.key bits quality` a value (bits = `f32::to_bits`,
//!   hex; keys from `polytrope::fields`)
//! - `C scan index group.key code` an exact value (flag 0/1, count, or a
//!   condition's name)
//! - `M region name` the n-th measured region (the plugin numbers them)
//! - `S key value` a size or stack figure, bytes
//! - `END ok` the run completed
#![no_std]
#![no_main]

use core::fmt::Write as _;
use core::hint::black_box;

use cortex_m_rt::entry;
use cortex_m_semihosting::hio;
use heapless::String;
use polytrope::cooler::{evaluate_cooler_into, CoolerInputs, CoolerResult};
use polytrope::demo::{self, DemoTrain};
use polytrope::fields::FieldValue;
use polytrope::gas::components::{CARBON_DIOXIDE, ETHANE, METHANE, NITROGEN, PROPANE};
#[cfg(target_abi = "eabihf")]
use polytrope::gas::table::PropertyTable;
use polytrope::gas::table::TableGas;
use polytrope::gas::{GasModel, IdealGas, PengRobinson, CARBON_DIOXIDE as CO2_IDEAL};
use polytrope::ledger::{evaluate_ledger_into, CoolingReference, Ledger, LedgerConfig};
use polytrope::quality::{Measured, Quality};
use polytrope::scan::Scan;
use polytrope::stage::{
    evaluate_compressor_into, evaluate_pump, CompressorInputs, CompressorResult,
};
use polytrope::train::{Snapshot, Train, TrainConfig};
use polytrope_firmware::codec::{decode_scan, quality_code, RawStage};
use polytrope_firmware::front::{self, Monitor, PressureChannel};
#[cfg(target_abi = "eabihf")]
use polytrope_firmware::gas_tables::CO2_DEMO_BLOB;
use polytrope_firmware::gas_tables::NG_BOOSTER;
use polytrope_firmware::measure;
use polytrope_firmware::report::stack_used;
use polytrope_firmware::table::SCANS;

/// Stages of the budget train: four compressors, three intercoolers.
const BUDGET_STAGES: usize = 4;
type BudgetTrain = Train<f32, IdealGas<f32>, BUDGET_STAGES, { demo::WINDOW }>;
/// The budget train on a GERG-2008 property table (Cortex-M4F only: it
/// runs on the CO2 table decoded into 61 kB of RAM, see `measure_tables`).
#[cfg(target_abi = "eabihf")]
type BudgetTrainTable<'a> = Train<f32, TableGas<'a, f32>, BUDGET_STAGES, { demo::WINDOW }>;
/// The same train on the demo's Peng–Robinson CO2.
type BudgetTrainPr = Train<f32, PengRobinson<f32, 1>, BUDGET_STAGES, { demo::WINDOW }>;

struct Host(Option<hio::HostStream>);

impl Host {
    fn line(&mut self, args: core::fmt::Arguments) {
        let mut s: String<160> = String::new();
        let _ = s.write_fmt(args);
        let _ = s.push('\n');
        if let Some(out) = self.0.as_mut() {
            let _ = out.write_all(s.as_bytes());
        }
    }
}

macro_rules! out {
    ($h:expr, $($t:tt)*) => { $h.line(format_args!($($t)*)) };
}

fn fail(h: &mut Host, what: &str) -> ! {
    out!(h, "ERROR {}", what);
    polytrope_firmware::exit(false)
}

fn print_snapshot<const N: usize>(h: &mut Host, scan: usize, s: &Snapshot<f32, N>) {
    s.visit_groups(&mut |g, spec, value| {
        let (i, group, key) = (g.index(), g.as_str(), spec.key);
        match value {
            FieldValue::Real(m) => out!(
                h,
                "V {} {} {}.{} {:08x} {}",
                scan,
                i,
                group,
                key,
                m.value.to_bits(),
                quality_code(m.quality)
            ),
            FieldValue::Plain(x) => out!(
                h,
                "V {} {} {}.{} {:08x} 0",
                scan,
                i,
                group,
                key,
                x.to_bits()
            ),
            FieldValue::Flag(b) => out!(h, "C {} {} {}.{} {}", scan, i, group, key, u32::from(b)),
            FieldValue::Count(n) => out!(h, "C {} {} {}.{} {}", scan, i, group, key, n),
            FieldValue::Tag(t) => out!(h, "C {} {} {}.{} {}", scan, i, group, key, t),
        }
    });
}

/// The budget train's configuration: the demo's first four stages, the
/// fourth without its aftercooler, on `gas` (the ideal-gas budget uses CO2
/// with constant k and Z = 1, the gas of the demo before it moved to
/// Peng–Robinson).
fn budget_config<G>(gas: G) -> Option<TrainConfig<f32, G, BUDGET_STAGES>> {
    let demo = demo::config::<f32>().ok()?;
    let mut stages = [*demo.stages.first()?; BUDGET_STAGES];
    for (i, s) in stages.iter_mut().enumerate() {
        *s = *demo.stages.get(i)?;
    }
    if let Some(last) = stages.last_mut() {
        last.cooler = None;
    }
    Some(TrainConfig {
        gas,
        stages,
        max_interstage_pressure_drop: demo.max_interstage_pressure_drop,
        steady_state: demo.steady_state,
    })
}

fn budget_scan(raw: &[RawStage; demo::STAGES]) -> Scan<f32, BUDGET_STAGES> {
    let full = decode_scan::<f32, { demo::STAGES }>(raw);
    let mut stages = [full.stages[0]; BUDGET_STAGES];
    for (i, s) in stages.iter_mut().enumerate() {
        *s = full.stages[i];
    }
    stages[BUDGET_STAGES - 1].cooler = None;
    Scan { stages }
}

#[inline(never)]
fn update_demo(t: &mut DemoTrain<f32>, s: &Scan<f32, { demo::STAGES }>) -> f32 {
    t.update(s).totals.total_power.value
}

#[inline(never)]
fn update_surge(m: &mut Monitor, s: &polytrope::surge::SurgeScan<f32>) -> f32 {
    m.update(s, 0.0, 0.02).margin.value
}

#[inline(never)]
fn update_channel(c: &mut PressureChannel, raw: f32, t_ms: u32) -> f32 {
    c.update(raw, t_ms).filtered.value
}

#[inline(never)]
fn pack(
    image: &mut front::Image,
    snap: &Snapshot<f32, { demo::STAGES }>,
    view: &polytrope::registers::SurgeView<f32>,
    outputs: &[polytrope::signal::ChannelOutput<f32>; 1],
) -> u16 {
    image.pack(snap, &[*view], outputs);
    image.registers().first().copied().unwrap_or(0)
}

#[inline(never)]
fn update_budget(t: &mut BudgetTrain, s: &Scan<f32, BUDGET_STAGES>) -> f32 {
    t.update(s).totals.total_power.value
}

/// One loss ledger after the budget train's update of the same scan.
#[inline(never)]
fn ledger_budget<G: GasModel<f32>>(
    t: &Train<f32, G, BUDGET_STAGES, { demo::WINDOW }>,
    cfg: &LedgerConfig<f32>,
    s: &Scan<f32, BUDGET_STAGES>,
    out: &mut Ledger<f32, BUDGET_STAGES>,
) -> f32 {
    evaluate_ledger_into(t.config(), cfg, s, t.snapshot(), Measured::bad(), out);
    out.remainder.value
}

/// Measures the loss ledger after a budget update of `s` (ideal gas: the
/// first-suction and the coolant-inlet reference with an 8 K design
/// approach; Peng–Robinson: the first-suction reference). Out of line so
/// its locals do not add to `main`'s frame (the Cortex-M0 has 16 KiB).
#[inline(never)]
fn measure_ledgers<G: GasModel<f32>>(
    h: &mut Host,
    label: &mut impl FnMut(&mut Host, &str) -> u32,
    t: &Train<f32, G, BUDGET_STAGES, { demo::WINDOW }>,
    s: &Scan<f32, BUDGET_STAGES>,
    peng_robinson: bool,
) {
    let first = black_box(LedgerConfig::<f32>::default());
    let coolant = black_box(LedgerConfig::<f32> {
        cooling_reference: CoolingReference::CoolantInletPlusApproach {
            design_approach: 8.0,
        },
        recycle: None,
    });
    let mut ledger = Ledger::<f32, BUDGET_STAGES>::bad();
    if peng_robinson {
        let r = label(h, "ledger_4_stages_peng_robinson");
        measure(r, || ledger_budget(t, &first, s, &mut ledger));
    } else {
        let r = label(h, "ledger_4_stages");
        measure(r, || ledger_budget(t, &first, s, &mut ledger));
        let r = label(h, "ledger_4_stages_coolant_reference");
        measure(r, || ledger_budget(t, &coolant, s, &mut ledger));
    }
    if !ledger.measured_total.quality.is_usable() {
        fail(h, "ledger total not usable");
    }
}

/// Stack high-water mark of one loss ledger (first-suction reference).
#[inline(never)]
fn stack_ledger(t: &BudgetTrain, s: &Scan<f32, BUDGET_STAGES>) -> usize {
    let cfg = black_box(LedgerConfig::<f32>::default());
    let mut ledger = Ledger::<f32, BUDGET_STAGES>::bad();
    stack_used(|| {
        ledger_budget(t, &cfg, s, &mut ledger);
    })
}

#[inline(never)]
fn update_budget_pr(t: &mut BudgetTrainPr, s: &Scan<f32, BUDGET_STAGES>) -> f32 {
    t.update(s).totals.total_power.value
}

/// The single-stage regions (ideal-gas stage, Peng-Robinson stage,
/// intercooler, pump), in their own frame (the Cortex-M0 board has 16 KiB of
/// RAM).
#[inline(never)]
fn measure_single_stages(
    h: &mut Host,
    label: &mut impl FnMut(&mut Host, &str) -> u32,
    gas: &IdealGas<f32>,
    scan: &Scan<f32, { demo::STAGES }>,
) {
    let r = label(h, "empty");
    measure(r, || black_box(0_u32));

    let s1 = &scan.stages[1];
    let g = |x: f32| Measured::new(x, Quality::Good);
    let inputs = black_box(CompressorInputs {
        suction_pressure: g(s1.suction_pressure.value.pa()),
        suction_temperature: g(s1.suction_temperature.value.kelvin()),
        discharge_pressure: g(s1.discharge_pressure.value.pa()),
        discharge_temperature: g(s1.discharge_temperature.value.kelvin()),
        mass_flow: g(11.5),
        compressibility: Some((0.97, Quality::Good)),
    });
    let gas_ref = black_box(gas);
    // The in-place forms `Train::update` uses (the returning wrappers add
    // a result copy).
    let r = label(h, "compressor_stage");
    let mut res = CompressorResult::bad();
    measure(r, || evaluate_compressor_into(gas_ref, &inputs, &mut res));
    black_box(&res);

    measure_peng_robinson_stage(h, label);

    let s0 = &scan.stages[0];
    let Some(c0) = s0.cooler else {
        fail(h, "scan without cooler");
    };
    let t2 = s0.discharge_temperature.value.kelvin();
    let tout = c0.gas_outlet_temperature.value.kelvin();
    let p2 = s0.discharge_pressure.value.pa();
    let p_next = scan.stages[1].suction_pressure.value.pa();
    let (drop, drop_validity) = gas.enthalpy_drop(p2, t2, p_next, tout, Some(0.97));
    let cooler_inputs = black_box(CoolerInputs {
        gas_inlet_temperature: g(t2),
        gas_outlet_temperature: g(tout),
        coolant_inlet_temperature: g(c0.coolant_inlet_temperature.value.kelvin()),
        coolant_outlet_temperature: c0
            .coolant_outlet_temperature
            .map_or(Measured::bad(), |t| g(t.value.kelvin())),
        gas_inlet_pressure: g(p2),
        gas_outlet_pressure: g(p_next),
        gas_mass_flow: g(11.5),
        coolant_mass_flow: c0.coolant_mass_flow.unwrap_or(Measured::bad()),
        gas_enthalpy_drop: Measured::new(drop, drop_validity.quality),
        coolant_cp: 4180.0,
    });
    let r = label(h, "intercooler");
    let mut res = CoolerResult::bad();
    measure(r, || evaluate_cooler_into(&cooler_inputs, &mut res));
    black_box(&res);

    let s4 = &scan.stages[4];
    let (pp1, pp2, pt1) = black_box((
        g(s4.suction_pressure.value.pa()),
        g(s4.discharge_pressure.value.pa()),
        g(s4.suction_temperature.value.kelvin()),
    ));
    let r = label(h, "pump_stage");
    let res = measure(r, || {
        evaluate_pump(gas_ref, 780.0, 0.72, pp1, pp2, pt1, g(11.5))
    });
    black_box(res);
}

/// Every output of every committed scan, in its own frame (the Cortex-M0
/// board has 16 KiB of RAM).
#[inline(never)]
fn print_outputs(h: &mut Host) {
    let Ok(mut train) = demo::train::<f32>() else {
        fail(h, "demo train config");
    };
    for (i, raw) in SCANS.iter().enumerate() {
        let scan = decode_scan::<f32, { demo::STAGES }>(black_box(raw));
        let snapshot = train.update(&scan);
        print_snapshot(h, i, snapshot);
    }
}

/// One Peng-Robinson stage, in its own frame (the Cortex-M0 board has
/// 16 KiB of RAM; main's frame holds the other trains).
#[inline(never)]
fn measure_peng_robinson_stage(h: &mut Host, label: &mut impl FnMut(&mut Host, &str) -> u32) {
    let g = |x: f32| Measured::new(x, Quality::Good);
    // One Peng-Robinson stage: a 5-component natural gas (invented
    // composition), both measured states, the entropy-matched isentropic
    // state, heads and the default (Schultz) polytropic method.
    let Ok(pr) = PengRobinson::<f32, 5>::new(
        [METHANE, ETHANE, PROPANE, NITROGEN, CARBON_DIOXIDE],
        [0.90, 0.05, 0.02, 0.01, 0.02],
    ) else {
        fail(h, "peng-robinson gas");
    };
    let pr_inputs = black_box(CompressorInputs {
        suction_pressure: g(10.0e5),
        suction_temperature: g(300.0),
        discharge_pressure: g(25.0e5),
        discharge_temperature: g(383.3),
        mass_flow: g(11.5),
        compressibility: None,
    });
    let pr_ref = black_box(&pr);
    let r = label(h, "compressor_stage_peng_robinson");
    let mut pr_res = CompressorResult::bad();
    measure(r, || {
        evaluate_compressor_into(pr_ref, &pr_inputs, &mut pr_res)
    });
    black_box(&pr_res);
}

/// The 4-stage, 3-intercooler train on Peng-Robinson CO2: warmed with the
/// first ten scans, three measured updates and the stack high-water mark, in
/// its own frame.
#[inline(never)]
fn measure_peng_robinson_train(h: &mut Host, label: &mut impl FnMut(&mut Host, &str) -> u32) {
    let Ok(co2_pr) = demo::gas::<f32>() else {
        fail(h, "pr co2");
    };
    let Some(cfg) = budget_config(co2_pr) else {
        fail(h, "budget config pr");
    };
    let Ok(mut train) = BudgetTrainPr::new(cfg) else {
        fail(h, "budget train pr");
    };
    for raw in SCANS.iter().take(10) {
        update_budget_pr(&mut train, &budget_scan(black_box(raw)));
    }
    for raw in SCANS.iter().skip(10).take(3) {
        let s = black_box(budget_scan(black_box(raw)));
        let r = label(h, "update_4_stages_3_intercoolers_peng_robinson");
        measure(r, || update_budget_pr(&mut train, &s));
        measure_ledgers(h, label, &train, &s, true);
    }
    let s = black_box(budget_scan(black_box(&SCANS[13])));
    let used = stack_used(|| {
        update_budget_pr(&mut train, &s);
    });
    out!(
        h,
        "S stack_update_4_stages_3_intercoolers_peng_robinson {}",
        used
    );
}

/// Full updates of the demo train and the ideal-gas budget train (warmed
/// with the first ten scans, three measured), `Train::new`, and their stack
/// high-water marks, in one frame of their own (the Cortex-M0 board has
/// 16 KiB of RAM).
#[inline(never)]
fn measure_trains(
    h: &mut Host,
    label: &mut impl FnMut(&mut Host, &str) -> u32,
    gas: IdealGas<f32>,
) {
    let Ok(mut demo_train) = demo::train::<f32>() else {
        fail(h, "demo train");
    };
    let Some(budget_cfg) = budget_config(gas) else {
        fail(h, "budget config");
    };
    let Ok(mut budget) = BudgetTrain::new(budget_cfg) else {
        fail(h, "budget train");
    };
    for raw in SCANS.iter().take(10) {
        let raw = black_box(raw);
        update_demo(&mut demo_train, &decode_scan(raw));
        update_budget(&mut budget, &budget_scan(raw));
    }
    for raw in SCANS.iter().skip(10).take(3) {
        let s = black_box(decode_scan::<f32, { demo::STAGES }>(black_box(raw)));
        let r = label(h, "update_demo_5_stages");
        measure(r, || update_demo(&mut demo_train, &s));
        let s = black_box(budget_scan(black_box(raw)));
        let r = label(h, "update_4_stages_3_intercoolers");
        measure(r, || update_budget(&mut budget, &s));
        measure_ledgers(h, label, &budget, &s, false);
    }
    // Stack high-water mark of one update (the wrapper frame included).
    let s = black_box(decode_scan::<f32, { demo::STAGES }>(black_box(&SCANS[13])));
    let used = stack_used(|| {
        update_demo(&mut demo_train, &s);
    });
    out!(h, "S stack_update_demo_5_stages {}", used);
    let s = black_box(budget_scan(black_box(&SCANS[13])));
    let used = stack_used(|| {
        update_budget(&mut budget, &s);
    });
    out!(h, "S stack_update_4_stages_3_intercoolers {}", used);
    let used = stack_ledger(&budget, &s);
    out!(h, "S stack_ledger_4_stages {}", used);
    // The same update when every stage's output qualities change from the
    // scan before (its suction temperature uncertain in every other scan):
    // a stage whose input qualities are unchanged keeps its output
    // qualities without rewriting them, so the figure above is a steady
    // scan's; this one is a scan that regrades every stage. Measured last
    // (it leaves the train's windows as the uncertain scans left them).
    for (i, raw) in SCANS.iter().skip(10).take(3).enumerate() {
        let mut s = budget_scan(black_box(raw));
        if i % 2 == 0 {
            for st in s.stages.iter_mut() {
                st.suction_temperature.quality = Quality::Uncertain;
            }
        }
        let s = black_box(s);
        let r = label(h, "update_4_stages_3_intercoolers_regraded");
        measure(r, || update_budget(&mut budget, &s));
    }
    // The same update when no stage can take the nominal finish, each scan
    // for another reason on every stage: a failed discharge temperature
    // sensor (bad), a stopped machine (the first stage's measured flow,
    // which the others inherit, at zero: below the stationary flow), and a
    // discharge temperature equal to the suction temperature (no rise: an
    // implausible efficiency). Every stage then takes the general finish
    // (out of line); the largest of the three is the most a scan of this
    // train costs on the paths measured here.
    for (i, raw) in SCANS.iter().skip(10).take(3).enumerate() {
        let mut s = budget_scan(black_box(raw));
        for st in s.stages.iter_mut() {
            match i {
                0 => st.discharge_temperature.quality = Quality::Bad,
                1 => {
                    if st.mass_flow.is_some() {
                        st.mass_flow = Some(Measured::good(0.0));
                    }
                }
                _ => st.discharge_temperature = st.suction_temperature,
            }
        }
        let s = black_box(s);
        let r = label(h, "update_4_stages_3_intercoolers_general");
        measure(r, || update_budget(&mut budget, &s));
    }
}

/// `Train::new` of the demo train, in its own frame.
#[inline(never)]
fn measure_train_new(h: &mut Host, label: &mut impl FnMut(&mut Host, &str) -> u32) {
    let Ok(config) = demo::config::<f32>() else {
        fail(h, "demo config");
    };
    let r = label(h, "train_new_demo_5_stages");
    let cfg = black_box(config);
    let built = measure(r, || DemoTrain::<f32>::new(cfg).is_ok());
    black_box(built);
}

/// Surge margin (one SurgeMonitor::update with a settled rate filter) and the
/// signal front end (one 4-20 mA channel), warmed, three scans each, and
/// their stack high-water marks, in their own frame.
#[inline(never)]
fn measure_front_end(h: &mut Host, label: &mut impl FnMut(&mut Host, &str) -> u32) {
    let Ok(mut monitor) = front::surge_monitor() else {
        fail(h, "surge monitor");
    };
    let Ok(mut channel) = front::pressure_channel() else {
        fail(h, "pressure channel");
    };
    for k in 0..front::WARM_SCANS {
        update_surge(&mut monitor, &front::surge_scan(k));
        let (raw, t) = front::raw_sample(k);
        update_channel(&mut channel, raw, t);
    }
    for k in front::WARM_SCANS..front::WARM_SCANS + 3 {
        let s = black_box(front::surge_scan(k));
        let r = label(h, "surge_margin_update");
        measure(r, || update_surge(&mut monitor, &s));
        let (raw, t) = black_box(front::raw_sample(k));
        let r = label(h, "signal_channel_4_20ma");
        measure(r, || update_channel(&mut channel, raw, t));
    }
    // The same monitor with σ from the measured temperatures, filter settled.
    let Ok(mut measured) = front::surge_monitor_measured() else {
        fail(h, "surge monitor (measured exponent)");
    };
    for k in 0..front::WARM_SCANS_EXPONENT {
        update_surge(&mut measured, &front::surge_scan(k));
    }
    for k in front::WARM_SCANS_EXPONENT..front::WARM_SCANS_EXPONENT + 3 {
        let s = black_box(front::surge_scan(k));
        let r = label(h, "surge_margin_update_measured_exponent");
        measure(r, || update_surge(&mut measured, &s));
    }
    if !measured.state().margin.quality.is_good() {
        fail(h, "measured-exponent margin not good after warm-up");
    }
    let margin = monitor.state().margin;
    let filtered = channel.output().filtered;
    if !(margin.quality.is_usable() && filtered.quality.is_usable()) {
        fail(h, "surge margin or channel not usable after warm-up");
    }
    let s = black_box(front::surge_scan(20));
    let used = stack_used(|| {
        update_surge(&mut monitor, &s);
    });
    out!(h, "S stack_surge_margin_update {}", used);
    let (raw, t) = black_box(front::raw_sample(20));
    let used = stack_used(|| {
        update_channel(&mut channel, raw, t);
    });
    out!(h, "S stack_signal_channel_4_20ma {}", used);
}

/// One compressor stage on a property table (both measured states, the
/// entropy-matched isentropic state, heads, polytropic efficiency), the
/// table's own `stage`.
#[inline(never)]
fn table_stage(gas: &TableGas<'_, f32>, p1: f32, t1: f32, p2: f32, t2: f32) -> f32 {
    let s = gas.stage(p1, t1, p2, t2);
    s.polytropic_efficiency.value + s.isentropic_head.value
}

#[cfg(target_abi = "eabihf")]
#[inline(never)]
fn update_budget_table(t: &mut BudgetTrainTable<'_>, s: &Scan<f32, BUDGET_STAGES>) -> f32 {
    t.update(s).totals.total_power.value
}

/// The GERG-2008 table model: one stage on the natural-gas table in flash
/// (the table's own `stage`, then the train's `evaluate_compressor_into`
/// through the gas seam, default polytropic method); on Cortex-M4F also the
/// CO2 table decoded from its blob (61 kB of RAM), its stages and the
/// 4-stage, 3-intercooler budget train on it, with its stack. In a frame of
/// its own.
#[inline(never)]
fn measure_tables(h: &mut Host, label: &mut impl FnMut(&mut Host, &str) -> u32) {
    let g = |x: f32| Measured::new(x, Quality::Good);
    // Invented natural-gas booster stage: 40 -> 80 bar a, 300 -> 365 K.
    let Ok(ng) = TableGas::<f32>::new(black_box(NG_BOOSTER)) else {
        fail(h, "NG table");
    };
    for k in 0..3 {
        let (a, b, c, d) = black_box((40e5_f32, 300.0_f32 + k as f32, 80e5_f32, 365.0_f32));
        let r = label(h, "table_stage_ng_booster");
        let v = measure(r, || table_stage(&ng, a, b, c, d));
        if v.partial_cmp(&0.0) != Some(core::cmp::Ordering::Greater) {
            fail(h, "NG table stage");
        }
    }
    let inputs = black_box(CompressorInputs {
        suction_pressure: g(40e5),
        suction_temperature: g(300.0),
        discharge_pressure: g(80e5),
        discharge_temperature: g(365.0),
        mass_flow: g(11.5),
        compressibility: None,
    });
    let ng_ref = black_box(&ng);
    let r = label(h, "compressor_stage_table_ng_booster");
    let mut res = CompressorResult::bad();
    measure(r, || evaluate_compressor_into(ng_ref, &inputs, &mut res));
    if res.polytropic_efficiency.quality != Quality::Good {
        fail(h, "NG table stage through the seam");
    }
    #[cfg(target_abi = "eabihf")]
    {
        let Ok(co2_table) = PropertyTable::<1100, 1800>::from_blob(black_box(CO2_DEMO_BLOB)) else {
            fail(h, "CO2 table blob");
        };
        let Ok(co2) = TableGas::<f32>::new(co2_table.data()) else {
            fail(h, "CO2 table");
        };
        // The demo CO2 train's stage 3 (9 -> 26 bar a) and stage 4 (25.6 ->
        // 66 bar a), invented scenario.
        for (a, b, c, d) in [
            (9.0e5_f32, 308.0_f32, 26.0e5_f32, 400.0_f32),
            (25.6e5, 309.0, 66.0e5, 385.0),
        ] {
            let (a, b, c, d) = black_box((a, b, c, d));
            let r = label(h, "table_stage_co2_demo");
            let v = measure(r, || table_stage(&co2, a, b, c, d));
            if v.partial_cmp(&0.0) != Some(core::cmp::Ordering::Greater) {
                fail(h, "CO2 table stage");
            }
        }
        let Some(cfg) = budget_config(co2) else {
            fail(h, "budget config table");
        };
        let Ok(mut train) = BudgetTrainTable::new(cfg) else {
            fail(h, "budget train table");
        };
        for raw in SCANS.iter().take(10) {
            update_budget_table(&mut train, &budget_scan(black_box(raw)));
        }
        for raw in SCANS.iter().skip(10).take(3) {
            let s = black_box(budget_scan(black_box(raw)));
            let r = label(h, "update_4_stages_3_intercoolers_table");
            measure(r, || update_budget_table(&mut train, &s));
        }
        let s = black_box(budget_scan(black_box(&SCANS[13])));
        let used = stack_used(|| {
            update_budget_table(&mut train, &s);
        });
        out!(h, "S stack_update_4_stages_3_intercoolers_table {}", used);
    }
}

/// The register image: one pack of the demo snapshot, a warmed surge
/// monitor's state and a channel's output, and its stack high-water mark, in
/// a frame of its own.
#[inline(never)]
fn measure_register_pack(h: &mut Host, label: &mut impl FnMut(&mut Host, &str) -> u32) {
    let Ok(mut demo_train) = demo::train::<f32>() else {
        fail(h, "demo train");
    };
    for raw in SCANS.iter().take(10) {
        update_demo(&mut demo_train, &decode_scan(black_box(raw)));
    }
    let Ok(mut monitor) = front::surge_monitor() else {
        fail(h, "surge monitor");
    };
    let Ok(mut channel) = front::pressure_channel() else {
        fail(h, "pressure channel");
    };
    for k in 0..front::WARM_SCANS {
        update_surge(&mut monitor, &front::surge_scan(k));
        let (raw, t) = front::raw_sample(k);
        update_channel(&mut channel, raw, t);
    }
    let mut image = front::Image::new(polytrope::registers::WordOrder::HighWordFirst, 1);
    let view = polytrope::registers::SurgeView {
        state: *monitor.state(),
        detection: front::quiet_detection(),
    };
    let outputs = [*channel.output()];
    for _ in 0..3 {
        let snap = black_box(demo_train.snapshot());
        let r = label(h, "register_pack_demo");
        measure(r, || pack(&mut image, snap, &view, &outputs));
    }
    let snap = black_box(*demo_train.snapshot());
    let used = stack_used(|| {
        pack(&mut image, &snap, &view, &outputs);
    });
    out!(h, "S stack_register_pack {}", used);
    out!(h, "S register_image_registers {}", image.registers().len());
    out!(
        h,
        "S register_image_bytes {}",
        core::mem::size_of::<front::Image>()
    );
}

#[entry]
fn main() -> ! {
    let mut h = Host(hio::hstdout().ok());
    out!(h, "polytrope firmware harness (invented demo scenario)");

    // 1. Outputs over the committed scans, for the host comparison.
    print_outputs(&mut h);

    // 2. Measured regions (instruction-count plugin). Region 0 is empty: its
    //    count is the marker overhead the script subtracts. Each section
    //    runs in a frame of its own so that the Cortex-M0 board's 16 KiB
    //    hold the largest one, not their sum.
    // The single-stage, cooler and budget-train regions use the ideal gas
    // (CO2, constant k, Z = 1 or a supplied Z); the Peng-Robinson stage and
    // train are measured separately.
    let Ok(gas) = IdealGas::<f32>::from_spec(&CO2_IDEAL, false, 1.0) else {
        fail(&mut h, "ideal co2");
    };
    let raw = black_box(&SCANS[12]);
    let scan = decode_scan::<f32, { demo::STAGES }>(raw);
    let mut region = 0_u32;
    let mut label = |h: &mut Host, name: &str| {
        out!(h, "M {} {}", region, name);
        region += 1;
        region - 1
    };

    measure_single_stages(&mut h, &mut label, &gas, &scan);
    measure_trains(&mut h, &mut label, gas);
    measure_peng_robinson_train(&mut h, &mut label);
    measure_train_new(&mut h, &mut label);
    measure_front_end(&mut h, &mut label);
    measure_register_pack(&mut h, &mut label);
    measure_tables(&mut h, &mut label);

    // 3. State sizes.
    out!(
        h,
        "S state_demo_5_stages {}",
        core::mem::size_of::<DemoTrain<f32>>()
    );
    out!(
        h,
        "S state_4_stages_3_intercoolers {}",
        core::mem::size_of::<BudgetTrain>()
    );
    out!(
        h,
        "S snapshot_demo_5_stages {}",
        core::mem::size_of::<Snapshot<f32, 5>>()
    );
    out!(
        h,
        "S scan_demo_5_stages {}",
        core::mem::size_of::<Scan<f32, 5>>()
    );
    out!(h, "END ok");
    polytrope_firmware::exit(true)
}

#[panic_handler]
fn panic(info: &core::panic::PanicInfo) -> ! {
    let mut h = Host(hio::hstdout().ok());
    out!(h, "PANIC {}", info);
    polytrope_firmware::exit(false)
}
