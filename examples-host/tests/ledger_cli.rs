//! `polytrope-host demo`: the loss ledger of the invented demo train in the
//! JSON output and the waterfall PNG. The ledger's lines must close on the
//! measured total power the same document reports (`totals`), a consistency
//! check of the bookkeeping (the physics is checked in the kernel's
//! `tests/ledger.rs`).

mod common;

use common::{ok, parse};

#[test]
fn demo_json_ledger_closes_on_the_measured_total() {
    let j = parse(&ok(&["demo", "--json", "--precision", "f64"]));
    let lines = j.at("ledger").arr();
    let causes: Vec<&str> = lines.iter().map(|l| l.at("cause").str()).collect();
    assert_eq!(causes.first(), Some(&"isothermal"));
    assert_eq!(causes.last(), Some(&"measured-total"));
    // Four compressor stages: 3 intercooling and 4 inefficiency lines.
    assert_eq!(causes.iter().filter(|c| **c == "intercooling").count(), 3);
    assert_eq!(
        causes
            .iter()
            .filter(|c| **c == "stage-inefficiency")
            .count(),
        4
    );
    let (total, _) = lines.last().unwrap().at("line_power_W").measured();
    let sum: f64 = lines[..lines.len() - 1]
        .iter()
        .map(|l| l.at("line_power_W").measured().0)
        .sum();
    assert!((sum - total).abs() <= 1e-9 * total, "{sum} vs {total}");
    let reported = j.at("totals").value("total_power_W");
    assert!((reported - total).abs() <= 1e-9 * total);
}

#[test]
fn demo_draws_the_ledger_waterfall() {
    let dir = std::env::temp_dir().join(format!("polytrope-ledger-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let png = dir.join("ledger.png");
    let text = ok(&["demo", "--ledger-png", png.to_str().unwrap()]);
    assert!(text.contains("Where the power goes"));
    let bytes = std::fs::read(&png).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    assert!(bytes.len() > 10_000);
    let _ = std::fs::remove_dir_all(&dir);
}
