//! The field lists the register image is laid out from.
//!
//! The train's result types are listed in the same shape as the crate's one
//! field list (issue 8: stable key with SI unit suffix, label, unit, kind,
//! visited in a fixed order); the surge monitor, surge detector and signal
//! channel results are listed here too. Every register of the image and
//! every row of the generated map comes from these lists, so a field added
//! to a result type is one edit here.
//!
//! Interim: until the crate-wide field list lands, the train's lists live
//! here; the register code only needs `FIELDS` and `visit_fields`.

use crate::cooler::CoolerResult;
use crate::quality::Measured;
use crate::real::Real;
use crate::signal::ChannelOutput;
use crate::stage::{CompressorResult, PumpResult};
use crate::staging::{InterstagePressure, TrainTotals};
use crate::steady::SteadyState;
use crate::surge::{DetectionState, SurgeState};

/// What a field holds, as far as the register image cares.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FieldKind {
    /// A number with a quality (two registers, IEEE 754 single).
    Real,
    /// A number without a quality of its own (two registers; quality good).
    Plain,
    /// A count (two registers, unsigned 32 bit).
    Count,
    /// A yes/no mark: carried as a bit of the block's status word.
    Flag,
    /// A named state: carried as the code in the block's status word.
    Condition,
}

impl FieldKind {
    /// Registers the field takes in its block's value area.
    pub const fn registers(self) -> usize {
        match self {
            FieldKind::Real | FieldKind::Plain | FieldKind::Count => 2,
            FieldKind::Flag | FieldKind::Condition => 0,
        }
    }
}

/// One field of a result type.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FieldSpec {
    /// Stable snake_case key with the SI unit as suffix.
    pub key: &'static str,
    /// Human label for tables.
    pub label: &'static str,
    /// SI unit text (`-` if dimensionless, `""` for flags, counts, states).
    pub unit: &'static str,
    /// What the field holds.
    pub kind: FieldKind,
}

/// One field's value.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FieldValue<T> {
    /// A value with its quality.
    Real(Measured<T>),
    /// A number without a quality of its own.
    Plain(T),
    /// A count.
    Count(u32),
    /// A yes/no mark.
    Flag(bool),
    /// A named state (its stable code).
    Condition(u8),
}

/// A result type whose fields are listed here.
pub trait ResultFields<T> {
    /// The fields, in visiting order.
    const FIELDS: &'static [FieldSpec];
    /// Calls `visit` once per field of [`Self::FIELDS`], in that order.
    fn visit_fields(&self, visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>));
}

trait IntoField<T> {
    fn into_field(self) -> FieldValue<T>;
}
impl<T> IntoField<T> for Measured<T> {
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Real(self)
    }
}
impl<T> IntoField<T> for bool {
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Flag(self)
    }
}
impl<T> IntoField<T> for u8 {
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Count(u32::from(self))
    }
}
impl<T> IntoField<T> for u16 {
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Count(u32::from(self))
    }
}
impl<T> IntoField<T> for u32 {
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Count(self)
    }
}
struct Plain<T>(T);
impl<T> IntoField<T> for Plain<T> {
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Plain(self.0)
    }
}
struct Code(u8);
impl<T> IntoField<T> for Code {
    fn into_field(self) -> FieldValue<T> {
        FieldValue::Condition(self.0)
    }
}

/// Declares a type's field list and its visitor from one table.
macro_rules! fields {
    ($ty:ident { $( $field:ident $([$wrap:ident])? : $key:literal, $label:literal, $unit:literal, $kind:ident; )* }) => {
        impl<T: Real> ResultFields<T> for $ty<T> {
            const FIELDS: &'static [FieldSpec] = &[$(
                FieldSpec { key: $key, label: $label, unit: $unit, kind: FieldKind::$kind },
            )*];
            fn visit_fields(&self, visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>)) {
                let mut specs = Self::FIELDS.iter();
                $(
                    if let Some(spec) = specs.next() {
                        visit(spec, fields!(@value self.$field $(, $wrap)?));
                    }
                )*
            }
        }
    };
    (@value $e:expr) => { IntoField::<T>::into_field($e) };
    (@value $e:expr, plain) => { IntoField::<T>::into_field(Plain($e)) };
    (@value $e:expr, code) => { IntoField::<T>::into_field(Code($e as u8)) };
}

fields!(CompressorResult {
    pressure_ratio: "pressure_ratio", "Pressure ratio", "-", Real;
    isentropic_discharge_temperature: "isentropic_discharge_temperature_K", "Isentropic discharge temperature", "K", Real;
    temperature_rise: "temperature_rise_K", "Temperature rise", "K", Real;
    isentropic_head: "isentropic_head_J_per_kg", "Isentropic head", "J/kg", Real;
    polytropic_head: "polytropic_head_J_per_kg", "Polytropic head", "J/kg", Real;
    isothermal_head: "isothermal_head_J_per_kg", "Isothermal head", "J/kg", Real;
    actual_work: "actual_work_J_per_kg", "Actual work", "J/kg", Real;
    isentropic_efficiency: "isentropic_efficiency", "Isentropic efficiency", "-", Real;
    polytropic_efficiency: "polytropic_efficiency", "Polytropic efficiency", "-", Real;
    polytropic_exponent: "polytropic_exponent", "Polytropic exponent n", "-", Real;
    mass_flow: "mass_flow_kg_per_s", "Mass flow", "kg/s", Real;
    gas_power: "gas_power_W", "Gas power", "W", Real;
    work_above_isothermal: "work_above_isothermal_J_per_kg", "Work above isothermal", "J/kg", Real;
    power_above_isothermal: "power_above_isothermal_W", "Power above isothermal", "W", Real;
    compressibility [plain]: "compressibility", "Compressibility Z used", "-", Plain;
    k [plain]: "heat_capacity_ratio", "Heat-capacity ratio k used", "-", Plain;
    condition [code]: "condition", "Condition", "", Condition;
});

fields!(PumpResult {
    pressure_ratio: "pressure_ratio", "Pressure ratio", "-", Real;
    pressure_rise: "pressure_rise_Pa", "Pressure rise", "Pa", Real;
    reversible_work: "reversible_work_J_per_kg", "Reversible work v dP", "J/kg", Real;
    shaft_work: "shaft_work_J_per_kg", "Shaft work", "J/kg", Real;
    mass_flow: "mass_flow_kg_per_s", "Mass flow", "kg/s", Real;
    power: "power_W", "Shaft power", "W", Real;
    gas_compression_equivalent: "gas_compression_equivalent_J_per_kg", "Gas compression work, same ratio", "J/kg", Real;
    work_ratio_to_gas: "work_ratio_to_gas", "Pump work over gas work", "-", Real;
});

fields!(SteadyState {
    steady: "steady_state", "Steady", "", Flag;
    samples: "steady_state_samples", "Window samples", "", Count;
    temperature_spread [plain]: "temperature_spread_K", "Temperature spread", "K", Plain;
    ratio_spread [plain]: "ratio_spread", "Pressure-ratio spread", "-", Plain;
});

fields!(CoolerResult {
    gas_temperature_drop: "gas_temperature_drop_K", "Gas temperature drop", "K", Real;
    approach: "approach_K", "Approach", "K", Real;
    effectiveness: "effectiveness", "Effectiveness", "-", Real;
    heat_duty: "heat_duty_W", "Heat duty", "W", Real;
    pressure_drop: "pressure_drop_Pa", "Pressure drop", "Pa", Real;
    relative_pressure_drop: "relative_pressure_drop", "Relative pressure drop", "-", Real;
    coolant_temperature_rise: "coolant_temperature_rise_K", "Coolant temperature rise", "K", Real;
    lmtd: "lmtd_K", "LMTD (counterflow)", "K", Real;
    ua: "ua_W_per_K", "UA", "W/K", Real;
    heat_balance_error: "heat_balance_error", "Heat balance error", "-", Real;
    next_stage_temperature_rise: "next_stage_temperature_rise_K", "Next-stage temperature rise", "K", Real;
    condition [code]: "condition", "Condition", "", Condition;
});

fields!(InterstagePressure {
    measured: "measured_discharge_pressure_Pa", "Measured discharge pressure", "Pa", Real;
    optimum: "equal_ratio_discharge_pressure_Pa", "Equal-ratio discharge pressure", "Pa", Real;
    deviation: "deviation", "Deviation from equal ratio", "-", Real;
});

fields!(TrainTotals {
    compressor_stages: "compressor_stages", "Compressor stages", "", Count;
    overall_pressure_ratio: "overall_pressure_ratio", "Overall pressure ratio", "-", Real;
    compressor_work: "compressor_work_J_per_kg", "Compressor work", "J/kg", Real;
    compressor_power: "compressor_power_W", "Compressor gas power", "W", Real;
    pump_power: "pump_power_W", "Pump shaft power", "W", Real;
    total_power: "total_power_W", "Total power", "W", Real;
    isothermal_work: "isothermal_work_J_per_kg", "Isothermal work, overall ratio", "J/kg", Real;
    isothermal_efficiency: "isothermal_efficiency", "Isothermal efficiency", "-", Real;
    single_stage_isentropic_work: "single_stage_isentropic_work_J_per_kg", "One uncooled isentropic stage", "J/kg", Real;
    ideal_staged_isentropic_work: "ideal_staged_isentropic_work_J_per_kg", "Ideal staged isentropic work", "J/kg", Real;
    measured_staged_isentropic_work: "measured_staged_isentropic_work_J_per_kg", "Measured staged isentropic work", "J/kg", Real;
    staging_saving: "staging_saving_J_per_kg", "Saving by staging, measured", "J/kg", Real;
    ideal_staging_saving: "ideal_staging_saving_J_per_kg", "Saving by staging, ideal", "J/kg", Real;
});

fields!(SurgeState {
    reduced_flow_squared: "reduced_flow_squared", "Reduced flow squared", "-", Real;
    reduced_head: "reduced_head", "Reduced head", "-", Real;
    surge_reduced_flow_squared: "surge_reduced_flow_squared", "Reduced flow squared at surge", "-", Real;
    margin: "surge_margin", "Surge margin", "-", Real;
    control_margin: "control_margin", "Control margin", "-", Real;
    deviation: "control_line_deviation", "Deviation from the control line", "-", Real;
    rate_of_approach: "rate_of_approach_per_s", "Rate of approach", "1/s", Real;
    time_to_surge: "time_to_surge_s", "Time to surge", "s", Real;
});

fields!(DetectionState {
    surge_this_scan: "surge_this_scan", "Surge cycle this scan", "", Flag;
    event_count: "surge_event_count", "Surge events", "", Count;
    events_in_window: "surge_events_in_window", "Surge events in the trip window", "", Count;
    control_line_shift [plain]: "control_line_shift", "Control-line shift", "-", Plain;
    trip_request: "trip_request", "Trip request", "", Flag;
    blind: "detection_blind", "Detection blind", "", Flag;
});

/// The signal-channel fields the image carries (the status flags and the
/// fault code go into the block's status word).
pub const CHANNEL_FIELDS: &[FieldSpec] = &[
    FieldSpec {
        key: "raw_value",
        label: "Raw value (SI)",
        unit: "SI",
        kind: FieldKind::Real,
    },
    FieldSpec {
        key: "filtered_value",
        label: "Filtered value (SI)",
        unit: "SI",
        kind: FieldKind::Real,
    },
    FieldSpec {
        key: "last_good_ms",
        label: "Time of the last good sample",
        unit: "ms",
        kind: FieldKind::Count,
    },
];

/// Visits a channel output in the order of [`CHANNEL_FIELDS`].
pub fn visit_channel<T: Real>(
    out: &ChannelOutput<T>,
    visit: &mut dyn FnMut(&'static FieldSpec, FieldValue<T>),
) {
    let mut specs = CHANNEL_FIELDS.iter();
    let last_good = u32::try_from(out.status.last_good_ms).unwrap_or(u32::MAX);
    for value in [
        FieldValue::Real(out.raw),
        FieldValue::Real(out.filtered),
        FieldValue::Count(last_good),
    ] {
        if let Some(spec) = specs.next() {
            visit(spec, value);
        }
    }
}
