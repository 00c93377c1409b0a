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

/// An arbitrary GERG-2008 composition by component name: pure hydrogen given
/// as a composition (with the preset's label and envelope) is byte for byte
/// the shipped hydrogen table; an invented four-component mixture gives a
/// table whose header carries its fractions and which the kernel decodes.
#[test]
fn composition_by_component_name() {
    let dir = std::env::temp_dir().join(format!("polytrope-tables-mix-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let prefix = dir.join("h2");
    let prefix = prefix.to_str().unwrap();
    common::ok(&[
        "tables",
        "--composition",
        "hydrogen=1",
        "--label",
        "hydrogen",
        "--out",
        prefix,
    ]);
    let blob = std::fs::read(format!("{prefix}.bin")).unwrap();
    assert_eq!(blob, &include_bytes!("../../tables/hydrogen.bin")[..]);
    let prefix = dir.join("mix");
    let prefix = prefix.to_str().unwrap();
    // Invented mixture; fractions sum to 1 within the tolerance (0.99995).
    let text = common::ok(&[
        "tables",
        "--composition",
        "methane=0.88995, ethane=0.06, propane=0.02, nitrogen=0.03",
        "--max-depth",
        "7",
        "--out",
        prefix,
    ]);
    assert!(text.contains("table 'custom mixture'"), "{text}");
    let blob = std::fs::read(format!("{prefix}.bin")).unwrap();
    let _ = std::fs::remove_dir_all(&dir);
    let table = PropertyTable::<4096, 8192>::from_blob(&blob).unwrap();
    let x = table.data().header.mole_fractions;
    // Scaled to sum to 1: methane 0.88995 / 0.99995.
    assert!((x[0] - 0.88995 / 0.99995).abs() < 1e-12, "{x:?}");
    assert!((x[1] - 0.03 / 0.99995).abs() < 1e-12);
    assert!((x.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    let gas = TableGas::<f64>::new(table.data()).unwrap();
    assert_eq!(gas.state(40e5, 300.0).quality, Quality::Good);
}

/// A bad composition or envelope is refused with a message naming the field.
#[test]
fn bad_compositions_name_the_field() {
    for (args, expect) in [
        (
            vec!["--composition", "methane=0.9,argonium=0.1"],
            "--composition.argonium",
        ),
        (vec!["--composition", "methane=0.9,ethane=0.05"], "sum to"),
        (
            vec!["--composition", "methane=1.5"],
            "--composition.methane",
        ),
        (
            vec!["--composition", "methane=-0.1,ethane=1.1"],
            "--composition.methane",
        ),
        (
            vec!["--composition", "methane=0.5,methane=0.5"],
            "given twice",
        ),
        (vec!["--composition", "methane=abc"], "not a number"),
        (vec!["--composition", "methane"], "not name=fraction"),
        (vec!["--composition", ""], "no component"),
        (
            vec!["--composition", "methane=1", "--t-min-k", "30"],
            "--t-min-k",
        ),
        (
            vec!["--composition", "methane=1", "--p-max-bar", "900"],
            "--p-max-bar",
        ),
        (
            vec![
                "--composition",
                "methane=1",
                "--label",
                "a label much too long",
            ],
            "--label",
        ),
    ] {
        let mut all = vec!["tables"];
        all.extend(args.iter());
        let (code, err) = common::fails(&all);
        assert_eq!(code, 1, "{args:?}");
        assert!(err.contains(expect), "{args:?}: {err}");
    }
    let (code, _) = common::fails(&["tables", "--gas", "air", "--composition", "methane=1"]);
    assert_ne!(code, 0);
}
