//! Command-line tests of the train-file commands (`new-train`, `check`,
//! `evaluate`, `replay`, `rate`, `orifice`, `demo --plots`, `surge-sim
//! --sweep`): good and bad input, field units, blank cells, error
//! locations. External references are named beside each check.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::path::PathBuf;

use common::{fails, ok, parse, s, JExt};

fn tmp(name: &str) -> PathBuf {
    common::scratch("cli", name)
}

/// A one-stage air train with constant k = 1.4 (for the textbook case).
const AIR1: &str = r#"
[train]
name = "one air stage"
[atmosphere]
pressure = "1013.25 mbara"
[gas]
molar_mass_kg_per_kmol = 28.97
heat_capacity_ratio = 1.4
[[stage]]
kind = "compressor"
design_suction = "1 bara"
design_discharge = "9 bara"
"#;

#[test]
fn starter_files_round_trip_through_check_and_evaluate() {
    let dir = tmp("starter");
    for n in 1..=8u32 {
        let f = dir.join(format!("t{n}.toml"));
        ok(&["new-train", "--stages", &n.to_string(), "-o", s(&f)]);
        let text = ok(&["check", s(&f)]);
        assert!(text.contains("accepted by the kernel"), "{text}");
        assert!(text.contains(&format!("S{n} ")), "{text}");
        // Readings at the design pressures with a 90 K rise: every stage evaluates.
        let mut args: Vec<String> = vec!["evaluate".into(), s(&f).into(), "--json".into()];
        let file: toml::Value = toml::from_str(&std::fs::read_to_string(&f).unwrap()).unwrap();
        for (i, st) in file["stage"].as_array().unwrap().iter().enumerate() {
            let k = i + 1;
            let bar = |key: &str| {
                st[key]
                    .as_str()
                    .unwrap()
                    .strip_suffix("bara")
                    .unwrap()
                    .trim()
                    .parse::<f64>()
                    .unwrap()
            };
            // An invented stage at ηp = 0.8 with constant k = 1.4 (air).
            let t2 =
                303.15 * (bar("design_discharge") / bar("design_suction")).powf(0.4 / 1.4 / 0.8);
            for (name, v) in [
                (
                    "suction_pressure",
                    st["design_suction"].as_str().unwrap().to_string(),
                ),
                (
                    "discharge_pressure",
                    st["design_discharge"].as_str().unwrap().to_string(),
                ),
                ("suction_temperature", "30degC".into()),
                ("discharge_temperature", format!("{t2}K")),
                ("cooler_gas_outlet_temperature", "35degC".into()),
                ("coolant_inlet_temperature", "25degC".into()),
            ] {
                args.push("-r".into());
                args.push(format!("s{k}.{name}={v}"));
            }
        }
        args.push("-r".into());
        args.push("s1.mass_flow=18t/h".into());
        let refs: Vec<&str> = args.iter().map(String::as_str).collect();
        let d = parse(&ok(&refs));
        assert_eq!(d.at("command").str(), "evaluate");
        let stages = d.at("stages").arr();
        assert_eq!(stages.len(), n as usize);
        for st in stages {
            let eta = st.value("polytropic_efficiency");
            assert!(eta > 0.3 && eta < 1.0, "{eta}");
            // 18 t/h = 5 kg/s, inherited by every later stage.
            assert!((st.value("mass_flow_kg_per_s") - 5.0).abs() < 1e-5);
        }
        assert_eq!(d.at("coolers").arr().len(), n as usize);
    }
    // Device blobs: the kernel decodes each to the host's configuration.
    for n in [1u32, 3, 8] {
        let f = dir.join(format!("t{n}.toml"));
        let b = dir.join(format!("t{n}.bin"));
        let out = ok(&["blob", s(&f), "-o", s(&b)]);
        assert!(out.contains("same configuration"), "{out}");
        let len = std::fs::metadata(&b).unwrap().len();
        assert!((100..=256).contains(&len), "{len}");
    }
    // The demo train file passes check too, and refuses to be overwritten.
    let f = dir.join("demo.toml");
    ok(&["new-train", "--demo", "-o", s(&f)]);
    assert!(ok(&["check", s(&f)]).contains("pump"));
    let (code, msg) = fails(&["new-train", "--demo", "-o", s(&f)]);
    assert_eq!(code, 1);
    assert!(msg.contains("not overwritten"), "{msg}");
    let (code, _) = fails(&["new-train", "--stages", "9"]);
    assert_eq!(code, 2);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn evaluate_takes_field_units_and_matches_the_textbook() {
    let dir = tmp("eval");
    let f = dir.join("air1.toml");
    std::fs::write(&f, AIR1).unwrap();
    // Çengel & Boles ch. 7 worked example: air 100 kPa, 300 K compressed
    // isentropically to 900 kPa reaches 562 K and takes 263.2 kJ/kg.
    // The same state in psi and degF: 100 kPa = 14.50377 psia,
    // 300 K = 80.33 degF, 900 kPa = 130.5340 psia, 562 K = 551.93 degF.
    let d = parse(&ok(&[
        "evaluate",
        s(&f),
        "--json",
        "--precision",
        "f64",
        "-r",
        "s1.suction_pressure=14.503774psia",
        "-r",
        "s1.suction_temperature=80.33degF",
        "-r",
        "s1.discharge_pressure=130.533966psia",
        "-r",
        "s1.discharge_temperature=551.93degF",
        "-r",
        "s1.mass_flow=3600kg/h",
    ]));
    let st = &d.at("stages").arr()[0];
    assert!((st.value("isentropic_head_J_per_kg") / 1e3 - 263.2).abs() < 0.1);
    assert!((st.value("isentropic_efficiency") - 1.0).abs() < 1e-3);
    assert!((st.value("gas_power_W") / 1e3 - 263.2).abs() < 0.5);
    // A blank reading is a bad input, not an error: the power goes bad.
    let d = parse(&ok(&[
        "evaluate",
        s(&f),
        "--json",
        "-r",
        "s1.suction_pressure=1bara",
        "-r",
        "s1.suction_temperature=27degC",
        "-r",
        "s1.discharge_pressure=8barg",
        "-r",
        "s1.discharge_temperature=300degC",
        "-r",
        "s1.mass_flow=",
    ]));
    let st = &d.at("stages").arr()[0];
    assert_eq!(st.at("gas_power_W").measured().1, "bad");
    assert!(st.value("polytropic_efficiency") > 0.5);
    // Bad units and names say what is valid.
    for (reading, want) in [
        ("s1.suction_pressure=1bar", "absolute or gauge"),
        ("s1.suction_pressure=1 psa", "did you mean 'psia'"),
        (
            "s1.suction_temperature=300 Kelvin",
            "unknown temperature unit",
        ),
        ("s1.mass_flow=5 kg/min", "known: kg/s, kg/h, t/h, Nm3/h"),
        (
            "s1.sucton_pressure=1bara",
            "did you mean 'suction_pressure'",
        ),
        ("s2.suction_pressure=1bara", "not s1 to s1"),
        ("s1.suction_pressure", "sN.NAME=VALUE"),
    ] {
        let (code, msg) = fails(&["evaluate", s(&f), "-r", reading]);
        assert_eq!(code, 1, "{reading}: {msg}");
        assert!(msg.contains(want), "{reading}: expected '{want}' in {msg}");
    }
    let (code, msg) = fails(&["evaluate", s(&f)]);
    assert_eq!(code, 2);
    assert!(msg.contains("--reading"), "{msg}");
    // Standard volume flow with its reference conditions: 1 Nm3 of air
    // (M 28.97) is 1.2925 kg (ideal gas at 0 degC, 101.325 kPa; DIN 1343).
    let d = parse(&ok(&[
        "evaluate",
        s(&f),
        "--json",
        "--precision",
        "f64",
        "-r",
        "s1.suction_pressure=1bara",
        "-r",
        "s1.suction_temperature=300K",
        "-r",
        "s1.discharge_pressure=3bara",
        "-r",
        "s1.discharge_temperature=420K",
        "-r",
        "s1.mass_flow=3600Nm3/h",
    ]));
    let flow = d.at("stages").arr()[0].value("mass_flow_kg_per_s");
    assert!((flow - 1.2925).abs() < 2e-3, "{flow}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn train_file_errors_name_file_line_and_key() {
    let dir = tmp("errors");
    let cases: [(&str, &str, &[&str]); 7] = [
        (
            "typo.toml",
            &AIR1.replace("design_suction", "design_sucton"),
            &["typo.toml:11", "did you mean `design_suction`"],
        ),
        (
            "atm.toml",
            &AIR1.replace("1013.25 mbara", "1.5 bara"),
            &["atm.toml:5", "atmosphere.pressure", "0.3 and 1.1 bar"],
        ),
        (
            "unit.toml",
            &AIR1.replace("\"9 bara\"", "\"9 bars\""),
            &["unit.toml:12", "stage[0].design_discharge", "unknown pressure unit 'bars'"],
        ),
        (
            "order.toml",
            &AIR1.replace("\"9 bara\"", "\"0.5 bara\""),
            &["order.toml:12", "stage[0].design_discharge", "must be above `stage[0].design_suction`"],
        ),
        (
            "gas.toml",
            "[train]\nname = \"x\"\n[atmosphere]\npressure = \"1bara\"\n[gas]\nname = \"ari\"\n[[stage]]\nkind = \"compressor\"\ndesign_suction = \"1 bara\"\ndesign_discharge = \"2 bara\"\n",
            &["gas.toml:6", "gas.name", "did you mean 'air'"],
        ),
        (
            "k.toml",
            &AIR1.replace("heat_capacity_ratio = 1.4", "heat_capacity_ratio = 0.9"),
            &["k.toml:8", "gas.heat_capacity_ratio: must lie in [1, "],
        ),
        (
            "kind.toml",
            &AIR1.replace("kind = \"compressor\"", "kind = \"compresor\""),
            &["kind.toml:10", "stage[0].kind", "did you mean 'compressor'"],
        ),
    ];
    for (name, text, wants) in cases {
        let f = dir.join(name);
        std::fs::write(&f, text).unwrap();
        let (code, msg) = fails(&["check", s(&f)]);
        assert_eq!(code, 1, "{name}: {msg}");
        for w in wants {
            assert!(msg.contains(w), "{name}: expected '{w}' in {msg}");
        }
    }
    // A kernel error on a surge point comes back as the file's key and line.
    let f = dir.join("surge.toml");
    ok(&["new-train", "--stages", "2", "-o", s(&f)]);
    let text = std::fs::read_to_string(&f).unwrap();
    let line = text
        .lines()
        .position(|l| l.contains("speed_rpm = 10500"))
        .unwrap()
        + 1;
    std::fs::write(
        &f,
        text.replace("pressure_ratio = 2.05", "pressure_ratio = 1.60"),
    )
    .unwrap();
    let (code, msg) = fails(&["check", s(&f)]);
    assert_eq!(code, 1);
    assert!(
        msg.contains(&format!(
            "surge.toml:{line}: stage[0].surge.points[1]: must rise"
        )),
        "{msg}"
    );
    let (code, msg) = fails(&["check", "/nonexistent/train.toml"]);
    assert_eq!(code, 1);
    assert!(msg.contains("cannot read"), "{msg}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn replay_reports_blanks_malformed_rows_and_writes_plots() {
    let dir = tmp("replay");
    let (t, l) = (dir.join("air2.toml"), dir.join("day.csv"));
    ok(&[
        "new-train",
        "--stages",
        "2",
        "-o",
        s(&t),
        "--example-log",
        s(&l),
        "--rows",
        "3000",
    ]);
    let text = ok(&[
        "replay",
        s(&t),
        s(&l),
        "--quiet",
        "--plots",
        s(&dir.join("plots")),
    ]);
    for want in [
        "3000 read, 2999 replayed, 1 malformed (skipped)",
        "malformed line 1002",
        "s1_p_in: ",
        "below the control line",
        "surge margin: worst",
        "plot written:",
    ] {
        assert!(text.contains(want), "expected '{want}' in {text}");
    }
    for p in ["map_s1", "stages", "coolers", "recycle"] {
        for ext in ["png", "svg"] {
            let f = dir.join("plots").join(format!("{p}.{ext}"));
            assert!(
                std::fs::metadata(&f).unwrap().len() > 10_000,
                "{}",
                f.display()
            );
        }
    }
    // Results CSV: SI unit in the column names, blanks for bad values.
    let res = std::fs::read_to_string(dir.join("day.results.csv")).unwrap();
    let header = res.lines().next().unwrap();
    for col in [
        "time_s",
        "s1_gas_power_W",
        "s1_gas_power_W_f64",
        "c1_approach_K",
        "s1_surge_margin",
    ] {
        assert!(header.split(',').any(|c| c == col), "{col} missing");
    }
    // Stop at the first malformed row: an error with its line, the rows before it kept.
    let out = dir.join("stop.csv");
    let (code, msg) = fails(&[
        "replay",
        s(&t),
        s(&l),
        "--quiet",
        "-o",
        s(&out),
        "--on-malformed",
        "stop",
    ]);
    assert_eq!(code, 1);
    assert!(msg.contains("day.csv:1002: malformed row"), "{msg}");
    let kept = std::fs::read_to_string(&out).unwrap().lines().count();
    assert_eq!(kept, 1 + 1000, "header + rows before the malformed one");
    // A mapped column missing from the log is named with the key and a suggestion.
    let bad_log = dir.join("renamed.csv");
    std::fs::write(
        &bad_log,
        std::fs::read_to_string(&l)
            .unwrap()
            .replacen("s1_p_in", "s1_pin", 1),
    )
    .unwrap();
    let (code, msg) = fails(&["replay", s(&t), s(&bad_log), "--quiet"]);
    assert_eq!(code, 1);
    assert!(msg.contains("stage[0].readings.suction_pressure"), "{msg}");
    assert!(msg.contains("did you mean 's1_pin'"), "{msg}");
    let (code, msg) = fails(&[
        "replay",
        s(&t),
        s(&l),
        "--quiet",
        "-o",
        s(&dir.join("f.csv")),
        "--fields",
        "gas_powr_W",
    ]);
    assert_eq!(code, 2);
    assert!(msg.contains("did you mean 'gas_power_W'"), "{msg}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn rate_matches_fluids_and_the_textbook() {
    // Çengel & Boles ch. 7: isentropic compression of air 100 -> 900 kPa from 300 K: 562 K, 263.2 kJ/kg.
    let d = parse(&ok(&[
        "rate",
        "--k",
        "1.4",
        "--molar-mass",
        "28.97",
        "--p1",
        "100kPaa",
        "--p2",
        "900kPaa",
        "--t1",
        "300K",
        "--eta-s",
        "100%",
        "--flow",
        "1kg/s",
        "--json",
    ]));
    assert!((d.value("discharge_temperature_K") - 562.0).abs() < 0.1);
    assert!((d.value("actual_work_J_per_kg") / 1e3 - 263.2).abs() < 0.1);
    assert!((d.value("gas_power_W") / 1e3 - 263.2).abs() < 0.1);
    // fluids 1.3.1 (fluids.compressible), committed oracle data
    // tests/reference/fluids_compression.csv: discharge temperature and
    // actual work for an assumed polytropic efficiency.
    let data = include_str!("../../tests/reference/fluids_compression.csv");
    let mut lines = data.lines().filter(|l| !l.starts_with('#'));
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |row: &[f64], n: &str| row[head.iter().position(|h| *h == n).unwrap()];
    let mut checked = 0;
    for line in lines.take(12) {
        let row: Vec<f64> = line.split(',').map(|x| x.parse().unwrap()).collect();
        let eta = col(&row, "eta_p");
        if eta > 1.0 {
            continue;
        }
        let d = parse(&ok(&[
            "rate",
            "--k",
            &col(&row, "k").to_string(),
            "--molar-mass",
            &col(&row, "M").to_string(),
            "--z",
            &col(&row, "Z").to_string(),
            "--p1",
            &format!("{}Paa", col(&row, "P1")),
            "--p2",
            &format!("{}Paa", col(&row, "P2")),
            "--t1",
            &format!("{}K", col(&row, "T1")),
            "--eta-p",
            &eta.to_string(),
            "--json",
        ]));
        let rel = |a: f64, b: f64| ((a - b) / b).abs();
        assert!(rel(d.value("discharge_temperature_K"), col(&row, "t2")) < 1e-9);
        let w = col(&row, "w_actual") * 1000.0 / col(&row, "M");
        assert!(rel(d.value("actual_work_J_per_kg"), w) < 1e-9);
        assert!(rel(d.value("isentropic_efficiency"), col(&row, "eta_s")) < 1e-9);
        checked += 1;
    }
    assert!(checked >= 6, "{checked}");
    for (args, code, want) in [
        (
            vec![
                "--gas", "air", "--p1", "1bara", "--p2", "2bara", "--t1", "300K", "--eta-p", "1.2",
            ],
            1,
            "(0, 1]",
        ),
        (
            vec![
                "--gas", "air", "--p1", "2bara", "--p2", "1bara", "--t1", "300K", "--eta-p", "0.8",
            ],
            1,
            "must be above --p1",
        ),
        (
            vec![
                "--gas", "air", "--p1", "1bara", "--p2", "2bara", "--t1", "300K",
            ],
            2,
            "--eta-p",
        ),
        (
            vec![
                "--gas", "air", "--p1", "1bara", "--p2", "2bara", "--t1", "300K", "--eta-p", "0.8",
                "--eta-s", "0.8",
            ],
            2,
            "cannot be used with",
        ),
        (
            vec![
                "--gas", "aire", "--p1", "1bara", "--p2", "2bara", "--t1", "300K", "--eta-p", "0.8",
            ],
            1,
            "did you mean 'air'",
        ),
    ] {
        let mut a = vec!["rate"];
        a.extend(args);
        let (got, msg) = fails(&a);
        assert_eq!(got, code, "{a:?}: {msg}");
        assert!(msg.contains(want), "{a:?}: expected '{want}' in {msg}");
    }
    // Output units on request.
    let t = ok(&[
        "rate",
        "--gas",
        "air",
        "--p1",
        "1bara",
        "--p2",
        "3bara",
        "--t1",
        "20degC",
        "--eta-p",
        "80%",
        "--units",
        "bar,degC,kJ/kg",
    ]);
    assert!(
        t.contains("bar a") && t.contains("degC") && t.contains("kJ/kg"),
        "{t}"
    );
}

#[test]
fn orifice_matches_fluids() {
    // fluids 1.3.1 fluids.flow_meter, committed oracle data
    // tests/reference/fluids_iso5167.csv (second row: corner taps,
    // D 52.5 mm, d 31.5 mm, 8 bar, dp 1600 Pa, rho 6.5, mu 1.1e-5, kappa 1.3).
    // The CLI computes rho from p, T and the gas; T is chosen to give rho = 6.5.
    let m = 16.043; // methane, Çengel & Boles Table A-1
    let t = 800_000.0 * m / (8_314.462_618_153_24 * 6.5);
    let d = parse(&ok(&[
        "orifice",
        "--pipe-mm",
        "52.5",
        "--bore-mm",
        "31.5",
        "--taps",
        "corner",
        "--dp",
        "1600Pa",
        "--p1",
        "800000Paa",
        "--t1",
        &format!("{t}K"),
        "--gas",
        "methane",
        "--kappa",
        "1.3",
        "--viscosity",
        "1.1e-5",
        "--json",
    ]));
    let flow = d.value("mass_flow_kg_per_s");
    assert!(
        ((flow - 0.07344580251992021) / 0.07344580251992021).abs() < 1e-9,
        "{flow}"
    );
    assert!((d.value("discharge_coefficient") - 0.6100297741727252).abs() < 1e-9);
    let (code, msg) = fails(&[
        "orifice",
        "--pipe-mm",
        "50",
        "--bore-mm",
        "60",
        "--dp",
        "10mbar",
        "--p1",
        "2bara",
        "--t1",
        "20C",
    ]);
    assert_eq!(code, 1);
    assert!(msg.contains("--bore-mm"), "{msg}");
    let (code, msg) = fails(&[
        "orifice",
        "--pipe-mm",
        "50",
        "--bore-mm",
        "20",
        "--taps",
        "flang",
        "--dp",
        "10mbar",
        "--p1",
        "2bara",
        "--t1",
        "20C",
    ]);
    assert_eq!(code, 1);
    assert!(msg.contains("did you mean 'flange'"), "{msg}");
}

#[test]
fn demo_writes_plots_and_surge_sim_sweep_says_whether_it_surged() {
    let dir = tmp("demo");
    let text = ok(&["demo", "--plots", s(&dir)]);
    for p in ["stages", "coolers", "map_surge_sim"] {
        assert!(
            std::fs::metadata(dir.join(format!("{p}.png")))
                .unwrap()
                .len()
                > 10_000
        );
        assert!(text.contains(&format!("{p}.svg")));
    }
    let sweep = ok(&["surge-sim", "--sweep"]);
    assert!(sweep.contains("surged"), "{sweep}");
    let (code, _) = fails(&["surge-sim", "--sweep", "--scan-ms", "5"]);
    assert_eq!(code, 2);
    let (code, _) = fails(&["surge-sim", "--sweep", "--unprotected"]);
    assert_eq!(code, 2);
    // Controller settings from a train file; options that the file sets are refused.
    let f = dir.join("air.toml");
    ok(&["new-train", "--stages", "2", "-o", s(&f)]);
    let out = ok(&["surge-sim", "--file", s(&f), "--every", "100"]);
    assert!(
        out.contains("Controller from") && out.contains("gain 2"),
        "{out}"
    );
    let (code, msg) = fails(&["surge-sim", "--file", s(&f), "--scan-ms", "10"]);
    assert_eq!(code, 2);
    assert!(msg.contains("do not apply together"), "{msg}");
    std::fs::write(
        &f,
        std::fs::read_to_string(&f)
            .unwrap()
            .replace("gain = 2.0", "gain = -1.0"),
    )
    .unwrap();
    let (code, msg) = fails(&["surge-sim", "--file", s(&f)]);
    assert_eq!(code, 1);
    assert!(msg.contains("stage[0].surge.control.gain"), "{msg}");
    let _ = std::fs::remove_dir_all(&dir);
}
