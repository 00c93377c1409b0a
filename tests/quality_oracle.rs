//! The dependency rule and physical plausibility, checked by perturbation
//! over every input slot of the demo train (an invented scenario: four
//! compressor stages with water intercoolers and a dense-phase pump).
//!
//! The rule (issue 11): an output's quality is the worst of exactly the
//! inputs and intermediate results it uses, and no more; a good output is
//! physically plausible. This file states, independently of the kernel's
//! own table (`polytrope::dependency`), which scan slots each output may
//! depend on, from the physics of each equation, for three gas models on the
//! demo scans: a constant-k ideal gas (the gas properties depend on no
//! measurement), a cp(T) ideal gas, and the demo's own Peng–Robinson CO2
//! (every property depends on the state, p and T). Every gas model has a
//! validity range over the states (an ideal gas at high reduced pressure,
//! near-critical, liquid-like), so the states are quality deps of every
//! output that uses the model:
//!
//! * perturb one slot (to a bad or uncertain quality, an implausible value or
//!   a small plausible change);
//! * every output that does not use the slot keeps its value and quality
//!   bit for bit; an output that uses the slot only through a plausibility
//!   check (its quality may change) keeps its value unless it became bad;
//! * every output that uses a slot that went bad, uncertain or implausible
//!   is not good;
//! * every good output is physically plausible (efficiencies in (0, 1] with
//!   the stated rounding allowance, positive heads, n > 1, effectiveness in
//!   [0, 1], non-negative duty and UA, temperature rise and ratio above the
//!   stated instrument resolution before efficiencies are good, positive
//!   flow before the work and efficiencies are good).
//!
//! Fixed seed, bounded case count (CI); `POLYTROPE_ORACLE_CASES` raises it.
//! The counts of each kind of violation are printed (the before and
//! after figures come from this run).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

#[path = "../ci/firmware/src/codec.rs"]
#[allow(dead_code)]
mod codec;

use codec::{decode_scan, encode_stage, RawStage, ABSENT, FIELDS};
use polytrope::demo;
use polytrope::fields::{FieldValue, Group, StageInput};
use polytrope::gas::{IdealGas, CARBON_DIOXIDE};
use polytrope::quality::{Measured, Quality};
use polytrope::train::{Snapshot, Train, TrainConfig};

const F_P1: usize = StageInput::SuctionPressure.index();
const F_T1: usize = StageInput::SuctionTemperature.index();
const F_P2: usize = StageInput::DischargePressure.index();
const F_T2: usize = StageInput::DischargeTemperature.index();
const F_FLOW: usize = StageInput::MassFlow.index();
const F_Z: usize = StageInput::Compressibility.index();
const F_TOUT: usize = StageInput::CoolerGasOutletTemperature.index();
const F_POUT: usize = StageInput::CoolerGasOutletPressure.index();
const F_TCIN: usize = StageInput::CoolantInletTemperature.index();
const F_TCOUT: usize = StageInput::CoolantOutletTemperature.index();
const F_MC: usize = StageInput::CoolantMassFlow.index();

const N: usize = demo::STAGES;
/// Compressor stages of the demo train (the pump is stage 4).
const NC: usize = 4;

// ---- stated limits (physical reasoning, not the kernel's numbers) ------

/// An efficiency may exceed 1 by this much from rounding alone (f64 build:
/// a few ulps of the quotient; the kernel's stated allowance is tighter).
const ETA_ROUNDING: f64 = 1e-6;
/// Temperatures a process sensor on a gas compressor train can read, K
/// (below 60 K nothing but hydrogen and helium is a gas at these pressures;
/// above 1000 K no compressor discharge; common practice).
const T_RANGE: (f64, f64) = (60.0, 1000.0);
/// Absolute pressures, Pa (1 mbar to 1000 MPa; common practice).
const P_RANGE: (f64, f64) = (100.0, 1.0e9);
/// Largest plausible pressure ratio of one stage (common practice; a
/// bar-as-Pa slip gives 1e5).
const MAX_STAGE_RATIO: f64 = 50.0;
/// Plausible compressibility factor range (common practice).
const Z_RANGE: (f64, f64) = (0.05, 2.0);

// ---- slots --------------------------------------------------------------

type Slot = (usize, usize); // (stage, field)

/// A set of slots as a bitmask over stage * FIELDS + field.
#[derive(Clone, Copy, Default, PartialEq, Debug)]
struct Set(u64);
impl Set {
    fn of(stage: usize, fields: &[usize]) -> Set {
        let mut s = Set(0);
        for &f in fields {
            s.0 |= 1 << (stage * FIELDS + f);
        }
        s
    }
    fn or(self, o: Set) -> Set {
        Set(self.0 | o.0)
    }
    fn has(self, (stage, f): Slot) -> bool {
        self.0 & (1 << (stage * FIELDS + f)) != 0
    }
}

/// The flow slot every stage uses (stage 0 measures it; the others inherit).
fn flow() -> Set {
    Set::of(0, &[F_FLOW])
}

/// Gas models the oracle runs: CO2 as a constant-k ideal gas, CO2 with its
/// cp(T) polynomial (k and cp depend on the path temperatures), and the demo
/// train's own Peng–Robinson CO2.
#[derive(Clone, Copy, PartialEq, Debug)]
enum Model {
    ConstantK,
    CpPolynomial,
    PengRobinson,
}

std::thread_local! {
    /// This thread's gas model.
    static MODEL: std::cell::Cell<Model> = const { std::cell::Cell::new(Model::ConstantK) };
}

fn model() -> Model {
    MODEL.with(|m| m.get())
}

/// Compressor outputs computed from the gas model's states (their quality
/// takes the model's validity over the four states).
const MODEL_OUTPUTS: [&str; 14] = [
    "isentropic_discharge_temperature",
    "isentropic_head",
    "polytropic_head",
    "isothermal_head",
    "actual_work",
    "isentropic_efficiency",
    "polytropic_efficiency",
    "polytropic_exponent",
    "gas_power",
    "work_above_isothermal",
    "power_above_isothermal",
    "compressibility",
    "k",
    "gas_validity",
];

/// (value deps, quality-only deps) of one output of stage `i` of the demo
/// train (stages 0-3 compressors, 4 the pump).
fn deps(name: &str, i: usize) -> (Set, Set) {
    let (v, q) = deps_model(name, i);
    let states = Set::of(i, &[F_P1, F_P2, F_T1, F_T2]);
    if i != NC && MODEL_OUTPUTS.contains(&name) {
        return (v, q.or(states));
    }
    (v, q)
}

/// The value deps by gas model (before the validity range).
fn deps_model(name: &str, i: usize) -> (Set, Set) {
    let (v, q) = deps_constant_k(name, i);
    let s = |f: &[usize]| Set::of(i, f);
    match model() {
        Model::ConstantK => (v, q),
        // With cp(T), k is the mean over the measured path T1..T2: whatever
        // uses k (the isentropic discharge temperature and head) uses T2 too.
        Model::CpPolynomial if i != NC => match name {
            "isentropic_discharge_temperature" | "isentropic_head" => (v.or(s(&[F_T2])), q),
            "k" => (s(&[F_T1, F_T2]), q),
            _ => (v, q),
        },
        Model::CpPolynomial => (v, q),
        // Peng–Robinson: Z, h, s and v are functions of (p, T); no supplied
        // Z. The pump's suction density comes from the model at (P1, T1).
        Model::PengRobinson if i == NC => match name {
            "density" => (s(&[F_P1, F_T1]), none()),
            "reversible_work" | "shaft_work" | "power" | "work_ratio_to_gas" => {
                (v.or(s(&[F_P1, F_T1])), q)
            }
            _ => (v, q),
        },
        Model::PengRobinson => match name {
            "isentropic_discharge_temperature" | "isentropic_head" | "isothermal_head" => {
                (s(&[F_P1, F_P2, F_T1]), q)
            }
            "compressibility" => (s(&[F_P1, F_T1]), q),
            "k" => (s(&[F_P1, F_P2, F_T1]), q),
            "actual_work"
            | "gas_power"
            | "polytropic_head"
            | "work_above_isothermal"
            | "power_above_isothermal" => (v.or(s(&[F_P1, F_P2, F_T1, F_T2])), q),
            _ => (v, q),
        },
    }
}

fn none() -> Set {
    Set(0)
}

fn deps_constant_k(name: &str, i: usize) -> (Set, Set) {
    let s = |f: &[usize]| Set::of(i, f);
    let none = Set(0);
    let steady = ["steady", "samples", "temperature_spread", "ratio_spread"];
    if steady.contains(&name) {
        // The detector uses the ratio, T2 and the flow.
        return (none, s(&[F_P1, F_P2, F_T2]).or(flow()));
    }
    if i == NC {
        // The pump.
        return match name {
            "pressure_ratio" | "pressure_rise" | "reversible_work" | "shaft_work" => {
                (s(&[F_P1, F_P2]), none)
            }
            "mass_flow" => (flow(), none),
            "power" => (s(&[F_P1, F_P2]).or(flow()), none),
            "gas_compression_equivalent" | "work_ratio_to_gas" => (s(&[F_P1, F_P2, F_T1]), none),
            "condition" => (none, s(&[F_P1, F_P2]).or(flow())),
            _ => (none, none),
        };
    }
    // The consistency checks of a compressor stage (efficiency <= 1, n > 1,
    // resolution, machine running) use all four states and the flow.
    let checks = s(&[F_P1, F_P2, F_T1, F_T2]).or(flow());
    match name {
        "pressure_ratio" => (s(&[F_P1, F_P2]), none),
        "isentropic_discharge_temperature" => (s(&[F_P1, F_P2, F_T1]), none),
        "temperature_rise" => (s(&[F_T1, F_T2]), none),
        "isentropic_head" | "isothermal_head" => (s(&[F_P1, F_P2, F_T1, F_Z]), none),
        "polytropic_head" | "work_above_isothermal" => (s(&[F_P1, F_P2, F_T1, F_T2, F_Z]), flow()),
        "actual_work" => (s(&[F_T1, F_T2, F_Z]), checks),
        "isentropic_efficiency" | "polytropic_efficiency" | "polytropic_exponent" => {
            (s(&[F_P1, F_P2, F_T1, F_T2]), flow())
        }
        "mass_flow" => (flow(), none),
        "gas_power" => (s(&[F_T1, F_T2, F_Z]).or(flow()), checks),
        "power_above_isothermal" => (s(&[F_P1, F_P2, F_T1, F_T2, F_Z]).or(flow()), none),
        "compressibility" => (s(&[F_Z]), none),
        "k" => (none, none),
        "condition" => (none, s(&[F_P1, F_P2, F_T1, F_T2, F_Z]).or(flow())),
        _ => (none, none),
    }
}

/// Cooler i (after stage i): its gas inlet is stage i's discharge; without
/// a measured outlet pressure, the next stage's suction pressure.
fn cooler_deps(name: &str, i: usize) -> (Set, Set) {
    let c = |f: &[usize]| Set::of(i, f);
    let none = Set(0);
    let p_out = Set::of(i, &[F_P2]).or(Set::of(i + 1, &[F_P1]));
    // Duty from the gas model's enthalpy drop between the inlet (P2, T2) and
    // outlet states (its Z is the stage's; its validity over both states is
    // a quality dep; Peng–Robinson's enthalpy uses the pressures too).
    let duty = match model() {
        Model::PengRobinson => c(&[F_T2, F_TOUT]).or(flow()).or(p_out),
        _ => c(&[F_T2, F_TOUT, F_Z]).or(flow()),
    };
    let validity = c(&[F_T2, F_TOUT]).or(p_out);
    let lmtd = c(&[F_T2, F_TOUT, F_TCIN, F_TCOUT]);
    match name {
        "gas_temperature_drop" => (c(&[F_T2, F_TOUT]), none),
        "approach" => (c(&[F_TOUT, F_TCIN]), none),
        "effectiveness" => (c(&[F_T2, F_TOUT, F_TCIN]), none),
        "heat_duty" => (duty, validity),
        "pressure_drop" | "relative_pressure_drop" => (p_out, none),
        "coolant_temperature_rise" => (c(&[F_TCIN, F_TCOUT]), none),
        "lmtd" => (lmtd, none),
        "ua" => (duty.or(lmtd), validity),
        "heat_balance_error" => (duty.or(lmtd).or(c(&[F_MC])), validity),
        "next_stage_temperature_rise" => {
            if i + 1 < NC {
                (Set::of(i + 1, &[F_T1, F_T2]), none)
            } else {
                (none, none) // a pump follows: not applicable
            }
        }
        "condition" => (
            none,
            duty.or(lmtd)
                .or(p_out)
                .or(c(&[F_MC]))
                .or(Set::of(i, &[F_P2])),
        ),
        _ => (none, none),
    }
}

fn union(f: impl Fn(usize) -> (Set, Set)) -> (Set, Set) {
    (0..NC).fold((Set(0), Set(0)), |(a, b), i| {
        let (x, y) = f(i);
        (a.or(x), b.or(y))
    })
}

fn interstage_deps(name: &str, i: usize) -> (Set, Set) {
    let first_last = Set::of(0, &[F_P1]).or(Set::of(NC - 1, &[F_P2]));
    match name {
        "measured" => (Set::of(i, &[F_P2]), Set(0)),
        "optimum" => (first_last, Set(0)),
        "deviation" => (first_last.or(Set::of(i, &[F_P2])), Set(0)),
        _ => (Set(0), Set(0)),
    }
}

fn totals_deps(name: &str) -> (Set, Set) {
    let first_last = Set::of(0, &[F_P1]).or(Set::of(NC - 1, &[F_P2]));
    let zs = union(|i| (Set::of(i, &[F_Z]), Set(0))).0;
    let refs = first_last.or(Set::of(0, &[F_T1])).or(zs);
    let work = union(|i| deps("actual_work", i));
    let power = union(|i| deps("gas_power", i));
    let pump = deps("power", NC);
    let staged = union(|i| deps("isentropic_head", i));
    match name {
        "overall_pressure_ratio" => (first_last, Set(0)),
        "compressor_work" => work,
        "compressor_power" => power,
        "pump_power" => pump,
        "total_power" => (power.0.or(pump.0), power.1.or(pump.1)),
        "isothermal_work"
        | "single_stage_isentropic_work"
        | "ideal_staged_isentropic_work"
        | "ideal_staging_saving" => (refs, Set(0)),
        "isothermal_efficiency" => (refs.or(work.0), work.1),
        "measured_staged_isentropic_work" => staged,
        "staging_saving" => (refs.or(staged.0), staged.1),
        _ => (Set(0), Set(0)),
    }
}

// ---- running the train ---------------------------------------------------

#[derive(Clone, Debug)]
struct O {
    section: u8, // 0 stage, 1 cooler, 2 interstage, 3 totals, 4 snapshot
    idx: usize,
    name: &'static str,
    value: f64,
    quality: Quality,
    /// Exact outputs (flags, counts, condition names).
    code: Option<String>,
}

/// Runs one scan through a fresh demo train: the f64 reference build, or
/// the f32 device build with `f32`.
fn run(raw: &[RawStage; N], f32: bool) -> Vec<O> {
    if f32 {
        run_in::<f32>(raw)
    } else {
        run_in::<f64>(raw)
    }
}

fn run_in<T: codec::FromF32>(raw: &[RawStage; N]) -> Vec<O> {
    let scan = decode_scan::<T, N>(raw);
    let mut out = Vec::new();
    let ideal = |cp_polynomial: bool| {
        let config = demo::config::<T>().unwrap();
        Train::<T, _, N, { demo::WINDOW }>::new(TrainConfig {
            gas: IdealGas::from_spec(&CARBON_DIOXIDE, cp_polynomial, T::ONE).unwrap(),
            stages: config.stages,
            max_interstage_pressure_drop: config.max_interstage_pressure_drop,
            steady_state: config.steady_state,
        })
        .unwrap()
    };
    match model() {
        Model::ConstantK => collect(ideal(false).update(&scan), &mut out),
        Model::CpPolynomial => collect(ideal(true).update(&scan), &mut out),
        Model::PengRobinson => collect(demo::train::<T>().unwrap().update(&scan), &mut out),
    }
    out
}

fn collect<T: codec::FromF32>(snap: &Snapshot<T, N>, out: &mut Vec<O>) {
    snap.visit_groups(&mut |g, spec, v| {
        let (section, idx) = match g {
            Group::Stage(i) => (0, usize::from(i)),
            Group::Cooler(i) => (1, usize::from(i)),
            Group::Interstage(i) => (2, usize::from(i)),
            Group::Totals => (3, 0),
            Group::Snapshot => (4, 0),
        };
        let (value, quality, code) = match v {
            FieldValue::Real(m) => (m.value.to_f64(), m.quality, None),
            FieldValue::Plain(x) => (x.to_f64(), Quality::Good, None),
            FieldValue::Flag(b) => (0.0, Quality::Good, Some(b.to_string())),
            FieldValue::Count(c) => (0.0, Quality::Good, Some(c.to_string())),
            FieldValue::Tag(t) => (0.0, Quality::Good, Some(t.to_string())),
        };
        out.push(O {
            section,
            idx,
            name: spec.name,
            value,
            quality,
            code,
        });
    });
}

fn deps_of(o: &O) -> (Set, Set) {
    match o.section {
        0 => deps(o.name, o.idx),
        1 => cooler_deps(o.name, o.idx),
        2 => interstage_deps(o.name, o.idx),
        3 => totals_deps(o.name),
        _ => (Set(0), Set(0)),
    }
}

fn base(i: u32) -> [RawStage; N] {
    demo::scan::<f64>(i).stages.map(|s| encode_stage(&s))
}

// ---- plausibility of a good output ---------------------------------------

fn value_of<'a>(outs: &'a [O], section: u8, idx: usize, name: &str) -> Option<&'a O> {
    outs.iter()
        .find(|o| o.section == section && o.idx == idx && o.name == name)
}

/// Why a good output is implausible, if it is.
fn implausible(o: &O, outs: &[O]) -> Option<&'static str> {
    if o.code.is_some() || o.quality != Quality::Good {
        return None;
    }
    let v = o.value;
    let eta = |v: f64| v > 0.0 && v <= 1.0 + ETA_ROUNDING;
    match o.name {
        "isentropic_efficiency" | "polytropic_efficiency" | "isothermal_efficiency" => {
            if !eta(v) {
                return Some("efficiency outside (0, 1]");
            }
            if o.section == 0 {
                // Resolution: a good efficiency needs a temperature rise and
                // ratio clear of the instrument accuracy (common practice:
                // an RTD of class A reads within 0.15 + 0.002|t| degC, IEC
                // 60751; a 0.1 %-of-reading transmitter).
                let rise = value_of(outs, 0, o.idx, "temperature_rise").map(|o| o.value);
                let ratio = value_of(outs, 0, o.idx, "pressure_ratio").map(|o| o.value);
                if rise.is_some_and(|r| r < 5.0) || ratio.is_some_and(|r| r < 1.014) {
                    return Some("efficiency good below instrument resolution");
                }
                let flow = value_of(outs, 0, o.idx, "mass_flow")
                    .filter(|o| o.quality != Quality::Bad)
                    .map(|o| o.value);
                if flow.is_some_and(|f| f <= 0.0) {
                    return Some("efficiency good at zero flow");
                }
            }
        }
        "effectiveness" if !(0.0..=1.0).contains(&v) => {
            return Some("effectiveness outside [0, 1]")
        }
        "isentropic_head"
        | "polytropic_head"
        | "isothermal_head"
        | "actual_work"
        | "isothermal_work"
        | "single_stage_isentropic_work"
        | "ideal_staged_isentropic_work"
        | "compressor_work"
        | "measured_staged_isentropic_work"
        | "pump_reversible_work"
        | "pump_shaft_work"
        | "pump_gas_equivalent"
            if v <= 0.0 =>
        {
            return Some("head or work not positive")
        }
        "work_above_isothermal" | "power_above_isothermal" | "gas_power" | "power" if v < 0.0 => {
            return Some("work above isothermal or power negative")
        }
        "polytropic_exponent" if v <= 1.0 => return Some("n not above 1"),
        "heat_duty" | "ua" if o.section == 1 && v < 0.0 => return Some("duty or UA negative"),
        "ua" if o.section == 1
            && value_of(outs, 0, 0, "mass_flow")
                .is_some_and(|f| f.quality != Quality::Bad && f.value <= 0.0) =>
        {
            return Some("UA good at zero gas flow")
        }
        "lmtd" if v <= 0.0 => return Some("LMTD not positive"),
        "pressure_rise" if v <= 0.0 => return Some("pump pressure rise not positive"),
        "pressure_ratio" if o.section == 0 && !(v > 0.0 && v <= MAX_STAGE_RATIO) => {
            return Some("stage ratio outside (0, 50]")
        }
        "isentropic_discharge_temperature" if !(T_RANGE.0..=2.0 * T_RANGE.1).contains(&v) => {
            return Some("isentropic discharge temperature implausible")
        }
        _ => {}
    }
    None
}

/// Whether a raw slot value is outside its physical range (the boundary
/// must then make it bad).
fn slot_implausible(field: usize, v: f32) -> bool {
    let v = f64::from(v);
    if !v.is_finite() {
        return true;
    }
    match field {
        F_P1 | F_P2 | F_POUT => !(P_RANGE.0..=P_RANGE.1).contains(&v),
        F_T1 | F_T2 | F_TOUT | F_TCIN | F_TCOUT => !(T_RANGE.0..=T_RANGE.1).contains(&v),
        F_FLOW | F_MC => !(0.0..=1e5).contains(&v),
        F_Z => !(Z_RANGE.0..=Z_RANGE.1).contains(&v),
        _ => false,
    }
}

// ---- the run --------------------------------------------------------------

struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        // xorshift64*
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
}

/// One perturbation of a slot: new value bits and quality code.
fn perturb(rng: &mut Rng, raw: &[RawStage; N], (s, f): Slot) -> (u32, u8) {
    let v = f32::from_bits(raw[s].bits[f]);
    let t1 = f32::from_bits(raw[s].bits[F_T1]);
    let p1 = f32::from_bits(raw[s].bits[F_P1]);
    let kinds: &[f32] = &[
        v,                               // quality change only
        v * 1.01,                        // plausible
        v * 0.99,                        // plausible
        1e-30,                           // underflow
        1e-40,                           // subnormal
        1e30,                            // overflow
        0.0,                             // zero
        -v,                              // negative
        f32::NAN,                        // not a number
        f32::INFINITY,                   // overflow
        v - 273.15,                      // degC passed as K
        v / 1e5,                         // Pa passed as bar
        v * 1e5,                         // bar passed as Pa
        v * 3.0,                         // spike
        v / 3.0,                         // dip
        t1 + 0.1,                        // a temperature next to suction
        p1 * 1.0001,                     // a pressure next to suction
        0.01,                            // a tiny Z or flow
        5.0,                             // a large Z
        v + 0.3,                         // inside RTD tolerance
        f32::from_bits(v.to_bits() + 1), // one ulp
    ];
    let nv = kinds[rng.below(kinds.len())];
    let q = match rng.below(6) {
        0 => 1,
        1 => 2,
        _ => 0,
    };
    (nv.to_bits(), q)
}

#[derive(Default, Debug)]
struct Counts {
    cases: u64,
    unrelated_changed: u64,
    check_dep_value_changed: u64,
    bad_input_dependent_good: u64,
    implausible_input_dependent_good: u64,
    totals_moved_by_bad_stage: u64,
    implausible_good: u64,
    first: Vec<String>,
}

fn oracle(cases: u64, seed: u64, f32: bool) -> Counts {
    let mut rng = Rng(seed);
    let mut c = Counts::default();
    let slots: Vec<Slot> = (0..N)
        .flat_map(|s| (0..FIELDS).map(move |f| (s, f)))
        .collect();
    let bases: Vec<[RawStage; N]> = [0, 150, 300, 450].iter().map(|&i| base(i)).collect();
    let base_out: Vec<Vec<O>> = bases.iter().map(|b| run(b, f32)).collect();
    let note = |c: &mut Counts, s: String| {
        if c.first.len() < 25 {
            c.first.push(s);
        }
    };
    for case in 0..cases {
        let b = rng.below(bases.len());
        let raw0 = &bases[b];
        let out0 = &base_out[b];
        // Every slot in turn (then random ones), skipping absent fields.
        let slot = slots[(case as usize) % slots.len()];
        if raw0[slot.0].q[slot.1] == ABSENT {
            continue;
        }
        c.cases += 1;
        let mut raw = *raw0;
        let (bits, q) = perturb(&mut rng, raw0, slot);
        raw[slot.0].bits[slot.1] = bits;
        raw[slot.0].q[slot.1] = q;
        let went_bad = q != 0 || slot_implausible(slot.1, f32::from_bits(bits));
        let implausible_value = slot_implausible(slot.1, f32::from_bits(bits));
        let out = run(&raw, f32);
        for o in &out {
            // Present in both runs (an absent interstage entry prints only
            // its presence code).
            let Some(o0) = out0
                .iter()
                .find(|x| (x.section, x.idx, x.name) == (o.section, o.idx, o.name))
            else {
                continue;
            };
            let (vd, qd) = deps_of(o);
            let same = o.value.to_bits() == o0.value.to_bits()
                && o.quality == o0.quality
                && o.code == o0.code;
            if !vd.has(slot) && !qd.has(slot) && !same {
                c.unrelated_changed += 1;
                if o.section == 2 && o.quality == Quality::Good {
                    c.totals_moved_by_bad_stage += u64::from(went_bad);
                }
                note(
                    &mut c,
                    format!(
                        "unrelated: slot {slot:?} -> {} q{q}: {} [{}] {} q{:?} -> {} q{:?}",
                        f32::from_bits(bits),
                        o.name,
                        o.idx,
                        o0.value,
                        o0.quality,
                        o.value,
                        o.quality
                    ),
                );
            } else if !vd.has(slot)
                && qd.has(slot)
                && (o.value.to_bits() != o0.value.to_bits()
                    || (o.quality == Quality::Bad && o0.quality != Quality::Bad))
            {
                // A check over the slot may make the output suspect
                // (uncertain); it never removes or changes its value.
                c.check_dep_value_changed += 1;
                note(
                    &mut c,
                    format!(
                        "check-only dep changed value: slot {slot:?} -> {}: {} [{}] {} -> {}",
                        f32::from_bits(bits),
                        o.name,
                        o.idx,
                        o0.value,
                        o.value
                    ),
                );
            } else if vd.has(slot) && went_bad && o.quality == Quality::Good && o.code.is_none() {
                if implausible_value {
                    c.implausible_input_dependent_good += 1;
                } else {
                    c.bad_input_dependent_good += 1;
                }
                note(
                    &mut c,
                    format!(
                        "dependent good: slot {slot:?} -> {} q{q}: {} [{}] = {}",
                        f32::from_bits(bits),
                        o.name,
                        o.idx,
                        o.value
                    ),
                );
            }
            if let Some(why) = implausible(o, &out) {
                c.implausible_good += 1;
                note(
                    &mut c,
                    format!(
                        "implausible good ({why}): slot {slot:?} -> {}: {} [{}] = {}",
                        f32::from_bits(bits),
                        o.name,
                        o.idx,
                        o.value
                    ),
                );
            }
        }
    }
    c
}

/// Runs the oracle with `default_cases` cases (or `POLYTROPE_ORACLE_CASES`),
/// prints the counts and the first findings, and asserts that none of the
/// rules was broken.
fn assert_oracle_clean(label: &str, default_cases: u64, seed: u64, f32: bool, min_cases: u64) {
    let cases = std::env::var("POLYTROPE_ORACLE_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(default_cases);
    let c = oracle(cases, seed, f32);
    eprintln!(
        "oracle {label}: {} cases; unrelated outputs changed {}; check-only deps changed a value {}; \
         bad/uncertain input, dependent output good {}; implausible input, dependent output \
         good {}; good totals moved by a bad stage {}; implausible good outputs {}",
        c.cases,
        c.unrelated_changed,
        c.check_dep_value_changed,
        c.bad_input_dependent_good,
        c.implausible_input_dependent_good,
        c.totals_moved_by_bad_stage,
        c.implausible_good
    );
    for l in &c.first {
        eprintln!("  {l}");
    }
    assert!(c.cases > min_cases);
    assert_eq!(
        (
            c.unrelated_changed,
            c.check_dep_value_changed,
            c.bad_input_dependent_good,
            c.implausible_input_dependent_good,
            c.implausible_good
        ),
        (0, 0, 0, 0, 0),
        "see the listing above"
    );
}

#[test]
fn every_slot_perturbed_quality_follows_use_and_good_is_plausible() {
    assert_oracle_clean("f64", 6_000, 0x5eed_0b5e_11ed_0011, false, 1000);
}

/// The same run on the f32 device build (fewer cases: the rule is the same
/// code; this catches a build-dependent threshold or finiteness slip).
#[test]
fn every_slot_perturbed_in_the_f32_build() {
    assert_oracle_clean("f32", 3_000, 0x5eed_0b5e_11ed_0f32, true, 500);
}

/// The same run with a cp(T) gas (CO2's polynomial), where k and cp use the
/// path temperatures.
#[test]
fn every_slot_perturbed_with_a_cp_polynomial_gas() {
    MODEL.with(|m| m.set(Model::CpPolynomial));
    assert_oracle_clean("cp(T)", 3_000, 0x5eed_0b5e_11ed_0c9e, false, 1000);
}

/// The same run on the demo train's own Peng–Robinson CO2 (every property
/// a function of the state; the pump's density from the model).
#[test]
fn every_slot_perturbed_with_the_peng_robinson_demo_gas() {
    MODEL.with(|m| m.set(Model::PengRobinson));
    assert_oracle_clean("Peng-Robinson", 3_000, 0x5eed_0b5e_11ed_0b12, false, 1000);
}

#[test]
fn the_base_scans_are_good_and_plausible() {
    // The oracle is only as strong as its base: the demo scans are fully
    // good (except outputs that do not apply) and plausible.
    for i in [0, 150, 300, 450] {
        let out = run(&base(i), false);
        for o in &out {
            assert!(implausible(o, &out).is_none(), "{} [{}]", o.name, o.idx);
        }
        let good = out
            .iter()
            .filter(|o| o.code.is_none() && o.quality == Quality::Good)
            .count();
        assert!(good > 80, "{good} good outputs");
    }
    let _ = Measured::good(1.0_f64);
}
