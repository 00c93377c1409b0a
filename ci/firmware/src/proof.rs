//! Every public entry point of the kernel besides the train, the surge
//! monitor and the signal channel (those are in `minimal` and `front`),
//! called once with invented settings (demo data) by the `proof` firmware,
//! whose link-time panic check then covers them: surge detection, the recycle
//! controller and its embedded-hal outputs, the ISO 5167 orifice, the
//! generic flow element, the low-flow cut-off, the cross-checks, the event
//! log, the recycle-loss helpers, the loss ledger and the gas models' own entry points
//! (Peng-Robinson construction and composition update, state functions,
//! polytropic methods).
//!
//! Every setting and input passes through `black_box`, so no constructor's
//! result is known at compile time and no update path can be optimised away.

use core::convert::Infallible;
use core::hint::black_box;

use embedded_hal::digital::{ErrorType as PinErrorType, OutputPin};
use embedded_hal::pwm::{ErrorType as PwmErrorType, SetDutyCycle};
use polytrope::control::{
    recycle_power, valve_mass_flow, ControllerInputs, Mode, OutputConfig, RecycleConfig,
    RecycleController, RecycleOutputs, UncertainMargin,
};
use polytrope::demo;
use polytrope::flow::orifice::OrificeInputs;
use polytrope::flow::{FlowElement, LowFlow, LowFlowConfig, Orifice, OrificeConfig, TapType};
use polytrope::gas::components::{CARBON_DIOXIDE, ETHANE, METHANE, NITROGEN, PROPANE};
use polytrope::gas::{GasModel, IdealGas, PengRobinson, AIR, CARBON_DIOXIDE as CO2_IDEAL};
use polytrope::ledger::{
    evaluate_ledger_into, CoolingReference, Ledger, LedgerConfig, RecycleLoop,
};
use polytrope::polytropic::{path_discharge_temperature, reference_path, sandberg_colby, schultz};
use polytrope::quality::{Measured, Quality};
use polytrope::signal::cross_check::{
    cooler_temperatures, differential_not_negative, discharge_above_suction, mass_balance,
    DischargeTemperatureCheck, DischargeTemperatureConfig,
};
use polytrope::signal::{Event, EventLog, FaultCode};
use polytrope::surge::{DetectionConfig, DetectionScan, SurgeDetector};
use polytrope::train::{Train, TrainConfig};
use polytrope::units::{Kelvin, PressureAbs};

use crate::codec::decode_scan;
use crate::front;
use crate::gas_tables::{HYDROGEN_BLOB, NG_BOOSTER};
use crate::table::MINIMAL_SCAN;
use polytrope::gas::table::{PropertyTable, TableGas};

/// A PWM channel that keeps the last duty (stands in for a timer).
struct Pwm(u16);
impl PwmErrorType for Pwm {
    type Error = Infallible;
}
impl SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.0 = black_box(duty);
        Ok(())
    }
}

/// A pin that keeps its level (stands in for a GPIO).
struct Pin(bool);
impl PinErrorType for Pin {
    type Error = Infallible;
}
impl OutputPin for Pin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0 = black_box(false);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0 = black_box(true);
        Ok(())
    }
}

fn good<T>(x: T) -> Measured<T> {
    Measured::new(x, Quality::Good)
}

/// Builds and runs every entry point once for scan `k`; `true` if every
/// constructor accepted its (valid) settings.
#[inline(never)]
pub fn exercise(k: u32) -> bool {
    let t_ms = k.wrapping_mul(20);
    let mut ok = true;

    // Surge detection and the recycle loop behind it.
    let detection = black_box(DetectionConfig {
        scan_period: 0.02_f32,
        window: 0.64,
        flow_lag: 0.1,
        flow_dp_drop: 0.3,
        min_flow_dp: 500.0,
        pressure_rise_drop: 0.1,
        suction_temperature_rise: 2.0,
        holdoff: 1.0,
        added_margin_per_cycle: 0.02,
        max_added_margin: 0.1,
        trip_count: 3,
        trip_window: 20.0,
    });
    let shift = match SurgeDetector::<f32, 16, 4>::new(detection) {
        Ok(mut d) => {
            let scan = black_box(DetectionScan {
                flow_dp: good(2_500.0_f32),
                suction_pressure: good(PressureAbs::from_pa(1.0e5)),
                discharge_pressure: good(PressureAbs::from_pa(1.9e5)),
                suction_temperature: Some(good(Kelvin::new(293.0))),
            });
            let s = *d.update(&scan, black_box(0.02));
            d.reset_added_margin();
            d.reset_trip();
            s.added_margin
        }
        Err(_) => {
            ok = false;
            0.0
        }
    };
    let state = match front::surge_monitor_measured() {
        Ok(mut m) => {
            let s = *m.update(&front::surge_scan(k), black_box(shift), black_box(0.02));
            black_box(m.exponent());
            m.reset();
            s
        }
        Err(_) => {
            ok = false;
            polytrope::surge::SurgeState::bad()
        }
    };
    let recycle = black_box(RecycleConfig {
        scan_period: 0.02_f32,
        gain: 2.0,
        integral_time: 10.0,
        closing_rate: 0.05,
        quick_open_step: 0.1,
        quick_open_fraction: 0.5,
        quick_open_interval: 2.0,
        min_output: 0.0,
        max_output: 1.0,
        fail_safe_output: 1.0,
        anticipation_time: 2.0,
        anticipation_threshold: 0.1,
        on_uncertain: UncertainMargin::HoldOrOpen,
    });
    let demand = match RecycleController::new(recycle, black_box(Mode::Automatic), 0.0) {
        Ok(mut c) => {
            let inputs = black_box(ControllerInputs {
                manual_output: 0.0_f32,
                tracking_value: 0.0,
                force_open: false,
            });
            let out = c.update(&state, &inputs, black_box(0.02));
            c.set_mode(black_box(Mode::Manual));
            black_box(c.update(&state, &inputs, black_box(0.02)));
            out.demand
        }
        Err(_) => {
            ok = false;
            Measured::bad()
        }
    };
    let outputs = black_box(OutputConfig {
        signal_at_closed: 0.2_f32,
        signal_at_open: 1.0,
        energised_when_healthy: true,
    });
    match RecycleOutputs::new(outputs, Pwm(0), Pin(true), Pin(true)) {
        Ok(mut o) => {
            let _ = black_box(o.write(demand.value, black_box(false), black_box(false)));
            black_box(o.release());
        }
        Err(_) => ok = false,
    }

    // Flow: ISO 5167 orifice, generic flow element, low-flow cut-off.
    let orifice = black_box(OrificeConfig {
        pipe_diameter: 0.2_f32,
        bore_diameter: 0.1,
        taps: TapType::Flange,
        isentropic_exponent: 1.4,
        viscosity: 1.8e-5,
        gas_constant: 287.0,
    });
    let dp = black_box(good(20_000.0_f32));
    match Orifice::new(orifice) {
        Ok(o) => {
            black_box(o.evaluate(&black_box(OrificeInputs {
                differential_pressure: dp,
                upstream_pressure: good(PressureAbs::from_pa(5.0e5)),
                upstream_temperature: good(Kelvin::new(300.0)),
                compressibility: good(1.0),
            })));
        }
        Err(_) => ok = false,
    }
    match FlowElement::new(black_box(0.04_f32)) {
        Ok(f) => {
            black_box(f.mass_flow(dp, black_box(good(5.8))));
        }
        Err(_) => ok = false,
    }
    let low = black_box(LowFlowConfig {
        cutoff_dp: 50.0_f32,
        zero_tolerance: 20.0,
        zero_persist_ms: 1000,
    });
    match LowFlow::new(low) {
        Ok(mut l) => {
            black_box(l.apply(dp, black_box(false), t_ms));
            l.reset();
        }
        Err(_) => ok = false,
    }

    // Cross-checks and the event log, on channel outputs.
    let mut log = EventLog::<8>::new();
    match front::pressure_channel() {
        Ok(mut ch) => {
            let (raw, t) = front::raw_sample(k);
            let mut a = ch.update_logged(black_box(raw), t, &mut log);
            if black_box(k) == u32::MAX {
                ch.reset();
            }
            let mut b = a;
            let mut c = a;
            let allowance = black_box(1.0e3_f32);
            black_box(discharge_above_suction(&mut a, &mut b, allowance));
            black_box(cooler_temperatures(&mut a, &mut b, &mut c, allowance));
            black_box(differential_not_negative(&mut c, allowance));
            let cfg = black_box(DischargeTemperatureConfig {
                tolerance_k: 5.0_f32,
                smoothing: 0.1,
                relearn_scans: 50,
            });
            if cfg.validate().is_err() {
                ok = false;
            }
            let mut check = DischargeTemperatureCheck::new();
            let (p1, t1, p2) = black_box((good(1.0e5_f32), good(300.0), good(3.0e5)));
            black_box(check.check(&cfg, 1.4, p1, t1, p2, &mut b));
            let mut flows = black_box([Some(good(11.5_f32)), Some(good(11.4)), None]);
            black_box(mass_balance(&mut flows, &[0.0; 3], 0.05));
        }
        Err(_) => ok = false,
    }
    log.push(black_box(Event {
        time_ms: t_ms,
        channel: 1,
        from: Quality::Good,
        to: Quality::Bad,
        fault: FaultCode::None,
    }));
    black_box(log.pop());
    black_box(log.dropped());

    // Recycle loss.
    let m = valve_mass_flow(
        black_box(0.01_f32),
        0.7,
        demand.value,
        1.9e5,
        1.0e5,
        2.2,
        1.4,
    );
    black_box(recycle_power(m, black_box(good(90_000.0))));

    // GERG-2008 property tables: a static table, and a blob decoded into
    // fixed capacity (then replaced by a truncated copy, which is refused).
    match TableGas::<f32>::new(black_box(NG_BOOSTER)) {
        Ok(gas) => {
            let p = black_box(40e5_f32 + k as f32);
            black_box(gas.state(p, 300.0));
            black_box(gas.isentropic_temperature(80e5, black_box(-500.0), 360.0));
            black_box(gas.stage(p, 300.0, 80e5, 365.0));
        }
        Err(_) => ok = false,
    }
    let blob = black_box(HYDROGEN_BLOB);
    match PropertyTable::<48, 64>::from_blob(blob) {
        Ok(mut table) => {
            let cut = blob.len() / 2;
            ok &= table
                .replace_from_blob(blob.get(..cut).unwrap_or(&[]))
                .is_err();
            match TableGas::<f32>::new(table.data()) {
                Ok(gas) => {
                    black_box(gas.stage(black_box(20e5), 300.0, 60e5, 420.0));
                }
                Err(_) => ok = false,
            }
        }
        Err(_) => ok = false,
    }
    ok &= gas_models();
    ok &= ledger();
    ok
}

/// The loss ledger after a train update, on the demo's Peng-Robinson train
/// and on the same train with an ideal gas, with the coolant-inlet
/// reference and a recycle loop (`evaluate_ledger_into`,
/// `LedgerConfig::validate`, `Ledger::visit_lines`), packed into a
/// register image (`RegisterImage::pack_ledger`).
#[inline(never)]
fn ledger() -> bool {
    let cfg = LedgerConfig {
        cooling_reference: CoolingReference::CoolantInletPlusApproach {
            design_approach: black_box(8.0_f32),
        },
        recycle: Some(black_box(RecycleLoop {
            first_stage: 0,
            last_stage: 3,
        })),
    };
    if cfg.validate(black_box(4)).is_err() {
        return false;
    }
    let scan = decode_scan::<f32, { demo::STAGES }>(black_box(&MINIMAL_SCAN));
    let recycle = black_box(good(0.5_f32));
    let mut out = Ledger::<f32, { demo::STAGES }>::bad();
    let Ok(mut train) = demo::train::<f32>() else {
        return false;
    };
    let snap = *train.update(&scan);
    evaluate_ledger_into(train.config(), &cfg, &scan, &snap, recycle, &mut out);
    let mut sum = 0.0_f32;
    out.visit_lines(&mut |_, _, m| sum += m.value);
    black_box(sum);
    let Ok(gas) = IdealGas::<f32>::from_spec(&CO2_IDEAL, black_box(false), 1.0) else {
        return false;
    };
    let Ok(demo_cfg) = demo::config::<f32>() else {
        return false;
    };
    let Ok(mut ideal) = Train::<f32, _, { demo::STAGES }, { demo::WINDOW }>::new(TrainConfig {
        gas,
        stages: demo_cfg.stages,
        max_interstage_pressure_drop: demo_cfg.max_interstage_pressure_drop,
        steady_state: demo_cfg.steady_state,
    }) else {
        return false;
    };
    let snap = *ideal.update(&scan);
    evaluate_ledger_into(ideal.config(), &cfg, &scan, &snap, recycle, &mut out);
    black_box(&out);
    // The ledger into a register image (`RegisterImage::pack_ledger`).
    let mut image = polytrope::registers::RegisterImage::<
        { demo::STAGES },
        0,
        0,
        { polytrope::registers::image_len(demo::STAGES, 0, 0) },
    >::new(polytrope::registers::WordOrder::HighWordFirst, 0);
    image.pack_ledger(&out);
    black_box(image.registers());
    true
}

/// The gas models' entry points beyond what a train update calls: a
/// Peng-Robinson mixture built, its composition replaced, every state
/// function, the isentropic state, the enthalpy drop, the dense-phase
/// density, Schultz's X and Y, the three polytropic methods (the reference
/// path included) and the ideal gas's state functions.
#[inline(never)]
fn gas_models() -> bool {
    let Ok(mut pr) = PengRobinson::<f32, 5>::new(
        [METHANE, ETHANE, PROPANE, NITROGEN, CARBON_DIOXIDE],
        black_box([0.90, 0.05, 0.02, 0.01, 0.02]),
    ) else {
        return false;
    };
    let replaced = pr
        .set_composition(black_box([0.88, 0.06, 0.02, 0.02, 0.02]))
        .is_ok();
    let (p1, t1, p2, t2) = black_box((10.0e5_f32, 300.0_f32, 25.0e5_f32, 383.0_f32));
    let s1 = pr.state(p1, t1, None);
    black_box(pr.isentropic_state(&s1, p2, None));
    black_box(pr.enthalpy_drop(p2, t2, p2 * 0.98, 310.0, None));
    // Close states take the trapezoid branch.
    black_box(pr.enthalpy_drop(p2, t2, p2 * 0.99, t2 - 1.0, None));
    black_box(pr.dense_density(black_box(150.0e5), black_box(250.0)));
    black_box(pr.compressibility_functions(p1, t1));
    black_box(pr.path(p1, t1, p2, t2, None));
    let ln_r = <f32 as polytrope::real::Real>::ln(p2 / p1);
    let cs = pr.compression(p1, t1, p2, ln_r, Some(t2), None);
    black_box(schultz(&cs, ln_r));
    black_box(sandberg_colby(&cs, ln_r, t1, t2));
    black_box(reference_path(
        &pr,
        &cs,
        ln_r,
        p1,
        t1,
        p2,
        t2,
        black_box(0.8),
    ));
    black_box(path_discharge_temperature(
        &pr,
        p1,
        t1,
        p2,
        black_box(0.8),
        8,
    ));
    match IdealGas::<f32>::from_spec(&AIR, black_box(true), 1.0) {
        Ok(ideal) => {
            let s = ideal.state(p1, t1, None);
            black_box(ideal.isentropic_state(&s, p2, None));
            black_box(ideal.enthalpy_drop(p2, t2, p2, 310.0, None));
            replaced
        }
        Err(_) => false,
    }
}
