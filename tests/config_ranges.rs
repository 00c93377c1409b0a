//! Configuration ranges (issue 11): one test per field the adversarial run
//! found accepting nonsense, each asserting the refusal names the field
//! (and the stage index for per-stage fields) and says what range applies.
//! The ranges are physical (sources beside each in the kernel).

#![allow(clippy::unwrap_used, clippy::indexing_slicing)]

use polytrope::cooler::CoolerConfig;
use polytrope::error::{ConfigError, Problem};
use polytrope::flow::{Orifice, OrificeConfig, TapType};
use polytrope::gas::{HeatCapacity, IdealGas, AIR};
use polytrope::plausibility::Limits;
use polytrope::steady::SteadyStateConfig;
use polytrope::train::{StageConfig, StageKind, Train, TrainConfig};
use polytrope::units::PressureAbs;

type Config = TrainConfig<f64, IdealGas<f64>, 2>;

fn config() -> Config {
    let st = |a: f64, b: f64| StageConfig {
        kind: StageKind::Compressor,
        design_suction_pressure: PressureAbs::from_pa(a),
        design_discharge_pressure: PressureAbs::from_pa(b),
        cooler: Some(CoolerConfig { coolant_cp: 4180.0 }),
    };
    TrainConfig {
        gas: IdealGas::from_spec(&AIR, false, 1.0).unwrap(),
        stages: [st(1e5, 3e5), st(2.95e5, 9e5)],
        max_interstage_pressure_drop: 0.1,
        steady_state: SteadyStateConfig::default(),
    }
}

fn refused(c: Config) -> ConfigError {
    Train::<f64, _, 2, 4>::new(c).map(|_| ()).unwrap_err()
}

fn out_of_range(e: ConfigError, field: &str, index: Option<u16>) {
    assert_eq!((e.field, e.index), (field, index), "{e:?}");
    assert!(
        matches!(e.problem, Problem::OutOfRange { .. }),
        "{e:?} should give the range"
    );
}

#[test]
fn base_configuration_is_valid() {
    assert!(Train::<f64, _, 2, 4>::new(config()).is_ok());
}

#[test]
fn gas_molar_mass() {
    for m in [1e-30, 1e30] {
        let e = IdealGas::<f64>::new(m, HeatCapacity::ConstantK(1.4), 1.0).unwrap_err();
        out_of_range(e, "gas.molar_mass", None);
    }
}

#[test]
fn gas_k() {
    let e = IdealGas::<f64>::new(28.0, HeatCapacity::ConstantK(2.99), 1.0).unwrap_err();
    out_of_range(e, "gas.k", None);
}

#[test]
fn gas_compressibility() {
    let e = IdealGas::<f64>::new(28.0, HeatCapacity::ConstantK(1.4), 0.01).unwrap_err();
    out_of_range(e, "gas.compressibility", None);
}

#[test]
fn stages_design_suction_pressure() {
    // Above the sensor boundary (1e9 Pa) and below it (100 Pa).
    for p in [10.0, 2e9] {
        let mut c = config();
        c.stages[0].design_suction_pressure = PressureAbs::from_pa(p);
        c.stages[0].design_discharge_pressure = PressureAbs::from_pa(3e9);
        out_of_range(refused(c), "stages.design_suction_pressure", Some(0));
    }
}

#[test]
fn stages_design_discharge_pressure() {
    let mut c = config();
    c.stages[1].design_discharge_pressure = PressureAbs::from_pa(2e9);
    out_of_range(refused(c), "stages.design_discharge_pressure", Some(1));
}

#[test]
fn stages_pump_density() {
    for d in [0.01, 1e30] {
        let mut c = config();
        c.stages[1].kind = StageKind::Pump {
            density: d,
            efficiency: 0.7,
        };
        out_of_range(refused(c), "stages.pump.density", Some(1));
    }
}

#[test]
fn stages_cooler_coolant_cp() {
    for cp in [10.0, 1e30] {
        let mut c = config();
        c.stages[1].cooler = Some(CoolerConfig { coolant_cp: cp });
        out_of_range(refused(c), "stages.cooler.coolant_cp", Some(1));
    }
}

#[test]
fn limits_every_field() {
    type Set = fn(&mut Limits<f64>);
    let cases: [(Set, &str); 12] = [
        (|l| l.min_pressure = 1e-30, "limits.min_pressure"),
        (|l| l.max_pressure = 1e30, "limits.max_pressure"),
        (|l| l.min_temperature = 0.0, "limits.min_temperature"),
        (|l| l.max_temperature = 1e4, "limits.max_temperature"),
        (|l| l.max_mass_flow = -1.0, "limits.max_mass_flow"),
        (|l| l.max_stage_ratio = 1e6, "limits.max_stage_ratio"),
        (|l| l.max_overall_ratio = 0.5, "limits.max_overall_ratio"),
        (
            |l| l.temperature_accuracy = 50.0,
            "limits.temperature_accuracy",
        ),
        (
            |l| l.pressure_accuracy = f64::NAN,
            "limits.pressure_accuracy",
        ),
        (|l| l.resolution_factor = 1e30, "limits.resolution_factor"),
        (|l| l.stationary_flow = -1.0, "limits.stationary_flow"),
        (|l| l.temperature_noise = 1e30, "limits.temperature_noise"),
    ];
    for (set, field) in cases {
        let mut l = Limits::default();
        set(&mut l);
        let e = Train::<f64, _, 2, 4>::with_limits(config(), l)
            .map(|_| ())
            .unwrap_err();
        out_of_range(e, field, None);
    }
    assert!(Train::<f64, _, 2, 4>::with_limits(config(), Limits::default()).is_ok());
}

fn orifice() -> OrificeConfig<f64> {
    OrificeConfig {
        pipe_diameter: 0.1,
        bore_diameter: 0.05,
        taps: TapType::Flange,
        isentropic_exponent: 1.4,
        viscosity: 1.8e-5,
        gas_constant: 287.0,
    }
}

#[test]
fn orifice_isentropic_exponent() {
    assert!(Orifice::new(orifice()).is_ok());
    for k in [5.0, 1.0] {
        let e = Orifice::new(OrificeConfig {
            isentropic_exponent: k,
            ..orifice()
        })
        .map(|_| ())
        .unwrap_err();
        out_of_range(e, "orifice.isentropic_exponent", None);
    }
}

#[test]
fn orifice_viscosity_and_gas_constant() {
    let e = Orifice::new(OrificeConfig {
        viscosity: 1e3,
        ..orifice()
    })
    .map(|_| ())
    .unwrap_err();
    out_of_range(e, "orifice.viscosity", None);
    let e = Orifice::new(OrificeConfig {
        gas_constant: 1e6,
        ..orifice()
    })
    .map(|_| ())
    .unwrap_err();
    out_of_range(e, "orifice.gas_constant", None);
}
