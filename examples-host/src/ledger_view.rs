//! The loss ledger of the demo's last scan (`polytrope::ledger`): a text
//! table, one row per line in the order of attribution, each in kW (or the
//! `--units` choice's power unit) with its quality and its share of the
//! measured total power; and the JSON object,
//! written from the kernel's field lists (`polytrope::fields`).

use polytrope::ledger::{evaluate_ledger_into, Cause, Ledger, LedgerConfig};
use polytrope::scan::Scan;
use polytrope::train::Train;
use polytrope::{gas::GasModel, Measured, Real};

use crate::keys as k;
use crate::out::{self, disp, Json, Obj, Val};

/// One line: cause, zero-based stage, power.
pub type Line = (Cause, Option<u8>, Val);

/// The ledger of `scan`, the scan `train` has just been updated with
/// (first-suction reference, no recycle loop in the demo).
pub fn ledger<T: Real, G: GasModel<T>, const N: usize, const W: usize>(
    train: &Train<T, G, N, W>,
    scan: &Scan<T, N>,
) -> Ledger<T, N> {
    let mut l = Ledger::<T, N>::bad();
    evaluate_ledger_into(
        train.config(),
        &LedgerConfig::default(),
        scan,
        train.snapshot(),
        Measured::bad(),
        &mut l,
    );
    l
}

/// The ledger's lines in the order of attribution.
pub fn lines<T: Real, const N: usize>(l: &Ledger<T, N>) -> Vec<Line> {
    let mut v = Vec::new();
    l.visit_lines(&mut |c, i, m| v.push((c, i, Val::of(m))));
    v
}

fn name(c: Cause, stage: Option<u8>) -> String {
    match stage {
        Some(i) => format!("{}, stage {}", c.label(), u32::from(i) + 1),
        None => c.label().to_string(),
    }
}

fn total(lines: &[Line]) -> Option<Val> {
    lines
        .iter()
        .find(|(c, _, _)| *c == Cause::MeasuredTotal)
        .map(|l| l.2)
}

/// The text section.
pub fn text(lines: &[Line]) -> String {
    let mut s = String::from(
        "\nWhere the power goes (loss ledger, from the isothermal power of the duty to the \
         measured power; each line priced with every earlier cause present)\n",
    );
    let whole = total(lines);
    // Power in the chosen unit system (`--units`), kW without one.
    let power = out::disp_or(crate::unit_system::Dimension::Power, disp::KW);
    let mut g = out::Grid::new(&["line", power.unit, "% of measured"]);
    for (c, i, v) in lines {
        let share = match whole {
            Some(w) if v.quality.is_usable() && w.quality.is_usable() && w.value > 0.0 => {
                out::cell(
                    Val {
                        value: v.value / w.value,
                        quality: v.quality.worst(w.quality),
                    },
                    disp::PERCENT,
                )
            }
            _ => "--".to_string(),
        };
        g.row(vec![name(*c, *i), out::cell(*v, power), share]);
    }
    g.render(&mut s);
    s
}

/// The JSON object: the train-wide lines, then `stages`.
pub fn json<T: Real, const N: usize>(l: &Ledger<T, N>) -> Json {
    let mut o = Obj::new();
    out::put_fields(&mut o, &out::fields_of(l));
    let stages = (0..N)
        .filter_map(|i| l.stage(i).map(|s| (i, s)))
        .map(|(i, s)| {
            let mut so = Obj::new();
            so.put(&k::STAGE, Json::Int(i as i64 + 1));
            out::put_fields(&mut so, &out::fields_of(&s));
            so.done()
        })
        .collect();
    o.put(&k::STAGES, Json::Arr(stages));
    o.done()
}
