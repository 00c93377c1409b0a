//! The README's on-device figures are those `ci/measure.sh` wrote to
//! `ci/measurements.md` (the README quotes them; this keeps the copy honest).

#![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]

const README: &str = include_str!("../README.md");
const MEASURED: &str = include_str!("../ci/measurements.md");

#[test]
fn readme_device_tables_are_the_measured_ones() {
    let lines: Vec<&str> = MEASURED
        .lines()
        .filter(|l| l.starts_with('|') || l.starts_with("Static RAM"))
        .collect();
    assert!(lines.len() > 15, "measurements.md has its tables");
    for line in lines {
        assert!(
            README.lines().any(|r| r == line),
            "README.md lacks this line of ci/measurements.md (copy the tables again):\n{line}"
        );
    }
}

/// The Cortex-M4F figure of the row starting with `row` (the first such row).
fn m4f(row: &str) -> String {
    let line = MEASURED
        .lines()
        .find(|l| l.starts_with(row))
        .unwrap_or_else(|| panic!("no row {row} in ci/measurements.md"));
    let cell = line.split('|').nth(2).expect("a Cortex-M4F column").trim();
    // "25,896 / 0" -> "25,896"
    cell.split(" / ").next().unwrap().to_string()
}

#[test]
fn budget_sentence_quotes_the_measured_figures() {
    let sentence = README
        .lines()
        .find(|l| l.starts_with("Against the budgets"))
        .expect("the budget paragraph");
    for row in [
        "| **whole controller scan**",
        "| **stack high-water mark of one whole controller scan**",
        "| **flash the whole controller scan links**",
        "| kernel flash of the controller firmware",
        "| **full update, 4 stages + 3 intercoolers**",
        "| stack high-water mark of one update, 4 stages + 3 intercoolers",
        "| train state, 4 stages + 3 intercoolers",
        "| kernel flash (text + rodata): minimal",
        "| surge margin, one `SurgeMonitor::update`",
        "| signal front end, one 4–20 mA channel",
    ] {
        let v = m4f(row);
        assert!(
            sentence.contains(&v),
            "the budget paragraph does not quote {v} ({row})"
        );
    }
}
