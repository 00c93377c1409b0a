//! The shipped GERG-2008 property tables (tables/*.bin) against CoolProp
//! 8.0.0's HEOS backend (committed vectors: tests/reference/
//! coolprop_tables.csv, generator tests/reference/gen_coolprop_tables.py).
//!
//! This measures GERG-2008 (through the `aga8` crate) against the
//! pure-fluid reference equations CoolProp uses (Span & Wagner for CO2,
//! Leachman for hydrogen, Span et al. for nitrogen, Lemmon et al.'s
//! pseudo-pure air) plus the tables' interpolation. For the natural gas
//! CoolProp mixes its pure-fluid equations with GERG-2008's departure
//! functions. The bounds are what the tables honestly do (measured, with a
//! small margin); the README quotes the measured values.

// A test crate: a failed expectation is a test failure.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use polytrope::gas::table::{PropertyTable, TableGas};
use polytrope::Quality;

const CSV: &str = include_str!("reference/coolprop_tables.csv");

const TABLES: [(&str, &[u8]); 7] = [
    ("ng_booster", include_bytes!("../tables/ng_booster.bin")),
    ("co2_demo", include_bytes!("../tables/co2_demo.bin")),
    ("co2_dense", include_bytes!("../tables/co2_dense.bin")),
    ("methane", include_bytes!("../tables/methane.bin")),
    ("hydrogen", include_bytes!("../tables/hydrogen.bin")),
    ("nitrogen", include_bytes!("../tables/nitrogen.bin")),
    ("air", include_bytes!("../tables/air.bin")),
];

/// Largest deviations allowed per table: Z relative; h − h₀ in J/kg; s − s₀
/// in J/(kg K); enthalpy rises between stage-like pairs of states
/// (pressure ratio 1.2 to 5, temperature up, at least 10 kJ/kg), relative.
const BOUNDS: [(&str, f64, f64, f64, f64); 7] = [
    ("ng_booster", 5e-4, 450.0, 1.0, 5e-3),
    ("co2_demo", 1e-3, 250.0, 0.7, 9e-3),
    ("co2_dense", 1e-3, 300.0, 0.9, 6e-3),
    ("methane", 4e-4, 550.0, 1.2, 6e-3),
    ("hydrogen", 6e-4, 3600.0, 11.0, 1.5e-3),
    ("nitrogen", 1.5e-4, 120.0, 0.3, 2e-3),
    ("air", 1.4e-3, 160.0, 1.6, 3.2e-3),
];

struct Row {
    p: f64,
    t: f64,
    z: f64,
    h: f64,
    s: f64,
}

fn rows(table: &str) -> Vec<Row> {
    CSV.lines()
        .skip(1)
        .filter_map(|line| {
            let f: Vec<&str> = line.split(',').collect();
            (f[0] == table).then(|| {
                let v = |i: usize| f[i].parse::<f64>().unwrap();
                Row {
                    p: v(1),
                    t: v(2),
                    z: v(3),
                    h: v(4),
                    s: v(5),
                }
            })
        })
        .collect()
}

#[test]
fn tables_agree_with_coolprop_heos() {
    eprintln!("table        states  max |dZ|/Z  max |d(h-h0)| J/kg  max |d(s-s0)| J/(kg K)  max rel. dev. of h2-h1 (stage-like pairs)");
    let mut failures = Vec::new();
    for (name, blob) in TABLES {
        let table = Box::new(PropertyTable::<2048, 4096>::from_blob(blob).unwrap());
        let gas = TableGas::<f64>::new(table.data()).unwrap();
        let rows = rows(name);
        assert!(rows.len() >= 20, "{name}: {} rows", rows.len());
        let states: Vec<_> = rows
            .iter()
            .map(|r| {
                let st = gas.state(r.p, r.t);
                assert_eq!(st.quality, Quality::Good, "{name} at {} Pa {} K", r.p, r.t);
                st
            })
            .collect();
        let (h0, s0) = (
            states[0].enthalpy - rows[0].h,
            states[0].entropy - rows[0].s,
        );
        let mut dev = [0.0f64; 4];
        for (st, r) in states.iter().zip(&rows) {
            dev[0] = dev[0].max((st.z / r.z - 1.0).abs());
            dev[1] = dev[1].max((st.enthalpy - r.h - h0).abs());
            dev[2] = dev[2].max((st.entropy - r.s - s0).abs());
        }
        for (i, (a, ra)) in states.iter().zip(&rows).enumerate() {
            for (b, rb) in states.iter().zip(&rows).skip(i + 1) {
                // Stage-like pairs: pressure ratio 1.2 to 5, temperature up,
                // enthalpy up by at least 10 kJ/kg.
                let reference = rb.h - ra.h;
                let ratio = rb.p / ra.p;
                if (1.2..=5.0).contains(&ratio) && rb.t > ra.t && reference >= 1e4 {
                    let ours = b.enthalpy - a.enthalpy;
                    dev[3] = dev[3].max((ours / reference - 1.0).abs());
                }
            }
        }
        eprintln!(
            "{name:<12} {:>6}  {:>10.2e}  {:>18.1}  {:>22.3}  {:>12.2e}",
            rows.len(),
            dev[0],
            dev[1],
            dev[2],
            dev[3]
        );
        let (_, bz, bh, bs, bd) = BOUNDS.iter().find(|b| b.0 == name).copied().unwrap();
        for (what, got, bound) in [
            ("Z", dev[0], bz),
            ("h", dev[1], bh),
            ("s", dev[2], bs),
            ("dh", dev[3], bd),
        ] {
            if got > bound {
                failures.push(format!("{name}: {what} deviates {got:.3e} > {bound:.1e}"));
            }
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}
