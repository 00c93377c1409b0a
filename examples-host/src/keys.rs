//! The registry of every JSON key the tool writes, with its SI unit and
//! meaning, and the `keys` subcommand that prints it as Markdown
//! (`examples-host/README-keys.md` is that output; a test keeps them equal).
//!
//! JSON objects are built only from these constants ([`crate::out::Obj`]),
//! so a key cannot be written without being documented. A module that adds
//! a subcommand adds its keys here (to a `keys!` block and its group).

use polytrope::cooler::CoolerResult;
use polytrope::fields::{FieldSpec, QuantityKind, ResultFields, StageInput};
use polytrope::ledger::{Ledger, LedgerStage};
use polytrope::stage::{CompressorResult, PumpResult};
use polytrope::staging::{InterstagePressure, TrainTotals};
use polytrope::steady::SteadyState;

use crate::cli::{CliError, Parsed};

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
    COMMAND_NAME = "command", "string", "Subcommand that produced the document (`demo`, `stage`, `evaluate`).";
    SCENARIO = "scenario", "string", "Says where the data come from: the demo data are an invented scenario, not a real machine; `evaluate` names the train file.";
    CAUTION = "caution", "string", "Safety caution: not a certified safety function; defer to the machine maker's data, local codes and licensed practice.";
    PRECISION = "precision", "string", "Kernel build used: `f32` (the device build) or `f64` (the reference build).";
    SCANS = "scans", "integer", "Number of scans run through the train; results are those of the last scan.";
    NOTES = "notes", "array of strings", "Remarks about the inputs (assumed atmosphere, missing flow, flagged conditions).";
    VALUE = "value", "number or null", "The value, in the SI unit of the key that holds it; `null` when `quality` is `bad`.";
    QUALITY = "quality", "string", "`good`, `uncertain` (usable with care) or `bad` (no usable value).";
    STAGES = "stages", "array of objects", "Per stage, in flow order (demo, evaluate).";
    STAGE = "stage", "integer", "Stage number, 1 = first in flow order.";
    COOLERS = "coolers", "array of objects", "Per cooler, in flow order (demo, evaluate).";
    AFTER_STAGE = "after_stage", "integer", "Number of the stage whose discharge the cooler cools.";
    INTERSTAGE = "interstage", "array of objects", "Per compressor stage except the last: discharge pressure against the equal-ratio optimum.";
    TOTALS = "totals", "object", "Whole-train totals (demo, evaluate).";
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
}

impl Key {
    /// The key of a kernel field (`polytrope::fields`, the one list): its
    /// key, its SI unit (`-` if dimensionless) or the JSON type of a flag,
    /// count or condition, and its meaning.
    pub const fn of(spec: &'static FieldSpec) -> Key {
        let unit = match spec.kind {
            QuantityKind::Flag => "boolean",
            QuantityKind::Count => "integer",
            QuantityKind::Condition => "string",
            _ => spec.unit,
        };
        Key {
            name: spec.key,
            unit,
            meaning: spec.meaning,
        }
    }
}

/// The key of the field `name` of a kernel field list; for constants only
/// (evaluated at compile time: a wrong name fails the build).
#[allow(clippy::panic, clippy::indexing_slicing)]
pub const fn field_key(list: &'static [FieldSpec], name: &str) -> Key {
    let mut i = 0;
    while i < list.len() {
        let a = list[i].name.as_bytes();
        let b = name.as_bytes();
        if a.len() == b.len() {
            let mut j = 0;
            while j < a.len() && a[j] == b[j] {
                j += 1;
            }
            if j == a.len() {
                return Key::of(&list[i]);
            }
        }
        i += 1;
    }
    panic!("no such kernel field")
}

const TOTAL_FIELDS: &[FieldSpec] = <TrainTotals<f64> as ResultFields<f64>>::FIELDS;
/// Number of compressor stages (the kernel's totals field).
pub const STAGE_COUNT: Key = field_key(TOTAL_FIELDS, "compressor_stages");
/// Isothermal work for the overall ratio.
pub const ISOTHERMAL_WORK: Key = field_key(TOTAL_FIELDS, "isothermal_work");
/// One uncooled isentropic stage.
pub const SINGLE_STAGE: Key = field_key(TOTAL_FIELDS, "single_stage_isentropic_work");
/// Ideal staged isentropic work.
pub const IDEAL_STAGED: Key = field_key(TOTAL_FIELDS, "ideal_staged_isentropic_work");
/// Ideal staging saving.
pub const IDEAL_SAVING: Key = field_key(TOTAL_FIELDS, "ideal_staging_saving");
/// Equal-ratio discharge pressure (the kernel's interstage field).
pub const OPTIMUM_P2: Key = field_key(
    <InterstagePressure<f64> as ResultFields<f64>>::FIELDS,
    "optimum",
);

/// The key of one stage input.
pub const fn input(which: StageInput) -> Key {
    Key::of(which.spec())
}

/// Stage inputs shown with each compressor and pump stage.
pub const STAGE_INPUTS: [StageInput; 4] = [
    StageInput::SuctionPressure,
    StageInput::SuctionTemperature,
    StageInput::DischargePressure,
    StageInput::DischargeTemperature,
];
/// Cooler inputs shown with each cooler (after [`GAS_INLET_T`]).
pub const COOLER_INPUTS: [StageInput; 2] = [
    StageInput::CoolerGasOutletTemperature,
    StageInput::CoolantInletTemperature,
];

/// `compressor` or `pump` (the kernel's stage-kind tag).
pub const KIND: Key = Key::of(&polytrope::fields::STAGE_KIND);

keys! { COOLER_INLET:
    GAS_INLET_T = "gas_inlet_temperature_K", "K", "Cooler gas inlet temperature (the stage discharge).";
}

keys! { STAGING_EXTRA:
    STAGE_RATIO = "stage_pressure_ratio", "-", "Pressure ratio of each equal-ratio stage, r^(1/N).";
    IDEAL_STAGED_T2 = "ideal_staged_discharge_temperature_K", "K", "Isentropic discharge temperature of each equal-ratio stage with perfect intercooling.";
}

keys! { LEDGER_DOC:
    LEDGER = "ledger", "object", "Loss ledger of the last scan (demo, `polytrope::ledger`): the train-wide lines below, in W, in the order of attribution, and `stages` (one object per compressor stage with its `stage` number and per-stage lines); the lines add up to `ledger_measured_total_W`.";
}

fn keys_of(specs: &'static [FieldSpec]) -> impl Iterator<Item = Key> + Clone {
    specs.iter().map(Key::of)
}

/// Every key group, for the documentation: the document structure and
/// inputs listed here, the results generated from the kernel's field lists.
pub fn groups() -> Vec<(&'static str, Vec<Key>)> {
    let stage_in = STAGE_INPUTS.iter().map(|w| input(*w));
    let steady = keys_of(<SteadyState<f64> as ResultFields<f64>>::FIELDS);
    vec![
        (
            "Document structure",
            STRUCTURE.iter().copied().chain([KIND]).collect(),
        ),
        (
            "Inputs",
            INPUT
                .iter()
                .copied()
                .chain(STAGE_INPUTS_ALL.iter().take(6).map(Key::of))
                .collect(),
        ),
        (
            "Compressor stage",
            stage_in
                .clone()
                .chain(keys_of(
                    <CompressorResult<f64> as ResultFields<f64>>::FIELDS,
                ))
                .chain(steady.clone())
                .collect(),
        ),
        (
            "Pump stage",
            keys_of(<PumpResult<f64> as ResultFields<f64>>::FIELDS).collect(),
        ),
        (
            "Cooler",
            COOLER_INLET
                .iter()
                .copied()
                .chain(COOLER_INPUTS.iter().map(|w| input(*w)))
                .chain(keys_of(<CoolerResult<f64> as ResultFields<f64>>::FIELDS))
                .collect(),
        ),
        (
            "Train and staging",
            keys_of(<InterstagePressure<f64> as ResultFields<f64>>::FIELDS)
                .chain(keys_of(<TrainTotals<f64> as ResultFields<f64>>::FIELDS))
                .chain(STAGING_EXTRA.iter().copied())
                .collect(),
        ),
        (
            "Loss ledger",
            LEDGER_DOC
                .iter()
                .copied()
                .chain(keys_of(<Ledger<f64, 1> as ResultFields<f64>>::FIELDS))
                .chain(keys_of(<LedgerStage<f64> as ResultFields<f64>>::FIELDS))
                .collect(),
        ),
    ]
}

static STAGE_INPUTS_ALL: [FieldSpec; 11] = polytrope::fields::STAGE_INPUTS;

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
    for (title, keys) in groups() {
        s.push_str(&format!(
            "\n## {title}\n\n| key | unit | meaning |\n|---|---|---|\n"
        ));
        for k in keys {
            s.push_str(&format!("| `{}` | {} | {} |\n", k.name, k.unit, k.meaning));
        }
    }
    s
}

/// Runs the subcommand.
pub fn run(_args: &Parsed) -> Result<String, CliError> {
    Ok(markdown())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_names_are_unique_and_carry_units() {
        // Within a group a key appears once; across groups one key has one unit.
        let groups = groups();
        let all: Vec<&Key> = groups.iter().flat_map(|(_, k)| k.iter()).collect();
        for (_, keys) in &groups {
            for (i, a) in keys.iter().enumerate() {
                for b in keys.iter().skip(i + 1) {
                    assert_ne!(a.name, b.name, "duplicate key");
                }
            }
        }
        for (i, a) in all.iter().enumerate() {
            for b in all.iter().skip(i + 1) {
                if a.name == b.name {
                    assert_eq!(a.unit, b.unit, "{} has two units", a.name);
                }
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
