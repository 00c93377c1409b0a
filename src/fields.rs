//! The one list of result and input fields.
//!
//! Every result type of the train ([`CompressorResult`], [`PumpResult`],
//! [`SteadyState`], [`CoolerResult`], [`InterstagePressure`],
//! [`TrainTotals`]) lists its fields once, here, as [`FieldSpec`]s (stable
//! key with the SI unit as suffix, table label, unit, [`QuantityKind`],
//! [`Derivation`], meaning) and visits its values in that order
//! ([`ResultFields::visit_fields`]). [`Snapshot::visit_groups`] walks a whole
//! snapshot, group by group. The stage inputs of a [`StageScan`] are listed
//! the same way ([`StageInput`]).
//!
//! Host tables, JSON keys, the firmware codec and the test walkers are
//! generated from these lists: adding a result field is one edit here (and
//! the struct field itself). Condition enums have stable kebab-case names
//! ([`StageCondition::as_str`], [`CoolerCondition::as_str`],
//! [`FaultCode::as_str`], [`Quality::as_str`]), used wherever they are
//! printed.
//!
//! Keys are stable: a host tool, a log or a historian may store them.

use crate::cooler::{CoolerCondition, CoolerResult};
use crate::gas::{Validity, ValidityReason};
use crate::polytropic::PolytropicMethod;
use crate::quality::{FaultCode, Measured, Quality};
use crate::real::Real;
use crate::scan::{CoolerScan, StageScan};
use crate::signal::ChannelOutput;
use crate::stage::{CompressorResult, PumpCondition, PumpResult, StageCondition};
use crate::staging::{InterstagePressure, TrainTotals};
use crate::steady::SteadyState;
use crate::surge::{DetectionState, SurgeFault, SurgeState};
use crate::tolerance::{self, Tolerance};
use crate::train::{Snapshot, StageWork};
use crate::units::{Kelvin, PressureAbs};

/// What physical quantity a field holds; ties it to the accuracy table
/// ([`QuantityKind::tolerance`]).
#[non_exhaustive]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum QuantityKind {
    /// A ratio of two absolute pressures, -.
    PressureRatio,
    /// An absolute temperature, K.
    Temperature,
    /// A temperature difference, K.
    TemperatureDifference,
    /// A head or specific work, J/kg.
    SpecificWork,
    /// An efficiency or effectiveness, -.
    Efficiency,
    /// Another dimensionless fraction (a relative difference or error), -.
    Fraction,
    /// A polytropic or isentropic exponent, -.
    Exponent,
    /// A compressibility factor, -.
    Compressibility,
    /// A density, kg/m³.
    Density,
    /// A power or heat duty, W.
    Power,
    /// An absolute pressure or a pressure difference, Pa.
    Pressure,
    /// A mass flow, kg/s.
    MassFlow,
    /// A thermal conductance, W/K.
    Conductance,
    /// A yes/no mark.
    Flag,
    /// A count.
    Count,
    /// A named state (a condition enum's [`as_str`](StageCondition::as_str)).
    Condition,
    /// A surge margin or a distance from the surge or control line in
    /// reduced flow, -.
    SurgeMargin,
    /// A reduced (invariant) compressor-map coordinate, -.
    ReducedCoordinate,
    /// A time, s.
    Time,
    /// A rate of change, 1/s.
    Rate,
    /// A value in the SI unit of its signal channel.
    ChannelValue,
}

impl QuantityKind {
    /// The accuracy-table entry for a value of this kind computed by the
    /// kernel (f32 device build against the f64 reference build); `None` for
    /// exact kinds (flags, counts, conditions) and for kinds no computed
    /// output has yet (mass flow and conductance are passed through or
    /// derived; a new computed one adds its entry to
    /// [`tolerance`]).
    pub const fn tolerance(self) -> Option<Tolerance> {
        match self {
            QuantityKind::PressureRatio => Some(tolerance::PRESSURE_RATIO),
            QuantityKind::Temperature => Some(tolerance::TEMPERATURE),
            QuantityKind::TemperatureDifference => Some(tolerance::TEMPERATURE_DIFFERENCE),
            QuantityKind::SpecificWork => Some(tolerance::SPECIFIC_WORK),
            // A dimensionless fraction is held to the efficiency entry.
            QuantityKind::Efficiency | QuantityKind::Fraction => Some(tolerance::EFFICIENCY),
            QuantityKind::Exponent => Some(tolerance::EXPONENT),
            // Computed by the gas model (Peng-Robinson's cubic in f32).
            QuantityKind::Compressibility | QuantityKind::Density => {
                Some(tolerance::COMPRESSIBILITY)
            }
            QuantityKind::Power => Some(tolerance::POWER),
            QuantityKind::Pressure => Some(tolerance::PRESSURE),
            QuantityKind::MassFlow
            | QuantityKind::Conductance
            | QuantityKind::Flag
            | QuantityKind::Count
            | QuantityKind::Condition
            | QuantityKind::ReducedCoordinate
            | QuantityKind::Time
            | QuantityKind::Rate
            | QuantityKind::ChannelValue => None,
            QuantityKind::SurgeMargin => Some(tolerance::SURGE_MARGIN),
        }
    }
}

/// How a field's value comes about; says how its f32 and f64 values may
/// differ.
#[non_exhaustive]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Derivation {
    /// Computed from the inputs: the kind's table entry applies.
    Computed,
    /// Copied from an input or the configuration, unchanged.
    PassThrough,
    /// The difference of two computed quantities: its error is on the scale
    /// of the operands, not of the result.
    Difference,
    /// The quotient of two computed quantities: the operands' relative
    /// errors add.
    Quotient,
    /// Exact (flags, counts, conditions).
    Exact,
}

/// One field of a result or input type.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FieldSpec {
    /// The Rust field name (snake_case, no unit), e.g. `actual_work`.
    pub name: &'static str,
    /// Stable key with the SI unit as suffix, e.g. `actual_work_J_per_kg`
    /// (`_Pa` absolute pressure or pressure difference, `_K`, `_J_per_kg`,
    /// `_W`, `_kg_per_s`, `_W_per_K`; none if dimensionless).
    pub key: &'static str,
    /// Human label for tables.
    pub label: &'static str,
    /// SI unit text (`-` if dimensionless, `""` for flags, counts and
    /// conditions).
    pub unit: &'static str,
    /// The physical quantity.
    pub kind: QuantityKind,
    /// How the value comes about.
    pub derivation: Derivation,
    /// One sentence on what it means.
    pub meaning: &'static str,
}

/// One field's value.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FieldValue<T> {
    /// A value with its quality.
    Real(Measured<T>),
    /// A number without a quality of its own (a model parameter, a
    /// detector statistic).
    Plain(T),
    /// A yes/no mark.
    Flag(bool),
    /// A count.
    Count(u32),
    /// A named state (a condition enum's `as_str()`).
    Tag(&'static str),
}

impl<T: Real> FieldValue<T> {
    /// The value as a [`Measured`] (plain numbers good), `None` for flags,
    /// counts and tags.
    pub fn measured(self) -> Option<Measured<T>> {
        match self {
            FieldValue::Real(m) => Some(m),
            FieldValue::Plain(x) => Some(Measured::good(x)),
            _ => None,
        }
    }
}

/// A result type whose fields are listed in this module.
pub trait ResultFields<T> {
    /// The fields, in visiting order.
    const FIELDS: &'static [FieldSpec];
    /// Calls `visit` once per field of [`Self::FIELDS`], in that order.
    fn visit_fields(&self, visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>));
}

/// Converts a struct field into a [`FieldValue`] (used by the lists below).
trait IntoField<T> {
    fn into_field(self) -> FieldValue<T>;
}
impl<T: Real> IntoField<T> for Measured<T> {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Real(self)
    }
}
impl<T> IntoField<T> for bool {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Flag(self)
    }
}
impl<T> IntoField<T> for u8 {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Count(u32::from(self))
    }
}
impl<T> IntoField<T> for u16 {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Count(u32::from(self))
    }
}
impl<T> IntoField<T> for u32 {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Count(self)
    }
}
impl<T> IntoField<T> for StageCondition {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Tag(self.as_str())
    }
}
impl<T> IntoField<T> for PolytropicMethod {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Tag(self.as_str())
    }
}
impl<T> IntoField<T> for Validity {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Tag(self.reason.as_str())
    }
}
impl<T> IntoField<T> for CoolerCondition {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Tag(self.as_str())
    }
}
impl<T> IntoField<T> for crate::surge::ExponentState<T> {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Real(self.sigma)
    }
}
impl<T> IntoField<T> for SurgeFault {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Tag(self.as_str())
    }
}
impl<T> IntoField<T> for PumpCondition {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Tag(self.as_str())
    }
}
/// A plain number (no quality) of the result's own type.
struct Plain<T>(T);
impl<T> IntoField<T> for Plain<T> {
    #[inline]
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Plain(self.0)
    }
}

/// Declares a type's field list and its visitor from one table.
/// Each entry: `field [plain]: "key", "label", "unit", Kind, Derivation, "meaning";`.
macro_rules! result_fields {
    ($ty:ident { $( $field:ident $([$plain:ident])? : $key:literal, $label:literal, $unit:literal,
        $kind:ident, $der:ident, $meaning:literal; )* }) => {
        impl<T: Real> ResultFields<T> for $ty<T> {
            const FIELDS: &'static [FieldSpec] = &[$(
                FieldSpec {
                    name: stringify!($field),
                    key: $key,
                    label: $label,
                    unit: $unit,
                    kind: QuantityKind::$kind,
                    derivation: Derivation::$der,
                    meaning: $meaning,
                },
            )*];
            fn visit_fields(&self, visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>)) {
                let mut specs = Self::FIELDS.iter();
                $(
                    if let Some(spec) = specs.next() {
                        visit(spec, result_fields!(@value self.$field $(, $plain)?));
                    }
                )*
            }
        }
    };
    (@value $e:expr) => { IntoField::<T>::into_field($e) };
    (@value $e:expr, plain) => { IntoField::<T>::into_field(Plain($e)) };
}

result_fields!(CompressorResult {
    pressure_ratio: "pressure_ratio", "Pressure ratio", "-", PressureRatio, Computed,
        "Discharge over suction pressure (absolute).";
    isentropic_discharge_temperature: "isentropic_discharge_temperature_K", "T2s isentropic", "K",
        Temperature, Computed,
        "Discharge temperature of an isentropic compression over the same ratio.";
    temperature_rise: "temperature_rise_K", "Temperature rise", "K", TemperatureDifference,
        Computed, "Measured temperature rise T2 - T1.";
    isentropic_head: "isentropic_head_J_per_kg", "Isentropic head", "J/kg", SpecificWork, Computed,
        "Isentropic head h(p2, s1) - h1 from the gas model (ideal gas: Z R T1 k/(k-1) (r^((k-1)/k) - 1)).";
    polytropic_head: "polytropic_head_J_per_kg", "Polytropic head", "J/kg", SpecificWork, Computed,
        "Polytropic head along the measured path, by the method in `polytropic_method`.";
    isothermal_head: "isothermal_head_J_per_kg", "Isothermal head", "J/kg", SpecificWork, Computed,
        "Isothermal head Z1 R T1 ln r with the suction Z (the ideal).";
    actual_work: "actual_work_J_per_kg", "Actual work", "J/kg", SpecificWork, Computed,
        "Actual specific work, the enthalpy rise h2 - h1 from the gas model (ideal gas: Z cp (T2 - T1)).";
    isentropic_efficiency: "isentropic_efficiency", "Isentropic efficiency", "-", Efficiency,
        Computed, "Isentropic head over actual work.";
    polytropic_efficiency: "polytropic_efficiency", "Polytropic efficiency", "-", Efficiency,
        Computed, "Polytropic head over actual work (ideal gas: ((k-1)/k) / ((n-1)/n)).";
    polytropic_exponent: "polytropic_exponent", "Polytropic exponent n", "-", Exponent, Computed,
        "Polytropic exponent n inferred from the measured end states.";
    mass_flow: "mass_flow_kg_per_s", "Mass flow", "kg/s", MassFlow, PassThrough,
        "Mass flow used for the power (measured, or inherited from upstream).";
    gas_power: "gas_power_W", "Gas power", "W", Power, Computed,
        "Gas power, mass flow times actual work.";
    work_above_isothermal: "work_above_isothermal_J_per_kg", "Work above isothermal", "J/kg",
        SpecificWork, Difference, "Actual work minus the isothermal head.";
    power_above_isothermal: "power_above_isothermal_W", "Power above isothermal", "W", Power,
        Difference, "Gas power minus isothermal power.";
    compressibility: "compressibility", "Compressibility Z (suction)", "-", Compressibility,
        Computed, "Suction compressibility factor: the configured or supplied mean Z (ideal gas) or computed (Peng-Robinson), with the quality of what it used.";
    k: "heat_capacity_ratio", "Isentropic exponent used", "-", Exponent, Computed,
        "The mean k (ideal gas) or the isentropic volume exponent ln(p2/p1)/ln(v1/v2s) (Peng-Robinson).";
    polytropic_method: "polytropic_method", "Polytropic method", "", Condition, Exact,
        "Method of the polytropic head, efficiency and exponent (`schultz`, `sandberg-colby`, `reference-path`).";
    gas_validity: "gas_model_validity", "Gas model", "", Condition, Exact,
        "The gas model's validity for this stage's states (`in-range` or why not: `near-critical`, `ideal-gas-reduced-pressure`, `liquid-like`, ...); folded into the quality of every output that uses gas-model states.";
    condition: "condition", "Condition", "", Condition, Exact,
        "What the evaluation found, the first reason an output is not good (`normal`, `input-bad`, `no-compression`, `no-temperature-rise`, `efficiency-above-one`, `outside-gas-model`, `rating-point`, `ratio-out-of-range`, `implausible-temperature-rise`, `stationary`, `below-resolution`).";
});

result_fields!(PumpResult {
    pressure_ratio: "pressure_ratio", "Pressure ratio", "-", PressureRatio, Computed,
        "Discharge over suction pressure (absolute).";
    density: "suction_density_kg_per_m3", "Suction density", "kg/m3", Density, Computed,
        "Suction density used: from the gas model (Peng-Robinson, Peneloux-translated) or the configured value.";
    pressure_rise: "pressure_rise_Pa", "Pressure rise", "Pa", Pressure, Computed,
        "Pump pressure rise.";
    reversible_work: "reversible_work_J_per_kg", "Reversible work v dP", "J/kg", SpecificWork,
        Computed, "Reversible pump work v dP.";
    shaft_work: "shaft_work_J_per_kg", "Shaft work", "J/kg", SpecificWork, Computed,
        "Pump shaft work v dP / efficiency.";
    mass_flow: "mass_flow_kg_per_s", "Mass flow", "kg/s", MassFlow, PassThrough,
        "Mass flow used for the power (measured, or inherited from upstream).";
    power: "power_W", "Shaft power", "W", Power, Computed, "Pump shaft power.";
    gas_compression_equivalent: "gas_compression_equivalent_J_per_kg",
        "Gas compression, same ratio", "J/kg", SpecificWork, Computed,
        "Isentropic work an ideal-gas compressor (Z = 1) would need for the pump's pressure ratio from its suction temperature.";
    work_ratio_to_gas: "work_ratio_to_gas", "Pump work / gas work", "-", Fraction, Computed,
        "Pump shaft work over that gas compression work.";
    condition: "condition", "Condition", "", Condition, Exact,
        "What the evaluation found (`normal`, `input-bad`, `no-pressure-rise`, `ratio-out-of-range`, `stationary`).";
});

result_fields!(SteadyState {
    steady: "steady_state", "Steady", "", Flag, Exact,
        "Whether the stage was at steady state over the detector window at this scan.";
    samples: "steady_state_samples", "Window samples", "", Count, Exact,
        "Scans in the steady-state window so far.";
    temperature_spread [plain]: "temperature_spread_K", "Temperature spread", "K",
        TemperatureDifference, Computed,
        "Discharge-temperature spread (max - min) over the window.";
    ratio_spread [plain]: "ratio_spread", "Pressure-ratio spread", "-", Fraction, Difference,
        "Relative pressure-ratio spread (max - min) / max over the window.";
});

result_fields!(CoolerResult {
    gas_temperature_drop: "gas_temperature_drop_K", "Gas temperature drop", "K",
        TemperatureDifference, Computed, "Gas temperature drop across the cooler.";
    approach: "approach_K", "Approach", "K", TemperatureDifference, Computed,
        "Gas outlet minus coolant inlet temperature.";
    effectiveness: "effectiveness", "Effectiveness", "-", Efficiency, Computed,
        "Gas temperature drop over (gas inlet - coolant inlet).";
    heat_duty: "heat_duty_W", "Heat duty", "W", Power, Computed,
        "Heat removed from the gas, m cp (Tin - Tout).";
    pressure_drop: "pressure_drop_Pa", "Pressure drop", "Pa", Pressure, Computed,
        "Gas-side pressure drop.";
    relative_pressure_drop: "relative_pressure_drop", "Relative pressure drop", "-",
        PressureRatio, Computed, "Gas-side pressure drop over inlet pressure.";
    coolant_temperature_rise: "coolant_temperature_rise_K", "Coolant rise", "K",
        TemperatureDifference, Computed, "Coolant temperature rise.";
    lmtd: "lmtd_K", "LMTD (counterflow)", "K", TemperatureDifference, Computed,
        "Counterflow log-mean temperature difference.";
    ua: "ua_W_per_K", "UA", "W/K", Conductance, Quotient,
        "Overall conductance, duty over LMTD.";
    heat_balance_error: "heat_balance_error", "Heat balance error", "-", Fraction, Computed,
        "(gas duty - coolant duty) / gas duty.";
    next_stage_temperature_rise: "next_stage_temperature_rise_K", "Next-stage temperature rise",
        "K", TemperatureDifference, Computed, "Temperature rise across the next compressor stage (not applicable when none follows).";
    condition: "condition", "Condition", "", Condition, Exact,
        "What the evaluation found about its inputs (`normal`, `input-bad`, `outlet-above-inlet`, `outlet-below-coolant`, `no-driving-difference`, `duty-within-noise`, `no-gas-flow`).";
});

result_fields!(InterstagePressure {
    measured: "measured_discharge_pressure_Pa", "Measured", "Pa", Pressure, PassThrough,
        "Measured stage discharge pressure, absolute.";
    optimum: "equal_ratio_discharge_pressure_Pa", "Equal-ratio", "Pa", Pressure, Computed,
        "Equal-ratio (least-work) discharge pressure p1 r^(i/N), absolute.";
    deviation: "deviation", "Deviation", "-", Fraction, Quotient,
        "Measured over equal-ratio pressure, minus 1.";
});

result_fields!(TrainTotals {
    compressor_stages: "compressor_stages", "Compressor stages", "", Count, Exact,
        "Number of compressor stages (pumps excluded).";
    overall_pressure_ratio: "overall_pressure_ratio", "Overall pressure ratio (compressors)", "-",
        PressureRatio, Computed, "Last compressor discharge over first suction pressure.";
    compressor_work: "compressor_work_J_per_kg", "Compressor work (sum of stages)", "J/kg",
        SpecificWork, Computed, "Sum of the compressor stages' actual work.";
    compressor_power: "compressor_power_W", "Compressor gas power", "W", Power, Computed,
        "Sum of the compressor stages' gas power.";
    pump_power: "pump_power_W", "Pump shaft power", "W", Power, Computed,
        "Sum of the pump stages' shaft power.";
    total_power: "total_power_W", "Total power (gas + pump shaft)", "W", Power, Computed,
        "Compressor gas power (m·Δh: the power the gas takes up, before bearing, seal and gear losses, so below the drivers' shaft power) plus pump shaft power (hydraulic power over the configured pump efficiency); not a driver or electrical power. The loss ledger closes on it.";
    isothermal_work: "isothermal_work_J_per_kg", "Isothermal work, overall ratio", "J/kg",
        SpecificWork, Computed,
        "Reversible isothermal work for the overall ratio at the first suction temperature, through the gas model (the Gibbs energy rise; Z·R·T·ln r for the ideal gas); the loss ledger starts from it.";
    isothermal_efficiency: "isothermal_efficiency", "Isothermal efficiency", "-", Efficiency,
        Computed, "Isothermal work over compressor work.";
    single_stage_isentropic_work: "single_stage_isentropic_work_J_per_kg",
        "One uncooled isentropic stage", "J/kg", SpecificWork, Computed,
        "Isentropic work of one uncooled stage for the overall ratio.";
    ideal_staged_isentropic_work: "ideal_staged_isentropic_work_J_per_kg",
        "Ideal staged isentropic (equal ratios)", "J/kg", SpecificWork, Computed,
        "Isentropic work of N equal-ratio stages with perfect intercooling.";
    measured_staged_isentropic_work: "measured_staged_isentropic_work_J_per_kg",
        "Measured staged isentropic", "J/kg", SpecificWork, Computed,
        "Sum of the stages' isentropic heads at their measured suction states.";
    staging_saving: "staging_saving_J_per_kg", "Saving by staging, measured", "J/kg",
        SpecificWork, Difference, "Single-stage minus measured-staged isentropic work.";
    ideal_staging_saving: "ideal_staging_saving_J_per_kg", "Saving by staging, ideal", "J/kg",
        SpecificWork, Difference, "Single-stage minus ideal-staged isentropic work.";
});

result_fields!(SurgeState {
    flow_number: "flow_number", "Flow number X", "-", ReducedCoordinate, Computed,
        "Live flow number X = flow-element differential pressure over suction pressure.";
    head_number: "head_number", "Head number Y", "-", ReducedCoordinate, Computed,
        "Live head number Y (reduced head from the pressure ratio).";
    surge_flow_number: "surge_flow_number", "Surge-line flow number", "-", ReducedCoordinate,
        Computed, "The surge line's flow number at the live head number.";
    margin: "surge_margin", "Surge margin", "-", SurgeMargin, Computed,
        "Surge margin m (0 on the surge line, 0.1 = 10 % more reduced flow than at surge).";
    control_margin: "control_margin", "Control margin", "-", SurgeMargin, Computed,
        "Effective control margin: the line's control margin plus the margin added after surge cycles.";
    clearance: "control_line_clearance", "Clearance above the control line", "-", SurgeMargin,
        Difference, "Surge margin minus control margin (above 0 safe, below 0 inside the control line).";
    rate_of_approach: "rate_of_approach_per_s", "Rate of approach", "1/s", Rate, Computed,
        "Rate of approach -dm/dt (above 0: approaching surge).";
    time_to_surge: "time_to_surge_s", "Time to surge", "s", Time, Computed,
        "Time to reach the surge line at the present rate, capped at the horizon.";
    exponent: "head_number_sigma", "Exponent sigma of the head number", "-", Exponent, Computed,
        "sigma = (n-1)/n used for the head number (configured, or from the measured temperatures; its quality says which).";
    fault: "surge_fault", "Surge-margin fault", "", Condition, Exact,
        "Why the margin is not good (`none`, `input-bad`, `input-uncertain`, `flow-dp-impossible`, `flow-dp-outside-validity`, `discharge-below-suction`, `beyond-map`, `exponent`).";
});

result_fields!(DetectionState {
    surge_this_scan: "surge_this_scan", "Surge cycle this scan", "", Flag, Exact,
        "A surge cycle was recognised at this scan.";
    event_count: "surge_event_count", "Surge events", "", Count, Exact,
        "Surge cycles since the last operator reset of the count.";
    events_in_window: "surge_events_in_window", "Surge events in the trip window", "", Count, Exact,
        "Surge cycles within the trip window.";
    added_margin [plain]: "added_margin", "Margin added to the control line", "-", SurgeMargin,
        Exact, "Margin the detected surge cycles have added to the control line.";
    trip_request: "trip_request", "Trip request", "", Flag, Exact,
        "Advisory trip request: repeated surge cycles within the trip window (latched until reset).";
    blind: "detection_blind", "Detection blind", "", Flag, Exact,
        "The window holds too few good samples to detect (after bad data).";
    armed: "detection_armed", "Detection armed", "", Flag, Exact,
        "Ready to count a new cycle (false from a detection until the flow has recovered).";
});

/// The fields of a signal channel's output (its fault code and
/// substitution mark are [`ChannelOutput::status`]).
const CHANNEL_FIELDS: &[FieldSpec] = &[
    FieldSpec {
        name: "raw",
        key: "raw_value",
        label: "Raw value (SI)",
        unit: "SI",
        kind: QuantityKind::ChannelValue,
        derivation: Derivation::Computed,
        meaning: "Validated, unfiltered value in the channel's SI unit (for the surge path).",
    },
    FieldSpec {
        name: "filtered",
        key: "filtered_value",
        label: "Filtered value (SI)",
        unit: "SI",
        kind: QuantityKind::ChannelValue,
        derivation: Derivation::Computed,
        meaning: "Median- and low-pass-filtered value in the channel's SI unit.",
    },
    FieldSpec {
        name: "last_good_ms",
        key: "last_good_ms",
        label: "Time of the last good sample",
        unit: "",
        kind: QuantityKind::Count,
        derivation: Derivation::Exact,
        meaning: "Time stamp of the last good sample, ms (the caller's 32-bit tick).",
    },
];

impl<T: Real> ResultFields<T> for ChannelOutput<T> {
    const FIELDS: &'static [FieldSpec] = CHANNEL_FIELDS;
    fn visit_fields(&self, visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>)) {
        let values = [
            FieldValue::Real(self.raw),
            FieldValue::Real(self.filtered),
            FieldValue::Count(self.status.last_good_ms),
        ];
        for (spec, value) in Self::FIELDS.iter().zip(values) {
            visit(spec, value);
        }
    }
}

/// The stage kind tag that opens each stage group of
/// [`Snapshot::visit_groups`] (`compressor` or `pump`).
pub const STAGE_KIND: FieldSpec = FieldSpec {
    name: "kind",
    key: "kind",
    label: "Kind",
    unit: "",
    kind: QuantityKind::Condition,
    derivation: Derivation::Exact,
    meaning: "`compressor` or `pump`.",
};

/// The scan counter that closes [`Snapshot::visit_groups`].
pub const SCAN_COUNT: FieldSpec = FieldSpec {
    name: "scan_count",
    key: "scan_count",
    label: "Scans",
    unit: "",
    kind: QuantityKind::Count,
    derivation: Derivation::Exact,
    meaning: "Scans the train has evaluated (wraps at 2^32).",
};

/// Which part of a snapshot a field belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Group {
    /// Stage `i` (0 = first in flow order): [`STAGE_KIND`], the
    /// compressor or pump fields, then the [`SteadyState`] fields.
    Stage(u16),
    /// The cooler after stage `i` (only coolers with a result).
    Cooler(u16),
    /// The interstage pressure after stage `i` (only where there is one).
    Interstage(u16),
    /// The [`TrainTotals`].
    Totals,
    /// The snapshot itself ([`SCAN_COUNT`]).
    Snapshot,
}

impl Group {
    /// `stage`, `cooler`, `interstage`, `totals` or `snapshot`.
    pub const fn as_str(self) -> &'static str {
        match self {
            Group::Stage(_) => "stage",
            Group::Cooler(_) => "cooler",
            Group::Interstage(_) => "interstage",
            Group::Totals => "totals",
            Group::Snapshot => "snapshot",
        }
    }
    /// The stage index (0 for totals and snapshot).
    pub const fn index(self) -> usize {
        match self {
            Group::Stage(i) | Group::Cooler(i) | Group::Interstage(i) => i as usize,
            Group::Totals | Group::Snapshot => 0,
        }
    }
}

fn group_index(i: usize) -> u16 {
    u16::try_from(i).unwrap_or(u16::MAX)
}

impl<T: Real> StageWork<T> {
    /// `compressor` or `pump`.
    pub const fn as_str(&self) -> &'static str {
        match self {
            StageWork::Compressor(_) => "compressor",
            StageWork::Pump(_) => "pump",
        }
    }
}

impl<T: Real, const N: usize> Snapshot<T, N> {
    /// Calls `visit` for every field of the snapshot, group by group in the
    /// order of [`Group`]: each stage, each cooler with a result, each
    /// interstage pressure, the totals, the scan counter.
    pub fn visit_groups(&self, visit: &mut dyn FnMut(Group, &'static FieldSpec, FieldValue<T>)) {
        for (i, st) in self.stages.iter().enumerate() {
            let g = Group::Stage(group_index(i));
            visit(g, &STAGE_KIND, FieldValue::Tag(st.work.as_str()));
            let mut v = |spec, value| visit(g, spec, value);
            match &st.work {
                StageWork::Compressor(c) => c.visit_fields(&mut v),
                StageWork::Pump(p) => p.visit_fields(&mut v),
            }
            st.steady_state.visit_fields(&mut v);
        }
        for (i, c) in self.coolers.iter().enumerate() {
            if let Some(c) = c {
                let g = Group::Cooler(group_index(i));
                c.visit_fields(&mut |spec, value| visit(g, spec, value));
            }
        }
        for (i, p) in self.interstage.iter().enumerate() {
            if let Some(p) = p {
                let g = Group::Interstage(group_index(i));
                p.visit_fields(&mut |spec, value| visit(g, spec, value));
            }
        }
        self.totals
            .visit_fields(&mut |spec, value| visit(Group::Totals, spec, value));
        visit(
            Group::Snapshot,
            &SCAN_COUNT,
            FieldValue::Count(self.scan_count),
        );
    }
}

// ---- condition names ----------------------------------------------------

impl StageCondition {
    /// Stable kebab-case name (`normal`, `input-bad`, `no-compression`,
    /// `no-temperature-rise`, `efficiency-above-one`, `rating-point`,
    /// `ratio-out-of-range`, `implausible-temperature-rise`, `stationary`,
    /// `below-resolution`, `outside-gas-model`).
    pub const fn as_str(self) -> &'static str {
        match self {
            StageCondition::Normal => "normal",
            StageCondition::InputBad => "input-bad",
            StageCondition::NoCompression => "no-compression",
            StageCondition::NoTemperatureRise => "no-temperature-rise",
            StageCondition::EfficiencyAboveOne => "efficiency-above-one",
            StageCondition::RatingPoint => "rating-point",
            StageCondition::RatioOutOfRange => "ratio-out-of-range",
            StageCondition::ImplausibleTemperatureRise => "implausible-temperature-rise",
            StageCondition::Stationary => "stationary",
            StageCondition::BelowResolution => "below-resolution",
            StageCondition::OutsideGasModel => "outside-gas-model",
        }
    }
}

impl PolytropicMethod {
    /// Stable kebab-case name (`schultz`, `sandberg-colby`,
    /// `reference-path`).
    pub const fn as_str(self) -> &'static str {
        match self {
            PolytropicMethod::Schultz => "schultz",
            PolytropicMethod::SandbergColby => "sandberg-colby",
            PolytropicMethod::ReferencePath => "reference-path",
        }
    }
}

impl ValidityReason {
    /// Stable kebab-case name (`in-range`, `ideal-gas-reduced-pressure`,
    /// `temperature-out-of-range`, `pressure-out-of-range`, `near-critical`,
    /// `near-saturation`, `no-vapour-root`, `liquid-like`, `dense-estimate`,
    /// `not-converged`, `invalid`).
    pub const fn as_str(self) -> &'static str {
        match self {
            ValidityReason::InRange => "in-range",
            ValidityReason::IdealGasReducedPressure => "ideal-gas-reduced-pressure",
            ValidityReason::TemperatureOutOfRange => "temperature-out-of-range",
            ValidityReason::PressureOutOfRange => "pressure-out-of-range",
            ValidityReason::NearCritical => "near-critical",
            ValidityReason::NearSaturation => "near-saturation",
            ValidityReason::NoVapourRoot => "no-vapour-root",
            ValidityReason::LiquidLike => "liquid-like",
            ValidityReason::DenseEstimate => "dense-estimate",
            ValidityReason::NotConverged => "not-converged",
            ValidityReason::Invalid => "invalid",
        }
    }
}

impl PumpCondition {
    /// Stable kebab-case name (`normal`, `input-bad`, `no-pressure-rise`,
    /// `ratio-out-of-range`, `stationary`).
    pub const fn as_str(self) -> &'static str {
        match self {
            PumpCondition::Normal => "normal",
            PumpCondition::InputBad => "input-bad",
            PumpCondition::NoPressureRise => "no-pressure-rise",
            PumpCondition::RatioOutOfRange => "ratio-out-of-range",
            PumpCondition::Stationary => "stationary",
        }
    }
}

impl CoolerCondition {
    /// Stable kebab-case name (`normal`, `input-bad`, `outlet-above-inlet`,
    /// `outlet-below-coolant`, `no-driving-difference`, `duty-within-noise`,
    /// `no-gas-flow`).
    pub const fn as_str(self) -> &'static str {
        match self {
            CoolerCondition::Normal => "normal",
            CoolerCondition::InputBad => "input-bad",
            CoolerCondition::OutletAboveInlet => "outlet-above-inlet",
            CoolerCondition::OutletBelowCoolant => "outlet-below-coolant",
            CoolerCondition::NoDrivingDifference => "no-driving-difference",
            CoolerCondition::DutyWithinNoise => "duty-within-noise",
            CoolerCondition::NoGasFlow => "no-gas-flow",
        }
    }
}

impl FaultCode {
    /// Stable kebab-case name (`none`, `ne43-failure-low`, ...,
    /// `input-bad`), for logs and host output; [`FaultCode::code`] is the
    /// number for registers.
    pub const fn as_str(self) -> &'static str {
        match self {
            FaultCode::None => "none",
            FaultCode::Ne43FailureLow => "ne43-failure-low",
            FaultCode::Ne43FailureHigh => "ne43-failure-high",
            FaultCode::Ne43SaturatedLow => "ne43-saturated-low",
            FaultCode::Ne43SaturatedHigh => "ne43-saturated-high",
            FaultCode::SignalOutOfRange => "signal-out-of-range",
            FaultCode::NotFinite => "not-finite",
            FaultCode::TimeNotAdvancing => "time-not-advancing",
            FaultCode::OutOfRange => "out-of-range",
            FaultCode::Spike => "spike",
            FaultCode::Frozen => "frozen",
            FaultCode::CrossCheck => "cross-check",
            FaultCode::ZeroOffset => "zero-offset",
            FaultCode::InputBad => "input-bad",
            FaultCode::ClockStep => "clock-step",
        }
    }
}

impl SurgeFault {
    /// Stable kebab-case name (`none`, `input-bad`, `input-uncertain`,
    /// `flow-dp-impossible`, `flow-dp-outside-validity`,
    /// `discharge-below-suction`, `beyond-map`, `exponent`).
    pub const fn as_str(self) -> &'static str {
        match self {
            SurgeFault::None => "none",
            SurgeFault::InputBad => "input-bad",
            SurgeFault::InputUncertain => "input-uncertain",
            SurgeFault::FlowDpImpossible => "flow-dp-impossible",
            SurgeFault::FlowDpOutsideValidity => "flow-dp-outside-validity",
            SurgeFault::DischargeBelowSuction => "discharge-below-suction",
            SurgeFault::BeyondMap => "beyond-map",
            SurgeFault::Exponent => "exponent",
        }
    }
}

impl Quality {
    /// Stable name: `good`, `uncertain`, `bad` or `not-applicable`.
    pub const fn as_str(self) -> &'static str {
        match self {
            Quality::Good => "good",
            Quality::Uncertain => "uncertain",
            Quality::Bad => "bad",
            Quality::NotApplicable => "not-applicable",
        }
    }
}

// ---- stage inputs -------------------------------------------------------

/// One input of a [`StageScan`] (the cooler's inputs included), in SI.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StageInput {
    /// Suction pressure, Pa absolute.
    SuctionPressure,
    /// Suction temperature, K.
    SuctionTemperature,
    /// Discharge pressure, Pa absolute.
    DischargePressure,
    /// Discharge temperature, K.
    DischargeTemperature,
    /// Mass flow, kg/s (optional).
    MassFlow,
    /// Compressibility factor (optional).
    Compressibility,
    /// Cooler gas outlet temperature, K (absent: no cooler scan).
    CoolerGasOutletTemperature,
    /// Cooler gas outlet pressure, Pa absolute (optional).
    CoolerGasOutletPressure,
    /// Coolant inlet temperature, K.
    CoolantInletTemperature,
    /// Coolant outlet temperature, K (optional).
    CoolantOutletTemperature,
    /// Coolant mass flow, kg/s (optional).
    CoolantMassFlow,
}

const fn input(
    name: &'static str,
    key: &'static str,
    label: &'static str,
    unit: &'static str,
    kind: QuantityKind,
    meaning: &'static str,
) -> FieldSpec {
    FieldSpec {
        name,
        key,
        label,
        unit,
        kind,
        derivation: Derivation::PassThrough,
        meaning,
    }
}

/// The specs of [`StageInput::ALL`], in the same order.
pub const STAGE_INPUTS: [FieldSpec; 11] = [
    input(
        "suction_pressure",
        "suction_pressure_Pa",
        "Suction pressure p1",
        "Pa",
        QuantityKind::Pressure,
        "Suction pressure, absolute.",
    ),
    input(
        "suction_temperature",
        "suction_temperature_K",
        "T1 suction",
        "K",
        QuantityKind::Temperature,
        "Suction temperature.",
    ),
    input(
        "discharge_pressure",
        "discharge_pressure_Pa",
        "Discharge pressure p2",
        "Pa",
        QuantityKind::Pressure,
        "Discharge pressure, absolute.",
    ),
    input(
        "discharge_temperature",
        "discharge_temperature_K",
        "T2 discharge",
        "K",
        QuantityKind::Temperature,
        "Measured discharge temperature.",
    ),
    input(
        "mass_flow",
        "mass_flow_kg_per_s",
        "Mass flow",
        "kg/s",
        QuantityKind::MassFlow,
        "Mass flow through the stage, if measured.",
    ),
    input(
        "compressibility",
        "compressibility",
        "Compressibility Z",
        "-",
        QuantityKind::Compressibility,
        "Mean compressibility factor for this scan, if supplied.",
    ),
    input(
        "gas_outlet_temperature",
        "gas_outlet_temperature_K",
        "Gas out",
        "K",
        QuantityKind::Temperature,
        "Cooler gas outlet temperature.",
    ),
    input(
        "gas_outlet_pressure",
        "gas_outlet_pressure_Pa",
        "Gas out pressure",
        "Pa",
        QuantityKind::Pressure,
        "Cooler gas outlet pressure, absolute, if measured.",
    ),
    input(
        "coolant_inlet_temperature",
        "coolant_inlet_temperature_K",
        "Coolant in",
        "K",
        QuantityKind::Temperature,
        "Coolant inlet temperature.",
    ),
    input(
        "coolant_outlet_temperature",
        "coolant_outlet_temperature_K",
        "Coolant out",
        "K",
        QuantityKind::Temperature,
        "Coolant outlet temperature, if measured.",
    ),
    input(
        "coolant_mass_flow",
        "coolant_mass_flow_kg_per_s",
        "Coolant flow",
        "kg/s",
        QuantityKind::MassFlow,
        "Coolant mass flow, if measured.",
    ),
];

impl StageInput {
    /// Every input, in the order of [`STAGE_INPUTS`].
    pub const ALL: [StageInput; 11] = [
        StageInput::SuctionPressure,
        StageInput::SuctionTemperature,
        StageInput::DischargePressure,
        StageInput::DischargeTemperature,
        StageInput::MassFlow,
        StageInput::Compressibility,
        StageInput::CoolerGasOutletTemperature,
        StageInput::CoolerGasOutletPressure,
        StageInput::CoolantInletTemperature,
        StageInput::CoolantOutletTemperature,
        StageInput::CoolantMassFlow,
    ];

    /// Position in [`StageInput::ALL`] and [`STAGE_INPUTS`].
    pub const fn index(self) -> usize {
        self as usize
    }

    /// This input's spec.
    pub const fn spec(self) -> &'static FieldSpec {
        match self {
            StageInput::SuctionPressure => &STAGE_INPUTS[0],
            StageInput::SuctionTemperature => &STAGE_INPUTS[1],
            StageInput::DischargePressure => &STAGE_INPUTS[2],
            StageInput::DischargeTemperature => &STAGE_INPUTS[3],
            StageInput::MassFlow => &STAGE_INPUTS[4],
            StageInput::Compressibility => &STAGE_INPUTS[5],
            StageInput::CoolerGasOutletTemperature => &STAGE_INPUTS[6],
            StageInput::CoolerGasOutletPressure => &STAGE_INPUTS[7],
            StageInput::CoolantInletTemperature => &STAGE_INPUTS[8],
            StageInput::CoolantOutletTemperature => &STAGE_INPUTS[9],
            StageInput::CoolantMassFlow => &STAGE_INPUTS[10],
        }
    }
}

fn pa<T: Real>(m: Measured<PressureAbs<T>>) -> Measured<T> {
    m.map(PressureAbs::pa)
}
fn k<T: Real>(m: Measured<Kelvin<T>>) -> Measured<T> {
    m.map(Kelvin::kelvin)
}

impl<T: Real> StageScan<T> {
    /// One input in SI (Pa absolute, K, kg/s), as given (no boundary
    /// checks); `None` where absent (an optional input not measured, or a
    /// cooler input without a cooler scan).
    pub fn input(&self, which: StageInput) -> Option<Measured<T>> {
        let c = self.cooler.as_ref();
        match which {
            StageInput::SuctionPressure => Some(pa(self.suction_pressure)),
            StageInput::SuctionTemperature => Some(k(self.suction_temperature)),
            StageInput::DischargePressure => Some(pa(self.discharge_pressure)),
            StageInput::DischargeTemperature => Some(k(self.discharge_temperature)),
            StageInput::MassFlow => self.mass_flow,
            StageInput::Compressibility => self.compressibility,
            StageInput::CoolerGasOutletTemperature => c.map(|c| k(c.gas_outlet_temperature)),
            StageInput::CoolerGasOutletPressure => c.and_then(|c| c.gas_outlet_pressure.map(pa)),
            StageInput::CoolantInletTemperature => c.map(|c| k(c.coolant_inlet_temperature)),
            StageInput::CoolantOutletTemperature => {
                c.and_then(|c| c.coolant_outlet_temperature.map(k))
            }
            StageInput::CoolantMassFlow => c.and_then(|c| c.coolant_mass_flow),
        }
    }

    /// Builds a stage scan from its inputs in SI. A required input that is
    /// absent reads bad; the cooler scan exists exactly when its gas outlet
    /// temperature is given.
    pub fn from_inputs(mut get: impl FnMut(StageInput) -> Option<Measured<T>>) -> Self {
        let mut req = |w| get(w).unwrap_or_else(Measured::bad);
        let suction_pressure = req(StageInput::SuctionPressure).map(PressureAbs::from_pa);
        let suction_temperature = req(StageInput::SuctionTemperature).map(Kelvin::new);
        let discharge_pressure = req(StageInput::DischargePressure).map(PressureAbs::from_pa);
        let discharge_temperature = req(StageInput::DischargeTemperature).map(Kelvin::new);
        let mass_flow = get(StageInput::MassFlow);
        let compressibility = get(StageInput::Compressibility);
        let cooler = get(StageInput::CoolerGasOutletTemperature).map(|tout| CoolerScan {
            gas_outlet_temperature: tout.map(Kelvin::new),
            gas_outlet_pressure: get(StageInput::CoolerGasOutletPressure)
                .map(|p| p.map(PressureAbs::from_pa)),
            coolant_inlet_temperature: get(StageInput::CoolantInletTemperature)
                .unwrap_or_else(Measured::bad)
                .map(Kelvin::new),
            coolant_outlet_temperature: get(StageInput::CoolantOutletTemperature)
                .map(|t| t.map(Kelvin::new)),
            coolant_mass_flow: get(StageInput::CoolantMassFlow),
        });
        StageScan {
            suction_pressure,
            suction_temperature,
            discharge_pressure,
            discharge_temperature,
            mass_flow,
            compressibility,
            cooler,
        }
    }
}

impl<T: Real> StageScan<T> {
    /// Replaces one input (SI; `None` makes an optional input absent, a
    /// required one bad, and the cooler scan absent for its gas outlet
    /// temperature). A cooler input set on a stage without a cooler scan
    /// has no effect unless it is the gas outlet temperature.
    pub fn set_input(&mut self, which: StageInput, value: Option<Measured<T>>) {
        let old = *self;
        *self = StageScan::from_inputs(|w| if w == which { value } else { old.input(w) });
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::vec::Vec;

    fn keys_unique(list: &[FieldSpec]) {
        for (i, a) in list.iter().enumerate() {
            for b in list.iter().skip(i + 1) {
                assert_ne!(a.key, b.key);
                assert_ne!(a.name, b.name);
            }
        }
    }

    #[test]
    fn keys_are_unique_within_each_list_and_carry_their_units() {
        let lists: [&[FieldSpec]; 7] = [
            <CompressorResult<f32> as ResultFields<f32>>::FIELDS,
            <PumpResult<f32> as ResultFields<f32>>::FIELDS,
            <SteadyState<f32> as ResultFields<f32>>::FIELDS,
            <CoolerResult<f32> as ResultFields<f32>>::FIELDS,
            <InterstagePressure<f32> as ResultFields<f32>>::FIELDS,
            <TrainTotals<f32> as ResultFields<f32>>::FIELDS,
            &STAGE_INPUTS,
        ];
        for list in lists {
            keys_unique(list);
            for f in list {
                let suffix = match f.unit {
                    "Pa" => "_Pa",
                    "K" => "_K",
                    "J/kg" => "_J_per_kg",
                    "W" => "_W",
                    "kg/s" => "_kg_per_s",
                    "W/K" => "_W_per_K",
                    _ => "",
                };
                assert!(f.key.ends_with(suffix), "{} / {}", f.key, f.unit);
            }
        }
    }

    /// The struct's own field names, from its `Debug` text (depth 1 only).
    fn struct_fields(debug: &str) -> Vec<std::string::String> {
        let mut out = Vec::new();
        let mut depth = 0;
        let mut word = std::string::String::new();
        let mut chars = debug.chars().peekable();
        while let Some(c) = chars.next() {
            match c {
                '{' | '(' | '[' => depth += 1,
                '}' | ')' | ']' => depth -= 1,
                ':' if depth == 1 && chars.peek() == Some(&' ') => {
                    out.push(word.trim().trim_start_matches(',').trim().into());
                }
                _ => {}
            }
            if c == ',' || c == '{' {
                word.clear();
            } else {
                word.push(c);
            }
        }
        out
    }

    fn list_is_complete<R: ResultFields<f32> + core::fmt::Debug>(r: &R) {
        let listed: Vec<&str> = R::FIELDS.iter().map(|f| f.name).collect();
        let declared = struct_fields(&std::format!("{r:?}"));
        assert_eq!(
            declared, listed,
            "every struct field is listed in fields.rs, in declaration order"
        );
    }

    #[test]
    fn every_struct_field_is_in_its_list() {
        list_is_complete(&CompressorResult::<f32>::bad());
        list_is_complete(&PumpResult::<f32>::bad());
        list_is_complete(&SteadyState::<f32>::unknown());
        list_is_complete(&CoolerResult::<f32>::bad());
        list_is_complete(&InterstagePressure::<f32> {
            measured: Measured::bad(),
            optimum: Measured::bad(),
            deviation: Measured::bad(),
        });
        list_is_complete(&TrainTotals::<f32>::bad(2));
        list_is_complete(&crate::surge::SurgeState::<f32>::bad());
        list_is_complete(&crate::surge::DetectionState::<f32> {
            surge_this_scan: false,
            event_count: 0,
            events_in_window: 0,
            added_margin: 0.0,
            trip_request: false,
            blind: false,
            armed: true,
        });
    }

    #[test]
    fn inputs_round_trip_through_the_list() {
        let mut s = StageScan::from_si(1.0e5_f64, 300.0, 3.0e5, 420.0);
        s.mass_flow = Some(Measured::new(2.0, Quality::Uncertain));
        s.cooler = Some(CoolerScan {
            gas_outlet_temperature: Measured::good(Kelvin::new(310.0)),
            gas_outlet_pressure: None,
            coolant_inlet_temperature: Measured::good(Kelvin::new(290.0)),
            coolant_outlet_temperature: Some(Measured::good(Kelvin::new(300.0))),
            coolant_mass_flow: None,
        });
        let back = StageScan::from_inputs(|w| s.input(w));
        assert_eq!(back, s);
        for (i, w) in StageInput::ALL.iter().enumerate() {
            assert_eq!(w.index(), i);
            assert_eq!(w.spec(), &STAGE_INPUTS[i]);
        }
        let none = StageScan::<f64>::from_inputs(|_| None);
        assert_eq!(none.suction_pressure.quality, Quality::Bad);
        assert!(none.cooler.is_none());
    }

    #[test]
    fn visitor_follows_the_list() {
        let c = CompressorResult::<f32>::bad();
        let mut seen = Vec::new();
        c.visit_fields(&mut |spec, v| seen.push((spec.name, v)));
        let names: Vec<_> = seen.iter().map(|s| s.0).collect();
        let listed: Vec<_> = <CompressorResult<f32> as ResultFields<f32>>::FIELDS
            .iter()
            .map(|f| f.name)
            .collect();
        assert_eq!(names, listed);
        assert_eq!(seen.last().map(|s| s.1), Some(FieldValue::Tag("input-bad")));
        assert_eq!(
            StageCondition::NoTemperatureRise.as_str(),
            "no-temperature-rise"
        );
        assert_eq!(
            CoolerCondition::OutletBelowCoolant.as_str(),
            "outlet-below-coolant"
        );
    }
}
