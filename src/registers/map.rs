//! The register map, generated from the same field lists and layout the
//! packer uses: [`visit_map`] walks every register of an image,
//! [`write_map_markdown`] and [`write_map_csv`] print it.

use core::fmt::{self, Write};

use super::{
    block_head, block_len, command, crc32, crc32_chain, derived, header, quality_code,
    scaled_stage_source, CommandKind, Layout, Scaled, COMMAND_REGISTERS, SCALED_CHANNEL,
    SCALED_NO_VALUE_I16, SCALED_NO_VALUE_I32, SCALED_STAGE, SCALED_SURGE, SCALED_TOTALS,
    STAGE_WORK_SLOTS, STATUS_CODE_SHIFT, STATUS_FIRST_FLAG, SUMMARY_CHANNEL_BAD,
    SUMMARY_EVENT_UNACKNOWLEDGED, SUMMARY_TRIP_REQUEST, SURGE_STATE_SLOTS,
};
use super::{registers_of, FieldSpec, QuantityKind, ResultFields};
use crate::cooler::{CoolerCondition, CoolerResult};
use crate::fields::Derivation;
use crate::ledger::{Ledger, LedgerStage};
use crate::quality::FaultCode;
use crate::signal::ChannelOutput;
use crate::stage::{CompressorResult, PumpCondition, PumpResult, StageCondition};
use crate::staging::{InterstagePressure, TrainTotals};
use crate::steady::SteadyState;
use crate::surge::{DetectionState, SurgeFault, SurgeState};

type F = f32;
const COMPRESSOR: &[FieldSpec] = <CompressorResult<F> as ResultFields<F>>::FIELDS;
const PUMP: &[FieldSpec] = <PumpResult<F> as ResultFields<F>>::FIELDS;
const STEADY: &[FieldSpec] = <SteadyState<F> as ResultFields<F>>::FIELDS;
const COOLER: &[FieldSpec] = <CoolerResult<F> as ResultFields<F>>::FIELDS;
const INTERSTAGE: &[FieldSpec] = <InterstagePressure<F> as ResultFields<F>>::FIELDS;
const TOTALS: &[FieldSpec] = <TrainTotals<F> as ResultFields<F>>::FIELDS;
const SURGE: &[FieldSpec] = <SurgeState<F> as ResultFields<F>>::FIELDS;
const DETECTION: &[FieldSpec] = <DetectionState<F> as ResultFields<F>>::FIELDS;
const CHANNEL_FIELDS: &[FieldSpec] = <ChannelOutput<F> as ResultFields<F>>::FIELDS;
const LEDGER: &[FieldSpec] = <Ledger<F, 1> as ResultFields<F>>::FIELDS;
const LEDGER_STAGE: &[FieldSpec] = <LedgerStage<F> as ResultFields<F>>::FIELDS;

/// How a register (or register pair) is encoded.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Encoding {
    /// Unsigned 16-bit number.
    U16,
    /// Status word (see the module docs).
    Status,
    /// Quality word: two bits per value slot.
    Quality,
    /// IEEE 754 single precision, two registers.
    F32,
    /// Unsigned 32-bit count, two registers.
    U32,
    /// Signed 16-bit, `raw = round(value × scale)`.
    I16 {
        /// Scale factor.
        scale: f32,
    },
    /// Signed 32-bit, two registers, `raw = round(value × scale)`.
    I32 {
        /// Scale factor.
        scale: f32,
    },
    /// Always 0.
    Reserved,
}

impl Encoding {
    /// Name in the map.
    pub const fn as_str(self) -> &'static str {
        match self {
            Encoding::U16 => "uint16",
            Encoding::Status => "status",
            Encoding::Quality => "quality",
            Encoding::F32 => "float32",
            Encoding::U32 => "uint32",
            Encoding::I16 { .. } => "int16",
            Encoding::I32 { .. } => "int32",
            Encoding::Reserved => "reserved",
        }
    }
}

/// One register (or register pair) of the map.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MapRow {
    /// `input` (function 04, read-only) or `holding` (the command block).
    pub table: &'static str,
    /// Address, 0-based (the protocol address; add 1 for a 1-based
    /// register number).
    pub address: usize,
    /// Registers it takes (1 or 2).
    pub registers: u8,
    /// Block name.
    pub block: &'static str,
    /// Instance, 1 = first (stage, cooler after stage, monitor, channel);
    /// 0 for single blocks.
    pub instance: usize,
    /// Offset from the block's first address.
    pub offset: usize,
    /// Field key (for a stage block: of a compressor stage).
    pub key: &'static str,
    /// Human label.
    pub label: &'static str,
    /// SI unit (`-` dimensionless, empty for words without a unit).
    pub unit: &'static str,
    /// The field in the same place of a pump stage, where it differs.
    pub pump: Option<&'static FieldSpec>,
    /// Encoding.
    pub encoding: Encoding,
    /// Quality: register address and bit shift of its two-bit code.
    pub quality: Option<(usize, u8)>,
}

/// A status bit that is not a field of the list (derived by the packer).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DerivedBit {
    /// Block name.
    pub block: &'static str,
    /// Bit mask.
    pub mask: u16,
    /// Key.
    pub key: &'static str,
    /// Meaning.
    pub label: &'static str,
}

/// The derived status bits of every block, and the header summary bits.
pub const fn derived_bits() -> &'static [DerivedBit] {
    &[
        DerivedBit {
            block: "stage",
            mask: derived::STAGE_PUMP,
            key: "pump_stage",
            label: "the stage is a pump (its value slots follow the pump column)",
        },
        DerivedBit {
            block: "surge",
            mask: derived::SURGE_EVENT_UNACKNOWLEDGED,
            key: "surge_event_unacknowledged",
            label: "a surge event has not been acknowledged (command 1)",
        },
        DerivedBit {
            block: "surge",
            mask: derived::SURGE_INSIDE_CONTROL_LINE,
            key: "inside_control_line",
            label: "the operating point is inside the control line (clearance < 0, usable)",
        },
        DerivedBit {
            block: "channel",
            mask: derived::CHANNEL_SUBSTITUTED,
            key: "substituted",
            label: "the value is a held last good value",
        },
        DerivedBit {
            block: "header",
            mask: SUMMARY_TRIP_REQUEST,
            key: "any_trip_request",
            label: "a surge monitor requests a trip (advisory)",
        },
        DerivedBit {
            block: "header",
            mask: SUMMARY_EVENT_UNACKNOWLEDGED,
            key: "any_surge_event_unacknowledged",
            label: "a surge event is not acknowledged",
        },
        DerivedBit {
            block: "header",
            mask: SUMMARY_CHANNEL_BAD,
            key: "any_channel_bad",
            label: "a channel's quality is bad",
        },
    ]
}

struct HeaderRow {
    offset: usize,
    encoding: Encoding,
    key: &'static str,
    label: &'static str,
}

const HEADER_ROWS: &[HeaderRow] = &[
    HeaderRow {
        offset: header::LAYOUT_VERSION,
        encoding: Encoding::U16,
        key: "layout_version",
        label: "Layout version of this map",
    },
    HeaderRow {
        offset: header::WORD_ORDER,
        encoding: Encoding::U16,
        key: "word_order",
        label: "Order of 32-bit words: 0 high word first, 1 low word first",
    },
    HeaderRow {
        offset: header::IMAGE_REGISTERS,
        encoding: Encoding::U16,
        key: "image_registers",
        label: "Length of the image, registers",
    },
    HeaderRow {
        offset: header::STAGE_BLOCKS,
        encoding: Encoding::U16,
        key: "stage_blocks",
        label: "Stage blocks (also cooler and interstage blocks)",
    },
    HeaderRow {
        offset: header::SURGE_BLOCKS,
        encoding: Encoding::U16,
        key: "surge_blocks",
        label: "Surge-monitor blocks",
    },
    HeaderRow {
        offset: header::CHANNEL_BLOCKS,
        encoding: Encoding::U16,
        key: "channel_blocks",
        label: "Channel blocks",
    },
    HeaderRow {
        offset: header::CONFIG_CHECKSUM,
        encoding: Encoding::U32,
        key: "config_checksum",
        label: "CRC-32 of the configuration the gateway loaded",
    },
    HeaderRow {
        offset: header::MAP_CHECKSUM,
        encoding: Encoding::U32,
        key: "map_checksum",
        label: "Checksum of this map's layout (CRC-32 chained over version, block counts, keys and types of every block, scaled entries)",
    },
    HeaderRow {
        offset: header::HEARTBEAT,
        encoding: Encoding::U32,
        key: "heartbeat",
        label: "Images packed since start (wraps): changes every scan",
    },
    HeaderRow {
        offset: header::SCAN_COUNT,
        encoding: Encoding::U32,
        key: "scan_count",
        label: "Train scan counter of the results in the image (wraps)",
    },
    HeaderRow {
        offset: header::SUMMARY,
        encoding: Encoding::Status,
        key: "summary_status",
        label: "Worst quality of stage, cooler, interstage and totals blocks; summary bits",
    },
    HeaderRow {
        offset: header::COMMAND_SEQUENCE,
        encoding: Encoding::U16,
        key: "command_sequence",
        label: "Sequence number of the last command carried out",
    },
    HeaderRow {
        offset: header::COMMAND_CODE,
        encoding: Encoding::U16,
        key: "command_code",
        label: "Code of the last command carried out (0 none yet)",
    },
    HeaderRow {
        offset: header::RESERVED,
        encoding: Encoding::Reserved,
        key: "reserved",
        label: "Reserved (0)",
    },
];

/// The `s`-th value slot of a field list.
fn slot_field(fields: &'static [FieldSpec], s: usize) -> Option<&'static FieldSpec> {
    fields.iter().filter(|f| registers_of(f.kind) == 2).nth(s)
}

fn value_encoding(f: &FieldSpec) -> Encoding {
    match f.kind {
        QuantityKind::Count => Encoding::U32,
        _ => Encoding::F32,
    }
}

/// One part of a block: a field list from a value slot on (and the pump
/// list in the same place, for stages).
struct Part {
    fields: &'static [FieldSpec],
    pump: Option<&'static [FieldSpec]>,
    first_slot: usize,
    slots: usize,
}

#[allow(clippy::too_many_arguments)]
fn block_rows(
    visit: &mut dyn FnMut(&MapRow),
    block: &'static str,
    instance: usize,
    base: usize,
    slots: usize,
    parts: &[Part],
) {
    let head = block_head(slots);
    let row = |offset: usize,
               registers: u8,
               key: &'static str,
               label: &'static str,
               encoding: Encoding| MapRow {
        table: "input",
        address: base + offset,
        registers,
        block,
        instance,
        offset,
        key,
        label,
        unit: "",
        pump: None,
        encoding,
        quality: None,
    };
    visit(&row(0, 1, "status", "Status word", Encoding::Status));
    for q in 0..slots.div_ceil(8) {
        visit(&row(
            1 + q,
            1,
            "quality",
            "Quality codes of value slots 8q..8q+7",
            Encoding::Quality,
        ));
    }
    for r in 1 + slots.div_ceil(8)..head {
        visit(&row(r, 1, "reserved", "Reserved (0)", Encoding::Reserved));
    }
    for part in parts {
        for s in 0..part.slots {
            let slot = part.first_slot + s;
            let main = slot_field(part.fields, s);
            let pump = part.pump.and_then(|p| slot_field(p, s));
            let Some(f) = main.or(pump) else { continue };
            let mut r = row(head + 2 * slot, 2, f.key, f.label, value_encoding(f));
            r.unit = f.unit;
            r.quality = Some((base + 1 + slot / 8, (2 * (slot % 8)) as u8));
            r.pump = match (main, pump) {
                _ if part.pump.is_none() => None,
                (Some(m), Some(p)) if m.key == p.key => None,
                (Some(_), p) => p.or(Some(&NO_FIELD)),
                (None, _) => None,
            };
            if main.is_none() {
                // Only the pump uses this slot.
                r.key = "";
                r.label = "";
                r.unit = "";
                r.pump = pump;
            }
            visit(&r);
        }
    }
}

/// Placeholder for "no field in this place" (pump column).
static NO_FIELD: FieldSpec = FieldSpec {
    name: "",
    key: "",
    label: "(not used: quality 3)",
    unit: "",
    kind: QuantityKind::Fraction,
    derivation: Derivation::Exact,
    meaning: "",
};

fn scaled_rows(
    visit: &mut dyn FnMut(&MapRow),
    block: &'static str,
    instance: usize,
    at: &mut usize,
    list: &[Scaled],
    stage: bool,
) {
    for (i, e) in list.iter().enumerate() {
        let (registers, encoding) = if e.wide {
            (2, Encoding::I32 { scale: e.scale })
        } else {
            (1, Encoding::I16 { scale: e.scale })
        };
        let pump = if stage {
            match (scaled_stage_source(i, true), e.pump_key) {
                (None, _) => Some(&NO_FIELD),
                (Some(s), Some(_)) => slot_field(PUMP, s),
                (Some(_), None) => None,
            }
        } else {
            None
        };
        visit(&MapRow {
            table: "input",
            address: *at,
            registers,
            block: "scaled",
            instance,
            offset: 0,
            key: e.key,
            label: block,
            unit: e.raw_unit,
            pump,
            encoding,
            quality: None,
        });
        *at += usize::from(registers);
    }
}

/// Calls `visit` for every register of an image with `n` stages, `m` surge
/// monitors and `c` channels, in address order, then for the command block
/// (holding registers).
pub fn visit_map(n: usize, m: usize, c: usize, visit: &mut dyn FnMut(&MapRow)) {
    let l = Layout::new(n, m, c);
    for h in HEADER_ROWS {
        visit(&MapRow {
            table: "input",
            address: h.offset,
            registers: if h.encoding == Encoding::U32 { 2 } else { 1 },
            block: "header",
            instance: 0,
            offset: h.offset,
            key: h.key,
            label: h.label,
            unit: "",
            pump: None,
            encoding: h.encoding,
            quality: None,
        });
    }
    let stage_parts = [
        Part {
            fields: COMPRESSOR,
            pump: Some(PUMP),
            first_slot: 0,
            slots: STAGE_WORK_SLOTS,
        },
        Part {
            fields: STEADY,
            pump: None,
            first_slot: STAGE_WORK_SLOTS,
            slots: super::slots(STEADY),
        },
    ];
    let one = |fields: &'static [FieldSpec]| Part {
        fields,
        pump: None,
        first_slot: 0,
        slots: super::slots(fields),
    };
    for i in 0..n {
        let base = l.stages + i * block_len(super::STAGE_SLOTS);
        block_rows(
            visit,
            "stage",
            i + 1,
            base,
            super::STAGE_SLOTS,
            &stage_parts,
        );
    }
    for i in 0..n {
        let base = l.coolers + i * block_len(super::COOLER_SLOTS);
        block_rows(
            visit,
            "cooler",
            i + 1,
            base,
            super::COOLER_SLOTS,
            &[one(COOLER)],
        );
    }
    for i in 0..n {
        let base = l.interstage + i * block_len(super::INTERSTAGE_SLOTS);
        let parts = [one(INTERSTAGE)];
        block_rows(
            visit,
            "interstage",
            i + 1,
            base,
            super::INTERSTAGE_SLOTS,
            &parts,
        );
    }
    block_rows(
        visit,
        "totals",
        0,
        l.totals,
        super::TOTALS_SLOTS,
        &[one(TOTALS)],
    );
    block_rows(
        visit,
        "ledger",
        0,
        l.ledger,
        super::LEDGER_SLOTS,
        &[one(LEDGER)],
    );
    for i in 0..n {
        let base = l.ledger_stages + i * block_len(super::LEDGER_STAGE_SLOTS);
        block_rows(
            visit,
            "ledger_stage",
            i + 1,
            base,
            super::LEDGER_STAGE_SLOTS,
            &[one(LEDGER_STAGE)],
        );
    }
    let surge_parts = [
        one(SURGE),
        Part {
            fields: DETECTION,
            pump: None,
            first_slot: SURGE_STATE_SLOTS,
            slots: super::slots(DETECTION),
        },
    ];
    for i in 0..m {
        let base = l.surge + i * block_len(super::SURGE_SLOTS);
        block_rows(
            visit,
            "surge",
            i + 1,
            base,
            super::SURGE_SLOTS,
            &surge_parts,
        );
    }
    for i in 0..c {
        let base = l.channels + i * block_len(super::CHANNEL_SLOTS);
        let parts = [one(CHANNEL_FIELDS)];
        block_rows(visit, "channel", i + 1, base, super::CHANNEL_SLOTS, &parts);
    }
    let mut at = l.scaled;
    for i in 0..n {
        scaled_rows(visit, "stage", i + 1, &mut at, SCALED_STAGE, true);
    }
    scaled_rows(visit, "totals", 0, &mut at, SCALED_TOTALS, false);
    for i in 0..m {
        scaled_rows(visit, "surge", i + 1, &mut at, SCALED_SURGE, false);
    }
    for i in 0..c {
        scaled_rows(visit, "channel", i + 1, &mut at, SCALED_CHANNEL, false);
    }
    if at < l.trailer {
        visit(&MapRow {
            table: "input",
            address: at,
            registers: 1,
            block: "scaled",
            instance: 0,
            offset: 0,
            key: "reserved",
            label: "Reserved (0)",
            unit: "",
            pump: None,
            encoding: Encoding::Reserved,
            quality: None,
        });
    }
    visit(&MapRow {
        table: "input",
        address: l.trailer,
        registers: 2,
        block: "trailer",
        instance: 0,
        offset: 0,
        key: "scan_count",
        label: "Scan counter again: equal to the header's when a multi-read image is consistent",
        unit: "",
        pump: None,
        encoding: Encoding::U32,
        quality: None,
    });
    let commands: [(usize, &str, &str); COMMAND_REGISTERS] = [
        (command::CODE, "command_code", "Command code (see below)"),
        (
            command::TARGET,
            "command_target",
            "Surge monitor, 0 = first",
        ),
        (
            command::GUARD,
            "command_guard",
            "Bitwise complement of the command code",
        ),
        (
            command::SEQUENCE,
            "command_sequence",
            "Sequence number, echoed in the header",
        ),
    ];
    for (offset, key, label) in commands {
        visit(&MapRow {
            table: "holding",
            address: offset,
            registers: 1,
            block: "command",
            instance: 0,
            offset,
            key,
            label,
            unit: "",
            pump: None,
            encoding: Encoding::U16,
            quality: None,
        });
    }
}

/// Checksum of the map of an image with `n` stages, `m` surge monitors and
/// `c` channels: CRC-32 chained over the layout version, the block counts,
/// every block's field keys and kinds in order and the scaled entries
/// ([`super::crc32`]), so it changes whenever an address or a type moves. Evaluated at compile time
/// ([`super::RegisterImage::MAP_CHECKSUM`]).
pub const fn map_checksum(n: usize, m: usize, c: usize) -> u32 {
    let mut h = crc32_chain(0, super::LAYOUT_VERSION as u32, 0);
    let mut counts: &[usize] = &[n, m, c];
    while let [x, tail @ ..] = counts {
        h = crc32_chain(h, *x as u32, 1);
        counts = tail;
    }
    let lists: [&[FieldSpec]; 11] = [
        COMPRESSOR,
        PUMP,
        STEADY,
        COOLER,
        INTERSTAGE,
        TOTALS,
        LEDGER,
        LEDGER_STAGE,
        SURGE,
        DETECTION,
        CHANNEL_FIELDS,
    ];
    let mut ls: &[&[FieldSpec]] = &lists;
    while let [list, tail @ ..] = ls {
        let mut fs: &[FieldSpec] = list;
        while let [f, rest @ ..] = fs {
            h = crc32_chain(h, crc32(f.key.as_bytes()), f.kind as u8);
            fs = rest;
        }
        ls = tail;
    }
    let scaled: [&[Scaled]; 4] = [SCALED_STAGE, SCALED_TOTALS, SCALED_SURGE, SCALED_CHANNEL];
    let mut ss: &[&[Scaled]] = &scaled;
    while let [list, tail @ ..] = ss {
        let mut es: &[Scaled] = list;
        while let [e, rest @ ..] = es {
            h = crc32_chain(h, crc32(e.key.as_bytes()), e.wide as u8);
            es = rest;
        }
        ss = tail;
    }
    h
}

fn quality_text(r: &MapRow) -> Option<(usize, u8)> {
    r.quality
}

fn cell(s: &str) -> &str {
    if s.is_empty() {
        "–"
    } else {
        s
    }
}

fn encoding_text(w: &mut dyn Write, e: Encoding) -> fmt::Result {
    match e {
        Encoding::I16 { scale } | Encoding::I32 { scale } => write!(w, "{} ×{}", e.as_str(), scale),
        _ => w.write_str(e.as_str()),
    }
}

/// The status-word code of a stage condition (stable: a new condition
/// gets the next code; the match fails to compile until it has one).
pub const fn stage_condition_code(c: StageCondition) -> u8 {
    match c {
        StageCondition::Normal => 0,
        StageCondition::InputBad => 1,
        StageCondition::NoCompression => 2,
        StageCondition::NoTemperatureRise => 3,
        StageCondition::EfficiencyAboveOne => 4,
        StageCondition::RatingPoint => 5,
        StageCondition::RatioOutOfRange => 6,
        StageCondition::ImplausibleTemperatureRise => 7,
        StageCondition::Stationary => 8,
        StageCondition::BelowResolution => 9,
        StageCondition::OutsideGasModel => 10,
    }
}

/// The status-word code of a pump condition (stable, as above).
pub const fn pump_condition_code(c: PumpCondition) -> u8 {
    match c {
        PumpCondition::Normal => 0,
        PumpCondition::InputBad => 1,
        PumpCondition::NoPressureRise => 2,
        PumpCondition::RatioOutOfRange => 3,
        PumpCondition::Stationary => 4,
    }
}

/// The status-word code of a cooler condition (stable, as above).
pub const fn cooler_condition_code(c: CoolerCondition) -> u8 {
    match c {
        CoolerCondition::Normal => 0,
        CoolerCondition::InputBad => 1,
        CoolerCondition::OutletAboveInlet => 2,
        CoolerCondition::OutletBelowCoolant => 3,
        CoolerCondition::NoDrivingDifference => 4,
        CoolerCondition::DutyWithinNoise => 5,
        CoolerCondition::NoGasFlow => 6,
    }
}

/// The status-word code of a surge-margin fault (stable, as above).
pub const fn surge_fault_code(f: SurgeFault) -> u8 {
    match f {
        SurgeFault::None => 0,
        SurgeFault::InputBad => 1,
        SurgeFault::InputUncertain => 2,
        SurgeFault::FlowDpImpossible => 3,
        SurgeFault::FlowDpOutsideValidity => 4,
        SurgeFault::DischargeBelowSuction => 5,
        SurgeFault::BeyondMap => 6,
        SurgeFault::Exponent => 7,
    }
}
const SURGE_FAULTS: [SurgeFault; 8] = [
    SurgeFault::None,
    SurgeFault::InputBad,
    SurgeFault::InputUncertain,
    SurgeFault::FlowDpImpossible,
    SurgeFault::FlowDpOutsideValidity,
    SurgeFault::DischargeBelowSuction,
    SurgeFault::BeyondMap,
    SurgeFault::Exponent,
];

const STAGE_CONDITIONS: [StageCondition; 11] = [
    StageCondition::Normal,
    StageCondition::InputBad,
    StageCondition::NoCompression,
    StageCondition::NoTemperatureRise,
    StageCondition::EfficiencyAboveOne,
    StageCondition::RatingPoint,
    StageCondition::RatioOutOfRange,
    StageCondition::ImplausibleTemperatureRise,
    StageCondition::Stationary,
    StageCondition::BelowResolution,
    StageCondition::OutsideGasModel,
];
const PUMP_CONDITIONS: [PumpCondition; 5] = [
    PumpCondition::Normal,
    PumpCondition::InputBad,
    PumpCondition::NoPressureRise,
    PumpCondition::RatioOutOfRange,
    PumpCondition::Stationary,
];
const COOLER_CONDITIONS: [CoolerCondition; 7] = [
    CoolerCondition::Normal,
    CoolerCondition::InputBad,
    CoolerCondition::OutletAboveInlet,
    CoolerCondition::OutletBelowCoolant,
    CoolerCondition::NoDrivingDifference,
    CoolerCondition::DutyWithinNoise,
    CoolerCondition::NoGasFlow,
];

const FAULTS: [FaultCode; 15] = [
    FaultCode::None,
    FaultCode::Ne43FailureLow,
    FaultCode::Ne43FailureHigh,
    FaultCode::Ne43SaturatedLow,
    FaultCode::Ne43SaturatedHigh,
    FaultCode::SignalOutOfRange,
    FaultCode::NotFinite,
    FaultCode::TimeNotAdvancing,
    FaultCode::OutOfRange,
    FaultCode::Spike,
    FaultCode::Frozen,
    FaultCode::CrossCheck,
    FaultCode::ZeroOffset,
    FaultCode::InputBad,
    FaultCode::ClockStep,
];

/// The state codes of the status words, as (block, code, name).
pub fn state_codes(visit: &mut dyn FnMut(&'static str, u8, &'static str)) {
    for c in STAGE_CONDITIONS {
        visit("stage (compressor)", stage_condition_code(c), c.as_str());
    }
    for c in PUMP_CONDITIONS {
        visit("stage (pump)", pump_condition_code(c), c.as_str());
    }
    for c in COOLER_CONDITIONS {
        visit("cooler", cooler_condition_code(c), c.as_str());
    }
    for f in SURGE_FAULTS {
        visit("surge", surge_fault_code(f), f.as_str());
    }
    for f in FAULTS {
        visit("channel", f.code(), f.as_str());
    }
}

/// The yes/no fields of a block's lists, with their status bits.
fn flag_bits(block: &str) -> impl Iterator<Item = (u16, &'static FieldSpec)> {
    let lists: &[&'static [FieldSpec]] = match block {
        "stage" => &[COMPRESSOR, STEADY],
        "cooler" => &[COOLER],
        "surge" => &[SURGE, DETECTION],
        _ => &[],
    };
    // Compressor and pump lists hold no flags; steady state does.
    lists
        .iter()
        .flat_map(|l| l.iter())
        .filter(|f| f.kind == QuantityKind::Flag)
        .enumerate()
        .map(|(i, f)| (STATUS_FIRST_FLAG + i as u16, f))
}

/// Writes the register map of an image with `n` stages, `m` surge monitors
/// and `c` channels as Markdown.
pub fn write_map_markdown(w: &mut dyn Write, n: usize, m: usize, c: usize) -> fmt::Result {
    let l = Layout::new(n, m, c);
    writeln!(
        w,
        "<!-- generated by `polytrope-host register-map`; a test keeps it identical -->"
    )?;
    writeln!(
        w,
        "# Register map (layout version {})\n",
        super::LAYOUT_VERSION
    )?;
    writeln!(
        w,
        "For an image of {n} stages, {m} surge monitor(s) and {c} channel(s): {} input registers \
         (function 04, read-only), 0-based addresses (add 1 for 1-based register numbers), \
         and a {COMMAND_REGISTERS}-register command block in the holding registers. \
         32-bit values take two registers in the word order the header states (register 1). \
         The same map as CSV: `register-map.csv`.\n",
        l.len
    )?;
    writeln!(
        w,
        "**Caution.** Advisory values and an advisory trip request: not a certified safety \
         function (IEC 61508 / IEC 61511). Defer to the machine maker's data, local codes and \
         licensed practice.\n"
    )?;
    writeln!(w, "## Blocks\n")?;
    writeln!(w, "| block | instances | first address | registers each |")?;
    writeln!(w, "|---|---:|---:|---:|")?;
    let blocks = [
        ("header", 1, 0, super::HEADER_LEN),
        ("stage", n, l.stages, block_len(super::STAGE_SLOTS)),
        (
            "cooler (after stage i)",
            n,
            l.coolers,
            block_len(super::COOLER_SLOTS),
        ),
        (
            "interstage (after stage i)",
            n,
            l.interstage,
            block_len(super::INTERSTAGE_SLOTS),
        ),
        ("totals", 1, l.totals, block_len(super::TOTALS_SLOTS)),
        ("ledger", 1, l.ledger, block_len(super::LEDGER_SLOTS)),
        (
            "ledger_stage (stage i)",
            n,
            l.ledger_stages,
            block_len(super::LEDGER_STAGE_SLOTS),
        ),
        ("surge", m, l.surge, block_len(super::SURGE_SLOTS)),
        ("channel", c, l.channels, block_len(super::CHANNEL_SLOTS)),
        ("scaled", 1, l.scaled, l.trailer - l.scaled),
        ("trailer", 1, l.trailer, super::TRAILER_LEN),
    ];
    for (name, count, first, len) in blocks {
        writeln!(w, "| {name} | {count} | {first} | {len} |")?;
    }
    writeln!(
        w,
        "\nInstance i of a block starts at first address + (i - 1) × registers each.\n"
    )?;
    writeln!(w, "## Header\n")?;
    writeln!(w, "| address | registers | type | key | meaning |")?;
    writeln!(w, "|---:|---:|---|---|---|")?;
    let mut err = Ok(());
    visit_map(n, m, c, &mut |r| {
        if r.block == "header" && err.is_ok() {
            err = writeln!(
                w,
                "| {} | {} | {} | `{}` | {} |",
                r.address,
                r.registers,
                r.encoding.as_str(),
                r.key,
                r.label
            );
        }
    });
    err?;
    for (block, title) in [
        ("stage", "Stage block"),
        ("cooler", "Cooler block"),
        ("interstage", "Interstage block"),
        ("totals", "Totals block"),
        (
            "ledger",
            "Loss-ledger block (W; not in use until the gateway packs a ledger)",
        ),
        (
            "ledger_stage",
            "Loss-ledger stage block (per compressor stage, W)",
        ),
        ("surge", "Surge block"),
        ("channel", "Channel block"),
    ] {
        writeln!(w, "\n## {title} (offsets from the block's first address)\n")?;
        if block == "stage" {
            writeln!(w, "| offset | registers | type | key (compressor stage) | unit | key (pump stage) | unit | quality (word, bits) |")?;
            writeln!(w, "|---:|---:|---|---|---|---|---|---|")?;
        } else {
            writeln!(
                w,
                "| offset | registers | type | key | unit | meaning | quality (word, bits) |"
            )?;
            writeln!(w, "|---:|---:|---|---|---|---|---|")?;
        }
        let mut err = Ok(());
        let first = if block == "totals" || block == "ledger" {
            0
        } else {
            1
        };
        visit_map(n.max(1), m.max(1), c.max(1), &mut |r| {
            if r.block != block || r.instance != first || err.is_err() {
                return;
            }
            let q = quality_text(r).map(|(a, s)| (a - (r.address - r.offset), s));
            let qt = |w: &mut dyn Write| match q {
                Some((word, shift)) => write!(w, "{word}, {}–{}", shift, shift + 1),
                None => w.write_str("–"),
            };
            err = (|| {
                write!(w, "| {} | {} | ", r.offset, r.registers)?;
                encoding_text(w, r.encoding)?;
                if block == "stage" {
                    let (pk, pu) = match r.pump {
                        None if r.quality.is_some() => ("same", ""),
                        None => ("", ""),
                        Some(p) if p.key.is_empty() => ("(not used)", ""),
                        Some(p) => (p.key, p.unit),
                    };
                    let key = if r.key.is_empty() {
                        "(not used)"
                    } else {
                        r.key
                    };
                    write!(
                        w,
                        " | {} | {} | {} | {} | ",
                        code_or(key),
                        cell(r.unit),
                        code_or(pk),
                        cell(pu)
                    )?;
                } else {
                    write!(w, " | `{}` | {} | {} | ", r.key, cell(r.unit), r.label)?;
                }
                qt(w)?;
                writeln!(w, " |")
            })();
        });
        err?;
    }
    writeln!(w, "\n## Scaled block\n")?;
    writeln!(
        w,
        "Integers for controllers without floating point: raw = round(value × scale), saturated; \
         {SCALED_NO_VALUE_I16} (int16) or {SCALED_NO_VALUE_I32} (int32) when the source value is bad. \
         Each carries the quality of its source slot.\n"
    )?;
    writeln!(
        w,
        "| address | registers | type | block | instance | source key | pump stage | one count |"
    )?;
    writeln!(w, "|---:|---:|---|---|---:|---|---|---|")?;
    let mut err = Ok(());
    visit_map(n, m, c, &mut |r| {
        if r.block != "scaled" || err.is_err() {
            return;
        }
        err = (|| {
            write!(w, "| {} | {} | ", r.address, r.registers)?;
            encoding_text(w, r.encoding)?;
            let pump = match r.pump {
                None => "same",
                Some(p) if p.key.is_empty() => "(no value)",
                Some(p) => p.key,
            };
            let pump = if r.label == "stage" { pump } else { "" };
            writeln!(
                w,
                " | {} | {} | `{}` | {} | {} |",
                cell(r.label),
                r.instance,
                r.key,
                cell(pump),
                cell(r.unit)
            )
        })();
    });
    err?;
    writeln!(w, "\n## Trailer\n")?;
    writeln!(
        w,
        "| address | registers | type | key | meaning |\n|---:|---:|---|---|---|\n| {} | 2 | uint32 | `scan_count` | Scan counter again: a reader that reads the image in several requests and finds the header's and the trailer's counter equal has read one scan's image |",
        l.trailer
    )?;
    writeln!(w, "\n## Status words\n")?;
    writeln!(
        w,
        "Every block's first register. Bits 0–1: worst quality of the block's values \
         ({} good, {} uncertain, {} bad, {} not applicable); bit 2: block in use; bits {}–{}: \
         state code; bits 8 up: the block's yes/no fields; bits 15 down: derived marks. \
         Quality words hold the same two-bit codes, value slot k in word k / 8, bits 2(k mod 8).\n",
        quality_code::GOOD,
        quality_code::UNCERTAIN,
        quality_code::BAD,
        quality_code::NOT_APPLICABLE,
        STATUS_CODE_SHIFT,
        STATUS_CODE_SHIFT + 3
    )?;
    writeln!(w, "| block | bit | key | meaning |")?;
    writeln!(w, "|---|---:|---|---|")?;
    for block in ["stage", "cooler", "surge"] {
        for (bit, f) in flag_bits(block) {
            writeln!(w, "| {block} | {bit} | `{}` | {} |", f.key, f.label)?;
        }
    }
    for d in derived_bits() {
        writeln!(
            w,
            "| {} | {} | `{}` | {} |",
            d.block,
            d.mask.trailing_zeros(),
            d.key,
            d.label
        )?;
    }
    writeln!(w, "\n## State codes (status bits 4–7)\n")?;
    writeln!(w, "| block | code | state |")?;
    writeln!(w, "|---|---:|---|")?;
    let mut err = Ok(());
    state_codes(&mut |block, code, name| {
        if err.is_ok() {
            err = writeln!(w, "| {block} | {code} | `{name}` |");
        }
    });
    err?;
    writeln!(w, "\n## Command block (holding registers)\n")?;
    writeln!(
        w,
        "Written as one request (function 16) of all {COMMAND_REGISTERS} registers starting at 0; \
         anything else is refused with a Modbus exception and changes nothing. The header's \
         `command_sequence` and `command_code` show the last command carried out.\n"
    )?;
    writeln!(w, "| address | key | meaning |")?;
    writeln!(w, "|---:|---|---|")?;
    let mut err = Ok(());
    visit_map(n, m, c, &mut |r| {
        if r.table == "holding" && err.is_ok() {
            err = writeln!(w, "| {} | `{}` | {} |", r.address, r.key, r.label);
        }
    });
    err?;
    writeln!(w, "\n| code | command |")?;
    writeln!(w, "|---:|---|")?;
    for k in CommandKind::ALL {
        writeln!(w, "| {} | `{}` |", k.code(), k.as_str())?;
    }
    Ok(())
}

fn code_or(s: &str) -> CodeCell<'_> {
    CodeCell(s)
}

struct CodeCell<'a>(&'a str);
impl fmt::Display for CodeCell<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.0 {
            "" => f.write_str("–"),
            "same" | "(not used)" => f.write_str(self.0),
            k => write!(f, "`{k}`"),
        }
    }
}

/// Writes every register of the map as CSV (one row per register or
/// register pair, absolute addresses), for import into a PLC tool.
pub fn write_map_csv(w: &mut dyn Write, n: usize, m: usize, c: usize) -> fmt::Result {
    writeln!(
        w,
        "table,address,registers,type,scale,block,instance,key,label,unit,pump_key,pump_unit,quality_address,quality_shift"
    )?;
    let mut err = Ok(());
    visit_map(n, m, c, &mut |r| {
        if err.is_err() {
            return;
        }
        let scale = match r.encoding {
            Encoding::I16 { scale } | Encoding::I32 { scale } => Some(scale),
            _ => None,
        };
        let (pk, pu) = match r.pump {
            Some(p) if p.key.is_empty() => ("(none)", ""),
            Some(p) => (p.key, p.unit),
            None => ("", ""),
        };
        err = (|| {
            write!(
                w,
                "{},{},{},{},",
                r.table,
                r.address,
                r.registers,
                r.encoding.as_str()
            )?;
            if let Some(s) = scale {
                write!(w, "{s}")?;
            }
            write!(
                w,
                ",{},{},{},\"{}\",{},{},{},",
                r.block, r.instance, r.key, r.label, r.unit, pk, pu
            )?;
            match r.quality {
                Some((a, s)) => writeln!(w, "{a},{s}"),
                None => writeln!(w, ","),
            }
        })();
    });
    err
}
