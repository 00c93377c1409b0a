//! A register image of one scan's results, for a PLC, SCADA or historian
//! reading the kernel over a fieldbus (Modbus input registers, or any other
//! protocol with 16-bit words).
//!
//! [`RegisterImage`] packs a train [`Snapshot`], the surge monitors'
//! [`SurgeState`] / [`DetectionState`] and the signal channels'
//! [`ChannelOutput`] into a fixed array of `u16` words whose length
//! ([`image_len`]) is known at compile time: no heap, no panic path, every
//! address fixed by the number of stages, surge monitors and channels.
//!
//! # Layout
//!
//! Header, then one block per stage, per cooler slot, per interstage slot,
//! the totals, the loss ledger (one train-wide block and one per stage
//! slot, [`RegisterImage::pack_ledger`]), one block per surge monitor and
//! per channel, a block of scaled integers, and a trailer that repeats the
//! scan counter. Every block
//! starts at an even address and has the same shape:
//!
//! * a **status word**: bits 0–1 the worst quality of the block's values
//!   (0 good, 1 uncertain, 2 bad, 3 not applicable), bit 2 set when the
//!   block is in use (a cooler is fitted, an interstage pressure exists),
//!   bits 4–7 a state code (stage or cooler condition, channel fault code),
//!   bits 8 upwards the block's yes/no fields in list order, bits 15
//!   downwards the block's derived marks ([`derived_bits`]);
//! * **quality words**: two bits per value slot, eight slots per word,
//!   slot 0 in bits 0–1, same codes as above;
//! * **value slots** of two registers each: IEEE 754 single precision for
//!   numbers, unsigned 32-bit for counts, word order as configured
//!   ([`WordOrder`], stated in the header).
//!
//! The scaled block repeats a few values as 16- or 32-bit signed integers
//! for controllers without floating point: `raw = round(value × scale)`,
//! saturated, and [`SCALED_NO_VALUE_I16`] / [`SCALED_NO_VALUE_I32`] when
//! the value is bad. The full map, generated from the field lists, is
//! written by [`write_map_markdown`] and [`write_map_csv`].
//!
//! Commands arrive as one write of the [`COMMAND_REGISTERS`]-word command
//! block ([`decode_command`]): a command code, a target, the code's bitwise
//! complement as a guard against stray writes, and a sequence number the
//! header echoes once the command is carried out.
//!
//! **Caution.** The image carries advisory values and an advisory trip
//! request; it is not a certified safety function (IEC 61508 / IEC 61511).

mod map;

pub use crate::fields::{FieldSpec, FieldValue, QuantityKind, ResultFields};
pub use map::{
    cooler_condition_code, derived_bits, map_checksum, pump_condition_code, stage_condition_code,
    state_codes, surge_fault_code, visit_map, write_map_csv, write_map_markdown, DerivedBit,
    Encoding, MapRow,
};

use crate::cooler::CoolerResult;
use crate::ledger::{Ledger, LedgerStage};
use crate::quality::{Measured, Quality};
use crate::real::Real;
use crate::signal::ChannelOutput;
use crate::stage::{CompressorResult, PumpResult};
use crate::staging::{InterstagePressure, TrainTotals};
use crate::steady::SteadyState;
use crate::surge::{DetectionState, SurgeState};
use crate::train::{Snapshot, StageWork};

/// Version of the layout rules; changes when an address moves (2: the
/// loss-ledger blocks after the totals).
pub const LAYOUT_VERSION: u16 = 2;

/// Order of the two 16-bit words of a 32-bit value (float or count).
/// Both are in use in the field; the header states which one an image uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum WordOrder {
    /// Most significant word at the lower address (code 0).
    #[default]
    HighWordFirst,
    /// Least significant word at the lower address (code 1).
    LowWordFirst,
}

impl WordOrder {
    /// The code the header carries (0 or 1).
    pub const fn code(self) -> u16 {
        match self {
            WordOrder::HighWordFirst => 0,
            WordOrder::LowWordFirst => 1,
        }
    }

    /// Splits `v` into the two words in this order.
    pub const fn split(self, v: u32) -> [u16; 2] {
        let hi = (v >> 16) as u16;
        let lo = (v & 0xFFFF) as u16;
        match self {
            WordOrder::HighWordFirst => [hi, lo],
            WordOrder::LowWordFirst => [lo, hi],
        }
    }

    /// Joins two words read in this order.
    pub const fn join(self, w: [u16; 2]) -> u32 {
        let [a, b] = w;
        let (hi, lo) = match self {
            WordOrder::HighWordFirst => (a, b),
            WordOrder::LowWordFirst => (b, a),
        };
        ((hi as u32) << 16) | lo as u32
    }
}

/// Two-bit quality code of a value slot or block.
pub mod quality_code {
    /// Good.
    pub const GOOD: u16 = 0;
    /// Uncertain: usable with care.
    pub const UNCERTAIN: u16 = 1;
    /// Bad: the value is a placeholder.
    pub const BAD: u16 = 2;
    /// Not applicable: the slot or block is not in use.
    pub const NOT_APPLICABLE: u16 = 3;
}

/// The two-bit code of a quality.
pub const fn quality_code(q: Quality) -> u16 {
    match q {
        Quality::Good => quality_code::GOOD,
        Quality::Uncertain => quality_code::UNCERTAIN,
        Quality::Bad => quality_code::BAD,
        Quality::NotApplicable => quality_code::NOT_APPLICABLE,
    }
}

/// Status-word bit: the block is in use.
pub const STATUS_PRESENT: u16 = 1 << 2;
/// Status-word shift of the 4-bit state code.
pub const STATUS_CODE_SHIFT: u16 = 4;
/// Status-word bit of a block's first yes/no field.
pub const STATUS_FIRST_FLAG: u16 = 8;

/// Value of a scaled 16-bit register when its source is bad.
pub const SCALED_NO_VALUE_I16: i16 = i16::MIN;
/// Value of a scaled 32-bit register when its source is bad.
pub const SCALED_NO_VALUE_I32: i32 = i32::MIN;

/// One value repeated as a scaled integer in the scaled block.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Scaled {
    /// Key of the source field (of a compressor stage, for stage entries).
    pub key: &'static str,
    /// Key of the source field in a pump stage (stage entries only).
    pub pump_key: Option<&'static str>,
    /// `raw = round(value × scale)`.
    pub scale: f32,
    /// Unit of one count of the raw value, for the map.
    pub raw_unit: &'static str,
    /// 32-bit (two registers) instead of 16-bit.
    pub wide: bool,
}

const fn scaled(key: &'static str, scale: f32, raw_unit: &'static str, wide: bool) -> Scaled {
    Scaled {
        key,
        pump_key: None,
        scale,
        raw_unit,
        wide,
    }
}

/// Scaled entries per stage.
pub const SCALED_STAGE: &[Scaled] = &[
    scaled("pressure_ratio", 1000.0, "0.001", false),
    scaled("polytropic_efficiency", 10000.0, "0.0001", false),
    scaled("isentropic_efficiency", 10000.0, "0.0001", false),
    Scaled {
        key: "gas_power_W",
        pump_key: Some("power_W"),
        scale: 0.001,
        raw_unit: "kW",
        wide: true,
    },
];
/// Scaled entries of the totals.
pub const SCALED_TOTALS: &[Scaled] = &[
    scaled("overall_pressure_ratio", 1000.0, "0.001", false),
    scaled("isothermal_efficiency", 10000.0, "0.0001", false),
    scaled("total_power_W", 0.001, "kW", true),
];
/// Scaled entries per surge monitor.
pub const SCALED_SURGE: &[Scaled] = &[
    scaled("surge_margin", 10000.0, "0.0001", false),
    scaled("control_line_clearance", 10000.0, "0.0001", false),
];
/// Scaled entries per channel.
pub const SCALED_CHANNEL: &[Scaled] = &[scaled("filtered_value", 10.0, "0.1 SI", true)];

// ---- sizes, all known at compile time ----------------------------------

/// Registers a field of this kind takes in its block's value area: two
/// (IEEE 754 single precision, or unsigned 32-bit for counts), none for
/// yes/no fields (status bits) and named states (the status word's code).
pub const fn registers_of(kind: QuantityKind) -> usize {
    match kind {
        QuantityKind::Flag | QuantityKind::Condition => 0,
        _ => 2,
    }
}

/// Value slots (two registers each) a field list takes.
pub const fn slots(fields: &[FieldSpec]) -> usize {
    let mut n = 0;
    let mut rest = fields;
    while let [f, tail @ ..] = rest {
        n += registers_of(f.kind) / 2;
        rest = tail;
    }
    n
}

const fn max(a: usize, b: usize) -> usize {
    if a > b {
        a
    } else {
        b
    }
}

/// Status word plus quality words, rounded up to an even count.
pub const fn block_head(slots: usize) -> usize {
    let words = 1 + slots.div_ceil(8);
    words + words % 2
}

/// Registers of a block with `slots` value slots.
pub const fn block_len(slots: usize) -> usize {
    block_head(slots) + 2 * slots
}

/// Registers a list of scaled entries takes.
pub const fn scaled_len(list: &[Scaled]) -> usize {
    let mut n = 0;
    let mut rest = list;
    while let [e, tail @ ..] = rest {
        n += if e.wide { 2 } else { 1 };
        rest = tail;
    }
    n
}

type F = f32;
/// Value slots of a stage's work part (the larger of compressor and pump).
pub const STAGE_WORK_SLOTS: usize = max(
    slots(<CompressorResult<F> as ResultFields<F>>::FIELDS),
    slots(<PumpResult<F> as ResultFields<F>>::FIELDS),
);
/// Value slots of a stage block (work part, then steady-state part).
pub const STAGE_SLOTS: usize =
    STAGE_WORK_SLOTS + slots(<SteadyState<F> as ResultFields<F>>::FIELDS);
/// Value slots of a cooler block.
pub const COOLER_SLOTS: usize = slots(<CoolerResult<F> as ResultFields<F>>::FIELDS);
/// Value slots of an interstage block.
pub const INTERSTAGE_SLOTS: usize = slots(<InterstagePressure<F> as ResultFields<F>>::FIELDS);
/// Value slots of the totals block.
pub const TOTALS_SLOTS: usize = slots(<TrainTotals<F> as ResultFields<F>>::FIELDS);
/// Value slots of the loss ledger's train-wide block.
pub const LEDGER_SLOTS: usize = slots(<Ledger<F, 1> as ResultFields<F>>::FIELDS);
/// Value slots of a loss-ledger stage block.
pub const LEDGER_STAGE_SLOTS: usize = slots(<LedgerStage<F> as ResultFields<F>>::FIELDS);
/// Value slots of the surge-state part of a surge block.
pub const SURGE_STATE_SLOTS: usize = slots(<SurgeState<F> as ResultFields<F>>::FIELDS);
/// Value slots of a surge block (surge state, then detection).
pub const SURGE_SLOTS: usize =
    SURGE_STATE_SLOTS + slots(<DetectionState<F> as ResultFields<F>>::FIELDS);
/// Value slots of a channel block.
pub const CHANNEL_SLOTS: usize = slots(<ChannelOutput<F> as ResultFields<F>>::FIELDS);

/// Registers of the header.
pub const HEADER_LEN: usize = 18;
/// Registers of the trailer (the scan counter again).
pub const TRAILER_LEN: usize = 2;
/// Registers of the command block (holding registers 0..4).
pub const COMMAND_REGISTERS: usize = 4;

/// Header offsets.
pub mod header {
    /// Layout version ([`super::LAYOUT_VERSION`]).
    pub const LAYOUT_VERSION: usize = 0;
    /// Word order code ([`super::WordOrder::code`]).
    pub const WORD_ORDER: usize = 1;
    /// Image length in registers.
    pub const IMAGE_REGISTERS: usize = 2;
    /// Number of stage blocks.
    pub const STAGE_BLOCKS: usize = 3;
    /// Number of surge blocks.
    pub const SURGE_BLOCKS: usize = 4;
    /// Number of channel blocks.
    pub const CHANNEL_BLOCKS: usize = 5;
    /// Configuration checksum, u32.
    pub const CONFIG_CHECKSUM: usize = 6;
    /// Map checksum, u32.
    pub const MAP_CHECKSUM: usize = 8;
    /// Heartbeat: images packed since start, u32.
    pub const HEARTBEAT: usize = 10;
    /// The train's scan counter, u32.
    pub const SCAN_COUNT: usize = 12;
    /// Summary status word.
    pub const SUMMARY: usize = 14;
    /// Sequence number of the last command carried out.
    pub const COMMAND_SEQUENCE: usize = 15;
    /// Code of the last command carried out (0 none yet).
    pub const COMMAND_CODE: usize = 16;
    /// Reserved (0), keeps the blocks on even addresses.
    pub const RESERVED: usize = 17;
}

/// Summary bit: a surge monitor requests a trip.
pub const SUMMARY_TRIP_REQUEST: u16 = 1 << 8;
/// Summary bit: a surge event is not yet acknowledged.
pub const SUMMARY_EVENT_UNACKNOWLEDGED: u16 = 1 << 9;
/// Summary bit: a channel is bad.
pub const SUMMARY_CHANNEL_BAD: u16 = 1 << 10;

/// Where each part of an image with `n` stages, `m` surge monitors and `c`
/// channels starts, and its length.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Layout {
    /// First stage block.
    pub stages: usize,
    /// First cooler block (one per stage slot).
    pub coolers: usize,
    /// First interstage block (one per stage slot).
    pub interstage: usize,
    /// Totals block.
    pub totals: usize,
    /// Loss-ledger block (train-wide lines).
    pub ledger: usize,
    /// First loss-ledger stage block (one per stage slot).
    pub ledger_stages: usize,
    /// First surge block.
    pub surge: usize,
    /// First channel block.
    pub channels: usize,
    /// Scaled block.
    pub scaled: usize,
    /// Trailer.
    pub trailer: usize,
    /// Image length.
    pub len: usize,
}

impl Layout {
    /// The layout for `n` stages, `m` surge monitors and `c` channels.
    pub const fn new(n: usize, m: usize, c: usize) -> Layout {
        let stages = HEADER_LEN;
        let coolers = stages + n * block_len(STAGE_SLOTS);
        let interstage = coolers + n * block_len(COOLER_SLOTS);
        let totals = interstage + n * block_len(INTERSTAGE_SLOTS);
        let ledger = totals + block_len(TOTALS_SLOTS);
        let ledger_stages = ledger + block_len(LEDGER_SLOTS);
        let surge = ledger_stages + n * block_len(LEDGER_STAGE_SLOTS);
        let channels = surge + m * block_len(SURGE_SLOTS);
        let scaled = channels + c * block_len(CHANNEL_SLOTS);
        let scaled_total = n * scaled_len(SCALED_STAGE)
            + scaled_len(SCALED_TOTALS)
            + m * scaled_len(SCALED_SURGE)
            + c * scaled_len(SCALED_CHANNEL);
        let trailer = scaled + scaled_total + scaled_total % 2;
        Layout {
            stages,
            coolers,
            interstage,
            totals,
            ledger,
            ledger_stages,
            surge,
            channels,
            scaled,
            trailer,
            len: trailer + TRAILER_LEN,
        }
    }
}

/// Registers of an image with `n` stages, `m` surge monitors and `c`
/// channels: the `R` of [`RegisterImage`].
pub const fn image_len(n: usize, m: usize, c: usize) -> usize {
    Layout::new(n, m, c).len
}

// ---- the image -----------------------------------------------------------

/// One surge monitor's results as the image takes them.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SurgeView<T> {
    /// Surge margin and clearance above the control line.
    pub state: SurgeState<T>,
    /// Surge-cycle detection and the control-line shift.
    pub detection: DetectionState<T>,
}

/// A packed register image: `N` stages, `M` surge monitors, `C` channels,
/// `R = image_len(N, M, C)` registers (checked at compile time).
///
/// ```
/// use polytrope::gas::{IdealGas, AIR};
/// use polytrope::registers::{header, image_len, quality_code, RegisterImage, WordOrder};
/// use polytrope::scan::{Scan, StageScan};
/// use polytrope::steady::SteadyStateConfig;
/// use polytrope::train::{StageConfig, StageKind, Train, TrainConfig};
/// use polytrope::units::PressureAbs;
///
/// let stage = |p1: f32, p2: f32| StageConfig {
///     kind: StageKind::Compressor,
///     design_suction_pressure: PressureAbs::from_bar(p1),
///     design_discharge_pressure: PressureAbs::from_bar(p2),
///     cooler: None,
/// };
/// let config = TrainConfig {
///     gas: IdealGas::from_spec(&AIR, false, 1.0)?,
///     stages: [stage(1.0, 3.0), stage(2.9, 9.0)],
///     max_interstage_pressure_drop: 0.1,
///     steady_state: SteadyStateConfig::default(),
/// };
/// let mut train = Train::<f32, _, 2, 8>::new(config)?;
/// let scan = Scan { stages: [
///     StageScan::from_si(1.0e5, 300.0, 3.0e5, 430.0),
///     StageScan::from_si(2.9e5, 305.0, 9.0e5, 440.0),
/// ] };
/// // Two stages, no surge monitor, no channel.
/// const R: usize = image_len(2, 0, 0);
/// let mut image = RegisterImage::<2, 0, 0, R>::new(WordOrder::HighWordFirst, 0x1234_5678);
/// image.pack(train.update(&scan), &[], &[]);
/// let regs = image.registers();
/// assert_eq!(regs[header::SCAN_COUNT..header::SCAN_COUNT + 2], [0, 1]); // high word first
/// let stage_1 = RegisterImage::<2, 0, 0, R>::LAYOUT.stages;
/// // Value slot 0 (the pressure ratio) is good; the block's worst quality is
/// // bad, because without a mass flow there is no gas power.
/// assert_eq!(regs[stage_1 + 1] & 3, quality_code::GOOD);
/// assert_eq!(regs[stage_1] & 3, quality_code::BAD);
/// # Ok::<(), polytrope::ConfigError>(())
/// ```
///
/// A wrong `R` does not compile:
///
/// ```compile_fail
/// use polytrope::registers::{RegisterImage, WordOrder};
/// let _ = RegisterImage::<5, 0, 0, 100>::new(WordOrder::HighWordFirst, 0);
/// ```
#[derive(Clone, Debug)]
pub struct RegisterImage<const N: usize, const M: usize, const C: usize, const R: usize> {
    regs: [u16; R],
    order: WordOrder,
    heartbeat: u32,
    acknowledged: [u32; M],
}

/// Writes `v` at `addr` (ignored outside the image; the layout makes that
/// impossible, the check keeps the code panic-free).
fn put(regs: &mut [u16], addr: usize, v: u16) {
    if let Some(r) = regs.get_mut(addr) {
        *r = v;
    }
}

fn put32(regs: &mut [u16], addr: usize, v: u32, order: WordOrder) {
    let [a, b] = order.split(v);
    put(regs, addr, a);
    put(regs, addr + 1, b);
}

fn get(regs: &[u16], addr: usize) -> u16 {
    regs.get(addr).copied().unwrap_or(0)
}

fn get32(regs: &[u16], addr: usize, order: WordOrder) -> u32 {
    order.join([get(regs, addr), get(regs, addr + 1)])
}

/// The value types an image takes: converts to the image's f32 without a
/// detour through f64 (soft-float on a single-precision FPU).
pub trait RegisterReal: Real {
    /// The value as f32 (rounded to nearest for f64).
    fn to_f32(self) -> f32;
}
impl RegisterReal for f32 {
    #[inline]
    fn to_f32(self) -> f32 {
        self
    }
}
impl RegisterReal for f64 {
    #[inline]
    fn to_f32(self) -> f32 {
        self as f32
    }
}

/// Fills one block: status word, quality words, value slots. Slots are
/// visited in rising order; the current quality word is kept in a register
/// and written once it is complete.
struct Block<'a> {
    regs: &'a mut [u16],
    base: usize,
    head: usize,
    order: WordOrder,
    slot: usize,
    qword: u16,
    qindex: usize,
    flag: u16,
    status: u16,
    worst: Option<Quality>,
}

/// A quality word with every slot "not applicable".
const ALL_NOT_APPLICABLE: u16 = 0xFFFF;

impl<'a> Block<'a> {
    /// Starts a block: every value zero, every slot "not applicable".
    fn start(regs: &'a mut [u16], base: usize, slots: usize, order: WordOrder) -> Self {
        let head = block_head(slots);
        let qwords = slots.div_ceil(8);
        if let Some(q) = regs.get_mut(base + 1..base + 1 + qwords) {
            q.fill(ALL_NOT_APPLICABLE);
        }
        if let Some(r) = regs.get_mut(base + 1 + qwords..base + block_len(slots)) {
            r.fill(0);
        }
        Block {
            regs,
            base,
            head,
            order,
            slot: 0,
            qword: ALL_NOT_APPLICABLE,
            qindex: 0,
            flag: 0,
            status: 0,
            worst: None,
        }
    }

    /// Moves to value slot `s` (not below the current one).
    fn seek(&mut self, s: usize) {
        self.slot = s;
    }

    fn flush(&mut self) {
        put(self.regs, self.base + 1 + self.qindex, self.qword);
    }

    fn slot_value(&mut self, bits: u32, code: u16) {
        let s = self.slot;
        if s / 8 != self.qindex {
            self.flush();
            self.qindex = s / 8;
            self.qword = get(self.regs, self.base + 1 + self.qindex);
        }
        let shift = 2 * (s % 8);
        self.qword = (self.qword & !(3 << shift)) | ((code & 3) << shift);
        put32(self.regs, self.base + self.head + 2 * s, bits, self.order);
        self.slot = s + 1;
    }

    fn real<T: RegisterReal>(&mut self, m: Measured<T>) {
        let finite = T::is_finite(m.value);
        let q = if finite { m.quality } else { Quality::Bad };
        let v = if matches!(q, Quality::Bad | Quality::NotApplicable) {
            0.0
        } else {
            m.value.to_f32()
        };
        // The block's worst quality is over the values that apply here.
        if q != Quality::NotApplicable {
            self.worst = Some(match self.worst {
                Some(w) => w.worst(q),
                None => q,
            });
        }
        self.slot_value(v.to_bits(), quality_code(q));
    }

    fn field<T: RegisterReal>(&mut self, value: FieldValue<T>) {
        match value {
            FieldValue::Real(m) => self.real(m),
            FieldValue::Plain(x) => self.real(Measured::good(x)),
            FieldValue::Count(n) => self.slot_value(n, quality_code::GOOD),
            FieldValue::Flag(b) => {
                if b {
                    self.status |= 1 << (STATUS_FIRST_FLAG + self.flag).min(15);
                }
                self.flag += 1;
            }
            // Named states go into the status word from the typed value.
            FieldValue::Tag(_) => {}
        }
    }

    fn code(&mut self, c: u16) {
        self.status =
            (self.status & !(0xF << STATUS_CODE_SHIFT)) | ((c & 0xF) << STATUS_CODE_SHIFT);
    }

    /// Writes the last quality word and the status word; returns the
    /// block's worst quality.
    fn finish(mut self, present: bool, derived: u16) -> Option<Quality> {
        self.flush();
        let q = self
            .worst
            .map_or(quality_code::NOT_APPLICABLE, quality_code);
        let present = if present { STATUS_PRESENT } else { 0 };
        put(self.regs, self.base, self.status | present | derived | q);
        self.worst
    }
}

/// Reads slot `slot`'s quality code from a block at `base`.
pub fn slot_quality(regs: &[u16], base: usize, slot: usize) -> u16 {
    (get(regs, base + 1 + slot / 8) >> (2 * (slot % 8))) & 3
}

/// Derived status bits (bits 15 downwards).
pub mod derived {
    /// Stage block: the stage is a pump.
    pub const STAGE_PUMP: u16 = 1 << 15;
    /// Surge block: a surge event has not been acknowledged.
    pub const SURGE_EVENT_UNACKNOWLEDGED: u16 = 1 << 15;
    /// Surge block: the operating point is inside the control line
    /// (clearance below zero, usable).
    pub const SURGE_INSIDE_CONTROL_LINE: u16 = 1 << 14;
    /// Channel block: the value is a held last good value.
    pub const CHANNEL_SUBSTITUTED: u16 = 1 << 15;
}

/// Position of `key` among the value slots of `fields`.
pub const fn slot_of(fields: &[FieldSpec], key: &str) -> Option<usize> {
    let mut slot = 0;
    let mut rest = fields;
    while let [f, tail @ ..] = rest {
        if str_eq(f.key, key) {
            return if registers_of(f.kind) == 2 {
                Some(slot)
            } else {
                None
            };
        }
        slot += registers_of(f.kind) / 2;
        rest = tail;
    }
    None
}

const fn str_eq(a: &str, b: &str) -> bool {
    let (mut a, mut b) = (a.as_bytes(), b.as_bytes());
    loop {
        match (a, b) {
            ([x, ta @ ..], [y, tb @ ..]) => {
                if *x != *y {
                    return false;
                }
                a = ta;
                b = tb;
            }
            ([], []) => return true,
            _ => return false,
        }
    }
}

/// Source slot of each scaled entry in a field list (`u8::MAX`: none).
/// Evaluated at compile time only.
#[allow(clippy::indexing_slicing)] // i < K is checked
const fn resolve<const K: usize>(list: &[Scaled], fields: &[FieldSpec], pump: bool) -> [u8; K] {
    let mut out = [u8::MAX; K];
    let mut rest = list;
    let mut i = 0;
    while let [e, tail @ ..] = rest {
        let key = match (pump, e.pump_key) {
            (true, Some(k)) => k,
            _ => e.key,
        };
        if let (Some(s), true) = (slot_of(fields, key), i < K) {
            out[i] = s as u8;
        }
        rest = tail;
        i += 1;
    }
    out
}

const N_STAGE: usize = SCALED_STAGE.len();
const N_TOTALS: usize = SCALED_TOTALS.len();
const N_SURGE: usize = SCALED_SURGE.len();
const N_CHANNEL: usize = SCALED_CHANNEL.len();
const SRC_COMPRESSOR: [u8; N_STAGE] = resolve(
    SCALED_STAGE,
    <CompressorResult<F> as ResultFields<F>>::FIELDS,
    false,
);
const SRC_PUMP: [u8; N_STAGE] = resolve(
    SCALED_STAGE,
    <PumpResult<F> as ResultFields<F>>::FIELDS,
    true,
);
const SRC_TOTALS: [u8; N_TOTALS] = resolve(
    SCALED_TOTALS,
    <TrainTotals<F> as ResultFields<F>>::FIELDS,
    false,
);
const SRC_SURGE: [u8; N_SURGE] = resolve(
    SCALED_SURGE,
    <SurgeState<F> as ResultFields<F>>::FIELDS,
    false,
);
const SRC_CHANNEL: [u8; N_CHANNEL] = resolve(
    SCALED_CHANNEL,
    <ChannelOutput<F> as ResultFields<F>>::FIELDS,
    false,
);

/// The scaled source slot of entry `i` of a stage of the given kind
/// (`None`: the kind has no such field).
pub fn scaled_stage_source(i: usize, pump: bool) -> Option<usize> {
    let src = if pump { &SRC_PUMP } else { &SRC_COMPRESSOR };
    src.get(i)
        .copied()
        .filter(|&s| s != u8::MAX)
        .map(usize::from)
}

/// Rounds `v × scale` half away from zero to an integer within
/// `[-limit, limit]` (`v` finite). Single-precision arithmetic and one
/// float-to-int conversion (saturating), no 64-bit maths.
fn scale_round(v: f32, scale: f32, limit: i32) -> i32 {
    let x = v * scale;
    let r = if x >= 0.0 { x + 0.5 } else { x - 0.5 };
    // `as` truncates toward zero and saturates: with the half added this
    // rounds half away from zero.
    (r as i32).clamp(-limit, limit)
}

impl<const N: usize, const M: usize, const C: usize, const R: usize> RegisterImage<N, M, C, R> {
    /// The layout of this image.
    pub const LAYOUT: Layout = Layout::new(N, M, C);
    /// The map checksum the header carries ([`map_checksum`]).
    pub const MAP_CHECKSUM: u32 = map::map_checksum(N, M, C);

    /// An empty image (every value not applicable) with the given word order
    /// and configuration checksum (for example [`crc32`] of the stored
    /// configuration the gateway loaded).
    pub fn new(order: WordOrder, config_checksum: u32) -> Self {
        const {
            assert!(
                R == image_len(N, M, C),
                "R must be image_len(N, M, C) registers"
            )
        };
        const { assert!(R <= 65_536, "a register image has at most 65,536 registers") };
        let mut image = RegisterImage {
            regs: [0; R],
            order,
            heartbeat: 0,
            acknowledged: [0; M],
        };
        let regs = &mut image.regs;
        put(regs, header::LAYOUT_VERSION, LAYOUT_VERSION);
        put(regs, header::WORD_ORDER, order.code());
        put(regs, header::IMAGE_REGISTERS, R as u16);
        put(regs, header::STAGE_BLOCKS, N as u16);
        put(regs, header::SURGE_BLOCKS, M as u16);
        put(regs, header::CHANNEL_BLOCKS, C as u16);
        put32(regs, header::CONFIG_CHECKSUM, config_checksum, order);
        put32(regs, header::MAP_CHECKSUM, Self::MAP_CHECKSUM, order);
        put(regs, header::SUMMARY, quality_code::NOT_APPLICABLE);
        // The ledger blocks stay "not in use" until `pack_ledger`.
        let l = Self::LAYOUT;
        Block::start(regs, l.ledger, LEDGER_SLOTS, order).finish(false, 0);
        for i in 0..N {
            let base = l.ledger_stages + i * block_len(LEDGER_STAGE_SLOTS);
            Block::start(regs, base, LEDGER_STAGE_SLOTS, order).finish(false, 0);
        }
        image
    }

    /// Packs one scan's loss ledger ([`crate::ledger::evaluate_ledger_into`]
    /// after the same scan's [`RegisterImage::pack`]): the train-wide block
    /// and one stage block per compressor stage (pump stage slots stay not
    /// in use). The ledger blocks are outside the header's summary quality.
    /// Never called, they stay not in use. Bounded: one pass over the blocks.
    pub fn pack_ledger<T: RegisterReal>(&mut self, ledger: &Ledger<T, N>) {
        let l = Self::LAYOUT;
        let order = self.order;
        let mut b = Block::start(&mut self.regs, l.ledger, LEDGER_SLOTS, order);
        ledger.visit_fields(&mut |_, v| b.field(v));
        b.finish(true, 0);
        for i in 0..N {
            let base = l.ledger_stages + i * block_len(LEDGER_STAGE_SLOTS);
            let mut b = Block::start(&mut self.regs, base, LEDGER_STAGE_SLOTS, order);
            let stage = ledger.stage(i);
            if let Some(st) = &stage {
                st.visit_fields(&mut |_, v| b.field(v));
            }
            b.finish(stage.is_some(), 0);
        }
    }

    /// The registers (input registers 0..R).
    pub fn registers(&self) -> &[u16; R] {
        &self.regs
    }

    /// The word order.
    pub fn word_order(&self) -> WordOrder {
        self.order
    }

    /// Marks surge monitor `monitor`'s events so far as acknowledged;
    /// `false` if there is no such monitor.
    pub fn acknowledge_surge_events(&mut self, monitor: usize, event_count: u32) -> bool {
        match self.acknowledged.get_mut(monitor) {
            Some(a) => {
                *a = event_count;
                true
            }
            None => false,
        }
    }

    /// Records a command carried out (echoed in the header).
    pub fn record_command(&mut self, command: Command) {
        put(&mut self.regs, header::COMMAND_SEQUENCE, command.sequence);
        put(&mut self.regs, header::COMMAND_CODE, command.kind.code());
    }

    /// Packs one scan's results. Bounded: one pass over the image.
    pub fn pack<T: RegisterReal>(
        &mut self,
        snapshot: &Snapshot<T, N>,
        surge: &[SurgeView<T>; M],
        channels: &[ChannelOutput<T>; C],
    ) {
        let l = Self::LAYOUT;
        let order = self.order;
        let mut summary: Option<Quality> = None;
        let mut flags = 0u16;
        let mut worst = |q: Option<Quality>| {
            if let Some(q) = q {
                summary = Some(summary.map_or(q, |s| s.worst(q)));
            }
        };
        for (i, st) in snapshot.stages.iter().enumerate() {
            let base = l.stages + i * block_len(STAGE_SLOTS);
            let mut b = Block::start(&mut self.regs, base, STAGE_SLOTS, order);
            let pump = match &st.work {
                StageWork::Compressor(c) => {
                    c.visit_fields(&mut |_, v| b.field(v));
                    b.code(u16::from(map::stage_condition_code(c.condition)));
                    false
                }
                StageWork::Pump(p) => {
                    p.visit_fields(&mut |_, v| b.field(v));
                    b.code(u16::from(map::pump_condition_code(p.condition)));
                    true
                }
            };
            b.seek(STAGE_WORK_SLOTS);
            st.steady_state.visit_fields(&mut |_, v| b.field(v));
            worst(b.finish(true, if pump { derived::STAGE_PUMP } else { 0 }));
            let src = if pump { &SRC_PUMP } else { &SRC_COMPRESSOR };
            let at = l.scaled + i * scaled_len(SCALED_STAGE);
            self.scale_block(base, STAGE_SLOTS, SCALED_STAGE, src, at);
        }
        for (i, c) in snapshot.coolers.iter().enumerate() {
            let base = l.coolers + i * block_len(COOLER_SLOTS);
            let mut b = Block::start(&mut self.regs, base, COOLER_SLOTS, order);
            if let Some(c) = c {
                c.visit_fields(&mut |_, v| b.field(v));
                b.code(u16::from(map::cooler_condition_code(c.condition)));
            }
            worst(b.finish(c.is_some(), 0));
        }
        for (i, p) in snapshot.interstage.iter().enumerate() {
            let base = l.interstage + i * block_len(INTERSTAGE_SLOTS);
            let mut b = Block::start(&mut self.regs, base, INTERSTAGE_SLOTS, order);
            if let Some(p) = p {
                p.visit_fields(&mut |_, v| b.field(v));
            }
            worst(b.finish(p.is_some(), 0));
        }
        {
            let mut b = Block::start(&mut self.regs, l.totals, TOTALS_SLOTS, order);
            snapshot.totals.visit_fields(&mut |_, v| b.field(v));
            worst(b.finish(true, 0));
            let at = l.scaled + N * scaled_len(SCALED_STAGE);
            self.scale_block(l.totals, TOTALS_SLOTS, SCALED_TOTALS, &SRC_TOTALS, at);
        }
        for (i, s) in surge.iter().enumerate() {
            let base = l.surge + i * block_len(SURGE_SLOTS);
            let acked = self.acknowledged.get_mut(i);
            // An operator reset of the shift also resets the count.
            let unacked = match acked {
                Some(a) => {
                    if *a > s.detection.event_count {
                        *a = s.detection.event_count;
                    }
                    s.detection.event_count > *a
                }
                None => false,
            };
            let mut b = Block::start(&mut self.regs, base, SURGE_SLOTS, order);
            s.state.visit_fields(&mut |_, v| b.field(v));
            b.code(u16::from(map::surge_fault_code(s.state.fault)));
            b.seek(SURGE_STATE_SLOTS);
            s.detection.visit_fields(&mut |_, v| b.field(v));
            let clearance = s.state.clearance;
            let inside = clearance.quality.is_usable() && clearance.value < T::ZERO;
            let mut d = 0;
            if unacked {
                d |= derived::SURGE_EVENT_UNACKNOWLEDGED;
                flags |= SUMMARY_EVENT_UNACKNOWLEDGED;
            }
            if inside {
                d |= derived::SURGE_INSIDE_CONTROL_LINE;
            }
            if s.detection.trip_request {
                flags |= SUMMARY_TRIP_REQUEST;
            }
            b.finish(true, d);
            let at = l.scaled
                + N * scaled_len(SCALED_STAGE)
                + scaled_len(SCALED_TOTALS)
                + i * scaled_len(SCALED_SURGE);
            self.scale_block(base, SURGE_SLOTS, SCALED_SURGE, &SRC_SURGE, at);
        }
        for (i, ch) in channels.iter().enumerate() {
            let base = l.channels + i * block_len(CHANNEL_SLOTS);
            let mut b = Block::start(&mut self.regs, base, CHANNEL_SLOTS, order);
            ch.visit_fields(&mut |_, v| b.field(v));
            b.code(u16::from(ch.status.fault.code()));
            // The channel's own quality rules its block (a held value is
            // uncertain even when the held sample was good).
            b.worst = Some(
                b.worst
                    .map_or(ch.status.quality, |w| w.worst(ch.status.quality)),
            );
            if ch.status.quality == Quality::Bad {
                flags |= SUMMARY_CHANNEL_BAD;
            }
            let d = if ch.status.substituted {
                derived::CHANNEL_SUBSTITUTED
            } else {
                0
            };
            b.finish(true, d);
            let at = l.scaled
                + N * scaled_len(SCALED_STAGE)
                + scaled_len(SCALED_TOTALS)
                + M * scaled_len(SCALED_SURGE)
                + i * scaled_len(SCALED_CHANNEL);
            self.scale_block(base, CHANNEL_SLOTS, SCALED_CHANNEL, &SRC_CHANNEL, at);
        }
        self.heartbeat = self.heartbeat.wrapping_add(1);
        let q = summary.map_or(quality_code::NOT_APPLICABLE, quality_code);
        let regs = &mut self.regs;
        put(regs, header::SUMMARY, q | flags);
        put32(regs, header::HEARTBEAT, self.heartbeat, order);
        put32(regs, header::SCAN_COUNT, snapshot.scan_count, order);
        put32(regs, l.trailer, snapshot.scan_count, order);
    }

    /// Writes the scaled integers of one block from its value slots.
    fn scale_block(&mut self, base: usize, slots: usize, list: &[Scaled], src: &[u8], at: usize) {
        let head = block_head(slots);
        let mut addr = at;
        for (e, &s) in list.iter().zip(src.iter()) {
            let s = usize::from(s);
            let usable = s < slots && slot_quality(&self.regs, base, s) <= quality_code::UNCERTAIN;
            let v = f32::from_bits(get32(&self.regs, base + head + 2 * s, self.order));
            if e.wide {
                let raw = if usable {
                    scale_round(v, e.scale, i32::MAX)
                } else {
                    SCALED_NO_VALUE_I32
                };
                put32(&mut self.regs, addr, raw as u32, self.order);
                addr += 2;
            } else {
                let raw = if usable {
                    scale_round(v, e.scale, i32::from(i16::MAX)) as i16
                } else {
                    SCALED_NO_VALUE_I16
                };
                put(&mut self.regs, addr, raw as u16);
                addr += 1;
            }
        }
    }
}

// ---- commands ------------------------------------------------------------

/// A command a gateway accepts through the command block.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CommandKind {
    /// Acknowledge the surge events of a monitor so far (code 1).
    AcknowledgeSurgeEvents,
    /// Reset the margin a monitor's detector has added to the control line
    /// and its event count (code 2;
    /// [`crate::surge::SurgeDetector::reset_added_margin`]).
    ResetAddedMargin,
    /// Reset a monitor's trip request (code 3;
    /// [`crate::surge::SurgeDetector::reset_trip`]).
    ResetTripRequest,
}

impl CommandKind {
    /// The command code.
    pub const fn code(self) -> u16 {
        match self {
            CommandKind::AcknowledgeSurgeEvents => 1,
            CommandKind::ResetAddedMargin => 2,
            CommandKind::ResetTripRequest => 3,
        }
    }

    /// Every command, for the map.
    pub const ALL: [CommandKind; 3] = [
        CommandKind::AcknowledgeSurgeEvents,
        CommandKind::ResetAddedMargin,
        CommandKind::ResetTripRequest,
    ];

    /// Stable name.
    pub const fn as_str(self) -> &'static str {
        match self {
            CommandKind::AcknowledgeSurgeEvents => "acknowledge-surge-events",
            CommandKind::ResetAddedMargin => "reset-added-margin",
            CommandKind::ResetTripRequest => "reset-trip-request",
        }
    }
}

/// A decoded command.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Command {
    /// What to do.
    pub kind: CommandKind,
    /// Surge monitor index.
    pub target: u16,
    /// Sequence number chosen by the writer (echoed in the header).
    pub sequence: u16,
}

/// Why a command block was refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CommandError {
    /// Not exactly the whole block written in one request.
    Incomplete,
    /// Unknown command code.
    UnknownCommand,
    /// The guard word is not the complement of the command code.
    GuardMismatch,
    /// No such surge monitor.
    NoSuchTarget,
}

/// Command block offsets (holding registers).
pub mod command {
    /// Command code ([`super::CommandKind::code`]).
    pub const CODE: usize = 0;
    /// Target (surge monitor index, 0-based).
    pub const TARGET: usize = 1;
    /// Guard: the bitwise complement of the command code.
    pub const GUARD: usize = 2;
    /// Sequence number, echoed in the header when carried out.
    pub const SEQUENCE: usize = 3;
}

/// Decodes a write of the command block: `start` is the first register
/// written, `words` the values; `monitors` the number of surge monitors.
pub fn decode_command(start: u16, words: &[u16], monitors: usize) -> Result<Command, CommandError> {
    if start != 0 || words.len() != COMMAND_REGISTERS {
        return Err(CommandError::Incomplete);
    }
    let w = |i: usize| words.get(i).copied().unwrap_or(0);
    let code = w(command::CODE);
    let kind = CommandKind::ALL
        .iter()
        .copied()
        .find(|k| k.code() == code)
        .ok_or(CommandError::UnknownCommand)?;
    if w(command::GUARD) != !code {
        return Err(CommandError::GuardMismatch);
    }
    let target = w(command::TARGET);
    if usize::from(target) >= monitors {
        return Err(CommandError::NoSuchTarget);
    }
    Ok(Command {
        kind,
        target,
        sequence: w(command::SEQUENCE),
    })
}

// ---- checksum ------------------------------------------------------------

/// CRC-32 (ISO-HDLC: IEEE 802.3 polynomial, reflected, initial and final
/// XOR 0xFFFFFFFF; the checksum of zip, PNG and Ethernet), the crate's one
/// CRC ([`crate::config_blob`] uses the same).
pub const fn crc32(bytes: &[u8]) -> u32 {
    crate::config_blob::CRC.checksum(bytes)
}

/// Chains a 32-bit checksum `h` with a piece's `crc32` and a tag byte:
/// `crc32(h ‖ piece ‖ tag)` (little-endian words).
pub(crate) const fn crc32_chain(h: u32, piece: u32, tag: u8) -> u32 {
    let [a0, a1, a2, a3] = h.to_le_bytes();
    let [b0, b1, b2, b3] = piece.to_le_bytes();
    crc32(&[a0, a1, a2, a3, b0, b1, b2, b3, tag])
}

#[cfg(test)]
#[cfg(feature = "demo")]
mod tests;
