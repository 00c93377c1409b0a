//! The firmware's printed outputs against the f64 reference build.
//!
//! `ci/firmware` runs the demo train (an invented scenario) over the
//! committed scan table `ci/firmware/src/table.rs` on emulated Cortex-M4F and
//! Cortex-M0 and prints every output of every scan as f32 bit patterns.
//! `ci/checks.d/firmware.sh` passes those logs in `POLYTROPE_FIRMWARE_OUTPUTS`
//! (paths separated by `:`); this test runs the same table through the f64
//! reference build here and requires, output by output, the same quality,
//! the same condition codes and values within `polytrope::tolerance` (the
//! one tolerance table; nothing here restates one).
//!
//! Without the variable the test checks the host's own f32 build the same
//! way (so it still fails if the table or the codec is wrong).
//!
//! The table is generated, not hand-written, and a test checks it is what
//! the generator writes (demo scans from `polytrope::demo::scan`, then edge
//! cases, listed below); to rewrite it:
//! `POLYTROPE_WRITE_SCAN_TABLE=1 cargo test --features demo --test firmware_outputs scan_table`.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

#[path = "../ci/firmware/src/codec.rs"]
#[allow(dead_code)]
mod codec;
#[path = "../ci/firmware/src/table.rs"]
#[allow(dead_code)]
mod table;

#[path = "reference/snapshot_fields.rs"]
mod snapshot_fields;

use codec::{decode_scan, encode_stage, quality_code, RawStage};
use polytrope::compression::isentropic_discharge_temperature;
use polytrope::demo;
use polytrope::fields::FieldValue;
use polytrope::gas::CARBON_DIOXIDE;
use polytrope::quality::{Measured, Quality};
use polytrope::scan::Scan;
use polytrope::units::{Kelvin, PressureAbs};
use snapshot_fields::Kind;

/// One output line: (scan, index, `group.key`, value or exact text,
/// quality), as the harness prints it.
#[derive(Debug, PartialEq)]
enum Line {
    V(usize, usize, String, f64, u8),
    C(usize, usize, String, String),
}

/// The reference (or host) run of the table: every line, with the
/// agreement rule of each value line (from the kernel's field list via
/// `snapshot_fields`, the same rules as tests/f32_vs_f64.rs).
fn run<T: codec::FromF32>() -> Vec<(Line, Option<Kind>)> {
    let mut train = demo::train::<T>().unwrap();
    let mut lines = Vec::new();
    for (i, raw) in table::SCANS.iter().enumerate() {
        let scan = decode_scan::<T, { demo::STAGES }>(raw);
        let snap = train.update(&scan);
        let mut rules = snapshot_fields::fields(snap).into_iter().map(|f| f.kind);
        snap.visit_groups(&mut |g, spec, v| {
            let name = format!("{}.{}", g.as_str(), spec.key);
            let c = |text: String| (Line::C(i, g.index(), name.clone(), text), None);
            lines.push(match v {
                FieldValue::Real(m) => (
                    Line::V(
                        i,
                        g.index(),
                        name.clone(),
                        m.value.to_f64(),
                        quality_code(m.quality),
                    ),
                    rules.next(),
                ),
                FieldValue::Plain(x) => (
                    Line::V(i, g.index(), name.clone(), x.to_f64(), 0),
                    rules.next(),
                ),
                FieldValue::Flag(b) => c(u32::from(b).to_string()),
                FieldValue::Count(n) => c(n.to_string()),
                FieldValue::Tag(t) => c(t.to_string()),
            })
        });
    }
    lines
}

fn lines_of<T: codec::FromF32>() -> Vec<Line> {
    run::<T>().into_iter().map(|(l, _)| l).collect()
}

fn parse_log(text: &str) -> Vec<Line> {
    assert!(
        text.lines().any(|l| l.trim() == "END ok"),
        "firmware run did not complete (no `END ok`)"
    );
    text.lines()
        .filter_map(|l| {
            let f: Vec<&str> = l.split_whitespace().collect();
            match f.first() {
                Some(&"V") => Some(Line::V(
                    f[1].parse().unwrap(),
                    f[2].parse().unwrap(),
                    f[3].to_string(),
                    f64::from(f32::from_bits(u32::from_str_radix(f[4], 16).unwrap())),
                    f[5].parse().unwrap(),
                )),
                Some(&"C") => Some(Line::C(
                    f[1].parse().unwrap(),
                    f[2].parse().unwrap(),
                    f[3].to_string(),
                    f[4].to_string(),
                )),
                _ => None,
            }
        })
        .collect()
}

/// Compares device lines with reference lines; returns the failures.
fn compare(device: &[Line], reference: &[(Line, Option<Kind>)]) -> Vec<String> {
    let mut failures = Vec::new();
    if device.len() != reference.len() {
        failures.push(format!(
            "{} device outputs, {} reference outputs",
            device.len(),
            reference.len()
        ));
    }
    for (d, (r, rule)) in device.iter().zip(reference) {
        match (d, r, rule) {
            (Line::V(s, i, n, dv, dq), Line::V(rs, ri, rn, rv, rq), Some(rule))
                if (s, i, n) == (rs, ri, rn) =>
            {
                if dq != rq || !dv.is_finite() || !rule.accepts(*dv, *rv) {
                    failures.push(format!(
                        "scan {s} [{i}] {n}: device {dv} (q{dq}), reference {rv} (q{rq}), rule {}",
                        rule.label()
                    ));
                }
            }
            (Line::C(..), Line::C(..), None) if d == r => {}
            _ => failures.push(format!("device {d:?} vs reference {r:?}")),
        }
    }
    failures
}

#[test]
fn firmware_outputs_match_the_f64_reference() {
    let reference = run::<f64>();
    assert!(reference.len() > 1000, "the table exercises the train");
    // The README quotes how many outputs each firmware run prints.
    let n = reference.len();
    let quoted = format!("({},{:03} values each)", n / 1000, n % 1000);
    assert!(
        include_str!("../README.md").contains(&quoted),
        "README.md should say {quoted}"
    );
    let paths = std::env::var("POLYTROPE_FIRMWARE_OUTPUTS").unwrap_or_default();
    let mut checked = 0;
    for path in paths.split(':').filter(|p| !p.is_empty()) {
        let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{path}: {e}"));
        let device = parse_log(&text);
        let failures = compare(&device, &reference);
        assert!(
            failures.is_empty(),
            "{path}: {} disagreements with the f64 reference, first: {:#?}",
            failures.len(),
            &failures[..failures.len().min(10)]
        );
        // The device's f32 build and the host's f32 build run the same
        // software maths (libm or micromath, no FMA contraction), so every
        // output must be bit-identical.
        let host = lines_of::<f32>();
        let differing: Vec<_> = device.iter().zip(&host).filter(|(a, b)| a != b).collect();
        assert!(
            differing.is_empty() && device.len() == host.len(),
            "{path}: {} outputs not bit-identical to the host f32 build, first: {:?}",
            differing.len(),
            differing.first()
        );
        eprintln!(
            "{path}: {} outputs within tolerance of the f64 reference and bit-identical to the host f32 build",
            device.len()
        );
        checked += 1;
    }
    if checked == 0 {
        // No firmware logs: hold the host f32 build to the same standard.
        let failures = compare(&lines_of::<f32>(), &reference);
        assert!(failures.is_empty(), "{failures:#?}");
    }
}

#[test]
fn comparison_catches_a_wrong_value_and_a_wrong_quality() {
    let reference = run::<f64>();
    let mut device = lines_of::<f32>();
    let at = device
        .iter()
        .position(
            |l| matches!(l, Line::V(_, _, n, v, 0) if n == "stage.isentropic_efficiency" && *v > 0.5),
        )
        .unwrap();
    if let Line::V(_, _, _, v, _) = &mut device[at] {
        *v *= 1.2; // beyond the efficiency bound of either build (default or approx-math)
    }
    assert_eq!(compare(&device, &reference).len(), 1);
    if let Line::V(_, _, _, v, q) = &mut device[at] {
        *v /= 1.2;
        *q = 1;
    }
    assert_eq!(compare(&device, &reference).len(), 1);
    device.pop();
    assert!(!compare(&device, &reference).is_empty());
}

#[test]
fn table_covers_the_edge_cases() {
    use polytrope::cooler::CoolerCondition as CC;
    use polytrope::stage::StageCondition as SC;
    let lines = lines_of::<f64>();
    let code = |name: &str, c: &str| {
        lines
            .iter()
            .any(|l| matches!(l, Line::C(_, _, n, x) if n == name && x == c))
    };
    for c in [
        SC::Normal,
        SC::InputBad,
        SC::NoCompression,
        SC::NoTemperatureRise,
        SC::EfficiencyAboveOne,
    ] {
        assert!(code("stage.condition", c.as_str()), "stage condition {c:?}");
    }
    for c in [
        CC::Normal,
        CC::InputBad,
        CC::OutletAboveInlet,
        CC::OutletBelowCoolant,
        CC::NoDrivingDifference,
    ] {
        assert!(
            code("cooler.condition", c.as_str()),
            "cooler condition {c:?}"
        );
    }
    assert!(
        code("stage.steady_state", "1"),
        "the demo scans reach steady state"
    );
    for q in 0..=2 {
        assert!(
            lines
                .iter()
                .any(|l| matches!(l, Line::V(.., qq) if *qq == q)),
            "quality {q}"
        );
    }
}

// ---- generator ---------------------------------------------------------

fn kelvin(v: f64) -> Measured<Kelvin<f64>> {
    Measured::good(Kelvin::new(v))
}

/// The edge cases, each applied to one demo scan (name, mutation).
type Edge = (&'static str, fn(&mut Scan<f64, 5>));
const EDGES: &[Edge] = &[
    ("bad suction pressure, stage 2", |s| {
        s.stages[1].suction_pressure.quality = Quality::Bad
    }),
    ("NaN discharge temperature, stage 3", |s| {
        s.stages[2].discharge_temperature.value = Kelvin::new(f64::NAN)
    }),
    ("discharge below suction pressure, stage 1", |s| {
        let p1 = s.stages[0].suction_pressure.value.pa();
        s.stages[0].discharge_pressure.value = PressureAbs::from_pa(0.9 * p1)
    }),
    ("no temperature rise, stage 2", |s| {
        let t1 = s.stages[1].suction_temperature.value.kelvin();
        s.stages[1].discharge_temperature = kelvin(t1 - 5.0)
    }),
    ("discharge 1 K below isentropic, stage 3", |s| {
        let st = &mut s.stages[2];
        let r = st.discharge_pressure.value.pa() / st.suction_pressure.value.pa();
        let t1 = st.suction_temperature.value.kelvin();
        let t2s = isentropic_discharge_temperature(t1, r, CARBON_DIOXIDE.k);
        st.discharge_temperature = kelvin(t2s - 1.0)
    }),
    ("zero mass flow", |s| {
        s.stages[0].mass_flow = Some(Measured::good(0.0))
    }),
    ("no mass flow measured", |s| s.stages[0].mass_flow = None),
    ("uncertain readings", |s| {
        s.stages[3].discharge_pressure.quality = Quality::Uncertain;
        s.stages[0].suction_temperature.quality = Quality::Uncertain
    }),
    ("cooler outlet above inlet, cooler 1", |s| {
        let t2 = s.stages[0].discharge_temperature.value.kelvin();
        s.stages[0].cooler.as_mut().unwrap().gas_outlet_temperature = kelvin(t2 + 5.0)
    }),
    ("cooler outlet below coolant, cooler 2", |s| {
        let c = s.stages[1].cooler.as_mut().unwrap();
        let tc = c.coolant_inlet_temperature.value.kelvin();
        c.gas_outlet_temperature = kelvin(tc - 3.0)
    }),
    ("coolant outlet and flow not measured, cooler 3", |s| {
        let c = s.stages[2].cooler.as_mut().unwrap();
        c.coolant_outlet_temperature = None;
        c.coolant_mass_flow = None
    }),
    ("Z out of range, Z bad", |s| {
        s.stages[1].compressibility = Some(Measured::good(3.0));
        s.stages[2].compressibility = Some(Measured::new(0.9, Quality::Bad))
    }),
    ("infinite suction pressure, stage 4", |s| {
        s.stages[3].suction_pressure.value = PressureAbs::from_pa(f64::INFINITY)
    }),
    ("negative suction temperature, stage 1", |s| {
        s.stages[0].suction_temperature = kelvin(-5.0)
    }),
    ("discharge pressure above the sensor range, stage 3", |s| {
        s.stages[2].discharge_pressure.value = PressureAbs::from_pa(2.0e9)
    }),
    ("cooler gas outlet pressure measured, cooler 2", |s| {
        let p2 = s.stages[1].discharge_pressure.value.pa();
        s.stages[1].cooler.as_mut().unwrap().gas_outlet_pressure =
            Some(Measured::good(PressureAbs::from_pa(0.99 * p2)))
    }),
    ("pump discharge below suction", |s| {
        let p1 = s.stages[4].suction_pressure.value.pa();
        s.stages[4].discharge_pressure.value = PressureAbs::from_pa(0.95 * p1)
    }),
    ("cooler not instrumented, cooler 1", |s| {
        s.stages[0].cooler = None
    }),
    ("equal LMTD terminal differences, cooler 1", |s| {
        let t2 = s.stages[0].discharge_temperature.value.kelvin();
        let c = s.stages[0].cooler.as_mut().unwrap();
        let dt =
            c.gas_outlet_temperature.value.kelvin() - c.coolant_inlet_temperature.value.kelvin();
        c.coolant_outlet_temperature = Some(kelvin(t2 - dt))
    }),
    ("no driving difference, cooler 4", |s| {
        let st = &mut s.stages[3];
        let tc = st.cooler.unwrap().coolant_inlet_temperature.value.kelvin();
        st.suction_temperature = kelvin(tc - 10.0);
        st.discharge_temperature = kelvin(tc + 0.3);
        st.cooler.as_mut().unwrap().gas_outlet_temperature = kelvin(tc + 0.2)
    }),
    ("suction temperature at the sensor limit, stage 1", |s| {
        s.stages[0].suction_temperature = kelvin(2000.0);
        s.stages[0].discharge_temperature = kelvin(2100.0)
    }),
    ("every reading bad", |s| {
        for st in s.stages.iter_mut() {
            st.suction_pressure.quality = Quality::Bad;
            st.suction_temperature.quality = Quality::Bad;
            st.discharge_pressure.quality = Quality::Bad;
            st.discharge_temperature.quality = Quality::Bad;
        }
    }),
];

/// Demo scan numbers of the normal part of the table.
fn demo_scan(i: u32) -> Scan<f64, 5> {
    demo::scan::<f64>(i * 7)
}

/// Compares the committed table with the generator's output; writes it
/// only when `POLYTROPE_WRITE_SCAN_TABLE` is set.
#[test]
fn scan_table_is_what_the_generator_writes() {
    // MINIMAL_SCAN is a generated copy of the first scan (a copy, so the
    // minimal firmware does not link the whole table and its size figure
    // stays the kernel's).
    assert_eq!(table::MINIMAL_SCAN, table::SCANS[0]);
    let mut scans: Vec<(String, Scan<f64, 5>)> = (0..16)
        .map(|i| (format!("demo scan {}", i * 7), demo_scan(i)))
        .collect();
    for (j, (name, edit)) in EDGES.iter().enumerate() {
        let mut s = demo_scan(16 + j as u32);
        edit(&mut s);
        scans.push(((*name).to_string(), s));
    }
    for i in 0..10 {
        let n = 16 + EDGES.len() as u32 + i;
        scans.push((format!("demo scan {}", n * 7), demo_scan(n)));
    }
    let stage = |r: &RawStage| {
        let b: Vec<String> = r.bits.iter().map(|x| format!("0x{x:08x}")).collect();
        let q: Vec<String> = r.q.iter().map(u8::to_string).collect();
        format!(
            "        RawStage {{\n            bits: [{}],\n            q: [{}],\n        }},\n",
            b.join(", "),
            q.join(", ")
        )
    };
    let mut out = String::from(
        "//! The committed scan table (GENERATED: `POLYTROPE_WRITE_SCAN_TABLE=1 cargo test\n\
         //! --features demo --test firmware_outputs scan_table`; do not edit; the test checks it). Demo scans of the\n\
         //! invented scenario in `polytrope::demo`, then edge cases, then demo scans\n\
         //! again; f32 bit patterns and quality codes (see `codec`).\n\n\
         use crate::codec::RawStage;\n\n",
    );
    out += &format!(
        "/// Every scan the harness runs, in order.\npub static SCANS: [[RawStage; 5]; {}] = [\n",
        scans.len()
    );
    for (name, s) in &scans {
        out += &format!("    // {name}\n    [\n");
        for st in &s.stages {
            out += &stage(&encode_stage(st));
        }
        out += "    ],\n";
    }
    out +=
        "];\n\n/// The one scan of the minimal (size and panic-freedom) firmware: demo scan 0.\n";
    out += "pub static MINIMAL_SCAN: [RawStage; 5] = [\n";
    for st in &demo_scan(0).stages {
        out += &stage(&encode_stage(st));
    }
    out += "];\n";
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/ci/firmware/src/table.rs");
    let mut fmt = std::process::Command::new("rustfmt")
        .args(["--edition", "2021", "--emit", "stdout"])
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .expect("rustfmt on PATH");
    {
        use std::io::Write as _;
        fmt.stdin.take().unwrap().write_all(out.as_bytes()).unwrap();
    }
    let formatted = fmt.wait_with_output().unwrap();
    assert!(formatted.status.success(), "rustfmt failed");
    let generated = String::from_utf8(formatted.stdout).unwrap();
    if std::env::var_os("POLYTROPE_WRITE_SCAN_TABLE").is_some() {
        std::fs::write(path, &generated).unwrap();
    } else {
        let committed = std::fs::read_to_string(path).unwrap();
        assert!(
            committed == generated,
            "{path} differs from what the generator writes; if the change is intended, \
             regenerate with POLYTROPE_WRITE_SCAN_TABLE=1 cargo test --features demo --test firmware_outputs scan_table"
        );
    }
}
