//! A generated 100,000-row log replayed by `polytrope-host replay` and
//! compared row by row with the kernel called directly: the test builds the
//! train, the surge monitor and the unit conversions itself from the
//! starter file's numbers (read with `toml`), so the host's file reading,
//! column mapping, units, blank-cell handling and CSV writing are all
//! checked against an independent path. This is a consistency check of the
//! host against the kernel (not an outside reference).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::collections::HashMap;

use polytrope::cooler::CoolerConfig;
use polytrope::gas::{IdealGas, AIR};
use polytrope::scan::{CoolerScan, Scan, StageScan};
use polytrope::steady::SteadyStateConfig;
use polytrope::surge::{
    MapConditions, MonitorConfig, SurgeLine, SurgeLineConfig, SurgeMonitor, SurgePoint, SurgeScan,
};
use polytrope::train::{StageConfig, StageKind, Train, TrainConfig};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{Measured, Quality, Real};

use common::ok;

const ROWS: usize = 100_000;
const ATM: f64 = 101_300.0; // the starter's "1013 mbara"

fn bara(v: &toml::Value) -> f64 {
    let t = v.as_str().unwrap();
    t.strip_suffix("bara")
        .unwrap()
        .trim()
        .parse::<f64>()
        .unwrap()
        * 1e5
}

struct Kernel<T: Real> {
    train: Train<T, IdealGas<T>, 3, 8>,
    monitor: SurgeMonitor<T, 8>,
}

fn kernel<T: Real>(starter: &toml::Value) -> Kernel<T> {
    let stages = starter["stage"].as_array().unwrap();
    let cfg = TrainConfig {
        gas: IdealGas::from_spec(&AIR, true, T::ONE).unwrap(),
        stages: core::array::from_fn(|i| StageConfig {
            kind: StageKind::Compressor,
            design_suction_pressure: PressureAbs::from_pa(T::of(bara(
                &stages[i]["design_suction"],
            ))),
            design_discharge_pressure: PressureAbs::from_pa(T::of(bara(
                &stages[i]["design_discharge"],
            ))),
            cooler: Some(CoolerConfig {
                coolant_cp: T::of(4180.0),
            }),
        }),
        max_interstage_pressure_drop: T::of(0.1),
        steady_state: SteadyStateConfig {
            max_temperature_spread: T::of(1.0),
            max_ratio_spread: T::of(0.01),
            max_flow_spread: T::of(0.02),
        },
    };
    let surge = &stages[0]["surge"];
    let points: Vec<SurgePoint<T>> = surge["points"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| SurgePoint {
            speed_rpm: T::of(p["speed_rpm"].as_integer().unwrap() as f64),
            suction_volume_flow: T::of(p["flow_m3_per_s"].as_float().unwrap()),
            pressure_ratio: T::of(p["pressure_ratio"].as_float().unwrap()),
            control_margin: T::of(p["control_margin"].as_float().unwrap()),
        })
        .collect();
    let line = SurgeLine::new(&SurgeLineConfig {
        points: &points,
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(T::of(bara(&surge["map_suction_pressure"]))),
            suction_temperature: Kelvin::new(T::of(20.0 + 273.15)),
            molar_mass: T::of(AIR.molar_mass),
            compressibility: T::ONE,
        },
        polytropic_exponent: T::of(surge["polytropic_exponent"].as_float().unwrap()),
        flow_coefficient: T::of(surge["flow_coefficient_m2"].as_float().unwrap()),
    })
    .unwrap();
    Kernel {
        train: Train::new(cfg).unwrap(),
        monitor: SurgeMonitor::new(
            line,
            MonitorConfig {
                scan_period: T::ONE,
                time_to_surge_horizon: T::of(60.0),
                rate_filter_time: T::of(2.0),
            },
        )
        .unwrap(),
    }
}

/// A cell as the host must read it: blank, non-numeric or outside the
/// starter's [limits] -> None.
fn cell(
    row: &csv::StringRecord,
    h: &HashMap<String, usize>,
    name: &str,
    a: f64,
    b: f64,
    lo: f64,
    hi: f64,
) -> Option<f64> {
    let x: f64 = row.get(h[name])?.trim().parse().ok()?;
    let si = a + b * x;
    (x.is_finite() && (lo..=hi).contains(&si)).then_some(si)
}

fn m<T: Real>(v: Option<f64>) -> Measured<T> {
    v.map_or(Measured::bad(), |x| Measured::good(T::of(x)))
}

/// One kernel step on a log row; returns (column, value, quality) for the compared results.
fn step<T: Real>(
    k: &mut Kernel<T>,
    row: &csv::StringRecord,
    h: &HashMap<String, usize>,
) -> Vec<(String, f64, Quality)> {
    let (p_lo, p_hi) = (0.1e5, 100e5);
    let (t_lo, t_hi) = (233.15, 523.15);
    let p_abs = |n: &str| cell(row, h, n, 0.0, 1e5, p_lo, p_hi);
    let p_g = |n: &str| cell(row, h, n, ATM, 1e5, p_lo, p_hi);
    let t = |n: &str| cell(row, h, n, 273.15, 1.0, t_lo, t_hi);
    let stages: [StageScan<T>; 3] = core::array::from_fn(|i| {
        let s = i + 1;
        StageScan {
            suction_pressure: m::<T>(p_abs(&format!("s{s}_p_in"))).map(PressureAbs::from_pa),
            suction_temperature: m::<T>(t(&format!("s{s}_t_in"))).map(Kelvin::new),
            discharge_pressure: m::<T>(p_g(&format!("s{s}_p_out"))).map(PressureAbs::from_pa),
            discharge_temperature: m::<T>(t(&format!("s{s}_t_out"))).map(Kelvin::new),
            mass_flow: (s == 1).then(|| m(cell(row, h, "s1_flow", 0.0, 1.0 / 3.6, 0.0, 50.0))),
            compressibility: None,
            cooler: Some(CoolerScan {
                gas_outlet_temperature: m::<T>(t(&format!("c{s}_t_gas_out"))).map(Kelvin::new),
                gas_outlet_pressure: None,
                coolant_inlet_temperature: m::<T>(t(&format!("c{s}_t_water_in"))).map(Kelvin::new),
                coolant_outlet_temperature: Some(
                    m::<T>(t(&format!("c{s}_t_water_out"))).map(Kelvin::new),
                ),
                coolant_mass_flow: None,
            }),
        }
    });
    let snap = *k.train.update(&Scan { stages });
    let dp = row
        .get(h["s1_dp_flow"])
        .and_then(|x| x.trim().parse::<f64>().ok())
        .filter(|x| x.is_finite())
        .map(|x| x * 100.0);
    let margin = k.monitor.update(
        &SurgeScan::pressures_only(
            m::<T>(p_abs("s1_p_in")).map(PressureAbs::from_pa),
            m::<T>(p_g("s1_p_out")).map(PressureAbs::from_pa),
            m(dp),
        ),
        T::ZERO,
        T::ONE,
    );
    let mut out = Vec::new();
    let mut put = |name: String, v: Measured<T>| out.push((name, v.value.to_f64(), v.quality));
    for (i, st) in snap.stages.iter().enumerate() {
        let c = st.compressor().unwrap();
        put(format!("s{}_pressure_ratio", i + 1), c.pressure_ratio);
        put(
            format!("s{}_polytropic_efficiency", i + 1),
            c.polytropic_efficiency,
        );
        put(format!("s{}_gas_power_W", i + 1), c.gas_power);
        put(
            format!("c{}_approach_K", i + 1),
            snap.coolers[i].unwrap().approach,
        );
    }
    put("train_total_power_W".into(), snap.totals.total_power);
    put("s1_surge_margin".into(), margin.margin);
    out
}

fn quality(word: &str) -> Quality {
    match word {
        "good" => Quality::Good,
        "uncertain" => Quality::Uncertain,
        "bad" => Quality::Bad,
        other => panic!("quality word {other}"),
    }
}

#[test]
fn replay_of_100k_rows_matches_the_kernel_row_by_row() {
    let dir = std::env::temp_dir().join(format!("polytrope-replay-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let train = dir.join("air3.toml");
    let log = dir.join("log.csv");
    let results = dir.join("results.csv");
    let rows = ROWS.to_string();
    let (t, l, r) = (
        train.to_str().unwrap(),
        log.to_str().unwrap(),
        results.to_str().unwrap(),
    );
    ok(&[
        "new-train",
        "--stages",
        "3",
        "-o",
        t,
        "--example-log",
        l,
        "--rows",
        &rows,
    ]);
    let summary = ok(&[
        "replay",
        t,
        l,
        "-o",
        r,
        "--quiet",
        "--json",
        "--fields",
        "pressure_ratio,polytropic_efficiency,gas_power_W,approach_K,total_power_W,surge_margin",
    ]);
    let s: serde_json::Value = serde_json::from_str(&summary).unwrap();
    assert_eq!(s["rows"].as_u64(), Some(ROWS as u64));
    // The generator writes one short row at a third of the log.
    assert_eq!(s["replayed"].as_u64(), Some(ROWS as u64 - 1));
    let malformed = s["malformed"].as_array().unwrap();
    assert_eq!(malformed.len(), 1);
    assert_eq!(malformed[0]["line"].as_u64(), Some(ROWS as u64 / 3 + 2));

    let starter: toml::Value = toml::from_str(&std::fs::read_to_string(&train).unwrap()).unwrap();
    let mut k32 = kernel::<f32>(&starter);
    let mut k64 = kernel::<f64>(&starter);
    let mut logr = csv::Reader::from_path(&log).unwrap();
    let lh: HashMap<String, usize> = logr
        .headers()
        .unwrap()
        .iter()
        .enumerate()
        .map(|(i, n)| (n.to_string(), i))
        .collect();
    let mut resr = csv::Reader::from_path(&results).unwrap();
    let rh: HashMap<String, usize> = resr
        .headers()
        .unwrap()
        .iter()
        .enumerate()
        .map(|(i, n)| (n.to_string(), i))
        .collect();
    let mut res = resr.records();
    let (mut compared, mut bad_seen) = (0usize, 0usize);
    let mut log_rows = csv::ReaderBuilder::new()
        .flexible(true)
        .from_path(&log)
        .unwrap();
    for rec in log_rows.records() {
        let rec = rec.unwrap();
        if rec.len() != lh.len() {
            continue; // the malformed row: skipped by the host too
        }
        let line = rec.position().unwrap().line();
        let out = res
            .next()
            .expect("a result row per replayed log row")
            .unwrap();
        assert_eq!(out[rh["line"]].parse::<u64>().unwrap(), line);
        let a32 = step(&mut k32, &rec, &lh);
        let a64 = step(&mut k64, &rec, &lh);
        for ((name, v32, q32), (_, v64, q64)) in a32.iter().zip(&a64) {
            let got_q = quality(&out[rh[&format!("{name}_quality")]]);
            assert_eq!(got_q, *q32, "line {line} {name} quality");
            let cell32 = &out[rh[name.as_str()]];
            let cell64 = &out[rh[&format!("{name}_f64")]];
            if *q32 == Quality::Bad {
                assert!(
                    cell32.is_empty(),
                    "line {line} {name}: bad value written as '{cell32}'"
                );
                bad_seen += 1;
            } else {
                // f32 exactly as the device build computed it (written in its shortest form).
                assert_eq!(
                    cell32.parse::<f32>().unwrap(),
                    *v32 as f32,
                    "line {line} {name} f32"
                );
            }
            if *q64 != Quality::Bad {
                assert_eq!(
                    cell64.parse::<f64>().unwrap(),
                    *v64,
                    "line {line} {name} f64"
                );
            } else {
                assert!(cell64.is_empty());
            }
            compared += 1;
        }
    }
    assert!(res.next().is_none(), "more result rows than log rows");
    assert_eq!(compared, 14 * (ROWS - 1), "{compared}");
    // The generated blanks and spikes reached the kernel as bad inputs.
    assert!(bad_seen > 100, "{bad_seen}");
    let _ = std::fs::remove_dir_all(&dir);
}
