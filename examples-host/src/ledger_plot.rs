//! A waterfall of the loss ledger (`polytrope::ledger`) as a PNG: the
//! isothermal power of the duty as the first bar, each cause as a floating
//! bar from the running total, the measured power as the last bar; kW on
//! the axis and beside each bar, with its quality mark (`?` uncertain,
//! `--` bad). Text uses DejaVu Sans from the `dejavu` crate.

use std::path::Path;
use std::sync::Once;

use plotters::prelude::*;
use plotters::style::{register_font, FontStyle};
use polytrope::ledger::Cause;
use polytrope::Quality;

use crate::cli::CliError;
use crate::ledger_view::Line;

const FONT: &str = "sans-serif";
const BACKGROUND: RGBColor = RGBColor(250, 248, 244);
const INK: RGBColor = RGBColor(40, 40, 48);
const GRID: RGBColor = RGBColor(222, 218, 210);
/// The duty and the measured total.
const ENDS: RGBColor = RGBColor(31, 78, 140);
/// A cause that costs power.
const COST: RGBColor = RGBColor(178, 58, 44);
/// A cause that saves power (negative line).
const GAIN: RGBColor = RGBColor(86, 128, 52);
/// Pump stages: power outside the gas ledger, not a loss.
const OUTSIDE: RGBColor = RGBColor(90, 96, 110);
/// A line without a usable value.
const UNUSABLE: RGBColor = RGBColor(170, 170, 170);

static FONTS: Once = Once::new();

fn fonts() {
    FONTS.call_once(|| {
        let _ = register_font(FONT, FontStyle::Normal, dejavu::sans::regular());
        let _ = register_font(FONT, FontStyle::Bold, dejavu::sans::bold());
    });
}

fn label(c: Cause, stage: Option<u8>) -> String {
    let short = match c {
        Cause::Isothermal => "Isothermal power (the duty)",
        Cause::StageCount => "Stage count",
        Cause::PressureDrops => "Interstage pressure drops",
        Cause::PressureSplit => "Unequal pressure split",
        Cause::CoolantTemperature => "Coolant temperature",
        Cause::Intercooling => "Intercooling",
        Cause::StageInefficiency => "Inefficiency",
        Cause::Recycle => "Recycle",
        Cause::Pumps => "Pumps (outside the gas ledger)",
        Cause::Remainder => "Remainder",
        Cause::MeasuredTotal => "Measured power",
    };
    match stage {
        Some(i) => format!("{short}, stage {}", u32::from(i) + 1),
        None => short.to_string(),
    }
}

fn mark(q: Quality) -> &'static str {
    match q {
        Quality::Good => "",
        Quality::Uncertain => "?",
        Quality::Bad => " --",
        Quality::NotApplicable => " n/a",
    }
}

/// Writes the waterfall of `lines` to `path` (PNG), titled `heading`.
pub fn waterfall(path: &Path, heading: &str, lines: &[Line]) -> Result<(), CliError> {
    fonts();
    let err = |e: String| CliError::Input(format!("{}: cannot draw: {e}", path.display()));
    // Bars: (label, from kW, to kW, colour, value kW, quality).
    let mut bars = Vec::new();
    let mut running = 0.0_f64;
    for (c, i, v) in lines {
        let kw = v.value / 1e3;
        let usable = v.quality.is_usable();
        match c {
            Cause::Isothermal | Cause::MeasuredTotal => {
                bars.push((label(*c, *i), 0.0, kw, ENDS, kw, v.quality));
                running = kw;
            }
            _ => {
                let colour = if !usable {
                    UNUSABLE
                } else if *c == Cause::Pumps {
                    OUTSIDE
                } else if kw < 0.0 {
                    GAIN
                } else {
                    COST
                };
                bars.push((label(*c, *i), running, running + kw, colour, kw, v.quality));
                running += kw;
            }
        }
    }
    let top = bars
        .iter()
        .map(|b| b.1.max(b.2))
        .fold(0.0_f64, f64::max)
        .max(1.0);
    let rows = bars.len();
    let height = 140 + 34 * rows as u32;
    let root = BitMapBackend::new(path, (1200, height)).into_drawing_area();
    root.fill(&BACKGROUND).map_err(|e| err(e.to_string()))?;
    let (head, body) = root.split_vertically(70);
    head.draw(&Text::new(
        heading.to_string(),
        (20, 12),
        (FONT, 22).into_font().style(FontStyle::Bold).color(&INK),
    ))
    .map_err(|e| err(e.to_string()))?;
    head.draw(&Text::new(
        "Each line priced with every earlier cause present (order of attribution top to bottom); \
         ? = uncertain, -- = bad. Not a certified safety function.",
        (20, 42),
        (FONT, 14).into_font().color(&INK),
    ))
    .map_err(|e| err(e.to_string()))?;
    let n = rows as f64;
    let mut chart = ChartBuilder::on(&body)
        .margin_left(20)
        .margin_right(90)
        .margin_bottom(10)
        .x_label_area_size(40)
        .y_label_area_size(330)
        .build_cartesian_2d(0.0..top * 1.05, 0.0..n)
        .map_err(|e| err(e.to_string()))?;
    let names: Vec<String> = bars.iter().map(|b| b.0.clone()).collect();
    chart
        .configure_mesh()
        .disable_y_mesh()
        .light_line_style(TRANSPARENT)
        .bold_line_style(GRID)
        .x_labels(10)
        .x_label_formatter(&|x| format!("{x:.0}"))
        .axis_style(INK)
        .x_desc("power, kW")
        .y_labels(rows * 2 + 1)
        .y_label_formatter(&|y| {
            // Row k sits at y = n - k - 0.5; label only the row centres.
            let k = n - y - 0.5;
            let r = k.round();
            if (k - r).abs() < 1e-6 && r >= 0.0 {
                names.get(r as usize).cloned().unwrap_or_default()
            } else {
                String::new()
            }
        })
        .label_style((FONT, 14).into_font().color(&INK))
        .axis_desc_style((FONT, 14).into_font().color(&INK))
        .draw()
        .map_err(|e| err(e.to_string()))?;
    for (k, (_, from, to, colour, kw, q)) in bars.iter().enumerate() {
        let y0 = n - k as f64 - 0.8;
        let y1 = n - k as f64 - 0.2;
        let (a, b) = if from <= to {
            (*from, *to)
        } else {
            (*to, *from)
        };
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(a, y0), (b.max(a + top * 0.002), y1)],
                colour.filled(),
            )))
            .map_err(|e| err(e.to_string()))?;
        // No "-0.0" for a remainder of rounding size.
        let shown = if kw.abs() < 0.05 { 0.0 } else { *kw };
        let text = format!("{shown:.1}{}", mark(*q));
        chart
            .draw_series(std::iter::once(Text::new(
                text,
                (b + top * 0.01, n - k as f64 - 0.32),
                (FONT, 13).into_font().color(&INK),
            )))
            .map_err(|e| err(e.to_string()))?;
    }
    root.present().map_err(|e| err(e.to_string()))?;
    Ok(())
}

/// Colour of each of [`crate::replay::LEDGER_GROUPS`] in the period plot
/// (the measured total is a tick, not a segment).
const GROUP_COLOURS: [RGBColor; 11] = [
    RGBColor(52, 84, 122),   // the duty
    RGBColor(132, 152, 176), // stage count
    RGBColor(204, 146, 46),  // pressure drops
    RGBColor(236, 206, 128), // pressure split
    RGBColor(150, 196, 204), // coolant temperature
    RGBColor(40, 132, 140),  // intercooling
    RGBColor(178, 58, 44),   // stage inefficiency
    RGBColor(128, 76, 142),  // recycle
    RGBColor(104, 106, 116), // pumps
    RGBColor(206, 204, 198), // remainder
    INK,                     // measured total (tick)
];

fn group_label(c: Cause) -> &'static str {
    match c {
        Cause::Isothermal => "Isothermal power (the duty)",
        Cause::StageCount => "Stage count",
        Cause::PressureDrops => "Interstage pressure drops",
        Cause::PressureSplit => "Unequal pressure split",
        Cause::CoolantTemperature => "Coolant temperature",
        Cause::Intercooling => "Intercooling (all stages)",
        Cause::StageInefficiency => "Stage inefficiency (all stages)",
        Cause::Recycle => "Recycle",
        Cause::Pumps => "Pumps (outside the gas ledger)",
        Cause::Remainder => "Remainder",
        Cause::MeasuredTotal => "Measured power (tick)",
    }
}

/// Most periods drawn; a shorter replay gets one bar per scan.
pub const MAX_PERIODS: usize = 24;

/// Period means of the ledger: for each period (equal numbers of rows, at
/// most [`MAX_PERIODS`]) its first and last time, s, the number of scans
/// with a usable ledger, and the mean of each group over those scans, W.
pub type Period = (f64, f64, usize, [f64; crate::replay::LEDGER_GROUPS.len()]);

/// The periods of `s` (see [`Period`]).
pub fn period_means(s: &crate::replay::Series) -> Vec<Period> {
    let rows = s.ledger.len().min(s.time.len());
    let count = rows.min(MAX_PERIODS);
    let mut out = Vec::with_capacity(count);
    for k in 0..count {
        let (a, b) = (k * rows / count, (k + 1) * rows / count);
        let mut sum = [0.0; crate::replay::LEDGER_GROUPS.len()];
        let mut n = 0usize;
        for row in s.ledger.get(a..b).unwrap_or(&[]) {
            if row.iter().all(|x| x.is_finite()) {
                n += 1;
                for (acc, x) in sum.iter_mut().zip(row) {
                    *acc += x;
                }
            }
        }
        if n > 0 {
            for acc in &mut sum {
                *acc /= n as f64;
            }
        }
        let t0 = s.time.get(a).copied().unwrap_or(0.0);
        let t1 = s.time.get(b.saturating_sub(1)).copied().unwrap_or(t0);
        out.push((t0, t1, n, sum));
    }
    out
}

/// Writes the per-period ledger of a replay to `path` (PNG): one stacked
/// bar per period, the duty at the bottom and each cause stacked on it in
/// the order of attribution (a negative line is drawn back down from the
/// running top, paler), the measured power as a dark tick across the bar,
/// and above each bar the share of the measured power spent above the
/// duty. Periods without a usable ledger are an empty outline.
pub fn periods(path: &Path, heading: &str, s: &crate::replay::Series) -> Result<(), CliError> {
    fonts();
    let err = |e: String| CliError::Input(format!("{}: cannot draw: {e}", path.display()));
    let groups = &crate::replay::LEDGER_GROUPS;
    let total_ix = groups.len() - 1;
    let ps = period_means(s);
    let top_kw = ps
        .iter()
        .filter(|p| p.2 > 0)
        .map(|p| {
            let mut run = 0.0_f64;
            let mut hi = 0.0_f64;
            for x in p.3.iter().take(total_ix) {
                run += x / 1e3;
                hi = hi.max(run);
            }
            hi.max(p.3.get(total_ix).copied().unwrap_or(0.0) / 1e3)
        })
        .fold(0.0_f64, f64::max)
        .max(1.0);
    let span = ps.last().map_or(0.0, |p| p.1) - ps.first().map_or(0.0, |p| p.0);
    let (div, unit) = if span > 7200.0 {
        (3600.0, "h")
    } else if span > 600.0 {
        (60.0, "min")
    } else {
        (1.0, "s")
    };
    let root = BitMapBackend::new(path, (1400, 820)).into_drawing_area();
    root.fill(&BACKGROUND).map_err(|e| err(e.to_string()))?;
    let (head, rest) = root.split_vertically(72);
    let (body, legend) = rest.split_horizontally(1080);
    head.draw(&Text::new(
        heading.to_string(),
        (20, 12),
        (FONT, 22).into_font().style(FontStyle::Bold).color(&INK),
    ))
    .map_err(|e| err(e.to_string()))?;
    head.draw(&Text::new(
        "Mean power per period over the scans whose every ledger line is usable; above each bar: \
         % of the measured power spent above the duty. Not a certified safety function.",
        (20, 44),
        (FONT, 14).into_font().color(&INK),
    ))
    .map_err(|e| err(e.to_string()))?;
    let n = ps.len().max(1) as f64;
    let mut chart = ChartBuilder::on(&body)
        .margin_left(20)
        .margin_right(10)
        .margin_top(10)
        .margin_bottom(10)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..n, 0.0..top_kw * 1.1)
        .map_err(|e| err(e.to_string()))?;
    let starts: Vec<f64> = ps.iter().map(|p| p.0 / div).collect();
    // One decimal where whole units would repeat between neighbouring bars.
    let decimals = usize::from(span / div / n < 2.0);
    chart
        .configure_mesh()
        .disable_x_mesh()
        .light_line_style(TRANSPARENT)
        .bold_line_style(GRID)
        .y_labels(10)
        .y_label_formatter(&|y| format!("{y:.0}"))
        .x_labels(ps.len() * 2 + 1)
        .x_label_formatter(&|x| {
            // Bar k is centred on x = k + 0.5: label its start time.
            let k = x - 0.5;
            let r = k.round();
            if (k - r).abs() < 1e-6 && r >= 0.0 {
                starts
                    .get(r as usize)
                    .map_or(String::new(), |t| format!("{t:.decimals$}"))
            } else {
                String::new()
            }
        })
        .axis_style(INK)
        .x_desc(format!("period start, {unit} from the first row"))
        .y_desc("power, kW")
        .label_style((FONT, 13).into_font().color(&INK))
        .axis_desc_style((FONT, 14).into_font().color(&INK))
        .draw()
        .map_err(|e| err(e.to_string()))?;
    let paler = |c: RGBColor| RGBColor(c.0 / 2 + 127, c.1 / 2 + 127, c.2 / 2 + 127);
    for (k, (_, _, used, means)) in ps.iter().enumerate() {
        let (x0, x1) = (k as f64 + 0.18, k as f64 + 0.82);
        if *used == 0 {
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(x0, 0.0), (x1, top_kw * 0.05)],
                    UNUSABLE.stroke_width(1),
                )))
                .map_err(|e| err(e.to_string()))?;
            continue;
        }
        let mut run = 0.0_f64;
        for (x, colour) in means.iter().zip(GROUP_COLOURS).take(total_ix) {
            let kw = x / 1e3;
            let (a, b, fill) = if kw >= 0.0 {
                (run, run + kw, colour)
            } else {
                (run + kw, run, paler(colour))
            };
            if b > a {
                chart
                    .draw_series(std::iter::once(Rectangle::new(
                        [(x0, a), (x1, b)],
                        fill.filled(),
                    )))
                    .map_err(|e| err(e.to_string()))?;
            }
            run += kw;
        }
        let measured = means.get(total_ix).copied().unwrap_or(0.0) / 1e3;
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(x0 - 0.08, measured), (x1 + 0.08, measured)],
                INK.stroke_width(3),
            )))
            .map_err(|e| err(e.to_string()))?;
        let duty = means.first().copied().unwrap_or(0.0) / 1e3;
        if measured > 0.0 {
            let share = 100.0 * (measured - duty) / measured;
            chart
                .draw_series(std::iter::once(Text::new(
                    format!("{share:.0} %"),
                    (k as f64 + 0.2, measured.max(run) + top_kw * 0.035),
                    (FONT, 12).into_font().color(&INK),
                )))
                .map_err(|e| err(e.to_string()))?;
        }
    }
    // Legend: top of the stack first, as the bars read.
    let mut y = 30;
    legend
        .draw(&Text::new(
            "from the top of the bar down".to_string(),
            (10, y),
            (FONT, 14).into_font().style(FontStyle::Bold).color(&INK),
        ))
        .map_err(|e| err(e.to_string()))?;
    y += 30;
    for (c, colour) in groups.iter().zip(GROUP_COLOURS).rev() {
        if *c == Cause::MeasuredTotal {
            legend
                .draw(&PathElement::new(
                    vec![(10, y + 8), (40, y + 8)],
                    INK.stroke_width(3),
                ))
                .map_err(|e| err(e.to_string()))?;
        } else {
            legend
                .draw(&Rectangle::new([(10, y), (40, y + 16)], colour.filled()))
                .map_err(|e| err(e.to_string()))?;
        }
        legend
            .draw(&Text::new(
                group_label(*c).to_string(),
                (50, y + 1),
                (FONT, 14).into_font().color(&INK),
            ))
            .map_err(|e| err(e.to_string()))?;
        y += 28;
    }
    legend
        .draw(&Text::new(
            "paler: a line below zero".to_string(),
            (10, y + 10),
            (FONT, 13).into_font().color(&INK),
        ))
        .map_err(|e| err(e.to_string()))?;
    root.present().map_err(|e| err(e.to_string()))?;
    Ok(())
}
