//! Gas property tables: a reference equation of state (GERG-2008) evaluated
//! once on the host over a train's operating envelope, interpolated on the
//! device.
//!
//! Sources:
//! - GERG-2008: O. Kunz, W. Wagner, "The GERG-2008 wide-range equation of
//!   state for natural gases and other mixtures", J. Chem. Eng. Data 57
//!   (2012) 3032–3091; ISO 20765-2. The host generator
//!   (`polytrope-host tables`) evaluates it with the `aga8` crate.
//! - Bicubic Hermite interpolation on a rectangle from corner values, first
//!   derivatives and the cross derivative (the tensor product of cubic
//!   Hermite polynomials; e.g. C. de Boor, *A Practical Guide to Splines*,
//!   1978, ch. XVII; stated here from memory).
//! - Thermodynamic identities, with x = ln p and T (any thermodynamics text,
//!   e.g. Çengel & Boles, *Thermodynamics*, ch. 12): the Maxwell relation
//!   (∂s/∂p)_T = −(∂v/∂T)_p with v = Z·R·T/p gives ∂s/∂x = −R·(Z + T·∂Z/∂T);
//!   dh = T ds + v dp gives ∂h/∂x = T·∂s/∂x + Z·R·T = −R·T²·∂Z/∂T;
//!   ∂h/∂T = cp and ∂s/∂T = cp/T; the cross derivatives follow as
//!   ∂²h/∂x∂T = ∂cp/∂x and ∂²s/∂x∂T = (∂cp/∂x)/T.
//!
//! So a node stores only Z, ∂Z/∂x, ∂Z/∂T, ∂²Z/∂x∂T, h, s, cp, ∂cp/∂x (and
//! the speed of sound, interpolated bilinearly): 9 `f32` instead of 13, and
//! h and s stay exactly consistent with Z through the identities.
//!
//! The table is a tree over the rectangle [ln p_min, ln p_max] ×
//! [T_min, T_max]: every cell is either split in half in ln p, in T or in
//! both (two or four children), or a leaf patch with four corner nodes. The host refines where the
//! interpolation misses its tolerance against the equation of state; cells
//! it cannot make accurate (the band around a critical point or a saturation
//! line) are flagged uncertain, cells without a single-phase state bad.
//! Inputs are stored as offsets (T − T_offset, h − h_offset, s − s_offset) so
//! `f32` keeps its resolution.
//!
//! Outside the envelope a state is bad ([`TableFlag::OutsideEnvelope`]); in a
//! flagged cell it is uncertain or bad with the reason. Nothing here
//! allocates or panics; the descent and every iteration are bounded.

use serde::{Deserialize, Serialize};

use crate::blob::{self, BlobError, KIND_PROPERTY_TABLE};
use crate::error::{ConfigError, Problem};
use crate::gas::MOLAR_GAS_CONSTANT;
use crate::quality::{Measured, Quality};
use crate::real::Real;

/// Format version of the table payload (bump on any layout change).
pub const TABLE_FORMAT_VERSION: u16 = 1;
/// Most splits the evaluator descends through (a bound, so a corrupt tree
/// cannot loop; children always follow their parent anyway).
pub const MAX_DEPTH: usize = 40;
/// Cell flag: the interpolation is not trusted to its tolerance here (near a
/// critical point or a saturation line).
pub const CELL_UNCERTAIN: u8 = 1;
/// Cell flag: no usable state here (two-phase, or the equation of state's
/// solver found no root; e.g. at a critical point)
/// equation of state).
pub const CELL_BAD: u8 = 2;
/// Cell flag of a split cell: split at the middle of its ln p range.
pub const SPLIT_LN_P: u8 = 4;
/// Cell flag of a split cell: split at the middle of its temperature range.
pub const SPLIT_T: u8 = 8;
/// Midpoint refinements of the polytropic path (see
/// [`TableGas::stage`]).
pub const POLYTROPIC_ITERATIONS: usize = 3;
/// Iteration cap of the isentropic (entropy-matched) temperature search.
pub const ISENTROPIC_MAX_ITERATIONS: usize = 12;

/// What the whole table describes.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TableHeader {
    /// Short ASCII label, zero-padded (what gas and envelope).
    pub label: [u8; 16],
    /// Mole fractions the table was made for, in the GERG-2008 component
    /// order (methane, nitrogen, carbon dioxide, ethane, propane, isobutane,
    /// n-butane, isopentane, n-pentane, hexane, heptane, octane, nonane,
    /// decane, hydrogen, oxygen, carbon monoxide, water, hydrogen sulfide,
    /// helium, argon).
    pub mole_fractions: [f64; 21],
    /// Molar mass, kg/mol.
    pub molar_mass: f64,
    /// Lowest pressure of the envelope, ln(p / Pa).
    pub ln_p_min: f64,
    /// Highest pressure of the envelope, ln(p / Pa).
    pub ln_p_max: f64,
    /// Lowest temperature of the envelope, K.
    pub t_min: f64,
    /// Highest temperature of the envelope, K.
    pub t_max: f64,
    /// Offset subtracted from every stored enthalpy, J/kg.
    pub h_offset: f64,
    /// Offset subtracted from every stored entropy, J/(kg K).
    pub s_offset: f64,
    /// Largest enthalpy interpolation error the generator accepted outside
    /// flagged cells, J/kg.
    pub tolerance_h: f32,
    /// Largest entropy interpolation error accepted, J/(kg K).
    pub tolerance_s: f32,
    /// Largest relative Z interpolation error accepted.
    pub tolerance_z: f32,
    /// The tree's lattice: every cell edge lies on a multiple of
    /// 2^−lattice_bits of the envelope's span in each variable (1 to 16).
    pub lattice_bits: u8,
    /// Number of nodes.
    pub node_count: u16,
    /// Number of cells.
    pub cell_count: u16,
}

/// The equation of state at one grid node (x = ln p, T in K, per kg).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Node {
    /// Compressibility factor Z.
    pub z: f32,
    /// ∂Z/∂ln p at constant T.
    pub z_lnp: f32,
    /// ∂Z/∂T at constant p, 1/K.
    pub z_t: f32,
    /// ∂²Z/∂ln p ∂T, 1/K.
    pub z_lnp_t: f32,
    /// Enthalpy minus the header's offset, J/kg.
    pub h: f32,
    /// Entropy minus the header's offset, J/(kg K).
    pub s: f32,
    /// Isobaric heat capacity, J/(kg K).
    pub cp: f32,
    /// ∂cp/∂ln p at constant T, J/(kg K).
    pub cp_lnp: f32,
    /// Speed of sound, m/s.
    pub speed_of_sound: f32,
}

/// One cell of the tree.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Cell {
    /// Corner node indices of a leaf: (low ln p, low T), (high ln p, low T),
    /// (low ln p, high T), (high ln p, high T). In a split cell, `corners[0]`
    /// and `corners[1]` hold the lattice bit that selects the child along
    /// ln p and along T (the cell's level counted from the finest lattice,
    /// so the descent needs no counters); the rest are 0.
    pub corners: [u16; 4],
    /// Index of the first child, always above the cell's own index; 0 for a
    /// leaf. Two children (low, high half) for a split in one variable, four
    /// for a split in both (same order as the corners).
    pub children: u16,
    /// Leaf: [`CELL_UNCERTAIN`] and/or [`CELL_BAD`]; split cell:
    /// [`SPLIT_LN_P`] and/or [`SPLIT_T`].
    pub flags: u8,
}

/// A table's content, borrowed: from a `static` generated as Rust source, or
/// from a [`PropertyTable`] decoded from a blob.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TableData<'a> {
    /// What the table describes.
    pub header: TableHeader,
    /// Grid nodes.
    pub nodes: &'a [Node],
    /// Quadtree cells; cell 0 is the root (the whole envelope).
    pub cells: &'a [Cell],
}

fn finite(x: f64) -> bool {
    <f64 as Real>::is_finite(x)
}

fn check_header(h: &TableHeader) -> Result<(), ConfigError> {
    let mut sum = 0.0;
    for (i, &x) in h.mole_fractions.iter().enumerate() {
        if !finite(x) {
            return Err(ConfigError::not_finite("table_mole_fractions").at(i));
        }
        if !(0.0..=1.0).contains(&x) {
            return Err(ConfigError::out_of_range("table_mole_fractions", 0.0, 1.0).at(i));
        }
        sum += x;
    }
    if !(sum > 0.999_999 && sum < 1.000_001) {
        return Err(ConfigError::new(
            "table_mole_fractions",
            Problem::OutOfRange {
                min: 0.999_999,
                max: 1.000_001,
            },
        ));
    }
    let molar_mass = h.molar_mass;
    if !finite(molar_mass) {
        return Err(ConfigError::not_finite("table.molar_mass"));
    }
    if !(0.001..=0.5).contains(&molar_mass) {
        return Err(ConfigError::out_of_range("table.molar_mass", 0.001, 0.5));
    }
    // 1 Pa .. 1e9 Pa.
    for (field, v) in [
        ("table.ln_p_min", h.ln_p_min),
        ("table.ln_p_max", h.ln_p_max),
    ] {
        if !finite(v) {
            return Err(ConfigError::not_finite(field));
        }
        if !(0.0..=20.8).contains(&v) {
            return Err(ConfigError::out_of_range(field, 0.0, 20.8));
        }
    }
    if !(h.ln_p_max > h.ln_p_min) {
        return Err(ConfigError::new(
            "table.ln_p_max",
            Problem::NotAbove {
                other: "table.ln_p_min",
            },
        ));
    }
    for (field, v) in [("table.t_min", h.t_min), ("table.t_max", h.t_max)] {
        if !finite(v) {
            return Err(ConfigError::not_finite(field));
        }
        if !(1.0..=2000.0).contains(&v) {
            return Err(ConfigError::out_of_range(field, 1.0, 2000.0));
        }
    }
    if !(h.t_max > h.t_min) {
        return Err(ConfigError::new(
            "table.t_max",
            Problem::NotAbove {
                other: "table.t_min",
            },
        ));
    }
    for (field, v) in [
        ("table.h_offset", h.h_offset),
        ("table.s_offset", h.s_offset),
    ] {
        if !finite(v) {
            return Err(ConfigError::not_finite(field));
        }
    }
    for (field, v) in [
        ("table.tolerance_h", h.tolerance_h),
        ("table.tolerance_s", h.tolerance_s),
        ("table.tolerance_z", h.tolerance_z),
    ] {
        if !<f32 as Real>::is_finite(v) {
            return Err(ConfigError::not_finite(field));
        }
        if !(v >= 0.0) {
            return Err(ConfigError::out_of_range(field, 0.0, f64::INFINITY));
        }
    }
    if !(1..=16).contains(&h.lattice_bits) {
        return Err(ConfigError::out_of_range("table.lattice_bits", 1.0, 16.0));
    }
    if h.node_count < 4 {
        return Err(ConfigError::new(
            "table_nodes",
            Problem::Count {
                min: 4,
                max: u16::MAX,
            },
        ));
    }
    if h.cell_count < 1 {
        return Err(ConfigError::new(
            "table_cells",
            Problem::Count {
                min: 1,
                max: u16::MAX,
            },
        ));
    }
    Ok(())
}

fn check_node(index: usize, n: &Node) -> Result<(), ConfigError> {
    let all = [
        n.z,
        n.z_lnp,
        n.z_t,
        n.z_lnp_t,
        n.h,
        n.s,
        n.cp,
        n.cp_lnp,
        n.speed_of_sound,
    ];
    if !all.iter().all(|v| <f32 as Real>::is_finite(*v)) {
        return Err(ConfigError::not_finite("table_nodes").at(index));
    }
    // Positive Z, cp and speed of sound: also true of flagged nodes (the
    // generator writes a finite placeholder state there).
    if !(n.z > 0.0 && n.cp > 0.0 && n.speed_of_sound > 0.0) {
        return Err(ConfigError::out_of_range("table_nodes", 0.0, f64::INFINITY).at(index));
    }
    Ok(())
}

fn child_count(flags: u8) -> usize {
    let split = flags & (SPLIT_LN_P | SPLIT_T);
    if split == 0 {
        0
    } else if split == SPLIT_LN_P | SPLIT_T {
        4
    } else {
        2
    }
}

fn check_cell(
    index: usize,
    c: &Cell,
    nodes: usize,
    cells: usize,
    lattice_bits: u8,
) -> Result<(), ConfigError> {
    let allowed = if c.children == 0 {
        CELL_UNCERTAIN | CELL_BAD
    } else {
        SPLIT_LN_P | SPLIT_T
    };
    if c.flags & !allowed != 0 || (c.children != 0 && child_count(c.flags) == 0) {
        return Err(ConfigError::new("table_cells.flags", Problem::Unknown).at(index));
    }
    if c.children == 0 {
        if c.corners.iter().any(|&k| usize::from(k) >= nodes) {
            return Err(ConfigError::new(
                "table_cells.corners",
                Problem::Inconsistent {
                    with: "table_nodes",
                },
            )
            .at(index));
        }
    } else {
        let bits = u16::from(lattice_bits);
        let [bit_x, bit_t, ..] = c.corners;
        if (c.flags & SPLIT_LN_P != 0 && bit_x >= bits) || (c.flags & SPLIT_T != 0 && bit_t >= bits)
        {
            return Err(ConfigError::new(
                "table_cells.corners",
                Problem::Inconsistent {
                    with: "table.lattice_bits",
                },
            )
            .at(index));
        }
        let first = usize::from(c.children);
        if first <= index || first + child_count(c.flags) > cells {
            return Err(ConfigError::new(
                "table_cells.children",
                Problem::Inconsistent {
                    with: "table_cells",
                },
            )
            .at(index));
        }
    }
    Ok(())
}

/// Checks a table's structure and values: header ranges, counts, finite and
/// positive node values, corner and child indices in range (children always
/// after their parent, so every descent ends).
pub fn validate(data: &TableData<'_>) -> Result<(), ConfigError> {
    check_header(&data.header)?;
    let (nodes, cells) = (data.nodes.len(), data.cells.len());
    if nodes != usize::from(data.header.node_count) {
        return Err(ConfigError::new(
            "table_nodes",
            Problem::Inconsistent {
                with: "table.node_count",
            },
        ));
    }
    if cells != usize::from(data.header.cell_count) {
        return Err(ConfigError::new(
            "table_cells",
            Problem::Inconsistent {
                with: "table.cell_count",
            },
        ));
    }
    for (i, n) in data.nodes.iter().enumerate() {
        check_node(i, n)?;
    }
    for (i, c) in data.cells.iter().enumerate() {
        check_cell(i, c, nodes, cells, data.header.lattice_bits)?;
    }
    Ok(())
}

/// Writes a table as a blob (framing in [`crate::blob`]); returns its length.
/// Used by the host generator and the tests; allocates nothing.
pub fn write_blob(data: &TableData<'_>, out: &mut [u8]) -> Result<usize, BlobError> {
    validate(data).map_err(BlobError::Invalid)?;
    let area = blob::payload_area(out);
    let used = postcard::to_slice(&(&data.header, data.nodes, data.cells), area)
        .map_err(|_| BlobError::BufferTooSmall)?
        .len();
    blob::seal(out, KIND_PROPERTY_TABLE, TABLE_FORMAT_VERSION, used)
}

/// A table decoded from a blob into fixed capacity: at most `NODES` nodes
/// and `CELLS` cells (both checked at compile time to fit the format's
/// 16-bit indices).
#[derive(Clone, Debug)]
pub struct PropertyTable<const NODES: usize, const CELLS: usize> {
    header: TableHeader,
    nodes: [Node; NODES],
    cells: [Cell; CELLS],
    node_count: usize,
    cell_count: usize,
}

fn take<'a, V: Deserialize<'a>>(bytes: &'a [u8]) -> Result<(V, &'a [u8]), BlobError> {
    postcard::take_from_bytes(bytes).map_err(|_| BlobError::Decode)
}

fn capacity(field: &'static str, capacity: usize, found: u32) -> BlobError {
    BlobError::Capacity {
        field,
        capacity: u32::try_from(capacity).unwrap_or(u32::MAX),
        found,
    }
}

/// Decodes one list of a table payload (its count, then the entries):
/// the count checked against the capacity and the header's count
/// (`fields`: the list's and the header's field names), every entry by
/// `check`, and written to `into` when given. Returns the count and the
/// rest of the payload.
fn decode_list<'b, V: Deserialize<'b>>(
    bytes: &'b [u8],
    fields: (&'static str, &'static str),
    (capacity_of, header_count): (usize, u16),
    check: impl Fn(usize, &V) -> Result<(), ConfigError>,
    mut into: Option<&mut [V]>,
) -> Result<(usize, &'b [u8]), BlobError> {
    let (field, header_field) = fields;
    let (n, mut rest): (u32, _) = take(bytes)?;
    if n as usize > capacity_of {
        return Err(capacity(field, capacity_of, n));
    }
    if n != u32::from(header_count) {
        return Err(BlobError::Invalid(ConfigError::new(
            field,
            Problem::Inconsistent { with: header_field },
        )));
    }
    for i in 0..n as usize {
        let (v, r): (V, _) = take(rest)?;
        rest = r;
        check(i, &v).map_err(BlobError::Invalid)?;
        if let Some(slot) = into.as_deref_mut().and_then(|s| s.get_mut(i)) {
            *slot = v;
        }
    }
    Ok((n as usize, rest))
}

impl<const NODES: usize, const CELLS: usize> PropertyTable<NODES, CELLS> {
    const CAPACITY_OK: () = assert!(
        NODES >= 4 && NODES <= 65_535 && CELLS >= 1 && CELLS <= 65_535,
        "table capacities must be 4..=65535 nodes and 1..=65535 cells"
    );

    /// An empty table (no model: [`TableGas::new`] refuses it).
    pub const fn empty() -> Self {
        let () = Self::CAPACITY_OK;
        PropertyTable {
            header: TableHeader {
                label: [0; 16],
                mole_fractions: [0.0; 21],
                molar_mass: 0.0,
                ln_p_min: 0.0,
                ln_p_max: 0.0,
                t_min: 0.0,
                t_max: 0.0,
                h_offset: 0.0,
                s_offset: 0.0,
                tolerance_h: 0.0,
                tolerance_s: 0.0,
                tolerance_z: 0.0,
                lattice_bits: 0,
                node_count: 0,
                cell_count: 0,
            },
            nodes: [Node {
                z: 0.0,
                z_lnp: 0.0,
                z_t: 0.0,
                z_lnp_t: 0.0,
                h: 0.0,
                s: 0.0,
                cp: 0.0,
                cp_lnp: 0.0,
                speed_of_sound: 0.0,
            }; NODES],
            cells: [Cell {
                corners: [0; 4],
                children: 0,
                flags: 0,
            }; CELLS],
            node_count: 0,
            cell_count: 0,
        }
    }

    /// Decodes and validates a blob into a new table.
    pub fn from_blob(blob: &[u8]) -> Result<Self, BlobError> {
        let mut t = Self::empty();
        t.replace_from_blob(blob)?;
        Ok(t)
    }

    /// Replaces this table by the blob's, in place and without a second
    /// copy: a first pass decodes and checks everything (framing, checksum,
    /// capacity, every value and index), the second writes. On any error the
    /// table is left exactly as it was.
    pub fn replace_from_blob(&mut self, blob: &[u8]) -> Result<(), BlobError> {
        let payload = blob::open(blob, KIND_PROPERTY_TABLE, TABLE_FORMAT_VERSION)?;
        Self::decode(payload, None)?;
        Self::decode(payload, Some(self))?;
        Ok(())
    }

    fn decode(payload: &[u8], mut into: Option<&mut Self>) -> Result<(), BlobError> {
        let (header, rest): (TableHeader, _) = take(payload)?;
        check_header(&header).map_err(BlobError::Invalid)?;
        let (n_nodes, rest) = decode_list(
            rest,
            ("table_nodes", "table.node_count"),
            (NODES, header.node_count),
            check_node,
            into.as_deref_mut().map(|t| t.nodes.as_mut_slice()),
        )?;
        let (n_cells, rest) = decode_list(
            rest,
            ("table_cells", "table.cell_count"),
            (CELLS, header.cell_count),
            |i, cell: &Cell| {
                check_cell(
                    i,
                    cell,
                    n_nodes,
                    usize::from(header.cell_count),
                    header.lattice_bits,
                )
            },
            into.as_deref_mut().map(|t| t.cells.as_mut_slice()),
        )?;
        if !rest.is_empty() {
            return Err(BlobError::Decode);
        }
        if let Some(t) = into {
            t.header = header;
            t.node_count = n_nodes;
            t.cell_count = n_cells;
        }
        Ok(())
    }

    /// The loaded content (empty before the first successful load).
    pub fn data(&self) -> TableData<'_> {
        TableData {
            header: self.header,
            nodes: self.nodes.get(..self.node_count).unwrap_or(&[]),
            cells: self.cells.get(..self.cell_count).unwrap_or(&[]),
        }
    }
}

/// Why a table state is not good.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TableFlag {
    /// Inside the envelope, in a cell that met the tolerance.
    None,
    /// Pressure or temperature outside the table's envelope (bad).
    OutsideEnvelope,
    /// In a cell flagged near a critical point or a saturation line
    /// (uncertain).
    FlaggedBand,
    /// In a cell where the equation of state gave no usable state (two-phase,
    /// or no root; bad).
    NoState,
    /// A non-finite input or result (bad).
    NotFinite,
}

/// The state at (p, T) from a table.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TableState<T> {
    /// Compressibility factor.
    pub z: T,
    /// ∂Z/∂T at constant pressure, 1/K.
    pub dz_dt: T,
    /// ∂Z/∂ln p at constant temperature.
    pub dz_dlnp: T,
    /// Specific volume, m³/kg.
    pub specific_volume: T,
    /// Specific enthalpy, J/kg (the equation of state's reference).
    pub enthalpy: T,
    /// Specific entropy, J/(kg K).
    pub entropy: T,
    /// Isobaric heat capacity, J/(kg K).
    pub cp: T,
    /// Speed of sound, m/s.
    pub speed_of_sound: T,
    /// Quality of every value above.
    pub quality: Quality,
    /// Why the quality is not good.
    pub flag: TableFlag,
}

impl<T: Real> TableState<T> {
    fn bad(flag: TableFlag) -> Self {
        TableState {
            z: T::ZERO,
            dz_dt: T::ZERO,
            dz_dlnp: T::ZERO,
            specific_volume: T::ZERO,
            enthalpy: T::ZERO,
            entropy: T::ZERO,
            cp: T::ZERO,
            speed_of_sound: T::ZERO,
            quality: Quality::Bad,
            flag,
        }
    }
}

/// Stage quantities from a table (before the gas seam: this model's own
/// small stage API; the seam's methods replace it).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TableStage<T> {
    /// Actual specific work h2 − h1, J/kg.
    pub actual_head: Measured<T>,
    /// Isentropic head h(p2, s1) − h1, J/kg.
    pub isentropic_head: Measured<T>,
    /// Temperature of the isentropic discharge state, K.
    pub isentropic_temperature: Measured<T>,
    /// Isentropic efficiency.
    pub isentropic_efficiency: Measured<T>,
    /// Polytropic head ∫ v dp along the constant-efficiency path (Simpson's
    /// rule with the path's midpoint state located by [`TableGas::stage`]),
    /// J/kg.
    pub polytropic_head: Measured<T>,
    /// Polytropic efficiency (polytropic head / actual head).
    pub polytropic_efficiency: Measured<T>,
}

/// End states a [`TableGas`] remembers: the suction and discharge states of
/// four stages and the train totals' state at the last discharge pressure
/// (a longer train only misses some).
pub const MEMO_SLOTS: usize = 9;

/// The start-of-descent grid: 2^JUMP_BITS parts per axis.
const JUMP_BITS: u32 = 3;

/// Patch outputs: Z and ∂Z/∂T.
const W_Z: u8 = 1;
/// Patch outputs: ∂Z/∂ln p (with [`W_Z`]).
const W_ZX: u8 = 32;
/// Patch outputs: with [`W_Z`], Z without ∂Z/∂T (the seam's end states:
/// only the entropy match's start without a discharge state uses it, and
/// evaluates it there).
const W_NO_DZ: u8 = 64;
/// Not an output: with `CUT`, the descent starts from the leaf the last
/// such descent found when it holds the point (`TableGas::last_leaf`).
const W_LAST_LEAF: u8 = 128;
/// What the gas seam's `compression` asks of the patch at its two ends (Z,
/// h, cp, s) and in the entropy match (s, ∂s/∂T, h and Z).
pub(crate) const SEAM_ENDS: u8 = W_Z | W_NO_DZ | W_H | W_S;
/// See [`SEAM_ENDS`].
pub(crate) const SEAM_ISO: u8 = W_DS | W_H | W_Z;
/// What the seam asks at the isentropic state's end (h and Z).
pub(crate) const SEAM_ISO_END: u8 = W_H | W_Z;
/// Patch outputs: h and cp.
const W_H: u8 = 2;
/// Patch outputs: s.
const W_S: u8 = 4;
/// Patch outputs: s and ∂s/∂T.
const W_DS: u8 = 8;
/// Patch outputs: speed of sound.
const W_W: u8 = 16;

/// The entropy match's result.
#[derive(Clone, Copy)]
pub(crate) struct Isentropic<T> {
    /// Temperature, K.
    pub(crate) t: T,
    /// Enthalpy there, J/kg.
    pub(crate) h: T,
    /// Z there (1 unless asked for).
    pub(crate) z: T,
    pub(crate) quality: Quality,
    pub(crate) flag: TableFlag,
}

/// The states of one compression (see `TableGas::stage_states`).
pub(crate) struct StageStates<T> {
    pub(crate) end1: Patch<T>,
    pub(crate) q1: Quality,
    pub(crate) flag1: TableFlag,
    pub(crate) end2: Patch<T>,
    pub(crate) q2: Quality,
    pub(crate) flag2: TableFlag,
    pub(crate) iso: Isentropic<T>,
}

/// What the polytropic path needs of its two ends.
struct PathEnds<T> {
    ln_r: T,
    /// ln(T2/T1).
    ln_t_ratio: T,
    t: [T; 2],
    z: [T; 2],
    /// ∂Z/∂ln p at each end.
    z_x: [T; 2],
    /// ∂Z/∂T at each end.
    z_t: [T; 2],
    /// R·T·∂Z/∂T / cp at each end.
    a: [T; 2],
    /// R·Z / cp at each end.
    b: [T; 2],
}

/// Leaf cell found by the descent, with its bounds relative to the envelope
/// origin.
#[derive(Clone, Copy)]
struct Leaf<'a, T> {
    cell: &'a Cell,
    x0: T,
    inv_dx: T,
    dx: T,
    y0: T,
    inv_dy: T,
    dy: T,
}

/// One T-edge of a leaf cut at one ln p (see `TableGas::cut`): each
/// function's value there and its T-tangent (offsets not added).
#[derive(Clone, Copy, Default)]
struct Edge<T> {
    z: T,
    z_t: T,
    /// ∂Z/∂ln p and its T-tangent (only for [`W_ZX`]).
    z_x: T,
    z_xt: T,
    h: T,
    /// cp: h's T-tangent.
    cp: T,
    s: T,
    /// cp/T: s's T-tangent.
    s_t: T,
}

/// The cubic Hermite basis at one point of a leaf (in ln p or in T; see
/// `hermite`): the high end's value weight h01 and its derivative (the low
/// end's are 1 − h01 and the opposite derivative), and per end (low, high)
/// the tangent's weight (scaled by the leaf's size) and its derivative.
#[derive(Clone, Copy)]
struct TBasis<T> {
    b1: T,
    db1: T,
    bd: [T; 2],
    dbd: [T; 2],
}

/// A leaf cut at one relative ln p `x`: every state at that pressure in the
/// leaf is a cubic in T on these edges.
#[derive(Clone, Copy)]
struct Cut<'a, T> {
    leaf: Leaf<'a, T>,
    x: T,
    /// Relative position of `x` in the leaf, [0, 1].
    u: T,
    /// Low-T edge, high-T edge.
    edges: [Edge<T>; 2],
    quality: Quality,
    flag: TableFlag,
}

impl<'a, T: Real> Cut<'a, T> {
    /// Whether the state (x, y) lies on this cut.
    #[inline(always)]
    fn holds(&self, x: T, y: T) -> bool {
        x == self.x && self.holds_t(y)
    }

    /// Whether relative temperature `y` lies in this cut's leaf.
    #[inline(always)]
    fn holds_t(&self, y: T) -> bool {
        y >= self.leaf.y0 && y <= self.leaf.y0 + self.leaf.dy
    }
}

/// A remembered end state (see `TableGas::end_state`): the seam's outputs
/// at (p, T) with ln p, so a state shared by two calls (a stage's discharge
/// and the next cooler's inlet; a stage's suction and the train totals) is
/// interpolated once, and a state at a remembered pressure (a cooler's
/// outlet at the next stage's suction pressure; the train totals' state at
/// the last discharge pressure) reuses its logarithm.
#[derive(Clone, Copy, Debug)]
struct Memo<T> {
    /// ln p: `T::ln(p)`, or ln p1 + ln r for a compression's discharge
    /// (equal to within rounding).
    ln_p: T,
    z: T,
    h: T,
    cp: T,
    s: T,
    quality: Quality,
    flag: TableFlag,
}

/// Values of one patch evaluation (offsets added by `eval`).
#[derive(Clone, Copy)]
pub(crate) struct Patch<T> {
    pub(crate) z: T,
    pub(crate) h: T,
    pub(crate) s: T,
    pub(crate) dh_dt: T,
    pub(crate) ds_dt: T,
    pub(crate) dz_dt: T,
    pub(crate) dz_dx: T,
    pub(crate) w: T,
}

impl<T: Real> Patch<T> {
    const ZERO: Patch<T> = Patch {
        z: T::ZERO,
        h: T::ZERO,
        s: T::ZERO,
        dh_dt: T::ZERO,
        ds_dt: T::ZERO,
        dz_dt: T::ZERO,
        dz_dx: T::ZERO,
        w: T::ZERO,
    };
}

impl<T: Real> Memo<T> {
    fn bad(flag: TableFlag) -> Self {
        Memo {
            ln_p: T::ZERO,
            z: T::ONE,
            h: T::ZERO,
            cp: T::ZERO,
            s: T::ZERO,
            quality: Quality::Bad,
            flag,
        }
    }
}

/// The cubic Hermite basis at t in [0, 1] of a cell `d` wide (in ln p or
/// T; `inv_d` = 1/d), in factored form with w = 1 − t: the high end's value
/// weight h01 = t²(3 − 2t) (the low end's is 1 − h01) and its derivative
/// in the cell's variable 6·t·w/d (the low end's opposite), the tangent
/// weights h10·d = t·w²·d and h11·d = −t²·w·d and their derivatives
/// h10' = w(1 − 3t), h11' = t(3t − 2).
#[inline(always)]
fn hermite<T: Real>(t: T, d: T, inv_d: T) -> TBasis<T> {
    let w = T::ONE - t;
    let (t2, tw) = (t * t, t * w);
    let three = T::of(3.0);
    TBasis {
        b1: t2 * (three - T::of(2.0) * t),
        db1: T::of(6.0) * tw * inv_d,
        bd: [tw * w * d, -(t2 * w) * d],
        dbd: [w * (T::ONE - three * t), t * (three * t - T::of(2.0))],
    }
}

#[inline(always)]
fn f<T: Real>(x: f32) -> T {
    T::of(f64::from(x))
}

/// A gas model on a property table, for scalar type `T`.
///
/// It remembers its last two end states (interior mutability, so it is not
/// `Sync`: one model per train, not shared between threads or interrupt
/// priorities).
///
/// `repr(C)` in this order: the scalars every evaluation reads come first,
/// at offsets a single-precision load reaches directly (below 1020 bytes on
/// Cortex-M), the tables and the remembered states after them.
#[repr(C)]
pub struct TableGas<'a, T> {
    data: TableData<'a>,
    gas_constant: T,
    ln_p_min: T,
    span_x: T,
    t_min: T,
    span_t: T,
    /// One lattice unit in ln p and its inverse.
    unit_x: T,
    inv_unit_x: T,
    /// One lattice unit in T and its inverse.
    unit_t: T,
    inv_unit_t: T,
    h_offset: T,
    s_offset: T,
    /// Entropy residual that ends the entropy match: 1/16 of the table's
    /// entropy tolerance (the interpolant is not more accurate than that;
    /// across a cell edge it may jump by about the tolerance).
    s_tolerance: T,
    /// A leaf's width 2^s lattice units in ln p and its inverse, and its
    /// height in T and its inverse, for s = 0..=16 (built once by
    /// [`TableGas::new`], so `locate` only looks them up).
    leaf_sizes: [[T; 4]; 17],
    /// Where the descent starts for each of 2^JUMP_BITS × 2^JUMP_BITS equal
    /// parts of the envelope: the deepest cell that holds the whole part,
    /// with its size as powers of two of lattice units (ln p, T); built once
    /// by [`TableGas::new`].
    jump: [(u16, u8, u8); 1 << (2 * JUMP_BITS)],
    /// Keys (p, T) and values of the remembered end states, and the slot
    /// the next one goes to (see `end_state`).
    memo_p: [core::cell::Cell<T>; MEMO_SLOTS],
    memo_t: [core::cell::Cell<T>; MEMO_SLOTS],
    memo: [core::cell::Cell<Memo<T>>; MEMO_SLOTS],
    /// The leaf the last descent asked to remember it found ([`W_LAST_LEAF`]:
    /// a remembered state's fresh evaluation, e.g. the train totals' state
    /// at the last discharge pressure, deep in the tree near CO2's critical
    /// point), as (cell, size exponents in ln p and T, the point's lattice
    /// coordinates shifted by them); the root (the whole lattice) at first.
    last_leaf: core::cell::Cell<(u16, u8, u8, u16, u16)>,
    /// The largest lattice coordinate, 2^lattice_bits − 1, and the shift
    /// from a lattice coordinate to its part of the start-of-descent grid,
    /// lattice_bits − JUMP_BITS (or 0), for `locate`.
    top: u16,
    part: u16,
    memo_next: core::cell::Cell<u8>,
}

impl<'a, T: Real> Clone for TableGas<'a, T> {
    fn clone(&self) -> Self {
        TableGas {
            memo_p: self.memo_p.clone(),
            memo_t: self.memo_t.clone(),
            memo: self.memo.clone(),
            memo_next: self.memo_next.clone(),
            last_leaf: self.last_leaf.clone(),
            ..*self
        }
    }
}

impl<'a, T: Real + core::fmt::Debug> core::fmt::Debug for TableGas<'a, T> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.debug_struct("TableGas")
            .field("header", &self.data.header)
            .field("gas_constant", &self.gas_constant)
            .finish_non_exhaustive()
    }
}

impl<'a, T: Real> TableGas<'a, T> {
    /// A model on `data`, after [`validate`].
    pub fn new(data: TableData<'a>) -> Result<Self, ConfigError> {
        validate(&data)?;
        let h = &data.header;
        let span_x = h.ln_p_max - h.ln_p_min;
        let span_t = h.t_max - h.t_min;
        let n = f64::from(1u32 << h.lattice_bits);
        let mut gas = TableGas {
            data,
            gas_constant: T::of(MOLAR_GAS_CONSTANT / h.molar_mass),
            ln_p_min: T::of(h.ln_p_min),
            span_x: T::of(span_x),
            t_min: T::of(h.t_min),
            span_t: T::of(span_t),
            // Validated: 1 ≤ lattice_bits ≤ 16.
            top: u16::try_from((1u32 << h.lattice_bits) - 1).unwrap_or(u16::MAX),
            part: u16::from(h.lattice_bits.saturating_sub(JUMP_BITS as u8)),
            unit_x: T::of(span_x / n),
            inv_unit_x: T::of(n / span_x),
            unit_t: T::of(span_t / n),
            inv_unit_t: T::of(n / span_t),
            h_offset: T::of(h.h_offset),
            s_offset: T::of(h.s_offset),
            s_tolerance: T::of(f64::from(h.tolerance_s) / 16.0),
            jump: [(0, h.lattice_bits, h.lattice_bits); 1 << (2 * JUMP_BITS)],
            memo_p: core::array::from_fn(|_| core::cell::Cell::new(T::ZERO)),
            memo_t: core::array::from_fn(|_| core::cell::Cell::new(T::ZERO)),
            memo: core::array::from_fn(|_| core::cell::Cell::new(Memo::bad(TableFlag::NotFinite))),
            memo_next: core::cell::Cell::new(0),
            last_leaf: core::cell::Cell::new((0, h.lattice_bits, h.lattice_bits, 0, 0)),
            leaf_sizes: [[T::ZERO; 4]; 17],
        };
        for (shift, sizes) in gas.leaf_sizes.iter_mut().enumerate() {
            let shift = shift as u32;
            let n = T::from_u32(1 << shift);
            // 2^(16 − shift)·2^−16 = 2^−shift, exactly.
            let inv_n = T::from_u32(1 << (16 - shift)) * T::of(1.0 / 65_536.0);
            *sizes = [
                gas.unit_x * n,
                gas.inv_unit_x * inv_n,
                gas.unit_t * n,
                gas.inv_unit_t * inv_n,
            ];
        }
        gas.build_jump();
        Ok(gas)
    }

    /// Fills [`TableGas::jump`]: for each part, descends from the root while
    /// the child holding the part's first lattice point is still at least as
    /// large as the part in both variables.
    fn build_jump(&mut self) {
        let bits = u32::from(self.data.header.lattice_bits);
        let part = bits.saturating_sub(JUMP_BITS);
        let per_axis = 1u32 << JUMP_BITS;
        let cells: &'a [Cell] = self.data.cells;
        for (k, slot) in self.jump.iter_mut().enumerate() {
            let k = k as u32;
            let (gi, gj) = (k % per_axis, k / per_axis);
            // Parts beyond a coarse lattice repeat its last cells.
            let ix = u32::min(gi << part, (1 << bits) - 1);
            let iy = u32::min(gj << part, (1 << bits) - 1);
            let (mut sx, mut sy) = (bits, bits);
            let mut index = 0usize;
            for _ in 0..=MAX_DEPTH {
                let Some(cell) = cells.get(index) else {
                    break;
                };
                if cell.children == 0 {
                    break;
                }
                let [bit_x, bit_t, ..] = cell.corners;
                let (bx, bt) = (u32::from(bit_x) & 15, u32::from(bit_t) & 15);
                let split_x = cell.flags & SPLIT_LN_P != 0;
                let split_t = cell.flags & SPLIT_T != 0;
                if (split_x && bx < part) || (split_t && bt < part) {
                    break;
                }
                let mut child = 0u32;
                if split_x {
                    sx = bx;
                    child = (ix >> bx) & 1;
                }
                if split_t {
                    sy = bt;
                    let bit = (iy >> bt) & 1;
                    child += if split_x { bit << 1 } else { bit };
                }
                index = usize::from(cell.children) + child as usize;
            }
            *slot = (u16::try_from(index).unwrap_or(0), sx as u8, sy as u8);
        }
    }

    /// The table's header.
    pub fn header(&self) -> &TableHeader {
        &self.data.header
    }

    /// Specific gas constant R = Ru/M, J/(kg K).
    pub fn gas_constant(&self) -> T {
        self.gas_constant
    }

    /// The envelope: (p_min, p_max) in Pa, (T_min, T_max) in K.
    pub fn envelope(&self) -> ((T, T), (T, T)) {
        let h = &self.data.header;
        (
            (T::exp(T::of(h.ln_p_min)), T::exp(T::of(h.ln_p_max))),
            (T::of(h.t_min), T::of(h.t_max)),
        )
    }

    /// Relative coordinates (ln p − ln p_min, T − T_min) from ln p, or why
    /// not.
    #[inline]
    fn coordinates(&self, ln_p: T, t: T) -> Result<(T, T), TableFlag> {
        let x = ln_p - self.ln_p_min;
        let y = t - self.t_min;
        // Inside the (finite) envelope implies finite inputs: the
        // finiteness test only tells the two flags apart.
        if !(x >= T::ZERO && x <= self.span_x && y >= T::ZERO && y <= self.span_t) {
            return Err(if T::is_finite(ln_p) && T::is_finite(t) {
                TableFlag::OutsideEnvelope
            } else {
                TableFlag::NotFinite
            });
        }
        Ok((x, y))
    }

    /// Descends the tree to the leaf holding relative coordinates (x, y);
    /// with `last`, from the remembered leaf if it holds the point, and
    /// remembers the leaf found.
    #[inline(always)]
    fn locate(&self, x: T, y: T, last: bool) -> Option<Leaf<'a, T>> {
        // Integer lattice coordinates of the point; each split cell names
        // the bit of them that picks its child.
        let top = u32::from(self.top);
        let ix = u32::min(T::trunc_u32(x * self.inv_unit_x), top);
        let iy = u32::min(T::trunc_u32(y * self.inv_unit_t), top);
        let cells: &'a [Cell] = self.data.cells;
        // Start from the deepest cell known to hold the point's part of the
        // envelope; track the cell's size as powers of two of lattice units.
        let part = u32::from(self.part) & 31;
        let k = ((iy >> part) << JUMP_BITS) + (ix >> part);
        let &(mut start, mut sx0, mut sy0) = self.jump.get(k as usize)?;
        if last {
            // A cell of 2^sx × 2^sy lattice units holds the points whose
            // coordinates shifted by its sizes equal its own (the tree
            // splits at halves).
            let (cell, lx, ly, kx, ky) = self.last_leaf.get();
            let (lx, ly) = (u32::from(lx) & 31, u32::from(ly) & 31);
            if ix >> lx == u32::from(kx) && iy >> ly == u32::from(ky) {
                (start, sx0, sy0) = (cell, lx as u8, ly as u8);
            }
        }
        let (mut sx, mut sy) = (u32::from(sx0) & 31, u32::from(sy0) & 31);
        let mut index = usize::from(start);
        // MAX_DEPTH splits and the leaf (a half-open range: an inclusive one
        // costs a second bound test per step).
        for _ in 0..MAX_DEPTH + 1 {
            let cell = cells.get(index)?;
            if cell.children == 0 {
                if last {
                    // Below 2^16 cells and lattice units (validated).
                    self.last_leaf.set((
                        index as u16,
                        sx as u8,
                        sy as u8,
                        (ix >> sx) as u16,
                        (iy >> sy) as u16,
                    ));
                }
                let (i0, j0) = ((ix >> sx) << sx, (iy >> sy) << sy);
                let &[dx, inv_dx, _, _] = self.leaf_sizes.get(sx as usize)?;
                let &[_, _, dy, inv_dy] = self.leaf_sizes.get(sy as usize)?;
                return Some(Leaf {
                    cell,
                    x0: T::from_u32(i0) * self.unit_x,
                    inv_dx,
                    dx,
                    y0: T::from_u32(j0) * self.unit_t,
                    inv_dy,
                    dy,
                });
            }
            let [bit_x, bit_t, ..] = cell.corners;
            // Validated: bit_x, bit_t < lattice bits ≤ 16.
            let (bx, bt) = (u32::from(bit_x) & 15, u32::from(bit_t) & 15);
            let mut child = 0u32;
            if cell.flags & SPLIT_LN_P != 0 {
                sx = bx;
                child = (ix >> bx) & 1;
            }
            if cell.flags & SPLIT_T != 0 {
                sy = bt;
                let bit = (iy >> bt) & 1;
                child += if cell.flags & SPLIT_LN_P != 0 {
                    bit << 1
                } else {
                    bit
                };
            }
            index = usize::from(cell.children) + child as usize;
        }
        None
    }

    /// The corner nodes of a leaf.
    #[inline]
    fn corners(&self, leaf: &Leaf<'a, T>) -> Option<[&'a Node; 4]> {
        let nodes: &'a [Node] = self.data.nodes;
        let [a, b, c, d] = leaf.cell.corners;
        Some([
            nodes.get(usize::from(a))?,
            nodes.get(usize::from(b))?,
            nodes.get(usize::from(c))?,
            nodes.get(usize::from(d))?,
        ])
    }

    /// The leaf cut at relative ln p `x`: on each of its two T-edges, every
    /// function `WANT` asks for interpolated along ln p (cubic Hermite,
    /// value and T-tangent). The T-tangent of h on an edge is cp and s's is
    /// cp/T, so one cp interpolation serves h, s and cp. What is left is a
    /// cubic in T per function ([`TableGas::combine`]), so every state at
    /// this pressure in this cell (the discharge state and the entropy
    /// match's steps) costs only that cubic.
    #[inline(always)]
    fn cut<const WANT: u8>(&self, leaf: Leaf<'a, T>, n: [&Node; 4], x: T) -> Cut<'a, T> {
        let zero = T::ZERO;
        // Not clamped to [0, 1]: the leaf holds x (`locate`), so u leaves
        // [0, 1] only by the rounding of the lattice coordinate (below
        // 1e-4 of the leaf in f32), where the cubic continued is as close
        // as the one at the leaf's edge.
        let u = (x - leaf.x0) * leaf.inv_dx;
        let hu = hermite(u, leaf.dx, leaf.inv_dx);
        // The value weights sum to one and their derivatives to zero: each
        // function is its low node's value plus a1 times the nodes'
        // difference (one difference serves the value and its ln p
        // derivative), plus the tangent terms.
        let a1 = hu.b1;
        let [ad0, ad1] = hu.bd;
        let dux1 = hu.db1;
        let [dux_t0, dux_t1] = hu.dbd;
        let r = self.gas_constant;
        let t_lo = self.t_min + leaf.y0;
        let mut edges = [Edge::default(); 2];
        let corners = [(n[0], n[1], t_lo), (n[2], n[3], t_lo + leaf.dy)];
        for (e, (c0, c1, t)) in edges.iter_mut().zip(corners) {
            let edge = |f0: T, fx0: T, f1: T, fx1: T| f0 + a1 * (f1 - f0) + ad0 * fx0 + ad1 * fx1;
            let (z0, z1, zt0, zt1) = (f::<T>(c0.z), f::<T>(c1.z), f::<T>(c0.z_t), f::<T>(c1.z_t));
            let cp = if WANT & (W_H | W_S | W_DS) != 0 {
                edge(f(c0.cp), f(c0.cp_lnp), f(c1.cp), f(c1.cp_lnp))
            } else {
                zero
            };
            e.cp = cp;
            if WANT & W_Z != 0 {
                let (zx0, zx1) = (f::<T>(c0.z_lnp), f::<T>(c1.z_lnp));
                let (ztx0, ztx1) = (f::<T>(c0.z_lnp_t), f::<T>(c1.z_lnp_t));
                let (dz, dzt) = (z1 - z0, zt1 - zt0);
                e.z = z0 + a1 * dz + ad0 * zx0 + ad1 * zx1;
                e.z_t = zt0 + a1 * dzt + ad0 * ztx0 + ad1 * ztx1;
                if WANT & W_ZX != 0 {
                    e.z_x = dux1 * dz + dux_t0 * zx0 + dux_t1 * zx1;
                    e.z_xt = dux1 * dzt + dux_t0 * ztx0 + dux_t1 * ztx1;
                }
            }
            if WANT & W_H != 0 {
                // ∂h/∂ln p = −R·T²·∂Z/∂T.
                let h0 = f::<T>(c0.h);
                e.h = h0 + a1 * (f::<T>(c1.h) - h0) - r * t * t * (ad0 * zt0 + ad1 * zt1);
            }
            if WANT & (W_S | W_DS) != 0 {
                // ∂s/∂ln p = −R·(Z + T·∂Z/∂T); ∂s/∂T = cp/T.
                let sx = ad0 * (z0 + t * zt0) + ad1 * (z1 + t * zt1);
                let s0 = f::<T>(c0.s);
                e.s = s0 + a1 * (f::<T>(c1.s) - s0) - r * sx;
                e.s_t = cp / t;
            }
        }
        let (quality, flag) = Self::flag_quality(leaf.cell);
        Cut {
            leaf,
            x,
            u,
            edges,
            quality,
            flag,
        }
    }

    /// The patch at relative temperature `y` on a cut (see
    /// [`TableGas::cut`]): the two edges' values and tangents combined with
    /// the cubic Hermite basis in T, only the outputs `WANT` asks for.
    #[inline(always)]
    fn combine<const WANT: u8>(cut: &Cut<'a, T>, y: T) -> Patch<T> {
        Self::combine_at::<WANT>(cut, &Self::t_basis(&cut.leaf, y))
    }

    /// The cubic Hermite basis in T at relative temperature `y` in `leaf`,
    /// per edge (low T, high T).
    #[inline(always)]
    fn t_basis(leaf: &Leaf<'a, T>, y: T) -> TBasis<T> {
        // Not clamped: the leaf holds y (as u in `cut`).
        let v = (y - leaf.y0) * leaf.inv_dy;
        hermite(v, leaf.dy, leaf.inv_dy)
    }

    /// [`TableGas::combine`] with the T-basis already known.
    #[inline(always)]
    fn combine_at<const WANT: u8>(cut: &Cut<'a, T>, tb: &TBasis<T>) -> Patch<T> {
        let mut out = Patch::ZERO;
        let [e0, e1] = &cut.edges;
        // Each output is the low edge's value, plus the high edge's weight
        // times the difference of the values (the value weights sum to one,
        // their T-derivatives to zero: one difference serves the value and
        // its derivative), plus each edge's tangent term.
        let (b1, db1) = (tb.b1, tb.db1);
        let [bd0, bd1] = tb.bd;
        let [dbd0, dbd1] = tb.dbd;
        if WANT & W_Z != 0 {
            let d = e1.z - e0.z;
            out.z = e0.z + b1 * d + bd0 * e0.z_t + bd1 * e1.z_t;
            if WANT & W_NO_DZ == 0 {
                out.dz_dt = db1 * d + dbd0 * e0.z_t + dbd1 * e1.z_t;
            }
            if WANT & W_ZX != 0 {
                out.dz_dx = e0.z_x + b1 * (e1.z_x - e0.z_x) + bd0 * e0.z_xt + bd1 * e1.z_xt;
            }
        }
        if WANT & W_H != 0 {
            let d = e1.h - e0.h;
            out.h = e0.h + b1 * d + bd0 * e0.cp + bd1 * e1.cp;
            out.dh_dt = db1 * d + dbd0 * e0.cp + dbd1 * e1.cp;
        }
        if WANT & (W_S | W_DS) != 0 {
            let d = e1.s - e0.s;
            out.s = e0.s + b1 * d + bd0 * e0.s_t + bd1 * e1.s_t;
            if WANT & W_DS != 0 {
                out.ds_dt = db1 * d + dbd0 * e0.s_t + dbd1 * e1.s_t;
            }
        }
        out
    }

    /// Bicubic Hermite patch at (x, y) in `leaf`, computing only what
    /// `WANT` asks for ([`W_Z`]: Z and its derivatives, [`W_H`]: h and cp,
    /// [`W_S`]: s, [`W_DS`]: s and ∂s/∂T, [`W_W`]: speed of sound): the cut
    /// at x ([`TableGas::cut`]) combined at y ([`TableGas::combine`]), the
    /// speed of sound bilinear.
    #[inline(always)]
    fn patch<const WANT: u8>(cut: &Cut<'a, T>, n: [&Node; 4], y: T) -> Patch<T> {
        let mut out = Self::combine::<WANT>(cut, y);
        if WANT & W_W != 0 {
            let leaf = &cut.leaf;
            let u = cut.u;
            let v = T::clamp((y - leaf.y0) * leaf.inv_dy, T::ZERO, T::ONE);
            let (lu, lv) = (T::ONE - u, T::ONE - v);
            out.w = lv * (lu * f(n[0].speed_of_sound) + u * f(n[1].speed_of_sound))
                + v * (lu * f(n[2].speed_of_sound) + u * f(n[3].speed_of_sound));
        }
        out
    }

    fn flag_quality(cell: &Cell) -> (Quality, TableFlag) {
        if cell.flags & CELL_BAD != 0 {
            (Quality::Bad, TableFlag::NoState)
        } else if cell.flags & CELL_UNCERTAIN != 0 {
            (Quality::Uncertain, TableFlag::FlaggedBand)
        } else {
            (Quality::Good, TableFlag::None)
        }
    }

    /// The state at pressure `p` (Pa absolute) and temperature `t` (K).
    pub fn state(&self, p: T, t: T) -> TableState<T> {
        if !(p > T::ZERO) {
            return TableState::bad(TableFlag::NotFinite);
        }
        self.state_ln(T::ln(p), p, t)
    }

    /// [`TableGas::state`] with ln p already known.
    fn state_ln(&self, ln_p: T, p: T, t: T) -> TableState<T> {
        let (pt, quality, flag) = self.eval::<{ W_Z | W_ZX | W_H | W_S | W_W }>(ln_p, t);
        if quality == Quality::Bad {
            return TableState::bad(flag);
        }
        let state = TableState {
            z: pt.z,
            dz_dt: pt.dz_dt,
            dz_dlnp: pt.dz_dx,
            specific_volume: pt.z * self.gas_constant * t / p,
            enthalpy: pt.h,
            entropy: pt.s,
            cp: pt.dh_dt,
            speed_of_sound: pt.w,
            quality,
            flag,
        };
        if T::is_finite(state.specific_volume) && state.speed_of_sound > T::ZERO {
            state
        } else {
            TableState::bad(TableFlag::NotFinite)
        }
    }

    /// The patch outputs `WANT` at (ln p, T), offsets added, with the cell's
    /// quality and flag; bad (zeros) outside the envelope, in a bad cell, or
    /// for a non-finite or non-physical result (Z or cp not positive).
    #[inline(always)]
    fn eval<const WANT: u8>(&self, ln_p: T, t: T) -> (Patch<T>, Quality, TableFlag) {
        let mut cut = None;
        self.eval_on::<WANT, WANT>(ln_p, t, &mut cut)
    }

    /// [`TableGas::eval`] that uses `cut` if it holds the state (a leaf
    /// cut at this ln p found before: only the cubic in T is left to
    /// evaluate) and otherwise finds the leaf and cuts it, computing `CUT`
    /// (which must include `OUT`; a cut passed in must have been made with
    /// at least `OUT`), and leaves the cut it used in `cut`.
    #[inline(always)]
    fn eval_on<const CUT: u8, const OUT: u8>(
        &self,
        ln_p: T,
        t: T,
        cut: &mut Option<Cut<'a, T>>,
    ) -> (Patch<T>, Quality, TableFlag) {
        match self.coordinates(ln_p, t) {
            Ok((x, y)) => self.eval_xy::<CUT, OUT>(x, y, cut),
            Err(flag) => (Patch::ZERO, Quality::Bad, flag),
        }
    }

    /// [`TableGas::eval_on`] at relative coordinates inside the envelope.
    #[inline(always)]
    fn eval_xy<const CUT: u8, const OUT: u8>(
        &self,
        x: T,
        y: T,
        cut: &mut Option<Cut<'a, T>>,
    ) -> (Patch<T>, Quality, TableFlag) {
        self.eval_xy_checking::<CUT, OUT, OUT>(x, y, cut)
    }

    /// [`TableGas::eval_xy`] that checks (finite, physical) only the
    /// outputs `CHECK` of those it computes (`OUT`).
    #[inline(always)]
    fn eval_xy_checking<const CUT: u8, const OUT: u8, const CHECK: u8>(
        &self,
        x: T,
        y: T,
        cut: &mut Option<Cut<'a, T>>,
    ) -> (Patch<T>, Quality, TableFlag) {
        let bad = (Patch::ZERO, Quality::Bad, TableFlag::NotFinite);
        if !matches!(cut, Some(c) if c.holds(x, y)) {
            *cut = None;
            let Some(leaf) = self.locate(x, y, CUT & W_LAST_LEAF != 0) else {
                return bad;
            };
            let (quality, flag) = Self::flag_quality(leaf.cell);
            if quality == Quality::Bad {
                return (Patch::ZERO, quality, flag);
            }
            let Some(n) = self.corners(&leaf) else {
                return bad;
            };
            *cut = Some(self.cut::<CUT>(leaf, n, x));
        }
        let Some(c) = cut.as_ref() else {
            return bad;
        };
        let pt = if OUT & W_W != 0 {
            let Some(n) = self.corners(&c.leaf) else {
                return bad;
            };
            Self::patch::<OUT>(c, n, y)
        } else {
            Self::combine::<OUT>(c, y)
        };
        match self.finish::<CHECK>(pt) {
            Some(pt) => (pt, c.quality, c.flag),
            None => bad,
        }
    }

    /// A patch's outputs `OUT` with the offsets added, if finite and
    /// physical (Z and cp positive).
    #[inline(always)]
    fn finish<const OUT: u8>(&self, mut pt: Patch<T>) -> Option<Patch<T>> {
        pt.h += self.h_offset;
        pt.s += self.s_offset;
        Self::checked::<OUT>(pt)
    }

    /// A patch (offsets added) if its outputs `OUT` are finite and physical
    /// (Z and cp positive).
    #[inline(always)]
    fn checked<const OUT: u8>(pt: Patch<T>) -> Option<Patch<T>> {
        // One test for every output asked for: a NaN or infinity in any of
        // them makes their sum non-finite (outputs not asked for are not
        // computed at all).
        // (Started from the first output asked for, not from zero: the
        // same finiteness, one addition less.)
        let mut sum: Option<T> = None;
        let mut add = |v: T| {
            sum = Some(match sum {
                Some(s) => s + v,
                None => v,
            });
        };
        if OUT & W_Z != 0 {
            add(if OUT & W_NO_DZ != 0 {
                pt.z
            } else {
                pt.z + pt.dz_dt
            });
        }
        if OUT & W_ZX != 0 {
            add(pt.dz_dx);
        }
        if OUT & W_H != 0 {
            add(pt.h + pt.dh_dt);
        }
        if OUT & (W_S | W_DS) != 0 {
            add(pt.s);
        }
        if OUT & W_DS != 0 {
            add(pt.ds_dt);
        }
        if OUT & W_W != 0 {
            add(pt.w);
        }
        let sum = sum.unwrap_or(T::ZERO);
        let finite = T::is_finite(sum);
        let physical = (OUT & W_Z == 0 || pt.z > T::ZERO) && (OUT & W_H == 0 || pt.dh_dt > T::ZERO);
        if finite && physical {
            Some(pt)
        } else {
            None
        }
    }

    /// The seam's end state at (p, t) (Z, ∂Z/∂T, h, cp, s), remembered:
    /// the last [`MEMO_SLOTS`] states kept (keyed by the exact p and t), so
    /// a state that a stage and its cooler share (a train evaluates its
    /// stages, then its coolers, then its totals), and the first suction of
    /// the train's totals, is interpolated once per update. `ln_p` is
    /// ln p1 + ln r if the caller has it (a compression's discharge);
    /// otherwise ln p is `T::ln(p)`, taken from a remembered state at the
    /// same pressure when one has it (also a discharge's ln p1 + ln r: the
    /// state then differs from the state function's at `T::ln(p)` only by
    /// rounding). A fresh evaluation leaves its cut in
    /// `cut`. With `LOOKUP` false the state is not looked up (a
    /// compression's states: a train evaluates its stages first, so they are
    /// new); with `KEEP` false a fresh state is not remembered (a cooler's
    /// outlet: nothing later in a train update asks for it again, and
    /// keeping it would push out a stage's state the totals use).
    #[inline(always)]
    fn end_state<const LOOKUP: bool, const KEEP: bool>(
        &self,
        p: T,
        t: T,
        ln_p: Option<T>,
        cut: &mut Option<Cut<'a, T>>,
    ) -> Memo<T> {
        if !(p > T::ZERO) {
            return Memo::bad(TableFlag::NotFinite);
        }
        let mut known = None;
        if LOOKUP {
            // Keys compared on their bit patterns (integer compares): equal
            // bits give the state a fresh evaluation would (also for a NaN
            // temperature: bad either way), a zero of the other sign is
            // evaluated afresh.
            for (k, kp) in self.memo_p.iter().enumerate() {
                if T::same_bits(kp.get(), p) {
                    if let (Some(kt), Some(memo)) = (self.memo_t.get(k), self.memo.get(k)) {
                        let m = memo.get();
                        if T::same_bits(kt.get(), t) {
                            return m;
                        }
                        known = Some(m.ln_p);
                    }
                }
            }
        }
        if LOOKUP {
            // Out of line: a remembered state returns without the fresh
            // evaluation's register saves.
            return self.fresh_end_state_cold::<KEEP>(p, t, known);
        }
        self.fresh_end_state::<KEEP, SEAM_ENDS>(p, t, ln_p, known, cut)
    }

    /// [`TableGas::fresh_end_state`] for a state that was looked up and not
    /// found (`known`: ln p from a remembered state at the same pressure).
    #[inline(never)]
    fn fresh_end_state_cold<const KEEP: bool>(&self, p: T, t: T, known: Option<T>) -> Memo<T> {
        self.fresh_end_state::<KEEP, { SEAM_ENDS | W_LAST_LEAF }>(p, t, None, known, &mut None)
    }

    /// The seam's end state at (p, t) evaluated (see
    /// [`TableGas::end_state`]), remembered with `KEEP`.
    #[inline(always)]
    fn fresh_end_state<const KEEP: bool, const CUT: u8>(
        &self,
        p: T,
        t: T,
        ln_p: Option<T>,
        known: Option<T>,
        cut: &mut Option<Cut<'a, T>>,
    ) -> Memo<T> {
        let ln_p = match (ln_p, known) {
            (Some(l), _) | (None, Some(l)) => l,
            (None, None) => T::ln(p),
        };
        let (pt, quality, flag) = self.eval_on::<CUT, SEAM_ENDS>(ln_p, t, cut);
        let m = Memo {
            ln_p,
            z: pt.z,
            h: pt.h,
            cp: pt.dh_dt,
            s: pt.s,
            quality,
            flag,
        };
        if KEEP {
            // The next slot, in 0..MEMO_SLOTS (a wrap, not a division).
            let k = usize::from(self.memo_next.get());
            if let (Some(kp), Some(kt), Some(memo)) =
                (self.memo_p.get(k), self.memo_t.get(k), self.memo.get(k))
            {
                kp.set(p);
                kt.set(t);
                memo.set(m);
            }
            let next = if k + 1 < MEMO_SLOTS { k + 1 } else { 0 };
            self.memo_next.set(next as u8);
        }
        m
    }

    /// Temperature at pressure `p2` with entropy `s_target` (the isentropic
    /// discharge state), starting from `t_start`: Newton steps in T kept
    /// inside a bracket, bisection when a step leaves it, until the entropy
    /// residual is below 1/16 of the table's entropy tolerance or a Newton
    /// step below 0.25 K, at most [`ISENTROPIC_MAX_ITERATIONS`] (then uncertain).
    /// Bad if the root lies on or beyond an envelope edge; the quality is
    /// that of the cell the root lies in.
    pub fn isentropic_temperature(&self, p2: T, s_target: T, t_start: T) -> Measured<T> {
        if !(p2 > T::ZERO) {
            return Measured::bad();
        }
        let mut cut = None;
        let iso = self.isentropic_ln::<{ W_DS | W_H }, W_H>(T::ln(p2), s_target, t_start, &mut cut);
        Measured::derived(iso.t, iso.quality)
    }

    /// [`TableGas::isentropic_temperature`] with ln p2 already known; also
    /// returns the enthalpy there (and Z if `FIN` asks for it). Solved on
    /// the leaf's cut at ln p2 (`cut`, reused from the discharge state's
    /// evaluation when it holds the start): each step evaluates one cubic in
    /// T (s and ∂s/∂T); a step into another leaf cuts that leaf (`CUT`,
    /// which must include [`W_DS`] and `FIN`). A cut passed in must lie at
    /// ln p2.
    #[inline(always)]
    fn isentropic_ln<const CUT: u8, const FIN: u8>(
        &self,
        ln_p2: T,
        s_target: T,
        t_start: T,
        cut: &mut Option<Cut<'a, T>>,
    ) -> Isentropic<T> {
        let bad = Isentropic {
            t: T::ZERO,
            h: T::ZERO,
            z: T::ONE,
            quality: Quality::Bad,
            flag: TableFlag::NotFinite,
        };
        if !(T::is_finite(s_target) && T::is_finite(t_start)) {
            return bad;
        }
        // A cut passed in lies at ln p2 (the discharge state's): its x is
        // the relative ln p2, inside the envelope.
        let x2 = match cut.as_ref() {
            Some(c) => c.x,
            None => match self.coordinates(ln_p2, self.t_min) {
                Ok((x, _)) => x,
                Err(flag) => return Isentropic { flag, ..bad },
            },
        };
        let (mut lo, mut hi) = (T::ZERO, self.span_t);
        let mut y = T::clamp(t_start - self.t_min, lo, hi);
        // After a Newton step of δ the remaining error is about
        // δ²·|s''|/(2·s') with s''/s' ≈ 1/T + cp'/cp (below 1e-2 /K away
        // from critical points): for δ ≤ 0.25 K under 3e-4 K.
        let step_tolerance = T::of(0.25);
        let edge_margin = T::of(2e-4);
        let residual_tolerance = self.s_tolerance;
        let mut converged = false;
        // The converged evaluation, its quality and flag, and the step taken
        // from it. Each step's patch has every output the cut has (`CUT`:
        // s and ∂s/∂T for the step, `FIN` for the end; only the former
        // checked here), so the end needs no second pass over the edges.
        let mut last = None;
        for _ in 0..ISENTROPIC_MAX_ITERATIONS {
            let (pt, q, f) = self.eval_xy_checking::<CUT, CUT, W_DS>(x2, y, cut);
            if q == Quality::Bad {
                return bad;
            }
            let (s, ds_dt) = (pt.s, pt.ds_dt);
            let residual = s - s_target;
            if T::abs(residual) <= residual_tolerance {
                converged = true;
                last = Some((pt, q, f, T::ZERO));
                break;
            }
            if residual > T::ZERO {
                hi = y;
            } else {
                lo = y;
            }
            let mut next = if ds_dt > T::ZERO {
                y - residual / ds_dt
            } else {
                (lo + hi) * T::of(0.5)
            };
            if !(next > lo && next < hi) {
                next = (lo + hi) * T::of(0.5);
            }
            let delta = next - y;
            y = next;
            if T::abs(delta) < step_tolerance {
                converged = true;
                last = Some((pt, q, f, delta));
                break;
            }
        }
        // A root on an envelope edge may lie outside it.
        if y <= edge_margin || y >= self.span_t - edge_margin {
            return bad;
        }
        // h (and Z) at the root from the converged evaluation, carried over the final step δ (below
        // 0.25 K) to first order, h + cp·δ and Z + ∂Z/∂T·δ, if the root lies
        // in the same leaf. The remainder ½·(∂cp/∂T)·δ² is within what the
        // step tolerance already allows in h (a temperature error of
        // 3e-4 K, cp·3e-4 K: under 1 J/kg); measured on both shipped tables
        // (20,000 random stages each, f64) against h at the entropy-matched
        // temperature: at most 0.81 J/kg apart, and as close as before to h
        // at a temperature bisected to 1e-12 K (99th percentile 1.13 J/kg
        // on the natural-gas table, 0.49 on CO2, before and after).
        // Otherwise (the step left the leaf, or no convergence) evaluated
        // at the root.
        if let (Some((pt, quality, flag, delta)), Some(c)) = (last, cut.as_ref()) {
            // Every cut here is at x2: only y is left to test.
            if c.holds_t(y) {
                if let Some(pt) = Self::checked::<FIN>(pt) {
                    let z = if FIN & W_Z != 0 {
                        pt.z + pt.dz_dt * delta
                    } else {
                        T::ONE
                    };
                    if z > T::ZERO {
                        return Isentropic {
                            t: y + self.t_min,
                            h: pt.h + pt.dh_dt * delta,
                            z,
                            quality,
                            flag,
                        };
                    }
                }
            }
        }
        let (pt, quality, flag) = self.eval_xy::<CUT, FIN>(x2, y, cut);
        if quality == Quality::Bad {
            return Isentropic { flag, ..bad };
        }
        Isentropic {
            t: y + self.t_min,
            h: pt.h,
            z: if FIN & W_Z != 0 { pt.z } else { T::ONE },
            quality: if converged {
                quality
            } else {
                quality.worst(Quality::Uncertain)
            },
            flag,
        }
    }

    /// Polytropic head ∫ v dp (= ∫ Z·R·T d ln p) along the path of constant
    /// polytropic efficiency η between the two measured states, by
    /// Simpson's rule in ξ = ln p. Along that path dh = v dp / η, and with
    /// ∂h/∂ln p = −R·T²·∂Z/∂T and ∂h/∂T = cp this gives
    /// dT/dξ = T·(a + b/η) (a = R·T·∂Z/∂T / cp, b = R·Z / cp) and
    /// dZ/dξ = ∂Z/∂ln p + ∂Z/∂T·dT/dξ. η starts from the trapezoid rule on
    /// ln T; each of [`POLYTROPIC_ITERATIONS`] passes takes T and Z at the
    /// path's midpoint from the cubic Hermite interpolants through both ends
    /// with those slopes (no further state) and η from Simpson's head. A
    /// consistency construction of this model, checked against a 32-step
    /// path integration on GERG-2008 in `tests/gerg_tables.rs`.
    fn polytropic_head(&self, e: &PathEnds<T>, actual: T) -> T {
        let half = T::of(0.5);
        let eighth = T::of(0.125) * e.ln_r;
        let [a1, a2] = e.a;
        let [b1, b2] = e.b;
        let [t1, t2] = e.t;
        let [z1, z2] = e.z;
        // Trapezoid: ln(T2/T1) = ln r / 2 · (a1 + a2 + (b1 + b2)/η).
        let mut inv_eta = (e.ln_t_ratio * T::of(2.0) / e.ln_r - a1 - a2) / (b1 + b2);
        let sixth = e.ln_r * self.gas_constant / T::of(6.0);
        let ends = z1 * t1 + z2 * t2;
        let mut head = actual / inv_eta;
        for _ in 0..POLYTROPIC_ITERATIONS {
            let dt1 = t1 * (a1 + b1 * inv_eta);
            let dt2 = t2 * (a2 + b2 * inv_eta);
            let t_mid = half * (t1 + t2) + eighth * (dt1 - dt2);
            let dz1 = e.z_x[0] + e.z_t[0] * dt1;
            let dz2 = e.z_x[1] + e.z_t[1] * dt2;
            let z_mid = half * (z1 + z2) + eighth * (dz1 - dz2);
            head = sixth * (ends + T::of(4.0) * z_mid * t_mid);
            inv_eta = actual / head;
        }
        head
    }

    /// Z, cp and the quality at (p, t) (the seam's mean path properties; a
    /// remembered end state). A pressure that is not positive gives the bad
    /// state's Z = 1, cp = 0 (`end_state`).
    #[inline(always)]
    fn z_cp_at(&self, p: T, t: T) -> (T, T, Quality) {
        let m = self.end_state::<true, true>(p, t, None, &mut None);
        (m.z, m.cp, m.quality)
    }

    /// [`TableGas::z_cp_at`] at both ends of a path, in one call.
    #[inline(never)]
    pub(crate) fn z_cp_pair(&self, a: (T, T), b: (T, T)) -> [(T, T, Quality); 2] {
        [self.z_cp_at(a.0, a.1), self.z_cp_at(b.0, b.1)]
    }

    /// Enthalpy at (p, t) with its quality and flag (a remembered end
    /// state if there is one, not remembered otherwise: see `end_state`;
    /// h = 0 where the pressure is not positive).
    #[inline(always)]
    fn enthalpy_at(&self, p: T, t: T) -> (T, Quality, TableFlag) {
        let m = self.end_state::<true, false>(p, t, None, &mut None);
        (m.h, m.quality, m.flag)
    }

    /// [`TableGas::enthalpy_at`] at a cooler's inlet and outlet, in one
    /// call.
    #[inline(never)]
    pub(crate) fn enthalpy_pair(&self, a: (T, T), b: (T, T)) -> [(T, Quality, TableFlag); 2] {
        [self.enthalpy_at(a.0, a.1), self.enthalpy_at(b.0, b.1)]
    }

    /// Enthalpy and entropy at (p, t) with the quality and flag (a
    /// remembered end state: see `end_state`).
    #[inline(always)]
    fn enthalpy_entropy_at(&self, p: T, t: T) -> (T, T, Quality, TableFlag) {
        let m = self.end_state::<true, true>(p, t, None, &mut None);
        (m.h, m.s, m.quality, m.flag)
    }

    /// [`TableGas::enthalpy_entropy_at`] at both ends of an isotherm, in
    /// one call.
    #[inline(never)]
    pub(crate) fn enthalpy_entropy_pair(
        &self,
        a: (T, T),
        b: (T, T),
    ) -> [(T, T, Quality, TableFlag); 2] {
        [
            self.enthalpy_entropy_at(a.0, a.1),
            self.enthalpy_entropy_at(b.0, b.1),
        ]
    }

    /// [`TableGas::z_cp_at`] alone (the tests).
    #[cfg(test)]
    fn z_cp(&self, p: T, t: T) -> (T, T, Quality) {
        self.z_cp_at(p, t)
    }

    /// [`TableGas::enthalpy_at`] alone (the tests).
    #[cfg(test)]
    fn enthalpy(&self, p: T, t: T) -> (T, Quality, TableFlag) {
        self.enthalpy_at(p, t)
    }

    /// One end state of a compression at (ln p, t) asking `END` of the
    /// patch; the seam's set ([`SEAM_ENDS`]) goes through the remembered
    /// end states.
    #[inline(always)]
    fn end<const END: u8>(
        &self,
        p: T,
        ln_p: Option<T>,
        t: T,
        cut: &mut Option<Cut<'a, T>>,
    ) -> (Patch<T>, Quality, TableFlag, T) {
        if END == SEAM_ENDS {
            let m = self.end_state::<false, true>(p, t, ln_p, cut);
            let pt = Patch {
                z: m.z,
                h: m.h,
                dh_dt: m.cp,
                s: m.s,
                ..Patch::ZERO
            };
            return (pt, m.quality, m.flag, m.ln_p);
        }
        let ln_p = match ln_p {
            Some(l) => l,
            None if p > T::ZERO => T::ln(p),
            None => return (Patch::ZERO, Quality::Bad, TableFlag::NotFinite, T::ZERO),
        };
        let (pt, q, f) = self.eval_on::<END, END>(ln_p, t, cut);
        (pt, q, f, ln_p)
    }

    /// The states of a compression from (p1, t1) to p2 (ln r = ln(p2/p1)):
    /// the suction state, the discharge state if `t2` is given, and the
    /// isentropic discharge state (its steps cut leaves asking `ISO` of the
    /// patch, its end `FIN`). With a discharge state the entropy match starts
    /// from it along its isobar, s(T) ≈ s2 + cp2·ln(T/T2) (to second order
    /// in the entropy difference), on the discharge state's cut, so it
    /// usually costs a cubic in T or two; without one it starts from
    /// T1·r^(R·(Z + T·∂Z/∂T)/cp), the slope of the isentrope at state 1.
    #[inline(always)]
    pub(crate) fn stage_states<const END: u8, const ISO: u8, const FIN: u8>(
        &self,
        p1: T,
        t1: T,
        p2: T,
        ln_r: T,
        t2: Option<T>,
    ) -> StageStates<T> {
        let (end1, q1, flag1, ln_p1) = self.end::<END>(p1, None, t1, &mut None);
        let ln_p2 = ln_p1 + ln_r;
        let mut out = StageStates {
            end1,
            q1,
            flag1,
            end2: end1,
            q2: Quality::Bad,
            flag2: TableFlag::NotFinite,
            iso: Isentropic {
                t: T::ZERO,
                h: T::ZERO,
                z: T::ONE,
                quality: Quality::Bad,
                flag: TableFlag::NotFinite,
            },
        };
        if q1 == Quality::Bad {
            return out;
        }
        let mut cut = None;
        let guess = match t2 {
            Some(t2) => {
                let (end2, q2, flag2, _) = self.end::<END>(p2, Some(ln_p2), t2, &mut cut);
                (out.end2, out.q2, out.flag2) = (end2, q2, flag2);
                if q2 == Quality::Bad {
                    if END & W_NO_DZ != 0 {
                        self.along_isentrope::<END>(&end1, ln_p1, t1, ln_r)
                    } else {
                        t1 * T::exp(
                            self.gas_constant * (end1.z + t1 * end1.dz_dt) / end1.dh_dt * ln_r,
                        )
                    }
                } else {
                    // T2·exp(d), d = (s1 − s2)/cp2, to second order.
                    let d = (end1.s - end2.s) / end2.dh_dt;
                    t2 * (T::ONE + d * (T::ONE + T::of(0.5) * d))
                }
            }
            None => self.along_isentrope::<END>(&end1, ln_p1, t1, ln_r),
        };
        out.iso = self.isentropic_ln::<ISO, FIN>(ln_p2, end1.s, guess, &mut cut);
        out
    }

    /// The entropy match's start without a discharge state:
    /// T1·r^(R·(Z + T·∂Z/∂T)/cp) from the suction state `end1` (asked
    /// `END` of the patch). Out of line: a train's compressions have a
    /// discharge state, and an inline closure made them build its captures
    /// on the stack.
    #[cold]
    #[inline(never)]
    fn along_isentrope<const END: u8>(&self, end1: &Patch<T>, ln_p1: T, t1: T, ln_r: T) -> T {
        // ∂Z/∂T at the suction, evaluated here if the end states leave it
        // out (the same cut and cubic: the same value).
        let dz_dt = if END & W_NO_DZ != 0 {
            self.eval::<{ W_Z | W_H }>(ln_p1, t1).0.dz_dt
        } else {
            end1.dz_dt
        };
        t1 * T::exp(self.gas_constant * (end1.z + t1 * dz_dt) / end1.dh_dt * ln_r)
    }

    /// One compression stage from its measured suction (p1, t1) and
    /// discharge (p2, t2): actual and isentropic head, polytropic head along
    /// the constant-efficiency path (Simpson's rule in ln p, midpoint state
    /// on the path: see the private `polytropic_head`), both efficiencies. Each value's
    /// quality is the worst of the states it used.
    pub fn stage(&self, p1: T, t1: T, p2: T, t2: T) -> TableStage<T> {
        let bad = TableStage {
            actual_head: Measured::bad(),
            isentropic_head: Measured::bad(),
            isentropic_temperature: Measured::bad(),
            isentropic_efficiency: Measured::bad(),
            polytropic_head: Measured::bad(),
            polytropic_efficiency: Measured::bad(),
        };
        if !(p1 > T::ZERO && p2 > p1) {
            return bad;
        }
        let ln_r = T::ln(p2 / p1);
        let d = self.stage_states::<{ W_Z | W_ZX | W_H | W_S }, { W_DS | W_H }, W_H>(
            p1,
            t1,
            p2,
            ln_r,
            Some(t2),
        );
        let q12 = d.q1.worst(d.q2);
        if q12 == Quality::Bad {
            return bad;
        }
        let (s1, s2) = (&d.end1, &d.end2);
        let actual = s2.h - s1.h;
        let q_s = d.q1.worst(d.iso.quality);
        let isentropic = d.iso.h - s1.h;
        let r = self.gas_constant;
        let ends = PathEnds {
            ln_r,
            ln_t_ratio: T::ln(t2 / t1),
            t: [t1, t2],
            z: [s1.z, s2.z],
            z_x: [s1.dz_dx, s2.dz_dx],
            z_t: [s1.dz_dt, s2.dz_dt],
            a: [r * t1 * s1.dz_dt / s1.dh_dt, r * t2 * s2.dz_dt / s2.dh_dt],
            b: [r * s1.z / s1.dh_dt, r * s2.z / s2.dh_dt],
        };
        let polytropic = self.polytropic_head(&ends, actual);
        let q_p = q12;
        let t2s = d.iso.t;
        let positive = actual > T::ZERO;
        let q_work = if positive { q12 } else { Quality::Bad };
        TableStage {
            actual_head: Measured::derived(actual, q_work),
            isentropic_head: Measured::derived(isentropic, q_s),
            isentropic_temperature: Measured::derived(t2s, q_s),
            isentropic_efficiency: Measured::derived(isentropic / actual, q_s.worst(q_work)),
            polytropic_head: Measured::derived(polytropic, q_p),
            polytropic_efficiency: Measured::derived(polytropic / actual, q_p.worst(q_work)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A 2×2 one-cell table of an ideal gas (Z = 1, constant cp): every
    /// identity is exact, so the patch must reproduce h = cp·T and
    /// s = cp·ln T − R·ln p exactly at the corners and closely inside (a
    /// consistency check of the patch and the identities).
    fn ideal_nodes() -> ([Node; 4], TableHeader) {
        let m = 0.028;
        let r = MOLAR_GAS_CONSTANT / m;
        let cp = 1040.0;
        let (p0, p1, t0, t1) = (1e5f64, 1e6f64, 280.0f64, 330.0f64);
        let node = |p: f64, t: f64| Node {
            z: 1.0,
            z_lnp: 0.0,
            z_t: 0.0,
            z_lnp_t: 0.0,
            h: (cp * t) as f32,
            s: (cp * t.ln() - r * p.ln()) as f32,
            cp: cp as f32,
            cp_lnp: 0.0,
            speed_of_sound: 340.0,
        };
        let header = TableHeader {
            label: *b"ideal test gas\0\0",
            mole_fractions: {
                let mut x = [0.0; 21];
                x[1] = 1.0;
                x
            },
            molar_mass: m,
            ln_p_min: p0.ln(),
            ln_p_max: p1.ln(),
            t_min: t0,
            t_max: t1,
            h_offset: 0.0,
            s_offset: 0.0,
            tolerance_h: 0.0,
            tolerance_s: 0.0,
            tolerance_z: 0.0,
            lattice_bits: 1,
            node_count: 4,
            cell_count: 1,
        };
        (
            [node(p0, t0), node(p1, t0), node(p0, t1), node(p1, t1)],
            header,
        )
    }

    #[test]
    fn one_cell_ideal_gas() {
        let (nodes, header) = ideal_nodes();
        let cells = [Cell {
            corners: [0, 1, 2, 3],
            children: 0,
            flags: 0,
        }];
        let data = TableData {
            header,
            nodes: &nodes,
            cells: &cells,
        };
        let gas = TableGas::<f64>::new(data).unwrap();
        let r = gas.gas_constant();
        for &(p, t) in &[(2e5, 290.0), (5e5, 305.0), (9.9e5, 329.0)] {
            let st = gas.state(p, t);
            assert_eq!(st.quality, Quality::Good);
            assert!((st.enthalpy - 1040.0 * t).abs() < 1e-3);
            // s is cp ln T interpolated by one cubic over 50 K: the Hermite
            // remainder max|f4| h^4/384 bounds the error by 0.017 J/(kg K).
            let s_exact = 1040.0 * f64::ln(t) - r * f64::ln(p);
            assert!(
                (st.entropy - s_exact).abs() < 0.017,
                "{p} {t} {}",
                st.entropy - s_exact
            );
            assert!((st.z - 1.0).abs() < 1e-12);
            assert!((st.cp - 1040.0).abs() < 1e-9);
        }
        assert_eq!(gas.state(0.5e5, 300.0).flag, TableFlag::OutsideEnvelope);
        assert_eq!(gas.state(2e5, 331.0).quality, Quality::Bad);
        assert_eq!(gas.state(f64::NAN, 300.0).flag, TableFlag::NotFinite);
        // Isentropic compression of an ideal gas: T2 = T1 r^(R/cp).
        let stage = gas.stage(2e5, 290.0, 2.2e5, 305.0);
        let t2s = 290.0 * f64::powf(1.1, r / 1040.0);
        assert!((stage.isentropic_temperature.value - t2s).abs() < 0.01);
        assert_eq!(stage.isentropic_head.quality, Quality::Good);
        assert!((stage.isentropic_head.value - 1040.0 * (t2s - 290.0)).abs() < 10.0);
    }

    /// The remembered end states give exactly what a fresh evaluation
    /// gives, whatever was evaluated in between (more states than slots, a
    /// state first remembered by a compression, then looked up), and a
    /// non-finite key never matches (a consistency check of the memo).
    #[test]
    fn remembered_states_equal_fresh_ones() {
        let (nodes, header) = ideal_nodes();
        let cells = [Cell {
            corners: [0, 1, 2, 3],
            children: 0,
            flags: 0,
        }];
        let data = TableData {
            header,
            nodes: &nodes,
            cells: &cells,
        };
        let gas = TableGas::<f64>::new(data).unwrap();
        let states: [(f64, f64); 11] =
            core::array::from_fn(|i| (2e5 + 5e4 * i as f64, 285.0 + 3.0 * i as f64));
        for round in 0..3 {
            for (i, &(p, t)) in states.iter().enumerate() {
                let fresh = TableGas::<f64>::new(data).unwrap();
                assert_eq!(gas.enthalpy(p, t), fresh.enthalpy(p, t), "{round} {i}");
                assert_eq!(gas.z_cp(p, t), fresh.z_cp(p, t), "{round} {i}");
                let d = gas.stage_states::<SEAM_ENDS, SEAM_ISO, SEAM_ISO_END>(
                    p,
                    t,
                    p * 1.2,
                    f64::ln(1.2),
                    Some(t + 10.0),
                );
                assert_eq!(d.end2.h, fresh.enthalpy(p * 1.2, t + 10.0).0);
                assert_eq!(
                    gas.enthalpy(p * 1.2, t + 10.0),
                    fresh.enthalpy(p * 1.2, t + 10.0)
                );
            }
        }
        assert_eq!(gas.enthalpy(f64::NAN, 300.0).1, Quality::Bad);
        assert_eq!(gas.z_cp(3e5, f64::NAN).2, Quality::Bad);
    }

    #[test]
    fn validation_names_the_field() {
        let (nodes, header) = ideal_nodes();
        let cells = [Cell {
            corners: [0, 1, 2, 4],
            children: 0,
            flags: 0,
        }];
        let err = validate(&TableData {
            header,
            nodes: &nodes,
            cells: &cells,
        })
        .unwrap_err();
        assert_eq!(err.field, "table_cells.corners");
        assert_eq!(err.index, Some(0));
        let mut bad_nodes = nodes;
        bad_nodes[2].cp = f32::NAN;
        let cells = [Cell {
            corners: [0, 1, 2, 3],
            children: 0,
            flags: 0,
        }];
        let err = validate(&TableData {
            header,
            nodes: &bad_nodes,
            cells: &cells,
        })
        .unwrap_err();
        assert_eq!((err.field, err.index), ("table_nodes", Some(2)));
        assert!(matches!(err.problem, Problem::NotFinite));
        // A child index pointing back to its parent would loop: refused.
        let loop_cells = [
            Cell {
                corners: [0; 4],
                children: 1,
                flags: SPLIT_LN_P | SPLIT_T,
            },
            Cell {
                corners: [0; 4],
                children: 1,
                flags: SPLIT_LN_P | SPLIT_T,
            },
            Cell::default(),
            Cell::default(),
            Cell::default(),
        ];
        let mut h = header;
        h.cell_count = 5;
        let err = validate(&TableData {
            header: h,
            nodes: &nodes,
            cells: &loop_cells,
        })
        .unwrap_err();
        assert_eq!((err.field, err.index), ("table_cells.children", Some(1)));
    }

    #[test]
    fn blob_round_trip_and_every_corruption_refused() {
        let (nodes, header) = ideal_nodes();
        let cells = [Cell {
            corners: [0, 1, 2, 3],
            children: 0,
            flags: 0,
        }];
        let data = TableData {
            header,
            nodes: &nodes,
            cells: &cells,
        };
        let mut buf = [0u8; 1024];
        let n = write_blob(&data, &mut buf).unwrap();
        let blob = &buf[..n];
        let table = PropertyTable::<8, 4>::from_blob(blob).unwrap();
        assert_eq!(table.data(), data);
        let mut kept = PropertyTable::<8, 4>::from_blob(blob).unwrap();
        for len in 0..n {
            assert!(
                kept.replace_from_blob(&blob[..len]).is_err(),
                "length {len}"
            );
            assert_eq!(kept.data(), data);
        }
        for bit in 0..n * 8 {
            let mut b = buf;
            b[bit / 8] ^= 1 << (bit % 8);
            assert!(kept.replace_from_blob(&b[..n]).is_err(), "bit {bit}");
            assert_eq!(kept.data(), data);
        }
    }
}
