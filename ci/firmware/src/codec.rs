//! The scan table's encoding and the list of every output the harness prints.
//!
//! Shared, unchanged, by the firmware (`no_std`, f32) and by the host test
//! `tests/firmware_outputs.rs` (which includes this file and runs the same
//! list on the f64 reference build), so both sides name and order the outputs
//! identically and each output is checked with its entry of
//! `polytrope::tolerance`.

use polytrope::cooler::CoolerCondition;
use polytrope::quality::{Measured, Quality};
use polytrope::scan::{CoolerScan, Scan, StageScan};
use polytrope::stage::{PumpCondition, StageCondition};
use polytrope::tolerance::{self, Tolerance};
use polytrope::train::{Snapshot, StageWork};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::Real;

/// Fields of one encoded stage scan.
pub const FIELDS: usize = 11;
/// Quality code of an absent optional field (for field [`F_TOUT`]: no cooler).
pub const ABSENT: u8 = 3;

/// Field order: suction p (Pa), suction T (K), discharge p, discharge T,
/// mass flow (kg/s), Z, cooler gas-out T, cooler gas-out p, coolant-in T,
/// coolant-out T, coolant flow.
pub const F_P1: usize = 0;
/// Suction temperature.
pub const F_T1: usize = 1;
/// Discharge pressure.
pub const F_P2: usize = 2;
/// Discharge temperature.
pub const F_T2: usize = 3;
/// Mass flow (optional).
pub const F_FLOW: usize = 4;
/// Compressibility (optional).
pub const F_Z: usize = 5;
/// Cooler gas outlet temperature (absent: no cooler scan).
pub const F_TOUT: usize = 6;
/// Cooler gas outlet pressure (optional).
pub const F_POUT: usize = 7;
/// Coolant inlet temperature.
pub const F_TCIN: usize = 8;
/// Coolant outlet temperature (optional).
pub const F_TCOUT: usize = 9;
/// Coolant mass flow (optional).
pub const F_MC: usize = 10;

/// One stage scan as f32 bit patterns and quality codes (0 good,
/// 1 uncertain, 2 bad, 3 absent).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RawStage {
    /// `f32::to_bits` of each field.
    pub bits: [u32; FIELDS],
    /// Quality code of each field.
    pub q: [u8; FIELDS],
}

/// Widening from the table's f32 values (no f64 arithmetic on the device).
pub trait FromF32: Real {
    /// `x` in this type.
    fn from_f32(x: f32) -> Self;
}
impl FromF32 for f32 {
    #[inline]
    fn from_f32(x: f32) -> Self {
        x
    }
}
impl FromF32 for f64 {
    #[inline]
    fn from_f32(x: f32) -> Self {
        f64::from(x)
    }
}

fn quality(code: u8) -> Quality {
    match code {
        0 => Quality::Good,
        1 => Quality::Uncertain,
        _ => Quality::Bad,
    }
}

/// Decodes one stage scan.
pub fn decode_stage<T: FromF32>(raw: &RawStage) -> StageScan<T> {
    let v = |i: usize| T::from_f32(f32::from_bits(raw.bits.get(i).copied().unwrap_or(0)));
    let code = |i: usize| raw.q.get(i).copied().unwrap_or(ABSENT);
    let m = |i: usize| Measured::new(v(i), quality(code(i)));
    let opt = |i: usize| {
        if code(i) == ABSENT {
            None
        } else {
            Some(m(i))
        }
    };
    let k = |i: usize| Measured::new(Kelvin::new(v(i)), quality(code(i)));
    let p = |i: usize| Measured::new(PressureAbs::from_pa(v(i)), quality(code(i)));
    let cooler = if code(F_TOUT) == ABSENT {
        None
    } else {
        Some(CoolerScan {
            gas_outlet_temperature: k(F_TOUT),
            gas_outlet_pressure: if code(F_POUT) == ABSENT {
                None
            } else {
                Some(p(F_POUT))
            },
            coolant_inlet_temperature: k(F_TCIN),
            coolant_outlet_temperature: if code(F_TCOUT) == ABSENT {
                None
            } else {
                Some(k(F_TCOUT))
            },
            coolant_mass_flow: opt(F_MC),
        })
    };
    StageScan {
        suction_pressure: p(F_P1),
        suction_temperature: k(F_T1),
        discharge_pressure: p(F_P2),
        discharge_temperature: k(F_T2),
        mass_flow: opt(F_FLOW),
        compressibility: opt(F_Z),
        cooler,
    }
}

/// Decodes one scan of `N` stages.
pub fn decode_scan<T: FromF32, const N: usize>(raw: &[RawStage; N]) -> Scan<T, N> {
    Scan {
        stages: raw.each_ref().map(decode_stage),
    }
}

/// One printed output.
#[derive(Clone, Copy, Debug)]
pub enum Out<T> {
    /// A value with its quality and the tolerance it is checked with.
    Value(&'static str, Measured<T>, Tolerance),
    /// An exact code (condition, flag, counter).
    Code(&'static str, u32),
}

fn stage_condition(c: StageCondition) -> u32 {
    match c {
        StageCondition::Normal => 0,
        StageCondition::InputBad => 1,
        StageCondition::NoCompression => 2,
        StageCondition::NoTemperatureRise => 3,
        StageCondition::EfficiencyAboveOne => 4,
        StageCondition::RatingPoint => 5,
        StageCondition::RatioOutOfRange => 6,
        StageCondition::ImplausibleTemperatureRise => 7,
        StageCondition::Stationary => 8,
        StageCondition::BelowResolution => 9,
        #[allow(unreachable_patterns)]
        _ => 99,
    }
}

fn cooler_condition(c: CoolerCondition) -> u32 {
    match c {
        CoolerCondition::Normal => 0,
        CoolerCondition::InputBad => 1,
        CoolerCondition::OutletAboveInlet => 2,
        CoolerCondition::OutletBelowCoolant => 3,
        CoolerCondition::NoDrivingDifference => 4,
        CoolerCondition::DutyWithinNoise => 5,
        CoolerCondition::NoGasFlow => 6,
        #[allow(unreachable_patterns)]
        _ => 99,
    }
}

fn pump_condition(c: PumpCondition) -> u32 {
    match c {
        PumpCondition::Normal => 0,
        PumpCondition::InputBad => 1,
        PumpCondition::NoPressureRise => 2,
        PumpCondition::RatioOutOfRange => 3,
        PumpCondition::Stationary => 4,
        #[allow(unreachable_patterns)]
        _ => 99,
    }
}

/// Calls `f(index, output)` for every output of a snapshot, in a fixed order.
pub fn visit<T: Real, const N: usize>(s: &Snapshot<T, N>, mut f: impl FnMut(usize, Out<T>)) {
    use tolerance::{
        EFFICIENCY, EXPONENT, POWER, PRESSURE, PRESSURE_RATIO, SPECIFIC_WORK, TEMPERATURE,
        TEMPERATURE_DIFFERENCE,
    };
    let exact = |x: T| Measured::new(x, Quality::Good);
    for (i, st) in s.stages.iter().enumerate() {
        let mut v = |n, m, t| f(i, Out::Value(n, m, t));
        match &st.work {
            StageWork::Compressor(c) => {
                v("pressure_ratio", c.pressure_ratio, PRESSURE_RATIO);
                v("t2s", c.isentropic_discharge_temperature, TEMPERATURE);
                v(
                    "temperature_rise",
                    c.temperature_rise,
                    TEMPERATURE_DIFFERENCE,
                );
                v("isentropic_head", c.isentropic_head, SPECIFIC_WORK);
                v("polytropic_head", c.polytropic_head, SPECIFIC_WORK);
                v("isothermal_head", c.isothermal_head, SPECIFIC_WORK);
                v("actual_work", c.actual_work, SPECIFIC_WORK);
                v("isentropic_efficiency", c.isentropic_efficiency, EFFICIENCY);
                v("polytropic_efficiency", c.polytropic_efficiency, EFFICIENCY);
                v("polytropic_exponent", c.polytropic_exponent, EXPONENT);
                v("mass_flow", c.mass_flow, EFFICIENCY);
                v("gas_power", c.gas_power, POWER);
                v(
                    "work_above_isothermal",
                    c.work_above_isothermal,
                    SPECIFIC_WORK,
                );
                v("power_above_isothermal", c.power_above_isothermal, POWER);
                v("compressibility", c.compressibility, EXPONENT);
                v("k", c.k, EXPONENT);
                f(
                    i,
                    Out::Code("stage_condition", stage_condition(c.condition)),
                );
            }
            StageWork::Pump(p) => {
                v("pump_pressure_ratio", p.pressure_ratio, PRESSURE_RATIO);
                v("pump_pressure_rise", p.pressure_rise, PRESSURE);
                v("pump_reversible_work", p.reversible_work, SPECIFIC_WORK);
                v("pump_shaft_work", p.shaft_work, SPECIFIC_WORK);
                v("pump_mass_flow", p.mass_flow, EFFICIENCY);
                v("pump_power", p.power, POWER);
                v(
                    "pump_gas_equivalent",
                    p.gas_compression_equivalent,
                    SPECIFIC_WORK,
                );
                v("pump_work_ratio_to_gas", p.work_ratio_to_gas, EFFICIENCY);
                f(i, Out::Code("pump_condition", pump_condition(p.condition)));
            }
        }
        let ss = st.steady_state;
        f(i, Out::Code("steady", u32::from(ss.steady)));
        f(i, Out::Code("steady_samples", u32::from(ss.samples)));
        let t_spread = exact(ss.temperature_spread);
        f(
            i,
            Out::Value("temperature_spread", t_spread, TEMPERATURE_DIFFERENCE),
        );
        f(
            i,
            Out::Value("ratio_spread", exact(ss.ratio_spread), EXPONENT),
        );
    }
    for (i, c) in s.coolers.iter().enumerate() {
        let Some(c) = c else {
            f(i, Out::Code("cooler_present", 0));
            continue;
        };
        f(i, Out::Code("cooler_present", 1));
        let mut v = |n, m, t| f(i, Out::Value(n, m, t));
        v(
            "gas_temperature_drop",
            c.gas_temperature_drop,
            TEMPERATURE_DIFFERENCE,
        );
        v("approach", c.approach, TEMPERATURE_DIFFERENCE);
        v("effectiveness", c.effectiveness, EFFICIENCY);
        v("heat_duty", c.heat_duty, POWER);
        v("pressure_drop", c.pressure_drop, PRESSURE);
        v(
            "relative_pressure_drop",
            c.relative_pressure_drop,
            EFFICIENCY,
        );
        v(
            "coolant_temperature_rise",
            c.coolant_temperature_rise,
            TEMPERATURE_DIFFERENCE,
        );
        v("lmtd", c.lmtd, TEMPERATURE_DIFFERENCE);
        v("ua", c.ua, POWER);
        v("heat_balance_error", c.heat_balance_error, EFFICIENCY);
        v(
            "next_stage_temperature_rise",
            c.next_stage_temperature_rise,
            TEMPERATURE_DIFFERENCE,
        );
        f(
            i,
            Out::Code("cooler_condition", cooler_condition(c.condition)),
        );
    }
    for (i, p) in s.interstage.iter().enumerate() {
        let Some(p) = p else {
            f(i, Out::Code("interstage_present", 0));
            continue;
        };
        f(i, Out::Code("interstage_present", 1));
        f(i, Out::Value("interstage_measured", p.measured, PRESSURE));
        f(i, Out::Value("interstage_optimum", p.optimum, PRESSURE));
        f(
            i,
            Out::Value("interstage_deviation", p.deviation, EFFICIENCY),
        );
    }
    let t = &s.totals;
    let mut v = |n, m, tol| f(0, Out::Value(n, m, tol));
    v(
        "overall_pressure_ratio",
        t.overall_pressure_ratio,
        PRESSURE_RATIO,
    );
    v("compressor_work", t.compressor_work, SPECIFIC_WORK);
    v("compressor_power", t.compressor_power, POWER);
    v("pump_power", t.pump_power, POWER);
    v("total_power", t.total_power, POWER);
    v("isothermal_work", t.isothermal_work, SPECIFIC_WORK);
    v("isothermal_efficiency", t.isothermal_efficiency, EFFICIENCY);
    v(
        "single_stage_isentropic_work",
        t.single_stage_isentropic_work,
        SPECIFIC_WORK,
    );
    v(
        "ideal_staged_isentropic_work",
        t.ideal_staged_isentropic_work,
        SPECIFIC_WORK,
    );
    v(
        "measured_staged_isentropic_work",
        t.measured_staged_isentropic_work,
        SPECIFIC_WORK,
    );
    v("staging_saving", t.staging_saving, SPECIFIC_WORK);
    v(
        "ideal_staging_saving",
        t.ideal_staging_saving,
        SPECIFIC_WORK,
    );
    f(
        0,
        Out::Code("compressor_stages", u32::from(t.compressor_stages)),
    );
    f(0, Out::Code("scan_count", s.scan_count));
}

/// Quality as its printed code.
pub fn quality_code(q: Quality) -> u8 {
    match q {
        Quality::Good => 0,
        Quality::Uncertain => 1,
        Quality::Bad => 2,
        Quality::NotApplicable => 3,
    }
}
