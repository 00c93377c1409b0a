//! A train of `N` stages (compressors, optionally ending in pumps) with a
//! cooler after any stage: configuration, validation and the per-scan update.
//!
//! `N` is fixed at compile time; the train owns all state (steady-state
//! windows, the last snapshot) in fixed memory. [`Train::update`] never
//! allocates, never panics and runs bounded loops over `N` stages and `W`
//! window samples.

use core::mem::MaybeUninit;

use crate::cooler::{
    evaluate_cooler_packed, packed_quality, CoolerConfig, CoolerInputs, CoolerResult, I_DH, I_FLOW,
    I_MC, I_PIN, I_POUT, I_TC, I_TCO, I_TIN, I_TOUT,
};
use crate::error::{check_range, refusal, ConfigError, Problem};
use crate::gas::GasModel;
use crate::plausibility::{
    compressibility, efficiency_allowance, refused_quality, within_span, Limits,
};
use crate::quality::{Measured, Quality};
use crate::real::{Real, HARD_FLOAT};
use crate::scan::{Scan, StageScan};
use crate::stage::compressor::{
    evaluate_compressor_tabled, StageReadings, StageThresholds, StageUses, NOT_SETTLED,
};
use crate::stage::{evaluate_pump_within, CompressorResult, PumpResult};
use crate::staging::{
    equal_ratio_fraction, equal_ratio_stage_ratio_from_log, halving_applies,
    isentropic_references_halving, isothermal_reference_quality, InterstagePressure, Sum,
    TrainTotals,
};
use crate::steady::{SteadyState, SteadyStateConfig, SteadyStateDetector};
use crate::units::{Kelvin, PressureAbs};

/// What a stage is.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StageKind<T> {
    /// A gas compressor stage.
    Compressor,
    /// A pump for a liquid or dense phase (only at the end of a train).
    Pump {
        /// Liquid density, kg/m3.
        density: T,
        /// Pump efficiency, (0, 1].
        efficiency: T,
    },
}

/// Configuration of one stage.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StageConfig<T> {
    /// Compressor or pump.
    pub kind: StageKind<T>,
    /// Design suction pressure (used to check that stages chain).
    pub design_suction_pressure: PressureAbs<T>,
    /// Design discharge pressure.
    pub design_discharge_pressure: PressureAbs<T>,
    /// The cooler after this stage, if any.
    pub cooler: Option<CoolerConfig<T>>,
}

/// Configuration of a train: plain data, validated by [`Train::new`].
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TrainConfig<T, G, const N: usize> {
    /// Gas model of the compressed gas.
    pub gas: G,
    /// Stages in flow order.
    pub stages: [StageConfig<T>; N],
    /// Largest design pressure drop between a stage's discharge and the next
    /// stage's suction, as a fraction of the discharge pressure (coolers,
    /// separators, piping); in [0, 0.9].
    pub max_interstage_pressure_drop: T,
    /// Steady-state test tolerances.
    pub steady_state: SteadyStateConfig<T>,
}

/// Results of one stage.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum StageWork<T> {
    /// A compressor stage.
    Compressor(CompressorResult<T>),
    /// A pump stage.
    Pump(PumpResult<T>),
}

/// Results of one stage with its steady-state mark.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StageResult<T> {
    /// Work, efficiencies and power.
    pub work: StageWork<T>,
    /// Whether this scan's performance numbers were taken at steady state.
    pub steady_state: SteadyState<T>,
}

impl<T: Real> StageResult<T> {
    /// Pressure ratio of either kind of stage.
    pub fn pressure_ratio(&self) -> Measured<T> {
        match &self.work {
            StageWork::Compressor(c) => c.pressure_ratio,
            StageWork::Pump(p) => p.pressure_ratio,
        }
    }
    /// Actual (shaft) specific work of either kind of stage, J/kg.
    pub fn actual_work(&self) -> Measured<T> {
        match &self.work {
            StageWork::Compressor(c) => c.actual_work,
            StageWork::Pump(p) => p.shaft_work,
        }
    }
    /// Power of either kind of stage, W.
    pub fn power(&self) -> Measured<T> {
        match &self.work {
            StageWork::Compressor(c) => c.gas_power,
            StageWork::Pump(p) => p.power,
        }
    }
    /// The compressor results, if this is a compressor stage.
    pub fn compressor(&self) -> Option<&CompressorResult<T>> {
        match &self.work {
            StageWork::Compressor(c) => Some(c),
            StageWork::Pump(_) => None,
        }
    }
    /// The pump results, if this is a pump stage.
    pub fn pump(&self) -> Option<&PumpResult<T>> {
        match &self.work {
            StageWork::Compressor(_) => None,
            StageWork::Pump(p) => Some(p),
        }
    }
}

/// Everything one scan produced.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Snapshot<T, const N: usize> {
    /// Per stage.
    pub stages: [StageResult<T>; N],
    /// Per stage: the cooler after it (`None` if none is configured).
    pub coolers: [Option<CoolerResult<T>>; N],
    /// Per compressor stage except the last: interstage pressure against
    /// the equal-ratio optimum.
    pub interstage: [Option<InterstagePressure<T>>; N],
    /// Whole-train totals.
    pub totals: TrainTotals<T>,
    /// Scans processed since construction (wraps).
    pub scan_count: u32,
}

/// A validated train with its state.
///
/// `PUMPS` (default `true`) says whether the train may have pump stages.
/// A train type with `PUMPS = false` ([`CompressorTrain`]) refuses a pump
/// stage at construction (`stages[i].kind`) and does not link the pump
/// evaluation: on a device whose trains have only compressor stages (plant
/// air, most gas trains) that is less flash (measured on the controller
/// firmware of `ci/firmware`: 868 bytes on Cortex-M4F, 1,100 on Cortex-M0).
/// Its outputs are those of the same train with `PUMPS = true`, bit for bit
/// (a seeded test in `tests/edge_inputs.rs`).
#[derive(Clone, Debug)]
pub struct Train<T, G, const N: usize, const W: usize, const PUMPS: bool = true> {
    config: TrainConfig<T, G, N>,
    limits: Limits<T>,
    /// The gas model's Z without a supplied one (what a stage without a Z
    /// reading uses), for the totals.
    configured_z: T,
    compressor_stages: u8,
    /// 1/(compressor stages): the exponent of the equal-ratio stage ratio
    /// r^(1/stages) (a constant of the train).
    equal_ratio_exponent: T,
    /// The compressor stages' check thresholds from `limits` (which do not
    /// change after construction).
    stage_thresholds: StageThresholds<T>,
    /// The pressure and temperature limits as [`Real::positive_span`]
    /// bounds (constants of the train): the sensor boundary's range tests
    /// without the span computed per reading.
    reading_spans: [[T; 2]; 2],
    /// The compressor stages' dependency tables for the gas model's
    /// property inputs (rebuilt if a replaced model's inputs differ).
    stage_uses: StageUses,
    detectors: [SteadyStateDetector<T, W>; N],
    snapshot: Snapshot<T, N>,
    /// This scan's inputs after the sensor boundary: scratch that every
    /// update writes in full before reading (but for each stage's kept
    /// grading key, `StageSi::stage_settled`). Kept in the train, not on
    /// the stack: beside the stage evaluation's frames it set the update's
    /// stack peak (52 bytes per stage in f32).
    si: [StageSi<T>; N],
    /// The number of compressor stages as `T` (the Z mean's divisor and
    /// the staged reference's factor), a constant of the train.
    totals_stage_count: T,
    /// Whether the isentropic references take their one-exponential form
    /// (`staging::halving_applies`), a constant of the train.
    totals_halving: bool,
    /// Set by [`Train::gas_mut`], the one way to change the gas model
    /// after construction: the next update compares the model's property
    /// inputs with those `stage_uses` was built for (and rebuilds it if
    /// they differ). Without it, that comparison (a call) ran every scan.
    gas_touched: bool,
}

/// A train of compressor stages only (`PUMPS = false`): see [`Train`].
pub type CompressorTrain<T, G, const N: usize, const W: usize> = Train<T, G, N, W, false>;

impl<T: Real> StageResult<T> {
    /// What a train is built with until [`Train::reset_snapshot`] writes
    /// each stage's result in place: a constant (every value zero and good,
    /// never read), so the build stores it where it lives (a result of the
    /// first stage copied into every element was an array built on the
    /// stack and copied through `memcpy`).
    const PLACEHOLDER: Self = {
        let zero = Measured {
            value: T::ZERO,
            quality: Quality::Good,
        };
        StageResult {
            work: StageWork::Compressor(CompressorResult {
                pressure_ratio: zero,
                isentropic_discharge_temperature: zero,
                temperature_rise: zero,
                isentropic_head: zero,
                polytropic_head: zero,
                isothermal_head: zero,
                actual_work: zero,
                isentropic_efficiency: zero,
                polytropic_efficiency: zero,
                polytropic_exponent: zero,
                mass_flow: zero,
                gas_power: zero,
                work_above_isothermal: zero,
                power_above_isothermal: zero,
                compressibility: zero,
                k: zero,
                polytropic_method: crate::polytropic::PolytropicMethod::Schultz,
                gas_validity: crate::gas::Validity::IN_RANGE,
                condition: crate::stage::compressor::StageCondition::Normal,
            }),
            steady_state: SteadyState {
                steady: false,
                samples: 0,
                temperature_spread: T::ZERO,
                ratio_spread: T::ZERO,
            },
        }
    };

    /// Sets `self` to the result of `stage` before the first scan: every
    /// value bad, the steady state unknown. In place (a result returned by
    /// value was built on the stack and copied through `memcpy`); out of
    /// line: one copy of its stores serves every stage (configuration-time
    /// flash).
    #[inline(never)]
    fn reset_before_first_scan(&mut self, stage: &StageConfig<T>) {
        *self = Self::initial(stage);
    }

    /// [`StageResult::reset_before_first_scan`]'s value, inlined (where it is built in
    /// place with the rest of a train returned by value).
    #[inline(always)]
    fn initial(stage: &StageConfig<T>) -> Self {
        StageResult {
            work: match stage.kind {
                StageKind::Compressor => StageWork::Compressor(CompressorResult::bad()),
                StageKind::Pump { .. } => StageWork::Pump(PumpResult::bad()),
            },
            steady_state: SteadyState::unknown(),
        }
    }
}

impl<T: Real> CoolerResult<T> {
    /// Sets `out` to the result of the cooler after `stage` before the
    /// first scan: every value bad (`None` without a cooler). In place and
    /// out of line, as [`StageResult::reset_before_first_scan`].
    #[inline(never)]
    fn reset_before_first_scan(out: &mut Option<Self>, stage: &StageConfig<T>) {
        *out = Self::initial(stage);
    }

    /// [`CoolerResult::reset_before_first_scan`]'s value, inlined (as
    /// [`StageResult::initial`]).
    #[inline(always)]
    fn initial(stage: &StageConfig<T>) -> Option<Self> {
        stage.cooler.map(|_| CoolerResult::bad())
    }
}

/// Per-stage inputs after the sensor boundary, SI.
#[derive(Clone, Copy, Debug)]
struct StageSi<T> {
    p1: Measured<T>,
    t1: Measured<T>,
    p2: Measured<T>,
    t2: Measured<T>,
    flow: Measured<T>,
    flow_measured: bool,
    /// Supplied compressibility after the boundary, if any.
    z: Option<Measured<T>>,
    /// Not the boundary's (it never writes it; kept from scan to scan):
    /// from which grading key the nominal finish last wrote this stage's
    /// compressor result's qualities (`settled` of
    /// `evaluate_compressor_tabled`; [`NOT_SETTLED`] until then). Here,
    /// beside the readings the stage reads anyway: one base address
    /// fewer per stage than an array of its own, and in the padding
    /// after `flow_measured` (no byte more of state).
    stage_settled: u16,
}

/// A stage's values after the sensor boundary with the grading key's
/// slots the boundary built ([`StageReadings::slot_key`]; the same key,
/// tested), so that the stage's evaluation does not gather it again from
/// the six qualities (measured on Cortex-M4F: 9 instructions fewer for
/// the 4-stage update, whose qualities were kept on the stack for it).
struct Keyed<'a, T> {
    si: &'a StageSi<T>,
    key: u16,
}

impl<T: Real> StageReadings<T> for Keyed<'_, T> {
    #[inline(always)]
    fn readings(&self) -> [Measured<T>; 5] {
        self.si.readings()
    }
    #[inline(always)]
    fn compressibility(&self) -> Option<(T, Quality)> {
        self.si.compressibility()
    }
    #[inline(always)]
    fn slot_key(&self) -> u16 {
        self.key
    }
}

/// The stage evaluation reads the boundary's values in place.
impl<T: Real> StageReadings<T> for StageSi<T> {
    #[inline(always)]
    fn readings(&self) -> [Measured<T>; 5] {
        [self.p1, self.p2, self.t1, self.t2, self.flow]
    }
    #[inline(always)]
    fn compressibility(&self) -> Option<(T, Quality)> {
        self.z.map(|z| (z.value, z.quality))
    }
}

impl<T: Real> StageSi<T> {
    /// The scratch before the first scan: every bit zero. Never read (every
    /// update writes the scratch in full before reading it), so any value
    /// does, but for the kept grading key, which must start as
    /// [`NOT_SETTLED`] (0); an all-zero constant lets the construction clear the array with
    /// one call instead of storing every field of every stage (start-up
    /// flash).
    const CLEARED: Self = {
        let zero = Measured {
            value: T::ZERO,
            quality: Quality::Good,
        };
        StageSi {
            p1: zero,
            t1: zero,
            p2: zero,
            t2: zero,
            flow: zero,
            flow_measured: false,
            z: Some(zero),
            stage_settled: NOT_SETTLED,
        }
    };
}

/// Pump liquid density range, kg/m3: from liquid hydrogen (about 71) to
/// brines and dense liquids (common practice; mercury is out of scope).
pub const PUMP_DENSITY_RANGE: (f64, f64) = (50.0, 3000.0);
/// Coolant specific heat range, J/(kg K): from oils and air (about 1000) to
/// water (4180) and liquid ammonia (about 4700) (common practice).
pub const COOLANT_CP_RANGE: (f64, f64) = (500.0, 6000.0);

fn validate_stages<T: Real, const N: usize, const PUMPS: bool>(
    stages: &[StageConfig<T>; N],
    max_drop: T,
    limits: &Limits<T>,
) -> Result<u8, ConfigError> {
    check_range("max_interstage_pressure_drop", max_drop, 0.0, 0.9)?;
    let mut compressors: u8 = 0;
    let mut seen_pump = false;
    let mut previous_discharge: Option<T> = None;
    for (i, s) in stages.iter().enumerate() {
        check_stage::<T, PUMPS>(s, previous_discharge, seen_pump, max_drop, limits)
            .map_err(|e| e.at(i))?;
        previous_discharge = Some(s.design_discharge_pressure.pa());
        match s.kind {
            // A train without pump stages has refused one already: every
            // stage that passed is a compressor (its kind not read again).
            _ if !PUMPS => compressors = compressors.saturating_add(1),
            StageKind::Compressor => compressors = compressors.saturating_add(1),
            StageKind::Pump { .. } => seen_pump = true,
        }
    }
    if compressors == 0 {
        return Err(ConfigError::new(
            "stages",
            Problem::Inconsistent {
                with: "the rule that a train has at least one compressor stage",
            },
        ));
    }
    Ok(compressors)
}

/// The checks of one stage of [`validate_stages`] (its refusal without the
/// stage index, which the caller adds): after the stage before it
/// (`previous_discharge`, its design discharge pressure) and any pump
/// (`seen_pump`), in a train that allows pump stages or not (`PUMPS`: the
/// train's; a compile-time parameter, so that a train without pump stages
/// does not link the pump stage's checks). Out of line: one copy of the
/// checks, however the loop over the stages is unrolled (configuration-time
/// flash; an inlining hint instead inlined a copy per stage of the
/// `controller` firmware's opaque configuration: 528 B more flash).
#[inline(never)]
fn check_stage<T: Real, const PUMPS: bool>(
    s: &StageConfig<T>,
    previous_discharge: Option<T>,
    seen_pump: bool,
    max_drop: T,
    limits: &Limits<T>,
) -> Result<(), ConfigError> {
    let p1 = s.design_suction_pressure.pa();
    let p2 = s.design_discharge_pressure.pa();
    // Design pressures inside the sensor boundary (a design point the
    // boundary would call bad cannot be right).
    let (lo, hi) = (limits.min_pressure, limits.max_pressure);
    // `lo <= x <= hi` for finite bounds (NaN and the infinities outside).
    let within = |x: T, lo: T, hi: T| x >= lo && x <= hi;
    // The range checks in their order: the first that refuses gives
    // (field, value, min, max), and one refusal serves them all
    // ([`crate::error::refusal`]: not finite, or out of `[min, max]`; the
    // same errors as a `check_positive` or `check_range` each, with one
    // copy of the refusal's code: configuration-time flash).
    let (field, value, min, max) = 'refused: {
        if !crate::surge::positive_finite(p1) {
            break 'refused ("stages.design_suction_pressure", p1, 0.0, f64::INFINITY);
        }
        if !within(p1, lo, hi) {
            break 'refused (
                "stages.design_suction_pressure",
                p1,
                lo.to_f64(),
                hi.to_f64(),
            );
        }
        if !within(p2, lo, hi) {
            break 'refused (
                "stages.design_discharge_pressure",
                p2,
                lo.to_f64(),
                hi.to_f64(),
            );
        }
        if !(p2 > p1) {
            return Err(ConfigError::new(
                "stages.design_discharge_pressure",
                Problem::NotAbove {
                    other: "stages.design_suction_pressure",
                },
            ));
        }
        if let Some(prev) = previous_discharge {
            let lowest = prev * (T::ONE - max_drop);
            if p1 > prev || p1 < lowest {
                return Err(ConfigError::new(
                    "stages.design_suction_pressure",
                    Problem::Inconsistent {
                        with: "previous stage's design_discharge_pressure and max_interstage_pressure_drop",
                    },
                ));
            }
        }
        match s.kind {
            StageKind::Compressor => {
                if seen_pump {
                    return Err(ConfigError::new(
                        "stages.kind",
                        Problem::Inconsistent {
                            with: "a pump before it (pumps may only end a train)",
                        },
                    ));
                }
            }
            StageKind::Pump {
                density,
                efficiency,
            } => {
                if !PUMPS {
                    return Err(ConfigError::new(
                        "stages.kind",
                        Problem::Inconsistent {
                            with:
                                "a train type without pump stages (its `PUMPS` parameter is false)",
                        },
                    ));
                }
                let (d_lo, d_hi) = PUMP_DENSITY_RANGE;
                if !within(density, T::of(d_lo), T::of(d_hi)) {
                    break 'refused ("stages.pump.density", density, d_lo, d_hi);
                }
                // In (0, 1]: refused as out of [0, 1].
                if !(crate::surge::positive_finite(efficiency) && efficiency <= T::ONE) {
                    break 'refused ("stages.pump.efficiency", efficiency, 0.0, 1.0);
                }
            }
        }
        if let Some(c) = s.cooler {
            let (c_lo, c_hi) = COOLANT_CP_RANGE;
            if !within(c.coolant_cp, T::of(c_lo), T::of(c_hi)) {
                break 'refused ("stages.cooler.coolant_cp", c.coolant_cp, c_lo, c_hi);
            }
        }
        return Ok(());
    };
    Err(refusal(field, T::is_finite(value), min, max))
}

/// The train of a validated configuration (`Train<T, G, N, W>` in the
/// `impl` where it is expanded), its snapshot's stage and cooler results
/// given, and the function that makes its stage dependency table from the
/// gas model's property inputs: the one build of [`Train::with_limits`] and [`Train::new_in`]. A
/// macro, not a function: the train is built where the caller writes it (a
/// function's result was copied, a whole train, in `Train::with_limits`).
macro_rules! built_train {
    ($config:expr, $limits:expr, $compressor_stages:expr, $stages:expr, $coolers:expr,
     $stage_uses:expr, $detectors:expr) => {{
        let config = $config;
        let limits = $limits;
        let compressor_stages: u8 = $compressor_stages;
        let configured_z = config
            .gas
            .path(T::of(1e5), T::of(288.15), T::of(2e5), T::of(288.15), None)
            .z;
        let stage_uses = $stage_uses(config.gas.property_inputs());
        let equal_ratio_exponent = equal_ratio_fraction(u32::from(compressor_stages), 0);
        let stage_thresholds = StageThresholds::of(&limits);
        let reading_spans = limits.reading_spans();
        Train {
            config,
            limits,
            reading_spans,
            configured_z,
            compressor_stages,
            equal_ratio_exponent,
            stage_thresholds,
            stage_uses,
            detectors: $detectors,
            snapshot: Snapshot {
                stages: $stages,
                coolers: $coolers,
                interstage: [None; N],
                totals: TrainTotals::bad(compressor_stages),
                scan_count: 0,
            },
            si: [StageSi::CLEARED; N],
            totals_stage_count: T::from_u32(u32::from(compressor_stages)),
            totals_halving: halving_applies(compressor_stages),
            gas_touched: false,
        }
    }};
}

impl<T: Real, G: GasModel<T>, const N: usize, const W: usize, const PUMPS: bool>
    Train<T, G, N, W, PUMPS>
{
    /// Validates `config` and builds the train.
    ///
    /// `N` (stages) must be at least 1 and at most 255, and `W`
    /// (steady-state window, scans) at least 2; both are checked at compile
    /// time:
    ///
    /// ```compile_fail
    /// use polytrope::{gas::{IdealGas, AIR}, steady::SteadyStateConfig, train::{Train, TrainConfig}};
    /// let gas = IdealGas::<f32>::from_spec(&AIR, false, 1.0).unwrap();
    /// let cfg = TrainConfig { gas, stages: [], max_interstage_pressure_drop: 0.1, steady_state: SteadyStateConfig::default() };
    /// let _ = Train::<f32, _, 0, 8>::new(cfg); // N = 0 does not compile
    /// ```
    pub fn new(config: TrainConfig<T, G, N>) -> Result<Self, ConfigError> {
        Self::with_limits(config, Limits::default())
    }

    /// As [`Train::new`], with explicit sensor-boundary ranges and stated
    /// instrument accuracy ([`Limits`]; each field is checked against its
    /// documented range and a refusal names it, `limits.<field>`).
    pub fn with_limits(
        config: TrainConfig<T, G, N>,
        limits: Limits<T>,
    ) -> Result<Self, ConfigError> {
        let compressor_stages = Self::validate(&config, &limits)?;
        let stages = config.stages.map(|s| StageResult::initial(&s));
        let coolers = config.stages.map(|s| CoolerResult::initial(&s));
        // Built where it is returned (a train in a local, then returned,
        // was one more train-sized frame: the Cortex-M0 harness's stack
        // overflowed).
        Ok(built_train!(
            config,
            limits,
            compressor_stages,
            stages,
            coolers,
            StageUses::new,
            core::array::from_fn(SteadyStateDetector::staggered)
        ))
    }

    /// As [`Train::new`], built in place in `slot` (for a device whose RAM
    /// holds the train once: no copy of it is built on the stack and moved).
    /// On a refusal `slot` is left as it was.
    pub fn new_in(
        slot: &mut MaybeUninit<Self>,
        config: TrainConfig<T, G, N>,
    ) -> Result<&mut Self, ConfigError> {
        let limits = Limits::default();
        let compressor_stages = Self::validate(&config, &limits)?;
        // Every stage holds a placeholder and no cooler result until
        // `reset_snapshot` writes them in place (no array of them built on
        // the stack and moved).
        // The stages' configuration goes in one stage at a time, after the
        // train (written whole, the array was one 100-odd-byte copy through
        // `memcpy`; a stage is copied inline).
        let placeholder = StageConfig {
            kind: StageKind::Compressor,
            design_suction_pressure: PressureAbs::from_pa(T::ZERO),
            design_discharge_pressure: PressureAbs::from_pa(T::ZERO),
            cooler: None,
        };
        let train = slot.write(built_train!(
            TrainConfig {
                stages: [placeholder; N],
                ..config
            },
            limits,
            compressor_stages,
            [StageResult::PLACEHOLDER; N],
            [None; N],
            // Rebuilt in place below (`rebuild_stage_uses`): no table built
            // on the stack and copied.
            StageUses::unbuilt,
            // Staggered in place below (built by `staggered` inside the
            // train, each detector was a window-sized copy through `memcpy`).
            [const { SteadyStateDetector::unstaggered() }; N]
        ));
        for (d, s) in train.config.stages.iter_mut().zip(config.stages.iter()) {
            *d = *s;
        }
        for (stage, d) in train.detectors.iter_mut().enumerate() {
            d.init_staggered(stage);
        }
        train.reset_snapshot();
        train.rebuild_stage_uses();
        Ok(train)
    }

    /// Builds the compressor stages' dependency table for the gas model's
    /// property inputs in place (the construction's last step).
    #[inline(always)]
    fn rebuild_stage_uses(&mut self) {
        let inputs = self.config.gas.property_inputs();
        self.stage_uses.rebuild(inputs);
    }

    /// The checks of [`Train::with_limits`]: the number of compressor
    /// stages, or the refusal.
    #[inline(always)]
    fn validate(config: &TrainConfig<T, G, N>, limits: &Limits<T>) -> Result<u8, ConfigError> {
        const { assert!(N >= 1 && N <= 255, "a train needs 1 to 255 stages") };
        if let Some((field, min, max)) = limits.first_invalid() {
            return Err(ConfigError::out_of_range(field, min, max));
        }
        config.steady_state.validate()?;
        validate_stages::<T, N, PUMPS>(&config.stages, config.max_interstage_pressure_drop, limits)
    }

    /// Sets every stage's and cooler's result to its value before the
    /// first scan ([`StageResult::reset_before_first_scan`],
    /// [`CoolerResult::reset_before_first_scan`]), in place. An inlining
    /// hint ([`Train::new_in`] is its one caller; out of line it took
    /// 24 to 48 B more of the `controller` firmware's flash, as measured).
    #[inline]
    fn reset_snapshot(&mut self) {
        let snapshot = &mut self.snapshot;
        for ((r, c), s) in snapshot
            .stages
            .iter_mut()
            .zip(snapshot.coolers.iter_mut())
            .zip(self.config.stages.iter())
        {
            r.reset_before_first_scan(s);
            CoolerResult::reset_before_first_scan(c, s);
        }
    }

    /// The validated configuration.
    pub fn config(&self) -> &TrainConfig<T, G, N> {
        &self.config
    }

    /// The gas model, mutable: replace a Peng–Robinson composition between
    /// scans (a gas-chromatograph update) with
    /// [`crate::gas::PengRobinson::set_composition`], which validates it and
    /// recomputes the mixture constants without allocating. Only the gas
    /// changes; the stage configuration stays validated.
    pub fn gas_mut(&mut self) -> &mut G {
        self.gas_touched = true;
        &mut self.config.gas
    }

    /// The sensor-boundary ranges and stated accuracy in use.
    pub fn limits(&self) -> &Limits<T> {
        &self.limits
    }

    /// The last snapshot (all bad before the first scan).
    pub fn snapshot(&self) -> &Snapshot<T, N> {
        &self.snapshot
    }

    /// Processes one scan and returns the new snapshot.
    ///
    /// Never panics, never allocates; every number in the snapshot is finite
    /// and carries its quality.
    pub fn update(&mut self, scan: &Scan<T, N>) -> &Snapshot<T, N> {
        self.evaluate_stages(scan);
        self.evaluate_coolers(scan);
        self.evaluate_totals();
        self.snapshot.scan_count = self.snapshot.scan_count.wrapping_add(1);
        &self.snapshot
    }

    /// Sensor boundary of one stage: units stripped, impossible values
    /// bad, the flow inherited from upstream (`upstream_flow`, the stage
    /// before's) where the stage has none. Inlined into the stage's scan,
    /// which then reads the checked values where they are. Returns the
    /// slots' part of the stage's grading key (`slot_key` of the checked
    /// readings).
    #[inline(always)]
    fn boundary(
        limits: &Limits<T>,
        spans: &[[T; 2]; 2],
        s: &StageScan<T>,
        out: &mut StageSi<T>,
        upstream_flow: &mut Measured<T>,
    ) -> u16 {
        // The train's limits passed `Limits::first_invalid` at
        // construction (finite bounds): the `_valid` range checks give
        // the same result without a separate finiteness test.
        let (flow, flow_measured) = match s.mass_flow {
            Some(m) => (limits.mass_flow_valid(m), true),
            None => (*upstream_flow, false),
        };
        *upstream_flow = flow;
        // The pressure and temperature ranges as spans made at
        // construction (`Limits::reading_spans`: no span per reading).
        let [pressure, temperature] = *spans;
        // The grading key's slots (`slot_key`: P1, T1, P2, T2, flow, Z, two
        // bits each) gathered as each reading is checked, so that no
        // quality stays live for the key; returned for the stage's
        // evaluation (`Keyed`). A checked reading's bits are its own
        // quality's where it is accepted and the refused placeholder's
        // (`refused_quality`) otherwise, formed here rather than read from
        // the placeholder (measured on Cortex-M4F: 4 instructions fewer for
        // the 4-stage update, which no longer zero-extends the
        // placeholders' qualities).
        let q = |m: Measured<T>, slot: u32| u16::from(m.quality as u8) << (2 * slot);
        let checked = |m: Measured<T>, span: [T; 2], slot: u32| {
            let inside = m.quality.is_usable() && T::within_positive_span(m.value, span);
            let quality = if inside {
                m.quality
            } else {
                refused_quality(m.quality)
            };
            (within_span(m, span), (quality as u16) << (2 * slot))
        };
        // Field by field (every field written): each reading stored as
        // soon as it is checked, so few values are live at once.
        let (p1, mut key) = checked(s.suction_pressure.map(PressureAbs::pa), pressure, 0);
        out.p1 = p1;
        let (t1, bits) = checked(s.suction_temperature.map(Kelvin::kelvin), temperature, 1);
        out.t1 = t1;
        key |= bits;
        let (p2, bits) = checked(s.discharge_pressure.map(PressureAbs::pa), pressure, 2);
        out.p2 = p2;
        key |= bits;
        let (t2, bits) = checked(s.discharge_temperature.map(Kelvin::kelvin), temperature, 3);
        out.t2 = t2;
        key |= bits;
        out.flow = flow;
        key |= q(flow, 4);
        out.flow_measured = flow_measured;
        // Only the tag without a supplied Z (no placeholder value); no Z
        // counts as a good one in the key.
        match s.compressibility {
            Some(m) => {
                let z = compressibility(m);
                out.z = Some(z);
                key |= q(z, 5);
            }
            None => out.z = None,
        }
        key
    }

    // The three phases stay separate functions: inlined into `update` their
    // locals share one frame and the stack peak is their sum, not their max.
    #[inline(never)]
    fn evaluate_stages(&mut self, scan: &Scan<T, N>) {
        // The gas model can have changed only through `gas_mut`.
        if self.gas_touched {
            self.gas_touched = false;
            if self.stage_uses.refresh(self.config.gas.property_inputs()) {
                // The kept qualities were graded with the table replaced.
                for s in &mut self.si {
                    s.stage_settled = NOT_SETTLED;
                }
            }
        }
        let si = &mut self.si;
        let parts = self
            .config
            .stages
            .iter()
            .zip(scan.stages.iter())
            .zip(si.iter_mut())
            .zip(self.detectors.iter_mut())
            .zip(self.snapshot.stages.iter_mut());
        let mut upstream_flow = Measured::bad();
        for ((((cfg, raw), s), detector), out) in parts {
            let key = Self::boundary(
                &self.limits,
                &self.reading_spans,
                raw,
                s,
                &mut upstream_flow,
            );
            let flow = if s.flow_measured { Some(s.flow) } else { None };
            // The ratio and temperature the stage's detector gets. The
            // stage's kind read from its result's variant, which
            // `Train::new` set from the same (immutable) configuration: one
            // test, and a compressor stage's scan does not read its
            // configuration.
            let (ratio, temperature) = if let StageWork::Compressor(c) = &mut out.work {
                // The boundary's values read in place (no `CompressorInputs`
                // copy), the result written in place: building one and
                // copying it costs a ~124-byte memcpy per stage on the
                // device.
                let mut settled = s.stage_settled;
                evaluate_compressor_tabled(
                    &self.config.gas,
                    &Keyed { si: &*s, key },
                    &self.stage_thresholds,
                    Some(&self.stage_uses),
                    c,
                    &mut settled,
                );
                s.stage_settled = settled;
                (c.pressure_ratio, s.t2)
            } else {
                // Out of line: see `pump_stage`. A train without pump
                // stages refused any at construction (`check_stage`) and its
                // stage kinds are immutable, so this arm is never taken there
                // and `PUMPS` removes it, and the pump code with it, at
                // compile time.
                let ratio = match cfg.kind {
                    StageKind::Pump {
                        density,
                        efficiency,
                    } if PUMPS => pump_stage(
                        &self.config.gas,
                        &self.limits,
                        [density, efficiency],
                        s,
                        out,
                    ),
                    _ => Measured::bad(),
                };
                // A pump has no meaningful discharge temperature: a
                // constant stands in for it on every scan (the stage kind is
                // immutable), so its window's spread is 0, as an empty
                // window's (what the general update gives without a
                // temperature), and the compressor's update serves (one
                // inlined copy).
                (ratio, Measured::good(T::ZERO))
            };
            // The configuration passed `SteadyStateConfig::validate` in
            // `Train::validate` (every constructor) and is immutable; every
            // stage's detector gets a temperature on every scan (the stage
            // kind is immutable too).
            out.steady_state =
                detector.update_compressor(&self.config.steady_state, ratio, temperature, flow);
        }
    }

    #[inline(never)]
    fn evaluate_coolers(&mut self, scan: &Scan<T, N>) {
        let si = &self.si;
        let cp_inputs = self.config.gas.property_inputs();
        let stages = &self.snapshot.stages;
        // The configurations and results by iterator, the scan's stage by
        // index (measured: fewer instructions than an iterator for every
        // array or an index for every array, whose registers the loop then
        // kept on the stack).
        let parts = self
            .config
            .stages
            .iter()
            .zip(self.snapshot.coolers.iter_mut());
        for (i, (cfg, out)) in parts.enumerate() {
            let Some(raw_stage) = scan.stages.get(i) else {
                continue;
            };
            // Without a cooler the result is `None`, as set at construction
            // (`CoolerResult::before_first_scan`) and never changed: not
            // rewritten per scan.
            let (Some(cooler_cfg), Some(s)) = (cfg.cooler, si.get(i)) else {
                continue;
            };
            let next = si.get(i + 1);
            // The next stage's rise exists only if a compressor follows:
            // after the last stage or before a pump it does not apply.
            // Read where it is stored (not held across the evaluation).
            let next_rise = || match stages.get(i + 1) {
                Some(st) => st
                    .compressor()
                    .map_or(Measured::not_applicable(), |c| c.temperature_rise),
                None => Measured::not_applicable(),
            };
            let Some(raw) = &raw_stage.cooler else {
                *out = Some(CoolerResult {
                    next_stage_temperature_rise: next_rise(),
                    ..CoolerResult::bad()
                });
                continue;
            };
            let limits = &self.limits;
            let temperature = |m: Measured<Kelvin<T>>| {
                reading_within(
                    m.map(Kelvin::kelvin),
                    limits.min_temperature,
                    limits.max_temperature,
                )
            };
            // The inputs' qualities packed as each is produced (one register
            // instead of nine live qualities): see `evaluate_cooler_packed`.
            let mut packed = packed_quality(s.t2.quality, I_TIN)
                | packed_quality(s.p2.quality, I_PIN)
                | packed_quality(s.flow.quality, I_FLOW);
            let gas_out_p = match raw.gas_outlet_pressure {
                Some(p) => reading_within(
                    p.map(PressureAbs::pa),
                    limits.min_pressure,
                    limits.max_pressure,
                ),
                None => next.map_or(Measured::bad(), |n| n.p1),
            };
            packed |= packed_quality(gas_out_p.quality, I_POUT);
            let tout = temperature(raw.gas_outlet_temperature);
            packed |= packed_quality(tout.quality, I_TOUT);
            // Enthalpy drop on the stage's basis (same model, same supplied
            // Z), so stage power and cooler duty balance; at a nominal
            // temperature where one is missing (the rule marks what used it).
            let nominal = T::of(288.15);
            let t_in = if s.t2.quality.is_usable() {
                s.t2.value
            } else {
                nominal
            };
            let t_out = if tout.quality.is_usable() {
                tout.value
            } else {
                t_in
            };
            let (z, q_z) = match s.z {
                Some(m) if m.quality.is_usable() => (Some(m.value), m.quality),
                Some(m) => (None, m.quality.worst(Quality::Bad)),
                None => (None, Quality::Good),
            };
            let (drop, validity) =
                self.config
                    .gas
                    .enthalpy_drop(s.p2.value, t_in, gas_out_p.value, t_out, z);
            // The model's validity counts where its states were evaluated at
            // usable inputs (otherwise the outputs using the bad input are
            // bad by their own slots).
            let states_ok = packed & (I_PIN | I_POUT | I_TIN | I_TOUT) == 0;
            let q_model = if states_ok {
                validity.quality
            } else {
                Quality::Good
            };
            let gas_enthalpy_drop = if T::is_finite(drop) {
                Measured::derived(drop, q_model.worst(q_z))
            } else {
                Measured::bad()
            };
            packed |= packed_quality(gas_enthalpy_drop.quality, I_DH);
            let coolant_in = temperature(raw.coolant_inlet_temperature);
            packed |= packed_quality(coolant_in.quality, I_TC);
            let coolant_out = raw
                .coolant_outlet_temperature
                .map_or(Measured::bad(), temperature);
            packed |= packed_quality(coolant_out.quality, I_TCO);
            let coolant_flow = raw.coolant_mass_flow.map_or(Measured::bad(), |m| {
                reading_within(m, T::ZERO, limits.max_mass_flow)
            });
            packed |= packed_quality(coolant_flow.quality, I_MC);
            let inputs = CoolerInputs {
                gas_inlet_temperature: s.t2,
                gas_outlet_temperature: tout,
                coolant_inlet_temperature: coolant_in,
                coolant_outlet_temperature: coolant_out,
                gas_inlet_pressure: s.p2,
                gas_outlet_pressure: gas_out_p,
                gas_mass_flow: s.flow,
                coolant_mass_flow: coolant_flow,
                gas_enthalpy_drop,
                coolant_cp: cooler_cfg.coolant_cp,
            };
            // In place, as for the stages (saves a ~92-byte copy).
            let r = out.get_or_insert_with(CoolerResult::bad);
            let cp_fit = self.config.gas.fit_quality(t_in, t_out);
            evaluate_cooler_packed::<T, true>(&inputs, packed, limits, cp_inputs, cp_fit, r);
            r.next_stage_temperature_rise = next_rise();
        }
    }

    /// Whole-train totals. Each total uses exactly: the sums, the stage
    /// outputs they add; the overall ratio and the interstage optimum, the
    /// first suction and last compressor discharge pressures; the ideal
    /// references, those, the first suction temperature and every
    /// compressor stage's Z (supplied, or the configured one).
    #[inline(never)]
    fn evaluate_totals(&mut self) {
        let si = &self.si;
        let nc = self.compressor_stages;
        let mut totals = TrainTotals::bad(nc);
        // The sums without counts: the train has `nc` compressor stages, at
        // least one (`validate_stages`), each a `StageWork::Compressor` slot
        // (set at construction from the same configuration), so each
        // compressor sum has `nc` terms and its total is never the
        // placeholder of an empty sum ([`Sum::get`]); the pumps are the
        // other `N - nc` stages.
        // The compressor sums' values, and their qualities as the OR of
        // the terms' (`Quality` as its discriminant): while every term is
        // good (0) or uncertain (1) the OR is the worst of them, one
        // instruction a term instead of a compare and a select; a bad or
        // not-applicable term (an OR above one) sends the qualities to
        // `worsen_by_stage`, which takes the worst of each.
        let mut work = T::ZERO;
        let mut comp_power = T::ZERO;
        let mut staged_s = T::ZERO;
        let mut z_total = T::ZERO;
        let (mut q_work, mut q_power, mut q_staged, mut q_z) = (0_u8, 0_u8, 0_u8, 0_u8);
        let mut pump_power = Sum::new();
        let configured_z = self.configured_z;
        for (st, s) in self.snapshot.stages.iter().zip(si.iter()) {
            match &st.work {
                StageWork::Compressor(c) => {
                    // The stage's Z input, whatever its evaluation reached
                    // (not the placeholder of an early return). Without a
                    // supplied one the configured Z (good) and a 4 into the
                    // quality OR, a bit no quality has, cleared below: the
                    // `Option`'s own tag byte, so no select of it.
                    let (z, q) = match s.z {
                        Some(z) => (z.value, z.quality as u8),
                        None => (configured_z, 4),
                    };
                    z_total += z;
                    q_z |= q;
                    work += c.actual_work.value;
                    q_work |= c.actual_work.quality as u8;
                    comp_power += c.gas_power.value;
                    q_power |= c.gas_power.quality as u8;
                    staged_s += c.isentropic_head.value;
                    q_staged |= c.isentropic_head.quality as u8;
                }
                StageWork::Pump(p) => pump_power.add_term(p.power),
            }
        }
        let q_z = q_z & 3;
        // Every term good or uncertain: each OR is 0 or 1, the
        // discriminant of the worst (`& 1` lets the optimiser see that).
        let usable = q_work | q_power | q_staged | q_z <= 1;
        let [q_work, q_power, q_staged, q_z] = if usable {
            [
                usable_of_or(q_work),
                usable_of_or(q_power),
                usable_of_or(q_staged),
                usable_of_or(q_z),
            ]
        } else {
            let mut q = [Quality::Good; 4];
            for (st, s) in self.snapshot.stages.iter().zip(si.iter()) {
                worsen_by_stage(&mut q, st, s);
            }
            q
        };
        let sum = |value: T, quality: Quality| Sum {
            value,
            quality,
            count: 0,
        };
        let work = sum(work, q_work);
        let comp_power = sum(comp_power, q_power);
        let staged_s = sum(staged_s, q_staged);
        let z_sum = sum(z_total, q_z);
        let pumps = usize::from(nc) < N;
        let z_sum = if HARD_FLOAT
            && usable
            && T::all_finite(&[work.value, comp_power.value, staged_s.value, z_sum.value])
        {
            // One finiteness test for the four (the common case; with an
            // FPU, where `Real::all_finite` is one sum, else no saving):
            // with usable qualities each sum is then kept as it is, as
            // `Sum::total` would.
            totals.compressor_work = Measured::new(work.value, work.quality);
            totals.compressor_power = Measured::new(comp_power.value, comp_power.quality);
            totals.measured_staged_isentropic_work =
                Measured::new(staged_s.value, staged_s.quality);
            Measured::new(z_sum.value, z_sum.quality)
        } else {
            totals.compressor_work = work.total();
            totals.compressor_power = comp_power.total();
            totals.measured_staged_isentropic_work = staged_s.total();
            z_sum.total()
        };
        // The sums are final: stored now, so that they are not held across
        // the logarithm and exponentials below (the other fields are
        // stored by `store_references` on every way out). The stage count
        // was stored at construction (`TrainTotals::bad`) and never
        // changes; so was the pump power's placeholder, which stays without
        // pumps.
        let out = &mut self.snapshot.totals;
        if pumps {
            totals.pump_power = pump_power.total();
            let mut all_power = comp_power;
            all_power.add_term(totals.pump_power);
            totals.total_power = all_power.total();
            out.pump_power = totals.pump_power;
        } else {
            // Without pumps the total is the compressor sum's.
            totals.total_power = totals.compressor_power;
        }
        out.compressor_work = totals.compressor_work;
        out.compressor_power = totals.compressor_power;
        out.total_power = totals.total_power;
        out.measured_staged_isentropic_work = totals.measured_staged_isentropic_work;
        let w = totals.compressor_work;
        let ms = totals.measured_staged_isentropic_work;

        // Interstage entries exist for the compressor stages but the last
        // (the loop below writes each of them on every scan); the others
        // keep the `None` of the construction (`nc` is a constant).
        // `nc` is at least one (`validate_stages`); were it zero, the
        // wrapped index would find no stage below (no panic either way).
        let last = usize::from(nc).wrapping_sub(1);
        let (Some(first), Some(last_c)) = (si.first(), si.get(last)) else {
            store_references(&mut self.snapshot.totals, &totals);
            return;
        };
        // The OR of the two discriminants: the worst of the two where both
        // are usable (`usable_of_or`), above one (not usable) otherwise, and
        // only a usable one is used below.
        let q_or = first.p1.quality as u8 | last_c.p2.quality as u8;
        let q_ratio = if q_or <= 1 {
            usable_of_or(q_or)
        } else {
            Quality::Bad
        };
        let ratio = last_c.p2.value / first.p1.value;
        // Compared only when usable: both pressures then passed the sensor
        // boundary (positive, finite), so the ratio is not NaN and
        // `Real::greater_not_nan` is the float compare (on the bit patterns
        // without an FPU).
        let q_ratio =
            if q_ratio.is_usable() && T::greater_not_nan(ratio, self.limits.max_overall_ratio) {
                Quality::Bad
            } else {
                q_ratio
            };
        // Interstage entries exist for every compressor stage but the last.
        // The equal-ratio optima walk up from the first suction by the
        // stage ratio r^(1/stages) (one exponential for all).
        let optimum_ok = q_ratio.is_usable() && T::greater_not_nan(ratio, T::ONE);
        // ln of the overall ratio once, for the interstage optimum and the
        // ideal references.
        let ln_overall = if optimum_ok { T::ln(ratio) } else { T::ZERO };
        let stage_ratio = if optimum_ok && last > 0 {
            equal_ratio_stage_ratio_from_log(ln_overall, self.equal_ratio_exponent)
        } else {
            T::ONE
        };
        let mut opt = first.p1.value;
        let entries = si
            .iter()
            .zip(self.snapshot.interstage.iter_mut())
            .take(last);
        if optimum_ok {
            for (s, out) in entries {
                // Finite without a test: with validated limits the first
                // suction is in [1e-3, 1e10] Pa and the ratio (usable, so
                // at most `max_overall_ratio` <= 1e5) above one, so the
                // optima lie between the first suction and about the last
                // discharge, and the deviation's divisor is at least 1e-3;
                // the qualities are usable (`optimum_ok`, `is_usable`), so
                // the worst of two is their discriminants' OR.
                opt = opt * stage_ratio;
                let deviation = if s.p2.quality.is_usable() {
                    Measured::new(
                        s.p2.value / opt - T::ONE,
                        usable_of_or(q_ratio as u8 | s.p2.quality as u8),
                    )
                } else {
                    refused_deviation()
                };
                *out = Some(InterstagePressure {
                    measured: s.p2,
                    optimum: Measured::new(opt, q_ratio),
                    deviation,
                });
            }
        } else {
            for (s, out) in entries {
                *out = Some(InterstagePressure {
                    measured: s.p2,
                    optimum: Measured::bad(),
                    deviation: Measured::bad(),
                });
            }
        }
        if !optimum_ok {
            store_references(&mut self.snapshot.totals, &totals);
            return;
        }
        // Finite without a test (both pressures in the validated limits,
        // so at most 1e10 / 1e-3) and usable here: `derived` would keep it.
        totals.overall_pressure_ratio = Measured::new(ratio, q_ratio);
        let z_mean = z_sum;
        // The worst of four as their discriminants' OR: at most one (then
        // the worst, `usable_of_or`) exactly when all four are usable, and
        // only a usable `q_ref` is used.
        let q_or = q_ratio as u8
            | first.t1.quality as u8
            | z_mean.quality as u8
            | self.config.gas.fit_quality(first.t1.value, first.t1.value) as u8;
        let q_ref = usable_of_or(q_or);
        if q_or > 1 {
            store_references(&mut self.snapshot.totals, &totals);
            return;
        }
        let t1 = first.t1.value;
        // The whole-train references use the mean of the stages' Z, so they
        // compare like with like.
        // Every compressor stage adds its Z, so the count is `nc` (at least
        // one here). For a power of two, 1/nc (`equal_ratio_exponent`) is
        // exact and the product equals the quotient bit for bit (both the
        // correctly rounded z/nc): a multiplication instead of a division
        // where both are library calls (Cortex-M0).
        let z_mean = if !HARD_FLOAT && nc.is_power_of_two() {
            z_mean.value * self.equal_ratio_exponent
        } else {
            z_mean.value / self.totals_stage_count
        };
        let props = self
            .config
            .gas
            .path(first.p1.value, t1, last_c.p2.value, t1, Some(z_mean));
        let (single, staged) = isentropic_references_halving(
            props.z,
            props.gas_constant,
            t1,
            ln_overall,
            props.k,
            nc,
            self.totals_stage_count,
            self.equal_ratio_exponent,
            self.totals_halving,
        );
        // The isothermal reference through the gas model (the Gibbs energy
        // rise; Z·R·T·ln r for the ideal gas): the one definition the loss
        // ledger also starts from (it reads this row).
        let (iso, iso_validity) = self.config.gas.isothermal_work(
            first.p1.value,
            last_c.p2.value,
            ln_overall,
            t1,
            Some(z_mean),
        );
        let q_iso = q_ref.worst(isothermal_reference_quality(iso_validity));
        let ideal_saving = single - staged;
        if HARD_FLOAT && T::all_finite(&[iso, single, staged, ideal_saving]) {
            // One finiteness test for the four (the common case, with an
            // FPU as above): with a
            // usable `q_ref` and finite values, `Measured::derived` keeps
            // each value with its quality; the isothermal one is graded by
            // its quality alone.
            totals.isothermal_work = match q_iso {
                Quality::Good | Quality::Uncertain => Measured::new(iso, q_iso),
                _ => Measured::derived(iso, q_iso),
            };
            totals.single_stage_isentropic_work = Measured::new(single, q_ref);
            totals.ideal_staged_isentropic_work = Measured::new(staged, q_ref);
            totals.ideal_staging_saving = Measured::new(ideal_saving, q_ref);
        } else {
            totals.isothermal_work = Measured::derived(iso, q_iso);
            totals.single_stage_isentropic_work = Measured::derived(single, q_ref);
            totals.ideal_staged_isentropic_work = Measured::derived(staged, q_ref);
            totals.ideal_staging_saving = Measured::derived(ideal_saving, q_ref);
        }
        // A usable work is finite; a NaN `eta` (a NaN `iso`) gives a bad
        // efficiency whatever `q` is (`Measured::derived`).
        if w.quality.is_usable() && T::greater_not_nan(w.value, T::ZERO) {
            let eta = iso / w.value;
            // Above one (beyond rounding) the train did better than
            // isothermal from its first suction: possible only with
            // coolant colder than that suction; suspect, not good.
            let above = T::greater_not_nan(eta, T::ONE + efficiency_allowance::<T>());
            let q_iso_work = totals.isothermal_work.quality;
            // The common case by a branch: all three usable (the OR of the
            // discriminants, `above` as good or uncertain, at most one; then
            // the worst) and `eta` finite, where `Measured::derived` keeps
            // the value; else `efficiency_graded`, the same rule in full.
            let q_or = q_iso_work as u8 | w.quality as u8 | u8::from(above);
            totals.isothermal_efficiency = if q_or <= 1 && T::is_finite(eta) {
                Measured::new(eta, usable_of_or(q_or))
            } else {
                efficiency_graded(eta, q_iso_work, w.quality, above)
            };
        }
        if ms.quality.is_usable() {
            // Both usable: the worst is the OR.
            totals.staging_saving = Measured::derived(
                single - ms.value,
                usable_of_or(q_ref as u8 | ms.quality as u8),
            );
        }
        store_references(&mut self.snapshot.totals, &totals);
    }
}

/// A pump stage of [`Train::evaluate_stages`]: its result (its pressure
/// ratio returned for the stage's detector), out of line so that the pump
/// result's temporaries are not in the frame of the stage loop, whose
/// deepest call (a compressor stage's gas model) sets the scan's stack
/// (measured on a Cortex-M0: the Peng-Robinson 4+3 update 1,020 -> 948 B).
/// With an FPU too (measured on Cortex-M4F: kernel flash 56 B smaller, the
/// whole scan 10 instructions fewer, the 4+3 update's stack 416 -> 344 B).
#[inline(never)]
fn pump_stage<T: Real, G: GasModel<T>>(
    gas: &G,
    limits: &Limits<T>,
    [density, efficiency]: [T; 2],
    s: &StageSi<T>,
    out: &mut StageResult<T>,
) -> Measured<T> {
    let r = evaluate_pump_within(gas, density, efficiency, [s.p1, s.p2, s.t1, s.flow], limits);
    let ratio = r.pressure_ratio;
    out.work = StageWork::Pump(r);
    ratio
}

/// A cooler's own reading after the sensor boundary, for validated limits
/// (`lo` positive or `+0.0`, both finite): what [`Limits::temperature_valid`],
/// [`Limits::pressure_valid`] and [`Limits::mass_flow_valid`] give, by the
/// same float compares, the usable reading inside its range tested first
/// (one test fewer where almost every reading passes). With an FPU; always
/// inlined (measured: 24 instructions fewer for the three coolers of the
/// 4-stage train than those checks, about 100 more when left to LLVM).
#[cfg(not(all(target_arch = "arm", not(target_abi = "eabihf"))))]
#[inline(always)]
fn reading_within<T: Real>(m: Measured<T>, lo: T, hi: T) -> Measured<T> {
    // The range first, then the quality (measured: the other order cost
    // about 100 instructions more for the three coolers).
    let inside = m.value >= lo && m.value <= hi;
    if m.quality.is_usable() && inside {
        m
    } else if m.quality == Quality::NotApplicable {
        Measured::not_applicable()
    } else {
        Measured::bad()
    }
}

/// [`reading_within`] without an FPU: the form of those checks there (not
/// applicable first, the range on the bits by [`Real::within_nonnegative`]),
/// which measured cheaper on a Cortex-M0 than the reordered one.
#[cfg(all(target_arch = "arm", not(target_abi = "eabihf")))]
#[inline]
fn reading_within<T: Real>(m: Measured<T>, lo: T, hi: T) -> Measured<T> {
    if m.quality == Quality::NotApplicable {
        Measured::not_applicable()
    } else if T::within_nonnegative(m.value, lo, hi) && m.quality != Quality::Bad {
        m
    } else {
        Measured::bad()
    }
}

/// The deviation of an interstage pressure that is not usable: bad. Out of
/// line and cold, so that the usable one is a branch, not a select per
/// field (`Train::evaluate_totals`).
#[cold]
#[inline(never)]
fn refused_deviation<T: Real>() -> Measured<T> {
    Measured::bad()
}

/// The isothermal efficiency `eta` as `Measured::derived` grades it: with
/// the worst of the isothermal work's and the work's qualities, and
/// uncertain if `above` one beyond rounding. For `Train::evaluate_totals`
/// outside its common case; out of line and cold.
#[cold]
#[inline(never)]
fn efficiency_graded<T: Real>(
    eta: T,
    q_iso_work: Quality,
    q_work: Quality,
    above: bool,
) -> Measured<T> {
    let q = if above {
        Quality::Uncertain
    } else {
        Quality::Good
    };
    Measured::derived(eta, q_iso_work.worst(q_work).worst(q))
}

/// Worsens each compressor sum's quality in `q` (work, gas power,
/// isentropic head, Z, in that order) by the stage's term, for a compressor
/// stage (a pump adds to none of them): `Train::evaluate_totals` calls it
/// per stage when a term is neither good nor uncertain (the OR of the
/// discriminants is then not the worst). Out of line and cold (one copy of
/// the compares for all stages).
#[cold]
#[inline(never)]
fn worsen_by_stage<T: Real>(q: &mut [Quality; 4], st: &StageResult<T>, s: &StageSi<T>) {
    if let StageWork::Compressor(c) = &st.work {
        let z = s.z.map_or(Quality::Good, |z| z.quality);
        let terms = [
            c.actual_work.quality,
            c.gas_power.quality,
            c.isentropic_head.quality,
            z,
        ];
        for (q, t) in q.iter_mut().zip(terms) {
            *q = q.worst(t);
        }
    }
}

/// The worst of usable qualities from the OR of their discriminants
/// (`Quality as u8`): good (0) and uncertain (1) are the only usable ones,
/// so for them the OR is the largest, the worst. For `q` at most one
/// (`& 1` lets the optimiser see that the result is the discriminant).
#[inline(always)]
fn usable_of_or(q: u8) -> Quality {
    if q & 1 == 0 {
        Quality::Good
    } else {
        Quality::Uncertain
    }
}

/// Stores the totals' fields other than the sums (which
/// `Train::evaluate_totals` stores as soon as they are final).
#[inline(always)]
fn store_references<T: Real>(out: &mut TrainTotals<T>, t: &TrainTotals<T>) {
    out.overall_pressure_ratio = t.overall_pressure_ratio;
    out.isothermal_work = t.isothermal_work;
    out.isothermal_efficiency = t.isothermal_efficiency;
    out.single_stage_isentropic_work = t.single_stage_isentropic_work;
    out.ideal_staged_isentropic_work = t.ideal_staged_isentropic_work;
    out.staging_saving = t.staging_saving;
    out.ideal_staging_saving = t.ideal_staging_saving;
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Consistency check (the project's own grading key, two forms): the
    /// slots' key the sensor boundary gathers as it checks each reading
    /// equals [`slot_key`] of the checked readings (the form every other
    /// caller of the stage evaluation uses), for seeded random scans: every
    /// quality, values inside, outside and at the limits' bounds, zero,
    /// negative, infinite and NaN, a flow and a Z present or not, the
    /// default limits and narrower ones. (It fails with a slot's shift or a
    /// refused reading's bits wrong.)
    #[test]
    fn boundary_key_equals_the_key_of_its_readings() {
        type Tr = Train<f32, crate::gas::IdealGasConstantK<f32>, 1, 8>;
        let mut next = crate::xorshift32(0x5eed_0b0d);
        let qualities = [
            Quality::Good,
            Quality::Uncertain,
            Quality::Bad,
            Quality::NotApplicable,
        ];
        let narrow = Limits {
            min_pressure: 5e4,
            max_pressure: 2e5,
            min_temperature: 250.0,
            max_temperature: 400.0,
            ..Limits::default()
        };
        for limits in [Limits::<f32>::default(), narrow] {
            let spans = limits.reading_spans();
            let [p_lo, p_hi, t_lo, t_hi] = [
                limits.min_pressure,
                limits.max_pressure,
                limits.min_temperature,
                limits.max_temperature,
            ];
            let specials = [
                0.0,
                -0.0,
                -1.0,
                f32::INFINITY,
                f32::NEG_INFINITY,
                f32::NAN,
                p_lo,
                p_hi,
                t_lo,
                t_hi,
                f32::from_bits(p_hi.to_bits() + 1),
                f32::from_bits(t_lo.to_bits() - 1),
                1e5,
                300.0,
                2.0,
            ];
            let m = |next: &mut dyn FnMut() -> u32| {
                let r = next();
                let v = if r & 1 == 0 {
                    specials[(r >> 1) as usize % specials.len()]
                } else {
                    f32::from_bits(next())
                };
                Measured::new(v, qualities[(r >> 8) as usize % 4])
            };
            let mut seen_keys = std::collections::BTreeSet::new();
            for _ in 0..50_000 {
                let raw = StageScan {
                    suction_pressure: m(&mut next).map(PressureAbs::from_pa),
                    suction_temperature: m(&mut next).map(Kelvin::new),
                    discharge_pressure: m(&mut next).map(PressureAbs::from_pa),
                    discharge_temperature: m(&mut next).map(Kelvin::new),
                    mass_flow: (next() & 1 == 0).then(|| m(&mut next)),
                    compressibility: (next() & 1 == 0).then(|| m(&mut next)),
                    cooler: None,
                };
                let mut upstream = m(&mut next);
                let mut si = StageSi::<f32>::CLEARED;
                let key = Tr::boundary(&limits, &spans, &raw, &mut si, &mut upstream);
                assert_eq!(key, si.slot_key(), "{raw:?}");
                seen_keys.insert(key);
            }
            // Every quality of every slot was seen.
            let bits = seen_keys.iter().fold(0, |a, k| a | k);
            assert_eq!(bits, 0xfff);
        }
    }

    /// Consistency check (the project's own range checks, two forms): a
    /// cooler reading checked by `reading_within` equals what
    /// `Limits::temperature_valid`, `Limits::pressure_valid` and
    /// `Limits::mass_flow_valid` give (value bits and quality) for the
    /// default limits, every quality, the bounds and their neighbours,
    /// zeros of both signs, negative values, the infinities, NaN and seeded
    /// random bit patterns, in f32 and f64.
    #[test]
    fn cooler_reading_check_equals_the_limits_checks() {
        fn run<T: Real>(values: &[T], random: impl Fn(u32, u32) -> T) {
            let limits = Limits::<T>::default();
            let qualities = [
                Quality::Good,
                Quality::Uncertain,
                Quality::Bad,
                Quality::NotApplicable,
            ];
            let same = |a: Measured<T>, b: Measured<T>| {
                a.quality == b.quality && a.value.to_f64().to_bits() == b.value.to_f64().to_bits()
            };
            let mut next = crate::xorshift32(0x0bad_cafe);
            let check = |v: T| {
                for q in qualities {
                    let m = Measured::new(v, q);
                    let t = reading_within(m, limits.min_temperature, limits.max_temperature);
                    assert!(same(t, limits.temperature_valid(m)), "{v:?} {q:?}");
                    let p = reading_within(m, limits.min_pressure, limits.max_pressure);
                    assert!(same(p, limits.pressure_valid(m)), "{v:?} {q:?}");
                    let f = reading_within(m, T::ZERO, limits.max_mass_flow);
                    assert!(same(f, limits.mass_flow_valid(m)), "{v:?} {q:?}");
                }
            };
            for &v in values {
                check(v);
            }
            for _ in 0..20_000 {
                let (a, b) = (next(), next());
                check(random(a, b));
            }
        }
        let l32 = Limits::<f32>::default();
        let mut v32 = [0.0_f32; 26];
        let specials = [
            0.0,
            -0.0,
            1.0,
            -1.0,
            300.0,
            f32::INFINITY,
            f32::NEG_INFINITY,
            f32::NAN,
            -f32::NAN,
            f32::MIN_POSITIVE,
            f32::from_bits(1),
        ];
        let bounds = [
            l32.min_temperature,
            l32.max_temperature,
            l32.min_pressure,
            l32.max_pressure,
            l32.max_mass_flow,
        ];
        let near = bounds.iter().flat_map(|b| {
            [
                *b,
                f32::from_bits(b.to_bits() - 1),
                f32::from_bits(b.to_bits() + 1),
            ]
        });
        for (slot, v) in v32.iter_mut().zip(specials.into_iter().chain(near)) {
            *slot = v;
        }
        run::<f32>(&v32, |a, _| f32::from_bits(a));
        let v64 = v32.map(f64::from);
        run::<f64>(&v64, |a, b| {
            f64::from_bits(u64::from(a) << 32 | u64::from(b))
        });
    }

    /// Consistency check (the project's own quality order, `Quality::worst`,
    /// against the OR form the totals use): over every pair and triple of
    /// qualities, the OR of the discriminants is at most one exactly when
    /// all are usable, and then `usable_of_or` of it is the worst.
    #[test]
    fn or_of_usable_qualities_is_the_worst() {
        let all = [
            Quality::Good,
            Quality::Uncertain,
            Quality::Bad,
            Quality::NotApplicable,
        ];
        for a in all {
            for b in all {
                for c in all {
                    let or = a as u8 | b as u8 | c as u8;
                    let usable = a.is_usable() && b.is_usable() && c.is_usable();
                    assert_eq!(or <= 1, usable, "{a:?} {b:?} {c:?}");
                    if usable {
                        assert_eq!(usable_of_or(or), a.worst(b).worst(c), "{a:?} {b:?} {c:?}");
                    }
                }
            }
        }
    }
}
