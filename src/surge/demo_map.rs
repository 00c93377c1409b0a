//! The invented surge map of the tests and demos: a 4-speed surge line of
//! a made-up air compressor, its map conditions, head exponent and flow
//! element, and the monitor timing. An **invented scenario**, not data from
//! any real machine or maker; one copy, so the tests that use it agree on
//! it.
//!
//! Compiled for the crate's own tests and with the `demo` feature (the
//! integration tests that use it require it).

use crate::real::Real;
use crate::surge::{MapConditions, MonitorConfig, SurgeLineConfig, SurgePoint};
use crate::units::{Kelvin, PressureAbs};

/// Map suction pressure, Pa (invented).
pub const MAP_SUCTION_PRESSURE_PA: f64 = 1.0e5;
/// Map suction temperature, K (invented).
pub const MAP_SUCTION_TEMPERATURE_K: f64 = 293.15;
/// Map gas molar mass, kg/kmol (dry air, common practice).
pub const MAP_MOLAR_MASS: f64 = 28.96;
/// Map compressibility factor (an ideal-gas map).
pub const MAP_COMPRESSIBILITY: f64 = 1.0;
/// Polytropic exponent n of the head number (invented).
pub const POLYTROPIC_EXPONENT: f64 = 1.45;
/// Suction flow element coefficient C in Δp = ρ (Q/C)², m² (invented).
pub const FLOW_COEFFICIENT: f64 = 0.04;
/// Surge points as (speed rpm, suction volume flow m³/s, pressure ratio,
/// control margin), rising speed, flow and ratio (invented).
pub const POINTS: [(f64, f64, f64, f64); 4] = [
    (7000.0, 1.40, 1.55, 0.14),
    (8000.0, 1.60, 1.75, 0.12),
    (9000.0, 1.82, 2.00, 0.10),
    (10000.0, 2.05, 2.30, 0.10),
];
/// Monitor scan period, s (invented).
pub const SCAN_PERIOD_S: f64 = 0.02;
/// Monitor time-to-surge horizon, s (invented).
pub const TIME_TO_SURGE_HORIZON_S: f64 = 60.0;
/// Monitor rate filter time constant, s (invented).
pub const RATE_FILTER_TIME_S: f64 = 0.05;

/// [`POINTS`] as surge points.
pub fn points<T: Real>() -> [SurgePoint<T>; 4] {
    POINTS.map(|(n, q, r, m)| SurgePoint {
        speed_rpm: T::of(n),
        suction_volume_flow: T::of(q),
        pressure_ratio: T::of(r),
        control_margin: T::of(m),
    })
}

/// The map conditions.
pub fn map_conditions<T: Real>() -> MapConditions<T> {
    MapConditions {
        suction_pressure: PressureAbs::from_pa(T::of(MAP_SUCTION_PRESSURE_PA)),
        suction_temperature: Kelvin::new(T::of(MAP_SUCTION_TEMPERATURE_K)),
        molar_mass: T::of(MAP_MOLAR_MASS),
        compressibility: T::of(MAP_COMPRESSIBILITY),
    }
}

/// The surge-line configuration of `points` (normally [`points`], or some
/// of them) on this map.
pub fn line_config<T: Real>(points: &[SurgePoint<T>]) -> SurgeLineConfig<'_, T> {
    SurgeLineConfig {
        points,
        map: map_conditions(),
        polytropic_exponent: T::of(POLYTROPIC_EXPONENT),
        flow_coefficient: T::of(FLOW_COEFFICIENT),
    }
}

/// The monitor timing.
pub fn monitor_config<T: Real>() -> MonitorConfig<T> {
    MonitorConfig {
        scan_period: T::of(SCAN_PERIOD_S),
        time_to_surge_horizon: T::of(TIME_TO_SURGE_HORIZON_S),
        rate_filter_time: T::of(RATE_FILTER_TIME_S),
    }
}
