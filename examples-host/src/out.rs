//! Output helpers shared by every subcommand: values with their quality,
//! a small JSON tree written by `serde_json`, and a plain-text grid.
//!
//! Text output marks qualities with a suffix: nothing for good, `?` for
//! uncertain, and `--` in place of the number for bad (a bad value is a
//! placeholder and must not be read). JSON output carries every result as
//! `{"value": <number or null>, "quality": "good" | "uncertain" | "bad"}`;
//! `value` is `null` whenever the quality is bad.

use polytrope::fields::{FieldSpec, FieldValue, QuantityKind, ResultFields, StageInput};
use polytrope::scan::StageScan;
use polytrope::{Measured, Quality, Real};

use crate::keys::Key;
use crate::unit_system;

/// The caution shown with every result a user sees.
pub const CAUTION: &str = "Caution: not a certified safety function. Machine limits come from the \
machine maker's data; follow local codes and licensed engineering practice.";

/// Legend of the quality marks in text tables.
pub const LEGEND: &str = "Quality marks: plain = good, ? = uncertain, -- = bad (no usable value).";

/// A result widened to `f64` with its quality.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Val {
    /// The value in its SI unit.
    pub value: f64,
    /// Its quality.
    pub quality: Quality,
}

impl Val {
    /// Widens a kernel value. The shortest decimal form of the value in its
    /// own precision is kept (an f32 0.8 prints as 0.8, not 0.800000011920929).
    pub fn of<T: Real>(m: Measured<T>) -> Val {
        let wide = m.value.to_f64();
        let value = format!("{}", m.value).parse::<f64>().unwrap_or(wide);
        let quality = if value.is_finite() {
            m.quality
        } else {
            Quality::Bad
        };
        Val { value, quality }
    }

    /// A good value.
    #[cfg(test)]
    pub fn good(value: f64) -> Val {
        Val {
            value,
            quality: Quality::Good,
        }
    }

    /// The quality as a JSON / text word.
    pub fn quality_word(&self) -> &'static str {
        quality_word(self.quality)
    }
}

/// `good`, `uncertain` or `bad` (the kernel's stable name).
pub fn quality_word(q: Quality) -> &'static str {
    q.as_str()
}

/// How a quantity is shown in a text table: unit label, scale from SI, decimals.
#[derive(Clone, Copy, Debug)]
pub struct Disp {
    /// Unit shown in the table.
    pub unit: &'static str,
    /// Multiplier from the SI value.
    pub scale: f64,
    /// Decimals shown.
    pub decimals: usize,
    /// Added after scaling (absolute temperatures in degC or degF).
    pub offset: f64,
}

/// Display conventions used by the tables.
pub mod disp {
    use super::Disp;
    const fn d(unit: &'static str, scale: f64, decimals: usize) -> Disp {
        Disp {
            unit,
            scale,
            decimals,
            offset: 0.0,
        }
    }
    /// Dimensionless ratio.
    pub const RATIO: Disp = d("-", 1.0, 3);
    /// Dimensionless, 4 decimals.
    pub const RATIO4: Disp = d("-", 1.0, 4);
    /// Fraction shown in percent.
    pub const PERCENT: Disp = d("%", 100.0, 1);
    /// Kelvin.
    pub const KELVIN: Disp = d("K", 1.0, 1);
    /// Kelvin, two decimals.
    pub const KELVIN2: Disp = d("K", 1.0, 2);
    /// Specific work.
    pub const KJ_PER_KG: Disp = d("kJ/kg", 1e-3, 1);
    /// Power.
    pub const KW: Disp = d("kW", 1e-3, 1);
    /// Conductance.
    pub const KW_PER_K: Disp = d("kW/K", 1e-3, 2);
    /// Absolute pressure.
    pub const BAR_A: Disp = d("bar a", 1e-5, 3);
    /// Pressure difference, bar.
    pub const BAR: Disp = d("bar", 1e-5, 2);
    /// Pressure difference.
    pub const KPA: Disp = d("kPa", 1e-3, 1);
    /// Density.
    pub const KG_PER_M3: Disp = d("kg/m3", 1.0, 1);
    /// Mass flow.
    pub const KG_PER_S: Disp = d("kg/s", 1.0, 3);
}

/// A value as a table cell: `--` if bad, `n/a` if not applicable, `?`
/// appended if uncertain.
pub fn cell(v: Val, d: Disp) -> String {
    match v.quality {
        Quality::Bad => "--".to_string(),
        Quality::NotApplicable => "n/a".to_string(),
        Quality::Uncertain => format!("{:.*}?", d.decimals, v.value * d.scale + d.offset),
        Quality::Good => format!("{:.*}", d.decimals, v.value * d.scale + d.offset),
    }
}

/// A JSON value (a tree built from documented keys; `serde` writes it).
#[derive(Clone, Debug, PartialEq)]
pub enum Json {
    /// `null`
    Null,
    /// `true` / `false`
    Bool(bool),
    /// A number (non-finite numbers are written as `null`).
    Num(f64),
    /// An integer.
    Int(i64),
    /// A string.
    Str(String),
    /// An array.
    Arr(Vec<Json>),
    /// An object with ordered keys.
    Obj(Obj),
}

/// A JSON object whose keys come from the key registry ([`crate::keys`]),
/// so every key written is documented.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Obj(Vec<(&'static str, Json)>);

impl Obj {
    /// An empty object.
    pub fn new() -> Obj {
        Obj(Vec::new())
    }
    /// Any JSON value.
    pub fn put(&mut self, k: &Key, v: Json) -> &mut Obj {
        self.0.push((k.name, v));
        self
    }
    /// A result with its quality: `{"value": .., "quality": ..}`.
    pub fn val(&mut self, k: &Key, v: Val) -> &mut Obj {
        self.put(k, measured(v))
    }
    /// A plain number (a model parameter or an echoed input).
    pub fn num(&mut self, k: &Key, v: f64) -> &mut Obj {
        self.put(k, Json::Num(v))
    }
    /// A string.
    pub fn str(&mut self, k: &Key, v: &str) -> &mut Obj {
        self.put(k, Json::Str(v.to_string()))
    }
    /// Finishes the object.
    pub fn done(&mut self) -> Json {
        Json::Obj(core::mem::take(self))
    }
}

/// `{"value": .., "quality": ..}` with `null` for a bad value.
pub fn measured(v: Val) -> Json {
    let value = if !v.quality.is_usable() || !v.value.is_finite() {
        Json::Null
    } else {
        Json::Num(v.value)
    };
    let mut o = Obj::new();
    o.put(&crate::keys::VALUE, value);
    o.put(
        &crate::keys::QUALITY,
        Json::Str(v.quality_word().to_string()),
    );
    o.done()
}

impl Json {
    /// Pretty-printed JSON text (written by `serde_json`) with a trailing newline.
    pub fn to_text(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).unwrap_or_else(|_| "null".to_string());
        s.push('\n');
        s
    }
}

impl serde::Serialize for Json {
    fn serialize<S: serde::Serializer>(&self, ser: S) -> Result<S::Ok, S::Error> {
        use serde::ser::{SerializeMap, SerializeSeq};
        match self {
            Json::Null => ser.serialize_unit(),
            Json::Bool(b) => ser.serialize_bool(*b),
            Json::Num(x) if x.is_finite() => ser.serialize_f64(*x),
            Json::Num(_) => ser.serialize_unit(),
            Json::Int(i) => ser.serialize_i64(*i),
            Json::Str(t) => ser.serialize_str(t),
            Json::Arr(items) => {
                let mut seq = ser.serialize_seq(Some(items.len()))?;
                for item in items {
                    seq.serialize_element(item)?;
                }
                seq.end()
            }
            Json::Obj(Obj(fields)) => {
                let mut map = ser.serialize_map(Some(fields.len()))?;
                for (k, v) in fields {
                    map.serialize_entry(k, v)?;
                }
                map.end()
            }
        }
    }
}

/// A plain-text table: first column left-aligned, the others right-aligned.
#[derive(Debug, Default)]
pub struct Grid {
    rows: Vec<Vec<String>>,
}

impl Grid {
    /// A grid with a header row.
    pub fn new(header: &[&str]) -> Grid {
        Grid {
            rows: vec![header.iter().map(|h| h.to_string()).collect()],
        }
    }
    /// Appends a row.
    pub fn row(&mut self, cells: Vec<String>) {
        self.rows.push(cells);
    }
    /// Renders the grid, with a rule under the header.
    pub fn render(&self, out: &mut String) {
        let cols = self.rows.iter().map(Vec::len).max().unwrap_or(0);
        let mut width = vec![0usize; cols];
        for r in &self.rows {
            for (w, c) in width.iter_mut().zip(r) {
                *w = (*w).max(c.chars().count());
            }
        }
        for (i, r) in self.rows.iter().enumerate() {
            let mut line = String::new();
            for (j, (c, w)) in r.iter().zip(&width).enumerate() {
                if j == 0 {
                    line.push_str(&format!("{c:<w$}"));
                } else {
                    line.push_str(&format!("  {c:>w$}"));
                }
            }
            out.push_str(line.trim_end());
            out.push('\n');
            if i == 0 {
                let total: usize = width.iter().sum::<usize>() + 2 * cols.saturating_sub(1);
                out.push_str(&"-".repeat(total));
                out.push('\n');
            }
        }
    }
}

/// How much precision a table shows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Detail {
    /// Train overviews (`demo`): percent, one decimal on kelvin.
    Summary,
    /// Single-point results (`stage`): four decimals on ratios.
    Fine,
}

/// The table display of a kernel field, from its quantity kind.
pub fn disp_of(spec: &FieldSpec, detail: Detail) -> Disp {
    // The user's unit system (`--units`), if chosen, for every dimensional
    // quantity (one source: `crate::unit_system`).
    if let (Some(u), Some(d)) = (
        unit_system::chosen(),
        unit_system::Dimension::of_field(spec.kind, spec.key),
    ) {
        let sh = u.shown(d);
        return Disp {
            unit: sh.unit,
            scale: sh.scale,
            decimals: sh.decimals,
            offset: sh.offset,
        };
    }
    let fine = detail == Detail::Fine;
    let pick = |f: Disp, s: Disp| if fine { f } else { s };
    match spec.kind {
        // A relative drop reads best in percent.
        QuantityKind::PressureRatio if spec.key.starts_with("relative") => disp::PERCENT,
        QuantityKind::PressureRatio | QuantityKind::Exponent | QuantityKind::Compressibility => {
            pick(disp::RATIO4, disp::RATIO)
        }
        QuantityKind::Temperature | QuantityKind::TemperatureDifference => {
            pick(disp::KELVIN2, disp::KELVIN)
        }
        QuantityKind::SpecificWork => disp::KJ_PER_KG,
        QuantityKind::Efficiency | QuantityKind::Fraction => pick(disp::RATIO4, disp::PERCENT),
        QuantityKind::Power => disp::KW,
        QuantityKind::Pressure if spec.key.contains("drop") => disp::KPA,
        QuantityKind::Pressure if spec.key.contains("rise") => disp::BAR,
        QuantityKind::Pressure => disp::BAR_A,
        QuantityKind::MassFlow => disp::KG_PER_S,
        QuantityKind::Conductance => disp::KW_PER_K,
        QuantityKind::Density => disp::KG_PER_M3,
        _ => Disp {
            unit: "-",
            scale: 1.0,
            decimals: 0,
            offset: 0.0,
        },
    }
}

/// The display of a quantity of dimension `d`: the user's unit system if
/// chosen (`--units`), `default` otherwise.
pub fn disp_or(d: unit_system::Dimension, default: Disp) -> Disp {
    match unit_system::chosen() {
        Some(u) => {
            let sh = u.shown(d);
            Disp {
                unit: sh.unit,
                scale: sh.scale,
                decimals: sh.decimals,
                offset: sh.offset,
            }
        }
        None => default,
    }
}

/// One field of a kernel result: its spec (key, label, unit) and value.
pub type Field<T> = (&'static FieldSpec, FieldValue<T>);

/// Every field of a result, in the kernel's order.
pub fn fields_of<T: Real, R: ResultFields<T>>(r: &R) -> Vec<Field<T>> {
    let mut v = Vec::new();
    r.visit_fields(&mut |spec, value| v.push((spec, value)));
    v
}

/// Some inputs of a stage scan (absent ones read bad).
pub fn inputs_of<T: Real>(s: &StageScan<T>, which: &[StageInput]) -> Vec<Field<T>> {
    which
        .iter()
        .map(|w| {
            let m = s.input(*w).unwrap_or_else(Measured::bad);
            (w.spec(), FieldValue::Real(m))
        })
        .collect()
}

/// A field's value as JSON: `{value, quality}` for a measured value, a
/// plain number, a boolean, an integer or a string.
pub fn field_json<T: Real>(v: FieldValue<T>) -> Json {
    match v {
        FieldValue::Real(m) => measured(Val::of(m)),
        FieldValue::Plain(x) => Json::Num(Val::of(Measured::good(x)).value),
        FieldValue::Flag(b) => Json::Bool(b),
        FieldValue::Count(n) => Json::Int(i64::from(n)),
        FieldValue::Tag(t) => Json::Str(t.to_string()),
    }
}

/// A field's value as a table cell.
pub fn field_cell<T: Real>(spec: &FieldSpec, v: FieldValue<T>, detail: Detail) -> String {
    match v {
        FieldValue::Real(m) => cell(Val::of(m), disp_of(spec, detail)),
        FieldValue::Plain(x) => cell(Val::of(Measured::good(x)), disp_of(spec, detail)),
        FieldValue::Flag(b) => (if b { "yes" } else { "no" }).to_string(),
        FieldValue::Count(n) => n.to_string(),
        FieldValue::Tag(t) => t.to_string(),
    }
}

/// Writes fields into a JSON object under their kernel keys.
pub fn put_fields<T: Real>(o: &mut Obj, fields: &[Field<T>]) {
    for (spec, v) in fields {
        o.put(&Key::of(spec), field_json(*v));
    }
}

/// Fields as a table with one column per item (`items`: column title and
/// that item's fields, all items of one type).
pub fn field_column_table<T: Real>(items: &[(String, Vec<Field<T>>)], detail: Detail) -> Grid {
    let mut header: Vec<&str> = vec!["quantity", "unit"];
    header.extend(items.iter().map(|(t, _)| t.as_str()));
    let mut g = Grid::new(&header);
    let Some((_, first)) = items.first() else {
        return g;
    };
    for (row, (spec, _)) in first.iter().enumerate() {
        let mut cells = vec![
            spec.label.to_string(),
            disp_of(spec, detail).unit.to_string(),
        ];
        cells.extend(items.iter().map(|(_, f)| {
            f.get(row)
                .map_or("--".to_string(), |(s, v)| field_cell(s, *v, detail))
        }));
        g.row(cells);
    }
    g
}

/// Fields as a list (quantity, value, unit) for one result.
pub fn field_list_table<T: Real>(fields: &[Field<T>], detail: Detail) -> Grid {
    let mut g = Grid::new(&["quantity", "value", "unit"]);
    for (spec, v) in fields {
        g.row(vec![
            spec.label.to_string(),
            field_cell(spec, *v, detail),
            disp_of(spec, detail).unit.to_string(),
        ]);
    }
    g
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn f32_values_keep_their_short_form() {
        let v = Val::of(Measured::good(0.8_f32));
        assert_eq!(v.value, 0.8);
        let v = Val::of(Measured::new(263_195.3_f64, Quality::Uncertain));
        assert_eq!(v.value, 263_195.3);
        assert_eq!(v.quality, Quality::Uncertain);
    }

    #[test]
    fn cells_mark_quality() {
        let d = disp::KJ_PER_KG;
        assert_eq!(cell(Val::good(263_195.0), d), "263.2");
        let u = Val {
            value: 1.0002,
            quality: Quality::Uncertain,
        };
        assert_eq!(cell(u, disp::RATIO), "1.000?");
        let b = Val {
            value: 0.0,
            quality: Quality::Bad,
        };
        assert_eq!(cell(b, disp::RATIO), "--");
    }

    #[test]
    fn json_writer_escapes_and_nulls() {
        let mut o = Obj::new();
        o.str(&crate::keys::NOTES, "a \"quoted\"\nline");
        o.num(&crate::keys::SCANS, f64::NAN);
        let t = o.done().to_text();
        assert!(t.contains(r#""a \"quoted\"\nline""#), "{t}");
        let back: serde_json::Value = serde_json::from_str(&t).unwrap();
        assert_eq!(back["scans"], serde_json::Value::Null);
        assert!(t.contains("null"), "{t}");
    }
}
