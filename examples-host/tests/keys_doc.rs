//! The JSON key reference `README-keys.md` is the output of
//! `polytrope-host keys`, and every key the tool writes is in it.

mod common;

use common::{ok, parse, JExt};

const README: &str = include_str!("../README-keys.md");

#[test]
fn readme_keys_is_the_keys_output() {
    assert_eq!(
        ok(&["keys"]),
        README,
        "README-keys.md is stale: regenerate with `cargo run -p polytrope-host -- keys > examples-host/README-keys.md`"
    );
}

#[test]
fn every_written_key_is_documented_with_a_unit() {
    let documented: Vec<&str> = README
        .lines()
        .filter_map(|l| l.strip_prefix("| `"))
        .filter_map(|l| l.split('`').next())
        .collect();
    assert!(documented.len() > 60, "{}", documented.len());
    let runs: [&[&str]; 3] = [
        &["demo", "--json", "--scans", "3"],
        &[
            "stage", "--gas", "air", "--p1", "1barg", "--p2", "9bara", "--t1", "300K", "--t2",
            "560K", "--flow", "1kg/s", "--stages", "3", "--json",
        ],
        &[
            "stage", "--gas", "air", "--p1", "1bara", "--p2", "9bara", "--t1", "300K", "--json",
        ],
    ];
    let mut seen = 0;
    for args in runs {
        let mut keys = Vec::new();
        parse(&ok(args)).all_keys(&mut keys);
        for k in keys {
            assert!(
                documented.contains(&k.as_str()),
                "{k} not in README-keys.md"
            );
            seen += 1;
        }
    }
    assert!(seen > 200, "{seen}");
}

#[test]
fn top_level_readme_lists_the_same_keys() {
    let top = include_str!("../../README.md");
    let start = top.find("<!-- json-keys:start -->").expect("start marker");
    let end = top.find("<!-- json-keys:end -->").expect("end marker");
    let section = &top[start..end];
    let body = &README[README.find("## Document structure").expect("section")..];
    let demote = |s: &str| s.trim().replace("\n## ", "\n### ");
    let want = format!("#{}", demote(body));
    assert!(
        section.contains(want.trim()),
        "README.md's JSON key list differs from examples-host/README-keys.md"
    );
}
