//! Edge inputs through `Train::update`: zero, negative, NaN, ±infinity,
//! subnormal and huge values, discharge below suction, cooler outlet above
//! inlet, missing flow; on the invented demo train (`polytrope::demo`) and
//! a two-stage air train. The update must never panic, every number in the
//! snapshot must stay finite (a bad value reads 0), the affected results
//! must degrade and the unaffected ones stay good. Also: every
//! `ConfigError` variant of the train and gas configuration, each naming
//! its field.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

#[path = "reference/snapshot_fields.rs"]
mod snapshot_fields;

use polytrope::cooler::{CoolerCondition, CoolerConfig};
use polytrope::fields::StageInput;
use polytrope::gas::{GasModel, HeatCapacity, IdealGas, IdealGasConstantK, AIR, BUILTIN_GASES};
use polytrope::scan::{CoolerScan, Scan, StageScan};
use polytrope::stage::StageCondition;
use polytrope::steady::SteadyStateConfig;
use polytrope::train::{CompressorTrain, Snapshot, StageConfig, StageKind, Train, TrainConfig};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{ConfigError, Measured, Quality, Real};
use proptest::prelude::*;
use proptest::test_runner::{FileFailurePersistence, RngSeed};
use snapshot_fields::{assert_all_finite, fields, get};

type Air2<T> = Train<T, IdealGas<T>, 2, 4>;
type Air2Config = TrainConfig<f64, IdealGas<f64>, 2>;

fn air2_config<T: Real>() -> TrainConfig<T, IdealGas<T>, 2> {
    air2_config_on(IdealGas::from_spec(&AIR, true, T::ONE).unwrap())
}

/// The air train's stages on `gas`.
fn air2_config_on<T: Real, G>(gas: G) -> TrainConfig<T, G, 2> {
    let st = |a: f64, b: f64, cooled: bool| StageConfig {
        kind: StageKind::Compressor,
        design_suction_pressure: PressureAbs::from_pa(T::of(a)),
        design_discharge_pressure: PressureAbs::from_pa(T::of(b)),
        cooler: cooled.then(|| CoolerConfig {
            coolant_cp: T::of(4180.0),
        }),
    };
    TrainConfig {
        gas,
        stages: [st(1e5, 3e5, true), st(2.95e5, 9e5, false)],
        max_interstage_pressure_drop: T::of(0.1),
        steady_state: SteadyStateConfig::default(),
    }
}

fn air2<T: Real>() -> Air2<T> {
    Train::new(air2_config()).unwrap()
}

/// A consistent scan of the air train: flow measured at stage 0, cooler
/// with coolant outlet and flow after stage 0.
fn air2_scan<T: Real>() -> Scan<T, 2> {
    let g = |x: f64| Measured::good(T::of(x));
    let k = |x: f64| Measured::good(Kelvin::new(T::of(x)));
    let mut a = StageScan::from_si(T::of(1e5), T::of(300.0), T::of(3e5), T::of(445.0));
    a.mass_flow = Some(g(2.0));
    a.compressibility = Some(g(0.99));
    a.cooler = Some(CoolerScan {
        gas_outlet_temperature: k(308.0),
        gas_outlet_pressure: None,
        coolant_inlet_temperature: k(298.0),
        coolant_outlet_temperature: Some(k(306.0)),
        coolant_mass_flow: Some(g(6.0)),
    });
    let b = StageScan::from_si(T::of(2.95e5), T::of(308.0), T::of(9e5), T::of(460.0));
    Scan { stages: [a, b] }
}

fn edge_values<T: Real>() -> Vec<(&'static str, T)> {
    let subnormal = if core::mem::size_of::<T>() == 4 {
        T::of(1.0e-40)
    } else {
        T::of(5.0e-324)
    };
    vec![
        ("zero", T::ZERO),
        ("negative zero", T::of(-0.0)),
        ("negative", T::of(-350.0)),
        ("NaN", T::of(f64::NAN)),
        ("+inf", T::of(f64::INFINITY)),
        ("-inf", T::of(f64::NEG_INFINITY)),
        ("subnormal", subnormal),
        ("huge", T::of(1.0e30)),
        ("max", T::of(f64::from(f32::MAX))),
    ]
}

/// Every scalar input slot of the two-stage air scan, by name: each input
/// of stage 0 (its cooler's included) and the required inputs of stage 1,
/// from the kernel's input list.
fn set_slot<T: Real>(s: &mut Scan<T, 2>, slot: usize, v: T) -> String {
    let n = StageInput::ALL.len();
    let (stage, which) = if slot < n {
        (0, StageInput::ALL[slot])
    } else {
        (1, StageInput::ALL[slot - n])
    };
    s.stages[stage].set_input(which, Some(Measured::good(v)));
    format!("stage{stage}.{}", which.spec().name)
}
const SLOTS: usize = StageInput::ALL.len() + 4;

/// No result computed from a bad pressure ratio may be good.
fn ratio_consistency<T: Real, const N: usize>(s: &Snapshot<T, N>, context: &str) {
    for (i, st) in s.stages.iter().enumerate() {
        if let Some(c) = st.compressor() {
            if c.pressure_ratio.quality == Quality::Bad {
                for (n, m) in [
                    ("isentropic_head", c.isentropic_head),
                    ("polytropic_head", c.polytropic_head),
                    ("isothermal_head", c.isothermal_head),
                    ("polytropic_exponent", c.polytropic_exponent),
                    ("isentropic_efficiency", c.isentropic_efficiency),
                    ("polytropic_efficiency", c.polytropic_efficiency),
                ] {
                    assert_eq!(
                        m.quality,
                        Quality::Bad,
                        "{context}: stage{i}.{n} with a bad pressure ratio"
                    );
                }
            }
        }
    }
}

fn every_slot_every_edge<T: Real>() -> usize {
    let mut runs = 0;
    for slot in 0..SLOTS {
        for (what, v) in edge_values::<T>() {
            let mut train = air2::<T>();
            let mut scan = air2_scan::<T>();
            let name = set_slot(&mut scan, slot, v);
            // Several scans: the steady-state windows carry state.
            for _ in 0..5 {
                let snap = train.update(&scan);
                let ctx = format!("{name} = {what}");
                assert_all_finite(&fields(snap), &ctx);
                ratio_consistency(snap, &ctx);
                runs += 1;
            }
            // A good scan afterwards recovers fully: no lost state.
            let good = *train.update(&air2_scan());
            let c0 = good.stages[0].compressor().unwrap();
            assert_eq!(c0.isentropic_efficiency.quality, Quality::Good, "{name}");
            assert_eq!(good.totals.compressor_power.quality, Quality::Good);
        }
    }
    runs
}

#[test]
fn air_train_survives_every_edge_value_in_every_slot_f32() {
    assert_eq!(every_slot_every_edge::<f32>(), SLOTS * 9 * 5);
}

#[test]
fn air_train_survives_every_edge_value_in_every_slot_f64() {
    assert_eq!(every_slot_every_edge::<f64>(), SLOTS * 9 * 5);
}

#[test]
fn demo_train_survives_edge_values() {
    for (what, v) in edge_values::<f32>() {
        for stage in 0..polytrope::demo::STAGES {
            for slot in 0..5 {
                let mut train = polytrope::demo::train::<f32>().unwrap();
                let mut scan = polytrope::demo::scan::<f32>(0);
                scan.stages[stage].set_input(StageInput::ALL[slot], Some(Measured::good(v)));
                for _ in 0..3 {
                    let snap = train.update(&scan);
                    let ctx = format!("demo stage{stage} slot {slot} = {what}");
                    assert_all_finite(&fields(snap), &ctx);
                    ratio_consistency(snap, &ctx);
                }
            }
        }
    }
}

fn good(fields: &[snapshot_fields::Field], name: &str) {
    assert_eq!(get(fields, name).quality, Quality::Good, "{name}");
}
fn bad(fields: &[snapshot_fields::Field], name: &str) {
    assert_eq!(get(fields, name).quality, Quality::Bad, "{name}");
}

#[test]
fn baseline_scan_is_all_good() {
    let mut t = air2::<f64>();
    let snap = *t.update(&air2_scan());
    let f = fields(&snap);
    for x in &f {
        // A train without pumps has no pump power: that total is bad.
        let want = if x.name == "totals.pump_power" {
            Quality::Bad
        } else {
            Quality::Good
        };
        assert_eq!(x.quality, want, "{}", x.name);
    }
}

#[test]
fn bad_suction_temperature_of_stage_1_degrades_only_what_uses_it() {
    let mut t = air2::<f64>();
    let mut s = air2_scan();
    set_slot(&mut s, 12, f64::NAN);
    let f = fields(t.update(&s));
    for n in [
        "stage1.isentropic_head",
        "stage1.actual_work",
        "stage1.isentropic_efficiency",
        "stage1.gas_power",
        "cooler0.next_stage_temperature_rise",
        "totals.compressor_work",
        "totals.compressor_power",
        "totals.isothermal_efficiency",
    ] {
        bad(&f, n);
    }
    for n in [
        "stage0.isentropic_head",
        "stage0.isentropic_efficiency",
        "stage0.gas_power",
        "cooler0.effectiveness",
        "cooler0.heat_duty",
        "cooler0.ua",
        "totals.isothermal_work",
        "totals.single_stage_isentropic_work",
        "interstage0.optimum",
    ] {
        good(&f, n);
    }
}

#[test]
fn missing_or_bad_flow_degrades_power_only() {
    for flow in [
        None,
        Some(Measured::good(f64::NAN)),
        Some(Measured::good(-1.0)),
    ] {
        let mut t = air2::<f64>();
        let mut s = air2_scan();
        s.stages[0].mass_flow = flow;
        let f = fields(t.update(&s));
        for n in [
            "stage0.gas_power",
            "stage1.gas_power",
            "stage0.power_above_isothermal",
            "cooler0.heat_duty",
            "cooler0.ua",
            "totals.compressor_power",
            "totals.total_power",
        ] {
            bad(&f, n);
        }
        for n in [
            "stage0.isentropic_head",
            "stage0.actual_work",
            "stage0.isentropic_efficiency",
            "stage1.polytropic_efficiency",
            "cooler0.effectiveness",
            "cooler0.lmtd",
            "totals.compressor_work",
            "totals.isothermal_efficiency",
        ] {
            good(&f, n);
        }
    }
}

#[test]
fn discharge_below_suction_is_no_compression() {
    let mut t = air2::<f64>();
    let mut s = air2_scan();
    set_slot(&mut s, 2, 0.9e5);
    let snap = *t.update(&s);
    let c0 = snap.stages[0].compressor().unwrap();
    assert_eq!(c0.condition, StageCondition::NoCompression);
    assert_eq!(c0.pressure_ratio.quality, Quality::Good);
    assert!(c0.pressure_ratio.value < 1.0);
    let f = fields(&snap);
    bad(&f, "stage0.isentropic_head");
    // The work from the temperature rise does not use the pressures, but a
    // rise without compression makes it suspect (issue 11).
    assert_eq!(get(&f, "stage0.actual_work").quality, Quality::Uncertain);
    good(&f, "stage1.isentropic_head");
    good(&f, "stage1.isentropic_efficiency");
    // The cooler's gas-side pressure drop goes negative: flagged, not bad.
    assert_eq!(get(&f, "cooler0.pressure_drop").quality, Quality::Uncertain);
}

#[test]
fn cooler_outlet_above_inlet_is_flagged() {
    let mut t = air2::<f64>();
    let mut s = air2_scan();
    set_slot(&mut s, 6, 460.0);
    let snap = *t.update(&s);
    let c = snap.coolers[0].unwrap();
    assert_eq!(c.condition, CoolerCondition::OutletAboveInlet);
    let f = fields(&snap);
    assert_eq!(
        get(&f, "cooler0.gas_temperature_drop").quality,
        Quality::Uncertain
    );
    bad(&f, "cooler0.effectiveness");
    bad(&f, "cooler0.heat_duty");
    good(&f, "stage0.isentropic_efficiency");
    good(&f, "stage1.isentropic_efficiency");
}

#[test]
fn bad_first_suction_pressure_degrades_train_references() {
    for v in [0.0, -1.0, f64::NAN, f64::INFINITY, 1e30] {
        let mut t = air2::<f64>();
        let mut s = air2_scan();
        set_slot(&mut s, 0, v);
        let snap = *t.update(&s);
        let f = fields(&snap);
        bad(&f, "stage0.pressure_ratio");
        bad(&f, "totals.overall_pressure_ratio");
        bad(&f, "totals.isothermal_work");
        // The interstage entry exists; its optimum uses the bad pressure,
        // its measured value does not (issue 11: quality follows use).
        let entry = snap.interstage[0].expect("entry for every stage but the last");
        assert_eq!(entry.optimum.quality, Quality::Bad, "{v}");
        assert_eq!(entry.deviation.quality, Quality::Bad, "{v}");
        assert_eq!(entry.measured.quality, Quality::Good, "{v}");
        good(&f, "stage1.isentropic_head");
        good(&f, "stage1.isentropic_efficiency");
        good(&f, "cooler0.effectiveness");
    }
}

#[test]
fn input_quality_propagates() {
    // An uncertain discharge temperature makes the stage's efficiency
    // uncertain, never good. With this cp(T) gas the isentropic head's k is
    // the mean over the measured path, so it uses T2 and is uncertain too
    // (issue 11: it used to stay good); the isothermal head does not use T2.
    let mut t = air2::<f64>();
    let mut s = air2_scan();
    s.stages[0].discharge_temperature.quality = Quality::Uncertain;
    let f = fields(t.update(&s));
    assert_eq!(
        get(&f, "stage0.isentropic_efficiency").quality,
        Quality::Uncertain
    );
    assert_eq!(
        get(&f, "stage0.isentropic_head").quality,
        Quality::Uncertain
    );
    good(&f, "stage0.isothermal_head");
    good(&f, "stage0.pressure_ratio");
    // A bad-quality value is not used even if its number is plausible.
    let mut s = air2_scan();
    s.stages[0].suction_temperature.quality = Quality::Bad;
    let f = fields(t.update(&s));
    bad(&f, "stage0.isentropic_head");
    bad(&f, "totals.isothermal_work");
}

// ---- configuration errors: each variant names its field ----

fn err_of<const N: usize>(cfg: TrainConfig<f64, IdealGas<f64>, N>) -> ConfigError {
    Train::<f64, _, N, 4>::new(cfg).map(|_| ()).unwrap_err()
}

fn compressor(p1: f64, p2: f64) -> StageConfig<f64> {
    StageConfig {
        kind: StageKind::Compressor,
        design_suction_pressure: PressureAbs::from_pa(p1),
        design_discharge_pressure: PressureAbs::from_pa(p2),
        cooler: None,
    }
}

fn pump(p1: f64, p2: f64, density: f64, efficiency: f64) -> StageConfig<f64> {
    StageConfig {
        kind: StageKind::Pump {
            density,
            efficiency,
        },
        ..compressor(p1, p2)
    }
}

#[test]
fn every_configuration_error_names_its_field() {
    let gas_err = |m: f64, hc: HeatCapacity<f64>, z: f64| IdealGas::new(m, hc, z).unwrap_err();
    let k14 = HeatCapacity::ConstantK(1.4);
    let base = air2_config::<f64>();
    let with = |f: &dyn Fn(&mut Air2Config)| {
        let mut c = base;
        f(&mut c);
        err_of(c)
    };
    // (error, field path, index, text the message must contain)
    let cases: Vec<(ConfigError, &str, Option<u16>, &str)> = vec![
        (
            gas_err(0.0, k14, 1.0),
            "gas.molar_mass",
            None,
            "gas.molar_mass",
        ),
        (
            gas_err(f64::NAN, k14, 1.0),
            "gas.molar_mass",
            None,
            "finite",
        ),
        (
            gas_err(28.0, HeatCapacity::ConstantK(1.0), 1.0),
            "gas.k",
            None,
            "gas.k: must be in [1, 1.67]",
        ),
        (
            gas_err(28.0, HeatCapacity::ConstantK(f64::INFINITY), 1.0),
            "gas.k",
            None,
            "gas.k",
        ),
        (
            gas_err(
                28.0,
                HeatCapacity::Polynomial {
                    coefficients: [29.0, 0.0, 0.0, 0.0],
                    t_min: 500.0,
                    t_max: 300.0,
                },
                1.0,
            ),
            "gas.cp_polynomial.t_max",
            None,
            "above gas.cp_polynomial.t_min",
        ),
        (
            gas_err(28.0, k14, 2.5),
            "gas.compressibility",
            None,
            "[0.05, 2]",
        ),
        (
            gas_err(28.0, k14, -0.1),
            "gas.compressibility",
            None,
            "gas.compressibility",
        ),
        (
            with(&|c| c.stages[1].design_suction_pressure = PressureAbs::from_pa(f64::NAN)),
            "stages.design_suction_pressure",
            Some(1),
            "stages[1].design_suction_pressure",
        ),
        (
            with(&|c| c.stages[0].design_discharge_pressure = PressureAbs::from_pa(0.5e5)),
            "stages.design_discharge_pressure",
            Some(0),
            "stages[0].design_discharge_pressure",
        ),
        (
            with(&|c| c.stages[1].design_suction_pressure = PressureAbs::from_pa(3.5e5)),
            "stages.design_suction_pressure",
            Some(1),
            "stages[1].design_suction_pressure",
        ),
        (
            with(&|c| c.stages[1].design_suction_pressure = PressureAbs::from_pa(2.0e5)),
            "stages.design_suction_pressure",
            Some(1),
            "stages[1].design_suction_pressure",
        ),
        (
            with(&|c| c.max_interstage_pressure_drop = 0.95),
            "max_interstage_pressure_drop",
            None,
            "max_interstage_pressure_drop: must be in [0, 0.9]",
        ),
        (
            with(&|c| c.stages[1] = pump(2.95e5, 9e5, 0.0, 0.7)),
            "stages.pump.density",
            Some(1),
            "stages[1].pump.density",
        ),
        (
            with(&|c| c.stages[1] = pump(2.95e5, 9e5, 800.0, 1.5)),
            "stages.pump.efficiency",
            Some(1),
            "stages[1].pump.efficiency",
        ),
        (
            with(&|c| c.stages[0] = pump(1e5, 3e5, 800.0, 0.7)),
            "stages.kind",
            Some(1),
            "stages[1].kind",
        ),
        (
            with(&|c| {
                c.stages[0].cooler = Some(CoolerConfig {
                    coolant_cp: -4180.0,
                });
            }),
            "stages.cooler.coolant_cp",
            Some(0),
            "stages[0].cooler.coolant_cp",
        ),
        (
            with(&|c| c.steady_state.max_ratio_spread = 0.0),
            "steady_state.max_ratio_spread",
            None,
            "steady_state.max_ratio_spread",
        ),
        (
            with(&|c| c.steady_state.max_temperature_spread = f64::NAN),
            "steady_state.max_temperature_spread",
            None,
            "steady_state.max_temperature_spread",
        ),
        (
            err_of(TrainConfig {
                gas: base.gas,
                stages: [pump(1e5, 3e5, 800.0, 0.7)],
                max_interstage_pressure_drop: 0.1,
                steady_state: SteadyStateConfig::default(),
            }),
            "stages",
            None,
            "compressor stage",
        ),
    ];
    for (got, field, index, text) in cases {
        assert_eq!((got.field, got.index), (field, index), "{got:?}");
        let shown = got.to_string();
        assert!(shown.contains(text), "{got:?}: '{shown}' lacks '{text}'");
    }
    // The base configuration itself is valid, in both builds.
    assert!(Train::<f64, _, 2, 4>::new(base).is_ok());
    assert!(Train::<f32, _, 2, 4>::new(air2_config::<f32>()).is_ok());
}

/// `Train::new_in` (built in place) is `Train::new`: the same refusal for a
/// bad configuration, and for a good one the same configuration, limits and
/// snapshot before the first scan and after a scan, and the same whole state
/// (compared through `Debug`: the steady-state detectors' staggered windows
/// too) (consistency check of the two constructors; f32 and f64).
#[test]
fn new_in_builds_what_new_builds() {
    fn same<T: Real + core::fmt::Debug>(cfg: TrainConfig<T, IdealGas<T>, 2>, scan: &Scan<T, 2>) {
        let mut slot = core::mem::MaybeUninit::uninit();
        match (Air2::<T>::new(cfg), Air2::<T>::new_in(&mut slot, cfg)) {
            (Ok(mut a), Ok(b)) => {
                assert_eq!(a.config(), b.config());
                assert_eq!(a.limits(), b.limits());
                assert_eq!(a.snapshot(), b.snapshot());
                assert_eq!(format!("{a:?}"), format!("{b:?}"));
                assert_eq!(a.update(scan), b.update(scan));
            }
            (Err(a), Err(b)) => assert_eq!(a, b),
            (a, b) => panic!("new: {:?}, new_in: {:?}", a.err(), b.err()),
        }
    }
    same(air2_config::<f32>(), &air2_scan::<f32>());
    same(air2_config::<f64>(), &air2_scan::<f64>());
    let scan = air2_scan::<f64>();
    let mut bad = air2_config::<f64>();
    bad.stages[1].design_suction_pressure = PressureAbs::from_pa(f64::NAN);
    same(bad, &scan);
    let mut bad = air2_config::<f64>();
    bad.stages[0] = pump(1e5, 3e5, 800.0, 0.7);
    same(bad, &scan);
    let mut bad = air2_config::<f64>();
    bad.steady_state.max_ratio_spread = 0.0;
    same(bad, &scan);
}

/// A train type without pump stages (`CompressorTrain`, `PUMPS = false`)
/// refuses a pump stage, naming the stage's kind and its index, from both
/// constructors; the same configuration builds a default `Train`, so the
/// refusal is the type's.
#[test]
fn a_compressor_train_refuses_a_pump_stage() {
    let mut cfg = air2_config::<f64>();
    cfg.stages[1] = pump(2.95e5, 9e5, 800.0, 0.7);
    assert!(Train::<f64, _, 2, 4>::new(cfg).is_ok());
    let e = CompressorTrain::<f64, _, 2, 4>::new(cfg)
        .map(|_| ())
        .unwrap_err();
    assert_eq!((e.field, e.index), ("stages.kind", Some(1)), "{e:?}");
    assert!(e.to_string().contains("without pump stages"), "{e}");
    let mut slot = core::mem::MaybeUninit::uninit();
    let e2 = CompressorTrain::<f64, _, 2, 4>::new_in(&mut slot, cfg)
        .map(|_| ())
        .unwrap_err();
    assert_eq!(e, e2);
    // A compressor-only configuration builds both.
    assert!(CompressorTrain::<f64, _, 2, 4>::new(air2_config()).is_ok());
}

/// The constant-k gas type (`IdealGasConstantK`, `CP_POLYNOMIAL = false`)
/// is the default `IdealGas` with a constant k: for every built-in gas and
/// supplied Z (none, usable, unusable) the same state functions, path
/// properties, compression states, cooler enthalpy drop, isothermal work
/// and validity over a grid that includes invalid pressures and
/// temperatures (compared through `Debug`, which shows every finite value
/// exactly), and the same refusals (consistency check of the
/// `CP_POLYNOMIAL` parameter: it removes code, not behaviour).
#[test]
fn the_constant_k_gas_type_is_the_constant_k_ideal_gas() {
    let pressures = [f64::NAN, -1.0, 0.0, 1e3, 1e5, 3e6, 2e7, f64::INFINITY];
    let temps = [f64::NAN, 0.0, 60.0, 250.0, 300.0, 450.0, 3000.0];
    let mut compared = 0;
    for spec in BUILTIN_GASES {
        for z in [0.93, 1.0] {
            let a = IdealGas::<f64>::from_spec(&spec, false, z).unwrap();
            let b = IdealGasConstantK::<f64>::constant_k_from_spec(&spec, z).unwrap();
            assert_eq!(format!("{a:?}"), format!("{b:?}"), "{}", spec.name);
            assert_eq!(a.property_inputs(), b.property_inputs());
            for &p1 in &pressures {
                for &t1 in &temps {
                    for zs in [None, Some(0.9), Some(f64::NAN)] {
                        let same = |x: String, y: String| {
                            assert_eq!(x, y, "{} {p1} {t1} {zs:?}", spec.name)
                        };
                        same(
                            format!("{:?}", a.state(p1, t1, zs)),
                            format!("{:?}", b.state(p1, t1, zs)),
                        );
                        for &p2 in &pressures[3..7] {
                            let ln_r = (p2 / p1).ln();
                            for t2 in [None, Some(t1 + 40.0)] {
                                same(
                                    format!("{:?}", a.compression(p1, t1, p2, ln_r, t2, zs)),
                                    format!("{:?}", b.compression(p1, t1, p2, ln_r, t2, zs)),
                                );
                            }
                            same(
                                format!("{:?}", a.path(p1, t1, p2, t1 + 40.0, zs)),
                                format!("{:?}", b.path(p1, t1, p2, t1 + 40.0, zs)),
                            );
                            same(
                                format!("{:?}", a.enthalpy_drop(p2, t1 + 40.0, p1, t1, zs)),
                                format!("{:?}", b.enthalpy_drop(p2, t1 + 40.0, p1, t1, zs)),
                            );
                            same(
                                format!("{:?}", a.isothermal_work(p1, p2, ln_r, t1, zs)),
                                format!("{:?}", b.isothermal_work(p1, p2, ln_r, t1, zs)),
                            );
                            compared += 1;
                        }
                        assert_eq!(a.fit_quality(t1, t1 + 40.0), b.fit_quality(t1, t1 + 40.0));
                    }
                }
            }
        }
    }
    assert!(compared > 1000, "{compared}");
    // The same refusals, naming the same fields.
    for (m, k, z) in [
        (0.0, 1.4, 1.0),
        (28.0, 1.0, 1.0),
        (28.0, 2.99, 1.0),
        (28.0, 1.4, 2.5),
        (f64::NAN, 1.4, 1.0),
    ] {
        assert_eq!(
            IdealGas::<f64>::new(m, HeatCapacity::ConstantK(k), z).map(|_| ()),
            IdealGasConstantK::<f64>::constant_k(m, k, z).map(|_| ()),
            "{m} {k} {z}"
        );
    }
    assert!(IdealGasConstantK::<f64>::constant_k(28.0, 1.4, 1.0).is_ok());
}

/// Before the first scan every stage's result is the all-bad result of its
/// kind (the demo train ends in a pump), its steady state unknown, and
/// every configured cooler (and only those) has an all-bad result
/// (consistency check of the constructor's in-place initial snapshot).
#[test]
fn snapshot_before_the_first_scan_follows_the_configuration() {
    use polytrope::cooler::CoolerResult;
    use polytrope::stage::{CompressorResult, PumpResult};
    use polytrope::steady::SteadyState;
    let t = polytrope::demo::train::<f64>().unwrap();
    let snap = t.snapshot();
    let mut pumps = 0;
    for ((r, c), s) in snap
        .stages
        .iter()
        .zip(snap.coolers.iter())
        .zip(t.config().stages.iter())
    {
        match s.kind {
            StageKind::Compressor => assert_eq!(r.compressor(), Some(&CompressorResult::bad())),
            StageKind::Pump { .. } => {
                pumps += 1;
                assert_eq!(r.pump(), Some(&PumpResult::bad()));
            }
        }
        assert_eq!(r.steady_state, SteadyState::unknown());
        assert_eq!(*c, s.cooler.map(|_| CoolerResult::bad()));
    }
    assert_eq!(pumps, 1);
}

/// A gas model replaced between scans through `Train::gas_mut` (here a
/// constant k for a cp(T) polynomial and back, which changes the model's
/// property inputs and so the stages' dependency table) grades every later
/// scan as a train built on the new model from the start (fed the same
/// scans: the steady-state windows hold readings only). Consistency check
/// (the train against itself): the scans make each input of each stage
/// uncertain in turn, so a table not rebuilt after the replacement shows
/// in the qualities; it fails if `gas_mut` does not mark the model touched.
#[test]
fn a_gas_model_replaced_between_scans_grades_as_a_train_built_on_it() {
    let polynomial = IdealGas::<f32>::from_spec(&AIR, true, 1.0).unwrap();
    let constant_k = IdealGas::<f32>::from_spec(&AIR, false, 1.0).unwrap();
    assert_ne!(polynomial.property_inputs(), constant_k.property_inputs());
    let mut scans = vec![air2_scan::<f32>()];
    for stage in 0..2 {
        for w in StageInput::ALL {
            let mut s = air2_scan::<f32>();
            if let Some(m) = s.stages[stage].input(w) {
                s.stages[stage].set_input(w, Some(Measured::new(m.value, Quality::Uncertain)));
                scans.push(s);
                scans.push(air2_scan());
            }
        }
    }
    assert!(scans.len() > 20, "{} scans", scans.len());
    for (from, to) in [(constant_k, polynomial), (polynomial, constant_k)] {
        let mut replaced = Train::<f32, _, 2, 4>::new(air2_config_on(from)).unwrap();
        let mut built = Train::<f32, _, 2, 4>::new(air2_config_on(to)).unwrap();
        let (before, after) = scans.split_at(3);
        for scan in before {
            replaced.update(scan);
            built.update(scan);
        }
        *replaced.gas_mut() = to;
        for (i, scan) in after.iter().enumerate() {
            let (x, y) = (*replaced.update(scan), built.update(scan));
            for (x, y) in fields(&x).iter().zip(fields(y).iter()) {
                assert_eq!(x.name, y.name);
                assert_eq!(x.value.to_bits(), y.value.to_bits(), "scan {i}: {}", x.name);
                assert_eq!(x.quality, y.quality, "scan {i}: {}", x.name);
            }
        }
    }
}

/// Runs both trains over `scans` and requires bit-identical snapshots after
/// each (every field's value bits and quality, and the whole snapshot
/// through `Debug`).
fn same_snapshots<A: GasModel<f32>, B: GasModel<f32>, const P: bool, const Q: bool>(
    mut a: Train<f32, A, 2, 4, P>,
    mut b: Train<f32, B, 2, 4, Q>,
    scans: &[Scan<f32, 2>],
) -> Result<(), TestCaseError> {
    for scan in scans {
        let (x, y) = (fields(a.update(scan)), fields(b.update(scan)));
        prop_assert_eq!(x.len(), y.len());
        for (x, y) in x.iter().zip(y.iter()) {
            prop_assert_eq!(&x.name, &y.name);
            prop_assert_eq!(x.value.to_bits(), y.value.to_bits(), "{}", x.name);
            prop_assert_eq!(x.quality, y.quality, "{}", x.name);
        }
        prop_assert_eq!(format!("{:?}", a.snapshot()), format!("{:?}", b.snapshot()));
    }
    Ok(())
}

// ---- arbitrary bit patterns ----

fn quality_of(q: u8) -> Quality {
    match q % 3 {
        0 => Quality::Good,
        1 => Quality::Uncertain,
        _ => Quality::Bad,
    }
}

/// An f32 scan (demo-shaped where the demo train takes it) whose every
/// number is an arbitrary bit pattern.
fn wild_scan<const N: usize>(bits: &[u32], q: &[u8]) -> Scan<f32, N> {
    let mut i = 0;
    let mut next = || {
        let v = (
            f32::from_bits(bits[i % bits.len()]),
            quality_of(q[i % q.len()]),
        );
        i += 1;
        v
    };
    Scan {
        stages: core::array::from_fn(|_| {
            let mut m = || {
                let (v, qq) = next();
                Measured::new(v, qq)
            };
            let values: Vec<Measured<f32>> = (0..StageInput::ALL.len()).map(|_| m()).collect();
            let present = m().value.to_bits();
            // The four required inputs always; each optional one (the
            // cooler's gas outlet temperature: the cooler scan) by a bit.
            StageScan::from_inputs(|w| {
                let i = w.index();
                (i < 4 || present & (1 << (i - 4)) != 0).then(|| values[i])
            })
        }),
    }
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: 600,
        rng_seed: RngSeed::Fixed(0x6564_6765_5f62_6974),
        failure_persistence: Some(Box::new(FileFailurePersistence::WithSource("proptest-regressions"))),
        ..ProptestConfig::default()
    })]

    /// Arbitrary f32 bit patterns (NaNs with payloads, subnormals, ±0,
    /// infinities, anything) in every input of the demo train, over three
    /// scans: no panic, nothing non-finite.
    #[test]
    fn arbitrary_bit_patterns_through_the_demo_train(
        bits in proptest::collection::vec(any::<u32>(), 90),
        q in proptest::collection::vec(any::<u8>(), 90),
        shift in 0usize..90,
    ) {
        let mut train = polytrope::demo::train::<f32>().unwrap();
        for s in 0..3 {
            let mut b = bits.clone();
            b.rotate_left((shift * s) % 90);
            let scan = wild_scan(&b, &q);
            let snap = train.update(&scan);
            let f = fields(snap);
            for x in &f {
                prop_assert!(x.value.is_finite(), "{} = {}", x.name, x.value);
                if x.quality == Quality::Bad {
                    prop_assert_eq!(x.value, 0.0, "{}", x.name);
                }
            }
        }
        // And the train still works on good data afterwards.
        let snap = train.update(&polytrope::demo::scan::<f32>(0));
        prop_assert_eq!(
            snap.stages[0].compressor().unwrap().isentropic_efficiency.quality,
            Quality::Good
        );
    }

    /// A train without pump stages (`CompressorTrain`) gives the snapshot of
    /// the default `Train` (`PUMPS = true`) of the same configuration, bit
    /// for bit, and so does one on the constant-k gas type
    /// (`IdealGasConstantK`) against the default gas with the same constant
    /// k, over scans that mix the good air-train scan, arbitrary bit
    /// patterns in every input and in one slot (consistency check of the
    /// `PUMPS` and `CP_POLYNOMIAL` parameters: they remove code, not
    /// behaviour).
    #[test]
    fn a_compressor_train_gives_the_general_trains_snapshot(
        bits in proptest::collection::vec(any::<u32>(), 40),
        q in proptest::collection::vec(any::<u8>(), 40),
        slot in 0usize..SLOTS,
    ) {
        let mut one_wild = air2_scan::<f32>();
        set_slot(&mut one_wild, slot, f32::from_bits(bits[0]));
        let scans = [air2_scan(), wild_scan(&bits, &q), one_wild, air2_scan()];
        // A cp(T) polynomial: the default train and the train without pump
        // stages.
        same_snapshots(
            air2::<f32>(),
            CompressorTrain::<f32, _, 2, 4>::new(air2_config()).unwrap(),
            &scans,
        )?;
        // A constant k: the default train and gas, and the train without
        // pump stages on the constant-k gas type (the controller's form).
        let k_gas = IdealGas::from_spec(&AIR, false, 1.0).unwrap();
        let k_type = IdealGasConstantK::constant_k_from_spec(&AIR, 1.0).unwrap();
        same_snapshots(
            Train::<f32, _, 2, 4>::new(air2_config_on(k_gas)).unwrap(),
            CompressorTrain::<f32, _, 2, 4>::new(air2_config_on(k_type)).unwrap(),
            &scans,
        )?;
    }

    /// Mixed: a good demo scan with arbitrary bit patterns in a few slots
    /// (closer to a single failing transmitter).
    #[test]
    fn a_few_wild_values_in_a_good_demo_scan(
        slots in proptest::collection::vec((0usize..5, 0usize..4, any::<u32>()), 1..4),
    ) {
        let mut train = polytrope::demo::train::<f32>().unwrap();
        let mut scan = polytrope::demo::scan::<f32>(7);
        for (stage, slot, b) in &slots {
            let v = f32::from_bits(*b);
            let s = &mut scan.stages[*stage];
            let w = StageInput::ALL[*slot];
            let q = s.input(w).map_or(Quality::Good, |m| m.quality);
            s.set_input(w, Some(Measured::new(v, q)));
        }
        for _ in 0..2 {
            let snap = train.update(&scan);
            let f = fields(snap);
            for x in &f {
                prop_assert!(x.value.is_finite(), "{} = {}", x.name, x.value);
            }
            ratio_consistency(snap, "wild slots");
        }
    }
}
