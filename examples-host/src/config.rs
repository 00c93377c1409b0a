//! The train file: a human-written TOML description of one compressor train
//! (atmosphere, gas, stages with design pressures, coolers, surge map,
//! flow element, steady-state tolerances, plausibility limits and the
//! column mapping for log replay), read with `serde` + `toml`.
//!
//! Every error names the file, the line and the key, and says what would be
//! valid. The kernel validates the configuration once more
//! (`Train::new`, `SurgeLine::new`, `Orifice::new`); its `ConfigError` is
//! translated back into this file's key names ([`kernel_key`]).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use polytrope::cooler::CoolerConfig;
use polytrope::error::Problem;
use polytrope::flow::orifice::{OrificeConfig, TapType};
use polytrope::gas::table::TableGas;
use polytrope::gas::{GasModel, GasSpec, HeatCapacity, IdealGas, PengRobinson, BUILTIN_GASES};
use polytrope::steady::SteadyStateConfig;
use polytrope::train::{StageConfig, StageKind, TrainConfig};
use polytrope::units::PressureAbs;
use polytrope::{ConfigError, Real};
use serde::Deserialize;

use crate::cli::CliError;
use crate::host_gas::HostGas;
use crate::units::{self, did_you_mean};

/// The whole file.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TrainFile {
    /// Name and train-wide settings.
    pub train: TrainSection,
    /// Local atmosphere.
    pub atmosphere: AtmosphereSection,
    /// The compressed gas.
    pub gas: GasSection,
    /// Default coolant.
    #[serde(default)]
    pub coolant: CoolantSection,
    /// Steady-state test tolerances.
    #[serde(default)]
    pub steady_state: SteadySection,
    /// Plausibility limits for readings.
    #[serde(default)]
    pub limits: LimitsSection,
    /// Stages in flow order (`[[stage]]`).
    #[serde(rename = "stage")]
    pub stages: Vec<StageSection>,
    /// Log replay settings.
    #[serde(default)]
    pub replay: ReplaySection,
}

/// `[train]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TrainSection {
    /// Free text.
    pub name: String,
    /// Largest design pressure drop between stages as a fraction of the discharge pressure.
    #[serde(default = "default_drop")]
    pub max_interstage_pressure_drop: f64,
}

fn default_drop() -> f64 {
    0.1
}

/// `[atmosphere]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AtmosphereSection {
    /// Local atmosphere, absolute (`"1013 mbara"`).
    pub pressure: String,
}

/// `[gas]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GasSection {
    /// `ideal` (default), `peng-robinson` or `table`.
    pub model: Option<String>,
    /// Ideal: built-in gas name, or absent for a custom gas.
    pub name: Option<String>,
    /// Ideal, custom gas: molar mass, kg/kmol.
    pub molar_mass_kg_per_kmol: Option<f64>,
    /// Ideal, custom gas: heat-capacity ratio.
    pub heat_capacity_ratio: Option<f64>,
    /// Ideal: `constant-k` (default) or `cp-polynomial` (built-in gases).
    pub heat_capacity: Option<String>,
    /// Ideal: mean compressibility factor used when no reading gives one (default 1).
    pub compressibility: Option<f64>,
    /// Peng–Robinson: mole fraction by component name (`nitrogen = 0.78`).
    pub composition: Option<std::collections::BTreeMap<String, f64>>,
    /// Table: a GERG-2008 table blob (`polytrope-host tables --out`), relative to the train file.
    pub table_file: Option<String>,
}

impl GasSection {
    /// The model name (default `ideal`).
    pub fn model(&self) -> &str {
        self.model.as_deref().unwrap_or("ideal")
    }
    /// The ideal gas's heat-capacity model (default `constant-k`).
    pub fn heat_capacity(&self) -> &str {
        self.heat_capacity.as_deref().unwrap_or("constant-k")
    }
    /// The ideal gas's mean compressibility (default 1).
    pub fn compressibility(&self) -> f64 {
        self.compressibility.unwrap_or(1.0)
    }
}

fn one() -> f64 {
    1.0
}

/// `[coolant]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CoolantSection {
    /// Coolant specific heat, J/(kg K).
    #[serde(default = "water_cp", rename = "specific_heat_J_per_kg_K")]
    pub specific_heat: f64,
}

fn water_cp() -> f64 {
    // Liquid water near 30 degC: 4178 J/(kg K) (Incropera & DeWitt, Table A.6, from memory).
    4180.0
}

impl Default for CoolantSection {
    fn default() -> Self {
        CoolantSection {
            specific_heat: water_cp(),
        }
    }
}

/// `[steady_state]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SteadySection {
    /// Largest discharge-temperature spread over the window, K.
    #[serde(default = "one", rename = "max_temperature_spread_K")]
    pub max_temperature_spread: f64,
    /// Largest relative spread of the pressure ratio.
    #[serde(default = "ratio_spread")]
    pub max_ratio_spread: f64,
    /// Largest relative spread of the mass flow.
    #[serde(default = "flow_spread")]
    pub max_flow_spread: f64,
}

fn ratio_spread() -> f64 {
    0.01
}
fn flow_spread() -> f64 {
    0.02
}

impl Default for SteadySection {
    fn default() -> Self {
        SteadySection {
            max_temperature_spread: 1.0,
            max_ratio_spread: ratio_spread(),
            max_flow_spread: flow_spread(),
        }
    }
}

/// `[limits]`: readings outside these are bad inputs.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LimitsSection {
    /// Lowest plausible absolute pressure.
    #[serde(default = "p_min")]
    pub pressure_min: String,
    /// Highest plausible absolute pressure.
    #[serde(default = "p_max")]
    pub pressure_max: String,
    /// Lowest plausible temperature.
    #[serde(default = "t_min")]
    pub temperature_min: String,
    /// Highest plausible temperature.
    #[serde(default = "t_max")]
    pub temperature_max: String,
    /// Highest plausible mass flow.
    #[serde(default = "m_max")]
    pub mass_flow_max: String,
}

fn p_min() -> String {
    "0.1 bara".into()
}
fn p_max() -> String {
    "1000 bara".into()
}
fn t_min() -> String {
    "-60 degC".into()
}
fn t_max() -> String {
    "300 degC".into()
}
fn m_max() -> String {
    "1000 kg/s".into()
}

impl Default for LimitsSection {
    fn default() -> Self {
        LimitsSection {
            pressure_min: p_min(),
            pressure_max: p_max(),
            temperature_min: t_min(),
            temperature_max: t_max(),
            mass_flow_max: m_max(),
        }
    }
}

/// One `[[stage]]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StageSection {
    /// `compressor` or `pump`.
    pub kind: String,
    /// Design suction pressure.
    pub design_suction: String,
    /// Design discharge pressure.
    pub design_discharge: String,
    /// Pump: liquid density, kg/m³.
    pub density_kg_per_m3: Option<f64>,
    /// Pump: efficiency, (0, 1].
    pub efficiency: Option<f64>,
    /// The cooler after this stage.
    pub cooler: Option<CoolerSection>,
    /// Surge map and control line of this stage.
    pub surge: Option<SurgeSection>,
    /// Orifice plate measuring this stage's flow.
    pub flow_element: Option<FlowElementSection>,
    /// Where each reading of this stage comes from in a log.
    #[serde(default)]
    pub readings: BTreeMap<String, ReadingSource>,
}

/// `[stage.cooler]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CoolerSection {
    /// Coolant specific heat, J/(kg K); default `[coolant]`.
    #[serde(rename = "coolant_specific_heat_J_per_kg_K")]
    pub coolant_specific_heat: Option<f64>,
}

/// `[stage.surge]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SurgeSection {
    /// Suction pressure the map was drawn for.
    pub map_suction_pressure: String,
    /// Suction temperature the map was drawn for.
    pub map_suction_temperature: String,
    /// Molar mass of the map gas, kg/kmol (default: the train gas).
    pub map_molar_mass_kg_per_kmol: Option<f64>,
    /// Suction compressibility of the map gas (default 1).
    #[serde(default = "one")]
    pub map_compressibility: f64,
    /// Polytropic exponent for the head number Y.
    pub polytropic_exponent: f64,
    /// Suction flow element coefficient C in dp = rho (Q/C)², m².
    pub flow_coefficient_m2: f64,
    /// Time to surge reported when not approaching, s.
    #[serde(default = "horizon")]
    pub time_to_surge_horizon_s: f64,
    /// Surge points, one per speed line, rising speed.
    pub points: Vec<SurgePointSection>,
    /// Recycle-valve controller settings (used by `surge-sim`).
    pub control: Option<ControlSection>,
    /// The compression system around the stage (used by `surge-sim --file`).
    pub plant: Option<PlantSection>,
}

/// `[stage.surge.plant]`: what the Greitzer (1976) lumped model of the
/// stage needs beyond its surge map. Every key is required by
/// `surge-sim --file`; a missing one is refused naming it.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlantSection {
    /// The speed line to simulate, rpm (one of the map's points).
    pub speed_rpm: Option<f64>,
    /// Impeller tip diameter, m.
    pub impeller_tip_diameter_m: Option<f64>,
    /// Effective duct length, m.
    pub duct_length_m: Option<f64>,
    /// Duct flow area, m².
    pub duct_area_m2: Option<f64>,
    /// Plenum (discharge) volume, m³.
    pub plenum_volume_m3: Option<f64>,
    /// Pressure rise at zero flow over that at the surge point, -.
    pub shutoff_head_fraction: Option<f64>,
    /// Suction volume flow before the load loss, m³/s.
    pub operating_flow_m3_per_s: Option<f64>,
    /// Recycle valve fully open: suction volume flow at the surge-point pressure rise, m³/s.
    pub recycle_valve_full_flow_m3_per_s: Option<f64>,
    /// Valve dead time, s.
    pub valve_dead_time_s: Option<f64>,
    /// Polytropic efficiency for the recycle power, -.
    pub polytropic_efficiency: Option<f64>,
}

fn horizon() -> f64 {
    60.0
}

/// One surge point.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SurgePointSection {
    /// Speed line, rpm.
    pub speed_rpm: f64,
    /// Actual suction volume flow at surge, m³/s (map conditions).
    pub flow_m3_per_s: f64,
    /// Pressure ratio at surge.
    pub pressure_ratio: f64,
    /// Control margin of this speed line, fraction of the surge flow.
    pub control_margin: f64,
}

/// `[stage.surge.control]`.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ControlSection {
    /// Controller scan period, s.
    pub scan_period_s: f64,
    /// Proportional gain.
    pub gain: f64,
    /// Integral time, s.
    pub integral_time_s: f64,
    /// Valve full stroke time, s.
    pub valve_stroke_time_s: f64,
}

/// `[stage.flow_element]`: an ISO 5167-2 orifice.
#[derive(Clone, Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FlowElementSection {
    /// Pipe internal diameter, mm.
    pub pipe_diameter_mm: f64,
    /// Orifice bore, mm.
    pub bore_diameter_mm: f64,
    /// `corner`, `flange` or `d-and-d/2`.
    pub taps: String,
    /// Dynamic viscosity of the gas, Pa s.
    #[serde(rename = "viscosity_Pa_s")]
    pub viscosity: f64,
}

/// Where a reading comes from: a column name (unit from the header), or a
/// column with its unit.
#[derive(Clone, Debug, Deserialize)]
#[serde(untagged)]
pub enum ReadingSource {
    /// Column name; the unit is in the header (`PI-101 [barg]`).
    Column(String),
    /// Column and unit.
    WithUnit {
        /// Column name.
        column: String,
        /// Unit of the column's values (`barg`, `degC`, `t/h`, ...).
        unit: String,
    },
}

impl ReadingSource {
    /// The column name.
    pub fn column(&self) -> &str {
        match self {
            ReadingSource::Column(c) | ReadingSource::WithUnit { column: c, .. } => c,
        }
    }
    /// The unit, if given here.
    pub fn unit(&self) -> Option<&str> {
        match self {
            ReadingSource::Column(_) => None,
            ReadingSource::WithUnit { unit, .. } => Some(unit),
        }
    }
}

/// `[replay]`.
#[derive(Clone, Debug, Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct ReplaySection {
    /// Name of the timestamp column (seconds, or `YYYY-MM-DD HH:MM:SS`).
    pub time_column: Option<String>,
    /// Rows at the start of the log that form the baseline period for trends.
    pub baseline_rows: Option<usize>,
}

/// The kind of quantity a reading is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ReadingKind {
    /// A pressure (absolute or gauge).
    Pressure,
    /// A temperature.
    Temperature,
    /// A mass or standard volume flow.
    Flow,
    /// A differential pressure (a difference: no a/g marker).
    DifferentialPressure,
    /// A plain number.
    Number,
}

/// Every reading a stage can take, with its kind.
pub const READINGS: &[(&str, ReadingKind)] = &[
    ("suction_pressure", ReadingKind::Pressure),
    ("suction_temperature", ReadingKind::Temperature),
    ("discharge_pressure", ReadingKind::Pressure),
    ("discharge_temperature", ReadingKind::Temperature),
    ("mass_flow", ReadingKind::Flow),
    ("compressibility", ReadingKind::Number),
    ("cooler_gas_outlet_temperature", ReadingKind::Temperature),
    ("cooler_gas_outlet_pressure", ReadingKind::Pressure),
    ("coolant_inlet_temperature", ReadingKind::Temperature),
    ("coolant_outlet_temperature", ReadingKind::Temperature),
    ("coolant_mass_flow", ReadingKind::Flow),
    (
        "flow_differential_pressure",
        ReadingKind::DifferentialPressure,
    ),
    ("recycle_mass_flow", ReadingKind::Flow),
];

/// A reading's kind by name.
pub fn reading_kind(name: &str) -> Option<ReadingKind> {
    READINGS.iter().find(|(n, _)| *n == name).map(|(_, k)| *k)
}

/// An error in a train file, located.
#[derive(Clone, Debug, PartialEq)]
pub struct FileError {
    /// The file.
    pub file: PathBuf,
    /// 1-based line, if found.
    pub line: Option<usize>,
    /// The key, as written in the file (`stage[2].design_suction`).
    pub key: String,
    /// What is wrong and what would be valid.
    pub message: String,
}

impl core::fmt::Display for FileError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "{}", self.file.display())?;
        if let Some(l) = self.line {
            write!(f, ":{l}")?;
        }
        if self.key.is_empty() {
            write!(f, ": {}", self.message)
        } else {
            write!(f, ": {}: {}", self.key, self.message)
        }
    }
}

impl From<FileError> for CliError {
    fn from(e: FileError) -> Self {
        CliError::Input(e.to_string())
    }
}

/// A loaded, checked train file with its text (to locate keys).
#[derive(Clone, Debug)]
pub struct Loaded {
    /// Path as given.
    pub path: PathBuf,
    /// The text.
    pub text: String,
    /// The parsed file.
    pub file: TrainFile,
    /// Local atmosphere, Pa absolute.
    pub atmosphere_pa: f64,
    /// Molar mass of the gas, kg/kmol.
    pub molar_mass: f64,
    /// The gas model chosen in `[gas]`, with its data.
    pub gas_choice: GasChoice,
    /// Design pressures per stage, Pa absolute.
    pub design: Vec<(f64, f64)>,
    /// Plausibility limits in SI: (p_min, p_max, t_min, t_max, m_max).
    pub limits: Limits,
}

/// The gas model of a train file, with what it needs beyond `[gas]`.
#[derive(Clone, Debug)]
pub enum GasChoice {
    /// Ideal gas (`name` or molar mass and k).
    Ideal,
    /// Peng–Robinson; mole fractions in the kernel's component order.
    PengRobinson {
        /// Mole fractions, [`polytrope::gas::components::COMPONENT_NAMES`] order.
        fractions: [f64; crate::host_gas::PR_COMPONENTS],
    },
    /// GERG-2008 property table read from a file.
    Table {
        /// Where it was read from.
        path: PathBuf,
        /// The decoded table (kept for the life of the process).
        table: &'static crate::host_gas::HostTable,
    },
}

/// Plausibility limits in SI.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Limits {
    /// Pa absolute.
    pub pressure: (f64, f64),
    /// K.
    pub temperature: (f64, f64),
    /// kg/s.
    pub mass_flow_max: f64,
}

impl Loaded {
    /// An error at `key` (a path such as `stage[1].cooler.coolant_specific_heat_J_per_kg_K`).
    pub fn error(&self, key: &str, message: impl Into<String>) -> FileError {
        FileError {
            file: self.path.clone(),
            line: locate(&self.text, key),
            key: key.to_string(),
            message: message.into(),
        }
    }

    /// Number of stages.
    pub fn stage_count(&self) -> usize {
        self.file.stages.len()
    }
}

/// Reads and checks a train file (syntax, keys, units, ranges the host can
/// check); the kernel checks the rest when the train is built.
pub fn load(path: &Path) -> Result<Loaded, CliError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| CliError::Input(format!("{}: cannot read: {e}", path.display())))?;
    parse(path, &text)
}

/// Parses train-file text (`path` only names it in messages).
pub fn parse(path: &Path, text: &str) -> Result<Loaded, CliError> {
    let file: TrainFile = toml::from_str(text).map_err(|e| {
        let line = e.span().map(|s| line_of(text, s.start));
        FileError {
            file: path.to_path_buf(),
            line,
            key: String::new(),
            message: explain_toml(e.message()),
        }
    })?;
    let mut loaded = Loaded {
        path: path.to_path_buf(),
        text: text.to_string(),
        file,
        atmosphere_pa: 0.0,
        molar_mass: 0.0,
        gas_choice: GasChoice::Ideal,
        design: Vec::new(),
        limits: Limits {
            pressure: (0.0, 0.0),
            temperature: (0.0, 0.0),
            mass_flow_max: 0.0,
        },
    };
    check(&mut loaded)?;
    Ok(loaded)
}

fn line_of(text: &str, offset: usize) -> usize {
    text.get(..offset.min(text.len()))
        .map_or(0, |t| t.matches('\n').count())
        + 1
}

/// Adds a "did you mean" to serde's unknown-field and unknown-variant messages.
fn explain_toml(message: &str) -> String {
    let m = message.trim();
    if let Some(rest) = m.strip_prefix("unknown field `") {
        if let Some((word, tail)) = rest.split_once('`') {
            let known: Vec<&str> = tail.split('`').skip(1).step_by(2).collect::<Vec<&str>>();
            if let Some(k) = did_you_mean(word, &known) {
                return format!("{m}; did you mean `{k}`?");
            }
        }
    }
    m.to_string()
}

/// Finds the line of a key path such as `stage[2].surge.points[1].pressure_ratio`
/// in human-written TOML (tables and arrays of tables by header, keys by
/// `name =` at the start of a line). `None` if not found.
pub fn locate(text: &str, path: &str) -> Option<usize> {
    let lines: Vec<&str> = text.lines().collect();
    let mut from = 0usize;
    let mut to = lines.len();
    let mut prefix = String::new();
    let segments: Vec<&str> = path.split('.').collect();
    let mut found = None;
    for (si, seg) in segments.iter().enumerate() {
        let (name, index) = match seg.split_once('[') {
            Some((n, i)) => (n, i.trim_end_matches(']').parse::<usize>().ok()),
            None => (*seg, None),
        };
        let full = if prefix.is_empty() {
            name.to_string()
        } else {
            format!("{prefix}.{name}")
        };
        let last = si + 1 == segments.len();
        let header_array = format!("[[{full}]]");
        let header_table = format!("[{full}]");
        let trimmed = |l: &str| l.split('#').next().unwrap_or("").trim().to_string();
        let mut hit = None;
        if let Some(ix) = index {
            // Array of tables: the (ix+1)-th header.
            let mut n = 0;
            for (i, l) in lines.iter().enumerate().take(to).skip(from) {
                if trimmed(l) == header_array {
                    if n == ix {
                        hit = Some(i);
                        break;
                    }
                    n += 1;
                }
            }
            if hit.is_none() {
                // Inline array `name = [ {..}, {..} ]`: the (ix+1)-th `{` line after it.
                if let Some(start) = key_line(&lines, from, to, name) {
                    let mut n = 0;
                    for (i, l) in lines.iter().enumerate().take(to).skip(start) {
                        if l.contains('{') {
                            if n == ix {
                                hit = Some(i);
                                break;
                            }
                            n += 1;
                        }
                    }
                }
            }
            if let Some(h) = hit {
                // The scope ends at the next header of the same array.
                let end = lines
                    .iter()
                    .enumerate()
                    .skip(h + 1)
                    .take(to.saturating_sub(h + 1))
                    .find(|(_, l)| trimmed(l) == header_array)
                    .map_or(to, |(i, _)| i);
                from = h;
                to = end;
            }
        } else if !last {
            for (i, l) in lines.iter().enumerate().take(to).skip(from) {
                if trimmed(l) == header_table {
                    hit = Some(i);
                    break;
                }
            }
            if hit.is_none() {
                hit = key_line(&lines, from, to, name);
            }
            if let Some(h) = hit {
                from = h;
            }
        } else {
            hit = key_line(&lines, from, to, name);
        }
        match hit {
            Some(h) => found = Some(h + 1),
            None => return found,
        }
        prefix = full;
    }
    found
}

fn key_line(lines: &[&str], from: usize, to: usize, name: &str) -> Option<usize> {
    lines
        .iter()
        .enumerate()
        .take(to)
        .skip(from)
        .find(|(_, l)| {
            let t = l.trim_start();
            t.strip_prefix(name)
                .is_some_and(|rest| rest.trim_start().starts_with('='))
                || t.strip_prefix(&format!("\"{name}\""))
                    .is_some_and(|rest| rest.trim_start().starts_with('='))
        })
        .map(|(i, _)| i)
}

/// The largest number of stages the host instantiates (`Train<_, _, N, _>`
/// for N = 1..=MAX_STAGES).
pub const MAX_STAGES: usize = 8;

/// Keys of `[gas]` that apply to each model.
const GAS_KEYS: [(&str, &[&str]); 3] = [
    (
        "ideal",
        &[
            "name",
            "molar_mass_kg_per_kmol",
            "heat_capacity_ratio",
            "heat_capacity",
            "compressibility",
        ],
    ),
    ("peng-robinson", &["composition"]),
    ("table", &["table_file"]),
];

/// Checks `[gas]`: the model, the keys that apply to it, and its data;
/// sets the molar mass and the model choice.
fn check_gas(l: &mut Loaded, g: &GasSection) -> Result<(), FileError> {
    let model = g.model();
    let models: Vec<&str> = GAS_KEYS.iter().map(|(m, _)| *m).collect();
    let Some((_, applies)) = GAS_KEYS.iter().find(|(m, _)| *m == model) else {
        let hint = did_you_mean(model, &models)
            .map(|n| format!("; did you mean '{n}'?"))
            .unwrap_or_default();
        return Err(l.error(
            "gas.model",
            format!("unknown gas model '{model}'; known: ideal, peng-robinson, table{hint}"),
        ));
    };
    let given = [
        ("name", g.name.is_some()),
        ("molar_mass_kg_per_kmol", g.molar_mass_kg_per_kmol.is_some()),
        ("heat_capacity_ratio", g.heat_capacity_ratio.is_some()),
        ("heat_capacity", g.heat_capacity.is_some()),
        ("compressibility", g.compressibility.is_some()),
        ("composition", g.composition.is_some()),
        ("table_file", g.table_file.is_some()),
    ];
    for (key, present) in given {
        if present && !applies.contains(&key) {
            let owner = GAS_KEYS
                .iter()
                .find(|(_, keys)| keys.contains(&key))
                .map_or("another model", |(m, _)| *m);
            return Err(l.error(
                &format!("gas.{key}"),
                format!(
                    "{key} applies to model = \"{owner}\", not to model = \"{model}\" (remove it or change gas.model)"
                ),
            ));
        }
    }
    match model {
        "peng-robinson" => check_peng_robinson(l, g),
        "table" => check_table(l, g),
        _ => check_ideal(l, g),
    }
}

fn check_peng_robinson(l: &mut Loaded, g: &GasSection) -> Result<(), FileError> {
    use crate::host_gas::PR_COMPONENTS;
    use polytrope::gas::components::COMPONENT_NAMES;
    let Some(comp) = &g.composition else {
        return Err(l.error(
            "gas.composition",
            "model = \"peng-robinson\" needs composition = { nitrogen = 0.7812, oxygen = 0.2096, argon = 0.0092 } (mole fractions by component name)",
        ));
    };
    if comp.is_empty() {
        return Err(l.error("gas.composition", "no component given"));
    }
    let mut fractions = [0.0f64; PR_COMPONENTS];
    let mut sum = 0.0;
    for (name, &y) in comp {
        let key = format!("gas.composition.{name}");
        let Some(ix) = COMPONENT_NAMES.iter().position(|n| *n == name.as_str()) else {
            let hint = did_you_mean(name, &COMPONENT_NAMES)
                .map(|n| format!("; did you mean '{n}'?"))
                .unwrap_or_default();
            return Err(l.error(
                &key,
                format!(
                    "unknown component '{name}'{hint}; known: {}",
                    COMPONENT_NAMES.join(", ")
                ),
            ));
        };
        if !(y.is_finite() && (0.0..=1.0).contains(&y)) {
            return Err(l.error(&key, format!("mole fraction {y} is not between 0 and 1")));
        }
        if let Some(f) = fractions.get_mut(ix) {
            *f = y;
        }
        sum += y;
    }
    let tol = polytrope::gas::peng_robinson::FRACTION_SUM_TOLERANCE;
    if (sum - 1.0).abs() > tol {
        return Err(l.error(
            "gas.composition",
            format!("the mole fractions sum to {sum}; they must sum to 1 (within {tol})"),
        ));
    }
    l.gas_choice = GasChoice::PengRobinson { fractions };
    let gas = l.gas::<f64>()?;
    l.molar_mass = polytrope::gas::MOLAR_GAS_CONSTANT * 1e3 / gas.gas_constant();
    Ok(())
}

fn check_table(l: &mut Loaded, g: &GasSection) -> Result<(), FileError> {
    use crate::host_gas::HostTable;
    let Some(name) = &g.table_file else {
        return Err(l.error(
            "gas.table_file",
            "model = \"table\" needs table_file = \"air.bin\" (a blob written by `polytrope-host tables --out`)",
        ));
    };
    let path = l
        .path
        .parent()
        .map_or_else(|| PathBuf::from(name), |dir| dir.join(name));
    let bytes = std::fs::read(&path).map_err(|e| {
        l.error(
            "gas.table_file",
            format!("{}: cannot read: {e}", path.display()),
        )
    })?;
    let mut table = Box::new(HostTable::empty());
    table.replace_from_blob(&bytes).map_err(|e| {
        l.error(
            "gas.table_file",
            format!("{}: not a usable property table: {e}", path.display()),
        )
    })?;
    let table: &'static HostTable = Box::leak(table);
    l.gas_choice = GasChoice::Table { path, table };
    let gas = l.gas::<f64>()?;
    l.molar_mass = polytrope::gas::MOLAR_GAS_CONSTANT * 1e3 / gas.gas_constant();
    Ok(())
}

fn check_ideal(l: &mut Loaded, g: &GasSection) -> Result<(), FileError> {
    match (&g.name, g.molar_mass_kg_per_kmol, g.heat_capacity_ratio) {
        (Some(name), None, None) => {
            let Some(spec) = GasSpec::by_name(name) else {
                let names: Vec<&str> = BUILTIN_GASES.iter().map(|g| g.name).collect();
                let hint = did_you_mean(name, &names)
                    .map(|n| format!("; did you mean '{n}'?"))
                    .unwrap_or_default();
                return Err(l.error(
                    "gas.name",
                    format!(
                        "unknown gas '{name}'; built-in: {}{hint} (or give molar_mass_kg_per_kmol \
                         and heat_capacity_ratio instead of name)",
                        names.join(", ")
                    ),
                ));
            };
            l.molar_mass = spec.molar_mass;
        }
        (None, Some(m), Some(_)) => l.molar_mass = m,
        (Some(_), _, _) => {
            return Err(l.error(
                "gas.name",
                "give either name (a built-in gas) or molar_mass_kg_per_kmol with \
                 heat_capacity_ratio, not both",
            ))
        }
        (None, _, _) => {
            return Err(l.error(
                "gas",
                "give name = \"air\" (a built-in gas) or molar_mass_kg_per_kmol and \
                 heat_capacity_ratio",
            ))
        }
    }
    let models = ["constant-k", "cp-polynomial"];
    if !models.contains(&g.heat_capacity()) {
        let hint = did_you_mean(g.heat_capacity(), &models)
            .map(|n| format!("; did you mean '{n}'?"))
            .unwrap_or_default();
        return Err(l.error(
            "gas.heat_capacity",
            format!(
                "'{}' is not constant-k or cp-polynomial{hint}",
                g.heat_capacity()
            ),
        ));
    }
    if g.heat_capacity() == "cp-polynomial" && g.name.is_none() {
        return Err(l.error(
            "gas.heat_capacity",
            "cp-polynomial needs a built-in gas (name = ...); a custom gas uses constant-k",
        ));
    }
    l.gas_choice = GasChoice::Ideal;
    Ok(())
}

fn check(l: &mut Loaded) -> Result<(), FileError> {
    let f = l.file.clone();
    l.atmosphere_pa =
        units::atmosphere(&f.atmosphere.pressure).map_err(|e| l.error("atmosphere.pressure", e))?;
    // Gas.
    check_gas(l, &f.gas)?;
    // Limits.
    let lim = &f.limits;
    let pabs = |key: &str, t: &str, l: &Loaded| {
        units::pressure(t)
            .map(|p| p.absolute(l.atmosphere_pa))
            .map_err(|e| l.error(key, e))
    };
    let temp = |key: &str, t: &str, l: &Loaded| units::temperature(t).map_err(|e| l.error(key, e));
    l.limits = Limits {
        pressure: (
            pabs("limits.pressure_min", &lim.pressure_min, l)?,
            pabs("limits.pressure_max", &lim.pressure_max, l)?,
        ),
        temperature: (
            temp("limits.temperature_min", &lim.temperature_min, l)?,
            temp("limits.temperature_max", &lim.temperature_max, l)?,
        ),
        mass_flow_max: units::flow(&lim.mass_flow_max)
            .map(|m| m.kg_per_s(l.molar_mass))
            .map_err(|e| l.error("limits.mass_flow_max", e))?,
    };
    if l.limits.pressure.1 <= l.limits.pressure.0 {
        return Err(l.error("limits.pressure_max", "must be above limits.pressure_min"));
    }
    if l.limits.temperature.1 <= l.limits.temperature.0 {
        return Err(l.error(
            "limits.temperature_max",
            "must be above limits.temperature_min",
        ));
    }
    // Stages.
    if f.stages.is_empty() || f.stages.len() > MAX_STAGES {
        return Err(l.error(
            "stage",
            format!(
                "{} [[stage]] tables; this build handles 1 to {MAX_STAGES}",
                f.stages.len()
            ),
        ));
    }
    let mut design = Vec::new();
    for (i, s) in f.stages.iter().enumerate() {
        let key = |k: &str| format!("stage[{i}].{k}");
        match s.kind.as_str() {
            "compressor" => {
                for (k, v) in [
                    ("density_kg_per_m3", s.density_kg_per_m3),
                    ("efficiency", s.efficiency),
                ] {
                    if v.is_some() {
                        return Err(
                            l.error(&key(k), "applies to a pump stage only (kind = \"pump\")")
                        );
                    }
                }
            }
            "pump" => {
                for (k, v) in [
                    ("density_kg_per_m3", s.density_kg_per_m3),
                    ("efficiency", s.efficiency),
                ] {
                    if v.is_none() {
                        return Err(l.error(&format!("stage[{i}]"), format!("a pump needs {k}")));
                    }
                }
            }
            other => {
                let hint = did_you_mean(other, &["compressor", "pump"])
                    .map(|n| format!("; did you mean '{n}'?"))
                    .unwrap_or_default();
                return Err(l.error(
                    &key("kind"),
                    format!("'{other}' is not compressor or pump{hint}"),
                ));
            }
        }
        let p = |k: &str, t: &str| {
            units::pressure(t)
                .map(|p| p.absolute(l.atmosphere_pa))
                .map_err(|e| l.error(&key(k), e))
        };
        design.push((
            p("design_suction", &s.design_suction)?,
            p("design_discharge", &s.design_discharge)?,
        ));
        for (name, src) in &s.readings {
            let Some(kind) = reading_kind(name) else {
                let names: Vec<&str> = READINGS.iter().map(|(n, _)| *n).collect();
                let hint = did_you_mean(name, &names)
                    .map(|n| format!("; did you mean '{n}'?"))
                    .unwrap_or_default();
                return Err(l.error(
                    &key(&format!("readings.{name}")),
                    format!(
                        "unknown reading '{name}'{hint}; known: {}",
                        names.join(", ")
                    ),
                ));
            };
            if let Some(u) = src.unit() {
                check_unit(kind, u).map_err(|e| l.error(&key(&format!("readings.{name}")), e))?;
            }
            if src.column().trim().is_empty() {
                return Err(l.error(
                    &key(&format!("readings.{name}")),
                    "the column name is empty",
                ));
            }
        }
        if let Some(fe) = &s.flow_element {
            tap_type(&fe.taps).map_err(|e| l.error(&key("flow_element.taps"), e))?;
        }
        if let Some(sg) = &s.surge {
            units::pressure(&sg.map_suction_pressure)
                .map_err(|e| l.error(&key("surge.map_suction_pressure"), e))?;
            units::temperature(&sg.map_suction_temperature)
                .map_err(|e| l.error(&key("surge.map_suction_temperature"), e))?;
        }
    }
    l.design = design;
    Ok(())
}

/// Checks that `unit` fits a reading of `kind` (by parsing `1` in it).
pub fn check_unit(kind: ReadingKind, unit: &str) -> Result<(), String> {
    let sample = format!("1{unit}");
    match kind {
        ReadingKind::Pressure => units::pressure(&sample).map(|_| ()),
        ReadingKind::Temperature => units::temperature(&sample).map(|_| ()),
        ReadingKind::Flow => units::flow(&sample).map(|_| ()),
        ReadingKind::DifferentialPressure => differential_pressure(&sample).map(|_| ()),
        ReadingKind::Number => {
            if unit.trim().is_empty() || unit.trim() == "-" {
                Ok(())
            } else {
                Err(format!(
                    "'{unit}': this reading is a plain number without unit"
                ))
            }
        }
    }
}

/// A differential pressure (`Pa`, `kPa`, `mbar`, ...; no a/g marker), in Pa.
pub fn differential_pressure(text: &str) -> Result<f64, String> {
    let t = text.trim();
    for (u, s) in units::PRESSURE_UNITS.iter().rev() {
        if let Some(num) = t.strip_suffix(u) {
            if let Ok(x) = num.trim().parse::<f64>() {
                if x.is_finite() {
                    return Ok(x * s);
                }
            }
        }
    }
    let known: Vec<&str> = units::PRESSURE_UNITS.iter().map(|(u, _)| *u).collect();
    Err(format!(
        "'{text}' is not a differential pressure; known units: {}",
        known.join(", ")
    ))
}

/// Tapping arrangement by name.
pub fn tap_type(name: &str) -> Result<TapType, String> {
    match name {
        "corner" => Ok(TapType::Corner),
        "flange" => Ok(TapType::Flange),
        "d-and-d/2" => Ok(TapType::DAndDHalf),
        other => {
            let known = ["corner", "flange", "d-and-d/2"];
            let hint = did_you_mean(other, &known)
                .map(|n| format!("; did you mean '{n}'?"))
                .unwrap_or_default();
            Err(format!(
                "'{other}' is not a tapping arrangement; known: corner, flange, d-and-d/2{hint}"
            ))
        }
    }
}

impl Loaded {
    /// The ideal gas of an `ideal` model at precision `T`.
    pub fn ideal_gas<T: Real>(&self) -> Result<IdealGas<T>, FileError> {
        let g = &self.file.gas;
        if !matches!(self.gas_choice, GasChoice::Ideal) {
            return Err(self.error(
                "gas.model",
                format!("needs model = \"ideal\" here, not \"{}\"", g.model()),
            ));
        }
        let z = T::of(g.compressibility());
        let built = match &g.name {
            Some(name) => match GasSpec::by_name(name) {
                Some(spec) => IdealGas::from_spec(&spec, g.heat_capacity() == "cp-polynomial", z),
                None => return Err(self.error("gas.name", "unknown gas")),
            },
            None => IdealGas::new(
                T::of(self.molar_mass),
                HeatCapacity::ConstantK(T::of(g.heat_capacity_ratio.unwrap_or(0.0))),
                z,
            ),
        };
        built.map_err(|e| self.kernel_error(&e, None))
    }

    /// The gas model the file chooses, at precision `T`.
    pub fn gas<T: Real>(&self) -> Result<HostGas<T>, FileError> {
        match &self.gas_choice {
            GasChoice::Ideal => self.ideal_gas().map(HostGas::Ideal),
            GasChoice::PengRobinson { fractions } => {
                PengRobinson::new(polytrope::gas::components::COMPONENTS, fractions.map(T::of))
                    .map(HostGas::PengRobinson)
                    .map_err(|e| self.kernel_error(&e, None))
            }
            GasChoice::Table { table, .. } => TableGas::new(table.data())
                .map(HostGas::Table)
                .map_err(|e| self.kernel_error(&e, None)),
        }
    }

    /// One line naming the gas model and where it is valid (printed by
    /// `check`, `evaluate` and `replay` beside the results).
    pub fn gas_description(&self) -> String {
        let g = &self.file.gas;
        match &self.gas_choice {
            GasChoice::Ideal => format!(
                "ideal gas {} (molar mass {:.3} kg/kmol, {}, Z = {}); valid where the gas is far from its critical point: states above reduced pressure/reduced temperature³ = 0.1 are marked uncertain (built-in gases)",
                g.name.as_deref().unwrap_or("custom"),
                self.molar_mass,
                g.heat_capacity(),
                g.compressibility()
            ),
            GasChoice::PengRobinson { fractions } => {
                let parts: Vec<String> = polytrope::gas::components::COMPONENT_NAMES
                    .iter()
                    .zip(fractions.iter())
                    .filter(|(_, y)| **y > 0.0)
                    .map(|(n, y)| format!("{n} {y}"))
                    .collect();
                format!(
                    "Peng–Robinson (Peng & Robinson 1976) for {} (molar mass {:.3} kg/kmol); ideal-gas cp fitted {:.0}–{:.0} K; states near the pseudo-critical point or saturation are marked uncertain, liquid-like states bad",
                    parts.join(", "),
                    self.molar_mass,
                    polytrope::gas::components::CP0_T_MIN,
                    polytrope::gas::components::CP0_T_MAX
                )
            }
            GasChoice::Table { path, table } => {
                let h = table.data().header;
                let label = String::from_utf8_lossy(&h.label)
                    .trim_end_matches('\0')
                    .to_string();
                format!(
                    "GERG-2008 property table {} ('{label}', molar mass {:.3} kg/kmol, {} cells); valid {:.3}–{:.3} bar a and {:.1}–{:.1} K: outside bad, flagged cells (near a critical point or saturation) uncertain",
                    path.display(),
                    self.molar_mass,
                    h.cell_count,
                    h.ln_p_min.exp() / 1e5,
                    h.ln_p_max.exp() / 1e5,
                    h.t_min,
                    h.t_max
                )
            }
        }
    }

    /// The kernel train configuration for `N` stages at precision `T`,
    /// with the file's gas model.
    pub fn train_config<T: Real, const N: usize>(
        &self,
    ) -> Result<TrainConfig<T, HostGas<T>, N>, FileError> {
        let gas = self.gas::<T>()?;
        self.train_config_with(gas)
    }

    /// The kernel train configuration for `N` stages with the gas `gas`.
    pub fn train_config_with<T: Real, G, const N: usize>(
        &self,
        gas: G,
    ) -> Result<TrainConfig<T, G, N>, FileError> {
        if self.stage_count() != N {
            return Err(self.error("stage", format!("expected {N} stages")));
        }
        let default_cp = self.file.coolant.specific_heat;
        let stages = core::array::from_fn(|i| {
            let s = self.file.stages.get(i);
            let (p1, p2) = self.design.get(i).copied().unwrap_or((0.0, 0.0));
            let kind = match s {
                Some(s) if s.kind == "pump" => StageKind::Pump {
                    density: T::of(s.density_kg_per_m3.unwrap_or(0.0)),
                    efficiency: T::of(s.efficiency.unwrap_or(0.0)),
                },
                _ => StageKind::Compressor,
            };
            StageConfig {
                kind,
                design_suction_pressure: PressureAbs::from_pa(T::of(p1)),
                design_discharge_pressure: PressureAbs::from_pa(T::of(p2)),
                cooler: s.and_then(|s| s.cooler.as_ref()).map(|c| CoolerConfig {
                    coolant_cp: T::of(c.coolant_specific_heat.unwrap_or(default_cp)),
                }),
            }
        });
        let st = &self.file.steady_state;
        Ok(TrainConfig {
            gas,
            stages,
            max_interstage_pressure_drop: T::of(self.file.train.max_interstage_pressure_drop),
            steady_state: SteadyStateConfig {
                max_temperature_spread: T::of(st.max_temperature_spread),
                max_ratio_spread: T::of(st.max_ratio_spread),
                max_flow_spread: T::of(st.max_flow_spread),
            },
        })
    }

    /// The orifice of stage `i`, if configured.
    pub fn orifice_config<T: Real>(&self, i: usize) -> Option<OrificeConfig<T>> {
        let s = self.file.stages.get(i)?;
        let fe = s.flow_element.as_ref()?;
        let k = match (&self.gas_choice, &self.file.gas.name) {
            (GasChoice::Ideal, Some(n)) => GasSpec::by_name(n).map_or(1.4, |g| g.k),
            (GasChoice::Ideal, None) => self.file.gas.heat_capacity_ratio.unwrap_or(1.4),
            // A real-gas model: the isentropic exponent at the design
            // suction pressure and 20 degC (ISO 5167 takes one for the
            // expansibility factor).
            _ => {
                let p = self.design.get(i).map_or(1.0e5, |d| d.0);
                self.gas::<f64>()
                    .map_or(1.4, |g| g.path(p, 293.15, p, 293.15, None).k)
            }
        };
        Some(OrificeConfig {
            pipe_diameter: T::of(fe.pipe_diameter_mm / 1e3),
            bore_diameter: T::of(fe.bore_diameter_mm / 1e3),
            taps: tap_type(&fe.taps).unwrap_or(TapType::Flange),
            isentropic_exponent: T::of(k),
            viscosity: T::of(fe.viscosity),
            gas_constant: T::of(polytrope::gas::MOLAR_GAS_CONSTANT * 1e3 / self.molar_mass),
        })
    }

    /// Translates a kernel configuration error into this file's key and a
    /// message (`stage` gives the stage for surge and flow-element errors).
    pub fn kernel_error(&self, e: &ConfigError, stage: Option<usize>) -> FileError {
        let (key, why) = kernel_key(self, e, stage);
        self.error(&key, format!("{why} (refused by the kernel)"))
    }
}

/// The file key for a kernel error (`field` path + `index`, see
/// `polytrope::error::ConfigError`), and what is wrong in the file's terms.
pub fn kernel_key(l: &Loaded, e: &ConfigError, stage: Option<usize>) -> (String, String) {
    let (field, index) = kernel_path(e);
    (file_key(l, field, index, stage), problem_text(l, e, stage))
}

/// The train-file key of a kernel field path.
fn file_key(l: &Loaded, field: &str, index: Option<usize>, stage: Option<usize>) -> String {
    let i = index.or(stage).unwrap_or(0);
    let st = |k: &str| format!("stage[{i}].{k}");
    let sg = |k: &str| format!("stage[{}].surge.{k}", stage.unwrap_or(0));
    let fe = |k: &str| format!("stage[{}].flow_element.{k}", stage.unwrap_or(0));
    let custom = l.file.gas.name.is_none();
    match field {
        f if f.starts_with("gas.composition") => "gas.composition".into(),
        f if f.starts_with("table") => "gas.table_file".into(),
        "gas.molar_mass" if custom => "gas.molar_mass_kg_per_kmol".into(),
        "gas.molar_mass" => "gas.name".into(),
        "gas.k" if custom => "gas.heat_capacity_ratio".into(),
        "gas.k" => "gas.name".into(),
        f if f.starts_with("gas.cp_polynomial") => "gas.heat_capacity".into(),
        "gas.compressibility" => "gas.compressibility".into(),
        "stages.design_suction_pressure" => st("design_suction"),
        "stages.design_discharge_pressure" => st("design_discharge"),
        "stages.pump.density" => st("density_kg_per_m3"),
        "stages.pump.efficiency" => st("efficiency"),
        "stages.kind" => st("kind"),
        "stages.cooler.coolant_cp" => {
            if l.file
                .stages
                .get(i)
                .and_then(|s| s.cooler.as_ref())
                .is_some_and(|c| c.coolant_specific_heat.is_some())
            {
                st("cooler.coolant_specific_heat_J_per_kg_K")
            } else {
                "coolant.specific_heat_J_per_kg_K".into()
            }
        }
        "stages" => "stage".into(),
        "max_interstage_pressure_drop" => "train.max_interstage_pressure_drop".into(),
        "steady_state.max_temperature_spread" => "steady_state.max_temperature_spread_K".into(),
        "steady_state.max_ratio_spread" => "steady_state.max_ratio_spread".into(),
        "steady_state.max_flow_spread" => "steady_state.max_flow_spread".into(),
        "surge_line.points" => match index {
            Some(j) => format!("stage[{}].surge.points[{j}]", stage.unwrap_or(0)),
            None => sg("points"),
        },
        "surge_line.map.suction_pressure" => sg("map_suction_pressure"),
        "surge_line.map.suction_temperature" => sg("map_suction_temperature"),
        "surge_line.map.molar_mass" => sg("map_molar_mass_kg_per_kmol"),
        "surge_line.map.compressibility" => sg("map_compressibility"),
        "surge_line.polytropic_exponent" => sg("polytropic_exponent"),
        "surge_line.flow_coefficient" => sg("flow_coefficient_m2"),
        "surge_monitor.time_to_surge_horizon" => sg("time_to_surge_horizon_s"),
        "orifice.pipe_diameter" => fe("pipe_diameter_mm"),
        "orifice.bore_diameter" => fe("bore_diameter_mm"),
        "orifice.viscosity" => fe("viscosity_Pa_s"),
        "orifice.isentropic_exponent" | "orifice.gas_constant" => "gas".into(),
        // Not a setting of the file (the host sets it): name the nearest section.
        _ => match stage {
            Some(s) => format!("stage[{s}]"),
            None => "train".into(),
        },
    }
}

/// The kernel's field path and index of an error.
pub fn kernel_path(e: &ConfigError) -> (&'static str, Option<usize>) {
    (e.field, e.index.map(usize::from))
}

/// What is wrong, in the file's terms (kernel ranges are in SI units).
fn problem_text(l: &Loaded, e: &ConfigError, stage: Option<usize>) -> String {
    let other = |f: &str| {
        if f.contains('.') {
            format!("`{}`", file_key(l, f, kernel_path(e).1, stage))
        } else {
            f.to_string()
        }
    };
    match e.problem {
        Problem::NotFinite => "must be a finite number".into(),
        Problem::OutOfRange { min, max } => {
            if max.is_infinite() {
                format!("must be above {min} (in SI units: Pa, K, kg/kmol, ...)")
            } else {
                format!("must lie in [{min}, {max}]")
            }
        }
        Problem::NotAbove { other: o } => format!("must be above {}", other(o)),
        Problem::NotIncreasing => {
            "must rise above the previous point (in speed, head number and flow number)".into()
        }
        Problem::Count { min, max } => format!("needs {min} to {max} entries"),
        Problem::Inconsistent { with } => format!("conflicts with {}", other(with)),
        Problem::Unknown => "is not known".into(),
        _ => format!("is refused ({e})"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TEXT: &str = r#"
[train]
name = "t"

[atmosphere]
pressure = "1013 mbara"

[gas]
name = "air"

[[stage]]
kind = "compressor"
design_suction = "1 bara"
design_discharge = "3 bara"

[[stage]]
kind = "compressor"
design_suction = "2.9 bara"
design_discharge = "9 bara"
[stage.surge]
points = [
  { speed_rpm = 1 },
  { speed_rpm = 2 },
]
"#;

    #[test]
    fn locates_keys() {
        assert_eq!(locate(TEXT, "atmosphere.pressure"), Some(6));
        assert_eq!(locate(TEXT, "stage[0].design_suction"), Some(13));
        assert_eq!(locate(TEXT, "stage[1].design_suction"), Some(18));
        assert_eq!(locate(TEXT, "stage[1].surge.points[1]"), Some(23));
        assert_eq!(locate(TEXT, "gas.name"), Some(9));
    }

    #[test]
    fn did_you_mean_for_unknown_keys() {
        let m = explain_toml("unknown field `design_sucton`, expected one of `kind`, `design_suction`, `design_discharge`");
        assert!(m.contains("did you mean `design_suction`"), "{m}");
    }
}
