//! Closed-loop surge simulation of one compressor section: the lumped
//! compression-system model of Greitzer with a recycle valve, driven by the
//! kernel's surge monitor, surge detector and recycle controller.
//!
//! Model (Greitzer, "Surge and rotating stall in axial flow compressors,
//! Part I: Theoretical compression system model", ASME J. Eng. Power 98
//! (1976) 190–198; cubic characteristic as in Moore & Greitzer, ASME J. Eng.
//! Gas Turbines Power 108 (1986); both from memory; the compressor-lag
//! equation is left out). Time t~ = ω_H t, flow coefficient Φ, pressure-rise
//! coefficient Ψ = Δp / (½ ρ U²):
//!
//! ```text
//! dΦc/dt~ = B (Ψc(Φc) − Ψ)                       (duct momentum)
//! dΨ/dt~  = (Φc − Φt(Ψ) − Φr(Ψ, v)) / B           (plenum mass)
//! Ψc(Φ)   = ψ0 + H (1 + 1.5 (Φ/W − 1) − 0.5 (Φ/W − 1)³)
//! Φt      = γt √Ψ,   Φr = γr v √Ψ                (throttle, recycle valve)
//! B       = U / (2 ω_H Lc)
//! ```
//!
//! The peak of Ψc (Φ = 2W) is the surge point of this speed line. The
//! recycle returns plenum gas to the compressor inlet, upstream of the
//! suction flow element. The valve has a dead time and a stroke-rate limit;
//! the flow transmitter a first-order lag (published practice: flow
//! collapses in about 0.05 s, surge cycles repeat every 1–3 s; valve dead
//! time under about 0.2 s, full stroke under about 1 s, flow measurement lag
//! under about 0.2 s; Botros & Henderson 1994, from memory).
//!
//! Measurement noise (optional, [`Noise`]): zero-mean Gaussian, independent
//! per scan, on every signal the kernel reads, at levels stated on
//! [`Noise::REALISTIC`] (seeded, so every run is reproducible).
//!
//! Every number here is an invented demo scenario (an air blower), not a
//! real machine. Not a certified safety function; surge data come from the
//! machine maker and from commissioning tests.

use std::collections::VecDeque;

use polytrope::control::{
    recycle_power, ControllerInputs, Mode, RecycleConfig, RecycleController, UncertainMargin,
};
use polytrope::surge::{
    DetectionConfig, DetectionScan, MapConditions, MonitorConfig, SurgeDetector, SurgeLine,
    SurgeLineConfig, SurgeMonitor, SurgePoint, SurgeScan,
};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{ConfigError, Measured};

/// Greitzer B parameter (surge, not rotating stall, for B above about 0.8).
pub const B: f64 = 4.0;
/// Helmholtz frequency ω_H, rad/s.
pub const OMEGA_H: f64 = 4.0;
/// Effective duct length Lc, m.
pub const DUCT_LENGTH: f64 = 11.0;
/// Tip speed U = 2 B ω_H Lc, m/s.
pub const TIP_SPEED: f64 = 2.0 * B * OMEGA_H * DUCT_LENGTH;
/// Duct flow area, m².
pub const DUCT_AREA: f64 = 0.08;
/// Characteristic: shut-off head ψ0.
pub const PSI_0: f64 = 0.30;
/// Characteristic: semi-height H.
pub const SEMI_HEIGHT: f64 = 0.14;
/// Characteristic: semi-width W (peak at Φ = 2W).
pub const SEMI_WIDTH: f64 = 0.25;
/// Recycle valve fully open: γr.
pub const RECYCLE_GAMMA: f64 = 0.9;
/// Suction pressure (large suction volume, constant), Pa.
pub const SUCTION_PRESSURE: f64 = 1.0e5;
/// Suction temperature, K.
pub const SUCTION_TEMPERATURE: f64 = 293.15;
/// Air molar mass, kg/kmol.
pub const MOLAR_MASS: f64 = 28.96;
/// Suction flow element coefficient C in Δp = ρ (Q/C)², m².
pub const FLOW_COEFFICIENT: f64 = 0.35;
/// Polytropic exponent for the head number.
pub const POLYTROPIC_EXPONENT: f64 = 1.5;
/// Assumed polytropic efficiency for the recycle power, -.
pub const EFFICIENCY: f64 = 0.8;
/// Controller anticipation time, s.
pub const ANTICIPATION_TIME: f64 = 3.0;
/// Rate of approach below which the controller anticipates nothing, 1/s.
pub const ANTICIPATION_THRESHOLD: f64 = 0.1;
/// Rate-of-approach filter time constant (each of two poles), s: half the
/// flow-measurement lag, which keeps the rate's noise at the stated
/// [`Noise::REALISTIC`] levels below [`ANTICIPATION_THRESHOLD`] (measured
/// in `tests/surge_sim.rs`).
pub const RATE_FILTER_TIME: f64 = 0.05;
/// Integration step, s.
pub const STEP: f64 = 0.0005;

const RU: f64 = 8_314.462_618_153_24;

/// The plant of one run: duct, plenum, characteristic, recycle valve,
/// suction conditions, flow element and the surge line the kernel uses.
/// [`Plant::demo`] is the invented demo blower (the constants above);
/// `surge-sim --file` builds one from a train file (`crate::surge_sim`).
#[derive(Clone, Copy, Debug)]
pub struct Plant {
    /// Effective duct length Lc, m.
    pub duct_length: f64,
    /// Tip speed U, m/s.
    pub tip_speed: f64,
    /// Duct flow area Ac, m².
    pub duct_area: f64,
    /// Characteristic: shut-off head ψ0.
    pub psi_0: f64,
    /// Characteristic: semi-height H.
    pub semi_height: f64,
    /// Characteristic: semi-width W (peak at Φ = 2W).
    pub semi_width: f64,
    /// Recycle valve fully open: γr.
    pub recycle_gamma: f64,
    /// Suction pressure (large suction volume, constant), Pa.
    pub suction_pressure: f64,
    /// Suction temperature, K.
    pub suction_temperature: f64,
    /// Molar mass, kg/kmol.
    pub molar_mass: f64,
    /// Suction compressibility factor, -.
    pub compressibility: f64,
    /// Suction flow element coefficient C in Δp = ρ (Q/C)², m².
    pub flow_coefficient: f64,
    /// Polytropic exponent for the head number.
    pub polytropic_exponent: f64,
    /// Assumed polytropic efficiency for the recycle power, -.
    pub efficiency: f64,
    /// Surge points of the kernel's surge line (first `point_count`).
    pub points: [SurgePoint<f64>; 8],
    /// Number of surge points used.
    pub point_count: usize,
    /// Throttle γt of the design point (the flow-noise reference).
    pub design_throttle: f64,
}

impl Plant {
    /// The invented demo blower.
    pub fn demo() -> Plant {
        let mut p = Plant {
            duct_length: DUCT_LENGTH,
            tip_speed: TIP_SPEED,
            duct_area: DUCT_AREA,
            psi_0: PSI_0,
            semi_height: SEMI_HEIGHT,
            semi_width: SEMI_WIDTH,
            recycle_gamma: RECYCLE_GAMMA,
            suction_pressure: SUCTION_PRESSURE,
            suction_temperature: SUCTION_TEMPERATURE,
            molar_mass: MOLAR_MASS,
            compressibility: 1.0,
            flow_coefficient: FLOW_COEFFICIENT,
            polytropic_exponent: POLYTROPIC_EXPONENT,
            efficiency: EFFICIENCY,
            points: [SurgePoint {
                speed_rpm: 0.0,
                suction_volume_flow: 0.0,
                pressure_ratio: 0.0,
                control_margin: 0.0,
            }; 8],
            point_count: 5,
            design_throttle: 0.8,
        };
        let q = p.dynamic_pressure();
        let psi_peak = p.characteristic(2.0 * SEMI_WIDTH);
        let speeds = [0.70, 0.80, 0.90, 1.00, 1.05];
        for (pt, s) in p.points.iter_mut().zip(speeds) {
            *pt = SurgePoint {
                speed_rpm: 9000.0 * s,
                suction_volume_flow: 2.0 * SEMI_WIDTH * s * TIP_SPEED * DUCT_AREA,
                pressure_ratio: 1.0 + psi_peak * q * s * s / SUCTION_PRESSURE,
                // Wider at low speed (common practice).
                control_margin: if s < 0.85 { 0.12 } else { 0.10 },
            };
        }
        p
    }

    /// Suction density, kg/m³.
    pub fn suction_density(&self) -> f64 {
        self.suction_pressure * self.molar_mass
            / (self.compressibility * RU * self.suction_temperature)
    }

    /// Dynamic pressure ½ ρ U², Pa.
    pub fn dynamic_pressure(&self) -> f64 {
        0.5 * self.suction_density() * self.tip_speed * self.tip_speed
    }

    /// Compressor characteristic Ψc(Φ).
    pub fn characteristic(&self, phi: f64) -> f64 {
        let x = phi / self.semi_width - 1.0;
        self.psi_0 + self.semi_height * (1.0 + 1.5 * x - 0.5 * x * x * x)
    }

    /// The surge points of the kernel's surge line.
    pub fn surge_points(&self) -> &[SurgePoint<f64>] {
        self.points.get(..self.point_count).unwrap_or(&[])
    }

    /// Measured signals (ps, pd, Δp) of a state (Φc, Ψ).
    pub fn signals(&self, phi: f64, psi: f64) -> (f64, f64, f64) {
        let qv = phi * self.tip_speed * self.duct_area;
        let v = qv / self.flow_coefficient;
        let dp = self.suction_density() * v * v.abs();
        let pd = self.suction_pressure + psi * self.dynamic_pressure();
        (self.suction_pressure, pd, dp)
    }

    /// Steady operating point (Φ, Ψ) on throttle γ with the valve closed.
    pub fn steady_point(&self, gamma: f64) -> (f64, f64) {
        // Φ on the falling branch right of the peak: bisection, 60 steps.
        let f = |phi: f64| self.characteristic(phi) - (phi / gamma) * (phi / gamma);
        let (mut lo, mut hi) = (2.0 * self.semi_width, 4.0 * self.semi_width);
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if f(mid) > 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let phi = 0.5 * (lo + hi);
        (phi, self.characteristic(phi))
    }
}

fn valve_flow(gamma: f64, psi: f64) -> f64 {
    if psi >= 0.0 {
        gamma * psi.sqrt()
    } else {
        -gamma * (-psi).sqrt()
    }
}

/// Measurement noise: standard deviations of zero-mean Gaussian noise added
/// to each scan's signals.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Noise {
    /// Flow element Δp, as a fraction of the reading at the design point
    /// (throttle 0.8), -.
    pub flow_dp: f64,
    /// Suction pressure, Pa.
    pub suction_pressure: f64,
    /// Discharge pressure, Pa.
    pub discharge_pressure: f64,
    /// Seed of the generator.
    pub seed: u64,
}

impl Noise {
    /// Stated realistic levels (common practice, from memory): flow element
    /// Δp 0.5 % of the design reading (turbulence at the tappings plus the
    /// transmitter, for a fast, undamped Δp signal), suction
    /// pressure 100 Pa and discharge pressure 200 Pa (about 0.05 % of a
    /// 0–2 bar and 0–4 bar span, a 0.1 %-class transmitter's resolution and
    /// noise at this bandwidth).
    pub const REALISTIC: Noise = Noise {
        flow_dp: 0.005,
        suction_pressure: 100.0,
        discharge_pressure: 200.0,
        seed: 0x5eed_0001,
    };
}

/// A small seeded Gaussian generator (xorshift64* and Box–Muller; Marsaglia
/// 2003 and Box & Muller 1958, from memory).
#[derive(Clone, Debug)]
pub struct Gauss {
    state: u64,
    spare: Option<f64>,
}

impl Gauss {
    /// A generator from a seed (0 is replaced).
    pub fn new(seed: u64) -> Self {
        Gauss {
            state: if seed == 0 {
                0x9e37_79b9_7f4a_7c15
            } else {
                seed
            },
            spare: None,
        }
    }

    fn uniform(&mut self) -> f64 {
        let mut x = self.state;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.state = x;
        let r = x.wrapping_mul(0x2545_f491_4f6c_dd1d);
        ((r >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    /// One standard normal sample.
    pub fn next(&mut self) -> f64 {
        if let Some(z) = self.spare.take() {
            return z;
        }
        let (u1, u2) = (self.uniform(), self.uniform());
        let r = (-2.0 * u1.ln()).sqrt();
        let a = 2.0 * std::f64::consts::PI * u2;
        self.spare = Some(r * a.sin());
        r * a.cos()
    }
}

/// Scenario of one run.
#[derive(Clone, Copy, Debug)]
pub struct Scenario {
    /// The plant ([`Plant::demo`] by default).
    pub plant: Plant,
    /// Measurement noise (None: exact signals).
    pub noise: Option<Noise>,
    /// Greitzer B of the run at the same tip speed (plenum volume changes
    /// the Helmholtz frequency); [`B`] by default.
    pub greitzer_b: f64,
    /// Controller anticipation time, s.
    pub anticipation_time: f64,
    /// Controller anticipation threshold, 1/s.
    pub anticipation_threshold: f64,
    /// Rate filter time constant, s.
    pub rate_filter_time: f64,
    /// Controller scan period, s.
    pub scan_period: f64,
    /// Recycle control in automatic (false: valve held closed).
    pub protection: bool,
    /// Run length, s.
    pub duration: f64,
    /// Load loss starts, s.
    pub load_loss_at: f64,
    /// Load loss duration (throttle closing time), s.
    pub load_loss_time: f64,
    /// Throttle γt before / after the load loss.
    pub throttle_before: f64,
    /// Throttle γt after the load loss.
    pub throttle_after: f64,
    /// Valve dead time, s.
    pub valve_dead_time: f64,
    /// Valve full-stroke time, s.
    pub valve_stroke_time: f64,
    /// Recycle controller proportional gain.
    pub gain: f64,
    /// Recycle controller integral time, s.
    pub integral_time: f64,
    /// Flow transmitter first-order lag, s.
    pub flow_lag: f64,
}

impl Default for Scenario {
    /// 20 ms scan, protection on, throttle closed from 0.8 to 0.3 in 1 s
    /// at t = 2 s; valve 0.1 s dead time, 0.8 s stroke; flow lag 0.1 s; no
    /// noise.
    fn default() -> Self {
        Scenario {
            plant: Plant::demo(),
            noise: None,
            greitzer_b: B,
            anticipation_time: ANTICIPATION_TIME,
            anticipation_threshold: ANTICIPATION_THRESHOLD,
            rate_filter_time: RATE_FILTER_TIME,
            scan_period: 0.02,
            protection: true,
            duration: 20.0,
            load_loss_at: 2.0,
            load_loss_time: 1.0,
            throttle_before: 0.8,
            throttle_after: 0.3,
            valve_dead_time: 0.1,
            valve_stroke_time: 0.8,
            gain: 2.0,
            integral_time: 2.0,
            flow_lag: 0.1,
        }
    }
}

/// One logged instant.
#[derive(Clone, Copy, Debug, Default)]
pub struct Sample {
    /// Time, s.
    pub t: f64,
    /// Compressor flow coefficient Φc.
    pub phi: f64,
    /// Plenum pressure-rise coefficient Ψ.
    pub psi: f64,
    /// Surge margin of the true (unlagged) state, from the kernel.
    pub margin_true: f64,
    /// Surge margin the controller saw (lagged flow).
    pub margin_measured: f64,
    /// Effective control margin (with margin added after surge events).
    pub control_margin: f64,
    /// Rate of approach the controller saw, 1/s.
    pub rate_of_approach: f64,
    /// Anticipation margin the controller added, -.
    pub anticipation: f64,
    /// Valve demand, 0..1.
    pub demand: f64,
    /// Valve position, 0..1.
    pub position: f64,
    /// Recycle mass flow, kg/s.
    pub recycle_mass_flow: f64,
    /// Throttle flow coefficient Φt.
    pub throttle_flow: f64,
    /// Power spent recirculating, kW.
    pub recycle_power_kw: f64,
    /// Surge events counted.
    pub events: u32,
    /// Trip requested.
    pub trip: bool,
}

/// Result of one run.
#[derive(Clone, Debug, Default)]
pub struct Outcome {
    /// Logged trajectory (every controller scan).
    pub samples: Vec<Sample>,
    /// Lowest true surge margin after the load loss starts.
    pub min_margin: f64,
    /// Lowest compressor flow coefficient.
    pub min_flow: f64,
    /// Sign changes of the compressor flow (flow reversals and recoveries).
    pub flow_sign_changes: u32,
    /// Flow reversals (forward to reverse): one per deep-surge cycle.
    pub flow_reversals: u32,
    /// Surge cycles the kernel's detector counted.
    pub events: u32,
    /// Trip requested by the detector.
    pub trip: bool,
    /// Mean true margin over the last 3 s of the run.
    pub settled_margin: f64,
    /// Largest minus smallest true margin over the last 3 s of the run.
    pub settled_swing: f64,
    /// Mean control margin over the last 3 s of the run.
    pub settled_control_margin: f64,
    /// Largest valve position before the load loss starts.
    pub max_position_before_load_loss: f64,
}

fn surge_scan(s: (f64, f64, f64)) -> SurgeScan<f64> {
    SurgeScan::pressures_only(
        Measured::good(PressureAbs::from_pa(s.0)),
        Measured::good(PressureAbs::from_pa(s.1)),
        Measured::good(s.2),
    )
}

/// Throttle γt at time `t`: the load loss schedule.
fn throttle_at(sc: &Scenario, t: f64) -> f64 {
    let f = ((t - sc.load_loss_at) / sc.load_loss_time).clamp(0.0, 1.0);
    sc.throttle_before + f * (sc.throttle_after - sc.throttle_before)
}

/// Runs one scenario.
pub fn run(sc: &Scenario) -> Result<Outcome, ConfigError> {
    let pl = &sc.plant;
    let line = SurgeLine::<f64, 8>::new(&SurgeLineConfig {
        points: pl.surge_points(),
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(pl.suction_pressure),
            suction_temperature: Kelvin::new(pl.suction_temperature),
            molar_mass: pl.molar_mass,
            compressibility: pl.compressibility,
        },
        polytropic_exponent: pl.polytropic_exponent,
        flow_coefficient: pl.flow_coefficient,
    })?;
    let monitor_cfg = MonitorConfig {
        scan_period: sc.scan_period,
        time_to_surge_horizon: 60.0,
        rate_filter_time: sc.rate_filter_time.max(sc.scan_period),
    };
    let truth = SurgeMonitor::<f64, 8>::new(line.clone(), monitor_cfg)?;
    let mut monitor = SurgeMonitor::<f64, 8>::new(line, monitor_cfg)?;
    let mut detector = SurgeDetector::<f64, 32, 4>::new(DetectionConfig {
        scan_period: sc.scan_period,
        window: 0.64_f64.max(2.0 * sc.scan_period),
        flow_lag: sc.flow_lag,
        flow_dp_drop: 0.5,
        min_flow_dp: 200.0,
        pressure_rise_drop: 0.05,
        suction_temperature_rise: 3.0,
        holdoff: 0.5,
        added_margin_per_cycle: 0.03,
        max_added_margin: 0.09,
        trip_count: 3,
        trip_window: 60.0,
    })?;
    let mut controller = RecycleController::new(
        RecycleConfig {
            scan_period: sc.scan_period,
            gain: sc.gain,
            integral_time: sc.integral_time,
            closing_rate: 0.05,
            quick_open_step: 0.15,
            quick_open_fraction: 0.5,
            quick_open_interval: 1.0,
            min_output: 0.0,
            max_output: 1.0,
            fail_safe_output: 1.0,
            anticipation_time: sc.anticipation_time,
            anticipation_threshold: sc.anticipation_threshold,
            on_uncertain: UncertainMargin::HoldOrOpen,
        },
        if sc.protection {
            Mode::Automatic
        } else {
            Mode::Manual
        },
        0.0,
    )?;
    let inputs = ControllerInputs {
        manual_output: 0.0,
        tracking_value: 0.0,
        force_open: false,
    };
    let mut gauss = Gauss::new(sc.noise.map_or(1, |n| n.seed));
    let design_dp = {
        let (phi, psi) = pl.steady_point(pl.design_throttle);
        pl.signals(phi, psi).2
    };

    let (mut phi, mut psi) = pl.steady_point(sc.throttle_before);
    let mut dp_meas = pl.signals(phi, psi).2;
    let mut position = 0.0_f64;
    let delay_steps = (sc.valve_dead_time / STEP).round() as usize;
    let mut delay: VecDeque<f64> = VecDeque::from(vec![0.0; delay_steps.max(1)]);
    let scan_steps = ((sc.scan_period / STEP).round() as usize).max(1);
    let total = (sc.duration / STEP).round() as usize;
    // Greitzer B of this run at the same tip speed: ω_H = U / (2 B Lc).
    let b = sc.greitzer_b;
    let dtn = STEP * pl.tip_speed / (2.0 * b * pl.duct_length);
    let mut demand = 0.0;
    let mut out = Outcome {
        min_margin: f64::INFINITY,
        min_flow: phi,
        ..Outcome::default()
    };
    let mut last_sign = phi >= 0.0;
    let mut added = 0.0;
    let settle_from = sc.duration - 3.0;
    let (mut settled_sum, mut settled_cm, mut settled_n) = (0.0, 0.0, 0u32);
    let (mut settled_lo, mut settled_hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for i in 0..total {
        let t = i as f64 * STEP;
        // Controller scan (zero-order hold between scans).
        if i % scan_steps == 0 {
            let (ps_true, pd_true, _) = pl.signals(phi, psi);
            let (ps, pd, dp) = match sc.noise {
                Some(n) => (
                    ps_true + n.suction_pressure * gauss.next(),
                    pd_true + n.discharge_pressure * gauss.next(),
                    dp_meas + n.flow_dp * design_dp * gauss.next(),
                ),
                None => (ps_true, pd_true, dp_meas),
            };
            let dt = scan_steps as f64 * STEP;
            let det = *detector.update(
                &DetectionScan {
                    flow_dp: Measured::good(dp),
                    suction_pressure: Measured::good(PressureAbs::from_pa(ps)),
                    discharge_pressure: Measured::good(PressureAbs::from_pa(pd)),
                    suction_temperature: None,
                },
                dt,
            );
            added = det.added_margin;
            let st = *monitor.update(&surge_scan((ps, pd, dp)), added, dt);
            let c = controller.update(&st, &inputs, dt);
            demand = c.demand.value;
            let true_state = truth.evaluate(&surge_scan(pl.signals(phi, psi)), added);
            // The Greitzer flows are volume flows at compressor-inlet
            // density (the model's incompressible duct), so the recycle mass
            // flow takes the suction density.
            let recycle_mass = pl.suction_density()
                * valve_flow(pl.recycle_gamma * position, psi).max(0.0)
                * pl.tip_speed
                * pl.duct_area;
            let work = true_state.head_number.value * RU / pl.molar_mass * pl.suction_temperature
                / pl.efficiency;
            let loss = recycle_power(Measured::good(recycle_mass), Measured::good(work));
            out.events = det.event_count;
            out.trip |= det.trip_request;
            if t < sc.load_loss_at {
                out.max_position_before_load_loss = out.max_position_before_load_loss.max(position);
            }
            if t >= settle_from {
                let m = true_state.margin.value;
                settled_sum += m;
                settled_cm += true_state.control_margin.value;
                settled_n += 1;
                settled_lo = settled_lo.min(m);
                settled_hi = settled_hi.max(m);
            }
            out.samples.push(Sample {
                t,
                phi,
                psi,
                margin_true: true_state.margin.value,
                margin_measured: st.margin.value,
                control_margin: st.control_margin.value,
                rate_of_approach: st.rate_of_approach.value,
                anticipation: c.anticipation,
                demand,
                position,
                recycle_mass_flow: recycle_mass,
                throttle_flow: valve_flow(throttle_at(sc, t), psi),
                recycle_power_kw: loss.value / 1e3,
                events: det.event_count,
                trip: det.trip_request,
            });
        }
        // Valve: dead time, then stroke-rate limit.
        delay.push_back(demand);
        let delayed = delay.pop_front().unwrap_or(demand);
        let max_move = STEP / sc.valve_stroke_time;
        position += (delayed - position).clamp(-max_move, max_move);
        let gamma_t = throttle_at(sc, t);
        let gamma_r = pl.recycle_gamma * position;
        // RK4 on (Φc, Ψ) in Greitzer time.
        let deriv = |phi: f64, psi: f64| {
            (
                b * (pl.characteristic(phi) - psi),
                (phi - valve_flow(gamma_t, psi) - valve_flow(gamma_r, psi)) / b,
            )
        };
        let k1 = deriv(phi, psi);
        let k2 = deriv(phi + 0.5 * dtn * k1.0, psi + 0.5 * dtn * k1.1);
        let k3 = deriv(phi + 0.5 * dtn * k2.0, psi + 0.5 * dtn * k2.1);
        let k4 = deriv(phi + dtn * k3.0, psi + dtn * k3.1);
        phi += dtn / 6.0 * (k1.0 + 2.0 * k2.0 + 2.0 * k3.0 + k4.0);
        psi += dtn / 6.0 * (k1.1 + 2.0 * k2.1 + 2.0 * k3.1 + k4.1);
        // Flow transmitter lag.
        let dp_true = pl.signals(phi, psi).2;
        dp_meas += (dp_true - dp_meas) * (STEP / sc.flow_lag.max(STEP));
        // Bookkeeping on the true state.
        out.min_flow = out.min_flow.min(phi);
        let sign = phi >= 0.0;
        if sign != last_sign {
            out.flow_sign_changes += 1;
            out.flow_reversals += u32::from(!sign);
            last_sign = sign;
        }
        if t >= sc.load_loss_at {
            let m = truth
                .evaluate(&surge_scan(pl.signals(phi, psi)), added)
                .margin
                .value;
            out.min_margin = out.min_margin.min(m);
        }
    }
    if settled_n > 0 {
        out.settled_margin = settled_sum / f64::from(settled_n);
        out.settled_control_margin = settled_cm / f64::from(settled_n);
        out.settled_swing = settled_hi - settled_lo;
    }
    Ok(out)
}
