//! # polytrope
//!
//! A `no_std`, no-heap, panic-free calculation kernel for multistage gas
//! compressor trains. From one scan of measured pressures, temperatures and
//! flows it computes, per stage, the pressure ratio, the isentropic,
//! polytropic and isothermal heads, the actual work from the temperature
//! rise, both efficiencies, the polytropic exponent and the gas power; per
//! cooler, the temperature drop, approach, effectiveness, duty, pressure drop
//! and (with coolant outlet and flow) LMTD, UA and heat balance; and for the
//! whole train, total work and power against the isothermal ideal, the
//! equal-ratio interstage pressures and what staging with intercooling saves
//! against one uncooled stage. Every value carries a [`Quality`].
//!
//! Around that core: a signal front end ([`signal`], [`flow`]) that turns raw
//! transmitter values into validated measurements and ISO 5167 mass flow, and
//! a surge-margin monitor with surge detection and a recycle-valve controller
//! ([`surge`], [`control`]).
//!
//! **Caution.** This crate is not a certified safety function (IEC 61508 /
//! IEC 61511). Anti-surge control protects machinery and people: surge data
//! come from the machine maker and from commissioning tests, and the trip
//! request is advisory input to a separately engineered protection system.
//! Machine limits come from the machine maker's data; follow local codes and
//! licensed engineering practice.
//!
//! ```
//! use polytrope::gas::{IdealGas, AIR};
//! use polytrope::scan::{Scan, StageScan};
//! use polytrope::steady::SteadyStateConfig;
//! use polytrope::train::{StageConfig, StageKind, Train, TrainConfig};
//! use polytrope::units::PressureAbs;
//! use polytrope::Quality;
//!
//! let stage = |p1: f32, p2: f32| StageConfig {
//!     kind: StageKind::Compressor,
//!     design_suction_pressure: PressureAbs::from_bar(p1),
//!     design_discharge_pressure: PressureAbs::from_bar(p2),
//!     cooler: None,
//! };
//! let config = TrainConfig {
//!     gas: IdealGas::from_spec(&AIR, false, 1.0)?,
//!     stages: [stage(1.0, 3.0), stage(2.9, 9.0)],
//!     max_interstage_pressure_drop: 0.1,
//!     steady_state: SteadyStateConfig::default(),
//! };
//! // Two stages, an 8-scan steady-state window, f32 as on the device.
//! let mut train = Train::<f32, _, 2, 8>::new(config)?;
//! let scan = Scan {
//!     stages: [
//!         StageScan::from_si(1.0e5, 300.0, 3.0e5, 430.0),
//!         StageScan::from_si(2.9e5, 305.0, 9.0e5, 440.0),
//!     ],
//! };
//! let snapshot = train.update(&scan);
//! let first = snapshot.stages[0].compressor().unwrap();
//! assert_eq!(first.isentropic_efficiency.quality, Quality::Good);
//! assert!((first.isentropic_efficiency.value - 0.851).abs() < 0.001);
//! assert!(snapshot.totals.isothermal_efficiency.value < 1.0);
//! # Ok::<(), polytrope::ConfigError>(())
//! ```
//!
//! Module map: [`real`] (the f32/f64 seam), [`config_blob`] (the
//! versioned, checksummed device configuration blob), [`units`], [`quality`],
//! [`error`], [`gas`] (gas models), [`compression`] (ideal heads),
//! [`stage`] (compressor and pump), [`rating`] (performance from an
//! assumed efficiency), [`steady`], [`cooler`], [`staging`]
//! (whole-train ideals), [`scan`] (inputs), [`boundary`] (the sensor boundary),
//! [`train`] (configuration and update), [`tolerance`] (the f32-vs-f64
//! accuracy table), `demo` (an invented scenario, with the `demo` feature), [`signal`] (channels,
//! NAMUR NE 43, plausibility, filters, substitution, cross-checks, events),
//! [`flow`] (ISO 5167-2 orifices, flow elements, low-flow cut-off),
//! [`surge`] (reduced coordinates, surge line, margin, detection),
//! [`control`] (recycle-valve controller, embedded-hal outputs, recycle
//! power).
#![no_std]
#![cfg_attr(docsrs, feature(doc_cfg))]
#[cfg(test)]
extern crate std;

pub mod blob;
pub mod boundary;
pub mod clock;
pub mod compression;
pub mod config_blob;
pub mod control;
pub mod cooler;
#[cfg(feature = "demo")]
pub mod demo;
pub mod dependency;
pub mod error;
pub mod fields;
pub mod flow;
pub mod gas;
pub mod ledger;
pub mod plausibility;
pub mod polytropic;
pub mod quality;
pub mod rating;
pub mod real;
pub mod registers;
pub mod scan;
pub mod signal;
pub mod stage;
pub mod staging;
pub mod steady;
pub mod surge;
pub mod tolerance;
pub mod train;
pub mod units;
mod window;

pub use error::{ConfigError, Problem};
pub use quality::{Measured, Quality};
pub use real::Real;

// The README's example, compiled as a doctest.
#[cfg(all(doctest, feature = "demo"))]
#[doc = include_str!("../README.md")]
struct ReadmeDoctests;

/// The seeded pseudo-random source of the crate's unit tests: Marsaglia's
/// xorshift32 (13, 17, 5), "Xorshift RNGs", J. Stat. Softw. 8 (14), 2003.
/// One copy, so every test draws the same way.
#[cfg(test)]
pub(crate) fn xorshift32(mut seed: u32) -> impl FnMut() -> u32 {
    move || {
        seed ^= seed << 13;
        seed ^= seed >> 17;
        seed ^= seed << 5;
        seed
    }
}

/// One step of the 64-bit linear congruential generator of the signal
/// tests (Knuth's MMIX multiplier and increment; the tests draw from the
/// high bits). One copy, so those tests draw the same way.
#[cfg(test)]
pub(crate) fn lcg64_step(state: u64) -> u64 {
    state
        .wrapping_mul(6_364_136_223_846_793_005)
        .wrapping_add(1_442_695_040_888_963_407)
}
