//! The GERG-2008 table model behind the gas seam: the stage, polytropic
//! methods and train run on it unchanged.
//!
//! Checks: the model's fast `compression` agrees with its own state
//! functions and entropy match (a consistency check of this model); stage
//! results on the table against the same formulas on GERG-2008 states from
//! the `aga8` crate (crates.io, NIST's reference code for AGA 8 / GERG-2008)
//! evaluated directly (the interpolation's share of each stage quantity);
//! the reference-path method on the table against a 32-step path on aga8;
//! a train on the CO2 table over the demo scans (invented scenario).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

#[path = "../examples-host/src/gerg_table.rs"]
#[allow(dead_code)]
mod gerg_table;

use gerg_table::{composition_of, Eos};
use polytrope::gas::table::{PropertyTable, TableGas};
use polytrope::gas::{CompressionStates, GasModel, GasState, Validity, MOLAR_GAS_CONSTANT};
use polytrope::polytropic::{reference_path, schultz};
use polytrope::quality::{Measured, Quality};
use polytrope::stage::{evaluate_compressor, CompressorInputs};

const NG: &[u8] = include_bytes!("../tables/ng_booster.bin");
const CO2: &[u8] = include_bytes!("../tables/co2_demo.bin");

type Table = PropertyTable<2048, 4096>;

/// splitmix64 (reproducible sweeps).
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.next()
    }
}

fn good(x: f64) -> Measured<f64> {
    Measured::new(x, Quality::Good)
}

/// Random stages inside the natural-gas table's envelope: (p1, t1, p2, t2),
/// with t2 from the table's isentropic temperature and an isentropic
/// efficiency of 0.70-0.86 on the temperature rise.
fn stages(gas: &TableGas<'_, f64>, n: usize) -> Vec<(f64, f64, f64, f64)> {
    let mut rng = Rng(0x7365_616d);
    let mut out = Vec::new();
    while out.len() < n {
        let p1 = rng.range(2e5f64.ln(), 80e5f64.ln()).exp();
        let ratio = rng.range(1.3, 3.0);
        let t1 = rng.range(250.0, 330.0);
        let s1 = gas.state(p1, t1);
        let t2s = gas.isentropic_temperature(p1 * ratio, s1.entropy, t1 * 1.2);
        let t2 = t1 + (t2s.value - t1) / rng.range(0.70, 0.86);
        if t2s.quality == Quality::Good && t2 < 445.0 {
            out.push((p1, t1, p1 * ratio, t2));
        }
    }
    out
}

/// A remembered state's fresh evaluation starts its descent from the leaf
/// the last one found when that leaf holds the point: the mean path
/// properties from a long-lived model (its remembered leaf anywhere) equal
/// a fresh model's (descent from the start-of-descent grid), bit for bit,
/// over small steps (the same leaf, its neighbours) and jumps across the
/// CO2 table (deep near the critical point): a consistency check of this
/// model.
#[test]
fn remembered_leaf_gives_the_same_states() {
    let table = Box::new(Table::from_blob(CO2).unwrap());
    let gas = TableGas::<f64>::new(table.data()).unwrap();
    let ((p_min, p_max), (t_min, t_max)) = gas.envelope();
    let mut rng = Rng(0x6c65_6166);
    // Near CO2's critical point (7.38 MPa, 304.1 K), where the tree is
    // deepest.
    let (mut p, mut t) = (7.0e6_f64, 306.0_f64);
    for i in 0..3000 {
        if rng.next() < 0.1 {
            p = rng.range(p_min.ln(), p_max.ln()).exp();
            t = rng.range(t_min, t_max);
        } else {
            p = (p * (1.0 + rng.range(-2e-3, 2e-3))).clamp(p_min, p_max);
            t = (t + rng.range(-0.3, 0.3)).clamp(t_min, t_max);
        }
        let fresh = TableGas::<f64>::new(table.data()).unwrap();
        assert_eq!(
            gas.path(p, t, p * 1.01, t, None),
            fresh.path(p, t, p * 1.01, t, None),
            "{i} {p} {t}"
        );
    }
}

#[test]
fn fast_compression_agrees_with_the_models_own_state_functions() {
    let table = Box::new(Table::from_blob(NG).unwrap());
    let gas = TableGas::<f64>::new(table.data()).unwrap();
    for (p1, t1, p2, t2) in stages(&gas, 300) {
        let ln_r = (p2 / p1).ln();
        let cs = gas.compression(p1, t1, p2, ln_r, Some(t2), None);
        let s1 = GasModel::state(&gas, p1, t1, None);
        let s2 = GasModel::state(&gas, p2, t2, None);
        let s2s = gas.isentropic_state(&s1, p2, None);
        assert_eq!(cs.validity, Validity::IN_RANGE);
        // The entropy match stops at 1/16 of the table's entropy tolerance.
        assert!(
            (s2s.entropy - s1.entropy).abs() < 4e-3,
            "{}",
            s2s.entropy - s1.entropy
        );
        assert!((cs.isentropic_temperature - s2s.temperature).abs() < 2e-3);
        let dhs = s2s.enthalpy - s1.enthalpy;
        assert!((cs.isentropic_enthalpy_rise - dhs).abs() < 1e-4 * dhs + 0.5);
        assert!((cs.enthalpy_rise - (s2.enthalpy - s1.enthalpy)).abs() < 1e-6);
        assert!((cs.entropy_rise - (s2.entropy - s1.entropy)).abs() < 1e-9);
        let pv_rise = p2 * s2.volume - p1 * s1.volume;
        assert!((cs.pv_rise - pv_rise).abs() < 1e-6 * pv_rise.abs() + 1e-6);
        assert!((cs.suction_z - s1.z).abs() < 1e-12);
    }
}

/// The isothermal work and the enthalpy drop from the remembered end states
/// equal the same differences of the model's own state functions, bit for
/// bit or (where a state at a discharge pressure took the discharge's
/// ln p1 + ln r for ln p2) to rounding (a consistency check of this
/// model), whatever was remembered
/// before (states at the same pressure and other temperatures, repeats,
/// more states than slots), and outside the envelope they are bad the
/// same way.
#[test]
fn remembered_isothermal_work_and_enthalpy_drop_equal_the_state_functions() {
    let table = Box::new(Table::from_blob(NG).unwrap());
    let gas = TableGas::<f64>::new(table.data()).unwrap();
    let mut rng = Rng(0x6973_6f74);
    for (p1, t1, p2, t2) in stages(&gas, 200) {
        let ln_r = (p2 / p1).ln();
        // A train's order: the stage, its cooler (outlet at the suction
        // pressure), then the totals' path properties and isothermal work.
        let _ = gas.compression(p1, t1, p2, ln_r, Some(t2), None);
        let t_out = rng.range(t1 - 20.0, t2);
        let p_out = if rng.next() < 0.5 { p1 } else { p2 * 0.98 };
        let fresh = TableGas::<f64>::new(table.data()).unwrap();
        let state = |p: f64, t: f64| GasModel::state(&fresh, p, t, None);
        // The drop is 0 where a state is bad (the override's placeholder).
        let expect_drop = |a: &GasState<f64>, b: &GasState<f64>| {
            if a.validity.worst(b.validity).quality == Quality::Bad {
                0.0
            } else {
                a.enthalpy - b.enthalpy
            }
        };
        let (drop, v) = gas.enthalpy_drop(p2, t2, p_out, t_out, None);
        let (a, b) = (state(p2, t2), state(p_out, t_out));
        // The discharge state was remembered with ln p1 + ln r, not ln p2:
        // the inlet's enthalpy may differ in the last bits.
        assert!((drop - expect_drop(&a, &b)).abs() <= 1e-9);
        assert_eq!(v, a.validity.worst(b.validity));
        let (drop, v) = gas.enthalpy_drop(p1, t2, p_out, t_out, None);
        let a = state(p1, t2);
        assert_eq!(drop, expect_drop(&a, &b));
        assert_eq!(v, a.validity.worst(b.validity));
        let _ = gas.path(p1, t1, p2, t1, None);
        for t in [t1, t_out, t2] {
            let (w, v) = gas.isothermal_work(p1, p2, ln_r, t, None);
            let (a, b) = (state(p1, t), state(p2, t));
            // The state at p2 evaluated at ln p1 + ln r (the discharge's
            // logarithm): the work may differ in the last bits.
            let expect = (b.enthalpy - a.enthalpy) - t * (b.entropy - a.entropy);
            assert!(
                (w - expect).abs() <= 1e-12 * expect.abs().max(1.0),
                "{w} {expect}"
            );
            assert_eq!(v, a.validity.worst(b.validity));
        }
    }
    // Outside the envelope (pressure, temperature) and not finite: the same
    // values and validity reasons as the state functions give.
    for (p1, p2, t) in [
        (40e5, 1e9, 300.0),
        (40e5, 80e5, 1500.0),
        (f64::NAN, 80e5, 300.0),
        (40e5, 80e5, f64::NAN),
        (-1.0, 80e5, 300.0),
    ] {
        let (w, v) = gas.isothermal_work(p1, p2, 0.7, t, None);
        let (a, b) = (
            GasModel::state(&gas, p1, t, None),
            GasModel::state(&gas, p2, t, None),
        );
        let expected = (b.enthalpy - a.enthalpy) - t * (b.entropy - a.entropy);
        assert!(
            w == expected || (w.is_nan() && expected.is_nan()),
            "{w} {expected}"
        );
        assert_eq!(v, a.validity.worst(b.validity));
        assert_ne!(v.quality, Quality::Good);
    }
}

/// The CompressionStates of a stage from aga8 directly.
fn aga8_states(eos: &mut Eos, p1: f64, t1: f64, p2: f64, t2: f64) -> CompressionStates<f64> {
    let r = MOLAR_GAS_CONSTANT / eos.molar_mass();
    let a = eos.state(p1, t1).unwrap();
    let b = eos.state(p2, t2).unwrap();
    let mut ts = t2;
    for _ in 0..50 {
        let st = eos.state(p2, ts).unwrap();
        let d = (st.s - a.s) * ts / st.cp;
        ts -= d;
        if d.abs() < 1e-11 * ts {
            break;
        }
    }
    let c = eos.state(p2, ts).unwrap();
    let ln_r = (p2 / p1).ln();
    let (pv1, pv2, pv2s) = (r * a.z * t1, r * b.z * t2, r * c.z * ts);
    let iso_ln_pv = (pv2s / pv1).ln();
    let dhs = c.h - a.h;
    CompressionStates {
        suction_z: a.z,
        isentropic_temperature: ts,
        isentropic_enthalpy_rise: dhs,
        isentropic_pv_rise: pv2s - pv1,
        isentropic_ln_pv_ratio: iso_ln_pv,
        isentropic_exponent: ln_r / (ln_r - iso_ln_pv),
        head_factor: dhs * iso_ln_pv / (ln_r * (pv2s - pv1)),
        isentropic_validity: Validity::IN_RANGE,
        has_discharge: true,
        discharge_z: b.z,
        enthalpy_rise: b.h - a.h,
        entropy_rise: b.s - a.s,
        pv_rise: pv2 - pv1,
        ln_pv_ratio: (pv2 / pv1).ln(),
        validity: Validity::IN_RANGE,
    }
}

#[test]
fn stage_on_the_table_matches_the_same_method_on_gerg_2008() {
    let table = Box::new(Table::from_blob(NG).unwrap());
    let gas = TableGas::<f64>::new(table.data()).unwrap();
    let mut eos = Eos::new(&composition_of(&table.data().header), false).unwrap();
    let mut worst = [0.0f64; 3];
    for (p1, t1, p2, t2) in stages(&gas, 200) {
        let r = evaluate_compressor(
            &gas,
            &CompressorInputs {
                suction_pressure: good(p1),
                suction_temperature: good(t1),
                discharge_pressure: good(p2),
                discharge_temperature: good(t2),
                mass_flow: good(10.0),
                compressibility: None,
            },
        );
        assert_eq!(r.polytropic_efficiency.quality, Quality::Good, "{r:?}");
        let cs = aga8_states(&mut eos, p1, t1, p2, t2);
        let reference = schultz(&cs, (p2 / p1).ln()).unwrap();
        let rise = cs.enthalpy_rise;
        worst[0] = worst[0].max((r.actual_work.value - rise).abs() / rise);
        worst[1] =
            worst[1].max((r.isentropic_head.value - cs.isentropic_enthalpy_rise).abs() / rise);
        worst[2] = worst[2].max((r.polytropic_efficiency.value - reference.efficiency).abs());
    }
    eprintln!(
        "NG table through the seam vs aga8 (same methods): actual work {:.2e}, isentropic head {:.2e} of the rise, Schultz eta_p {:.2e}",
        worst[0], worst[1], worst[2]
    );
    assert!(worst[0] <= 5e-4 && worst[1] <= 5e-4, "{worst:?}");
    assert!(worst[2] <= 1e-3, "{worst:?}");
}

#[test]
fn reference_path_runs_on_the_table() {
    let table = Box::new(Table::from_blob(NG).unwrap());
    let gas = TableGas::<f64>::new(table.data()).unwrap();
    let (p1, t1, p2, t2) = (30e5_f64, 300.0_f64, 75e5_f64, 372.0_f64);
    let ln_r = (p2 / p1).ln();
    let cs = gas.compression(p1, t1, p2, ln_r, Some(t2), None);
    let path = reference_path(&gas, &cs, ln_r, p1, t1, p2, t2, 0.8).unwrap();
    let simpson = gas.stage(p1, t1, p2, t2).polytropic_efficiency.value;
    // Two independent constructions of the same constant-efficiency path on
    // this model (the seam's stepped path, the table's Simpson/Hermite).
    assert!(
        (path.efficiency - simpson).abs() < 1e-3,
        "{} {}",
        path.efficiency,
        simpson
    );
}

#[test]
fn validity_reasons_through_the_seam() {
    let table = Box::new(Table::from_blob(CO2).unwrap());
    let gas = TableGas::<f64>::new(table.data()).unwrap();
    use polytrope::gas::ValidityReason as R;
    let v = |p: f64, t: f64| GasModel::state(&gas, p, t, None).validity;
    assert_eq!(v(20e5, 330.0), Validity::IN_RANGE);
    assert_eq!(v(0.5e5, 330.0).reason, R::PressureOutOfRange);
    assert_eq!(v(20e5, 500.0).reason, R::TemperatureOutOfRange);
    assert_eq!(v(0.5e5, 330.0).quality, Quality::Bad);
    let near = v(76e5, 306.0);
    assert_eq!(
        (near.quality, near.reason),
        (Quality::Uncertain, R::NearCritical)
    );
    let (drop, validity) = gas.enthalpy_drop(66e5, 420.0, 65e5, 320.0, None);
    assert_eq!(validity, Validity::IN_RANGE);
    assert!(drop > 0.0);
}
