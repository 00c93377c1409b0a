//! Test helper (included with `#[path]` by tests/f32_vs_f64.rs and
//! tests/edge_inputs.rs): walks every number of a `Snapshot`, naming it and
//! saying which entry of `polytrope::tolerance` governs its f32-vs-f64
//! agreement.

#![allow(dead_code)]

use polytrope::cooler::CoolerResult;
use polytrope::stage::{CompressorResult, PumpResult};
use polytrope::tolerance::{self, Tolerance};
use polytrope::train::{Snapshot, StageWork};
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
    /// UA = duty / LMTD: relative tolerance is the sum of the relative
    /// tolerances of `POWER` (at this duty) and `TEMPERATURE_DIFFERENCE`
    /// (at this LMTD); values are the f64 duty and LMTD.
    /// A difference `a - b` of two quantities governed by the same entry:
    /// it agrees within the sum of the operands' tolerances,
    /// `2·atol + rtol·scale` with `scale = |a| + |b|` (f64 values).
    Difference {
        /// The operands' entry.
        tol: Tolerance,
        /// `|a| + |b|` of the operands.
        scale: f64,
    },
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

struct Walker {
    out: Vec<Field>,
    prefix: String,
}

impl Walker {
    fn m<T: Real>(&mut self, name: &str, kind: Kind, m: Measured<T>) {
        self.out.push(Field {
            name: format!("{}.{name}", self.prefix),
            kind,
            value: m.value.to_f64(),
            quality: m.quality,
        });
    }
    fn plain<T: Real>(&mut self, name: &str, kind: Kind, v: T) {
        self.m(name, kind, Measured::good(v));
    }
}

use tolerance::{
    EFFICIENCY, EXPONENT, POWER, PRESSURE, PRESSURE_RATIO, SPECIFIC_WORK, TEMPERATURE,
    TEMPERATURE_DIFFERENCE,
};
const fn t(x: Tolerance) -> Kind {
    Kind::Table(x)
}

fn compressor<T: Real>(w: &mut Walker, c: &CompressorResult<T>) {
    w.m("pressure_ratio", t(PRESSURE_RATIO), c.pressure_ratio);
    w.m(
        "isentropic_discharge_temperature",
        t(TEMPERATURE),
        c.isentropic_discharge_temperature,
    );
    w.m(
        "temperature_rise",
        t(TEMPERATURE_DIFFERENCE),
        c.temperature_rise,
    );
    w.m("isentropic_head", t(SPECIFIC_WORK), c.isentropic_head);
    w.m("polytropic_head", t(SPECIFIC_WORK), c.polytropic_head);
    w.m("isothermal_head", t(SPECIFIC_WORK), c.isothermal_head);
    w.m("actual_work", t(SPECIFIC_WORK), c.actual_work);
    w.m(
        "isentropic_efficiency",
        t(EFFICIENCY),
        c.isentropic_efficiency,
    );
    w.m(
        "polytropic_efficiency",
        t(EFFICIENCY),
        c.polytropic_efficiency,
    );
    w.m("polytropic_exponent", t(EXPONENT), c.polytropic_exponent);
    w.m("mass_flow", Kind::PassThrough, c.mass_flow);
    w.m("gas_power", t(POWER), c.gas_power);
    let works = c.actual_work.value.to_f64().abs() + c.isothermal_head.value.to_f64().abs();
    w.m(
        "work_above_isothermal",
        Kind::Difference {
            tol: SPECIFIC_WORK,
            scale: works,
        },
        c.work_above_isothermal,
    );
    w.m(
        "power_above_isothermal",
        Kind::Difference {
            tol: POWER,
            scale: works * c.mass_flow.value.to_f64().abs(),
        },
        c.power_above_isothermal,
    );
    w.m("compressibility", Kind::PassThrough, c.compressibility);
    // k of a constant-k gas is configuration; of a cp(T) gas it is computed
    // (an exponent).
    w.m("k", t(EXPONENT), c.k);
}

fn pump<T: Real>(w: &mut Walker, p: &PumpResult<T>) {
    w.m("pressure_ratio", t(PRESSURE_RATIO), p.pressure_ratio);
    w.m("pressure_rise", t(PRESSURE), p.pressure_rise);
    w.m("reversible_work", t(SPECIFIC_WORK), p.reversible_work);
    w.m("shaft_work", t(SPECIFIC_WORK), p.shaft_work);
    w.m("mass_flow", Kind::PassThrough, p.mass_flow);
    w.m("power", t(POWER), p.power);
    w.m(
        "gas_compression_equivalent",
        t(SPECIFIC_WORK),
        p.gas_compression_equivalent,
    );
    // A dimensionless ratio of two works: the efficiency entry.
    w.m("work_ratio_to_gas", t(EFFICIENCY), p.work_ratio_to_gas);
}

fn cooler<T: Real>(w: &mut Walker, c: &CoolerResult<T>) {
    let td = t(TEMPERATURE_DIFFERENCE);
    w.m("gas_temperature_drop", td, c.gas_temperature_drop);
    w.m("approach", td, c.approach);
    w.m("effectiveness", t(EFFICIENCY), c.effectiveness);
    w.m("heat_duty", t(POWER), c.heat_duty);
    w.m("pressure_drop", t(PRESSURE), c.pressure_drop);
    // Pressure drop over inlet pressure: a pressure fraction.
    w.m(
        "relative_pressure_drop",
        t(PRESSURE_RATIO),
        c.relative_pressure_drop,
    );
    w.m("coolant_temperature_rise", td, c.coolant_temperature_rise);
    w.m("lmtd", td, c.lmtd);
    w.m(
        "ua",
        Kind::Conductance {
            duty: c.heat_duty.value.to_f64(),
            lmtd: c.lmtd.value.to_f64(),
        },
        c.ua,
    );
    // (gas duty - coolant duty) / gas duty: a dimensionless fraction.
    w.m("heat_balance_error", t(EFFICIENCY), c.heat_balance_error);
    w.m(
        "next_stage_temperature_rise",
        td,
        c.next_stage_temperature_rise,
    );
}

/// Every number in the snapshot, in a fixed order (the same for f32 and f64
/// snapshots of the same train).
pub fn fields<T: Real, const N: usize>(s: &Snapshot<T, N>) -> Vec<Field> {
    let mut w = Walker {
        out: Vec::new(),
        prefix: String::new(),
    };
    for (i, st) in s.stages.iter().enumerate() {
        w.prefix = format!("stage{i}");
        match &st.work {
            StageWork::Compressor(c) => compressor(&mut w, c),
            StageWork::Pump(p) => pump(&mut w, p),
        }
        w.prefix = format!("stage{i}.steady_state");
        w.plain(
            "temperature_spread",
            t(TEMPERATURE_DIFFERENCE),
            st.steady_state.temperature_spread,
        );
        w.plain(
            "ratio_spread",
            // (max - min) / max of pressure ratios: a difference of two
            // relative quantities, each within the ratio's rtol.
            Kind::Difference {
                tol: PRESSURE_RATIO,
                scale: 2.0,
            },
            st.steady_state.ratio_spread,
        );
    }
    for (i, c) in s.coolers.iter().enumerate() {
        if let Some(c) = c {
            w.prefix = format!("cooler{i}");
            cooler(&mut w, c);
        }
    }
    for (i, p) in s.interstage.iter().enumerate() {
        if let Some(p) = p {
            w.prefix = format!("interstage{i}");
            w.m("measured", Kind::PassThrough, p.measured);
            w.m("optimum", t(PRESSURE), p.optimum);
            w.m("deviation", Kind::Deviation, p.deviation);
        }
    }
    let tt = &s.totals;
    w.prefix = "totals".into();
    w.m(
        "overall_pressure_ratio",
        t(PRESSURE_RATIO),
        tt.overall_pressure_ratio,
    );
    w.m("compressor_work", t(SPECIFIC_WORK), tt.compressor_work);
    w.m("compressor_power", t(POWER), tt.compressor_power);
    w.m("pump_power", t(POWER), tt.pump_power);
    w.m("total_power", t(POWER), tt.total_power);
    w.m("isothermal_work", t(SPECIFIC_WORK), tt.isothermal_work);
    w.m(
        "isothermal_efficiency",
        t(EFFICIENCY),
        tt.isothermal_efficiency,
    );
    w.m(
        "single_stage_isentropic_work",
        t(SPECIFIC_WORK),
        tt.single_stage_isentropic_work,
    );
    w.m(
        "ideal_staged_isentropic_work",
        t(SPECIFIC_WORK),
        tt.ideal_staged_isentropic_work,
    );
    w.m(
        "measured_staged_isentropic_work",
        t(SPECIFIC_WORK),
        tt.measured_staged_isentropic_work,
    );
    let single = tt.single_stage_isentropic_work.value.to_f64().abs();
    w.m(
        "staging_saving",
        Kind::Difference {
            tol: SPECIFIC_WORK,
            scale: single + tt.measured_staged_isentropic_work.value.to_f64().abs(),
        },
        tt.staging_saving,
    );
    w.m(
        "ideal_staging_saving",
        Kind::Difference {
            tol: SPECIFIC_WORK,
            scale: single + tt.ideal_staged_isentropic_work.value.to_f64().abs(),
        },
        tt.ideal_staging_saving,
    );
    w.out
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
