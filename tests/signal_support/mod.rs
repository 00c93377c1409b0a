//! Test harness: an invented two-stage air compressor front end (nine raw
//! channels, an orifice on the first-stage suction, a low-flow cut-off,
//! cross-checks) feeding `Train::update`. Demo data, not a real machine.
#![allow(
    dead_code,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use polytrope::flow::low_flow::LowFlowOutput;
use polytrope::flow::orifice::OrificeInputs;
use polytrope::flow::{LowFlow, LowFlowConfig, Orifice, OrificeConfig, OrificeFlow, TapType};
use polytrope::gas::{IdealGas, AIR};
use polytrope::scan::Scan;
use polytrope::signal::cross_check::{
    differential_not_negative, discharge_above_suction, DischargeTemperatureCheck,
    DischargeTemperatureConfig,
};
use polytrope::signal::scan_builder::{stage_scan, StageChannels};
use polytrope::signal::{
    Channel, ChannelConfig, ChannelOutput, EventLog, InstrumentClass, RtdClass, SignalKind, Unit,
};
use polytrope::steady::SteadyStateConfig;
use polytrope::train::{Snapshot, StageConfig, StageKind, Train, TrainConfig};
use polytrope::units::PressureAbs;
use polytrope::{Measured, Real};

pub const W: usize = 8;
pub const M: usize = 3;
pub const CH: usize = 9;
pub const SCAN_MS: u32 = 100;

/// Channel indices.
pub const P1A: usize = 0; // stage 1 suction pressure, 4-20 mA, gauge 0..2 bar g
pub const T1A: usize = 1; // stage 1 suction temperature, 4-20 mA, 0..100 degC, class A RTD
pub const P2A: usize = 2; // stage 1 discharge pressure, 4-20 mA, 0..10 bar a
pub const T2A: usize = 3; // stage 1 discharge temperature, 4-20 mA, 0..250 degC
pub const P1B: usize = 4; // stage 2 suction pressure, 0..10 bar a
pub const T1B: usize = 5; // stage 2 suction temperature, 0..100 degC
pub const P2B: usize = 6; // stage 2 discharge pressure, 0..20 bar a
pub const T2B: usize = 7; // stage 2 discharge temperature, 0..250 degC
pub const DP: usize = 8; // orifice differential pressure, 0..50 kPa

pub const ATM: f64 = 101_325.0;

/// Healthy operating point in SI (Pa abs, K, Pa).
pub const HEALTHY_SI: [f64; CH] = [
    1.2e5, 300.0, 3.6e5, 444.0, 3.5e5, 305.0, 1.0e6, 443.8, 20_000.0,
];

fn cfg<T: Real>(
    id: usize,
    unit: Unit<T>,
    lo: f64,
    hi: f64,
    plo: f64,
    phi: f64,
) -> ChannelConfig<T> {
    let temperature = matches!(unit, Unit::Celsius);
    ChannelConfig {
        id: id as u8,
        signal: SignalKind::Current4To20,
        unit,
        range_low: T::of(lo),
        range_high: T::of(hi),
        plausible_low: T::of(plo),
        plausible_high: T::of(phi),
        noise_floor: T::of(if temperature { 0.01 } else { 5.0 }),
        instrument: if temperature {
            InstrumentClass::Rtd(RtdClass::A)
        } else {
            InstrumentClass::FractionOfSpan(T::of(0.001))
        },
        max_rate: T::of(if temperature { 20.0 } else { 2.0e5 }),
        filter_time_constant_s: T::of(0.5),
        hold_ms: 500,
    }
}

pub fn configs<T: Real>() -> [ChannelConfig<T>; CH] {
    let gauge = Unit::PressureGauge {
        atmosphere: PressureAbs::from_pa(T::of(ATM)),
    };
    [
        cfg(P1A, gauge, 0.0, 2.0e5, 0.5e5, 3.0e5),
        cfg(T1A, Unit::Celsius, 0.0, 100.0, 250.0, 360.0),
        cfg(P2A, Unit::PressureAbs, 0.0, 10.0e5, 0.5e5, 10.5e5),
        cfg(T2A, Unit::Celsius, 0.0, 250.0, 250.0, 520.0),
        cfg(P1B, Unit::PressureAbs, 0.0, 10.0e5, 0.5e5, 10.5e5),
        cfg(T1B, Unit::Celsius, 0.0, 100.0, 250.0, 360.0),
        cfg(P2B, Unit::PressureAbs, 0.0, 20.0e5, 0.5e5, 21.0e5),
        cfg(T2B, Unit::Celsius, 0.0, 250.0, 250.0, 520.0),
        cfg(DP, Unit::DifferentialPressure, 0.0, 5.0e4, -2.0e3, 5.5e4),
    ]
}

/// Loop current for SI value `si` on channel `i`.
pub fn ma_for(i: usize, si: f64) -> f64 {
    let c = configs::<f64>()[i];
    let eng = match c.unit {
        Unit::PressureGauge { atmosphere } => si - atmosphere.pa(),
        Unit::Celsius => si - 273.15,
        _ => si,
    };
    4.0 + 16.0 * (eng - c.range_low) / (c.range_high - c.range_low)
}

/// Deterministic dither in [-amp, amp] at scan `i`.
pub fn dither(i: u32, amp: f64) -> f64 {
    amp * ((u64::from(i) * 7919 % 13) as f64 - 6.0) / 6.0
}

/// Healthy raw currents at scan `i`, with a small deterministic dither
/// (real transmitters are never perfectly still).
pub fn healthy_raw(i: u32) -> [f64; CH] {
    let d = dither(i, 1.0);
    let mut out = [0.0; CH];
    for (k, o) in out.iter_mut().enumerate() {
        let amp = if matches!(k, T1A | T2A | T1B | T2B) {
            0.05
        } else {
            50.0
        };
        *o = ma_for(k, HEALTHY_SI[k] + amp * d);
    }
    out
}

pub struct FrontEnd<T: Real> {
    pub channels: [Channel<T, W, M>; CH],
    pub orifice: Orifice<T>,
    pub low_flow: LowFlow<T>,
    pub checks: [DischargeTemperatureCheck<T>; 2],
    pub check_cfg: DischargeTemperatureConfig<T>,
    pub train: Train<T, IdealGas<T>, 2, 8>,
    pub log: EventLog<16>,
}

pub struct Step<T: Real> {
    pub out: [ChannelOutput<T>; CH],
    pub dp: LowFlowOutput<T>,
    pub flow: OrificeFlow<T>,
    pub snapshot: Snapshot<T, 2>,
    pub discharge_check_passed: [bool; 2],
}

impl<T: Real> FrontEnd<T> {
    pub fn new() -> Self {
        let stage = |p1: f64, p2: f64| StageConfig {
            kind: StageKind::Compressor,
            design_suction_pressure: PressureAbs::from_pa(T::of(p1)),
            design_discharge_pressure: PressureAbs::from_pa(T::of(p2)),
            cooler: None,
        };
        let train = Train::new(TrainConfig {
            gas: IdealGas::from_spec(&AIR, false, T::ONE).unwrap(),
            stages: [stage(1.2e5, 3.6e5), stage(3.5e5, 1.0e6)],
            max_interstage_pressure_drop: T::of(0.1),
            steady_state: SteadyStateConfig::default(),
        })
        .unwrap();
        FrontEnd {
            channels: configs::<T>().map(|c| Channel::new(c).unwrap()),
            orifice: Orifice::new(OrificeConfig {
                pipe_diameter: T::of(0.1),
                bore_diameter: T::of(0.05),
                taps: TapType::Flange,
                isentropic_exponent: T::of(1.4),
                viscosity: T::of(1.85e-5),
                gas_constant: T::of(287.05),
            })
            .unwrap(),
            low_flow: LowFlow::new(LowFlowConfig {
                cutoff_dp: T::of(200.0),
                zero_tolerance: T::of(150.0),
                zero_persist_ms: 1000,
            })
            .unwrap(),
            checks: [DischargeTemperatureCheck::new(); 2],
            check_cfg: DischargeTemperatureConfig {
                tolerance_k: T::of(10.0),
                smoothing: T::of(0.02),
                relearn_scans: 100,
            },
            train,
            log: EventLog::new(),
        }
    }

    /// One scan: raw signals (per-channel time `t[i]`), `no_flow` known.
    pub fn step_at(&mut self, raw: [T; CH], t: [u32; CH], no_flow: bool) -> Step<T> {
        let mut out: [ChannelOutput<T>; CH] =
            core::array::from_fn(|i| self.channels[i].update_logged(raw[i], t[i], &mut self.log));
        let k = T::of(1.4);
        {
            let (x, y) = out.split_at_mut(P2A);
            discharge_above_suction(&mut x[P1A], &mut y[0], T::of(2.0e3));
        }
        {
            let (x, y) = out.split_at_mut(P2B);
            discharge_above_suction(&mut x[P1B], &mut y[0], T::of(2.0e3));
        }
        differential_not_negative(&mut out[DP], T::of(100.0));
        let mut passed = [true; 2];
        for (s, (p1, t1, p2, t2)) in [(P1A, T1A, P2A, T2A), (P1B, T1B, P2B, T2B)]
            .into_iter()
            .enumerate()
        {
            let (pp1, tt1, pp2) = (out[p1].filtered, out[t1].filtered, out[p2].filtered);
            let r = self.checks[s].check(&self.check_cfg, k, pp1, tt1, pp2, &mut out[t2]);
            passed[s] = r.passed;
        }
        let dp = self.low_flow.apply(out[DP].filtered, no_flow, t[DP]);
        let flow = self.orifice.evaluate(&OrificeInputs {
            differential_pressure: dp.differential_pressure,
            upstream_pressure: out[P1A].pressure(),
            upstream_temperature: out[T1A].temperature(),
            compressibility: Measured::good(T::ONE),
        });
        let scan = Scan {
            stages: [
                stage_scan(
                    &StageChannels {
                        suction_pressure: &out[P1A],
                        suction_temperature: &out[T1A],
                        discharge_pressure: &out[P2A],
                        discharge_temperature: &out[T2A],
                    },
                    Some(flow.mass_flow),
                    None,
                ),
                stage_scan(
                    &StageChannels {
                        suction_pressure: &out[P1B],
                        suction_temperature: &out[T1B],
                        discharge_pressure: &out[P2B],
                        discharge_temperature: &out[T2B],
                    },
                    None,
                    None,
                ),
            ],
        };
        let snapshot = *self.train.update(&scan);
        Step {
            out,
            dp,
            flow,
            snapshot,
            discharge_check_passed: passed,
        }
    }

    pub fn step(&mut self, raw: [T; CH], t_ms: u32) -> Step<T> {
        self.step_at(raw, [t_ms; CH], false)
    }

    /// Runs `n` healthy scans starting at scan index `from`; returns the last.
    pub fn warm_up(&mut self, from: u32, n: u32) -> Step<T> {
        let mut last = None;
        for i in from..from + n {
            last = Some(self.step(healthy_raw(i).map(T::of), i * SCAN_MS));
        }
        last.unwrap()
    }
}

/// Every finite number a snapshot holds, with its quality.
pub fn snapshot_values<T: Real>(s: &Snapshot<T, 2>) -> Vec<Measured<T>> {
    let mut v = Vec::new();
    for st in &s.stages {
        let c = st.compressor().unwrap();
        v.extend([
            c.pressure_ratio,
            c.isentropic_head,
            c.polytropic_head,
            c.isothermal_head,
            c.actual_work,
            c.isentropic_efficiency,
            c.polytropic_efficiency,
            c.polytropic_exponent,
            c.gas_power,
            c.temperature_rise,
        ]);
    }
    let t = &s.totals;
    v.extend([
        t.compressor_work,
        t.compressor_power,
        t.total_power,
        t.overall_pressure_ratio,
        t.isothermal_work,
        t.isothermal_efficiency,
    ]);
    v
}
