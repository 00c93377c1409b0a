//! GERG-2008 property tables (`src/gas/table.rs`, shipped under `tables/`)
//! against the equation of state they were made from.
//!
//! Oracle: the `aga8` crate (crates.io, a Rust port of NIST's reference code
//! for AGA Report No. 8 Part 1 / GERG-2008), evaluated directly at seeded
//! random off-grid points and over random compression stages. The thin
//! wrapper that turns aga8's molar outputs into per-kg values and picks the
//! density root is the generator's own (`examples-host/src/gerg_table.rs`,
//! included here), so the comparison isolates the interpolation.

// A test crate: a failed expectation is a test failure.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

#[path = "../examples-host/src/gerg_table.rs"]
#[allow(dead_code)]
mod gerg_table;

use aga8::composition::Composition;
use aga8::gerg2008::Gerg2008;
use gerg_table::{composition_of, Eos};
use polytrope::blob::BlobError;
use polytrope::gas::table::{
    PropertyTable, TableData, TableFlag, TableGas, TableHeader, TABLE_FORMAT_VERSION,
};
use polytrope::gas::MOLAR_GAS_CONSTANT;
use polytrope::tolerance;
use polytrope::Quality;

include!("../tables/ng_booster.rs");

/// Every shipped table: file name, blob.
const TABLES: [(&str, &[u8]); 7] = [
    ("ng_booster", include_bytes!("../tables/ng_booster.bin")),
    ("co2_demo", include_bytes!("../tables/co2_demo.bin")),
    ("co2_dense", include_bytes!("../tables/co2_dense.bin")),
    ("methane", include_bytes!("../tables/methane.bin")),
    ("hydrogen", include_bytes!("../tables/hydrogen.bin")),
    ("nitrogen", include_bytes!("../tables/nitrogen.bin")),
    ("air", include_bytes!("../tables/air.bin")),
];

type Table = PropertyTable<2048, 4096>;

fn load(blob: &[u8]) -> Box<Table> {
    Box::new(Table::from_blob(blob).expect("shipped table decodes"))
}

fn eos_for(h: &TableHeader) -> Eos {
    let pure_co2 = h.mole_fractions[2] == 1.0;
    Eos::new(&composition_of(h), pure_co2).expect("composition accepted by aga8")
}

/// splitmix64: a small seeded generator (reproducible sweeps).
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.next()
    }
}

#[test]
fn aga8_reproduces_its_published_check_point() {
    // Published check value of GERG-2008 (NIST's reference code, as shipped
    // with the aga8 crate): the 21-component gas at 400 K and 50 MPa,
    // Z = 1.17469067, molar mass 20.5427445 g/mol.
    let comp = Composition {
        methane: 0.778_24,
        nitrogen: 0.02,
        carbon_dioxide: 0.06,
        ethane: 0.08,
        propane: 0.03,
        isobutane: 0.001_5,
        n_butane: 0.003,
        isopentane: 0.000_5,
        n_pentane: 0.001_65,
        hexane: 0.002_15,
        heptane: 0.000_88,
        octane: 0.000_24,
        nonane: 0.000_15,
        decane: 0.000_09,
        hydrogen: 0.004,
        oxygen: 0.005,
        carbon_monoxide: 0.002,
        water: 0.000_1,
        hydrogen_sulfide: 0.002_5,
        helium: 0.007,
        argon: 0.001,
    };
    let mut g = Gerg2008::new();
    g.set_composition(&comp).unwrap();
    g.molar_mass();
    assert!((g.mm - 20.542_744_5).abs() < 5e-8, "molar mass {}", g.mm);
    g.t = 400.0;
    g.p = 50_000.0;
    g.density(0).unwrap();
    g.properties();
    assert!((g.z - 1.174_690_67).abs() < 5e-9, "Z {}", g.z);
}

#[test]
fn rust_source_and_blob_hold_the_same_table() {
    let t = load(TABLES[0].1);
    assert_eq!(t.data(), NG_BOOSTER);
    // Both ways of shipping a table validate.
    TableGas::<f32>::new(NG_BOOSTER).unwrap();
}

#[test]
fn every_truncation_and_bit_flip_of_a_shipped_blob_is_refused_and_the_table_kept() {
    let blob = TABLES[4].1; // hydrogen, the smallest
    let mut kept = load(blob);
    let before = kept.data().header;
    for len in 0..blob.len() {
        assert!(
            kept.replace_from_blob(&blob[..len]).is_err(),
            "length {len}"
        );
    }
    let mut b = blob.to_vec();
    for bit in 0..blob.len() * 8 {
        b[bit / 8] ^= 1 << (bit % 8);
        assert!(kept.replace_from_blob(&b).is_err(), "bit {bit}");
        b[bit / 8] ^= 1 << (bit % 8);
    }
    assert_eq!(kept.data().header, before);
    assert_eq!(kept.data().nodes.len(), usize::from(before.node_count));
    // A well-formed blob of another format version: refused by version.
    let mut v = blob.to_vec();
    v[5..7].copy_from_slice(&(TABLE_FORMAT_VERSION + 1).to_le_bytes());
    let n = v.len();
    let crc = polytrope::blob::checksum(&v[..n - 4]);
    v[n - 4..].copy_from_slice(&crc.to_le_bytes());
    assert!(matches!(
        kept.replace_from_blob(&v),
        Err(BlobError::WrongVersion { .. })
    ));
    // Too small a capacity: refused, naming the list.
    let small = PropertyTable::<64, 64>::from_blob(TABLES[0].1).map(|_| ());
    assert!(
        matches!(
            small,
            Err(BlobError::Capacity {
                field: "table_nodes",
                found: 143,
                ..
            })
        ),
        "{small:?}"
    );
    // The table still answers after all that.
    let gas = TableGas::<f64>::new(kept.data()).unwrap();
    assert_eq!(gas.state(20e5, 300.0).quality, Quality::Good);
}

/// Largest |table − aga8| over seeded points: (h J/kg, s J/(kg K), Z
/// relative), counts of (good, uncertain, bad).
fn property_errors(blob: &[u8], seed: u64, n: usize) -> ((f64, f64, f64), (usize, usize, usize)) {
    let t = load(blob);
    let data: TableData<'_> = t.data();
    let h = data.header;
    let gas = TableGas::<f64>::new(data).unwrap();
    let mut eos = eos_for(&h);
    let mut rng = Rng(seed);
    let (x0, x1, t0, t1) = (h.ln_p_min, h.ln_p_max, h.t_min, h.t_max);
    let mut err = (0.0f64, 0.0f64, 0.0f64);
    let mut counts = (0, 0, 0);
    for k in 0..n {
        // A third uniform, a third within 2 % of an edge, a third in the
        // band of interest (CO2: around the critical point; others: the
        // cold high-pressure corner where real-gas effects peak).
        let (x, temp) = match k % 3 {
            0 => (rng.range(x0, x1), rng.range(t0, t1)),
            1 => {
                let e = 0.02 * rng.next();
                match (k / 3) % 4 {
                    0 => (x0 + e * (x1 - x0), rng.range(t0, t1)),
                    1 => (x1 - e * (x1 - x0), rng.range(t0, t1)),
                    2 => (rng.range(x0, x1), t0 + e * (t1 - t0)),
                    _ => (rng.range(x0, x1), t1 - e * (t1 - t0)),
                }
            }
            _ => {
                if h.mole_fractions[2] == 1.0 {
                    (
                        rng.range(55e5f64.ln().max(x0), 100e5f64.ln().min(x1)),
                        rng.range(t0, 330.0f64.min(t1)),
                    )
                } else {
                    (
                        rng.range(0.5 * (x0 + x1), x1),
                        rng.range(t0, 0.5 * (t0 + t1)),
                    )
                }
            }
        };
        let p = x.exp();
        let st = gas.state(p, temp);
        match st.quality {
            Quality::Good => counts.0 += 1,
            Quality::Uncertain => {
                counts.1 += 1;
                continue;
            }
            _ => {
                counts.2 += 1;
                continue;
            }
        }
        let exact = eos.state(p, temp).expect("aga8 state inside a good cell");
        err.0 = err.0.max((st.enthalpy - exact.h).abs());
        err.1 = err.1.max((st.entropy - exact.s).abs());
        err.2 = err.2.max((st.z / exact.z - 1.0).abs());
    }
    (err, counts)
}

#[test]
fn interpolation_matches_gerg_2008_at_random_off_grid_points() {
    eprintln!("table        max |dh| J/kg  max |ds| J/(kg K)  max |dZ|/Z  good/uncertain/bad");
    for (i, (name, blob)) in TABLES.iter().enumerate() {
        let ((eh, es, ez), (good, unc, bad)) = property_errors(blob, 0x7461_626c + i as u64, 3000);
        let h = load(blob).data().header;
        eprintln!("{name:<12} {eh:>12.3} {es:>17.5} {ez:>11.2e}  {good}/{unc}/{bad}");
        // Bounds: the per-cell tolerance the generator enforced at its test
        // points, with margin for maxima between them; Z within the 0.02 %
        // the issue sets.
        assert!(eh <= 2.0 * f64::from(h.tolerance_h), "{name}: h {eh}");
        assert!(es <= 2.0 * f64::from(h.tolerance_s), "{name}: s {es}");
        assert!(ez <= 2e-4, "{name}: Z {ez}");
        assert!(
            good > 2500 || (*name == "co2_demo" && good > 2000),
            "{name}: {good} good"
        );
    }
}

/// One compression stage on aga8 along a constant-efficiency path
/// (dh = v dp / η, RK4 in ln p, 32 steps, T from (p, h) by Newton).
struct Reference {
    t2: f64,
    actual: f64,
    isentropic: f64,
    eta_p: f64,
    eta_p_simpson: f64,
}

fn t_from_ph(eos: &mut Eos, p: f64, h: f64, mut t: f64) -> Option<f64> {
    for _ in 0..40 {
        let st = eos.state(p, t)?;
        let dt = (st.h - h) / st.cp;
        t -= dt;
        if dt.abs() < 1e-10 * t {
            return Some(t);
        }
    }
    None
}

fn reference_stage(eos: &mut Eos, p1: f64, t1: f64, p2: f64, eta: f64) -> Option<Reference> {
    let r = MOLAR_GAS_CONSTANT / eos.molar_mass();
    let s1 = eos.state(p1, t1)?;
    let steps = 32;
    let dx = (p2 / p1).ln() / f64::from(steps);
    let mut x = p1.ln();
    let mut h = s1.h;
    let mut t = t1;
    let slope = |eos: &mut Eos, x: f64, h: f64, tg: f64| -> Option<(f64, f64)> {
        let tt = t_from_ph(eos, x.exp(), h, tg)?;
        let st = eos.state(x.exp(), tt)?;
        Some((st.z * r * tt / eta, tt))
    };
    for _ in 0..steps {
        let (k1, _) = slope(eos, x, h, t)?;
        let (k2, _) = slope(eos, x + dx / 2.0, h + dx / 2.0 * k1, t)?;
        let (k3, _) = slope(eos, x + dx / 2.0, h + dx / 2.0 * k2, t)?;
        let (k4, tn) = slope(eos, x + dx, h + dx * k3, t)?;
        h += dx / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
        x += dx;
        t = t_from_ph(eos, x.exp(), h, tn)?;
    }
    let s2 = eos.state(p2, t)?;
    let actual = s2.h - s1.h;
    // Isentropic discharge: Newton on T for s(p2, T) = s1.
    let mut ts = t1 * (p2 / p1).powf(s1.z * r / s1.cp);
    for _ in 0..40 {
        let st = eos.state(p2, ts)?;
        let d = (st.s - s1.s) * ts / st.cp;
        ts -= d;
        if d.abs() < 1e-10 * ts {
            break;
        }
    }
    let isentropic = eos.state(p2, ts)?.h - s1.h;
    // The table model's polytropic method (Simpson with T and Z at the path
    // midpoint from Hermite interpolants through the ends, `polytropic_head`
    // in src/gas/table.rs), repeated here on aga8 states: the difference to the table isolates
    // the interpolation, the difference to `eta` is the method's own.
    let ln_r = (p2 / p1).ln();
    let (a1, b1) = (r * t1 * s1.z_t / s1.cp, r * s1.z / s1.cp);
    let (a2, b2) = (r * t * s2.z_t / s2.cp, r * s2.z / s2.cp);
    let mut inv_eta = ((t / t1).ln() * 2.0 / ln_r - a1 - a2) / (b1 + b2);
    let mut head = actual / inv_eta;
    for _ in 0..polytrope::gas::table::POLYTROPIC_ITERATIONS {
        let (dt1, dt2) = (t1 * (a1 + b1 * inv_eta), t * (a2 + b2 * inv_eta));
        let tm = 0.5 * (t1 + t) + ln_r / 8.0 * (dt1 - dt2);
        let (dz1, dz2) = (s1.z_lnp + s1.z_t * dt1, s2.z_lnp + s2.z_t * dt2);
        let zm = 0.5 * (s1.z + s2.z) + ln_r / 8.0 * (dz1 - dz2);
        head = r * ln_r / 6.0 * (s1.z * t1 + 4.0 * zm * tm + s2.z * t);
        inv_eta = actual / head;
    }
    Some(Reference {
        t2: t,
        actual,
        isentropic,
        eta_p: eta,
        eta_p_simpson: head / actual,
    })
}

/// Largest stage errors over random stages: (actual head, isentropic head)
/// relative to the stage's enthalpy rise; polytropic efficiency against
/// the same Simpson method on aga8 (interpolation) and against the exact
/// path (total); stages used.
fn stage_errors(blob: &[u8], seed: u64, n: usize) -> ([f64; 4], usize) {
    let t = load(blob);
    let data = t.data();
    let h = data.header;
    let gas = TableGas::<f64>::new(data).unwrap();
    let mut eos = eos_for(&h);
    let mut rng = Rng(seed);
    let (p_min, p_max) = (h.ln_p_min.exp(), h.ln_p_max.exp());
    let mut worst = [0.0f64; 4];
    let mut used = 0;
    let mut tries = 0;
    while used < n && tries < 20 * n {
        tries += 1;
        let ratio = rng.range(1.3, 3.5);
        let p1 = (rng.range((p_min * 1.01).ln(), (p_max / ratio).ln())).exp();
        let t1 = rng.range(h.t_min + 2.0, h.t_max - 60.0);
        let eta = rng.range(0.70, 0.86);
        let p2 = p1 * ratio;
        let Some(r) = reference_stage(&mut eos, p1, t1, p2, eta) else {
            continue;
        };
        if r.t2 > h.t_max - 1.0 {
            continue;
        }
        let st = gas.stage(p1, t1, p2, r.t2);
        let q = st
            .polytropic_efficiency
            .quality
            .worst(st.isentropic_head.quality);
        if q != Quality::Good {
            continue;
        }
        used += 1;
        let rise = r.actual;
        let e = [
            (st.actual_head.value - r.actual).abs() / rise,
            (st.isentropic_head.value - r.isentropic).abs() / rise,
            (st.polytropic_efficiency.value - r.eta_p_simpson).abs(),
            (st.polytropic_efficiency.value - r.eta_p).abs(),
        ];
        for (w, x) in worst.iter_mut().zip(e) {
            *w = w.max(x);
        }
    }
    (worst, used)
}

#[test]
fn stage_quantities_on_tables_match_gerg_2008() {
    eprintln!("table        stages  actual head  isentropic head  eta_p (interp.)  eta_p (total, vs 32-step path)");
    for (i, (name, blob)) in TABLES.iter().enumerate() {
        let (w, used) = stage_errors(blob, 0x7374_6167 + i as u64, 150);
        eprintln!(
            "{name:<12} {used:>6}  {:>10.2e}  {:>15.2e}  {:>15.2e}  {:>15.2e}",
            w[0], w[1], w[2], w[3]
        );
        assert!(used >= 100, "{name}: only {used} good stages");
        // Targets of the issue: heads within 0.05 % of the stage's rise,
        // polytropic efficiency within 0.1 point.
        assert!(w[0] <= 5e-4, "{name}: actual head {}", w[0]);
        assert!(w[1] <= 5e-4, "{name}: isentropic head {}", w[1]);
        assert!(w[2] <= 1e-3, "{name}: eta_p interpolation {}", w[2]);
        assert!(w[3] <= 1e-3, "{name}: eta_p total {}", w[3]);
    }
}

#[test]
fn outside_the_envelope_is_bad_and_the_critical_band_uncertain() {
    let t = load(TABLES[1].1);
    let gas = TableGas::<f64>::new(t.data()).unwrap();
    let below = gas.state(0.5e5, 300.0);
    assert_eq!(
        (below.quality, below.flag),
        (Quality::Bad, TableFlag::OutsideEnvelope)
    );
    assert_eq!(below.enthalpy, 0.0);
    let hot = gas.state(10e5, 460.0);
    assert_eq!(hot.flag, TableFlag::OutsideEnvelope);
    // At CO2's critical point (Span & Wagner 1996: 304.1282 K, 7.3773 MPa)
    // and on its dew line (Span & Wagner's ancillary): flagged.
    let crit = gas.state(73.773e5, 304.2);
    assert!(crit.quality != Quality::Good, "{crit:?}");
    let near = gas.state(76e5, 306.0);
    assert_eq!(
        (near.quality, near.flag),
        (Quality::Uncertain, TableFlag::FlaggedBand)
    );
    let dew = gas.state(gerg_table::co2_vapour_pressure(298.0) * 1.0005, 298.0);
    assert!(dew.quality != Quality::Good, "{dew:?}");
    // Well away from it: good.
    assert_eq!(gas.state(20e5, 330.0).quality, Quality::Good);
    assert_eq!(gas.state(120e5, 420.0).quality, Quality::Good);
}

#[test]
fn f32_device_build_agrees_with_f64_on_tables() {
    let t = load(TABLES[0].1);
    let g32 = TableGas::<f32>::new(t.data()).unwrap();
    let g64 = TableGas::<f64>::new(t.data()).unwrap();
    let mut rng = Rng(0x0066_3332);
    let mut worst = (0.0f64, 0.0f64);
    for _ in 0..2000 {
        let p1 = rng.range(2e5f64.ln(), 80e5f64.ln()).exp();
        let ratio = rng.range(1.3, 3.0);
        let t1 = rng.range(250.0, 330.0);
        let t2 = t1 * ratio.powf(rng.range(0.2, 0.3));
        if t2 > 449.0 {
            continue;
        }
        let a = g32.stage(p1 as f32, t1 as f32, (p1 * ratio) as f32, t2 as f32);
        let b = g64.stage(p1, t1, p1 * ratio, t2);
        for (x, y) in [
            (a.actual_head, b.actual_head),
            (a.isentropic_head, b.isentropic_head),
            (a.polytropic_head, b.polytropic_head),
        ] {
            assert!(
                tolerance::SPECIFIC_WORK.accepts(f64::from(x.value), y.value),
                "head {} vs {} at {p1} {t1} {} {t2}: {a:?} {b:?}",
                x.value,
                y.value,
                p1 * ratio
            );
            worst.0 = worst
                .0
                .max((f64::from(x.value) - y.value).abs() / y.value.abs());
        }
        for (x, y) in [
            (a.isentropic_efficiency, b.isentropic_efficiency),
            (a.polytropic_efficiency, b.polytropic_efficiency),
        ] {
            assert!(
                tolerance::EFFICIENCY.accepts(f64::from(x.value), y.value),
                "efficiency {} vs {}",
                x.value,
                y.value
            );
            worst.1 = worst.1.max((f64::from(x.value) - y.value).abs());
        }
    }
    eprintln!(
        "f32 vs f64 on the NG table: heads {:.2e} relative, efficiencies {:.2e}",
        worst.0, worst.1
    );
}
