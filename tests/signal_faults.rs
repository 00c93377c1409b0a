//! Fault injection, one test per fault class: each injects the fault into
//! the invented two-stage front end (tests/signal_support), and asserts it
//! is flagged within one scan, that the outputs depending on it degrade and
//! that the others stay good.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod signal_support;

use polytrope::signal::{FaultCode, RtdClass};
use polytrope::Quality::{self, Bad, Good, Uncertain};
use signal_support::*;

fn q_eff(s: &Step<f64>, stage: usize) -> Quality {
    s.snapshot.stages[stage]
        .compressor()
        .unwrap()
        .isentropic_efficiency
        .quality
}

/// All channels except `except` are good with no fault.
fn others_good(s: &Step<f64>, except: &[usize]) {
    for (i, o) in s.out.iter().enumerate() {
        if !except.contains(&i) {
            assert_eq!(o.status.quality, Good, "channel {i}: {:?}", o.status);
            assert_eq!(o.status.fault, FaultCode::None, "channel {i}");
        }
    }
}

/// Warm the front end up, then run one scan with channel `ch` replaced by
/// `raw` (mA).
fn inject(ch: usize, raw: f64) -> (FrontEnd<f64>, Step<f64>) {
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    let mut r = healthy_raw(30);
    r[ch] = raw;
    let s = fe.step(r, 30 * SCAN_MS);
    (fe, s)
}

#[test]
fn healthy_front_end_is_all_good() {
    let mut fe = FrontEnd::<f64>::new();
    let s = fe.warm_up(0, 40);
    others_good(&s, &[]);
    assert_eq!(s.flow.mass_flow.quality, Good);
    assert!(s.flow.within_limits);
    // flange taps, D 100 mm, beta 0.5, dp 20 kPa, air at 1.2 bar a, 300 K.
    assert!(
        (s.flow.mass_flow.value - 0.28).abs() < 0.02,
        "{}",
        s.flow.mass_flow.value
    );
    for st in 0..2 {
        assert_eq!(q_eff(&s, st), Good);
        let e = s.snapshot.stages[st]
            .compressor()
            .unwrap()
            .polytropic_efficiency
            .value;
        assert!((e - 0.8).abs() < 0.01, "stage {st} eta_p {e}");
    }
    for v in snapshot_values(&s.snapshot) {
        assert_eq!(v.quality, Good);
    }
    assert_eq!(s.discharge_check_passed, [true, true]);
}

/// NAMUR NE 43 thresholds (from memory; NE 43): failure at or below 3.6 mA
/// and at or above 21.0 mA; measurement information 3.8-20.5 mA; the bands
/// in between are saturated (uncertain here).
#[test]
fn ne43_failure_low_is_bad_then_substituted() {
    let (_, s) = inject(T2A, 3.6);
    assert_eq!(s.out[T2A].status.fault, FaultCode::Ne43FailureLow);
    assert!(s.out[T2A].status.substituted);
    assert_eq!(s.out[T2A].status.quality, Uncertain);
    assert_eq!(q_eff(&s, 0), Uncertain);
    assert_eq!(q_eff(&s, 1), Good);
    others_good(&s, &[T2A]);
}

#[test]
fn ne43_failure_high_is_flagged() {
    let (_, s) = inject(P2B, 21.0);
    assert_eq!(s.out[P2B].status.fault, FaultCode::Ne43FailureHigh);
    assert_eq!(s.out[P2B].status.quality, Uncertain);
    assert_eq!(q_eff(&s, 1), Uncertain);
    assert_eq!(q_eff(&s, 0), Good);
    others_good(&s, &[P2B]);
}

/// Ramps channel `ch` to SI value `to` in two scans (within its rate
/// limit), then sends `ma`; returns the last step.
fn ramp_then(ch: usize, to_si: f64, ma: f64) -> Step<f64> {
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    let mut r = healthy_raw(30);
    r[ch] = ma_for(ch, to_si);
    fe.step(r, 30 * SCAN_MS);
    let mut r = healthy_raw(31);
    r[ch] = ma;
    fe.step(r, 31 * SCAN_MS)
}

#[test]
fn ne43_saturated_high_is_uncertain_not_substituted() {
    // 20.7 mA on the 0..50 kPa dp channel = 52.19 kPa (above 100 % span).
    let s = ramp_then(DP, 36_000.0, 20.7);
    assert_eq!(s.out[DP].status.fault, FaultCode::Ne43SaturatedHigh);
    assert_eq!(s.out[DP].status.quality, Uncertain);
    assert!(!s.out[DP].status.substituted);
    assert!((s.out[DP].raw.value - 52_187.5).abs() < 1e-6);
    assert_eq!(s.flow.mass_flow.quality, Uncertain);
    let c = s.snapshot.stages[0].compressor().unwrap();
    assert_eq!(c.gas_power.quality, Uncertain);
    assert_eq!(c.isentropic_efficiency.quality, Good);
    assert_eq!(q_eff(&s, 1), Good);
    others_good(&s, &[DP]);
}

#[test]
fn ne43_saturated_low_is_uncertain_not_substituted() {
    // 3.7 mA on the 0..2 bar g suction channel = -3750 Pa g = 97575 Pa a.
    let s = ramp_then(P1A, 1.09e5, 3.7);
    assert_eq!(s.out[P1A].status.fault, FaultCode::Ne43SaturatedLow);
    assert_eq!(s.out[P1A].status.quality, Uncertain);
    assert!(!s.out[P1A].status.substituted);
    assert!((s.out[P1A].raw.value - 97_575.0).abs() < 1e-6);
    assert_eq!(q_eff(&s, 0), Uncertain);
    assert_eq!(s.flow.mass_flow.quality, Uncertain);
    assert_eq!(q_eff(&s, 1), Good);
    // The stage-1 discharge temperature no longer matches the (wrong)
    // pressure ratio: the analytical-redundancy check flags it as well.
    others_good(&s, &[P1A, T2A]);
}

#[test]
fn ne43_thresholds_exactly() {
    use polytrope::signal::ne43::classify;
    assert_eq!(classify(3.6_f32), FaultCode::Ne43FailureLow);
    assert_eq!(classify(3.61_f32), FaultCode::Ne43SaturatedLow);
    assert_eq!(classify(3.79_f32), FaultCode::Ne43SaturatedLow);
    assert_eq!(classify(3.8_f32), FaultCode::None);
    assert_eq!(classify(20.5_f32), FaultCode::None);
    assert_eq!(classify(20.51_f32), FaultCode::Ne43SaturatedHigh);
    assert_eq!(classify(20.99_f32), FaultCode::Ne43SaturatedHigh);
    assert_eq!(classify(21.0_f32), FaultCode::Ne43FailureHigh);
    assert_eq!(classify(0.0_f64), FaultCode::Ne43FailureLow);
    assert_eq!(classify(f64::NAN), FaultCode::NotFinite);
}

#[test]
fn not_finite_sample_is_flagged() {
    for raw in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
        let (_, s) = inject(P1B, raw);
        assert_eq!(s.out[P1B].status.fault, FaultCode::NotFinite, "{raw}");
        assert_eq!(s.out[P1B].status.quality, Uncertain);
        assert!(s.out[P1B].status.substituted);
        assert_eq!(q_eff(&s, 1), Uncertain);
        assert_eq!(q_eff(&s, 0), Good);
        others_good(&s, &[P1B]);
    }
}

#[test]
fn sample_time_not_advancing_is_flagged() {
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    let mut t = [30 * SCAN_MS; CH];
    t[T1A] = 29 * SCAN_MS; // the same time as the previous sample
    let s = fe.step_at(healthy_raw(30), t, false);
    assert_eq!(s.out[T1A].status.fault, FaultCode::TimeNotAdvancing);
    assert_eq!(s.out[T1A].status.quality, Uncertain);
    assert_eq!(q_eff(&s, 0), Uncertain);
    assert_eq!(q_eff(&s, 1), Good);
    // T1A also feeds the orifice density.
    assert_eq!(s.flow.mass_flow.quality, Uncertain);
    others_good(&s, &[T1A]);
}

#[test]
fn out_of_range_is_flagged() {
    // 19 mA on the stage-1 suction temperature channel = 93.75 degC = 366.9 K,
    // above the plausibility ceiling of 360 K; a valid NE 43 current.
    let (_, s) = inject(T1A, 19.0);
    assert_eq!(s.out[T1A].status.fault, FaultCode::OutOfRange);
    assert_eq!(s.out[T1A].status.quality, Uncertain);
    assert_eq!(q_eff(&s, 0), Uncertain);
    assert_eq!(q_eff(&s, 1), Good);
    others_good(&s, &[T1A]);
}

#[test]
fn spike_is_rejected() {
    // +5 K in one 100 ms scan = 50 K/s against a 20 K/s limit.
    let (_, s) = inject(T2B, ma_for(T2B, HEALTHY_SI[T2B] + 5.0));
    assert_eq!(s.out[T2B].status.fault, FaultCode::Spike);
    assert!(s.out[T2B].status.substituted);
    assert!(
        (s.out[T2B].raw.value - HEALTHY_SI[T2B]).abs() < 0.2,
        "held value"
    );
    assert_eq!(q_eff(&s, 1), Uncertain);
    assert_eq!(q_eff(&s, 0), Good);
    others_good(&s, &[T2B]);
}

#[test]
fn frozen_value_is_flagged_when_the_window_fills() {
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    let stuck = healthy_raw(29)[P2A];
    for i in 30..30 + W as u32 {
        let mut r = healthy_raw(i);
        r[P2A] = stuck;
        let s = fe.step(r, i * SCAN_MS);
        // Sample 29 already had the stuck value, so the W-sample window
        // holds only stuck values from scan 30 + W - 2 on.
        let frozen = i >= 30 + W as u32 - 2;
        if frozen {
            assert_eq!(s.out[P2A].status.fault, FaultCode::Frozen);
            assert_eq!(s.out[P2A].status.quality, Uncertain);
            assert_eq!(q_eff(&s, 0), Uncertain);
            assert_eq!(q_eff(&s, 1), Good);
            others_good(&s, &[P2A]);
        } else {
            assert_eq!(s.out[P2A].status.fault, FaultCode::None, "scan {i}");
        }
    }
}

#[test]
fn substitution_holds_then_goes_bad() {
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    let held = fe.channels[P1B].output().raw.value;
    let mut last = None;
    for (n, i) in (30..40).enumerate() {
        let mut r = healthy_raw(i);
        r[P1B] = 2.0; // open loop
        let s = fe.step(r, i * SCAN_MS);
        let elapsed = (n as u32 + 1) * SCAN_MS; // since the last good sample
        if elapsed <= 500 {
            assert_eq!(s.out[P1B].status.quality, Uncertain, "{elapsed} ms");
            assert_eq!(s.out[P1B].raw.value, held);
            assert_eq!(q_eff(&s, 1), Uncertain);
        } else {
            assert_eq!(s.out[P1B].status.quality, Bad, "{elapsed} ms");
            assert_eq!(s.out[P1B].raw.value, 0.0);
            assert_eq!(q_eff(&s, 1), Bad);
        }
        assert_eq!(q_eff(&s, 0), Good);
        others_good(&s, &[P1B]);
        last = Some(s);
    }
    let s = last.unwrap();
    // Whole-train totals that used the bad value are no longer good; the
    // work from the temperature rises does not use the pressure and stays
    // good (issue 11: quality follows use).
    assert_ne!(
        s.snapshot.totals.measured_staged_isentropic_work.quality,
        Good
    );
    assert_eq!(s.snapshot.totals.compressor_work.quality, Good);
    // Events: good -> uncertain -> bad on channel P1B.
    let ev: Vec<_> = fe.log.iter().filter(|e| e.channel == P1B as u8).collect();
    let last_two: Vec<_> = ev
        .iter()
        .rev()
        .take(2)
        .rev()
        .map(|e| (e.from, e.to))
        .collect();
    assert_eq!(last_two, vec![(Good, Uncertain), (Uncertain, Bad)]);
    // Recovery.
    let s = fe.warm_up(40, 1);
    assert_eq!(s.out[P1B].status.quality, Good);
}

#[test]
fn discharge_below_suction_fails_the_cross_check() {
    // Stage-2 discharge drifts to 3.0 bar a, below its 3.5 bar a suction,
    // over 5 s (1.4e5 Pa/s, within the 2e5 Pa/s rate limit).
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    let mut flagged_at = None;
    for i in 30..90 {
        let f = ((i - 29) as f64 / 50.0).min(1.0);
        let mut r = healthy_raw(i);
        r[P2B] = ma_for(P2B, 1.0e6 + f * (3.0e5 - 1.0e6) + dither(i, 50.0));
        let s = fe.step(r, i * SCAN_MS);
        let p2 = s.out[P2B].filtered.value;
        let p1 = s.out[P1B].filtered.value;
        if p2 < p1 - 2.0e3 {
            assert_eq!(s.out[P2B].status.fault, FaultCode::CrossCheck);
            assert_eq!(s.out[P1B].status.fault, FaultCode::CrossCheck);
            assert_eq!(s.out[P2B].status.quality, Uncertain);
            assert_ne!(q_eff(&s, 1), Good);
            assert_eq!(q_eff(&s, 0), Good);
            flagged_at.get_or_insert(i);
        } else {
            assert_eq!(s.out[P2B].status.fault, FaultCode::None);
        }
    }
    assert!(flagged_at.is_some());
}

#[test]
fn negative_differential_pressure_fails_the_cross_check() {
    // 3.9 mA on 0..50 kPa = -312.5 Pa, beyond the 100 Pa noise allowance.
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    // Two scans, within the 2e5 Pa/s rate limit.
    let mut r = healthy_raw(30);
    r[DP] = ma_for(DP, 10_000.0);
    fe.step(r, 30 * SCAN_MS);
    let mut r = healthy_raw(31);
    r[DP] = 3.9;
    let s = fe.step(r, 31 * SCAN_MS);
    assert_eq!(s.out[DP].status.fault, FaultCode::CrossCheck);
    assert_eq!(s.out[DP].status.quality, Uncertain);
    // Filtered dp is still positive (low-pass), so the flow is uncertain.
    assert_eq!(s.flow.mass_flow.quality, Uncertain);
    assert_eq!(q_eff(&s, 0), Good);
    assert_eq!(q_eff(&s, 1), Good);
    let power = s.snapshot.stages[0].compressor().unwrap().gas_power;
    assert_eq!(power.quality, Uncertain);
    others_good(&s, &[DP]);
}

#[test]
fn sudden_discharge_temperature_disagreement_is_flagged() {
    // A drift of +1.5 K per scan (15 K/s, within the rate limit) on the
    // stage-1 discharge temperature while pressures stay put: the prediction
    // from the pressure ratio and the recent efficiency disagrees.
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    let mut flagged = false;
    for i in 30..60 {
        let mut r = healthy_raw(i);
        r[T2A] = ma_for(T2A, HEALTHY_SI[T2A] + 1.5 * (i - 29) as f64);
        let s = fe.step(r, i * SCAN_MS);
        if !s.discharge_check_passed[0] {
            flagged = true;
            assert_eq!(s.out[T2A].status.fault, FaultCode::CrossCheck);
            assert_eq!(s.out[T2A].status.quality, Uncertain);
            // The efficiency is reported uncertain, not as a good collapse.
            assert_eq!(q_eff(&s, 0), Uncertain);
            assert_eq!(q_eff(&s, 1), Good);
            assert!(s.discharge_check_passed[1]);
            others_good(&s, &[T2A]);
        }
    }
    assert!(flagged, "the drift was never flagged");
}

#[test]
fn zero_offset_at_no_flow_is_flagged_after_it_persists() {
    let mut fe = FrontEnd::<f64>::new();
    fe.warm_up(0, 30);
    // Machine stopped (no flow known), dp transmitter reads 400 Pa. Ramp the
    // dp down within its rate limit first (one scan: 20 kPa).
    let mut seen = None;
    for i in 30..60 {
        let mut r = healthy_raw(i);
        r[DP] = ma_for(DP, 400.0 + dither(i, 20.0));
        let s = fe.step_at(r, [i * SCAN_MS; CH], true);
        if s.dp.fault == FaultCode::ZeroOffset {
            seen.get_or_insert(i);
            assert_eq!(s.dp.differential_pressure.quality, Uncertain);
            assert_eq!(s.flow.mass_flow.quality, Uncertain);
        }
    }
    let first = seen.expect("zero offset never flagged");
    // No flow from scan 30 on with |dp| > 150 Pa throughout: flagged once
    // the offset has persisted 1000 ms, not before.
    assert_eq!(first, 40, "flagged at scan {first}");
    // A passing no-flow check clears it.
    for i in 60..80 {
        let mut r = healthy_raw(i);
        r[DP] = ma_for(DP, dither(i, 20.0));
        let s = fe.step_at(r, [i * SCAN_MS; CH], true);
        if i == 79 {
            assert_eq!(s.dp.fault, FaultCode::None);
            assert_eq!(s.flow.mass_flow.value, 0.0, "below cut-off");
            assert_eq!(s.flow.mass_flow.quality, Good);
        }
    }
}

#[test]
fn orifice_outside_iso5167_limits_is_uncertain() {
    use polytrope::flow::orifice::OrificeInputs;
    use polytrope::flow::{Orifice, OrificeConfig, TapType};
    use polytrope::units::{Kelvin, PressureAbs};
    use polytrope::Measured;
    let make = |d_pipe: f64, d_bore: f64| {
        Orifice::new(OrificeConfig {
            pipe_diameter: d_pipe,
            bore_diameter: d_bore,
            taps: TapType::Corner,
            isentropic_exponent: 1.4,
            viscosity: 1.85e-5,
            gas_constant: 287.05,
        })
        .unwrap()
    };
    let inputs = |dp: f64| OrificeInputs {
        differential_pressure: Measured::good(dp),
        upstream_pressure: Measured::good(PressureAbs::from_pa(2.0e5)),
        upstream_temperature: Measured::good(Kelvin::new(300.0)),
        compressibility: Measured::good(1.0),
    };
    let ok = make(0.1, 0.05).evaluate(&inputs(1.0e4));
    assert_eq!(ok.mass_flow.quality, Good);
    // Pipe below 50 mm.
    let small = make(0.04, 0.02).evaluate(&inputs(1.0e4));
    assert_eq!(small.mass_flow.quality, Uncertain);
    assert!(small.mass_flow.value > 0.0);
    // Beta 0.8.
    assert_eq!(
        make(0.1, 0.08).evaluate(&inputs(1.0e4)).mass_flow.quality,
        Uncertain
    );
    // p2/p1 = 0.7 < 0.75: expansibility outside its equation's range.
    assert_eq!(
        make(0.1, 0.05).evaluate(&inputs(6.0e4)).mass_flow.quality,
        Uncertain
    );
    // Re_D below 5000: 0.5 Pa.
    let low = make(0.1, 0.05).evaluate(&inputs(0.5));
    assert!(low.reynolds.value < 5000.0);
    assert_eq!(low.mass_flow.quality, Uncertain);
}

#[test]
fn cooler_temperature_cross_check() {
    use polytrope::signal::cross_check::cooler_temperatures;
    use polytrope::signal::{Channel, ChannelConfig, InstrumentClass, SignalKind, Unit};
    let cfg = |id| ChannelConfig {
        id,
        signal: SignalKind::Engineering,
        unit: Unit::Celsius,
        range_low: 0.0,
        range_high: 200.0,
        plausible_low: 250.0,
        plausible_high: 500.0,
        noise_floor: 0.0,
        instrument: InstrumentClass::Rtd(RtdClass::B),
        max_rate: 100.0,
        filter_time_constant_s: 0.0,
        hold_ms: 0,
    };
    // Fresh channels per case (time must advance per channel).
    let case = |tin: f64, tout: f64, tc: f64| {
        let mut a = Channel::<f64, 4, 1>::new(cfg(0)).unwrap().update(tin, 1);
        let mut b = Channel::<f64, 4, 1>::new(cfg(1)).unwrap().update(tout, 1);
        let mut c = Channel::<f64, 4, 1>::new(cfg(2)).unwrap().update(tc, 1);
        let ok = cooler_temperatures(&mut a, &mut b, &mut c, 1.0);
        (
            ok,
            a.status.quality,
            b.status.quality,
            c.status.quality,
            b.status.fault,
        )
    };
    assert_eq!(
        case(150.0, 40.0, 25.0),
        (true, Good, Good, Good, FaultCode::None)
    );
    // Outlet above inlet: inlet and outlet uncertain, coolant good.
    assert_eq!(
        case(150.0, 155.0, 25.0),
        (false, Uncertain, Uncertain, Good, FaultCode::CrossCheck)
    );
    // Outlet below coolant inlet: outlet and coolant uncertain, inlet good.
    assert_eq!(
        case(150.0, 20.0, 25.0),
        (false, Good, Uncertain, Uncertain, FaultCode::CrossCheck)
    );
    // Within the allowance: passes.
    assert!(case(150.0, 24.5, 25.0).0);
}

#[test]
fn mass_balance_outvotes_a_drifting_flow_transmitter() {
    use polytrope::signal::cross_check::mass_balance;
    use polytrope::Measured;
    // Three measured flows, a known 0.5 kg/s draw after stage 0.
    let mut flows = [
        Some(Measured::good(10.0_f64)),
        Some(Measured::good(9.5)),
        Some(Measured::good(10.4)), // drifted: should read 9.5
    ];
    let draws = [0.5, 0.0, 0.0];
    assert_eq!(mass_balance(&mut flows, &draws, 0.02), 1);
    assert_eq!(flows[0].unwrap().quality, Good);
    assert_eq!(flows[1].unwrap().quality, Good);
    assert_eq!(flows[2].unwrap().quality, Uncertain);
    // Two flows disagreeing: both uncertain.
    let mut two = [
        Some(Measured::good(10.0_f64)),
        None,
        Some(Measured::good(11.0)),
    ];
    assert_eq!(mass_balance(&mut two, &[0.0; 3], 0.02), 2);
    assert_eq!(two[0].unwrap().quality, Uncertain);
    // Consistent with the draw: nothing flagged.
    let mut ok = [
        Some(Measured::good(10.0_f64)),
        Some(Measured::good(9.52)),
        None,
    ];
    assert_eq!(mass_balance(&mut ok, &draws, 0.02), 0);
    // A bad flow does not vote.
    let mut with_bad = [Some(Measured::good(10.0_f64)), Some(Measured::bad()), None];
    assert_eq!(mass_balance(&mut with_bad, &draws, 0.02), 0);
}

/// IEC 60751 tolerance classes: at 100 degC, AA 0.27, A 0.35, B 0.80,
/// C 1.60 degC (values from the standard's class equations as printed in
/// sensor data sheets); at 0 degC, 0.10 / 0.15 / 0.30 / 0.60.
#[test]
fn iec60751_class_tolerances() {
    let cases = [
        (RtdClass::AA, 0.10, 0.27),
        (RtdClass::A, 0.15, 0.35),
        (RtdClass::B, 0.30, 0.80),
        (RtdClass::C, 0.60, 1.60),
    ];
    for (c, at0, at100) in cases {
        assert!((c.tolerance(0.0_f64) - at0).abs() < 1e-12, "{c:?}");
        assert!((c.tolerance(100.0_f64) - at100).abs() < 1e-12, "{c:?}");
        assert!((c.tolerance(-100.0_f64) - at100).abs() < 1e-12, "{c:?} |t|");
    }
    assert!(RtdClass::A.in_validity_range(400.0_f64));
    assert!(!RtdClass::AA.in_validity_range(300.0_f64));
}
