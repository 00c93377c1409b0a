//! The command line, on `clap` (derive): one struct per subcommand.
//! The older subcommands (`demo`, `stage`, `surge-sim`, `keys`) read their
//! values through [`Parsed`], a bag filled from their clap structs, so their
//! unit parsing and messages stay in one place.

use clap::{Args, Parser, Subcommand};
use polytrope::ConfigError;

/// Why the tool stopped.
#[derive(Debug, Clone, PartialEq)]
pub enum CliError {
    /// Bad command line (unknown command or option, missing value): exit 2.
    Usage(String),
    /// A value that cannot be used (bad number, unit, unknown gas): exit 1.
    Input(String),
    /// The kernel rejected the configuration: exit 1.
    Config(ConfigError),
}

impl CliError {
    /// Process exit code.
    pub fn exit_code(&self) -> u8 {
        match self {
            CliError::Usage(_) => 2,
            CliError::Input(_) | CliError::Config(_) => 1,
        }
    }
}

impl core::fmt::Display for CliError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            CliError::Usage(m) | CliError::Input(m) => f.write_str(m),
            CliError::Config(e) => write!(f, "configuration rejected by the kernel: {e}"),
        }
    }
}

impl From<ConfigError> for CliError {
    fn from(e: ConfigError) -> Self {
        CliError::Config(e)
    }
}

/// Parsed options of one subcommand.
#[derive(Debug, Default)]
pub struct Parsed {
    given: Vec<(&'static str, Option<String>)>,
}

impl Parsed {
    /// Records option `name` with its value (`None`: not given).
    pub(crate) fn opt(mut self, name: &'static str, value: &Option<String>) -> Parsed {
        if let Some(v) = value {
            self.given.push((name, Some(v.clone())));
        }
        self
    }
    /// Records flag `name` if set.
    fn flag(mut self, name: &'static str, set: bool) -> Parsed {
        if set {
            self.given.push((name, None));
        }
        self
    }
}

impl Parsed {
    /// The value of option `name`, if given.
    pub fn get(&self, name: &str) -> Option<&str> {
        self.given
            .iter()
            .find(|(n, _)| *n == name)
            .and_then(|(_, v)| v.as_deref())
    }
    /// Whether flag or option `name` was given.
    pub fn has(&self, name: &str) -> bool {
        self.given.iter().any(|(n, _)| *n == name)
    }
}

/// Which kernel build to run.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Precision {
    /// The f32 device build.
    F32,
    /// The f64 reference build.
    F64,
}

impl Precision {
    /// From `--precision f32|f64`, with a default.
    pub fn from_option(text: Option<&str>, default: Precision) -> Result<Precision, CliError> {
        match text {
            None => Ok(default),
            Some("f32") => Ok(Precision::F32),
            Some("f64") => Ok(Precision::F64),
            Some(other) => Err(CliError::Usage(format!(
                "--precision: '{other}' is not f32 or f64"
            ))),
        }
    }
    /// `f32` or `f64`.
    pub fn word(self) -> &'static str {
        match self {
            Precision::F32 => "f32",
            Precision::F64 => "f64",
        }
    }
}

/// Parses a whole number in `lo..=hi`, naming the option in the error.
pub fn count(option: &str, text: &str, lo: u32, hi: u32) -> Result<u32, CliError> {
    match text.trim().parse::<u32>() {
        Ok(n) if (lo..=hi).contains(&n) => Ok(n),
        _ => Err(CliError::Input(format!(
            "--{option}: '{text}' is not a whole number from {lo} to {hi}"
        ))),
    }
}

/// `polytrope-host`: compressor-train calculations with the polytrope kernel.
///
/// Caution: not a certified safety function. Machine limits come from the
/// machine maker's data; follow local codes and licensed engineering practice.
#[derive(Debug, Parser)]
#[command(name = "polytrope-host", version, about, long_about = None, subcommand_required = true, arg_required_else_help = false)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Cmd,
}

/// Every subcommand.
#[derive(Debug, Subcommand)]
pub enum Cmd {
    /// Run the invented demo train (4 intercooled CO2 compressor stages + a dense-phase pump).
    Demo(DemoArgs),
    /// Single-point stage calculator (heads, efficiencies, power; optional staging comparison).
    Stage(StageArgs),
    /// Closed-loop surge simulation (Greitzer model): CSV trajectory or scan-period sweep.
    SurgeSim(SurgeSimArgs),
    /// Print the Markdown reference of every JSON key (units and meaning).
    Keys,
    /// Write a commented starter train file (TOML) for N stages, or the demo train.
    NewTrain(crate::starter::NewTrainArgs),
    /// Check a train file and print what follows from it (optimum interstage pressures, surge and control lines).
    Check(crate::check::CheckArgs),
    /// Evaluate one set of readings for the whole train in a train file.
    Evaluate(crate::evaluate::EvaluateArgs),
    /// Replay a CSV log through the f32 device and f64 reference builds: results CSV, summary, plots.
    Replay(crate::replay::ReplayArgs),
    /// Rating: predict discharge temperature, heads and power from an assumed efficiency.
    Rate(crate::rating::RateArgs),
    /// ISO 5167-2 orifice-plate mass flow as a desk calculation.
    Orifice(crate::orifice_cmd::OrificeArgs),
    /// Write the device configuration blob of a train file (versioned, checksummed).
    Blob(crate::blob::BlobArgs),
    /// Modbus TCP server on 127.0.0.1 serving the register image of a live demo run (invented scenario).
    Gateway(crate::gateway::GatewayArgs),
    /// The gateway's register map, Markdown (default) or --csv.
    RegisterMap(crate::gateway::RegisterMapArgs),
    /// Write a GERG-2008 property table (blob + Rust source) for a gas and envelope.
    Tables(crate::tables::TablesArgs),
}

/// Options of `demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Scans to run before reporting the last one (default 20, 1..=1000000).
    #[arg(long, value_name = "N")]
    scans: Option<String>,
    /// Kernel build: f32 device build (default) or f64 reference build.
    #[arg(long, value_name = "f32|f64")]
    precision: Option<String>,
    /// Print JSON (SI units in the keys, quality with every value) instead of tables.
    #[arg(long)]
    json: bool,
    /// Also write the demo plots (PNG and SVG) into this directory.
    #[arg(long, value_name = "DIR")]
    pub plots: Option<std::path::PathBuf>,
    /// Unit system of the tables and plots: si, bar-degc or us-field (JSON keys stay SI).
    #[arg(long, value_name = "SYSTEM")]
    pub units: Option<String>,
}

impl DemoArgs {
    /// As the demo module reads them.
    pub fn parsed(&self) -> Parsed {
        Parsed::default()
            .opt("scans", &self.scans)
            .opt("precision", &self.precision)
            .flag("json", self.json)
    }
}

/// Options of `stage`.
#[derive(Debug, Args)]
pub struct StageArgs {
    /// Built-in gas: air, nitrogen, methane, ethane, carbon-dioxide, hydrogen, lean-natural-gas.
    #[arg(long, value_name = "NAME")]
    gas: Option<String>,
    /// Use the built-in gas's ideal-gas cp(T) polynomial instead of constant k.
    #[arg(long)]
    cp_poly: bool,
    /// Custom gas: heat-capacity ratio (with --molar-mass, instead of --gas).
    #[arg(long, value_name = "K")]
    k: Option<String>,
    /// Custom gas: molar mass in kg/kmol.
    #[arg(long, value_name = "M")]
    molar_mass: Option<String>,
    /// Mean compressibility factor (default 1).
    #[arg(long, value_name = "Z")]
    z: Option<String>,
    /// Suction pressure with unit and a/g: 100kPaa, 1.0bara, 4.5barg, 14.7psia, 1013mbara.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    p1: Option<String>,
    /// Discharge pressure, same syntax.
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    p2: Option<String>,
    /// Local atmosphere for gauge inputs, absolute (default 101.325kPaa, noted).
    #[arg(long, value_name = "P", allow_hyphen_values = true)]
    atm: Option<String>,
    /// Suction temperature: 300K, 26.85degC, 26.85C or 80degF.
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    t1: Option<String>,
    /// Measured discharge temperature (optional; needed for actual work and efficiencies).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    t2: Option<String>,
    /// Mass flow (optional): 2.5kg/s, 9000kg/h or 32t/h.
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    flow: Option<String>,
    /// Compare with N equal-ratio intercooled stages (1..=20).
    #[arg(long, value_name = "N")]
    stages: Option<String>,
    /// Kernel build: f64 reference build (default) or f32 device build.
    #[arg(long, value_name = "f32|f64")]
    precision: Option<String>,
    /// Print JSON (SI units in the keys, quality with every value).
    #[arg(long)]
    json: bool,
    /// Unit system of the tables: si, bar-degc or us-field (JSON keys stay SI).
    #[arg(long, value_name = "SYSTEM")]
    pub units: Option<String>,
}

impl StageArgs {
    /// As the stage module reads them.
    pub fn parsed(&self) -> Parsed {
        Parsed::default()
            .opt("gas", &self.gas)
            .flag("cp-poly", self.cp_poly)
            .opt("k", &self.k)
            .opt("molar-mass", &self.molar_mass)
            .opt("z", &self.z)
            .opt("p1", &self.p1)
            .opt("p2", &self.p2)
            .opt("atm", &self.atm)
            .opt("t1", &self.t1)
            .opt("t2", &self.t2)
            .opt("flow", &self.flow)
            .opt("stages", &self.stages)
            .opt("precision", &self.precision)
            .flag("json", self.json)
    }
}

/// Options of `surge-sim`.
#[derive(Debug, Args)]
pub struct SurgeSimArgs {
    /// Hold the recycle valve closed (shows the surge cycles).
    #[arg(long)]
    pub unprotected: bool,
    /// Controller scan period in ms, 1 to 500 (default 20).
    #[arg(long, value_name = "MS", conflicts_with = "sweep")]
    pub scan_ms: Option<String>,
    /// Print every Nth controller scan (default 1).
    #[arg(long, value_name = "N", conflicts_with = "sweep")]
    pub every: Option<String>,
    /// Add the stated realistic measurement noise to every signal (seeded).
    #[arg(long, conflicts_with = "sweep")]
    pub noise: bool,
    /// Print the minimum margin and surge cycles for scan periods 1 to 100 ms, without and
    /// with noise, and whether each run surged.
    #[arg(long, conflicts_with = "unprotected")]
    pub sweep: bool,
    /// Take the recycle controller (gain, integral time, scan period, valve stroke time)
    /// from this train file's `[stage.surge.control]`; the blower model stays the invented one.
    #[arg(long, value_name = "TRAIN.toml")]
    pub file: Option<std::path::PathBuf>,
}

impl SurgeSimArgs {
    /// As the surge-sim module reads them.
    pub fn parsed(&self) -> Parsed {
        Parsed::default()
            .flag("unprotected", self.unprotected)
            .opt("scan-ms", &self.scan_ms)
            .opt("every", &self.every)
            .flag("sweep", self.sweep)
            .flag("noise", self.noise)
            .opt("file", &self.file.as_ref().map(|f| f.display().to_string()))
    }
}
