//! `replay`: runs a CSV log (a timestamp and one column per channel) through
//! the kernel, f32 device build and f64 reference build side by side, and
//! writes a results CSV (SI unit in every column name), a summary (worst
//! surge margin, time below the control line, efficiency and approach
//! trends against a baseline period, events) and, on request, plots.
//!
//! Blank or non-numeric cells, and values outside the train file's
//! `[limits]`, are bad inputs (their results go bad or uncertain, never a
//! crash). A malformed row (wrong number of fields, unreadable or
//! non-advancing time) is reported with its line number and skipped, or
//! stops the replay with `--on-malformed stop`; rows already written stay
//! written.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::time::Instant;

use clap::{Args, ValueEnum};
use polytrope::control::recycle_power::recycle_power;
use polytrope::fields::{FieldSpec, FieldValue, Group, ResultFields};
use polytrope::flow::orifice::OrificeInputs;
use polytrope::flow::Orifice;
use polytrope::ledger::{evaluate_ledger_into, Cause, Ledger, LedgerConfig};
use polytrope::staging::InterstagePressure;
use polytrope::train::Snapshot;
use polytrope::{Measured, Quality, Real};

use crate::cli::CliError;
use crate::config::{self, Loaded, ReadingKind, READINGS};
use crate::out;
use crate::surgemap::{self, Monitor};
use crate::train_any::{self, ix, Cell, HostTrain, Row, StagesJob, READING_COUNT};
use crate::unit_system::{self, Dimension};
use crate::units::{self, did_you_mean, sig};

/// What to do with a malformed row.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum OnMalformed {
    /// Report its line number and go on.
    Skip,
    /// Report it and stop (the rows before it stay written).
    Stop,
}

/// Options of `replay`.
#[derive(Debug, Args)]
pub struct ReplayArgs {
    /// The train file (TOML) with the column mapping (`[stage.readings]`).
    pub file: PathBuf,
    /// The log: CSV with a header row; units in the train file or the header (`PI-101 [barg]`).
    pub log: PathBuf,
    /// Results CSV to write (default: the log's name with `.results.csv`).
    #[arg(long, short, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Malformed rows: skip them (reported with line numbers) or stop.
    #[arg(long, value_enum, default_value_t = OnMalformed::Skip)]
    pub on_malformed: OnMalformed,
    /// Rows forming the baseline period for trends (default: `[replay] baseline_rows`, else 10 %).
    #[arg(long, value_name = "N")]
    pub baseline_rows: Option<usize>,
    /// Write the plots (PNG and SVG) into this directory.
    #[arg(long, value_name = "DIR")]
    pub plots: Option<PathBuf>,
    /// Print the summary as JSON.
    #[arg(long)]
    pub json: bool,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Unit system of the results CSV column names and values, the summary
    /// and the plots: si (default for the CSV), bar-degc or us-field.
    #[arg(long, value_name = "SYSTEM")]
    pub units: Option<String>,
    /// Only these result keys in the results CSV, comma-separated (e.g.
    /// `polytropic_efficiency,gas_power_W,surge_margin`); all by default.
    #[arg(long, value_name = "KEYS", value_delimiter = ',')]
    pub fields: Vec<String>,
}

/// How one column's text becomes an SI value: `a + b * x`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Conv {
    a: f64,
    b: f64,
}

/// One mapped column.
#[derive(Clone, Debug)]
pub struct Source {
    /// Stage index.
    pub stage: usize,
    /// Reading index in [`READINGS`].
    pub reading: usize,
    /// Column index in the log.
    pub column: usize,
    /// Header text.
    pub header: String,
    conv: Conv,
    kind: ReadingKind,
}

/// The log's columns mapped onto the train's readings.
#[derive(Clone, Debug)]
pub struct Mapping {
    /// Mapped readings.
    pub sources: Vec<Source>,
    /// Timestamp column.
    pub time: Option<usize>,
    /// Number of fields a row must have.
    pub width: usize,
    stages: usize,
}

/// Splits a header cell `name [unit]` or `name (unit)` into name and unit.
pub fn header_unit(cell: &str) -> (&str, Option<&str>) {
    let c = cell.trim();
    for (open, close) in [('[', ']'), ('(', ')')] {
        if let Some(body) = c.strip_suffix(close) {
            if let Some(at) = body.rfind(open) {
                let name = body.get(..at).unwrap_or("").trim();
                let unit = body.get(at + 1..).unwrap_or("").trim();
                if !name.is_empty() {
                    return (name, Some(unit));
                }
            }
        }
    }
    (c, None)
}

fn conversion(kind: ReadingKind, unit: &str, l: &Loaded) -> Result<Conv, String> {
    let at = |x: f64| format!("{x}{unit}");
    Ok(match kind {
        ReadingKind::Pressure => {
            let p = units::pressure(&at(1.0))?;
            Conv {
                a: p.absolute(l.atmosphere_pa) - p.pa,
                b: p.pa,
            }
        }
        ReadingKind::Temperature => {
            units::temperature(&at(300.0))?;
            let (a, b) = units::temperature_affine(unit)
                .ok_or_else(|| format!("'{unit}' is not a temperature unit"))?;
            Conv { a, b }
        }
        ReadingKind::Flow => Conv {
            a: 0.0,
            b: units::flow(&at(1.0))?.kg_per_s(l.molar_mass),
        },
        ReadingKind::DifferentialPressure => Conv {
            a: 0.0,
            b: config::differential_pressure(&at(1.0))?,
        },
        ReadingKind::Number => {
            config::check_unit(kind, unit)?;
            Conv { a: 0.0, b: 1.0 }
        }
    })
}

impl Mapping {
    /// Maps `header` (the log's first row) onto the train file's readings.
    pub fn new(l: &Loaded, header: &[&str], log: &Path) -> Result<Mapping, CliError> {
        let names: Vec<(&str, Option<&str>)> = header.iter().map(|h| header_unit(h)).collect();
        let find = |col: &str| names.iter().position(|(n, _)| *n == col.trim());
        let plain: Vec<&str> = names.iter().map(|(n, _)| *n).collect();
        let mut sources = Vec::new();
        for (i, st) in l.file.stages.iter().enumerate() {
            for (name, src) in &st.readings {
                let key = format!("stage[{i}].readings.{name}");
                let Some(reading) = READINGS.iter().position(|(n, _)| n == name) else {
                    return Err(l.error(&key, "unknown reading").into());
                };
                let kind = READINGS.get(reading).map_or(ReadingKind::Number, |r| r.1);
                let Some(column) = find(src.column()) else {
                    let hint = did_you_mean(src.column(), &plain)
                        .map(|n| format!("; did you mean '{n}'?"))
                        .unwrap_or_default();
                    return Err(l
                        .error(
                            &key,
                            format!(
                                "column '{}' is not in the header of {}{hint}",
                                src.column(),
                                log.display()
                            ),
                        )
                        .into());
                };
                let unit = src
                    .unit()
                    .or_else(|| names.get(column).and_then(|(_, u)| *u))
                    .or((kind == ReadingKind::Number).then_some(""));
                let Some(unit) = unit else {
                    return Err(l
                        .error(
                            &key,
                            format!(
                                "column '{}' has no unit: give unit = \"...\" here or write \
                                 '{} [unit]' in the log's header",
                                src.column(),
                                src.column()
                            ),
                        )
                        .into());
                };
                let conv = conversion(kind, unit, l).map_err(|e| l.error(&key, e))?;
                sources.push(Source {
                    stage: i,
                    reading,
                    column,
                    header: header.get(column).map_or(String::new(), |h| h.to_string()),
                    conv,
                    kind,
                });
            }
        }
        let time = match &l.file.replay.time_column {
            Some(t) => Some(find(t).ok_or_else(|| {
                CliError::from(l.error(
                    "replay.time_column",
                    format!("column '{t}' is not in the header of {}", log.display()),
                ))
            })?),
            None => None,
        };
        Ok(Mapping {
            sources,
            time,
            width: header.len(),
            stages: l.stage_count(),
        })
    }

    /// The readings of one row; `Err` says why the row is malformed.
    pub fn row(
        &self,
        fields: &[&str],
        limits: &config::Limits,
    ) -> Result<(Option<f64>, Row), String> {
        if fields.len() != self.width {
            return Err(format!(
                "{} fields where the header has {}",
                fields.len(),
                self.width
            ));
        }
        let time = match self.time {
            Some(c) => {
                let t = fields.get(c).copied().unwrap_or("");
                Some(parse_time(t).ok_or_else(|| format!("unreadable time '{t}'"))?)
            }
            None => None,
        };
        let mut row: Row = vec![[Cell::Unmapped; READING_COUNT]; self.stages];
        for s in &self.sources {
            let text = fields.get(s.column).copied().unwrap_or("").trim();
            let cell = match text.parse::<f64>() {
                Ok(x) if x.is_finite() => {
                    let si = s.conv.a + s.conv.b * x;
                    if plausible(s.kind, si, limits) {
                        Cell::Value(si)
                    } else {
                        Cell::Bad
                    }
                }
                _ => Cell::Bad,
            };
            if let Some(c) = row.get_mut(s.stage).and_then(|r| r.get_mut(s.reading)) {
                *c = cell;
            }
        }
        Ok((time, row))
    }
}

fn plausible(kind: ReadingKind, si: f64, l: &config::Limits) -> bool {
    match kind {
        ReadingKind::Pressure => (l.pressure.0..=l.pressure.1).contains(&si),
        ReadingKind::Temperature => (l.temperature.0..=l.temperature.1).contains(&si),
        ReadingKind::Flow => (0.0..=l.mass_flow_max).contains(&si),
        ReadingKind::DifferentialPressure | ReadingKind::Number => si.is_finite(),
    }
}

/// Seconds from a number of seconds or `YYYY-MM-DD HH:MM:SS[.fff]` (also
/// with `T`, UTC assumed), as seconds since 1970-01-01.
pub fn parse_time(text: &str) -> Option<f64> {
    let t = text.trim();
    if let Ok(x) = t.parse::<f64>() {
        return x.is_finite().then_some(x);
    }
    let (date, time) = t.split_once([' ', 'T'])?;
    let mut d = date.split('-').map(|p| p.parse::<i64>().ok());
    let (y, m, day) = (d.next()??, d.next()??, d.next()??);
    let time = time.trim_end_matches('Z');
    let mut tp = time.split(':');
    let h = tp.next()?.parse::<i64>().ok()?;
    let min = tp.next()?.parse::<i64>().ok()?;
    let sec = tp.next().map_or(Some(0.0), |s| s.parse::<f64>().ok())?;
    if !(1..=12).contains(&m)
        || !(1..=31).contains(&day)
        || !(0..24).contains(&h)
        || !(0..60).contains(&min)
        || !(0.0..61.0).contains(&sec)
    {
        return None;
    }
    // Days from civil (H. Hinnant's algorithm, public domain).
    let y2 = if m <= 2 { y - 1 } else { y };
    let era = y2.div_euclid(400);
    let yoe = y2 - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + day - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    let days = era * 146_097 + doe - 719_468;
    Some(days as f64 * 86_400.0 + (h * 3600 + min * 60) as f64 + sec)
}

/// Per-stage surge and recycle results of one scan.
#[derive(Clone, Copy, Debug, Default)]
pub struct Extra {
    /// Surge margin results (if the stage has a map and the readings).
    pub margin: Option<surgemap::MarginPoint>,
    /// Recycle power, W (if the recycle flow is mapped).
    pub recycle: Option<(f64, Quality)>,
}

/// Calls `f(prefix, number, key, value, quality)` for every result column of
/// one snapshot: the kernel's field list (`Snapshot::visit_groups`, keys
/// with their SI unit suffix) by group (`s<i>` stage, `c<i>` cooler after
/// stage i, `train` totals, `i<i>` interstage pressure after stage i), then
/// the host's surge-margin and recycle columns per stage, then the loss
/// ledger from its field lists (`train_ledger_*` for the train-wide lines,
/// `s<i>_ledger_*` per compressor stage: a new ledger line is one entry in
/// `polytrope::ledger`'s list). Flags and counts are written as numbers;
/// condition names (tags) are not columns.
pub fn visit<T: Real, const N: usize>(
    snap: &Snapshot<T, N>,
    extra: &[Extra],
    ledger: &Ledger<T, N>,
    f: &mut dyn FnMut(&'static str, usize, &'static str, f64, Quality),
) {
    snap.visit_groups(&mut |g, spec, value| {
        let (p, n) = match g {
            Group::Stage(i) => ("s", usize::from(i) + 1),
            Group::Cooler(i) => ("c", usize::from(i) + 1),
            Group::Totals => ("train", 0),
            // Interstage pressures below, one fixed set of columns per scan.
            _ => return,
        };
        // The chosen unit system (`--units`) names and scales the column
        // from the field's quantity (SI without a choice).
        let d = Dimension::of_field(spec.kind, spec.key);
        let key = unit_system::csv_key(spec.key, d);
        let shown = |x: f64| unit_system::csv_value(x, d);
        match value {
            FieldValue::Real(m) => f(p, n, key, shown(m.value.to_f64()), m.quality),
            FieldValue::Plain(x) => f(p, n, key, shown(x.to_f64()), Quality::Good),
            FieldValue::Flag(b) => f(p, n, spec.key, if b { 1.0 } else { 0.0 }, Quality::Good),
            FieldValue::Count(c) => f(p, n, spec.key, f64::from(c), Quality::Good),
            _ => {}
        }
    });
    // Interstage pressure after each compressor stage but the last: the
    // kernel has it only when its references are usable; bad otherwise.
    let last = usize::from(snap.totals.compressor_stages).saturating_sub(1);
    for (i, p) in snap.interstage.iter().enumerate().take(last) {
        match p {
            Some(p) => p.visit_fields(&mut |spec, value| {
                if let Some(m) = value.measured() {
                    let d = Dimension::of_field(spec.kind, spec.key);
                    f(
                        "i",
                        i + 1,
                        unit_system::csv_key(spec.key, d),
                        unit_system::csv_value(m.value.to_f64(), d),
                        m.quality,
                    );
                }
            }),
            None => {
                for spec in <InterstagePressure<T> as ResultFields<T>>::FIELDS {
                    let d = Dimension::of_field(spec.kind, spec.key);
                    f(
                        "i",
                        i + 1,
                        unit_system::csv_key(spec.key, d),
                        0.0,
                        Quality::Bad,
                    );
                }
            }
        }
    }
    for (i, e) in extra.iter().enumerate() {
        let n = i + 1;
        if let Some(s) = e.margin {
            let q = match s.quality {
                "good" => Quality::Good,
                "uncertain" => Quality::Uncertain,
                _ => Quality::Bad,
            };
            let v = |x: Option<f64>| (x.unwrap_or(0.0), if x.is_some() { q } else { Quality::Bad });
            for (key, x) in [
                ("surge_margin", s.margin),
                ("control_clearance", s.deviation),
                ("flow_number", s.reduced_flow_squared),
                ("head_number", s.reduced_head),
            ] {
                let (a, qa) = v(x);
                f("s", n, key, a, qa);
            }
        }
        if let Some((w, q)) = e.recycle {
            let d = Some(Dimension::Power);
            f(
                "s",
                n,
                unit_system::csv_key("recycle_power_W", d),
                unit_system::csv_value(w, d),
                q,
            );
        }
    }
    // The same unit presentation as the snapshot's columns (`--units`).
    let mut put = |p: &'static str, n: usize, spec: &'static FieldSpec, value: FieldValue<T>| {
        if let Some(m) = value.measured() {
            let d = Dimension::of_field(spec.kind, spec.key);
            let key = unit_system::csv_key(spec.key, d);
            f(
                p,
                n,
                key,
                unit_system::csv_value(m.value.to_f64(), d),
                m.quality,
            );
        }
    };
    ledger.visit_fields(&mut |spec, value| put("train", 0, spec, value));
    // Per compressor stage, from the train's own count (the ledger's is
    // zero until its first usable scan: the columns stay fixed).
    for i in 0..usize::from(snap.totals.compressor_stages) {
        let stage = ledger.stage(i).unwrap_or(polytrope::ledger::LedgerStage {
            intercooling: Measured::bad(),
            stage_inefficiency: Measured::bad(),
        });
        stage.visit_fields(&mut |spec, value| put("s", i + 1, spec, value));
    }
}

/// Column base name: `s1_gas_power_W`, `c2_approach_K`, `train_total_power_W`.
pub fn column_name(prefix: &str, n: usize, key: &str) -> String {
    if n == 0 {
        format!("{prefix}_{key}")
    } else {
        format!("{prefix}{n}_{key}")
    }
}

/// Everything one precision keeps while replaying.
pub struct Lane<T: Real, const N: usize> {
    /// The train.
    pub train: HostTrain<T, N>,
    /// Margin monitors per stage.
    pub monitors: Vec<Option<Monitor<T>>>,
    /// Per-stage extras of the last scan.
    pub extra: Vec<Extra>,
    /// Orifices (`[stage.flow_element]`) that give the mass flow of a stage
    /// without a mapped `mass_flow` reading, from its flow differential pressure.
    pub orifices: Vec<Option<Orifice<T>>>,
    /// The loss ledger of the last scan (first-suction reference, no
    /// recycle loop: train files do not describe one yet).
    pub ledger: Ledger<T, N>,
}

impl<T: Real, const N: usize> Lane<T, N> {
    /// Builds the train and monitors.
    pub fn new(l: &Loaded, scan_period: f64) -> Result<Self, CliError> {
        let mut monitors = Vec::new();
        for i in 0..N {
            monitors.push(surgemap::monitor::<T>(l, i, scan_period)?);
        }
        let mut orifices = Vec::new();
        for i in 0..N {
            let mapped = |r: &str| {
                l.file
                    .stages
                    .get(i)
                    .is_some_and(|s| s.readings.contains_key(r))
            };
            orifices.push(match l.orifice_config::<T>(i) {
                Some(cfg) if !mapped("mass_flow") && mapped("flow_differential_pressure") => Some(
                    Orifice::new(cfg).map_err(|e| CliError::from(l.kernel_error(&e, Some(i))))?,
                ),
                _ => None,
            });
        }
        Ok(Lane {
            train: train_any::build::<T, N>(l)?,
            monitors,
            extra: vec![Extra::default(); N],
            orifices,
            ledger: Ledger::bad(),
        })
    }

    /// One scan.
    pub fn step(&mut self, l: &Loaded, row: &Row) {
        let scan = self.scan(l, row);
        self.train.update(&scan);
        self.update_ledger(&scan);
        self.margins(row);
    }

    /// The loss ledger of `scan`, the scan the train was just updated with.
    pub fn update_ledger(&mut self, scan: &polytrope::scan::Scan<T, N>) {
        evaluate_ledger_into(
            self.train.config(),
            &LedgerConfig::default(),
            scan,
            self.train.snapshot(),
            Measured::bad(),
            &mut self.ledger,
        );
    }

    /// The kernel scan of a row, with orifice flows where configured.
    pub fn scan(&self, l: &Loaded, row: &Row) -> polytrope::scan::Scan<T, N> {
        let mut scan = train_any::scan::<T, N>(l, row);
        for (i, (st, orifice)) in scan.stages.iter_mut().zip(&self.orifices).enumerate() {
            if let Some(o) = orifice {
                let z = st.compressibility.unwrap_or_else(|| {
                    self.train.config().gas.orifice_z(
                        st.suction_pressure.map(|p| p.pa()),
                        st.suction_temperature.map(|t| t.kelvin()),
                    )
                });
                let dp = match row.get(i).and_then(|r| r.get(ix::FLOW_DP)) {
                    Some(Cell::Value(v)) => Measured::good(T::of(*v)),
                    _ => Measured::bad(),
                };
                st.mass_flow = Some(
                    o.evaluate(&OrificeInputs {
                        differential_pressure: dp,
                        upstream_pressure: st.suction_pressure,
                        upstream_temperature: st.suction_temperature,
                        compressibility: z,
                    })
                    .mass_flow,
                );
            }
        }
        scan
    }

    /// Surge margins and recycle power of the last scan.
    fn margins(&mut self, row: &Row) {
        let snap = self.train.snapshot();
        for (i, (mon, ex)) in self
            .monitors
            .iter_mut()
            .zip(self.extra.iter_mut())
            .enumerate()
        {
            let cells = row
                .get(i)
                .copied()
                .unwrap_or([Cell::Unmapped; READING_COUNT]);
            let m = |c: Option<&Cell>| match c {
                Some(Cell::Value(v)) => Measured::good(T::of(*v)),
                _ => Measured::bad(),
            };
            ex.margin = match (mon, cells.get(ix::FLOW_DP)) {
                (Some(mon), Some(Cell::Value(_) | Cell::Bad)) => Some(surgemap::update(
                    mon,
                    m(cells.get(ix::P1)),
                    m(cells.get(ix::P2)),
                    m(cells.get(ix::FLOW_DP)),
                )),
                _ => None,
            };
            ex.recycle = match cells.get(ix::RECYCLE_FLOW) {
                Some(Cell::Unmapped) | None => None,
                Some(c) => {
                    let work = snap
                        .stages
                        .get(i)
                        .map_or(Measured::bad(), |s| s.actual_work());
                    let p = recycle_power(m(Some(c)), work);
                    Some((p.value.to_f64(), p.quality))
                }
            };
        }
    }
}

/// Series kept for the summary and the plots (NaN = no usable value; never written out).
#[derive(Clone, Debug, Default)]
pub struct Series {
    /// Time, s from the first row.
    pub time: Vec<f64>,
    /// Line number of each row.
    pub line: Vec<u64>,
    /// Per stage: (name, values) for each plotted quantity.
    pub stages: Vec<StageSeries>,
    /// Per scan: the loss ledger in W by [`LEDGER_GROUPS`] (NaN where the
    /// scan's ledger has an unusable line: the whole scan is left out).
    pub ledger: Vec<[f64; LEDGER_GROUPS.len()]>,
}

/// The loss ledger's lines as the replay keeps them for its period plot:
/// per-stage lines summed over the stages.
pub const LEDGER_GROUPS: [Cause; 11] = [
    Cause::Isothermal,
    Cause::StageCount,
    Cause::PressureDrops,
    Cause::PressureSplit,
    Cause::CoolantTemperature,
    Cause::Intercooling,
    Cause::StageInefficiency,
    Cause::Recycle,
    Cause::Pumps,
    Cause::Remainder,
    Cause::MeasuredTotal,
];

/// One scan's ledger by [`LEDGER_GROUPS`], W; all NaN unless every line is usable.
pub fn ledger_groups<T: Real, const N: usize>(l: &Ledger<T, N>) -> [f64; LEDGER_GROUPS.len()] {
    let mut g = [0.0; LEDGER_GROUPS.len()];
    let mut usable = true;
    l.visit_lines(&mut |c, _, m| {
        usable &= m.quality.is_usable();
        if let Some(k) = LEDGER_GROUPS.iter().position(|x| *x == c) {
            if let Some(v) = g.get_mut(k) {
                *v += m.value.to_f64();
            }
        }
    });
    if usable {
        g
    } else {
        [f64::NAN; LEDGER_GROUPS.len()]
    }
}

/// Per-stage series.
#[derive(Clone, Debug, Default)]
pub struct StageSeries {
    /// Polytropic efficiency, - (good and steady only).
    pub efficiency: Vec<f64>,
    /// Polytropic efficiency, any usable quality.
    pub efficiency_any: Vec<f64>,
    /// Actual work, J/kg.
    pub work: Vec<f64>,
    /// Power, W.
    pub power: Vec<f64>,
    /// Cooler approach, K.
    pub approach: Vec<f64>,
    /// Cooler effectiveness, -.
    pub effectiveness: Vec<f64>,
    /// Cooler duty, W.
    pub duty: Vec<f64>,
    /// Surge margin, -.
    pub margin: Vec<f64>,
    /// Control-line deviation, -.
    pub deviation: Vec<f64>,
    /// Reduced flow squared.
    pub q2: Vec<f64>,
    /// Reduced head.
    pub hr: Vec<f64>,
    /// Recycle power, W.
    pub recycle: Vec<f64>,
    /// Scans per gas-model validity (`in-range`, `near-critical`, ...).
    pub gas_validity: std::collections::BTreeMap<&'static str, u64>,
}

fn usable(v: f64, q: Quality) -> f64 {
    if q.is_usable() && v.is_finite() {
        v
    } else {
        f64::NAN
    }
}

/// Appends the series of one scan.
pub fn record_series<T: Real, const N: usize>(s: &mut Series, lane: &Lane<T, N>) {
    s.ledger.push(ledger_groups(&lane.ledger));
    let snap = lane.train.snapshot();
    snap.visit_groups(&mut |g, spec, value| {
        if let (Group::Stage(i), "gas_model_validity", FieldValue::Tag(t)) = (g, spec.key, value) {
            if let Some(ss) = s.stages.get_mut(usize::from(i)) {
                *ss.gas_validity.entry(t).or_default() += 1;
            }
        }
    });
    for (i, ss) in s.stages.iter_mut().enumerate() {
        let st = snap.stages.get(i);
        let c = st.and_then(|s| s.compressor());
        let steady = st.is_some_and(|s| s.steady_state.steady);
        let eff = c.map_or(f64::NAN, |c| {
            usable(
                c.polytropic_efficiency.value.to_f64(),
                c.polytropic_efficiency.quality,
            )
        });
        let good = c.is_some_and(|c| c.polytropic_efficiency.quality == Quality::Good);
        ss.efficiency
            .push(if steady && good { eff } else { f64::NAN });
        ss.efficiency_any.push(eff);
        let (w, p) = st.map_or((f64::NAN, f64::NAN), |s| {
            let w = s.actual_work();
            let p = s.power();
            (
                usable(w.value.to_f64(), w.quality),
                usable(p.value.to_f64(), p.quality),
            )
        });
        ss.work.push(w);
        ss.power.push(p);
        let cool = snap.coolers.get(i).copied().flatten();
        let cv = |f: fn(&polytrope::cooler::CoolerResult<T>) -> Measured<T>| {
            cool.as_ref().map_or(f64::NAN, |c| {
                let m = f(c);
                usable(m.value.to_f64(), m.quality)
            })
        };
        ss.approach.push(cv(|c| c.approach));
        ss.effectiveness.push(cv(|c| c.effectiveness));
        ss.duty.push(cv(|c| c.heat_duty));
        let e = lane.extra.get(i).copied().unwrap_or_default();
        let mv = |x: Option<f64>| x.unwrap_or(f64::NAN);
        let mg = e.margin.unwrap_or_default();
        ss.margin.push(mv(mg.margin));
        ss.deviation.push(mv(mg.deviation));
        ss.q2.push(mv(mg.reduced_flow_squared));
        ss.hr.push(mv(mg.reduced_head));
        ss.recycle
            .push(e.recycle.map_or(f64::NAN, |(w, q)| usable(w, q)));
    }
}

/// Counts of a replay.
#[derive(Clone, Debug, Default)]
pub struct Counts {
    /// Data rows read (malformed included).
    pub rows: u64,
    /// Rows replayed.
    pub replayed: u64,
    /// Malformed rows: (line, why).
    pub malformed: Vec<(u64, String)>,
    /// Bad cells per mapped column: (header, count, first line).
    pub bad_cells: Vec<(String, u64, u64)>,
    /// f32 vs f64: largest |difference| per column and quality disagreements.
    pub precision: Vec<(String, f64, u64)>,
    /// Seconds spent.
    pub seconds: f64,
}

struct Job<'a> {
    l: &'a Loaded,
    a: &'a ReplayArgs,
}

/// A finished replay.
pub struct Outcome {
    /// Counts.
    pub counts: Counts,
    /// Series.
    pub series: Series,
    /// Results file.
    pub output: PathBuf,
}

impl StagesJob for Job<'_> {
    type Out = Outcome;
    fn run<const N: usize>(self) -> Result<Outcome, CliError> {
        replay_n::<N>(self.l, self.a)
    }
}

fn io(path: &Path, e: impl core::fmt::Display) -> CliError {
    CliError::Input(format!("{}: {e}", path.display()))
}

fn replay_n<const N: usize>(l: &Loaded, a: &ReplayArgs) -> Result<Outcome, CliError> {
    let started = Instant::now();
    let file = std::fs::File::open(&a.log).map_err(|e| io(&a.log, e))?;
    let size = file.metadata().map_or(0, |m| m.len());
    let mut rdr = csv::ReaderBuilder::new()
        .flexible(true)
        .has_headers(true)
        .from_reader(std::io::BufReader::with_capacity(1 << 16, file));
    let header: Vec<String> = rdr
        .headers()
        .map_err(|e| io(&a.log, e))?
        .iter()
        .map(str::to_string)
        .collect();
    let hrefs: Vec<&str> = header.iter().map(String::as_str).collect();
    let mapping = Mapping::new(l, &hrefs, &a.log)?;
    let output = a.output.clone().unwrap_or_else(|| {
        let stem = a
            .log
            .file_stem()
            .map_or("log".into(), |s| s.to_string_lossy().into_owned());
        a.log.with_file_name(format!("{stem}.results.csv"))
    });
    if output == a.log {
        return Err(CliError::Usage(
            "--output must not be the log itself".into(),
        ));
    }
    let mut w = csv::WriterBuilder::new()
        .from_path(&output)
        .map_err(|e| io(&output, e))?;

    // The scan period for the margin's rate window: from the first two times, else 1 s.
    let scan_period = 1.0;
    let mut lane32 = Lane::<f32, N>::new(l, scan_period)?;
    let mut lane64 = Lane::<f64, N>::new(l, scan_period)?;

    let bar = if a.quiet {
        indicatif::ProgressBar::hidden()
    } else {
        let b = indicatif::ProgressBar::new(size);
        b.set_style(
            indicatif::ProgressStyle::with_template(
                "replay {bar:40} {percent:>3}% {bytes}/{total_bytes} ({eta} left)",
            )
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    };

    let mut counts = Counts::default();
    let mut series = Series {
        stages: vec![StageSeries::default(); N],
        ..Series::default()
    };
    let mut bad: Vec<(u64, u64)> = vec![(0, 0); mapping.sources.len()];
    let mut names: Vec<String> = Vec::new();
    let mut keep: Vec<bool> = Vec::new();
    let mut keys_seen: Vec<&'static str> = Vec::new();
    let mut diffs: Vec<(f64, u64)> = Vec::new();
    let mut vals32: Vec<(f64, Quality)> = Vec::new();
    let mut vals64: Vec<(f64, Quality)> = Vec::new();
    let mut first_time: Option<f64> = None;
    let mut last_time: Option<f64> = None;
    let mut buf = String::new();
    let mut record = csv::StringRecord::new();
    let mut stop: Option<CliError> = None;
    loop {
        match rdr.read_record(&mut record) {
            Ok(true) => {}
            Ok(false) => break,
            Err(e) => {
                let line = e.position().map_or(0, |p| p.line());
                counts.rows += 1;
                counts.malformed.push((line, format!("unreadable: {e}")));
                if a.on_malformed == OnMalformed::Stop {
                    stop = Some(CliError::Input(format!(
                        "{}:{line}: malformed row: {e}",
                        a.log.display()
                    )));
                    break;
                }
                continue;
            }
        }
        counts.rows += 1;
        let line = record.position().map_or(0, |p| p.line());
        let fields: Vec<&str> = record.iter().collect();
        let parsed = mapping
            .row(&fields, &l.limits)
            .and_then(|(t, row)| match (t, last_time) {
                (Some(t), Some(prev)) if t <= prev => Err(format!(
                    "time {} is not after the previous row's",
                    fields.get(mapping.time.unwrap_or(0)).copied().unwrap_or("")
                )),
                _ => Ok((t, row)),
            });
        let (time, row) = match parsed {
            Ok(x) => x,
            Err(why) => {
                counts.malformed.push((line, why.clone()));
                if a.on_malformed == OnMalformed::Stop {
                    stop = Some(CliError::Input(format!(
                        "{}:{line}: malformed row: {why} (rows before it are in {})",
                        a.log.display(),
                        output.display()
                    )));
                    break;
                }
                continue;
            }
        };
        for (s, b) in mapping.sources.iter().zip(bad.iter_mut()) {
            if row.get(s.stage).and_then(|r| r.get(s.reading)) == Some(&Cell::Bad) {
                if b.0 == 0 {
                    b.1 = line;
                }
                b.0 += 1;
            }
        }
        let t = time.unwrap_or(counts.replayed as f64);
        last_time = Some(t);
        let t0 = *first_time.get_or_insert(t);
        lane32.step(l, &row);
        lane64.step(l, &row);
        vals32.clear();
        vals64.clear();
        let first = names.is_empty();
        visit(
            lane32.train.snapshot(),
            &lane32.extra,
            &lane32.ledger,
            &mut |p, n, key, v, q| {
                if first {
                    names.push(column_name(p, n, key));
                    keep.push(a.fields.is_empty() || a.fields.iter().any(|f| f == key));
                    keys_seen.push(key);
                }
                vals32.push((v, q));
            },
        );
        visit(
            lane64.train.snapshot(),
            &lane64.extra,
            &lane64.ledger,
            &mut |_, _, _, v, q| {
                vals64.push((v, q));
            },
        );
        if first {
            for f in &a.fields {
                if !keys_seen.contains(&f.as_str()) {
                    let mut known: Vec<&str> = keys_seen.clone();
                    known.sort_unstable();
                    known.dedup();
                    let hint = did_you_mean(f, &known)
                        .map(|n| format!("; did you mean '{n}'?"))
                        .unwrap_or_default();
                    return Err(CliError::Usage(format!(
                        "--fields: no result '{f}' for this train{hint}; known: {}",
                        known.join(", ")
                    )));
                }
            }
            let mut head = vec!["line".to_string(), "time_s".to_string()];
            for n in names.iter().zip(&keep).filter(|(_, k)| **k).map(|(n, _)| n) {
                head.push(n.clone());
                head.push(format!("{n}_f64"));
                head.push(format!("{n}_quality"));
            }
            w.write_record(&head).map_err(|e| io(&output, e))?;
            diffs = vec![(0.0, 0); names.len()];
        }
        buf.clear();
        let _ = write!(buf, "{line}");
        w.write_field(&buf).map_err(|e| io(&output, e))?;
        buf.clear();
        let _ = write!(buf, "{}", t - t0);
        w.write_field(&buf).map_err(|e| io(&output, e))?;
        for ((((v32, q32), (v64, q64)), d), kept) in
            vals32.iter().zip(&vals64).zip(diffs.iter_mut()).zip(&keep)
        {
            if q32 != q64 {
                d.1 += 1;
            } else if *q32 != Quality::Bad {
                d.0 = d.0.max((v32 - v64).abs());
            }
            if !kept {
                continue;
            }
            buf.clear();
            if *q32 != Quality::Bad {
                let _ = write!(buf, "{}", *v32 as f32);
            }
            w.write_field(&buf).map_err(|e| io(&output, e))?;
            buf.clear();
            if *q64 != Quality::Bad {
                let _ = write!(buf, "{v64}");
            }
            w.write_field(&buf).map_err(|e| io(&output, e))?;
            w.write_field(out::quality_word(*q32))
                .map_err(|e| io(&output, e))?;
        }
        w.write_record(None::<&[u8]>).map_err(|e| io(&output, e))?;
        series.time.push(t - t0);
        series.line.push(line);
        record_series(&mut series, &lane32);
        counts.replayed += 1;
        if counts.replayed % 4096 == 0 {
            bar.set_position(record.position().map_or(0, |p| p.byte()));
        }
    }
    bar.finish_and_clear();
    w.flush().map_err(|e| io(&output, e))?;
    counts.seconds = started.elapsed().as_secs_f64();
    counts.bad_cells = mapping
        .sources
        .iter()
        .zip(&bad)
        .filter(|(_, b)| b.0 > 0)
        .map(|(s, b)| (s.header.clone(), b.0, b.1))
        .collect();
    counts.precision = names
        .iter()
        .zip(&diffs)
        .map(|(n, d)| (n.clone(), d.0, d.1))
        .collect();
    if let Some(e) = stop {
        return Err(e);
    }
    Ok(Outcome {
        counts,
        series,
        output,
    })
}

/// Mean of the finite values.
fn mean(v: &[f64]) -> Option<f64> {
    let (s, n) = v
        .iter()
        .filter(|x| x.is_finite())
        .fold((0.0, 0usize), |(s, n), x| (s + x, n + 1));
    (n > 0).then(|| s / n as f64)
}

/// Intervals where `pred` holds: (start index, end index exclusive).
fn intervals(v: &[f64], pred: impl Fn(f64) -> bool) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, &x) in v.iter().enumerate() {
        match (x.is_finite() && pred(x), start) {
            (true, None) => start = Some(i),
            (false, Some(s)) => {
                out.push((s, i));
                start = None;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        out.push((s, v.len()));
    }
    out
}

fn put(o: &mut serde_json::Value, key: &str, v: serde_json::Value) {
    if let Some(m) = o.as_object_mut() {
        m.insert(key.to_string(), v);
    }
}

/// The summary as text and JSON.
pub fn summary(l: &Loaded, a: &ReplayArgs, o: &Outcome) -> (String, serde_json::Value) {
    use serde_json::json;
    let c = &o.counts;
    let s = &o.series;
    let n = s.time.len();
    let baseline = a
        .baseline_rows
        .or(l.file.replay.baseline_rows)
        .unwrap_or(n / 10)
        .clamp(1, n.max(1));
    let rate = c.replayed as f64 / c.seconds.max(1e-9);
    let units_note = unit_system::chosen().map_or(String::new(), |u| {
        format!(
            "Units: {} (results CSV column names carry each column's unit; JSON stays SI).\n",
            u.name()
        )
    });
    let mut t = format!(
        "{} replay: {} through {}\n{}\n{}\n\n\
         Gas model: {} (every result column comes from it; its validity is folded into each column's quality).\n\
         Rows: {} read, {} replayed, {} malformed ({}); {:.1} s, {} rows/s (f32 and f64 builds both run).\n\
         Results: {}\n{units_note}",
        crate::BIN,
        a.log.display(),
        a.file.display(),
        l.file.train.name,
        out::CAUTION,
        l.gas_description(),
        c.rows,
        c.replayed,
        c.malformed.len(),
        match a.on_malformed {
            OnMalformed::Skip => "skipped",
            OnMalformed::Stop => "stopped at the first",
        },
        c.seconds,
        sig(rate.round()),
        o.output.display()
    );
    for (line, why) in c.malformed.iter().take(20) {
        let _ = writeln!(t, "  malformed line {line}: {why}");
    }
    if c.malformed.len() > 20 {
        let _ = writeln!(
            t,
            "  ... and {} more malformed rows",
            c.malformed.len() - 20
        );
    }
    if !c.bad_cells.is_empty() {
        t.push_str("\nBad input cells (blank, non-numeric or outside [limits]):\n");
        for (h, count, first) in &c.bad_cells {
            let _ = writeln!(t, "  {h}: {count} cells, first on line {first}");
        }
    }
    let time_at = |i: usize| s.time.get(i).copied().unwrap_or(0.0);
    let line_at = |i: usize| s.line.get(i).copied().unwrap_or(0);
    let dt = |i: usize| {
        if i + 1 < n {
            time_at(i + 1) - time_at(i)
        } else if i > 0 {
            time_at(i) - time_at(i - 1)
        } else {
            0.0
        }
    };
    let mut stages_json = Vec::new();
    let mut events: Vec<(f64, String)> = Vec::new();
    let mut after = String::new();
    t.push_str(&format!(
        "\nTrends: baseline = first {baseline} rows, compared with the last {baseline} rows \
         (efficiency only at steady state with good quality).\n"
    ));
    // Approach (a temperature difference) in the chosen unit system.
    let approach_disp = out::disp_or(Dimension::TemperatureDiff, out::disp::KELVIN2);
    let (ab, ae, ac) = (
        format!("approach baseline {}", approach_disp.unit),
        format!("approach end {}", approach_disp.unit),
        format!("change {}", approach_disp.unit),
    );
    let mut g = out::Grid::new(&[
        "stage",
        "eta_p baseline %",
        "eta_p end %",
        "change pts",
        &ab,
        &ae,
        &ac,
    ]);
    for (i, ss) in s.stages.iter().enumerate() {
        let head = |v: &Vec<f64>| mean(v.get(..baseline).unwrap_or(v));
        let tail = |v: &Vec<f64>| mean(v.get(n.saturating_sub(baseline)..).unwrap_or(v));
        let (e0, e1) = (head(&ss.efficiency), tail(&ss.efficiency));
        let (a0, a1) = (head(&ss.approach), tail(&ss.approach));
        let f = |x: Option<f64>, scale: f64| x.map_or("--".into(), |x| format!("{:.2}", x * scale));
        let d = |x: Option<f64>, y: Option<f64>, scale: f64| match (x, y) {
            (Some(x), Some(y)) => format!("{:+.2}", (y - x) * scale),
            _ => "--".into(),
        };
        g.row(vec![
            format!("S{}", i + 1),
            f(e0, 100.0),
            f(e1, 100.0),
            d(e0, e1, 100.0),
            f(a0, approach_disp.scale),
            f(a1, approach_disp.scale),
            d(a0, a1, approach_disp.scale),
        ]);
        let mut sj = json!({
            "stage": i + 1,
            "polytropic_efficiency_baseline": e0,
            "polytropic_efficiency_end": e1,
            "approach_baseline_K": a0,
            "approach_end_K": a1,
        });
        if ss.margin.iter().any(|x| x.is_finite()) {
            let worst = ss
                .margin
                .iter()
                .enumerate()
                .filter(|(_, x)| x.is_finite())
                .min_by(|x, y| x.1.total_cmp(y.1));
            let below: f64 = ss
                .deviation
                .iter()
                .enumerate()
                .filter(|(_, d)| d.is_finite() && **d < 0.0)
                .map(|(k, _)| dt(k))
                .sum();
            if let Some((k, m)) = worst {
                let _ = writeln!(
                    after,
                    "S{} surge margin: worst {:.4} at t = {} s (line {}); {} s below the control line.",
                    i + 1,
                    m,
                    sig(time_at(k)),
                    line_at(k),
                    sig(below)
                );
                put(&mut sj, "worst_surge_margin", json!(m));
                put(&mut sj, "worst_surge_margin_time_s", json!(time_at(k)));
                put(&mut sj, "time_below_control_line_s", json!(below));
            }
            for (a0, a1) in intervals(&ss.deviation, |d| d < 0.0) {
                let minm = ss.margin.get(a0..a1).map_or(f64::NAN, |v| {
                    v.iter()
                        .copied()
                        .filter(|x| x.is_finite())
                        .fold(f64::INFINITY, f64::min)
                });
                events.push((
                    time_at(a0),
                    format!(
                        "S{} below the control line from t = {} s (line {}) for {} s, lowest margin {:.4}",
                        i + 1,
                        sig(time_at(a0)),
                        line_at(a0),
                        sig(time_at(a1.saturating_sub(1)) - time_at(a0) + dt(a1.saturating_sub(1))),
                        minm
                    ),
                ));
            }
            for (a0, _) in intervals(&ss.margin, |m| m < 0.0) {
                events.push((
                    time_at(a0),
                    format!(
                        "S{} past the surge line at t = {} s (line {})",
                        i + 1,
                        sig(time_at(a0)),
                        line_at(a0)
                    ),
                ));
            }
        }
        let rec = mean(&ss.recycle);
        if let Some(r) = rec {
            let energy: f64 = ss
                .recycle
                .iter()
                .enumerate()
                .filter(|(_, x)| x.is_finite())
                .map(|(k, x)| x * dt(k))
                .sum();
            let (pw, unit) = match unit_system::chosen() {
                Some(u) => {
                    let sh = u.shown(Dimension::Power);
                    (sh.of(r), sh.unit)
                }
                None => (r, "W"),
            };
            let _ = writeln!(
                after,
                "S{} recycle: mean {} {unit}, {} J over the log.",
                i + 1,
                sig(pw),
                sig(energy)
            );
            put(&mut sj, "recycle_power_mean_W", json!(r));
            put(&mut sj, "recycle_energy_J", json!(energy));
        }
        if !ss.gas_validity.is_empty() {
            let parts: Vec<String> = ss
                .gas_validity
                .iter()
                .map(|(k, v)| format!("{k} {v} scans"))
                .collect();
            let _ = writeln!(
                after,
                "S{} gas model validity (f32 build): {}.",
                i + 1,
                parts.join(", ")
            );
            put(&mut sj, "gas_model_validity_scans", json!(ss.gas_validity));
        }
        stages_json.push(sj);
    }
    g.render(&mut t);
    if !after.is_empty() {
        t.push('\n');
        t.push_str(&after);
    }
    events.sort_by(|a, b| a.0.total_cmp(&b.0));
    t.push_str(&format!("\nEvents ({}):\n", events.len()));
    for (_, e) in events.iter().take(30) {
        let _ = writeln!(t, "  {e}");
    }
    if events.len() > 30 {
        let _ = writeln!(t, "  ... and {} more", events.len() - 30);
    }
    let worst_prec = c
        .precision
        .iter()
        .filter(|p| p.2 > 0)
        .map(|p| format!("{} ({} rows)", p.0, p.2))
        .collect::<Vec<_>>();
    let _ = writeln!(
        t,
        "\nf32 device vs f64 reference: quality differs in {} column(s){}.",
        worst_prec.len(),
        if worst_prec.is_empty() {
            String::new()
        } else {
            format!(": {}", worst_prec.join(", "))
        }
    );
    let j = json!({
        "command": "replay",
        "caution": out::CAUTION,
        "rows": c.rows,
        "replayed": c.replayed,
        "malformed": c.malformed.iter().map(|(l, w)| json!({"line": l, "why": w})).collect::<Vec<_>>(),
        "bad_cells": c.bad_cells.iter().map(|(h, n, f)| json!({"column": h, "count": n, "first_line": f})).collect::<Vec<_>>(),
        "seconds": c.seconds,
        "rows_per_s": rate,
        "results": o.output.display().to_string(),
        "baseline_rows": baseline,
        "stages": stages_json,
        "events": events.iter().map(|e| e.1.clone()).collect::<Vec<_>>(),
        "precision": c.precision.iter().map(|(n, d, q)| json!({"column": n, "max_abs_difference": d, "quality_disagreements": q})).collect::<Vec<_>>(),
    });
    (t, j)
}

/// Runs `replay`.
pub fn run(a: &ReplayArgs) -> Result<String, CliError> {
    let l = config::load(&a.file)?;
    let o = train_any::with_stages(l.stage_count(), Job { l: &l, a })?;
    let (mut text, json) = summary(&l, a, &o);
    if let Some(dir) = &a.plots {
        let files = crate::plots::replay_plots(dir, &l, &o.series)?;
        for f in files {
            let _ = writeln!(text, "plot written: {}", f.display());
        }
    }
    if a.json {
        return Ok(format!(
            "{}\n",
            serde_json::to_string_pretty(&json).unwrap_or_default()
        ));
    }
    Ok(text)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_units_and_times() {
        assert_eq!(header_unit("PI-101 [barg]"), ("PI-101", Some("barg")));
        assert_eq!(header_unit("t_out (degC)"), ("t_out", Some("degC")));
        assert_eq!(header_unit("flow"), ("flow", None));
        assert_eq!(parse_time("12.5"), Some(12.5));
        // 2024-03-01 00:00:00 UTC = 1709251200 s after the Unix epoch (date(1) -d).
        assert_eq!(parse_time("2024-03-01 00:00:00"), Some(1_709_251_200.0));
        assert_eq!(parse_time("2024-03-01T00:00:10Z"), Some(1_709_251_210.0));
        assert_eq!(parse_time("2024-13-01 00:00:00"), None);
        assert_eq!(parse_time("yesterday"), None);
    }

    #[test]
    fn intervals_find_runs() {
        let v = [1.0, -1.0, -2.0, f64::NAN, -1.0, 1.0, -3.0];
        assert_eq!(intervals(&v, |x| x < 0.0), vec![(1, 3), (4, 5), (6, 7)]);
    }
}
