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
