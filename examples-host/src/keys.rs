//! The registry of every JSON key the tool writes, with its SI unit and
//! meaning, and the `keys` subcommand that prints it as Markdown
//! (`examples-host/README-keys.md` is that output; a test keeps them equal).
//!
//! JSON objects are built only from these constants ([`crate::out::Obj`]),
//! so a key cannot be written without being documented. A module that adds
//! a subcommand adds its keys here (to a `keys!` block and its group).

use crate::cli::{CliError, Command, Parsed};

/// One JSON key.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Key {
    /// The key as written; a number's SI unit is its suffix.
    pub name: &'static str,
    /// SI unit of the number, `-` if dimensionless, or the JSON type of a
    /// non-numeric value.
    pub unit: &'static str,
    /// What it means.
    pub meaning: &'static str,
}

macro_rules! keys {
    ($group:ident: $( $id:ident = $name:literal, $unit:literal, $meaning:literal; )*) => {
        $(
            #[doc = $meaning]
            pub const $id: Key = Key { name: $name, unit: $unit, meaning: $meaning };
        )*
        /// Every key of this group, in documentation order.
        pub const $group: &[Key] = &[$($id),*];
    };
}

keys! { STRUCTURE:
    COMMAND_NAME = "command", "string", "Subcommand that produced the document (`demo`, `stage`).";
    SCENARIO = "scenario", "string", "Says the demo data are an invented scenario, not a real machine.";
    CAUTION = "caution", "string", "Safety caution: not a certified safety function; defer to the machine maker's data, local codes and licensed practice.";
    PRECISION = "precision", "string", "Kernel build used: `f32` (the device build) or `f64` (the reference build).";
    SCANS = "scans", "integer", "Number of scans run through the train; results are those of the last scan.";
    NOTES = "notes", "array of strings", "Remarks about the inputs (assumed atmosphere, missing flow, flagged conditions).";
    VALUE = "value", "number or null", "The value, in the SI unit of the key that holds it; `null` when `quality` is `bad`.";
    QUALITY = "quality", "string", "`good`, `uncertain` (usable with care) or `bad` (no usable value).";
    CONDITION = "condition", "string", "What the evaluation found about its inputs (`normal`, `input-bad`, `no-compression`, `no-temperature-rise`, `efficiency-above-one`; coolers: `outlet-above-inlet`, `outlet-below-coolant`, `no-driving-difference`).";
    STAGES = "stages", "array of objects", "Per stage, in flow order (demo).";
    STAGE = "stage", "integer", "Stage number, 1 = first in flow order.";
    KIND = "kind", "string", "`compressor` or `pump`.";
    COOLERS = "coolers", "array of objects", "Per cooler, in flow order (demo).";
    AFTER_STAGE = "after_stage", "integer", "Number of the stage whose discharge the cooler cools.";
    INTERSTAGE = "interstage", "array of objects", "Per compressor stage except the last: discharge pressure against the equal-ratio optimum.";
    TOTALS = "totals", "object", "Whole-train totals (demo).";
    INPUTS = "inputs", "object", "The inputs as understood, converted to SI (plain numbers, no quality).";
    RESULTS = "results", "object", "Single-stage results (stage).";
    STAGING = "staging", "object", "Staging comparison for the same overall duty (stage, with `--stages`).";
}

keys! { INPUT:
    GAS = "gas", "string", "Gas name (`custom` for a custom k and molar mass).";
    HEAT_CAPACITY_MODEL = "heat_capacity_model", "string", "`constant-k` or `cp-polynomial` (ideal-gas cp(T)).";
    MOLAR_MASS = "molar_mass_kg_per_kmol", "kg/kmol", "Molar mass of the gas.";
    GAS_CONSTANT = "gas_constant_J_per_kg_K", "J/(kg K)", "Specific gas constant R = Ru / M.";
    ATMOSPHERE = "atmosphere_Pa", "Pa", "Atmospheric pressure used to convert gauge inputs (`null` if no gauge input).";
    ATMOSPHERE_ASSUMED = "atmosphere_assumed", "boolean", "`true` if the standard atmosphere (101325 Pa) was assumed for a gauge input.";
    STAGE_COUNT = "compressor_stages", "integer", "Number of compressor stages (pumps excluded).";
}

keys! { STAGE_KEYS:
    SUCTION_PRESSURE = "suction_pressure_Pa", "Pa", "Suction pressure, absolute.";
    DISCHARGE_PRESSURE = "discharge_pressure_Pa", "Pa", "Discharge pressure, absolute.";
    SUCTION_TEMPERATURE = "suction_temperature_K", "K", "Suction temperature.";
    DISCHARGE_TEMPERATURE = "discharge_temperature_K", "K", "Measured discharge temperature.";
    PRESSURE_RATIO = "pressure_ratio", "-", "Discharge over suction pressure (absolute).";
    ISENTROPIC_T2 = "isentropic_discharge_temperature_K", "K", "Discharge temperature of an isentropic compression over the same ratio.";
    TEMPERATURE_RISE = "temperature_rise_K", "K", "Measured temperature rise T2 - T1.";
    ISENTROPIC_HEAD = "isentropic_head_J_per_kg", "J/kg", "Isentropic head h(p2, s1) - h1 from the gas model (ideal gas: Z R T1 k/(k-1) (r^((k-1)/k) - 1)).";
    POLYTROPIC_HEAD = "polytropic_head_J_per_kg", "J/kg", "Polytropic head along the measured path, by the method in `polytropic_method`.";
    ISOTHERMAL_HEAD = "isothermal_head_J_per_kg", "J/kg", "Isothermal head Z1 R T1 ln r with the suction Z (the ideal).";
    ACTUAL_WORK = "actual_work_J_per_kg", "J/kg", "Actual specific work, the enthalpy rise h2 - h1 from the gas model (ideal gas: Z cp (T2 - T1)).";
    ISENTROPIC_EFFICIENCY = "isentropic_efficiency", "-", "Isentropic head over actual work.";
    POLYTROPIC_EFFICIENCY = "polytropic_efficiency", "-", "Polytropic head over actual work (ideal gas: ((k-1)/k) / ((n-1)/n)).";
    POLYTROPIC_EXPONENT = "polytropic_exponent", "-", "Polytropic exponent n inferred from the measured end states.";
    MASS_FLOW = "mass_flow_kg_per_s", "kg/s", "Mass flow used for the power.";
    GAS_POWER = "gas_power_W", "W", "Gas power, mass flow times actual work.";
    WORK_ABOVE_ISOTHERMAL = "work_above_isothermal_J_per_kg", "J/kg", "Actual work minus the isothermal head.";
    POWER_ABOVE_ISOTHERMAL = "power_above_isothermal_W", "W", "Gas power minus isothermal power.";
    COMPRESSIBILITY = "compressibility", "-", "Suction compressibility factor Z (ideal gas: the configured or supplied mean Z; Peng-Robinson: computed).";
    HEAT_CAPACITY_RATIO = "heat_capacity_ratio", "-", "Isentropic exponent used: the mean k (ideal gas) or the isentropic volume exponent ln(p2/p1)/ln(v1/v2s) (Peng-Robinson).";
    POLYTROPIC_METHOD = "polytropic_method", "string", "Method of the polytropic head, efficiency and exponent: `schultz`, `sandberg-colby` or `reference-path`.";
    GAS_MODEL_VALIDITY = "gas_model_validity", "string", "The gas model's validity for this stage's states: `in-range` or why not (`near-critical`, `ideal-gas-reduced-pressure`, `liquid-like`, ...); folded into every quality.";
    STEADY_STATE = "steady_state", "boolean", "Whether the stage was at steady state over the detector window at the last scan.";
    STEADY_SAMPLES = "steady_state_samples", "integer", "Scans in the steady-state window so far.";
}

keys! { PUMP_KEYS:
    PRESSURE_RISE = "pressure_rise_Pa", "Pa", "Pump pressure rise.";
    SUCTION_DENSITY = "suction_density_kg_per_m3", "kg/m3", "Suction density used: from the gas model (Peng-Robinson with Peneloux translation) or the configured value.";
    REVERSIBLE_WORK = "reversible_work_J_per_kg", "J/kg", "Reversible pump work v dP.";
    SHAFT_WORK = "shaft_work_J_per_kg", "J/kg", "Pump shaft work v dP / efficiency.";
    PUMP_POWER_STAGE = "power_W", "W", "Pump shaft power.";
    GAS_EQUIVALENT = "gas_compression_equivalent_J_per_kg", "J/kg", "Isentropic work an ideal-gas compressor would need for the pump's pressure ratio from its suction temperature.";
    WORK_RATIO_TO_GAS = "work_ratio_to_gas", "-", "Pump shaft work over that gas compression work.";
}

keys! { COOLER_KEYS:
    GAS_INLET_T = "gas_inlet_temperature_K", "K", "Cooler gas inlet temperature (the stage discharge).";
    GAS_OUTLET_T = "gas_outlet_temperature_K", "K", "Cooler gas outlet temperature.";
    COOLANT_INLET_T = "coolant_inlet_temperature_K", "K", "Coolant inlet temperature.";
    GAS_DROP = "gas_temperature_drop_K", "K", "Gas temperature drop across the cooler.";
    APPROACH = "approach_K", "K", "Gas outlet minus coolant inlet temperature.";
    EFFECTIVENESS = "effectiveness", "-", "Gas temperature drop over (gas inlet - coolant inlet).";
    HEAT_DUTY = "heat_duty_W", "W", "Heat removed from the gas, m cp (Tin - Tout).";
    PRESSURE_DROP = "pressure_drop_Pa", "Pa", "Gas-side pressure drop.";
    RELATIVE_PRESSURE_DROP = "relative_pressure_drop", "-", "Gas-side pressure drop over inlet pressure.";
    COOLANT_RISE = "coolant_temperature_rise_K", "K", "Coolant temperature rise.";
    LMTD = "lmtd_K", "K", "Counterflow log-mean temperature difference.";
    UA = "ua_W_per_K", "W/K", "Overall conductance, duty over LMTD.";
    HEAT_BALANCE = "heat_balance_error", "-", "(gas duty - coolant duty) / gas duty.";
    NEXT_RISE = "next_stage_temperature_rise_K", "K", "Temperature rise across the next stage.";
}

keys! { TRAIN_KEYS:
    MEASURED_P2 = "measured_discharge_pressure_Pa", "Pa", "Measured stage discharge pressure, absolute.";
    OPTIMUM_P2 = "equal_ratio_discharge_pressure_Pa", "Pa", "Equal-ratio (least-work) discharge pressure p1 r^(i/N), absolute.";
    DEVIATION = "deviation", "-", "Measured over equal-ratio pressure, minus 1.";
    OVERALL_RATIO = "overall_pressure_ratio", "-", "Last compressor discharge over first suction pressure.";
    COMPRESSOR_WORK = "compressor_work_J_per_kg", "J/kg", "Sum of the compressor stages' actual work.";
    COMPRESSOR_POWER = "compressor_power_W", "W", "Sum of the compressor stages' gas power.";
    PUMP_POWER = "pump_power_W", "W", "Sum of the pump stages' shaft power.";
    TOTAL_POWER = "total_power_W", "W", "Compressor plus pump power.";
    ISOTHERMAL_WORK = "isothermal_work_J_per_kg", "J/kg", "Isothermal work for the overall ratio at the first suction temperature.";
    ISOTHERMAL_EFFICIENCY = "isothermal_efficiency", "-", "Isothermal work over compressor work.";
    SINGLE_STAGE = "single_stage_isentropic_work_J_per_kg", "J/kg", "Isentropic work of one uncooled stage for the overall ratio.";
    IDEAL_STAGED = "ideal_staged_isentropic_work_J_per_kg", "J/kg", "Isentropic work of N equal-ratio stages with perfect intercooling.";
    MEASURED_STAGED = "measured_staged_isentropic_work_J_per_kg", "J/kg", "Sum of the stages' isentropic heads at their measured suction states.";
    STAGING_SAVING = "staging_saving_J_per_kg", "J/kg", "Single-stage minus measured-staged isentropic work.";
    IDEAL_SAVING = "ideal_staging_saving_J_per_kg", "J/kg", "Single-stage minus ideal-staged isentropic work.";
    STAGE_RATIO = "stage_pressure_ratio", "-", "Pressure ratio of each equal-ratio stage, r^(1/N).";
    IDEAL_STAGED_T2 = "ideal_staged_discharge_temperature_K", "K", "Isentropic discharge temperature of each equal-ratio stage with perfect intercooling.";
}

keys! { LEDGER_KEYS:
    LEDGER = "ledger", "array of objects", "Loss ledger of the last scan (demo): from the isothermal power of the duty to the measured power, one object per line in the order of attribution (polytrope::ledger).";
    CAUSE = "cause", "string", "Ledger line: `isothermal` (the start), `stage-count`, `pressure-drops`, `pressure-split`, `coolant-temperature`, `intercooling` and `stage-inefficiency` (per stage), `recycle`, `pumps`, `remainder`, `measured-total` (the end).";
    LINE_POWER = "line_power_W", "W", "Power of the ledger line.";
}

/// Every key group, for the documentation.
pub const GROUPS: &[(&str, &[Key])] = &[
    ("Document structure", STRUCTURE),
    ("Inputs", INPUT),
    ("Compressor stage", STAGE_KEYS),
    ("Pump stage", PUMP_KEYS),
    ("Cooler", COOLER_KEYS),
    ("Train and staging", TRAIN_KEYS),
    ("Loss ledger", LEDGER_KEYS),
];

const INTRO: &str = "\
# JSON keys of `polytrope-host`

Generated by `cargo run -p polytrope-host -- keys` (a test checks this file \
against that output).

Every number is in SI units, named by the key's suffix (`_Pa` absolute \
pressure, `_K` kelvin, `_J_per_kg`, `_W`, `_kg_per_s`, `_W_per_K`); a key \
without a unit suffix is dimensionless (`-`). Results are objects \
`{\"value\": number or null, \"quality\": \"good\" | \"uncertain\" | \"bad\"}`; \
`value` is `null` when the quality is `bad`. Inside `inputs`, values are \
plain numbers (what was typed, converted to SI); `compressibility` and \
`heat_capacity_ratio` are plain numbers everywhere (model parameters).

Layout. `demo --json`: `command`, `scenario`, `caution`, `precision`, \
`scans`, `stages` (compressor and pump objects), `coolers`, `interstage`, \
`totals`, `ledger`. `stage --json`: `command`, `caution`, `precision`, `inputs`, \
`results`, `staging` (only with `--stages`), `notes`.

Caution: not a certified safety function; defer to the machine maker's \
data, local codes and licensed engineering practice.
";

/// The Markdown key reference.
pub fn markdown() -> String {
    let mut s = String::from(INTRO);
    for (title, keys) in GROUPS {
        s.push_str(&format!(
            "\n## {title}\n\n| key | unit | meaning |\n|---|---|---|\n"
        ));
        for k in *keys {
            s.push_str(&format!("| `{}` | {} | {} |\n", k.name, k.unit, k.meaning));
        }
    }
    s
}

/// The `keys` subcommand.
pub const COMMAND: Command = Command {
    name: "keys",
    summary: "print the Markdown reference of every JSON key (units and meaning)",
    options: &[],
    run,
};

fn run(_args: &Parsed) -> Result<String, CliError> {
    Ok(markdown())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_names_are_unique_and_carry_units() {
        let all: Vec<&Key> = GROUPS.iter().flat_map(|(_, k)| k.iter()).collect();
        for (i, a) in all.iter().enumerate() {
            for b in all.iter().skip(i + 1) {
                assert_ne!(a.name, b.name, "duplicate key");
            }
            let suffix_ok = match a.unit {
                "Pa" => a.name.ends_with("_Pa"),
                "K" => a.name.ends_with("_K"),
                "J/kg" => a.name.ends_with("_J_per_kg"),
                "W" => a.name.ends_with("_W"),
                "kg/s" => a.name.ends_with("_kg_per_s"),
                "W/K" => a.name.ends_with("_W_per_K"),
                "J/(kg K)" => a.name.ends_with("_J_per_kg_K"),
                "kg/kmol" => a.name.ends_with("_kg_per_kmol"),
                _ => true,
            };
            assert!(suffix_ok, "{} does not end in its unit {}", a.name, a.unit);
        }
    }
}
