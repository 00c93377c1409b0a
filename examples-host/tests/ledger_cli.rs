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
