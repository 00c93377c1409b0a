//! Plots with `plotters`, as PNG (bitmap backend) and SVG, in one house
//! style: a light warm-grey background, thin dark axes, one colour per
//! stage, units on every axis. Text uses DejaVu Sans from the `dejavu`
//! crate (registered with plotters' `ab_glyph` backend), so no system fonts
//! are needed.
//!
//! - `map`: the operating trajectory in the surge coordinates (flow number
//!   X against head number Y) with the surge and control lines, points
//!   coloured by time.
//! - `stages`: polytropic efficiency, actual work and power per stage over time.
//! - `coolers`: approach, effectiveness and duty per cooler over time.
//! - `recycle`: power spent recirculating through the recycle valve.

use std::path::{Path, PathBuf};
use std::sync::Once;

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::{register_font, FontStyle};

use crate::cli::CliError;
use crate::config::Loaded;
use crate::out::disp;
use crate::replay::Series;
use crate::surgemap::LinePoint;
use crate::unit_system::Dimension;

const FONT: &str = "sans-serif";
const BACKGROUND: RGBColor = RGBColor(250, 248, 244);
const INK: RGBColor = RGBColor(40, 40, 48);
const GRID: RGBColor = RGBColor(222, 218, 210);
/// One colour per stage (an own palette: ink blue, brick, moss, ochre, plum, teal, slate, rust).
const STAGE_COLOURS: [RGBColor; 8] = [
    RGBColor(31, 78, 140),
    RGBColor(178, 58, 44),
    RGBColor(86, 128, 52),
    RGBColor(196, 140, 22),
    RGBColor(120, 70, 140),
    RGBColor(24, 130, 130),
    RGBColor(90, 96, 110),
    RGBColor(160, 90, 40),
];
const SURGE_COLOUR: RGBColor = RGBColor(170, 30, 40);
const CONTROL_COLOUR: RGBColor = RGBColor(210, 120, 20);

static FONTS: Once = Once::new();

fn fonts() {
    FONTS.call_once(|| {
        let _ = register_font(FONT, FontStyle::Normal, dejavu::sans::regular());
        let _ = register_font(FONT, FontStyle::Bold, dejavu::sans::bold());
    });
}

fn err(path: &Path, e: impl core::fmt::Display) -> CliError {
    CliError::Input(format!("{}: cannot draw: {e}", path.display()))
}

fn stage_colour(i: usize) -> RGBColor {
    STAGE_COLOURS
        .get(i % STAGE_COLOURS.len())
        .copied()
        .unwrap_or(INK)
}

/// Time colour ramp (deep blue -> teal -> amber), t in [0, 1].
fn time_colour(t: f64) -> RGBColor {
    let stops = [
        (20.0, 40.0, 110.0),
        (30.0, 150.0, 150.0),
        (235.0, 170.0, 40.0),
    ];
    let t = t.clamp(0.0, 1.0) * 2.0;
    let (a, b, f) = if t < 1.0 {
        (stops[0], stops[1], t)
    } else {
        (stops[1], stops[2], t - 1.0)
    };
    let mix = |x: f64, y: f64| (x + (y - x) * f).round().clamp(0.0, 255.0) as u8;
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// Finite (x, y) runs of a series (NaN breaks a line), thinned to about `max` points.
fn runs(x: &[f64], y: &[f64], max: usize) -> Vec<Vec<(f64, f64)>> {
    let stride = (x.len() / max.max(1)).max(1);
    let mut out = Vec::new();
    let mut cur = Vec::new();
    for (i, (&a, &b)) in x.iter().zip(y).enumerate() {
        if !(a.is_finite() && b.is_finite()) {
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            continue;
        }
        if i % stride == 0 {
            cur.push((a, b));
        }
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

fn range(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), v| {
            (l.min(v), h.max(v))
        });
    if !lo.is_finite() {
        return None;
    }
    let pad = ((hi - lo) * 0.08).max(hi.abs().max(1e-9) * 0.01);
    Some((lo - pad, hi + pad))
}

/// One time-series panel: a line per (label, colour, values), y scaled by `scale`.
struct Panel<'a> {
    title: &'a str,
    y_label: &'a str,
    scale: f64,
    lines: Vec<(String, RGBColor, &'a [f64])>,
}

fn draw_panels<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    heading: &str,
    seconds: &[f64],
    panels: &[Panel<'_>],
) -> Result<(), String> {
    root.fill(&BACKGROUND).map_err(|e| e.to_string())?;
    let (head, body) = root.split_vertically(50);
    head.draw(&Text::new(
        heading.to_string(),
        (20, 12),
        (FONT, 24).into_font().style(FontStyle::Bold).color(&INK),
    ))
    .map_err(|e| e.to_string())?;
    let areas = body.split_evenly((panels.len(), 1));
    let (hours, unit) = time_axis(seconds);
    let hours = hours.as_slice();
    let x_desc = format!("time, {unit}");
    let x_range = match (hours.first(), hours.last()) {
        (Some(&a), Some(&b)) if b > a => (a, b),
        _ => (0.0, 1.0),
    };
    for (area, p) in areas.iter().zip(panels) {
        let y = range(
            p.lines
                .iter()
                .flat_map(|(_, _, v)| v.iter().map(|x| x * p.scale)),
        )
        .unwrap_or((0.0, 1.0));
        let mut chart = ChartBuilder::on(area)
            .margin(12)
            .margin_right(190)
            .caption(p.title, (FONT, 20).into_font().color(&INK))
            .x_label_area_size(44)
            .y_label_area_size(90)
            .build_cartesian_2d(x_range.0..x_range.1, y.0..y.1)
            .map_err(|e| e.to_string())?;
        chart
            .configure_mesh()
            .light_line_style(GRID.mix(0.5))
            .bold_line_style(GRID)
            .axis_style(INK)
            .x_desc(x_desc.as_str())
            .y_desc(p.y_label)
            .label_style((FONT, 16).into_font().color(&INK))
            .axis_desc_style((FONT, 17).into_font().color(&INK))
            .x_labels(10)
            .y_labels(6)
            .draw()
            .map_err(|e| e.to_string())?;
        for (_, colour, values) in &p.lines {
            let scaled: Vec<f64> = values.iter().map(|v| v * p.scale).collect();
            for run in runs(hours, &scaled, 3000) {
                chart
                    .draw_series(LineSeries::new(run, colour.stroke_width(2)))
                    .map_err(|e| e.to_string())?;
            }
        }
        // Legend in the right margin, outside the data: a swatch and a name per line.
        let (w, _) = area.dim_in_pixel();
        let x0 = w as i32 - 170;
        for (k, (label, colour, _)) in p.lines.iter().enumerate() {
            let y = 50 + 26 * k as i32;
            area.draw(&PathElement::new(
                vec![(x0, y), (x0 + 28, y)],
                colour.stroke_width(4),
            ))
            .map_err(|e| e.to_string())?;
            area.draw(&Text::new(
                label.clone(),
                (x0 + 36, y - 9),
                (FONT, 16).into_font().color(&INK),
            ))
            .map_err(|e| e.to_string())?;
        }
    }
    root.present().map_err(|e| e.to_string())
}

fn prepare(dir: &Path, name: &str) -> Result<(PathBuf, PathBuf), CliError> {
    fonts();
    std::fs::create_dir_all(dir).map_err(|e| err(dir, e))?;
    Ok((
        dir.join(format!("{name}.png")),
        dir.join(format!("{name}.svg")),
    ))
}

/// Draws one figure as PNG and SVG: `both!(dir, name, (w, h), |root| body)`.
macro_rules! both {
    ($dir:expr, $name:expr, $size:expr, |$root:ident| $body:expr) => {{
        let (png, svg) = prepare($dir, $name)?;
        {
            let $root = BitMapBackend::new(&png, $size).into_drawing_area();
            $body.map_err(|e| err(&png, e))?;
        }
        {
            let $root = SVGBackend::new(&svg, $size).into_drawing_area();
            $body.map_err(|e| err(&svg, e))?;
        }
        vec![png, svg]
    }};
}

/// The map panel: surge and control lines and the trajectory coloured by time.
fn draw_map<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    heading: &str,
    line: &[LinePoint],
    q2: &[f64],
    hr: &[f64],
    seconds: &[f64],
) -> Result<(), String> {
    let (hours, unit) = time_axis(seconds);
    root.fill(&BACKGROUND).map_err(|e| e.to_string())?;
    let (head, body) = root.split_vertically(50);
    head.draw(&Text::new(
        heading.to_string(),
        (20, 12),
        (FONT, 24).into_font().style(FontStyle::Bold).color(&INK),
    ))
    .map_err(|e| e.to_string())?;
    let (plot, bar) = body.split_horizontally(body.dim_in_pixel().0.saturating_sub(150));
    let xs = line
        .iter()
        .flat_map(|p| [p.surge_flow_squared, p.control_flow_squared])
        .chain(q2.iter().copied());
    let ys = line
        .iter()
        .map(|p| p.reduced_head)
        .chain(hr.iter().copied());
    let (x0, x1) = range(xs).unwrap_or((0.0, 1.0));
    let (y0, y1) = range(ys).unwrap_or((0.0, 1.0));
    let mut chart = ChartBuilder::on(&plot)
        .margin(16)
        .x_label_area_size(56)
        .y_label_area_size(90)
        .build_cartesian_2d(x0.min(0.0)..x1, y0..y1)
        .map_err(|e| e.to_string())?;
    chart
        .configure_mesh()
        .light_line_style(GRID.mix(0.5))
        .bold_line_style(GRID)
        .axis_style(INK)
        .x_desc("flow number X = Δp_flow / p_suction, -")
        .y_desc("head number Y = (r^σ − 1)/σ, -")
        .label_style((FONT, 16).into_font().color(&INK))
        .axis_desc_style((FONT, 17).into_font().color(&INK))
        .x_label_formatter(&|v| format!("{v:.4}"))
        .draw()
        .map_err(|e| e.to_string())?;
    let n = hours.len().max(1);
    let t_max = hours.last().copied().unwrap_or(1.0).max(1e-9);
    let stride = (n / 4000).max(1);
    chart
        .draw_series(
            q2.iter()
                .zip(hr)
                .zip(&hours)
                .enumerate()
                .filter(|(i, ((a, b), _))| i % stride == 0 && a.is_finite() && b.is_finite())
                .map(|(_, ((a, b), t))| Circle::new((*a, *b), 2, time_colour(t / t_max).filled())),
        )
        .map_err(|e| e.to_string())?;
    let surge: Vec<(f64, f64)> = line
        .iter()
        .map(|p| (p.surge_flow_squared, p.reduced_head))
        .collect();
    let control: Vec<(f64, f64)> = line
        .iter()
        .map(|p| (p.control_flow_squared, p.reduced_head))
        .collect();
    chart
        .draw_series(LineSeries::new(surge.clone(), SURGE_COLOUR.stroke_width(3)))
        .map_err(|e| e.to_string())?
        .label("surge line")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], SURGE_COLOUR.stroke_width(3)));
    chart
        .draw_series(DashedLineSeries::new(
            control,
            10,
            6,
            CONTROL_COLOUR.stroke_width(3),
        ))
        .map_err(|e| e.to_string())?
        .label("control line")
        .legend(|(x, y)| {
            PathElement::new(vec![(x, y), (x + 24, y)], CONTROL_COLOUR.stroke_width(3))
        });
    chart
        .draw_series(
            surge
                .iter()
                .map(|p| Cross::new(*p, 6, SURGE_COLOUR.stroke_width(2))),
        )
        .map_err(|e| e.to_string())?;
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::LowerRight)
        .margin(10)
        .background_style(BACKGROUND.mix(0.9))
        .border_style(GRID)
        .label_font((FONT, 17).into_font().color(&INK))
        .draw()
        .map_err(|e| e.to_string())?;
    // Time colour bar.
    let (bw, bh) = bar.dim_in_pixel();
    let top = 40i32;
    let bottom = bh as i32 - 90;
    let steps = 60;
    for s in 0..steps {
        let f0 = s as f64 / steps as f64;
        let y0 = bottom - ((bottom - top) as f64 * f0) as i32;
        let y1 = bottom - ((bottom - top) as f64 * (f0 + 1.0 / steps as f64)) as i32 - 1;
        bar.draw(&Rectangle::new(
            [(30, y1), (60, y0)],
            time_colour(f0).filled(),
        ))
        .map_err(|e| e.to_string())?;
    }
    let label = |t: String, y: i32| Text::new(t, (68, y - 8), (FONT, 15).into_font().color(&INK));
    bar.draw(&label(
        format!(
            "{} {unit}",
            crate::units::sig((t_max * 10.0).round() / 10.0)
        ),
        top,
    ))
    .map_err(|e| e.to_string())?;
    bar.draw(&label(format!("0 {unit}"), bottom))
        .map_err(|e| e.to_string())?;
    bar.draw(&Text::new(
        "time".to_string(),
        (24, bottom + 20),
        (FONT, 16).into_font().color(&INK),
    ))
    .map_err(|e| e.to_string())?;
    let _ = bw;
    root.present().map_err(|e| e.to_string())
}

/// Times in a readable unit: (values, unit word).
fn time_axis(seconds: &[f64]) -> (Vec<f64>, &'static str) {
    let span = seconds.last().copied().unwrap_or(0.0) - seconds.first().copied().unwrap_or(0.0);
    let (div, unit) = if span > 3.0 * 3600.0 {
        (3600.0, "h")
    } else if span > 600.0 {
        (60.0, "min")
    } else {
        (1.0, "s")
    };
    (seconds.iter().map(|t| t / div).collect(), unit)
}

/// Writes the replay plots into `dir`; returns the files written.
pub fn replay_plots(dir: &Path, l: &Loaded, s: &Series) -> Result<Vec<PathBuf>, CliError> {
    let h = s.time.clone();
    let mut files = Vec::new();
    let name = &l.file.train.name;
    for (i, ss) in s.stages.iter().enumerate() {
        if !ss.q2.iter().any(|x| x.is_finite()) {
            continue;
        }
        let line = crate::surgemap::line_points(l, i)?;
        let heading = format!(
            "S{} operating points in the surge coordinates — {name}",
            i + 1
        );
        files.extend(both!(
            dir,
            &format!("map_s{}", i + 1),
            (1200, 820),
            |root| { draw_map(&root, &heading, &line, &ss.q2, &ss.hr, &s.time) }
        ));
    }
    files.extend(series_plots(dir, name, s, &h, |i| {
        l.file.stages.get(i).map_or(format!("S{}", i + 1), |st| {
            format!("S{} {}", i + 1, st.kind)
        })
    })?);
    let png = dir.join("ledger_periods.png");
    crate::ledger_plot::periods(
        &png,
        &format!("Where the power goes, period by period — {name}"),
        s,
    )?;
    files.push(png);
    Ok(files)
}

/// An axis label and scale for a quantity of dimension `d`.
fn axis(d: Dimension, word: &str, default: crate::out::Disp) -> (String, f64) {
    let shown = crate::out::disp_or(d, default);
    (format!("{word}, {}", shown.unit), shown.scale)
}

fn series_plots(
    dir: &Path,
    name: &str,
    s: &Series,
    h: &[f64],
    label: impl Fn(usize) -> String,
) -> Result<Vec<PathBuf>, CliError> {
    let mut files = Vec::new();
    let per = |f: fn(&crate::replay::StageSeries) -> &Vec<f64>| -> Vec<(String, RGBColor, &[f64])> {
        s.stages
            .iter()
            .enumerate()
            .filter(|(_, ss)| f(ss).iter().any(|x| x.is_finite()))
            .map(|(i, ss)| (label(i), stage_colour(i), f(ss).as_slice()))
            .collect()
    };
    // Axis units: the user's unit system (`--units`) if chosen, else kJ/kg,
    // kW and K (the tables' default). None of these panels shows an
    // absolute temperature, so a scale is enough (no offset).
    let work = axis(Dimension::SpecificWork, "work", disp::KJ_PER_KG);
    let power = axis(Dimension::Power, "power", disp::KW);
    let approach = axis(Dimension::TemperatureDiff, "approach", disp::KELVIN);
    let duty = axis(Dimension::HeatFlow, "duty", disp::KW);
    let recycle = axis(Dimension::Power, "recycle power", disp::KW);
    let stage_panels = vec![
        Panel {
            title: "Polytropic efficiency (any usable quality)",
            y_label: "ηp, %",
            scale: 100.0,
            lines: per(|s| &s.efficiency_any),
        },
        Panel {
            title: "Actual specific work",
            y_label: &work.0,
            scale: work.1,
            lines: per(|s| &s.work),
        },
        Panel {
            title: "Stage power",
            y_label: &power.0,
            scale: power.1,
            lines: per(|s| &s.power),
        },
    ];
    let heading = format!("Stages over time — {name}");
    files.extend(both!(dir, "stages", (1400, 1200), |root| {
        draw_panels(&root, &heading, h, &stage_panels)
    }));
    let cooler_lines = per(|s| &s.approach);
    if !cooler_lines.is_empty() {
        let cl =
            |f: fn(&crate::replay::StageSeries) -> &Vec<f64>| -> Vec<(String, RGBColor, &[f64])> {
                per(f)
                    .into_iter()
                    .map(|(l, c, v)| {
                        (
                            format!("cooler after {}", l.split(' ').next().unwrap_or("")),
                            c,
                            v,
                        )
                    })
                    .collect()
            };
        let panels = vec![
            Panel {
                title: "Approach (gas out − coolant in)",
                y_label: &approach.0,
                scale: approach.1,
                lines: cl(|s| &s.approach),
            },
            Panel {
                title: "Thermal effectiveness",
                y_label: "effectiveness, %",
                scale: 100.0,
                lines: cl(|s| &s.effectiveness),
            },
            Panel {
                title: "Heat duty",
                y_label: &duty.0,
                scale: duty.1,
                lines: cl(|s| &s.duty),
            },
        ];
        let heading = format!("Coolers over time — {name}");
        files.extend(both!(dir, "coolers", (1400, 1200), |root| {
            draw_panels(&root, &heading, h, &panels)
        }));
    }
    let rec = per(|s| &s.recycle);
    if !rec.is_empty() {
        let panels = vec![Panel {
            title: "Power spent recirculating (recycle flow × stage work)",
            y_label: &recycle.0,
            scale: recycle.1,
            lines: rec,
        }];
        let heading = format!("Recycle power — {name}");
        files.extend(both!(dir, "recycle", (1400, 560), |root| {
            draw_panels(&root, &heading, h, &panels)
        }));
    }
    Ok(files)
}

/// Writes the demo plots (the invented demo train over 1200 scans at an
/// assumed 1 s scan, and the invented surge-simulation trajectory) into `dir`.
/// The host's replay lane runs an ideal gas (train files describe one), so
/// the plots evaluate the demo's scans on constant-k ideal CO2 with the
/// demo's stages; the demo itself (`polytrope-host demo`) runs Peng–Robinson.
pub fn demo_plots(dir: &Path) -> Result<Vec<PathBuf>, CliError> {
    let demo_config = polytrope::demo::config::<f32>()?;
    let gas = polytrope::gas::IdealGas::from_spec(&polytrope::gas::CARBON_DIOXIDE, false, 1.0)?;
    let mut lane = crate::replay::Lane::<f32, { polytrope::demo::STAGES }> {
        train: polytrope::train::Train::new(polytrope::train::TrainConfig {
            gas: crate::host_gas::HostGas::Ideal(gas),
            stages: demo_config.stages,
            max_interstage_pressure_drop: demo_config.max_interstage_pressure_drop,
            steady_state: demo_config.steady_state,
        })?,
        monitors: vec![None; polytrope::demo::STAGES],
        extra: vec![crate::replay::Extra::default(); polytrope::demo::STAGES],
        orifices: vec![None; polytrope::demo::STAGES],
        ledger: polytrope::ledger::Ledger::bad(),
    };
    let mut s = Series {
        stages: vec![crate::replay::StageSeries::default(); polytrope::demo::STAGES],
        ..Series::default()
    };
    for i in 0..1200u32 {
        let scan = polytrope::demo::scan::<f32>(i);
        lane.train.update(&scan);
        lane.update_ledger(&scan);
        s.time.push(f64::from(i));
        s.line.push(u64::from(i));
        crate::replay::record_series(&mut s, &lane);
    }
    let h = s.time.clone();
    let mut files = series_plots(
        dir,
        "demo train (invented scenario; ideal-gas CO2)",
        &s,
        &h,
        |i| {
            if i < 4 {
                format!("S{} compressor", i + 1)
            } else {
                format!("S{} pump", i + 1)
            }
        },
    )?;
    // The loss ledger of the last scan as a waterfall.
    let ledger = crate::ledger_view::ledger(&lane.train, &polytrope::demo::scan::<f32>(1199));
    let png = dir.join("ledger_waterfall.png");
    crate::ledger_plot::waterfall(
        &png,
        "Where the power goes: demo train on ideal-gas CO2 (invented scenario), scan 1200 (f32)",
        &crate::ledger_view::lines(&ledger),
    )?;
    files.push(png);
    let png = dir.join("ledger_periods.png");
    crate::ledger_plot::periods(
        &png,
        "Where the power goes, period by period: demo train on ideal-gas CO2 (invented scenario)",
        &s,
    )?;
    files.push(png);
    // The surge simulation's trajectory on its map (invented scenario).
    let (line, q2, hr, t) = crate::surgemap::sim_trajectory()?;
    files.extend(both!(dir, "map_surge_sim", (1200, 820), |root| {
        draw_map(
            &root,
            "Surge simulation (invented air blower, protected): trajectory in the surge coordinates",
            &line,
            &q2,
            &hr,
            &t,
        )
    }));
    Ok(files)
}
