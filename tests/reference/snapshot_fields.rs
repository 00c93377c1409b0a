//! Test helper (included with `#[path]` by tests/f32_vs_f64.rs,
//! tests/edge_inputs.rs and tests/firmware_outputs.rs): walks every number
//! of a `Snapshot` through the kernel's field list
//! (`Snapshot::visit_groups`), naming it and saying which entry of
//! `polytrope::tolerance` governs its f32-vs-f64 agreement.

#![allow(dead_code)]

use polytrope::tolerance::{self, Tolerance};
use polytrope::train::Snapshot;
use polytrope::{Measured, Quality, Real};

/// How the f32 value of a field must agree with the f64 value.
#[derive(Clone, Copy, Debug)]
pub enum Kind {
    /// The table entry applies directly.
    Table(Tolerance),
    /// A value passed through from the inputs or the configuration: the f32
    /// value equals the f64 value rounded to f32.
    PassThrough,
    /// Interstage deviation `measured / optimum - 1`: the relative errors
    /// of the optimum (a `PRESSURE`) and of the division (a
    /// `PRESSURE_RATIO`) add, on `1 + deviation`.
    Deviation,
    /// A difference `a - b` of two quantities governed by the same entry:
    /// it agrees within the sum of the operands' tolerances,
    /// `2·atol + rtol·scale` with `scale = |a| + |b|` (f64 values).
    Difference {
        /// The operands' entry.
        tol: Tolerance,
        /// `|a| + |b|` of the operands.
        scale: f64,
    },
    /// UA = duty / LMTD: relative tolerance is the sum of the relative
    /// tolerances of `POWER` (at this duty) and `TEMPERATURE_DIFFERENCE`
    /// (at this LMTD); values are the f64 duty and LMTD.
    Conductance {
        /// Heat duty, W.
        duty: f64,
        /// LMTD, K.
        lmtd: f64,
    },
}

/// One number of a snapshot.
#[derive(Clone, Debug)]
pub struct Field {
    /// Path, e.g. `stage1.isentropic_head`.
    pub name: String,
    /// Agreement rule.
    pub kind: Kind,
    /// Value, widened to f64.
    pub value: f64,
    /// Quality (plain numbers without a quality count as good).
    pub quality: Quality,
}

impl Kind {
    /// Largest |f32 - f64| the rule allows at this f64 `reference`
    /// (`atol + rtol·|reference|` of the table entry, or the derived rule).
    pub fn bound(&self, reference: f64) -> f64 {
        // `active()`: this build's columns (the approx-math ones with that
        // feature).
        match *self {
            Kind::Table(t) => {
                let (rtol, atol) = t.active();
                atol + rtol * reference.abs()
            }
            Kind::PassThrough => 0.0,
            Kind::Deviation => {
                let (rp, _) = tolerance::PRESSURE.active();
                let (rr, _) = tolerance::PRESSURE_RATIO.active();
                (rp + rr) * (1.0 + reference).abs()
            }
            Kind::Difference { tol, scale } => {
                let (rtol, atol) = tol.active();
                2.0 * atol + rtol * scale
            }
            Kind::Conductance { duty, lmtd } => {
                let (rp, ap) = tolerance::POWER.active();
                let (rd, ad) = tolerance::TEMPERATURE_DIFFERENCE.active();
                let r = (ap + rp * duty.abs()) / duty.abs() + (ad + rd * lmtd.abs()) / lmtd.abs();
                r * reference.abs()
            }
        }
    }

    /// `true` if `device` (f32 build) agrees with `reference` (f64 build).
    pub fn accepts(&self, device: f64, reference: f64) -> bool {
        if device == reference {
            // Exact agreement meets every rule (also where a derived bound
            // is undefined, e.g. UA with zero duty).
            return true;
        }
        match *self {
            // Exactly the table's own test.
            Kind::Table(t) => t.accepts(device, reference),
            Kind::PassThrough => device == f64::from(reference as f32),
            _ => (device - reference).abs() <= self.bound(reference),
        }
    }

    /// Name of the rule: the table quantity, marked when derived.
    pub fn label(&self) -> String {
        match *self {
            Kind::Table(t) => t.quantity.to_owned(),
            Kind::PassThrough => "pass-through (input / configuration)".to_owned(),
            Kind::Deviation => "interstage deviation [pressure and ratio]".to_owned(),
            Kind::Difference { tol, .. } => format!("{} [difference of two]", tol.quantity),
            Kind::Conductance { .. } => "UA [power / temperature difference]".to_owned(),
        }
    }
}

use polytrope::fields::{Derivation, FieldValue, Group};
use tolerance::{PRESSURE_RATIO, SPECIFIC_WORK};

/// The agreement rule of one field, from the kernel's field list: the
/// kind's table entry for a computed value, exact (after rounding to f32)
/// for a pass-through, and for a difference or quotient the rule built from
/// its operands (`others`: the f64-or-f32 values of the same group, by name).
fn rule(spec: &polytrope::fields::FieldSpec, others: &[(&str, f64)]) -> Kind {
    let get = |n: &str| {
        others
            .iter()
            .find(|(k, _)| *k == n)
            .map(|(_, v)| v.abs())
            .unwrap_or_else(|| panic!("{}: operand {n} not in its group", spec.name))
    };
    match (spec.derivation, spec.name) {
        (Derivation::PassThrough, _) => Kind::PassThrough,
        (Derivation::Computed, _) => {
            Kind::Table(spec.kind.tolerance().unwrap_or_else(|| {
                panic!("{}: add a tolerance-table entry for its kind", spec.name)
            }))
        }
        (Derivation::Difference, "work_above_isothermal") => Kind::Difference {
            tol: SPECIFIC_WORK,
            scale: get("actual_work") + get("isothermal_head"),
        },
        (Derivation::Difference, "power_above_isothermal") => Kind::Difference {
            tol: tolerance::POWER,
            scale: (get("actual_work") + get("isothermal_head")) * get("mass_flow"),
        },
        (Derivation::Difference, "staging_saving") => Kind::Difference {
            tol: SPECIFIC_WORK,
            scale: get("single_stage_isentropic_work") + get("measured_staged_isentropic_work"),
        },
        (Derivation::Difference, "ideal_staging_saving") => Kind::Difference {
            tol: SPECIFIC_WORK,
            scale: get("single_stage_isentropic_work") + get("ideal_staged_isentropic_work"),
        },
        // (max - min) / max of pressure ratios: a difference of two relative
        // quantities, each within the ratio's rtol.
        (Derivation::Difference, "ratio_spread") => Kind::Difference {
            tol: PRESSURE_RATIO,
            scale: 2.0,
        },
        (Derivation::Quotient, "ua") => Kind::Conductance {
            duty: get("heat_duty"),
            lmtd: get("lmtd"),
        },
        (Derivation::Quotient, "deviation") => Kind::Deviation,
        (d, n) => panic!("{n}: no agreement rule for a {d:?} field; add one here"),
    }
}

/// The walker's name of a group: `stage0`, `cooler1`, `interstage0`,
/// `totals`, `snapshot`.
pub fn group_name(g: Group) -> String {
    match g {
        Group::Totals | Group::Snapshot => g.as_str().to_owned(),
        _ => format!("{}{}", g.as_str(), g.index()),
    }
}

/// Every number in the snapshot, in the kernel's order
/// (`Snapshot::visit_groups`; the same for f32 and f64 snapshots of the
/// same train), named `group.field` (e.g. `stage1.isentropic_head`).
/// Flags, counts and condition names are left out (they are exact).
pub fn fields<T: Real, const N: usize>(s: &Snapshot<T, N>) -> Vec<Field> {
    let mut raw: Vec<(Group, &'static polytrope::fields::FieldSpec, Measured<T>)> = Vec::new();
    s.visit_groups(&mut |g, spec, v: FieldValue<T>| {
        if let Some(m) = v.measured() {
            raw.push((g, spec, m));
        }
    });
    raw.iter()
        .map(|(g, spec, m)| {
            let others: Vec<(&str, f64)> = raw
                .iter()
                .filter(|(h, _, _)| h == g)
                .map(|(_, o, v)| (o.name, v.value.to_f64()))
                .collect();
            Field {
                name: format!("{}.{}", group_name(*g), spec.name),
                kind: rule(spec, &others),
                value: m.value.to_f64(),
                quality: m.quality,
            }
        })
        .collect()
}

/// The field called `name`; panics if there is none.
pub fn get<'a>(fields: &'a [Field], name: &str) -> &'a Field {
    fields
        .iter()
        .find(|f| f.name == name)
        .unwrap_or_else(|| panic!("no field {name}"))
}

/// Panics unless every number is finite and every bad value is exactly 0.
pub fn assert_all_finite(fields: &[Field], context: &str) {
    for f in fields {
        assert!(
            f.value.is_finite(),
            "{context}: {} = {} is not finite",
            f.name,
            f.value
        );
        if f.quality == Quality::Bad {
            assert_eq!(f.value, 0.0, "{context}: bad {} must read 0", f.name);
        }
    }
}
