//! The register map in `docs/` is the output of `polytrope-host
//! register-map` (Markdown and CSV), so the documented map cannot drift
//! from the packer; the kernel's own tests (`polytrope::registers`) tie
//! every map row to the value the packer writes there.

mod common;

use common::ok;

const MARKDOWN: &str = include_str!("../../docs/register-map.md");
const CSV: &str = include_str!("../../docs/register-map.csv");

#[test]
fn docs_register_map_is_the_generated_map() {
    assert_eq!(
        ok(&["register-map"]),
        MARKDOWN,
        "docs/register-map.md is stale: regenerate with `cargo run -p polytrope-host -- register-map > docs/register-map.md`"
    );
    assert_eq!(
        ok(&["register-map", "--csv"]),
        CSV,
        "docs/register-map.csv is stale: regenerate with `cargo run -p polytrope-host -- register-map --csv > docs/register-map.csv`"
    );
}

#[test]
fn csv_rows_are_well_formed_and_cover_the_image_once() {
    let mut lines = CSV.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(header[0], "table");
    let mut covered = Vec::new();
    for line in lines {
        let cols: Vec<&str> = line.split(',').collect();
        if cols[0] != "input" {
            assert_eq!(cols[0], "holding");
            continue;
        }
        let a: usize = cols[1].parse().unwrap();
        let n: usize = cols[2].parse().unwrap();
        covered.extend(a..a + n);
    }
    let len = covered.len();
    covered.sort_unstable();
    covered.dedup();
    assert_eq!(covered.len(), len, "an address is listed twice");
    assert_eq!(covered, (0..len).collect::<Vec<_>>(), "a gap in the map");
    assert!(MARKDOWN.contains(&format!("{len} input registers")));
}
