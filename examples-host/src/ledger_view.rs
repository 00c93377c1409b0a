//! The loss ledger of the demo's last scan (`polytrope::ledger`): a text
//! table and a JSON array, one entry per line in the order of attribution,
//! each in W (kW in the table) with its quality and its share of the
//! measured total power.

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
pub fn lines<T: Real, G: GasModel<T>, const N: usize, const W: usize>(
    train: &Train<T, G, N, W>,
    scan: &Scan<T, N>,
) -> Vec<Line> {
    let mut l = Ledger::<T, N>::bad();
    evaluate_ledger_into(
        train.config(),
        &LedgerConfig::default(),
        scan,
        train.snapshot(),
        Measured::bad(),
        &mut l,
    );
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
    let mut g = out::Grid::new(&["line", "kW", "% of measured"]);
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
        g.row(vec![name(*c, *i), out::cell(*v, disp::KW), share]);
    }
    g.render(&mut s);
    s
}

/// The JSON array.
pub fn json(lines: &[Line]) -> Json {
    Json::Arr(
        lines
            .iter()
            .map(|(c, i, v)| {
                let mut o = Obj::new();
                o.str(&k::CAUSE, c.as_str());
                if let Some(i) = i {
                    o.put(&k::STAGE, Json::Int(i64::from(*i) + 1));
                }
                o.val(&k::LINE_POWER, *v);
                o.done()
            })
            .collect(),
    )
}
