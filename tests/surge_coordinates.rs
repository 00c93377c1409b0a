//! Worked check of the reduced-coordinate transform against an independent
//! calculation: ISO 5167-2 orifice and polytropic work from the Python
//! package `fluids` 1.3.1 (generator: tests/surge_coordinates_reference.py,
//! its printed numbers are copied below), plus a hand calculation.
//!
//! The map point is invented (natural gas, M = 19.5 kg/kmol, Z = 0.93,
//! 30 bar(a), 35 degC, 1.2 m3/s at ratio 1.8, n = 1.35).
//!
//! Hand calculation of the head number: σ = 0.35/1.35 = 0.259 259;
//! 1.8^σ = exp(0.259 259 · 0.587 787) = exp(0.152 389) = 1.164 617;
//! Y = 0.164 617 / 0.259 259 = 0.634 95.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::panic
)]

use polytrope::surge::coordinates::{
    flow_element_dp, flow_number, head_number, sigma_from_exponent, z_r_t,
};
use polytrope::surge::{MapConditions, SurgeLine, SurgeLineConfig, SurgePoint};
use polytrope::units::{Kelvin, PressureAbs};

// fluids 1.3.1 output (tests/surge_coordinates_reference.py).
const DENSITY: f64 = 2.4551416867e+01;
const ORIFICE_DP: f64 = 6.6250472682e+04;
const ELEMENT_COEFFICIENT: f64 = 2.3100694443e-02;
const REDUCED_FLOW_SQUARED: f64 = 2.2083490894e-02;
const REDUCED_HEAD: f64 = 6.3493717043e-01;

const P1: f64 = 30e5;
const T1: f64 = 308.15;
const M: f64 = 19.5;
const Z: f64 = 0.93;

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[test]
fn map_point_transform_matches_iso5167_orifice_and_fluids_head() {
    let points = [
        SurgePoint {
            speed_rpm: 9000.0,
            suction_volume_flow: 1.2,
            pressure_ratio: 1.8,
            control_margin: 0.1,
        },
        SurgePoint {
            speed_rpm: 10000.0,
            suction_volume_flow: 1.35,
            pressure_ratio: 2.0,
            control_margin: 0.1,
        },
    ];
    let line = SurgeLine::<f64, 4>::new(&SurgeLineConfig {
        points: &points,
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(P1),
            suction_temperature: Kelvin::new(T1),
            molar_mass: M,
            compressibility: Z,
        },
        polytropic_exponent: 1.35,
        flow_coefficient: ELEMENT_COEFFICIENT,
    })
    .unwrap();
    let p = line.points()[0];
    // Map route (volume flow, element coefficient) vs the orifice's own dp.
    assert!(rel(p.flow_number, REDUCED_FLOW_SQUARED) < 1e-8);
    assert!(rel(p.head_number, REDUCED_HEAD) < 1e-8);
    // Hand calculation above.
    assert!((p.head_number - 0.63495).abs() < 2e-5);
    // Live route: the orifice dp over suction pressure.
    assert!(rel(flow_number(ORIFICE_DP, P1), REDUCED_FLOW_SQUARED) < 1e-9);
    // Density behind the transform (ρ = p / (Z R T)).
    assert!(rel(P1 / z_r_t(Z, M, T1), DENSITY) < 1e-9);
    let zrt = z_r_t(Z, M, T1);
    assert!(
        rel(
            flow_element_dp(1.2, ELEMENT_COEFFICIENT, P1, zrt),
            ORIFICE_DP
        ) < 1e-8
    );
    // f32 device build of the same transform.
    let h32 = head_number(1.8_f32, sigma_from_exponent(1.35_f32)) as f64;
    // Relative bound of a head in this build (src/tolerance.rs; looser with
    // approx-math).
    let (rtol, _) = polytrope::tolerance::SPECIFIC_WORK.active();
    assert!(rel(h32, REDUCED_HEAD) < rtol);
}
