//! `polytrope-host tables`: the shipped tables are what the generator makes
//! (byte for byte, for the two small pure-gas tables), and the written blob
//! decodes in the kernel. Bad options fail with a message, never a panic.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

mod common;

use polytrope::gas::table::{PropertyTable, TableGas};
use polytrope::Quality;

fn regenerate(gas: &str, name: &str) -> (Vec<u8>, String, String) {
    let dir = std::env::temp_dir().join(format!("polytrope-tables-{}-{gas}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let prefix = dir.join(gas);
    let prefix = prefix.to_str().unwrap();
    let text = common::ok(&["tables", "--gas", gas, "--out", prefix, "--name", name]);
    let blob = std::fs::read(format!("{prefix}.bin")).unwrap();
    let source = std::fs::read_to_string(format!("{prefix}.rs")).unwrap();
    let _ = std::fs::remove_dir_all(&dir);
    (blob, source, text)
}

#[test]
fn shipped_tables_are_what_the_generator_writes() {
    for (gas, shipped) in [
        ("hydrogen", &include_bytes!("../../tables/hydrogen.bin")[..]),
        ("nitrogen", &include_bytes!("../../tables/nitrogen.bin")[..]),
    ] {
        let (blob, source, text) = regenerate(gas, "TABLE");
        assert_eq!(blob, shipped, "{gas}: regenerate with tables/generate.sh");
        assert!(
            text.contains("flagged leaves: 0 uncertain, 0 bad"),
            "{text}"
        );
        assert!(source.contains("pub static TABLE: polytrope::gas::table::TableData"));
        let table = PropertyTable::<128, 256>::from_blob(&blob).unwrap();
        let gas = TableGas::<f64>::new(table.data()).unwrap();
        assert_eq!(gas.state(10e5, 300.0).quality, Quality::Good);
    }
}

#[test]
fn bad_options_fail_with_a_message() {
    let (code, err) = common::fails(&["tables", "--gas", "unobtainium"]);
    assert_eq!(code, 1);
    assert!(err.contains("unknown gas"), "{err}");
    let (_, err) = common::fails(&["tables", "--gas", "air", "--p-min-bar", "-3"]);
    assert!(err.contains("p-min-bar"), "{err}");
    let (_, err) = common::fails(&[
        "tables",
        "--gas",
        "air",
        "--p-min-bar",
        "50",
        "--p-max-bar",
        "10",
    ]);
    assert!(err.contains("envelope"), "{err}");
    let (code, _) = common::fails(&["tables", "--max-depth", "40"]);
    assert_ne!(code, 0);
}
