//! `check`: reads a train file, builds every kernel object from it (train,
//! surge lines, orifices) and prints what follows from it: design ratios,
//! the equal-ratio (least-work) interstage pressures, and the surge and
//! control lines in the surge coordinates.

use std::path::PathBuf;

use clap::Args;
use polytrope::flow::Orifice;
use polytrope::staging::equal_ratio_interstage_pressure;

use crate::cli::CliError;
use crate::config::{self, Loaded};
use crate::out::{self, Grid};
use crate::surgemap;
use crate::train_any::{self, StagesJob};
use crate::units::{sig, Presentation};

/// Options of `check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The train file (TOML; `new-train` writes a starter).
    pub file: PathBuf,
    /// Output units, comma-separated (e.g. `bar,degC,kW,kJ/kg,t/h`); SI by default.
    #[arg(long, value_name = "LIST")]
    pub units: Option<String>,
}

/// Output units from `--units`.
pub fn presentation(units: Option<&str>) -> Result<Presentation, CliError> {
    match units {
        None => Ok(Presentation::default()),
        Some(u) => Presentation::parse(u).map_err(|e| CliError::Input(format!("--units: {e}"))),
    }
}

struct Build<'a>(&'a Loaded);

impl StagesJob for Build<'_> {
    type Out = ();
    fn run<const N: usize>(self) -> Result<(), CliError> {
        train_any::build::<f64, N>(self.0)?;
        train_any::build::<f32, N>(self.0)?;
        Ok(())
    }
}

/// Loads a file and builds every kernel object from it (both precisions).
pub fn load_and_build(path: &std::path::Path) -> Result<Loaded, CliError> {
    let l = config::load(path)?;
    train_any::with_stages(l.stage_count(), Build(&l))?;
    for i in 0..l.stage_count() {
        surgemap::monitor::<f64>(&l, i, 1.0)?;
        surgemap::monitor::<f32>(&l, i, 1.0)?;
        if let Some(cfg) = l.orifice_config::<f64>(i) {
            Orifice::new(cfg).map_err(|e| CliError::from(l.kernel_error(&e, Some(i))))?;
        }
    }
    Ok(l)
}

/// Runs `check`.
pub fn run(a: &CheckArgs) -> Result<String, CliError> {
    let show = presentation(a.units.as_deref())?;
    let l = load_and_build(&a.file)?;
    let f = &l.file;
    let mut s = format!(
        "{} check: {}\n{}\nConfiguration accepted by the kernel (f32 and f64 builds).\n{}\n\n",
        crate::BIN,
        a.file.display(),
        f.train.name,
        out::CAUTION
    );
    s.push_str(&format!(
        "Atmosphere {}; gas model: {}.\n\n",
        show.pressure_abs(l.atmosphere_pa),
        l.gas_description()
    ));
    let mut g = Grid::new(&[
        "stage",
        "kind",
        "design suction",
        "design discharge",
        "ratio",
        "cooler",
        "surge map",
        "readings mapped",
    ]);
    for (i, st) in f.stages.iter().enumerate() {
        let (p1, p2) = l.design.get(i).copied().unwrap_or((0.0, 0.0));
        g.row(vec![
            format!("S{}", i + 1),
            st.kind.clone(),
            show.pressure_abs(p1),
            show.pressure_abs(p2),
            format!("{:.3}", p2 / p1),
            if st.cooler.is_some() { "yes" } else { "no" }.into(),
            st.surge
                .as_ref()
                .map_or("no".into(), |sg| format!("{} points", sg.points.len())),
            st.readings.len().to_string(),
        ]);
    }
    g.render(&mut s);

    // Equal-ratio optimum over the compressor stages (the kernel's staging rule).
    let comp: Vec<usize> = f
        .stages
        .iter()
        .enumerate()
        .filter(|(_, st)| st.kind == "compressor")
        .map(|(i, _)| i)
        .collect();
    if let (Some(&first), Some(&last)) = (comp.first(), comp.last()) {
        let p_in = l.design.get(first).map_or(0.0, |d| d.0);
        let p_out = l.design.get(last).map_or(0.0, |d| d.1);
        let n = comp.len() as u32;
        s.push_str(&format!(
            "\nEqual-ratio (least-work) discharge pressures for the design overall ratio {:.3} \
             over {n} compressor stage{} (stage ratio {:.3}):\n",
            p_out / p_in,
            if n == 1 { "" } else { "s" },
            (p_out / p_in).powf(1.0 / f64::from(n))
        ));
        let mut g = Grid::new(&[
            "stage",
            "design discharge",
            "equal-ratio optimum",
            "deviation %",
        ]);
        for (k, &i) in comp.iter().enumerate() {
            let opt = equal_ratio_interstage_pressure(p_in, p_out / p_in, n, k as u32);
            let d = l.design.get(i).map_or(0.0, |d| d.1);
            g.row(vec![
                format!("S{}", i + 1),
                show.pressure_abs(d),
                show.pressure_abs(opt),
                format!("{:+.2}", 100.0 * (d / opt - 1.0)),
            ]);
        }
        g.render(&mut s);
    }

    for i in 0..l.stage_count() {
        let pts = surgemap::line_points(&l, i)?;
        if pts.is_empty() {
            continue;
        }
        s.push_str(&format!(
            "\nS{} surge and control lines in the surge coordinates (head number Y = (r^s - 1)/s, \
             s = (n-1)/n; flow number X = dp_flow / p_suction; control line X (1 + m)^2):\n",
            i + 1
        ));
        let mut g = Grid::new(&[
            "point",
            "Y -",
            "surge X -",
            "control X -",
            "control margin %",
        ]);
        for (k, p) in pts.iter().enumerate() {
            g.row(vec![
                format!("{k}"),
                format!("{:.5}", p.reduced_head),
                format!("{:.6}", p.surge_flow_squared),
                format!("{:.6}", p.control_flow_squared),
                format!("{:.1}", 100.0 * p.control_margin),
            ]);
        }
        g.render(&mut s);
    }
    for i in 0..l.stage_count() {
        if let Some(cfg) = l.orifice_config::<f64>(i) {
            s.push_str(&format!(
                "\nS{} flow element: ISO 5167-2 orifice, D = {} mm, d = {} mm, beta = {:.4}.\n",
                i + 1,
                sig(cfg.pipe_diameter * 1e3),
                sig(cfg.bore_diameter * 1e3),
                cfg.bore_diameter / cfg.pipe_diameter
            ));
        }
    }
    Ok(s)
}
