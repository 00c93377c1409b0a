//! The device configuration blob: a train configuration as a compact,
//! versioned binary with a checksum, decoded without heap and validated
//! exactly like the host form (by [`Train::new`]).
//!
//! Layout (all little-endian):
//!
//! | bytes | what |
//! |---|---|
//! | 4 | magic `PTCF` |
//! | 2 | format version ([`VERSION`]) |
//! | 2 | payload length n |
//! | n | payload: [`TrainBlob`] in `postcard` (serde, varint integers, f32 values) |
//! | 4 | CRC-32 (ISO-HDLC, the Ethernet/zip CRC, `crc` crate `CRC_32_ISO_HDLC`) of every byte before it |
//!
//! A CRC-32 detects every single-bit error and every burst up to 32 bits
//! (the property of any CRC with a degree-32 generator; Koopman, "32-bit
//! cyclic redundancy codes for Internet applications", DSN 2002). A blob that
//! is truncated, corrupt, of another version or describes an invalid train
//! is refused with a typed [`BlobError`]; [`apply`] then leaves the running
//! train untouched.

use serde::{Deserialize, Serialize};

use crate::cooler::CoolerConfig;
use crate::error::ConfigError;
use crate::gas::{HeatCapacity, IdealGas};
use crate::real::Real;
use crate::steady::SteadyStateConfig;
use crate::train::{StageConfig, StageKind, Train, TrainConfig};
use crate::units::PressureAbs;

/// Magic bytes at the start of a blob.
pub const MAGIC: [u8; 4] = *b"PTCF";
/// The format version this build reads and writes.
pub const VERSION: u16 = 1;
/// Most stages a blob carries.
pub const MAX_STAGES: usize = 8;
/// Header bytes (magic, version, length).
pub const HEADER_LEN: usize = 8;
/// Checksum bytes.
pub const CRC_LEN: usize = 4;
/// Largest blob: header, the largest payload, checksum.
pub const MAX_BLOB_LEN: usize = 512;

/// The CRC-32 of the crate (ISO-HDLC), also the register image's checksum.
pub(crate) const CRC: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// Why a blob was refused.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum BlobError {
    /// Shorter than its header and checksum, or than the length it states.
    Truncated,
    /// Longer than the length it states (trailing bytes).
    TrailingBytes,
    /// Does not start with [`MAGIC`].
    BadMagic,
    /// A format version this build does not read.
    UnsupportedVersion {
        /// The version found.
        found: u16,
    },
    /// The checksum does not match: the blob is corrupt.
    ChecksumMismatch,
    /// The payload does not decode (or has bytes left over).
    Malformed,
    /// The blob describes another number of stages than the train has.
    StageCount {
        /// Stages in the blob.
        found: u8,
        /// Stages of the train type.
        expected: u8,
    },
    /// The configuration decodes but is refused by validation.
    Config(ConfigError),
    /// The output buffer is too small to encode into.
    BufferTooSmall,
}

impl core::fmt::Display for BlobError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            BlobError::Truncated => f.write_str("blob truncated"),
            BlobError::TrailingBytes => f.write_str("blob has bytes after its checksum"),
            BlobError::BadMagic => f.write_str("not a configuration blob (bad magic)"),
            BlobError::UnsupportedVersion { found } => {
                write!(
                    f,
                    "blob version {found} is not supported (this build reads {VERSION})"
                )
            }
            BlobError::ChecksumMismatch => f.write_str("blob checksum mismatch (corrupt)"),
            BlobError::Malformed => f.write_str("blob payload does not decode"),
            BlobError::StageCount { found, expected } => {
                write!(f, "blob has {found} stages, the train {expected}")
            }
            BlobError::Config(e) => write!(f, "blob configuration refused: {e}"),
            BlobError::BufferTooSmall => f.write_str("buffer too small for the blob"),
        }
    }
}

impl core::error::Error for BlobError {}

impl From<ConfigError> for BlobError {
    fn from(e: ConfigError) -> Self {
        BlobError::Config(e)
    }
}

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
            return Err(BlobError::StageCount {
                found: self.stage_count,
                expected,
            });
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
                return Err(BlobError::Config(
                    ConfigError::new("stages.kind", crate::error::Problem::Unknown).at(i),
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

/// Encodes `blob` into `out`; returns the number of bytes written.
pub fn encode(blob: &TrainBlob, out: &mut [u8]) -> Result<usize, BlobError> {
    let (header, rest) = out
        .split_at_mut_checked(HEADER_LEN)
        .ok_or(BlobError::BufferTooSmall)?;
    let payload_len = postcard::to_slice(blob, rest)
        .map_err(|_| BlobError::BufferTooSmall)?
        .len();
    let len16 = u16::try_from(payload_len).map_err(|_| BlobError::BufferTooSmall)?;
    header.copy_from_slice(&[0; HEADER_LEN]);
    if let Some(h) = header.get_mut(..4) {
        h.copy_from_slice(&MAGIC);
    }
    if let Some(h) = header.get_mut(4..6) {
        h.copy_from_slice(&VERSION.to_le_bytes());
    }
    if let Some(h) = header.get_mut(6..8) {
        h.copy_from_slice(&len16.to_le_bytes());
    }
    let body = HEADER_LEN + payload_len;
    let crc = CRC.checksum(out.get(..body).ok_or(BlobError::BufferTooSmall)?);
    out.get_mut(body..body + CRC_LEN)
        .ok_or(BlobError::BufferTooSmall)?
        .copy_from_slice(&crc.to_le_bytes());
    Ok(body + CRC_LEN)
}

fn le16(b: &[u8], at: usize) -> Option<u16> {
    let s = b.get(at..at + 2)?;
    Some(u16::from_le_bytes([*s.first()?, *s.get(1)?]))
}

/// Checks framing and checksum and decodes the payload (no validation).
pub fn decode(bytes: &[u8]) -> Result<TrainBlob, BlobError> {
    if bytes.len() < HEADER_LEN + CRC_LEN {
        return Err(BlobError::Truncated);
    }
    if bytes.get(..4) != Some(&MAGIC[..]) {
        return Err(BlobError::BadMagic);
    }
    let version = le16(bytes, 4).ok_or(BlobError::Truncated)?;
    let len = usize::from(le16(bytes, 6).ok_or(BlobError::Truncated)?);
    let body = HEADER_LEN + len;
    let total = body + CRC_LEN;
    if bytes.len() < total {
        return Err(BlobError::Truncated);
    }
    if bytes.len() > total {
        return Err(BlobError::TrailingBytes);
    }
    let stored = bytes
        .get(body..total)
        .and_then(|c| c.try_into().ok())
        .map(u32::from_le_bytes)
        .ok_or(BlobError::Truncated)?;
    let head_and_payload = bytes.get(..body).ok_or(BlobError::Truncated)?;
    if CRC.checksum(head_and_payload) != stored {
        return Err(BlobError::ChecksumMismatch);
    }
    // Version after the checksum: a corrupt version field reads as corruption.
    if version != VERSION {
        return Err(BlobError::UnsupportedVersion { found: version });
    }
    let payload = bytes.get(HEADER_LEN..body).ok_or(BlobError::Truncated)?;
    match postcard::take_from_bytes::<TrainBlob>(payload) {
        Ok((blob, [])) => Ok(blob),
        _ => Err(BlobError::Malformed),
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
