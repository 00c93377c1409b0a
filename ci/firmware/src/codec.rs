//! The scan table's encoding, generated from the kernel's input list
//! (`polytrope::fields::StageInput`).
//!
//! Shared, unchanged, by the firmware (`no_std`, f32) and by the host test
//! `tests/firmware_outputs.rs` (which includes this file, encodes the table
//! and decodes it on the f64 reference build). The outputs are not listed
//! here: both sides walk `Snapshot::visit_groups`, the kernel's one list of
//! result fields.

use polytrope::fields::StageInput;
use polytrope::quality::{Measured, Quality};
use polytrope::scan::{Scan, StageScan};
use polytrope::Real;

/// Fields of one encoded stage scan: one per [`StageInput`], in the order of
/// `StageInput::ALL`.
pub const FIELDS: usize = StageInput::ALL.len();
/// Quality code of an absent optional input (for the cooler gas outlet
/// temperature: no cooler scan).
pub const ABSENT: u8 = 3;

/// One stage scan as f32 bit patterns and quality codes (0 good,
/// 1 uncertain, 2 bad, 3 absent).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RawStage {
    /// `f32::to_bits` of each field.
    pub bits: [u32; FIELDS],
    /// Quality code of each field.
    pub q: [u8; FIELDS],
}

/// Widening from the table's f32 values (no f64 arithmetic on the device).
pub trait FromF32: Real {
    /// `x` in this type.
    fn from_f32(x: f32) -> Self;
}
impl FromF32 for f32 {
    #[inline]
    fn from_f32(x: f32) -> Self {
        x
    }
}
impl FromF32 for f64 {
    #[inline]
    fn from_f32(x: f32) -> Self {
        f64::from(x)
    }
}

fn quality(code: u8) -> Quality {
    match code {
        0 => Quality::Good,
        1 => Quality::Uncertain,
        _ => Quality::Bad,
    }
}

/// Decodes one stage scan.
#[inline]
pub fn decode_stage<T: FromF32>(raw: &RawStage) -> StageScan<T> {
    StageScan::from_inputs(|w| decode_field(raw, w.index()))
}

/// Decodes one stage scan into `out`, in place (kept out of line: one copy
/// for every stage; a stage scan returned by value was copied four times on
/// its way into an array). The device's decoding (`section_scan_in`).
#[cfg(target_os = "none")]
#[inline(never)]
pub fn decode_stage_into<T: FromF32>(
    out: &mut core::mem::MaybeUninit<StageScan<T>>,
    raw: &RawStage,
) {
    out.write(decode_stage(raw));
}

/// Decodes field `i` of `raw` (out of line: one copy for every field, not
/// one inlined per input of [`StageScan::from_inputs`]).
#[inline(never)]
fn decode_field<T: FromF32>(raw: &RawStage, i: usize) -> Option<Measured<T>> {
    let code = raw.q.get(i).copied().unwrap_or(ABSENT);
    let bits = raw.bits.get(i).copied().unwrap_or(0);
    (code != ABSENT).then(|| Measured::new(T::from_f32(f32::from_bits(bits)), quality(code)))
}

/// Decodes one scan of `N` stages.
pub fn decode_scan<T: FromF32, const N: usize>(raw: &[RawStage; N]) -> Scan<T, N> {
    Scan {
        stages: raw.each_ref().map(decode_stage),
    }
}

/// Encodes one stage scan (values rounded to f32).
pub fn encode_stage<T: Real>(s: &StageScan<T>) -> RawStage {
    let mut raw = RawStage {
        bits: [0; FIELDS],
        q: [ABSENT; FIELDS],
    };
    for ((w, bits), q) in StageInput::ALL
        .iter()
        .zip(raw.bits.iter_mut())
        .zip(raw.q.iter_mut())
    {
        if let Some(m) = s.input(*w) {
            #[allow(clippy::cast_possible_truncation)]
            let x = m.value.to_f64() as f32;
            *bits = x.to_bits();
            *q = quality_code(m.quality);
        }
    }
    raw
}

/// Quality as its printed code.
pub fn quality_code(q: Quality) -> u8 {
    match q {
        Quality::Good => 0,
        Quality::Uncertain => 1,
        Quality::Bad => 2,
        Quality::NotApplicable => 4,
    }
}
