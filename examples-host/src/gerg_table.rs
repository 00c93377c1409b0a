//! Property-table generator: GERG-2008 (through the `aga8` crate, a Rust
//! port of NIST's reference code for AGA Report No. 8 Part 1 / GERG-2008;
//! O. Kunz, W. Wagner, J. Chem. Eng. Data 57 (2012) 3032) evaluated over an
//! envelope and refined as a tree (halving a cell in ln p, in T or in both) until the kernel's own interpolation
//! ([`polytrope::gas::table`]) meets the tolerance at test points in every
//! cell. Cells that cannot meet it at the deepest level (a saturation line or
//! critical point crossing them) are flagged uncertain; cells without a
//! single-phase state, bad.
//!
//! For pure CO2 the phase (which density root to ask for) follows the
//! vapour-pressure ancillary of R. Span, W. Wagner, J. Phys. Chem. Ref.
//! Data 25 (1996) 1509, eq. 3.13 (coefficients from memory; checked against
//! CoolProp 8.0.0 saturation pressures in `tests/reference/`).

use std::collections::HashMap;

use aga8::composition::Composition;
use aga8::gerg2008::Gerg2008;
use polytrope::gas::table::{
    Cell, Node, TableData, TableGas, TableHeader, CELL_BAD, CELL_UNCERTAIN, SPLIT_LN_P, SPLIT_T,
};
use polytrope::Quality;

/// Operating envelope of a table.
#[derive(Clone, Copy, Debug)]
pub struct Envelope {
    /// Lowest pressure, Pa.
    pub p_min: f64,
    /// Highest pressure, Pa.
    pub p_max: f64,
    /// Lowest temperature, K.
    pub t_min: f64,
    /// Highest temperature, K.
    pub t_max: f64,
}

/// What to generate.
#[derive(Clone)]
pub struct Spec {
    /// ASCII label (up to 16 bytes kept).
    pub label: String,
    /// Mole fractions (sum 1).
    pub composition: Composition,
    /// Envelope.
    pub envelope: Envelope,
    /// Enthalpy tolerance, J/kg.
    pub tol_h: f64,
    /// Entropy tolerance, J/(kg K).
    pub tol_s: f64,
    /// Relative Z tolerance.
    pub tol_z: f64,
    /// Deepest refinement level.
    pub max_depth: u32,
    /// Pure CO2: use the saturation ancillary to pick the density root.
    pub pure_co2: bool,
}

/// CO2 critical temperature, K, and pressure, Pa (Span & Wagner 1996).
pub const CO2_TC: f64 = 304.1282;
/// CO2 critical pressure, Pa.
pub const CO2_PC: f64 = 7.3773e6;

/// CO2 vapour pressure, Pa, for T below the critical temperature (Span &
/// Wagner 1996 eq. 3.13, from memory).
pub fn co2_vapour_pressure(t: f64) -> f64 {
    let tau = 1.0 - t / CO2_TC;
    let a = [-7.060_208_7, 1.939_121_8, -1.646_359_7, -3.299_563_4];
    let e = [1.0, 1.5, 2.0, 4.0];
    let sum: f64 = a.iter().zip(e.iter()).map(|(a, e)| a * tau.powf(*e)).sum();
    CO2_PC * (CO2_TC / t * sum).exp()
}

/// One state of the equation of state, per kg.
#[derive(Clone, Copy, Debug)]
pub struct EosState {
    /// Compressibility factor.
    pub z: f64,
    /// ∂Z/∂ln p at constant T.
    pub z_lnp: f64,
    /// ∂Z/∂T at constant p.
    pub z_t: f64,
    /// Enthalpy, J/kg.
    pub h: f64,
    /// Entropy, J/(kg K).
    pub s: f64,
    /// cp, J/(kg K).
    pub cp: f64,
    /// Speed of sound, m/s.
    pub w: f64,
}

/// The aga8 composition of a table header's mole fractions (used by the
/// kernel's `tests/gerg_tables.rs`, which includes this file).
#[allow(dead_code)]
pub fn composition_of(h: &TableHeader) -> Composition {
    composition_from(&h.mole_fractions)
}

/// The aga8 composition of mole fractions in the order of
/// [`GERG_COMPONENTS`].
pub fn composition_from(x: &[f64; 21]) -> Composition {
    let g = |i: usize| x.get(i).copied().unwrap_or(0.0);
    Composition {
        methane: g(0),
        nitrogen: g(1),
        carbon_dioxide: g(2),
        ethane: g(3),
        propane: g(4),
        isobutane: g(5),
        n_butane: g(6),
        isopentane: g(7),
        n_pentane: g(8),
        hexane: g(9),
        heptane: g(10),
        octane: g(11),
        nonane: g(12),
        decane: g(13),
        hydrogen: g(14),
        oxygen: g(15),
        carbon_monoxide: g(16),
        water: g(17),
        hydrogen_sulfide: g(18),
        helium: g(19),
        argon: g(20),
    }
}

/// GERG-2008 for one composition.
pub struct Eos {
    gerg: Gerg2008,
    molar_mass: f64,
    pure_co2: bool,
}

impl Eos {
    /// Sets up the composition; `None` if aga8 refuses it.
    pub fn new(composition: &Composition, pure_co2: bool) -> Option<Eos> {
        let mut gerg = Gerg2008::new();
        gerg.set_composition(composition).ok()?;
        gerg.molar_mass();
        let molar_mass = gerg.mm / 1000.0;
        Some(Eos {
            gerg,
            molar_mass,
            pure_co2,
        })
    }

    /// Molar mass, kg/mol.
    pub fn molar_mass(&self) -> f64 {
        self.molar_mass
    }

    /// Whether (p, T) is on the liquid side of the CO2 saturation line
    /// (T below critical and p above the vapour pressure).
    pub fn liquid_side(&self, p: f64, t: f64) -> bool {
        self.pure_co2 && t < CO2_TC && p > co2_vapour_pressure(t)
    }

    /// Which side of the saturation line (p, T) lies on, for p below the
    /// critical pressure; `None` above it (no phase boundary there) and for
    /// mixtures.
    pub fn side(&self, p: f64, t: f64) -> Option<bool> {
        (self.pure_co2 && p < CO2_PC).then(|| self.liquid_side(p, t))
    }

    /// The state at p (Pa), T (K), or `None` without a single-phase root.
    pub fn state(&mut self, p: f64, t: f64) -> Option<EosState> {
        let g = &mut self.gerg;
        g.t = t;
        g.p = p / 1000.0;
        g.d = 0.0;
        let flag = if self.pure_co2 && t < CO2_TC && p > co2_vapour_pressure(t) {
            2
        } else {
            0
        };
        g.density(flag).ok()?;
        g.properties();
        if !(g.dp_dd > 0.0 && g.cp > 0.0 && g.w > 0.0 && g.z > 0.0) {
            return None;
        }
        let m = self.molar_mass;
        let rho_t = -g.dp_dt / g.dp_dd;
        let z_t = -g.z * (1.0 / t + rho_t / g.d);
        let z_lnp = g.z * (1.0 - g.p / (g.d * g.dp_dd));
        Some(EosState {
            z: g.z,
            z_lnp,
            z_t,
            h: g.h / m,
            s: g.s / m,
            cp: g.cp / m,
            w: g.w,
        })
    }

    /// A table node at (p, T): the state plus the cross derivatives by
    /// central differences (δT = 0.01 K, δ ln p = 1e-4).
    pub fn node(&mut self, p: f64, t: f64, h_off: f64, s_off: f64) -> Option<Node> {
        let c = self.state(p, t)?;
        let dt = 0.01;
        let dx: f64 = 1e-4;
        let tp = self.state(p, t + dt)?;
        let tm = self.state(p, t - dt)?;
        let pp = self.state(p * dx.exp(), t)?;
        let pm = self.state(p * (-dx).exp(), t)?;
        Some(Node {
            z: c.z as f32,
            z_lnp: c.z_lnp as f32,
            z_t: c.z_t as f32,
            z_lnp_t: ((tp.z_lnp - tm.z_lnp) / (2.0 * dt)) as f32,
            h: (c.h - h_off) as f32,
            s: (c.s - s_off) as f32,
            cp: c.cp as f32,
            cp_lnp: ((pp.cp - pm.cp) / (2.0 * dx)) as f32,
            speed_of_sound: c.w as f32,
        })
    }
}

/// A generated table with its generation statistics.
pub struct Generated {
    /// Header.
    pub header: TableHeader,
    /// Nodes.
    pub nodes: Vec<Node>,
    /// Cells.
    pub cells: Vec<Cell>,
    /// Largest sample errors outside flagged cells: h (J/kg), s (J/(kg K)),
    /// relative Z.
    pub max_error: (f64, f64, f64),
    /// Bounding box of flagged-uncertain leaves: (p_min, p_max, T_min,
    /// T_max), if any.
    pub uncertain_box: Option<(f64, f64, f64, f64)>,
    /// Number of uncertain and bad leaves.
    pub flagged: (usize, usize),
}

impl Generated {
    /// Borrowed view for the kernel.
    pub fn data(&self) -> TableData<'_> {
        TableData {
            header: self.header,
            nodes: &self.nodes,
            cells: &self.cells,
        }
    }
}

struct Builder {
    eos: Eos,
    spec: Spec,
    header: TableHeader,
    /// Nodes computed so far (candidate splits too), by lattice position.
    computed: HashMap<(u32, u32), Option<Node>>,
    nodes: Vec<Node>,
    node_at: HashMap<(u32, u32), u16>,
    cells: Vec<Cell>,
    max_error: (f64, f64, f64),
    uncertain_box: Option<(f64, f64, f64, f64)>,
    flagged: (usize, usize),
}

/// Fractions inside a cell where the interpolation is tested (the edge
/// midpoints are where a neighbour's hanging node sits).
const SAMPLES: [(f64, f64); 13] = [
    (0.25, 0.25),
    (0.5, 0.25),
    (0.75, 0.25),
    (0.25, 0.5),
    (0.5, 0.5),
    (0.75, 0.5),
    (0.25, 0.75),
    (0.5, 0.75),
    (0.75, 0.75),
    (0.5, 0.0),
    (0.5, 1.0),
    (0.0, 0.5),
    (1.0, 0.5),
];

/// A rectangle on the lattice: origin and size (powers of two) per axis.
#[derive(Clone, Copy)]
struct Rect {
    i0: u32,
    j0: u32,
    si: u32,
    sj: u32,
}

impl Rect {
    fn corners(&self) -> [(u32, u32); 4] {
        [
            (self.i0, self.j0),
            (self.i0 + self.si, self.j0),
            (self.i0, self.j0 + self.sj),
            (self.i0 + self.si, self.j0 + self.sj),
        ]
    }
}

/// Result of testing a candidate leaf.
#[derive(Clone, Copy)]
struct Test {
    fits: bool,
    mixed: bool,
    bad: bool,
    err: (f64, f64, f64),
    /// Largest error relative to its tolerance.
    score: f64,
}

impl Builder {
    fn lattice(&self) -> f64 {
        f64::from(1u32 << self.spec.max_depth)
    }

    fn coord(&self, i: u32, j: u32) -> (f64, f64) {
        let h = &self.header;
        let n = self.lattice();
        (
            h.ln_p_min + (h.ln_p_max - h.ln_p_min) * f64::from(i) / n,
            h.t_min + (h.t_max - h.t_min) * f64::from(j) / n,
        )
    }

    fn computed(&mut self, i: u32, j: u32) -> Option<Node> {
        if let Some(n) = self.computed.get(&(i, j)) {
            return *n;
        }
        let (x, t) = self.coord(i, j);
        let (h_off, s_off) = (self.header.h_offset, self.header.s_offset);
        let n = self.eos.node(x.exp(), t, h_off, s_off);
        self.computed.insert((i, j), n);
        n
    }

    fn node_index(&mut self, i: u32, j: u32) -> Result<u16, String> {
        if let Some(&k) = self.node_at.get(&(i, j)) {
            return Ok(k);
        }
        let node = self.computed(i, j).unwrap_or(Node {
            z: 1.0,
            cp: 1000.0,
            speed_of_sound: 300.0,
            ..Node::default()
        });
        let k = u16::try_from(self.nodes.len())
            .map_err(|_| "table too large: more than 65535 nodes".to_string())?;
        self.nodes.push(node);
        self.node_at.insert((i, j), k);
        Ok(k)
    }

    fn test_leaf(&mut self, r: Rect) -> Test {
        let mut bad = false;
        let mut nodes = Vec::with_capacity(4);
        for (i, j) in r.corners() {
            match self.computed(i, j) {
                Some(n) => nodes.push(n),
                None => {
                    bad = true;
                    nodes.push(Node {
                        z: 1.0,
                        cp: 1000.0,
                        speed_of_sound: 300.0,
                        ..Node::default()
                    });
                }
            }
        }
        let (x0, t0) = self.coord(r.i0, r.j0);
        let (x1, t1) = self.coord(r.i0 + r.si, r.j0 + r.sj);
        let mut header = self.header;
        header.ln_p_min = x0;
        header.ln_p_max = x1;
        header.t_min = t0;
        header.t_max = t1;
        header.node_count = 4;
        header.cell_count = 1;
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
        // A cell crossing the saturation line has points on both sides.
        let mut sides = [false, false];
        for &(x, t) in &[(x0, t0), (x1, t0), (x0, t1), (x1, t1)] {
            if let Some(side) = self.eos.side(x.exp(), t) {
                if let Some(seen) = sides.get_mut(usize::from(side)) {
                    *seen = true;
                }
            }
        }
        let mut err = (0.0f64, 0.0f64, 0.0f64);
        let Ok(gas) = TableGas::<f64>::new(data) else {
            return Test {
                fits: false,
                mixed: false,
                bad: true,
                err,
                score: f64::INFINITY,
            };
        };
        for &(fu, fv) in &SAMPLES {
            let x = x0 + fu * (x1 - x0);
            let t = t0 + fv * (t1 - t0);
            let p = x.exp();
            if let Some(side) = self.eos.side(p, t) {
                if let Some(seen) = sides.get_mut(usize::from(side)) {
                    *seen = true;
                }
            }
            let Some(exact) = self.eos.state(p, t) else {
                bad = true;
                continue;
            };
            let st = gas.state(p, t);
            if st.quality == Quality::Bad {
                bad = true;
                continue;
            }
            err.0 = err.0.max((st.enthalpy - exact.h).abs());
            err.1 = err.1.max((st.entropy - exact.s).abs());
            err.2 = err.2.max((st.z / exact.z - 1.0).abs());
        }
        let mixed = sides[0] && sides[1];
        let score = if mixed || bad {
            f64::INFINITY
        } else {
            (err.0 / self.spec.tol_h)
                .max(err.1 / self.spec.tol_s)
                .max(err.2 / self.spec.tol_z)
        };
        Test {
            fits: score <= 1.0,
            mixed,
            bad,
            err,
            score,
        }
    }

    fn leaf(&mut self, index: usize, r: Rect, t: Test) -> Result<(), String> {
        let corners = r.corners();
        let mut idx = [0u16; 4];
        for (d, (i, j)) in idx.iter_mut().zip(corners) {
            *d = self.node_index(i, j)?;
        }
        let mut flags = 0u8;
        if !t.fits {
            flags = if t.bad && !t.mixed {
                CELL_BAD
            } else {
                CELL_UNCERTAIN
            };
        }
        if flags == 0 {
            self.max_error.0 = self.max_error.0.max(t.err.0);
            self.max_error.1 = self.max_error.1.max(t.err.1);
            self.max_error.2 = self.max_error.2.max(t.err.2);
        } else if flags == CELL_UNCERTAIN {
            self.flagged.0 += 1;
            let (x0, t0) = self.coord(r.i0, r.j0);
            let (x1, t1) = self.coord(r.i0 + r.si, r.j0 + r.sj);
            let b = self
                .uncertain_box
                .get_or_insert((f64::INFINITY, 0.0, f64::INFINITY, 0.0));
            b.0 = b.0.min(x0.exp());
            b.1 = b.1.max(x1.exp());
            b.2 = b.2.min(t0);
            b.3 = b.3.max(t1);
        } else {
            self.flagged.1 += 1;
        }
        if let Some(c) = self.cells.get_mut(index) {
            *c = Cell {
                corners: idx,
                children: 0,
                flags,
            };
        }
        Ok(())
    }

    /// Builds cell `index` over `r`: a leaf if it fits, else split in the
    /// variable whose halves fit better (both if neither alone helps).
    fn build(&mut self, index: usize, r: Rect, level: u32) -> Result<(), String> {
        let t = self.test_leaf(r);
        let can_x = r.si > 1;
        let can_y = r.sj > 1;
        // Refine at least twice so the root is never one patch; a cell
        // crossing the saturation line stops (flagged) once it is within
        // about 1 K of it (1 K in T and 0.025 in ln p).
        let (x0, t0) = self.coord(r.i0, r.j0);
        let (x1, t1) = self.coord(r.i0 + r.si, r.j0 + r.sj);
        let in_band = t.mixed && t1 - t0 <= 1.0 && x1 - x0 <= 0.025;
        if (t.fits && level >= 2) || !(can_x || can_y) || in_band {
            return self.leaf(index, r, t);
        }
        let halves = |r: Rect, along_x: bool| -> [Rect; 2] {
            if along_x {
                let h = r.si / 2;
                [
                    Rect { si: h, ..r },
                    Rect {
                        i0: r.i0 + h,
                        si: h,
                        ..r
                    },
                ]
            } else {
                let h = r.sj / 2;
                [
                    Rect { sj: h, ..r },
                    Rect {
                        j0: r.j0 + h,
                        sj: h,
                        ..r
                    },
                ]
            }
        };
        let score = |b: &mut Builder, along_x: bool| -> f64 {
            halves(r, along_x)
                .iter()
                .map(|h| b.test_leaf(*h).score)
                .fold(0.0, f64::max)
        };
        let sx = if can_x {
            score(self, true)
        } else {
            f64::INFINITY
        };
        let sy = if can_y {
            score(self, false)
        } else {
            f64::INFINITY
        };
        // Split in the variable whose halves fit better; where neither
        // choice halves the error (a saturation line crossing the cell, a
        // state without a root, a poor start), split the longer side in
        // lattice units.
        let best = sx.min(sy);
        let halved = best <= 0.5 * t.score;
        let flags = if !halved {
            if can_x && (r.si >= r.sj || !can_y) {
                SPLIT_LN_P
            } else {
                SPLIT_T
            }
        } else if can_x && (sx <= sy || !can_y) {
            SPLIT_LN_P
        } else {
            SPLIT_T
        };
        let children: Vec<Rect> = match flags {
            f if f == SPLIT_LN_P => halves(r, true).to_vec(),
            f if f == SPLIT_T => halves(r, false).to_vec(),
            _ => {
                let [a, b] = halves(r, false);
                let [a0, a1] = halves(a, true);
                let [b0, b1] = halves(b, true);
                vec![a0, a1, b0, b1]
            }
        };
        let first = self.cells.len();
        let first16 = u16::try_from(first)
            .ok()
            .filter(|f| *f < u16::MAX - 4)
            .ok_or_else(|| "table too large: more than 65535 cells".to_string())?;
        self.cells
            .resize(self.cells.len() + children.len(), Cell::default());
        // The lattice bit that picks the child: the children's size as a
        // power of two of lattice units.
        let bit_x = if flags & SPLIT_LN_P != 0 {
            (r.si / 2).trailing_zeros() as u16
        } else {
            0
        };
        let bit_t = if flags & SPLIT_T != 0 {
            (r.sj / 2).trailing_zeros() as u16
        } else {
            0
        };
        if let Some(c) = self.cells.get_mut(index) {
            *c = Cell {
                corners: [bit_x, bit_t, 0, 0],
                children: first16,
                flags,
            };
        }
        for (q, child) in children.into_iter().enumerate() {
            self.build(first + q, child, level + 1)?;
        }
        Ok(())
    }
}

/// Generates a table for `spec`.
pub fn generate(spec: &Spec) -> Result<Generated, String> {
    let e = spec.envelope;
    if !(e.p_min > 0.0 && e.p_max > e.p_min && e.t_min > 0.0 && e.t_max > e.t_min) {
        return Err("envelope: need 0 < p_min < p_max and 0 < t_min < t_max".into());
    }
    if !(2..=16).contains(&spec.max_depth) {
        return Err("max depth must be 2..=16".into());
    }
    let mut eos = Eos::new(&spec.composition, spec.pure_co2)
        .ok_or_else(|| "composition refused by aga8 (mole fractions must sum to 1)".to_string())?;
    let mid = eos
        .state((e.p_min * e.p_max).sqrt(), 0.5 * (e.t_min + e.t_max))
        .ok_or_else(|| "no single-phase state at the middle of the envelope".to_string())?;
    let mut label = [0u8; 16];
    for (d, s) in label.iter_mut().zip(spec.label.bytes()) {
        *d = s;
    }
    let c = &spec.composition;
    let header = TableHeader {
        label,
        mole_fractions: [
            c.methane,
            c.nitrogen,
            c.carbon_dioxide,
            c.ethane,
            c.propane,
            c.isobutane,
            c.n_butane,
            c.isopentane,
            c.n_pentane,
            c.hexane,
            c.heptane,
            c.octane,
            c.nonane,
            c.decane,
            c.hydrogen,
            c.oxygen,
            c.carbon_monoxide,
            c.water,
            c.hydrogen_sulfide,
            c.helium,
            c.argon,
        ],
        molar_mass: eos.molar_mass(),
        ln_p_min: e.p_min.ln(),
        ln_p_max: e.p_max.ln(),
        t_min: e.t_min,
        t_max: e.t_max,
        h_offset: mid.h.round(),
        s_offset: mid.s.round(),
        tolerance_h: spec.tol_h as f32,
        tolerance_s: spec.tol_s as f32,
        tolerance_z: spec.tol_z as f32,
        lattice_bits: spec.max_depth as u8,
        node_count: 0,
        cell_count: 0,
    };
    let mut b = Builder {
        eos,
        spec: spec.clone(),
        header,
        computed: HashMap::new(),
        nodes: Vec::new(),
        node_at: HashMap::new(),
        cells: vec![Cell::default()],
        max_error: (0.0, 0.0, 0.0),
        uncertain_box: None,
        flagged: (0, 0),
    };
    let n = 1u32 << spec.max_depth;
    b.build(
        0,
        Rect {
            i0: 0,
            j0: 0,
            si: n,
            sj: n,
        },
        0,
    )?;
    let mut header = b.header;
    header.node_count = u16::try_from(b.nodes.len()).map_err(|_| "too many nodes".to_string())?;
    header.cell_count = u16::try_from(b.cells.len()).map_err(|_| "too many cells".to_string())?;
    Ok(Generated {
        header,
        nodes: b.nodes,
        cells: b.cells,
        max_error: b.max_error,
        uncertain_box: b.uncertain_box,
        flagged: b.flagged,
    })
}

/// Rust source defining `pub static NAME: TableData<'static>` (for
/// `include!` in firmware).
pub fn rust_source(g: &Generated, name: &str, command: &str) -> String {
    let h = &g.header;
    let mut s = format!(
        "// GENERATED by `{command}`; do not edit.\n\
         // GERG-2008 (aga8 crate) property table, {} nodes, {} cells.\n\
         /// Property table `{}`.\n\
         pub static {name}: polytrope::gas::table::TableData<'static> = polytrope::gas::table::TableData {{\n\
         \x20   header: polytrope::gas::table::TableHeader {{\n\
         \x20       label: {:?},\n\
         \x20       mole_fractions: {:?},\n\
         \x20       molar_mass: {:?},\n\
         \x20       ln_p_min: {:?},\n\
         \x20       ln_p_max: {:?},\n\
         \x20       t_min: {:?},\n\
         \x20       t_max: {:?},\n\
         \x20       h_offset: {:?},\n\
         \x20       s_offset: {:?},\n\
         \x20       tolerance_h: {:?},\n\
         \x20       tolerance_s: {:?},\n\
         \x20       tolerance_z: {:?},\n\
         \x20       lattice_bits: {},\n\
         \x20       node_count: {},\n\
         \x20       cell_count: {},\n\
         \x20   }},\n\
         \x20   nodes: &[\n",
        h.node_count,
        h.cell_count,
        String::from_utf8_lossy(&h.label).trim_end_matches('\0'),
        h.label,
        h.mole_fractions,
        h.molar_mass,
        h.ln_p_min,
        h.ln_p_max,
        h.t_min,
        h.t_max,
        h.h_offset,
        h.s_offset,
        h.tolerance_h,
        h.tolerance_s,
        h.tolerance_z,
        h.lattice_bits,
        h.node_count,
        h.cell_count,
    );
    let fl = |x: f32| {
        let t = format!("{x:?}");
        if t.contains('.') || t.contains('e') {
            t
        } else {
            format!("{t}.0")
        }
    };
    for n in &g.nodes {
        s.push_str(&format!(
            "        polytrope::gas::table::Node {{ z: {}, z_lnp: {}, z_t: {}, z_lnp_t: {}, h: {}, s: {}, cp: {}, cp_lnp: {}, speed_of_sound: {} }},\n",
            fl(n.z), fl(n.z_lnp), fl(n.z_t), fl(n.z_lnp_t), fl(n.h), fl(n.s), fl(n.cp), fl(n.cp_lnp), fl(n.speed_of_sound)
        ));
    }
    s.push_str("    ],\n    cells: &[\n");
    for c in &g.cells {
        s.push_str(&format!(
            "        polytrope::gas::table::Cell {{ corners: {:?}, children: {}, flags: {} }},\n",
            c.corners, c.children, c.flags
        ));
    }
    s.push_str("    ],\n};\n");
    s
}

/// Built-in compositions: name, description, composition, default envelope,
/// pure-CO2 flag.
/// GERG-2008's 21 components by name (the `aga8` crate's field names), in
/// the order of [`polytrope::gas::table::TableHeader::mole_fractions`].
pub const GERG_COMPONENTS: [&str; 21] = [
    "methane",
    "nitrogen",
    "carbon_dioxide",
    "ethane",
    "propane",
    "isobutane",
    "n_butane",
    "isopentane",
    "n_pentane",
    "hexane",
    "heptane",
    "octane",
    "nonane",
    "decane",
    "hydrogen",
    "oxygen",
    "carbon_monoxide",
    "water",
    "hydrogen_sulfide",
    "helium",
    "argon",
];

/// How far the given mole fractions may sum from 1 before they are refused
/// (within it they are scaled to sum to 1).
pub const COMPOSITION_SUM_TOLERANCE: f64 = 1e-4;

/// Parses a composition `name=fraction,name=fraction,...` (GERG-2008
/// component names from [`GERG_COMPONENTS`], `-` accepted for `_`; mole
/// fractions). Refused, naming the field: an item without `=`, an unknown
/// or repeated name, a fraction that is not a number in [0, 1], a sum more
/// than [`COMPOSITION_SUM_TOLERANCE`] from 1. Within it the fractions are
/// scaled to sum to 1 exactly.
pub fn parse_composition(text: &str) -> Result<Composition, String> {
    let mut x = [0.0f64; 21];
    let mut seen = [false; 21];
    for item in text.split(',').map(str::trim).filter(|i| !i.is_empty()) {
        let Some((name, value)) = item.split_once('=') else {
            return Err(format!(
                "--composition: '{item}' is not name=fraction (e.g. methane=0.9)"
            ));
        };
        let name = name.trim().to_ascii_lowercase().replace('-', "_");
        let Some(k) = GERG_COMPONENTS.iter().position(|c| *c == name) else {
            return Err(format!(
                "--composition.{name}: not a GERG-2008 component (known: {})",
                GERG_COMPONENTS.join(", ")
            ));
        };
        let (Some(seen_k), Some(x_k)) = (seen.get_mut(k), x.get_mut(k)) else {
            return Err(format!("--composition.{name}: not a GERG-2008 component"));
        };
        if *seen_k {
            return Err(format!("--composition.{name}: given twice"));
        }
        *seen_k = true;
        let v: f64 = value
            .trim()
            .parse()
            .map_err(|_| format!("--composition.{name}: '{}' is not a number", value.trim()))?;
        if !(v.is_finite() && (0.0..=1.0).contains(&v)) {
            return Err(format!(
                "--composition.{name}: {v} is outside 0 to 1 (a mole fraction)"
            ));
        }
        *x_k = v;
    }
    let sum: f64 = x.iter().sum();
    if !seen.iter().any(|s| *s) {
        return Err("--composition: no component given".into());
    }
    if (sum - 1.0).abs() > COMPOSITION_SUM_TOLERANCE || sum.is_nan() {
        return Err(format!(
            "--composition: the mole fractions sum to {sum}, not 1 (within {COMPOSITION_SUM_TOLERANCE})"
        ));
    }
    for v in &mut x {
        *v /= sum;
    }
    Ok(composition_from(&x))
}

pub fn preset(name: &str) -> Option<(&'static str, Composition, Envelope, bool)> {
    let env = |p0: f64, p1: f64, t0: f64, t1: f64| Envelope {
        p_min: p0 * 1e5,
        p_max: p1 * 1e5,
        t_min: t0,
        t_max: t1,
    };
    Some(match name {
        // The demo CO2 train (invented scenario): gas stages 1-67 bar a and
        // the pump's dense supercritical range to 150 bar a.
        "co2" => (
            "CO2 demo train",
            Composition {
                carbon_dioxide: 1.0,
                ..Default::default()
            },
            env(1.0, 150.0, 295.0, 450.0),
            true,
        ),
        // Dense supercritical CO2 (above the critical temperature) to 400 bar.
        "co2-dense" => (
            "CO2 dense",
            Composition {
                carbon_dioxide: 1.0,
                ..Default::default()
            },
            env(74.0, 400.0, 310.0, 480.0),
            true,
        ),
        // An invented lean natural-gas booster (not a real plant's gas).
        "ng-booster" => (
            "NG booster",
            Composition {
                methane: 0.93,
                ethane: 0.035,
                propane: 0.01,
                n_butane: 0.003,
                isobutane: 0.002,
                nitrogen: 0.01,
                carbon_dioxide: 0.01,
                ..Default::default()
            },
            env(1.0, 250.0, 240.0, 450.0),
            false,
        ),
        "methane" => (
            "methane",
            Composition {
                methane: 1.0,
                ..Default::default()
            },
            env(1.0, 250.0, 240.0, 450.0),
            false,
        ),
        "hydrogen" => (
            "hydrogen",
            Composition {
                hydrogen: 1.0,
                ..Default::default()
            },
            env(1.0, 250.0, 240.0, 450.0),
            false,
        ),
        "nitrogen" => (
            "nitrogen",
            Composition {
                nitrogen: 1.0,
                ..Default::default()
            },
            env(1.0, 250.0, 240.0, 450.0),
            false,
        ),
        // Dry air as N2 / O2 / Ar 0.7812 / 0.2096 / 0.0092 (common practice).
        "air" => (
            "air",
            Composition {
                nitrogen: 0.7812,
                oxygen: 0.2096,
                argon: 0.0092,
                ..Default::default()
            },
            env(1.0, 250.0, 240.0, 450.0),
            false,
        ),
        _ => return None,
    })
}
