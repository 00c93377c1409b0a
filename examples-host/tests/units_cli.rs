//! Command-line tests of the one unit choice (`--units si | bar-degc |
//! us-field`) across `evaluate` tables, `replay` CSV columns and `rate`.
//! Conversion factors: NIST Special Publication 811 (2008), Appendix B.8
//! (psi = 6894.757 Pa, Btu_IT/lb = 2326 J/kg, hp = 745.6999 W, lb/h =
//! 1.259979e-4 kg/s) and B.9 (°C, °F).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use common::{fails, ok, s};

fn tmp(name: &str) -> PathBuf {
    common::scratch("units", name)
}

/// The invented 3-stage starter train and a short invented log.
fn setup(dir: &Path) -> (PathBuf, PathBuf) {
    let (t, l) = (dir.join("air3.toml"), dir.join("log.csv"));
    ok(&[
        "new-train",
        "--stages",
        "3",
        "-o",
        s(&t),
        "--example-log",
        s(&l),
        "--rows",
        "120",
    ]);
    (t, l)
}

/// Table rows of the compressor-stage table: label -> (unit, S1 value).
fn stage_rows(text: &str) -> HashMap<String, (String, f64)> {
    let mut out = HashMap::new();
    let body = text.split("Compressor stages").nth(1).unwrap();
    for line in body.lines().skip(3) {
        if line.trim().is_empty() {
            break;
        }
        let cols: Vec<&str> = line.split("  ").filter(|c| !c.trim().is_empty()).collect();
        if cols.len() >= 3 {
            if let Ok(v) = cols[2].trim().trim_end_matches('?').parse::<f64>() {
                out.insert(cols[0].trim().to_string(), (cols[1].trim().to_string(), v));
            }
        }
    }
    out
}

/// One unit-conversion check: (label, SI unit, US unit, factor SI -> US,
/// offset, table rounding in the US unit). Factors: NIST SP 811 (2008),
/// B.8 and B.9.
type Conversion = (&'static str, &'static str, &'static str, f64, f64, f64);

const PRESSURE_P1: Conversion = (
    "Suction pressure p1",
    "Pa a",
    "psi a",
    1.0 / 6894.757,
    0.0,
    0.006,
);
const GAS_POWER: Conversion = ("Gas power", "W", "hp", 1.0 / 745.6999, 0.0, 0.06);
const MASS_FLOW: Conversion = ("Mass flow", "kg/s", "lb/h", 1.0 / 1.259979e-4, 0.0, 1.0);

/// Every row of `checks` reads the same quantity in both tables: the units
/// as stated and the US value the SI value converted (`si`, `us`: label ->
/// (unit, value)). The SI table rounds too: its rounding, scaled into US
/// units, is allowed.
fn assert_converted(
    si: impl Fn(&str) -> (String, f64),
    us: impl Fn(&str) -> (String, f64),
    checks: &[Conversion],
) {
    for &(label, si_unit, us_unit, f, o, tol) in checks {
        let (u1, v_si) = si(label);
        let (u2, v_us) = us(label);
        assert_eq!((u1.as_str(), u2.as_str()), (si_unit, us_unit), "{label}");
        let expected = v_si * f + o;
        assert!(
            (v_us - expected).abs() <= tol + 0.01 * f.abs() + 1e-9 * expected.abs(),
            "{label}: {v_us} {us_unit} vs {v_si} {si_unit} -> {expected}"
        );
    }
}

#[test]
fn evaluate_tables_follow_the_unit_system() {
    let dir = tmp("evaluate");
    let (t, l) = setup(&dir);
    let run = |u: &str| {
        stage_rows(&ok(&[
            "evaluate",
            s(&t),
            "--row",
            s(&l),
            "--scans",
            "8",
            "--units",
            u,
        ]))
    };
    let si = run("si");
    let us = run("us-field");
    let bar = run("bar-degc");
    let checks = [
        PRESSURE_P1,
        ("T2 discharge", "K", "degF", 1.8, -459.67, 0.06),
        ("Temperature rise", "K", "degF diff", 1.8, 0.0, 0.06),
        (
            "Polytropic head",
            "J/kg",
            "Btu/lb",
            1.0 / 2326.0,
            0.0,
            0.006,
        ),
        GAS_POWER,
        MASS_FLOW,
    ];
    assert_converted(|l| si[l].clone(), |l| us[l].clone(), &checks);
    let (u, v) = &bar["T2 discharge"];
    assert_eq!(u, "degC");
    assert!((v - (si["T2 discharge"].1 - 273.15)).abs() < 0.06, "{v}");
    let (u, v) = &bar["Gas power"];
    assert_eq!(u, "kW");
    assert!((v - si["Gas power"].1 / 1e3).abs() < 0.06, "{v}");
    // Dimensionless rows do not change.
    assert_eq!(si["Pressure ratio"], us["Pressure ratio"]);
    // A wrong name is refused with a hint.
    let (_, err) = fails(&["evaluate", s(&t), "--row", s(&l), "--units", "bar-degf"]);
    assert!(err.contains("did you mean 'bar-degc'"), "{err}");
}

#[test]
fn replay_columns_carry_the_chosen_unit() {
    let dir = tmp("replay");
    let (t, l) = setup(&dir);
    let (a, b) = (dir.join("si.csv"), dir.join("bar.csv"));
    ok(&["replay", s(&t), s(&l), "-o", s(&a), "--quiet"]);
    let text = ok(&[
        "replay",
        s(&t),
        s(&l),
        "-o",
        s(&b),
        "--quiet",
        "--units",
        "bar-degc",
    ]);
    assert!(text.contains("Units: bar-degc"), "{text}");
    let read = |p: &Path| {
        let mut r = csv::Reader::from_path(p).unwrap();
        let head: Vec<String> = r.headers().unwrap().iter().map(str::to_string).collect();
        let rows: Vec<Vec<String>> = r
            .records()
            .map(|x| x.unwrap().iter().map(str::to_string).collect())
            .collect();
        (head, rows)
    };
    let (ha, ra) = read(&a);
    let (hb, rb) = read(&b);
    assert_eq!(ra.len(), rb.len());
    let col = |h: &[String], k: &str| {
        h.iter()
            .position(|c| c == k)
            .unwrap_or_else(|| panic!("no column {k}"))
    };
    // (SI column, bar-degc column, factor, offset)
    for (ks, kb, f, o) in [
        ("s1_gas_power_W_f64", "s1_gas_power_kW_f64", 1e-3, 0.0),
        (
            "s2_isentropic_discharge_temperature_K_f64",
            "s2_isentropic_discharge_temperature_degC_f64",
            1.0,
            -273.15,
        ),
        (
            "s1_mass_flow_kg_per_s_f64",
            "s1_mass_flow_t_per_h_f64",
            3.6,
            0.0,
        ),
        ("c1_heat_duty_W_f64", "c1_heat_duty_kW_f64", 1e-3, 0.0),
    ] {
        let (ia, ib) = (col(&ha, ks), col(&hb, kb));
        let mut compared = 0;
        for (x, y) in ra.iter().zip(&rb) {
            if let (Ok(p), Ok(q)) = (x[ia].parse::<f64>(), y[ib].parse::<f64>()) {
                assert!(
                    (p * f + o - q).abs() <= 1e-9 * q.abs().max(1.0),
                    "{ks}: {p} -> {q}"
                );
                compared += 1;
            }
        }
        assert!(compared > 100, "{ks}: only {compared} rows compared");
    }
    // No SI-suffixed dimensional column is left in the bar-degc file.
    assert!(
        !hb.iter().any(|h| h.ends_with("_W") || h.ends_with("_Pa")),
        "{hb:?}"
    );
}

#[test]
fn rate_takes_a_unit_system() {
    let text = ok(&[
        "rate", "--gas", "air", "--p1", "1.0bara", "--t1", "20degC", "--p2", "3.0bara", "--eta-p",
        "0.8", "--flow", "1kg/s", "--units", "us-field",
    ]);
    assert!(text.contains("psi") && text.contains("degF"), "{text}");
}

/// `label -> (value, unit)` of every three-column row (`label  value  unit`)
/// of a `stage` text report.
fn label_value_unit(text: &str) -> HashMap<String, (f64, String)> {
    let mut out = HashMap::new();
    for line in text.lines() {
        let cols: Vec<&str> = line.split("  ").filter(|c| !c.trim().is_empty()).collect();
        if let [label, value, unit] = cols[..] {
            if let Ok(v) = value.trim().parse::<f64>() {
                out.insert(label.trim().to_string(), (v, unit.trim().to_string()));
            }
        }
    }
    out
}

#[test]
fn stage_tables_follow_the_unit_system() {
    let run = |u: &str| {
        ok(&[
            "stage", "--gas", "air", "--p1", "1.0bara", "--p2", "4bara", "--t1", "20C", "--t2",
            "190C", "--flow", "2kg/s", "--stages", "2", "--units", u,
        ])
    };
    let (si_text, us_text) = (run("si"), run("us-field"));
    let (si, us) = (label_value_unit(&si_text), label_value_unit(&us_text));
    // Factors: NIST SP 811 (2008), B.8 and B.9 (as above).
    let flip = |m: &HashMap<String, (f64, String)>, l: &str| {
        let (v, u) = &m[l];
        (u.clone(), *v)
    };
    let checks = [
        PRESSURE_P1,
        ("Suction temperature T1", "K", "degF", 1.8, -459.67, 0.06),
        (
            "Isothermal head",
            "J/kg",
            "Btu/lb",
            1.0 / 2326.0,
            0.0,
            0.006,
        ),
        GAS_POWER,
        MASS_FLOW,
    ];
    assert_converted(|l| flip(&si, l), |l| flip(&us, l), &checks);
    // The inputs as given: 1.0 bar a is 14.50 psi a, 20 °C is 68.0 °F
    // (SP 811 B.8, B.9).
    assert_eq!(us["Suction pressure p1"].0, 14.50);
    assert_eq!(us["Suction temperature T1"].0, 68.0);
    // The staging comparison follows too (its column heads carry the unit).
    assert!(
        us_text.contains("discharge psi a") && us_text.contains("T2s degF"),
        "{us_text}"
    );
    assert!(us_text.contains("Inputs (us-field)"), "{us_text}");
    let (_, err) = fails(&["stage", "--gas", "air", "--units", "furlongs"]);
    assert!(err.contains("--units"), "{err}");
}

#[test]
fn the_loss_ledger_follows_the_unit_system() {
    // The first ledger row (isothermal power of the duty) in kW and in hp.
    let first_row = |u: &str| {
        let text = ok(&["demo", "--scans", "3", "--units", u]);
        let body = text
            .split("Where the power goes")
            .nth(1)
            .unwrap()
            .to_string();
        let head = body.lines().nth(1).unwrap().to_string();
        let row = body
            .lines()
            .find(|l| l.starts_with("Isothermal power"))
            .unwrap()
            .to_string();
        let cols: Vec<&str> = row.split("  ").filter(|c| !c.trim().is_empty()).collect();
        let v: f64 = cols[1].trim().trim_end_matches('?').parse().unwrap();
        (head, v)
    };
    let (si_head, kw) = first_row("bar-degc");
    let (us_head, hp) = first_row("us-field");
    assert!(
        si_head.contains("kW") && us_head.contains("hp"),
        "{si_head} / {us_head}"
    );
    // hp = 745.6999 W (NIST SP 811, B.8); both tables round to 0.1.
    assert!((hp - kw * 1e3 / 745.6999).abs() < 0.2, "{hp} hp vs {kw} kW");
}
