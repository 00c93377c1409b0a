//! An invented demonstration scenario: a carbon-dioxide train of four
//! intercooled compressor stages to 80 bar a, an aftercooler on chilled water
//! that takes the CO2 well below its pseudo-critical temperature (dense
//! phase, 293 K at 79 bar a), and a pump to 150 bar a, with plausible but
//! made-up design pressures, efficiencies and coolant temperatures. It is
//! **not** data from any real machine; it exists so that the host demo, the
//! benchmarks and the firmware harness all run the same train through the
//! same kernel.
//!
//! The gas model is Peng–Robinson pure CO2: Z, enthalpies and the pump's
//! suction density come from the model (no configured compressibility).
//! [`scan`] synthesises the measurements for scan number `i`: the stage
//! discharge temperatures follow from an assumed polytropic efficiency per
//! stage along the model's own constant-efficiency path, the coolant flows
//! from the model's enthalpy drops, and a slow, deterministic load swing
//! moves the suction pressure.

use crate::cooler::CoolerConfig;
use crate::error::ConfigError;
use crate::gas::{components, GasModel, PengRobinson};
use crate::polytropic::path_discharge_temperature;
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
pub type DemoTrain<T> = Train<T, PengRobinson<T, 1>, STAGES, WINDOW>;

/// The demo gas: Peng–Robinson pure carbon dioxide.
pub fn gas<T: Real>() -> Result<PengRobinson<T, 1>, ConfigError> {
    PengRobinson::<T, 1>::pure(components::CARBON_DIOXIDE)
}

/// Design suction / discharge pressures, bar a (invented).
const DESIGN_BAR: [(f64, f64); STAGES] = [
    (1.05, 3.2),
    (3.1, 9.2),
    (9.0, 26.0),
    (25.6, 80.0),
    (78.5, 150.0),
];
/// Assumed polytropic efficiency per compressor stage (invented).
const ETA_P: [f64; 4] = [0.80, 0.79, 0.78, 0.76];
/// Intercooler coolant (cooling water) inlet temperature, K (invented).
const COOLING_WATER_K: f64 = 300.15;
/// Aftercooler coolant (chilled water) inlet temperature, K (invented).
const CHILLED_WATER_K: f64 = 283.15;
/// Aftercooler gas outlet, the pump suction temperature, K (invented; well
/// below CO2's pseudo-critical temperature of about 308 K at 79 bar a).
const PUMP_SUCTION_K: f64 = 293.15;
/// Configured pump density, kg/m³: used only by gas models without a
/// dense-phase density (the demo's Peng–Robinson model gives its own).
const PUMP_DENSITY_FALLBACK: f64 = 800.0;

/// The demo train configuration.
pub fn config<T: Real>() -> Result<TrainConfig<T, PengRobinson<T, 1>, STAGES>, ConfigError> {
    let gas = gas()?;
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
                    density: T::of(PUMP_DENSITY_FALLBACK),
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
    // The synthesis runs in f64 with the same model as the train.
    let model = gas::<f64>().ok();
    let swing = triangle(i, 600);
    let flow = 11.5 + 0.3 * swing;
    let mut p1 = 1.05e5 * (1.0 + 0.01 * swing);
    let mut t1 = 303.15;
    let mut s = 0;
    let stages = DESIGN_BAR.map(|(d1, d2)| {
        let p2 = p1 * d2 / d1;
        let g = |x: f64| Measured::good(T::of(x));
        // The compressor stages have an efficiency; the pump after them has
        // none.
        let out = if let Some(&eta) = ETA_P.get(s) {
            // Ideal-gas estimate (k 1.29) if the model is unavailable.
            let t2 = model
                .as_ref()
                .and_then(|m| path_discharge_temperature(m, p1, t1, p2, eta, 32))
                .unwrap_or_else(|| {
                    t1 * <f64 as Real>::exp(0.2248 / eta * <f64 as Real>::ln(p2 / p1))
                });
            let last = s == 3;
            let coolant_in = if last {
                CHILLED_WATER_K
            } else {
                COOLING_WATER_K
            };
            let t_out = if last {
                PUMP_SUCTION_K
            } else {
                coolant_in + 8.0 + 1.5 * s as f64
            };
            let p_out = p2 * (1.0 - 0.015);
            let drop = model
                .as_ref()
                .map(|m| m.enthalpy_drop(p2, t2, p_out, t_out, None).0)
                .unwrap_or(860.0 * (t2 - t_out));
            let scan = StageScan {
                suction_pressure: Measured::good(PressureAbs::from_pa(T::of(p1))),
                suction_temperature: Measured::good(Kelvin::new(T::of(t1))),
                discharge_pressure: Measured::good(PressureAbs::from_pa(T::of(p2))),
                discharge_temperature: Measured::good(Kelvin::new(T::of(t2))),
                mass_flow: if s == 0 { Some(g(flow)) } else { None },
                compressibility: None,
                cooler: Some(CoolerScan {
                    gas_outlet_temperature: Measured::good(Kelvin::new(T::of(t_out))),
                    gas_outlet_pressure: None,
                    coolant_inlet_temperature: Measured::good(Kelvin::new(T::of(coolant_in))),
                    coolant_outlet_temperature: Some(Measured::good(Kelvin::new(T::of(
                        coolant_in + 9.0,
                    )))),
                    coolant_mass_flow: Some(g(flow * drop / (4180.0 * 9.0))),
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
