//! An invented demonstration scenario: a carbon-dioxide train of four
//! intercooled compressor stages and a dense-phase pump, with plausible but
//! made-up design pressures, efficiencies, compressibilities and coolant
//! temperatures. It is **not** data from any real machine; it exists so that
//! the host demo, the benchmarks and the firmware harness all run the same
//! train through the same kernel.
//!
//! [`scan`] synthesises the measurements for scan number `i`: the stage
//! discharge temperatures follow from an assumed polytropic efficiency per
//! stage, and a slow, deterministic load swing moves the suction pressure.

use crate::compression::isentropic_exponent_term;
use crate::cooler::CoolerConfig;
use crate::error::ConfigError;
use crate::gas::{IdealGas, CARBON_DIOXIDE};
use crate::quality::Measured;
use crate::real::Real;
use crate::scan::{CoolerScan, Scan, StageScan};
use crate::steady::SteadyStateConfig;
use crate::train::{StageConfig, StageKind, Train, TrainConfig};
use crate::units::{Kelvin, PressureAbs};

/// Stages in the demo train (four compressors, one pump).
pub const STAGES: usize = 5;
/// Steady-state window of the demo train, scans.
pub const WINDOW: usize = 8;

/// The demo train type.
pub type DemoTrain<T> = Train<T, IdealGas<T>, STAGES, WINDOW>;

/// Design suction / discharge pressures, bar a (invented).
const DESIGN_BAR: [(f64, f64); STAGES] = [
    (1.05, 3.2),
    (3.1, 9.2),
    (9.0, 26.0),
    (25.6, 66.0),
    (65.5, 150.0),
];
/// Assumed polytropic efficiency per compressor stage (invented).
const ETA_P: [f64; 4] = [0.80, 0.79, 0.78, 0.76];
/// Assumed mean compressibility per compressor stage (invented, of the order
/// of CO2 at these pressures).
const Z: [f64; 4] = [0.99, 0.97, 0.92, 0.80];

/// The demo train configuration.
pub fn config<T: Real>() -> Result<TrainConfig<T, IdealGas<T>, STAGES>, ConfigError> {
    let gas = IdealGas::from_spec(&CARBON_DIOXIDE, false, T::ONE)?;
    let water = Some(CoolerConfig {
        coolant_cp: T::of(4180.0),
    });
    let mut i = 0;
    let stages = DESIGN_BAR.map(|(p1, p2)| {
        i += 1;
        StageConfig {
            kind: if i <= ETA_P.len() {
                StageKind::Compressor
            } else {
                StageKind::Pump {
                    density: T::of(780.0),
                    efficiency: T::of(0.72),
                }
            },
            design_suction_pressure: PressureAbs::from_bar(T::of(p1)),
            design_discharge_pressure: PressureAbs::from_bar(T::of(p2)),
            cooler: if i <= ETA_P.len() { water } else { None },
        }
    });
    Ok(TrainConfig {
        gas,
        stages,
        max_interstage_pressure_drop: T::of(0.1),
        steady_state: SteadyStateConfig::default(),
    })
}

/// The demo train, built and validated.
pub fn train<T: Real>() -> Result<DemoTrain<T>, ConfigError> {
    Train::new(config()?)
}

/// A deterministic triangle wave in [-1, 1] with period `period` scans.
fn triangle(i: u32, period: u32) -> f64 {
    let p = f64::from(period.max(2));
    let x = f64::from(i % period.max(2)) / p;
    if x < 0.5 {
        4.0 * x - 1.0
    } else {
        3.0 - 4.0 * x
    }
}

/// Synthesised measurements for scan number `i` (invented).
pub fn scan<T: Real>(i: u32) -> Scan<T, STAGES> {
    let k = CARBON_DIOXIDE.k;
    let m_k = isentropic_exponent_term(k);
    let swing = triangle(i, 600);
    let flow = 11.5 + 0.3 * swing;
    let coolant_in = 300.15;
    let mut p1 = 1.05e5 * (1.0 + 0.01 * swing);
    let mut t1 = 303.15;
    let mut s = 0;
    let stages = DESIGN_BAR.map(|(d1, d2)| {
        let p2 = p1 * d2 / d1;
        let g = |x: f64| Measured::good(T::of(x));
        // The compressor stages have an efficiency and a Z; the pump after
        // them has neither.
        let out = if let (Some(&eta), Some(&z)) = (ETA_P.get(s), Z.get(s)) {
            let t2 = t1 * <f64 as Real>::exp(m_k / eta * <f64 as Real>::ln(p2 / p1));
            let t_out = coolant_in + 8.0 + 1.5 * s as f64;
            let scan = StageScan {
                suction_pressure: Measured::good(PressureAbs::from_pa(T::of(p1))),
                suction_temperature: Measured::good(Kelvin::new(T::of(t1))),
                discharge_pressure: Measured::good(PressureAbs::from_pa(T::of(p2))),
                discharge_temperature: Measured::good(Kelvin::new(T::of(t2))),
                mass_flow: if s == 0 { Some(g(flow)) } else { None },
                compressibility: Some(g(z)),
                cooler: Some(CoolerScan {
                    gas_outlet_temperature: Measured::good(Kelvin::new(T::of(t_out))),
                    gas_outlet_pressure: None,
                    coolant_inlet_temperature: Measured::good(Kelvin::new(T::of(coolant_in))),
                    coolant_outlet_temperature: Some(Measured::good(Kelvin::new(T::of(
                        coolant_in + 9.0,
                    )))),
                    coolant_mass_flow: Some(g(flow * 0.86 * (t2 - t_out) / (4.18 * 9.0))),
                }),
            };
            t1 = t_out;
            scan
        } else {
            StageScan::from_si(T::of(p1), T::of(t1), T::of(p2), T::of(t1 + 3.0))
        };
        p1 = p2 * (1.0 - 0.015);
        s += 1;
        out
    });
    Scan { stages }
}
