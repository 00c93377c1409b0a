//! The device configuration blob: a train configuration as a compact,
//! versioned binary with a checksum, decoded without heap and validated
//! exactly like the host form (by [`Train::new`]).
//!
//! Framing: the crate's one binary container ([`crate::blob`]: magic
//! `PLYT`, payload kind [`KIND_TRAIN_CONFIG`], format version [`VERSION`],
//! payload length, CRC-32 of everything before it), the payload a
//! [`TrainBlob`] in `postcard` (serde, varint integers, f32 values). Format
//! version 1 had a framing of its own (magic `PTCF`, 16-bit length); version
//! 2 is the shared container, and version 1 blobs are refused (bad magic).
//!
//! A CRC-32 detects every single-bit error and every burst up to 32 bits
//! (the property of any CRC with a degree-32 generator; Koopman, "32-bit
//! cyclic redundancy codes for Internet applications", DSN 2002). A blob that
//! is truncated, corrupt, of another kind or version or describes an invalid
//! train is refused with a typed [`BlobError`]; [`apply`] then leaves the
//! running train untouched.

use serde::{Deserialize, Serialize};

use crate::cooler::CoolerConfig;
use crate::error::{ConfigError, Problem};
use crate::gas::{HeatCapacity, IdealGas};
use crate::real::Real;
use crate::steady::SteadyStateConfig;
use crate::train::{StageConfig, StageKind, Train, TrainConfig};
use crate::units::PressureAbs;

pub use crate::blob::{BlobError, KIND_TRAIN_CONFIG};

/// The format version of the configuration payload this build reads and
/// writes (2: the shared container; see the module documentation).
pub const VERSION: u16 = 2;
/// Most stages a blob carries.
pub const MAX_STAGES: usize = 8;
/// Largest blob: header, the largest payload, checksum.
pub const MAX_BLOB_LEN: usize = 512;

/// The CRC-32 of the crate (ISO-HDLC), also the register image's checksum.
pub(crate) use crate::blob::CRC;

/// Heat capacity of the gas in the blob.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum HeatCapacityBlob {
    /// Constant heat-capacity ratio k.
    ConstantK(f32),
    /// cp polynomial in J/(mol K) (as [`crate::gas::CpPolynomial`]) and its range, K.
    Polynomial {
        /// Coefficients a, b, c, d.
        coefficients: [f32; 4],
        /// Lowest temperature, K.
        t_min: f32,
        /// Highest temperature, K.
        t_max: f32,
    },
}

/// One stage in the blob (unused slots are zero and not read).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct StageBlob {
    /// 0 = compressor, 1 = pump.
    pub kind: u8,
    /// Pump density, kg/m³ (pumps only).
    pub density: f32,
    /// Pump efficiency (pumps only).
    pub efficiency: f32,
    /// Design suction pressure, Pa absolute.
    pub design_suction_pressure: f32,
    /// Design discharge pressure, Pa absolute.
    pub design_discharge_pressure: f32,
    /// Coolant specific heat of the cooler after the stage, J/(kg K); 0 = no cooler.
    pub coolant_cp: f32,
}

/// The payload: everything a `TrainConfig<T, IdealGas<T>, N>` holds.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct TrainBlob {
    /// Molar mass of the gas, kg/kmol.
    pub molar_mass: f32,
    /// Heat capacity model.
    pub heat_capacity: HeatCapacityBlob,
    /// Configured mean compressibility.
    pub compressibility: f32,
    /// The ideal gas's validity limit (`IdealGas::validity_limit`; 0 if the
    /// critical point is not known).
    pub validity_limit: f32,
    /// Largest interstage design pressure drop, fraction.
    pub max_interstage_pressure_drop: f32,
    /// Steady-state tolerances: temperature spread K, ratio spread, flow spread.
    pub steady_state: [f32; 3],
    /// Number of stages used.
    pub stage_count: u8,
    /// Stage slots; the first `stage_count` are used.
    pub stages: [StageBlob; MAX_STAGES],
}

impl TrainBlob {
    /// The blob form of a host configuration (f32 values, the device's precision).
    /// `heat_capacity` is given in the blob's units (cp polynomial per mole),
    /// because [`IdealGas`] keeps it per kilogram internally.
    pub fn from_config<T: Real, const N: usize>(
        config: &TrainConfig<T, IdealGas<T>, N>,
        molar_mass: f64,
        heat_capacity: HeatCapacityBlob,
    ) -> Result<TrainBlob, BlobError> {
        const { assert!(N <= MAX_STAGES, "a blob carries at most MAX_STAGES stages") };
        let f = |x: T| x.to_f64() as f32;
        let mut stages = [StageBlob::default(); MAX_STAGES];
        for (slot, s) in stages.iter_mut().zip(config.stages.iter()) {
            let (kind, density, efficiency) = match s.kind {
                StageKind::Compressor => (0, 0.0, 0.0),
                StageKind::Pump {
                    density,
                    efficiency,
                } => (1, f(density), f(efficiency)),
            };
            *slot = StageBlob {
                kind,
                density,
                efficiency,
                design_suction_pressure: f(s.design_suction_pressure.pa()),
                design_discharge_pressure: f(s.design_discharge_pressure.pa()),
                coolant_cp: s.cooler.map_or(0.0, |c| f(c.coolant_cp)),
            };
        }
        Ok(TrainBlob {
            molar_mass: molar_mass as f32,
            heat_capacity,
            compressibility: f(config.gas.compressibility()),
            validity_limit: f(config.gas.validity_limit()),
            max_interstage_pressure_drop: f(config.max_interstage_pressure_drop),
            steady_state: [
                f(config.steady_state.max_temperature_spread),
                f(config.steady_state.max_ratio_spread),
                f(config.steady_state.max_flow_spread),
            ],
            stage_count: u8::try_from(N).unwrap_or(u8::MAX),
            stages,
        })
    }

    /// The kernel configuration for `N` stages, validated like the host form
    /// (the gas by [`IdealGas::new`]; the train by [`Train::new`] in [`decode_train`]).
    pub fn to_config<T: Real, const N: usize>(
        &self,
    ) -> Result<TrainConfig<T, IdealGas<T>, N>, BlobError> {
        let expected = u8::try_from(N).unwrap_or(u8::MAX);
        if usize::from(self.stage_count) != N {
            return Err(BlobError::Invalid(ConfigError::new(
                "stages",
                Problem::Count {
                    min: u16::from(expected),
                    max: u16::from(expected),
                },
            )));
        }
        let t = |x: f32| T::of(f64::from(x));
        let hc = match self.heat_capacity {
            HeatCapacityBlob::ConstantK(k) => HeatCapacity::ConstantK(t(k)),
            HeatCapacityBlob::Polynomial {
                coefficients,
                t_min,
                t_max,
            } => HeatCapacity::Polynomial {
                coefficients: coefficients.map(t),
                t_min: t(t_min),
                t_max: t(t_max),
            },
        };
        let gas = IdealGas::new(t(self.molar_mass), hc, t(self.compressibility))?
            .with_validity_limit(t(self.validity_limit));
        let stages = core::array::from_fn(|i| {
            let s = self.stages.get(i).copied().unwrap_or_default();
            StageConfig {
                kind: if s.kind == 0 {
                    StageKind::Compressor
                } else {
                    StageKind::Pump {
                        density: t(s.density),
                        efficiency: t(s.efficiency),
                    }
                },
                design_suction_pressure: PressureAbs::from_pa(t(s.design_suction_pressure)),
                design_discharge_pressure: PressureAbs::from_pa(t(s.design_discharge_pressure)),
                cooler: (s.coolant_cp != 0.0).then(|| CoolerConfig {
                    coolant_cp: t(s.coolant_cp),
                }),
            }
        });
        for (i, s) in self.stages.iter().enumerate().take(N) {
            if s.kind > 1 {
                return Err(BlobError::Invalid(
                    ConfigError::new("stages.kind", Problem::Unknown).at(i),
                ));
            }
        }
        let [a, b, c] = self.steady_state;
        Ok(TrainConfig {
            gas,
            stages,
            max_interstage_pressure_drop: t(self.max_interstage_pressure_drop),
            steady_state: SteadyStateConfig {
                max_temperature_spread: t(a),
                max_ratio_spread: t(b),
                max_flow_spread: t(c),
            },
        })
    }
}

/// Encodes a blob into `out`; returns its length.
pub fn encode(blob: &TrainBlob, out: &mut [u8]) -> Result<usize, BlobError> {
    let used = postcard::to_slice(blob, crate::blob::payload_area(out))
        .map_err(|_| BlobError::BufferTooSmall)?
        .len();
    crate::blob::seal(out, KIND_TRAIN_CONFIG, VERSION, used)
}

/// Checks a blob's framing and checksum ([`crate::blob::open`]) and decodes
/// its payload (bytes left over are refused).
pub fn decode(bytes: &[u8]) -> Result<TrainBlob, BlobError> {
    let payload = crate::blob::open(bytes, KIND_TRAIN_CONFIG, VERSION)?;
    match postcard::take_from_bytes::<TrainBlob>(payload) {
        Ok((blob, [])) => Ok(blob),
        _ => Err(BlobError::Decode),
    }
}

/// Decodes and validates a blob into a new train (as `Train::new` would
/// from the host form).
pub fn decode_train<T: Real, const N: usize, const W: usize>(
    bytes: &[u8],
) -> Result<Train<T, IdealGas<T>, N, W>, BlobError> {
    let blob = decode(bytes)?;
    let config = blob.to_config::<T, N>()?;
    Ok(Train::new(config)?)
}

/// Replaces `train` by the blob's train if, and only if, the blob is valid;
/// on any error `train` keeps its previous configuration and state.
pub fn apply<T: Real, const N: usize, const W: usize>(
    train: &mut Train<T, IdealGas<T>, N, W>,
    bytes: &[u8],
) -> Result<(), BlobError> {
    let new = decode_train::<T, N, W>(bytes)?;
    *train = new;
    Ok(())
}
