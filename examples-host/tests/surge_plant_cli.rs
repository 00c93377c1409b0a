//! `surge-sim --file`: the Greitzer (1976) plant built from a train file's
//! surge map and `[stage.surge.plant]` table (the starter's invented
//! numbers), refusals naming the field, and the physics the model must
//! show.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::path::{Path, PathBuf};

use common::{fails, ok, s};

fn tmp(name: &str) -> PathBuf {
    common::scratch("plant", name)
}

fn starter(dir: &Path) -> (PathBuf, String) {
    let f = dir.join("air.toml");
    ok(&["new-train", "--stages", "2", "-o", s(&f)]);
    let text = std::fs::read_to_string(&f).unwrap();
    (f, text)
}

/// The number after `word` in `text`.
fn number_after(text: &str, word: &str) -> f64 {
    let rest = text
        .split(word)
        .nth(1)
        .unwrap_or_else(|| panic!("no '{word}' in {text}"));
    rest.trim_start()
        .split(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
        .next()
        .unwrap()
        .parse()
        .unwrap()
}

#[test]
fn the_plant_comes_from_the_file() {
    let dir = tmp("plant");
    let (f, text) = starter(&dir);
    let out = ok(&["surge-sim", "--file", s(&f), "--every", "1000"]);
    assert!(out.contains("Plant from the train file, stage 1"), "{out}");
    assert!(!out.contains("Invented demo scenario"), "{out}");
    // Tip speed U = π D N / 60 (D = 0.73 m, N = 10500 rpm in the starter).
    let u = number_after(&out, "tip speed");
    assert!(
        (u - std::f64::consts::PI * 0.73 * 10500.0 / 60.0).abs() < 0.1,
        "{u}"
    );
    // Speed of sound of dry air at 20 degC: 343.2 m/s (common practice;
    // a = √(kRT) with k = 1.4, R = 287.05 J/(kg K) gives 343.2).
    let a = number_after(&out, "speed of sound");
    assert!((a - 343.2).abs() < 1.0, "{a}");
    // Greitzer (1976): ω_H = a √(Ac / (Vp Lc)), B = U / (2 ω_H Lc), with
    // Ac = 0.03 m², Vp = 8 m³, Lc = 6 m from the file.
    let omega = a * (0.03_f64 / (8.0 * 6.0)).sqrt();
    let b = u / (2.0 * omega * 6.0);
    assert!((number_after(&out, "Helmholtz frequency") - omega).abs() < 0.01);
    assert!((number_after(&out, "B =") - b).abs() < 0.002, "{out}");
    // A larger plenum lowers ω_H and raises B (B ∝ √Vp): four times the
    // volume doubles B.
    let big = dir.join("big.toml");
    std::fs::write(
        &big,
        text.replace("plenum_volume_m3 = 8.0", "plenum_volume_m3 = 32.0"),
    )
    .unwrap();
    let out2 = ok(&["surge-sim", "--file", s(&big), "--every", "1000"]);
    let b2 = number_after(&out2, "B =");
    assert!((b2 / number_after(&out, "B =") - 2.0).abs() < 0.002, "{b2}");
}

/// Greitzer's model with B well above 0.8 goes into deep surge (flow
/// reversal) when the throttle closes past the peak with no recycle; the
/// recycle controller keeps the file's plant out of it.
#[test]
fn unprotected_surges_protected_does_not() {
    let dir = tmp("surge");
    let (f, _) = starter(&dir);
    let un = ok(&[
        "surge-sim",
        "--file",
        s(&f),
        "--unprotected",
        "--every",
        "100000",
    ]);
    let reversals = number_after(&un, "flow sign changes");
    assert!(reversals >= 2.0, "{un}");
    assert!(number_after(&un, "min margin") < 0.0, "{un}");
    let pr = ok(&["surge-sim", "--file", s(&f), "--every", "100000"]);
    assert_eq!(number_after(&pr, "flow sign changes"), 0.0, "{pr}");
    assert!(number_after(&pr, "min margin") > 0.0, "{pr}");
    let sweep = ok(&["surge-sim", "--file", s(&f), "--sweep"]);
    assert!(sweep.contains("Plant from the train file"), "{sweep}");
    assert!(sweep.lines().any(|l| l.starts_with("20,")), "{sweep}");
}

#[test]
fn missing_or_impossible_plant_data_is_refused_naming_the_field() {
    let dir = tmp("refuse");
    let (f, text) = starter(&dir);
    let cases: Vec<(String, &str, &str)> = vec![
        (
            text.replace("plenum_volume_m3 = 8.0 ", "# no plenum "),
            "stage[0].surge.plant",
            "missing plenum_volume_m3",
        ),
        (
            text.replace(
                "speed_rpm = 10500              #",
                "speed_rpm = 10000              #",
            ),
            "stage[0].surge.plant.speed_rpm",
            "not one of the map's speed lines (9000, 10500, 12000 rpm)",
        ),
        (
            text.replace(
                "operating_flow_m3_per_s = 1.45",
                "operating_flow_m3_per_s = 1.0",
            ),
            "stage[0].surge.plant.operating_flow_m3_per_s",
            "must lie between the surge flow",
        ),
        (
            text.replace("shutoff_head_fraction = 0.5", "shutoff_head_fraction = 1.5"),
            "stage[0].surge.plant.shutoff_head_fraction",
            "outside",
        ),
        (
            text.replace("duct_length_m = 6.0", "duct_length_m = 0.1")
                .replace("plenum_volume_m3 = 8.0", "plenum_volume_m3 = 100.0"),
            "stage[0].surge.plant.plenum_volume_m3",
            "Greitzer B",
        ),
        (
            {
                let a = text.find("[stage.surge.plant]").unwrap();
                let b = a + text[a..].find("\n[stage.flow_element]").unwrap();
                format!("{}{}", &text[..a], &text[b..])
            },
            "stage[0].surge",
            "needs [stage.surge.plant]",
        ),
    ];
    for (i, (t, key, why)) in cases.iter().enumerate() {
        let g = dir.join(format!("bad{i}.toml"));
        std::fs::write(&g, t).unwrap();
        let (_, err) = fails(&["surge-sim", "--file", s(&g)]);
        assert!(err.contains(key) && err.contains(why), "case {i}: {err}");
    }
    // Options that the file sets are refused, not ignored.
    let (code, err) = fails(&["surge-sim", "--file", s(&f), "--scan-ms", "10"]);
    assert_eq!(code, 2);
    assert!(err.contains("do not apply together"), "{err}");
}
