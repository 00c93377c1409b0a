//! `evaluate`: one set of readings for the whole train of a train file,
//! given as options (`--reading s1.suction_pressure=1.0bara`) or as a
//! one-row CSV in the log format; printed as the same tables and JSON as
//! `demo`.

use std::path::PathBuf;

use clap::Args;
use polytrope::Real;

use crate::cli::{CliError, Precision};
use crate::config::{self, Loaded, ReadingKind, READINGS};
use crate::replay::Mapping;
use crate::train_any::{self, Cell, Row, StagesJob, READING_COUNT};
use crate::units;

/// Options of `evaluate`.
#[derive(Debug, Args)]
pub struct EvaluateArgs {
    /// The train file (TOML).
    pub file: PathBuf,
    /// One reading: `sN.NAME=VALUE` with its unit, e.g. `s1.suction_pressure=1.0bara`,
    /// `s2.discharge_temperature=145degC`, `s1.mass_flow=32t/h` (repeat for each).
    #[arg(long = "reading", short = 'r', value_name = "sN.NAME=VALUE")]
    pub readings: Vec<String>,
    /// A CSV file whose first data row holds the readings, with the log's column mapping.
    #[arg(long, value_name = "CSV", conflicts_with = "readings")]
    pub row: Option<PathBuf>,
    /// Feed the same readings this many scans (fills the steady-state window at 8).
    #[arg(long, default_value_t = 1, value_parser = clap::value_parser!(u32).range(1..=10000))]
    pub scans: u32,
    /// Kernel build.
    #[arg(long, value_enum, default_value_t = Precision::F32)]
    pub precision: Precision,
    /// Print JSON instead of tables.
    #[arg(long)]
    pub json: bool,
    /// Unit system of the tables: si, bar-degc or us-field (JSON keys stay SI).
    #[arg(long, value_name = "SYSTEM")]
    pub units: Option<String>,
}

fn reading(l: &Loaded, text: &str) -> Result<(usize, usize, Cell), CliError> {
    let bad = |m: String| CliError::Input(format!("--reading '{text}': {m}"));
    let (key, value) = text
        .split_once('=')
        .ok_or_else(|| bad("write sN.NAME=VALUE, e.g. s1.suction_pressure=1.0bara".into()))?;
    let (stage, name) = key
        .trim()
        .split_once('.')
        .ok_or_else(|| bad("the name starts with the stage, e.g. s1.".into()))?;
    let n: usize = stage
        .strip_prefix('s')
        .and_then(|d| d.parse().ok())
        .filter(|n| (1..=l.stage_count()).contains(n))
        .ok_or_else(|| bad(format!("'{stage}' is not s1 to s{}", l.stage_count())))?;
    let names: Vec<&str> = READINGS.iter().map(|(n, _)| *n).collect();
    let Some(ri) = READINGS.iter().position(|(r, _)| *r == name) else {
        let hint = units::did_you_mean(name, &names)
            .map(|n| format!("; did you mean '{n}'?"))
            .unwrap_or_default();
        return Err(bad(format!(
            "unknown reading '{name}'{hint}; known: {}",
            names.join(", ")
        )));
    };
    let kind = READINGS.get(ri).map_or(ReadingKind::Number, |r| r.1);
    let v = value.trim();
    let cell = if v.is_empty() {
        Cell::Bad
    } else {
        let si = match kind {
            ReadingKind::Pressure => units::pressure(v).map(|p| p.absolute(l.atmosphere_pa)),
            ReadingKind::Temperature => units::temperature(v),
            ReadingKind::Flow => units::flow(v).map(|f| f.kg_per_s(l.molar_mass)),
            ReadingKind::DifferentialPressure => config::differential_pressure(v),
            ReadingKind::Number => units::number(v),
        }
        .map_err(bad)?;
        Cell::Value(si)
    };
    Ok((n - 1, ri, cell))
}

fn row_from_file(l: &Loaded, path: &PathBuf) -> Result<Row, CliError> {
    let mut rdr = csv::ReaderBuilder::new()
        .flexible(true)
        .from_path(path)
        .map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?;
    let header: Vec<String> = rdr
        .headers()
        .map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?
        .iter()
        .map(str::to_string)
        .collect();
    let hrefs: Vec<&str> = header.iter().map(String::as_str).collect();
    let mapping = Mapping::new(l, &hrefs, path)?;
    let mut rec = csv::StringRecord::new();
    if !rdr
        .read_record(&mut rec)
        .map_err(|e| CliError::Input(format!("{}: {e}", path.display())))?
    {
        return Err(CliError::Input(format!("{}: no data row", path.display())));
    }
    let fields: Vec<&str> = rec.iter().collect();
    let (_, row) = mapping
        .row(&fields, &l.limits)
        .map_err(|e| CliError::Input(format!("{}:2: malformed row: {e}", path.display())))?;
    Ok(row)
}

struct Job<'a> {
    l: &'a Loaded,
    row: &'a Row,
    a: &'a EvaluateArgs,
}

impl StagesJob for Job<'_> {
    type Out = String;
    fn run<const N: usize>(self) -> Result<String, CliError> {
        match self.a.precision {
            Precision::F32 => report::<f32, N>(self.l, self.row, self.a),
            Precision::F64 => report::<f64, N>(self.l, self.row, self.a),
        }
    }
}

fn report<T: Real, const N: usize>(
    l: &Loaded,
    row: &Row,
    a: &EvaluateArgs,
) -> Result<String, CliError> {
    let mut lane = crate::replay::Lane::<T, N>::new(l, 1.0)?;
    let scan = lane.scan(l, row);
    for _ in 0..a.scans {
        lane.step(l, row);
    }
    let snap = lane.train.snapshot();
    let parts = crate::demo::split(&scan.stages, snap);
    let scenario = format!(
        "Train file {}: {}. Readings as given; unmapped readings are bad inputs.\nGas model: {}. Every result below comes from this model; its row 'Gas model' gives the validity per stage (in-range, or why uncertain or bad), and a value's quality mark includes it.",
        a.file.display(),
        l.file.train.name,
        l.gas_description()
    );
    let head = ("evaluate", scenario.as_str());
    if a.json {
        Ok(crate::demo::to_json(head, a.scans, a.precision, snap, &parts).to_text())
    } else {
        Ok(crate::demo::to_text(
            head,
            a.scans,
            a.precision,
            snap,
            &parts,
        ))
    }
}

/// Runs `evaluate`.
pub fn run(a: &EvaluateArgs) -> Result<String, CliError> {
    let l = config::load(&a.file)?;
    let row = match &a.row {
        Some(path) => row_from_file(&l, path)?,
        None => {
            if a.readings.is_empty() {
                return Err(CliError::Usage(
                    "give the readings with --reading sN.NAME=VALUE (repeat) or --row FILE.csv"
                        .into(),
                ));
            }
            let mut row: Row = vec![[Cell::Unmapped; READING_COUNT]; l.stage_count()];
            for r in &a.readings {
                let (s, i, c) = reading(&l, r)?;
                if let Some(cell) = row.get_mut(s).and_then(|x| x.get_mut(i)) {
                    *cell = c;
                }
            }
            row
        }
    };
    train_any::with_stages(
        l.stage_count(),
        Job {
            l: &l,
            row: &row,
            a,
        },
    )
}
