//! `polytrope-host demo`: the loss ledger of the invented demo train in the
//! JSON output and the waterfall PNG. The ledger's lines must close on the
//! measured total power the same document reports (`totals`), a consistency
//! check of the bookkeeping (the physics is checked in the kernel's
//! `tests/ledger.rs`).

mod common;

use common::{ok, parse, JExt};

#[test]
fn demo_json_ledger_closes_on_the_measured_total() {
    let j = parse(&ok(&["demo", "--json", "--precision", "f64"]));
    let l = j.at("ledger");
    let train_wide = [
        "ledger_isothermal_power_W",
        "ledger_stage_count_W",
        "ledger_pressure_drops_W",
        "ledger_pressure_split_W",
        "ledger_coolant_temperature_W",
        "ledger_recycle_W",
        "ledger_pumps_W",
        "ledger_remainder_W",
    ];
    let mut sum: f64 = train_wide.iter().map(|k| l.at(k).measured().0).sum();
    // Four compressor stages, each with its two lines.
    let stages = l.at("stages").arr();
    assert_eq!(stages.len(), 4);
    for (i, s) in stages.iter().enumerate() {
        assert_eq!(s.at("stage").num(), (i + 1) as f64);
        sum += s.at("ledger_intercooling_W").measured().0;
        sum += s.at("ledger_stage_inefficiency_W").measured().0;
    }
    let (total, _) = l.at("ledger_measured_total_W").measured();
    assert!((sum - total).abs() <= 1e-9 * total, "{sum} vs {total}");
    let reported = j.at("totals").value("total_power_W");
    assert!((reported - total).abs() <= 1e-9 * total);
    // Every stage of the demo costs something above its isentropic head.
    for s in stages {
        assert!(s.at("ledger_stage_inefficiency_W").measured().0 > 0.0);
    }
}

#[test]
fn demo_plots_include_the_ledger_waterfall() {
    let dir = std::env::temp_dir().join(format!("polytrope-ledger-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let text = ok(&["demo", "--plots", dir.to_str().unwrap()]);
    assert!(text.contains("Where the power goes"));
    let bytes = std::fs::read(dir.join("ledger_waterfall.png")).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    assert!(bytes.len() > 10_000);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn replay_writes_ledger_columns_from_the_field_list_and_the_period_plot() {
    use polytrope::fields::ResultFields;
    use polytrope::ledger::{Ledger, LedgerStage};
    let dir = std::env::temp_dir().join(format!("polytrope-ledger-replay-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let (t, l) = (dir.join("air2.toml"), dir.join("day.csv"));
    let s = |p: &std::path::Path| p.to_str().unwrap().to_string();
    ok(&[
        "new-train",
        "--stages",
        "2",
        "-o",
        &s(&t),
        "--example-log",
        &s(&l),
        "--rows",
        "600",
    ]);
    ok(&[
        "replay",
        &s(&t),
        &s(&l),
        "--quiet",
        "--plots",
        &s(&dir.join("plots")),
    ]);
    let res = std::fs::read_to_string(dir.join("day.results.csv")).unwrap();
    let mut lines = res.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| {
        header
            .iter()
            .position(|c| *c == name)
            .unwrap_or_else(|| panic!("{name} missing"))
    };
    // Every ledger line of the kernel's field lists is a column (train-wide
    // once, per-stage lines per compressor stage), with f64 and quality.
    let mut train_wide = Vec::new();
    for f in <Ledger<f64, 2> as ResultFields<f64>>::FIELDS {
        let name = format!("train_{}", f.key);
        col(&format!("{name}_f64"));
        col(&format!("{name}_quality"));
        if f.key != "ledger_forward_mass_flow_kg_per_s" && f.key != "ledger_measured_total_W" {
            train_wide.push(col(&format!("{name}_f64")));
        }
    }
    let mut per_stage = Vec::new();
    for i in 1..=2 {
        for f in <LedgerStage<f64> as ResultFields<f64>>::FIELDS {
            per_stage.push(col(&format!("s{i}_{}_f64", f.key)));
        }
    }
    let total = col("train_ledger_measured_total_W_f64");
    let total_q = col("train_ledger_measured_total_W_quality");
    let remainder_q = col("train_ledger_remainder_W_quality");
    let power = col("train_total_power_W_f64");
    // Consistency check (the host's columns against each other): on every
    // row with a usable ledger the lines add up to the measured total, and
    // that is the train's total power column.
    let mut checked = 0;
    for row in lines {
        let c: Vec<&str> = row.split(',').collect();
        if c[total_q] == "bad" || c[remainder_q] == "bad" {
            continue;
        }
        let v = |k: usize| c[k].parse::<f64>().unwrap();
        let sum: f64 = train_wide.iter().chain(&per_stage).map(|k| v(*k)).sum();
        assert!((sum - v(total)).abs() <= 1e-9 * v(total), "{row}");
        assert_eq!(v(total), v(power));
        checked += 1;
    }
    assert!(checked > 500, "{checked} rows with a usable ledger");
    let bytes = std::fs::read(dir.join("plots").join("ledger_periods.png")).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    assert!(bytes.len() > 10_000);
    let _ = std::fs::remove_dir_all(&dir);
}
