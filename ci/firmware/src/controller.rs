//! One whole controller scan as a user's firmware runs it: the 12 fast
//! 4–20 mA channels, the 4-stage, 3-intercooler train fed by them, and one
//! surge-margin monitor per stage fed by the same channels. Measured as one
//! call by the harness (`full_scan`); the `controller` firmware's size minus
//! `empty` is the kernel flash everything here links.
//!
//! Wiring (an invented controller; demo data): per stage one suction
//! pressure, one discharge pressure and one suction flow-element differential
//! pressure transmitter (channels `3 i`, `3 i + 1`, `3 i + 2`). The train's
//! scan takes the filtered pressures (`ChannelOutput::pressure`); each surge
//! monitor takes the unfiltered values of the same three channels
//! (`ChannelOutput::raw_pressure`, `ChannelOutput::raw`), as the signal
//! front end advises for the protection path. Temperatures, mass flow,
//! compressibility and the cooler readings come with the committed scan (in
//! this invented controller a slower RTD scanner and a flow computer deliver
//! them already validated); the scan period is 20 ms.

use core::mem::MaybeUninit;

use polytrope::demo;
use polytrope::gas::{GasModel, IdealGasConstantK, CARBON_DIOXIDE};
use polytrope::signal::{Channel, ChannelConfig, InstrumentClass, SignalKind, Unit};
use polytrope::surge::{
    ConfiguredExponentMonitor, MapConditions, MonitorConfig, SurgeLine, SurgeLineConfig,
    SurgePoint, SurgeScan,
};
use polytrope::train::{CompressorTrain, Snapshot, StageConfig, TrainConfig};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::ConfigError;

use crate::codec::RawStage;

/// Compressor stages (and surge monitors) of the controller's train.
pub const SECTIONS: usize = 4;
/// 4–20 mA channels: three per stage.
pub const CHANNELS: usize = 3 * SECTIONS;
/// Scan period, ms.
pub const SCAN_MS: u32 = 20;
/// Scans run before measuring: channel windows full, rate filters settled
/// (4 τ), the steady-state window full.
pub const WARM_SCANS: usize = 13;

/// The train: the demo's first four stages, three intercoolers; compressor
/// stages only, so the pump evaluation is not linked (`CompressorTrain`).
pub type SectionTrain<G> = CompressorTrain<f32, G, SECTIONS, { demo::WINDOW }>;
/// One transmitter channel: 8-sample frozen window, 5-sample median.
pub type TransmitterChannel = Channel<f32, 8, 5>;
/// One surge-margin monitor: a 4-point line, the line's configured σ (no
/// measured-exponent mode: its code is not linked).
pub type SectionMonitor = ConfiguredExponentMonitor<f32, 4>;

/// Flow-element differential pressure over suction pressure of the invented
/// operating point (about 20 % above the surge line).
const FLOW_NUMBER: f32 = 0.026;

/// The controller's state: everything a scan reads and writes.
#[derive(Clone, Debug)]
pub struct Controller<G> {
    train: SectionTrain<G>,
    channels: [TransmitterChannel; CHANNELS],
    monitors: [SectionMonitor; SECTIONS],
    last_ms: Option<u32>,
}

/// What one scan hands on (the rest stays readable in the state).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ScanSummary {
    /// Train total gas power, W.
    pub total_power: f32,
    /// Surge margin per stage, -.
    pub margins: [f32; SECTIONS],
}

/// The controller's gas: the demo's CO2 as an ideal gas with constant k
/// and the configured Z (the ideal-gas path whose figures the budgets
/// track), as the constant-k type (`IdealGasConstantK`: the cp
/// polynomial's code is not linked).
pub fn ideal_gas() -> Result<IdealGasConstantK<f32>, ConfigError> {
    IdealGasConstantK::constant_k_from_spec(&CARBON_DIOXIDE, 1.0)
}

/// The train configuration: the demo's first four stages, the fourth
/// without its aftercooler, on `gas` (whatever gas the demo uses).
pub fn train_config<D, G>(
    demo: &TrainConfig<f32, D, { demo::STAGES }>,
    gas: G,
) -> TrainConfig<f32, G, SECTIONS> {
    const { assert!(SECTIONS <= demo::STAGES) };
    let mut stages: [_; SECTIONS] = core::array::from_fn(|i| demo.stages[i]);
    stages[SECTIONS - 1].cooler = None;
    TrainConfig {
        gas,
        stages,
        max_interstage_pressure_drop: demo.max_interstage_pressure_drop,
        steady_state: demo.steady_state,
    }
}

/// The first four stages of a committed scan, the fourth without cooler:
/// what the slower inputs deliver.
/// Decodes only those four stages (the fifth is never used: decoding the
/// whole scan and copying four of its stages took more flash than this).
pub fn section_scan(raw: &[RawStage; demo::STAGES]) -> polytrope::scan::Scan<f32, SECTIONS> {
    let mut slot = MaybeUninit::uninit();
    *section_scan_in(&mut slot, raw)
}

/// [`section_scan`] decoded into `slot`, in place (what the `controller`
/// firmware links: a scan built in a local and returned was copied into
/// the caller's, and each stage scan on its way into the array four times).
#[cfg(target_os = "none")]
#[inline(never)]
pub fn section_scan_in<'a>(
    slot: &'a mut MaybeUninit<polytrope::scan::Scan<f32, SECTIONS>>,
    raw: &[RawStage; demo::STAGES],
) -> &'a mut polytrope::scan::Scan<f32, SECTIONS> {
    const { assert!(SECTIONS <= demo::STAGES) };
    // SAFETY: `stages` points at the scan's array of `SECTIONS` stage
    // scans, valid for writes; each element is written (in place, by
    // `decode_stage_into`) before `assume_init_mut`, and `stages` is the
    // scan's only field.
    let scan = unsafe {
        let stages = core::ptr::addr_of_mut!((*slot.as_mut_ptr()).stages)
            .cast::<MaybeUninit<polytrope::scan::StageScan<f32>>>();
        for (i, r) in raw.iter().take(SECTIONS).enumerate() {
            crate::codec::decode_stage_into(&mut *stages.add(i), r);
        }
        slot.assume_init_mut()
    };
    scan.stages[SECTIONS - 1].cooler = None;
    scan
}

/// The same decoding on the host (the criterion bench includes this file
/// into the kernel package, which forbids `unsafe`): the stages decoded by
/// value and written into `slot`.
#[cfg(not(target_os = "none"))]
pub fn section_scan_in<'a>(
    slot: &'a mut MaybeUninit<polytrope::scan::Scan<f32, SECTIONS>>,
    raw: &[RawStage; demo::STAGES],
) -> &'a mut polytrope::scan::Scan<f32, SECTIONS> {
    const { assert!(SECTIONS <= demo::STAGES) };
    let mut stages = core::array::from_fn(|i| crate::codec::decode_stage::<f32>(&raw[i]));
    stages[SECTIONS - 1].cooler = None;
    slot.write(polytrope::scan::Scan { stages })
}

/// A transmitter of [`transmitter_config`] (the host build; the device
/// builds each in place, [`build_channels`]).
#[cfg(not(target_os = "none"))]
fn transmitter(
    id: u8,
    unit: Unit<f32>,
    range_high: f32,
) -> Result<TransmitterChannel, ConfigError> {
    TransmitterChannel::new(transmitter_config(id, unit, range_high))
}

/// A transmitter over `0..range_high` (SI) of kind `unit` (invented
/// settings: 0.1 % of span, 100 % of span per second plausible, 100 ms
/// low-pass, 500 ms hold).
fn transmitter_config(id: u8, unit: Unit<f32>, range_high: f32) -> ChannelConfig<f32> {
    ChannelConfig {
        id,
        signal: SignalKind::Current4To20,
        unit,
        range_low: 0.0,
        range_high,
        plausible_low: 0.01 * range_high,
        plausible_high: 1.05 * range_high,
        noise_floor: 1.0e-5 * range_high,
        instrument: InstrumentClass::FractionOfSpan(0.001),
        max_rate: range_high,
        filter_time_constant_s: 0.1,
        hold_ms: 500,
    }
}

/// The upper range value (SI) of transmitter `i` (per stage: suction
/// pressure, discharge pressure, flow-element Δp), from its stage's design
/// pressures. One channel at a time, where the channel is built (an array
/// of all twelve, formed first, was its own unrolled code).
fn channel_range(i: usize, stages: &[StageConfig<f32>; SECTIONS]) -> f32 {
    // Per kind: 2 · suction pressure, 1.5 · discharge pressure, and for the
    // flow element 2 · FLOW_NUMBER · 2 · suction pressure (its constant
    // factor formed first, as the expression always evaluated it: the same
    // bits).
    const FACTOR: [f32; 3] = [2.0, 1.5, 2.0 * FLOW_NUMBER * 2.0];
    let s = &stages[(i / 3) % SECTIONS];
    let p = if i % 3 == 1 {
        s.design_discharge_pressure
    } else {
        s.design_suction_pressure
    };
    FACTOR[i % 3] * p.pa()
}

/// Transmitter `i` of [`channel_range`]: every third one a Δp.
#[cfg(not(target_os = "none"))]
fn channel(
    i: usize,
    stages: &[StageConfig<f32>; SECTIONS],
) -> Result<TransmitterChannel, ConfigError> {
    transmitter(i as u8, channel_unit(i), channel_range(i, stages))
}

/// The unit of transmitter `i`: every third one a Δp.
fn channel_unit(i: usize) -> Unit<f32> {
    if i % 3 == 2 {
        Unit::DifferentialPressure
    } else {
        Unit::PressureAbs
    }
}

/// Builds every transmitter (transmitter `i` over `0..`[`channel_range`])
/// in `slots`, in place, one after the other. Out
/// of line and a loop: one copy of the construction for every channel (the
/// loop of [`Controller::build_in`] was unrolled into twelve calls).
#[cfg(target_os = "none")]
#[inline(never)]
fn build_channels(
    slots: &mut [MaybeUninit<TransmitterChannel>; CHANNELS],
    stages: &[StageConfig<f32>; SECTIONS],
) -> Result<(), ConfigError> {
    for (i, slot) in slots.iter_mut().enumerate() {
        TransmitterChannel::new_in(
            slot,
            transmitter_config(i as u8, channel_unit(i), channel_range(i, stages)),
        )?;
    }
    Ok(())
}

/// The invented surge line of every stage (map: CO2 near 1 bar, 293 K).
fn section_line() -> Result<SurgeLine<f32, 4>, ConfigError> {
    let p = |rpm: f32, q: f32, r: f32| SurgePoint {
        speed_rpm: rpm,
        suction_volume_flow: q,
        pressure_ratio: r,
        control_margin: 0.10,
    };
    let points = [
        p(7000.0, 1.45, 2.2),
        p(8000.0, 1.52, 2.6),
        p(9000.0, 1.60, 3.0),
        p(10000.0, 1.68, 3.4),
    ];
    SurgeLine::new(&SurgeLineConfig {
        points: &points,
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(1.0e5),
            suction_temperature: Kelvin::new(293.15),
            molar_mass: 28.96,
            compressibility: 1.0,
        },
        polytropic_exponent: 1.30,
        flow_coefficient: 0.04,
    })
}

/// The invented monitor settings of every stage (20 ms scan, 60 s
/// time-to-surge horizon, 50 ms rate filter).
const MONITOR: MonitorConfig<f32> = MonitorConfig {
    scan_period: 0.02,
    time_to_surge_horizon: 60.0,
    rate_filter_time: 0.05,
};

/// The monitor of every stage: [`section_line`], [`MONITOR`] (the host
/// build; the device builds each in place, [`build_monitors`]).
#[cfg(not(target_os = "none"))]
fn section_monitor() -> Result<SectionMonitor, ConfigError> {
    SectionMonitor::configured(section_line()?, MONITOR)
}

/// Builds the monitor of every stage ([`section_line`], [`MONITOR`]) in
/// `slots`, in place, one after the other. Out of line and a loop, as
/// [`build_channels`].
#[cfg(target_os = "none")]
#[inline(never)]
fn build_monitors(slots: &mut [MaybeUninit<SectionMonitor>; SECTIONS]) -> Result<(), ConfigError> {
    for slot in slots.iter_mut() {
        SectionMonitor::configured_in(slot, section_line()?, MONITOR)?;
    }
    Ok(())
}

/// One stage's three channels (suction, discharge, flow-element Δp) at
/// `t_ms`: writes the filtered pressures into the stage's scan and returns
/// its monitor's scan (the unfiltered values; the temperatures ride along,
/// a configured-exponent monitor does not read them).
#[inline(always)]
fn read_stage(
    stage: &mut polytrope::scan::StageScan<f32>,
    ch: &mut [TransmitterChannel],
    r: &[f32],
    t_ms: u32,
) -> SurgeScan<f32> {
    // Chunks of exactly three (`chunks_exact(3)`): the indices fold away
    // once inlined.
    // Each output read where its channel keeps it (no copy of all of it).
    for (c, &r) in ch.iter_mut().zip(r).take(3) {
        c.update_in_place(r, t_ms);
    }
    let (ps, pd, dp) = (ch[0].output(), ch[1].output(), ch[2].output());
    stage.suction_pressure = ps.pressure();
    stage.discharge_pressure = pd.pressure();
    SurgeScan {
        suction_pressure: ps.raw_pressure(),
        discharge_pressure: pd.raw_pressure(),
        flow_dp: dp.raw,
        suction_temperature: stage.suction_temperature,
        discharge_temperature: stage.discharge_temperature,
    }
}

/// One section of [`Controller::protect`]: its three channels, then its
/// monitor; the margin. Out of line: one copy for the four sections
/// (unrolled, the loop held four copies of the channel calls and of the
/// monitor's arguments).
#[inline(never)]
fn protect_section(
    stage: &mut polytrope::scan::StageScan<f32>,
    ch: &mut [TransmitterChannel; 3],
    r: &[f32; 3],
    monitor: &mut SectionMonitor,
    t_ms: u32,
    dt: f32,
) -> f32 {
    let s = read_stage(stage, ch, r, t_ms);
    monitor.update(&s, 0.0, dt).margin.value
}

impl<G: GasModel<f32>> Controller<G> {
    /// Builds the train, the channels (ranges from the stages' design
    /// pressures) and the monitors into `slot`, in place, field by field:
    /// the state is about 6.7 KB and the Cortex-M0 board has 16 KiB of RAM,
    /// so neither it nor any of its arrays may be built on the stack and
    /// then moved (a struct literal with the channel and monitor arrays
    /// built them there first: about 8 KB of start-up stack). Each channel
    /// and monitor is written where it lives, one at a time, by one loop
    /// (one copy of the construction code, not one per channel). On a
    /// refusal the slot stays uninitialised (none of the fields needs a
    /// drop). Inlined into its caller (a firmware builds its controller
    /// once): the configuration goes from the caller's value into the train
    /// where it lives, with no copy passed to a function of its own (out of
    /// line, with the `controller` firmware's opaque configuration, this
    /// took 704 B more flash on Cortex-M4F, 656 B on Cortex-M0; and 152 B
    /// more start-up stack in `full_scan`).
    #[cfg(target_os = "none")]
    #[inline(always)]
    pub fn build_in(
        slot: &mut MaybeUninit<Self>,
        config: TrainConfig<f32, G, SECTIONS>,
    ) -> Result<&mut Self, ConfigError> {
        let p = slot.as_mut_ptr();
        // SAFETY: every write goes to a field (or an element of an array
        // field) of `*p`, which `slot` owns and which is valid for writes;
        // `write` drops nothing. `assume_init_mut` runs only after every
        // field (`last_ms`, `train`, all `CHANNELS` channels, all `SECTIONS`
        // monitors) has been written.
        unsafe {
            core::ptr::addr_of_mut!((*p).last_ms).write(None);
            // In place (no train-sized copy on the stack, no move code).
            let train = core::ptr::addr_of_mut!((*p).train).cast::<MaybeUninit<SectionTrain<G>>>();
            let stages = &SectionTrain::new_in(&mut *train, config)?.config().stages;
            // `MaybeUninit<[X; K]>` and `[MaybeUninit<X>; K]` have the same
            // layout.
            let channels = core::ptr::addr_of_mut!((*p).channels)
                .cast::<[MaybeUninit<TransmitterChannel>; CHANNELS]>();
            build_channels(&mut *channels, stages)?;
            let monitors = core::ptr::addr_of_mut!((*p).monitors)
                .cast::<[MaybeUninit<SectionMonitor>; SECTIONS]>();
            build_monitors(&mut *monitors)?;
            Ok(slot.assume_init_mut())
        }
    }

    /// The same build on the host (the criterion bench includes this file
    /// into the kernel package, which forbids `unsafe`): the same parts
    /// ([`channel_range`], [`channel`], [`section_monitor`]), assembled on
    /// the stack and moved into `slot` (the host has the stack for it).
    #[cfg(not(target_os = "none"))]
    pub fn build_in(
        slot: &mut MaybeUninit<Self>,
        config: TrainConfig<f32, G, SECTIONS>,
    ) -> Result<&mut Self, ConfigError> {
        let train = SectionTrain::new(config)?;
        let stages = &train.config().stages;
        let mut channels = [channel(0, stages)?; CHANNELS];
        for (i, c) in channels.iter_mut().enumerate().skip(1) {
            *c = channel(i, stages)?;
        }
        let monitor = section_monitor()?;
        Ok(slot.write(Controller {
            train,
            channels,
            monitors: core::array::from_fn(|_| monitor.clone()),
            last_ms: None,
        }))
    }

    /// The raw samples (mA) the transmitters send at scan `k` for the
    /// pressures of `scan` and the invented flow, with a little invented
    /// noise.
    pub fn samples(&self, scan: &polytrope::scan::Scan<f32, SECTIONS>, k: u32) -> [f32; CHANNELS] {
        let noise = [0.0, 0.004, -0.003, 0.006, -0.005, 0.002, -0.001];
        let mut raw = [0.0_f32; CHANNELS];
        for (i, (r, c)) in raw.iter_mut().zip(self.channels.iter()).enumerate() {
            let s = &scan.stages[(i / 3) % SECTIONS];
            let ps = s.suction_pressure.value.pa();
            let v = match i % 3 {
                0 => ps,
                1 => s.discharge_pressure.value.pa(),
                _ => FLOW_NUMBER * ps * (1.0 - 0.002 * (k % 16) as f32),
            };
            let n = noise[(k as usize + i) % noise.len()];
            *r = 4.0 + 16.0 * v / c.config().range_high + n;
        }
        raw
    }

    /// One controller scan at `t_ms` (a 32-bit millisecond tick): every
    /// channel, then protection first:
    /// every surge monitor on the channels' unfiltered values, then the
    /// train on the channels' filtered pressures (written into `scan`,
    /// whose other readings come from the slower inputs). Works in place:
    /// no copy of the scan or of the channel outputs.
    pub fn scan(
        &mut self,
        raw: &[f32; CHANNELS],
        t_ms: u32,
        scan: &mut polytrope::scan::Scan<f32, SECTIONS>,
    ) -> ScanSummary {
        let margins = self.protect(raw, t_ms, scan);
        let total_power = self.update_train(scan);
        ScanSummary {
            total_power,
            margins,
        }
    }

    /// Phases 1 and 2 of [`Controller::scan`] (the protection path): every
    /// channel and every surge monitor; the margins. Stage by stage: a
    /// stage's three channels, then its monitor (each monitor reads only its
    /// own stage's channels, so the results are those of all channels first,
    /// then all monitors, as [`Controller::read_channels`] and
    /// [`Controller::update_monitors`] do it); a monitor's scan is built
    /// where its update reads it, not gathered into an array of all four
    /// and copied. A function of its own, not inlined: its frame is off the
    /// stack while the train updates (inlined into `scan`, that frame was
    /// held under the train's whole call chain).
    #[inline(never)]
    pub fn protect(
        &mut self,
        raw: &[f32; CHANNELS],
        t_ms: u32,
        scan: &mut polytrope::scan::Scan<f32, SECTIONS>,
    ) -> [f32; SECTIONS] {
        let dt = self.tick(t_ms);
        let mut margins = [0.0_f32; SECTIONS];
        for ((((stage, ch), r), m), margin) in scan
            .stages
            .iter_mut()
            .zip(self.channels.chunks_exact_mut(3))
            .zip(raw.chunks_exact(3))
            .zip(self.monitors.iter_mut())
            .zip(margins.iter_mut())
        {
            // Chunks of exactly three: the conversions cannot fail (and
            // fold away).
            if let (Ok(ch), Ok(r)) = (<&mut [_; 3]>::try_from(ch), <&[f32; 3]>::try_from(r)) {
                *margin = protect_section(stage, ch, r, m, t_ms, dt);
            }
        }
        margins
    }

    /// The time since the previous scan, s, from a 32-bit millisecond tick:
    /// the wrapping difference, a step back (a negative one) counting as no
    /// time; the nominal period at the first scan.
    #[inline(always)]
    fn tick(&mut self, t_ms: u32) -> f32 {
        let dt_ms = self.last_ms.map_or(SCAN_MS, |l| {
            let d = t_ms.wrapping_sub(l);
            if d > i32::MAX as u32 {
                0
            } else {
                d
            }
        });
        self.last_ms = Some(t_ms);
        // Without an FPU (Cortex-M0) the usual interval's value is formed at
        // compile time (the same product, so the same bits): the conversion
        // and the multiplication are two soft-float calls every scan there
        // (with an FPU two instructions, fewer than the test).
        const NOMINAL_S: f32 = SCAN_MS as f32 * 1.0e-3;
        if cfg!(not(target_abi = "eabihf")) && dt_ms == SCAN_MS {
            NOMINAL_S
        } else {
            dt_ms as f32 * 1.0e-3
        }
    }

    /// Phase 1 of [`Controller::scan`]: every channel; writes the filtered
    /// pressures into `scan` and returns each monitor's scan and the time
    /// since the previous scan, s.
    #[inline(always)]
    pub fn read_channels(
        &mut self,
        raw: &[f32; CHANNELS],
        t_ms: u32,
        scan: &mut polytrope::scan::Scan<f32, SECTIONS>,
    ) -> ([SurgeScan<f32>; SECTIONS], f32) {
        let dt = self.tick(t_ms);
        let none = polytrope::Measured::<f32>::bad();
        let mut surge = [SurgeScan::pressures_only(
            none.map(PressureAbs::from_pa),
            none.map(PressureAbs::from_pa),
            none,
        ); SECTIONS];
        for (((stage, ch), r), s) in scan
            .stages
            .iter_mut()
            .zip(self.channels.chunks_exact_mut(3))
            .zip(raw.chunks_exact(3))
            .zip(surge.iter_mut())
        {
            *s = read_stage(stage, ch, r, t_ms);
        }
        (surge, dt)
    }

    /// Phase 3 of [`Controller::scan`]: the train update; the total power.
    #[inline(always)]
    pub fn update_train(&mut self, scan: &polytrope::scan::Scan<f32, SECTIONS>) -> f32 {
        self.train.update(scan).totals.total_power.value
    }

    /// Phase 2 of [`Controller::scan`]: every surge monitor; the margins.
    #[inline(always)]
    pub fn update_monitors(
        &mut self,
        surge: &[SurgeScan<f32>; SECTIONS],
        dt: f32,
    ) -> [f32; SECTIONS] {
        let mut margins = [0.0_f32; SECTIONS];
        for ((m, s), margin) in self
            .monitors
            .iter_mut()
            .zip(surge.iter())
            .zip(margins.iter_mut())
        {
            *margin = m.update(s, 0.0, dt).margin.value;
        }
        margins
    }

    /// The train's last snapshot.
    pub fn snapshot(&self) -> &Snapshot<f32, SECTIONS> {
        self.train.snapshot()
    }

    /// The channels.
    pub fn channels(&self) -> &[TransmitterChannel; CHANNELS] {
        &self.channels
    }

    /// The surge monitors.
    pub fn monitors(&self) -> &[SectionMonitor; SECTIONS] {
        &self.monitors
    }
}
