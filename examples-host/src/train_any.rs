//! A train of any stage count from a train file: the host picks the kernel's
//! const-generic instantiation (`Train<T, HostGas<T>, N, 8>` for
//! N = 1..=[`MAX_STAGES`]) by a match on the file's stage count, and turns
//! one row of readings (SI, blank = bad) into a kernel `Scan`.

use polytrope::scan::{CoolerScan, Scan, StageScan};
use polytrope::train::Train;
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{Measured, Real};

use crate::cli::CliError;
use crate::config::Loaded;
pub use crate::config::MAX_STAGES;
pub use crate::host_gas::HostGas;

/// Steady-state window of host trains, scans (fixed: one instantiation per stage count).
pub const WINDOW: usize = 8;

/// The host's train type.
pub type HostTrain<T, const N: usize> = Train<T, HostGas<T>, N, WINDOW>;

/// Work that needs the stage count as a constant.
pub trait StagesJob {
    /// What the job returns.
    type Out;
    /// Runs with `N` stages.
    fn run<const N: usize>(self) -> Result<Self::Out, CliError>;
}

/// Runs `job` with the const-generic stage count `n` (1..=[`MAX_STAGES`]).
pub fn with_stages<J: StagesJob>(n: usize, job: J) -> Result<J::Out, CliError> {
    match n {
        1 => job.run::<1>(),
        2 => job.run::<2>(),
        3 => job.run::<3>(),
        4 => job.run::<4>(),
        5 => job.run::<5>(),
        6 => job.run::<6>(),
        7 => job.run::<7>(),
        8 => job.run::<8>(),
        _ => Err(CliError::Input(format!(
            "{n} stages: this build handles 1 to {MAX_STAGES}"
        ))),
    }
}

/// Builds the kernel train for a loaded file.
pub fn build<T: Real, const N: usize>(l: &Loaded) -> Result<HostTrain<T, N>, CliError> {
    let cfg = l.train_config::<T, N>()?;
    Train::new(cfg).map_err(|e| CliError::from(l.kernel_error(&e, None)))
}

/// One reading cell after parsing.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Cell {
    /// The reading is not mapped for this stage.
    Unmapped,
    /// Mapped but blank, non-numeric or implausible: a bad input.
    Bad,
    /// A value in SI (Pa absolute, K, kg/s, Pa for differential pressure).
    Value(f64),
}

/// Index constants for the readings, in [`crate::config::READINGS`] order.
pub mod ix {
    /// Suction pressure.
    pub const P1: usize = 0;
    /// Suction temperature.
    pub const T1: usize = 1;
    /// Discharge pressure.
    pub const P2: usize = 2;
    /// Discharge temperature.
    pub const T2: usize = 3;
    /// Mass flow.
    pub const FLOW: usize = 4;
    /// Compressibility.
    pub const Z: usize = 5;
    /// Cooler gas outlet temperature.
    pub const GAS_OUT: usize = 6;
    /// Cooler gas outlet pressure.
    pub const GAS_OUT_P: usize = 7;
    /// Coolant inlet temperature.
    pub const COOLANT_IN: usize = 8;
    /// Coolant outlet temperature.
    pub const COOLANT_OUT: usize = 9;
    /// Coolant mass flow.
    pub const COOLANT_FLOW: usize = 10;
    /// Flow element differential pressure.
    pub const FLOW_DP: usize = 11;
    /// Recycle mass flow.
    pub const RECYCLE_FLOW: usize = 12;
}

/// Number of readings per stage.
pub const READING_COUNT: usize = 13;

/// Readings of one row: per stage, one cell per entry of [`crate::config::READINGS`].
pub type Row = Vec<[Cell; READING_COUNT]>;

fn measured<T: Real>(c: Cell) -> Measured<T> {
    match c {
        Cell::Value(v) => Measured::good(T::of(v)),
        Cell::Unmapped | Cell::Bad => Measured::bad(),
    }
}

fn optional<T: Real>(c: Cell) -> Option<Measured<T>> {
    match c {
        Cell::Unmapped => None,
        other => Some(measured(other)),
    }
}

/// The kernel scan for a row. Stages without a mapped reading get it bad;
/// optional readings (flow, compressibility, coolant outlet and flow, cooler
/// outlet pressure) are `None` when unmapped.
pub fn scan<T: Real, const N: usize>(l: &Loaded, row: &Row) -> Scan<T, N> {
    let stages = core::array::from_fn(|i| {
        let cells = row
            .get(i)
            .copied()
            .unwrap_or([Cell::Unmapped; READING_COUNT]);
        let c = |k: usize| cells.get(k).copied().unwrap_or(Cell::Unmapped);
        let p = |k: usize| measured::<T>(c(k)).map(PressureAbs::from_pa);
        let t = |k: usize| measured::<T>(c(k)).map(Kelvin::new);
        let has_cooler = l.file.stages.get(i).is_some_and(|s| s.cooler.is_some());
        StageScan {
            suction_pressure: p(ix::P1),
            suction_temperature: t(ix::T1),
            discharge_pressure: p(ix::P2),
            discharge_temperature: t(ix::T2),
            mass_flow: optional(c(ix::FLOW)),
            compressibility: optional(c(ix::Z)),
            cooler: has_cooler.then(|| CoolerScan {
                gas_outlet_temperature: t(ix::GAS_OUT),
                gas_outlet_pressure: optional::<T>(c(ix::GAS_OUT_P))
                    .map(|m| m.map(PressureAbs::from_pa)),
                coolant_inlet_temperature: t(ix::COOLANT_IN),
                coolant_outlet_temperature: optional::<T>(c(ix::COOLANT_OUT))
                    .map(|m| m.map(Kelvin::new)),
                coolant_mass_flow: optional(c(ix::COOLANT_FLOW)),
            }),
        }
    });
    Scan { stages }
}
