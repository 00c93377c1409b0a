//! Recycle (anti-surge) valve control: the PI controller on the clearance
//! from the control line ([`recycle_pi`]), the field outputs through
//! embedded-hal 1.0 ([`outputs`]) and the power lost to recirculation
//! ([`mod@recycle_power`]).
//!
//! **Caution.** Anti-surge control protects machinery and people. This crate
//! is not a certified safety function (IEC 61508 / IEC 61511). Surge data
//! come from the machine maker and from commissioning tests; controller
//! tuning, valve sizing and stroke times are verified on the machine; follow
//! local codes and licensed engineering practice.
//!
//! One scan of a protected section:
//!
//! ```text
//! detector.update(fast signals, dt)      -> added_margin, trip_request
//! monitor.update(scan, added_margin, dt) -> SurgeState (margin, clearance, ...)
//! controller.update(&state, inputs, dt) -> valve demand
//! outputs.write(demand, alarm, trip)     -> PWM + pins
//! ```

#[cfg(feature = "embedded-hal")]
pub mod outputs;
pub mod recycle_pi;
pub mod recycle_power;

#[cfg(feature = "embedded-hal")]
pub use outputs::{OutputConfig, OutputError, RecycleOutputs, WriteError};
pub use recycle_pi::{
    ControllerInputs, ControllerOutput, Mode, RecycleConfig, RecycleController, UncertainMargin,
};
pub use recycle_power::{recycle_power, valve_mass_flow};
