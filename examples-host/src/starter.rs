//! `new-train`: writes a commented starter train file for N compressor
//! stages (an invented plant-air machine) or for the built-in demo train.
//! Every number in it is an invented example to be replaced with the
//! machine maker's data.

use std::path::PathBuf;

use clap::Args;

use crate::cli::CliError;
use crate::config::MAX_STAGES;

/// Options of `new-train`.
#[derive(Debug, Args)]
pub struct NewTrainArgs {
    /// Number of compressor stages (1 to 8), each with a cooler after it.
    #[arg(long, value_name = "N", conflicts_with = "demo", required_unless_present = "demo",
          value_parser = clap::value_parser!(u8).range(1..=MAX_STAGES as i64))]
    pub stages: Option<u8>,
    /// Write the demo train (4 intercooled CO2 stages and a dense-phase pump) instead.
    #[arg(long)]
    pub demo: bool,
    /// Write to this file instead of standard output (refuses to overwrite).
    #[arg(long, short, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Also write an invented example log for the starter file (CSV, 10 s scans,
    /// with blank cells, spikes and one malformed row) to try `replay` on.
    #[arg(long, value_name = "CSV", conflicts_with = "demo")]
    pub example_log: Option<PathBuf>,
    /// Rows of the example log (default 8640: one day at 10 s).
    #[arg(
        long,
        value_name = "N",
        default_value_t = 8640,
        requires = "example_log"
    )]
    pub rows: usize,
}

/// Runs `new-train`.
pub fn run(a: &NewTrainArgs) -> Result<String, CliError> {
    let text = match (a.demo, a.stages) {
        (true, _) => demo_file(),
        (false, Some(n)) => air_file(usize::from(n)),
        (false, None) => return Err(CliError::Usage("give --stages N or --demo".into())),
    };
    let mut note = String::new();
    if let (Some(log), Some(n)) = (&a.example_log, a.stages) {
        if log.exists() {
            return Err(CliError::Input(format!(
                "{}: exists; not overwritten",
                log.display()
            )));
        }
        let csv = example_log(usize::from(n), a.rows)?;
        std::fs::write(log, csv)
            .map_err(|e| CliError::Input(format!("{}: cannot write: {e}", log.display())))?;
        note = format!("wrote {} ({} rows, invented)\n", log.display(), a.rows);
    }
    match &a.output {
        None if note.is_empty() => Ok(text),
        None => {
            eprint!("{note}");
            Ok(text)
        }
        Some(path) => {
            if path.exists() {
                return Err(CliError::Input(format!(
                    "{}: exists; not overwritten (remove it or choose another name)",
                    path.display()
                )));
            }
            std::fs::write(path, &text)
                .map_err(|e| CliError::Input(format!("{}: cannot write: {e}", path.display())))?;
            Ok(format!("wrote {}\n{note}", path.display()))
        }
    }
}

const HEADER: &str = r#"# polytrope train file (TOML).
#
# INVENTED EXAMPLE: every number below is made up to show the format. Replace
# it with your machine maker's data sheet and commissioning records.
# Caution: polytrope is not a certified safety function; defer to the machine
# maker's data, local codes and licensed engineering practice.
#
# Units are written into each value:
#   pressures     "1.013 bara", "4.5 barg", "1013 mbara", "14.7 psia", "2 kgf/cm2g"
#                 (Pa kPa MPa bar mbar hPa psi kgf/cm2, then a = absolute or g = gauge)
#   temperatures  "35 degC", "308.15 K", "95 degF"
#   flows         "2.5 kg/s", "9000 kg/h", "32 t/h", "5000 Nm3/h" (0 degC, 1 atm),
#                 "5300 Sm3/h" (15 degC, 1 atm)
# Keys ending in a unit (_K, _s, _mm, _m2, _kg_per_kmol, ...) take plain numbers.
"#;

const COMMON: &str = r#"
[atmosphere]
pressure = "1013 mbara"        # local barometric pressure, absolute (0.3 to 1.1 bar a)

[coolant]
specific_heat_J_per_kg_K = 4180   # cooling water

[steady_state]                 # a stage is steady when, over 8 scans, ...
max_temperature_spread_K = 1.0 # ... its discharge temperature moves less than this,
max_ratio_spread = 0.01        # ... its pressure ratio less than 1 %,
max_flow_spread = 0.02         # ... and its mass flow less than 2 %.

[limits]                       # readings outside these are bad inputs
pressure_min = "0.1 bara"
pressure_max = "100 bara"
temperature_min = "-40 degC"
temperature_max = "250 degC"
mass_flow_max = "50 kg/s"

[replay]
time_column = "time"           # seconds, or YYYY-MM-DD HH:MM:SS
baseline_rows = 360            # the first rows form the baseline period for trends
"#;

/// Design pressures (bar a) of `n` invented plant-air stages.
pub fn air_design(n: usize) -> Vec<(f64, f64)> {
    // Overall ratio about 8 (0.98 to 8 bar a), equal stage ratios, 2 % interstage drop.
    let overall: f64 = 8.2;
    let r = overall.powf(1.0 / n as f64) / 0.98_f64.powf((n as f64 - 1.0) / n as f64);
    let mut p1 = 0.98;
    let mut out = Vec::new();
    for _ in 0..n {
        let p2 = p1 * r;
        out.push((round3(p1), round3(p2)));
        p1 = round3(p2) * 0.98;
    }
    out
}

fn round3(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

fn readings(i: usize, cooler: bool, flow: bool) -> String {
    let s = i + 1;
    let mut t = format!(
        "[stage.readings]               # reading = {{ column = \"header in the log\", unit = \"...\" }}\n\
         suction_pressure = {{ column = \"s{s}_p_in\", unit = \"bara\" }}\n\
         suction_temperature = {{ column = \"s{s}_t_in\", unit = \"degC\" }}\n\
         discharge_pressure = {{ column = \"s{s}_p_out\", unit = \"barg\" }}\n\
         discharge_temperature = {{ column = \"s{s}_t_out\", unit = \"degC\" }}\n"
    );
    if flow {
        t.push_str(&format!(
            "mass_flow = {{ column = \"s{s}_flow\", unit = \"t/h\" }}   # later stages use the nearest flow upstream\n\
             flow_differential_pressure = {{ column = \"s{s}_dp_flow\", unit = \"mbar\" }}   # for the surge margin\n\
             recycle_mass_flow = {{ column = \"s{s}_recycle\", unit = \"t/h\" }}   # recycle valve flow, for the recycle power\n"
        ));
    }
    if cooler {
        t.push_str(&format!(
            "cooler_gas_outlet_temperature = {{ column = \"c{s}_t_gas_out\", unit = \"degC\" }}\n\
             coolant_inlet_temperature = {{ column = \"c{s}_t_water_in\", unit = \"degC\" }}\n\
             coolant_outlet_temperature = {{ column = \"c{s}_t_water_out\", unit = \"degC\" }}\n"
        ));
    }
    t
}

const SURGE: &str = r#"
[stage.surge]                  # the maker's surge line of this stage (invented here)
map_suction_pressure = "0.98 bara"
map_suction_temperature = "20 degC"
map_compressibility = 1.0
polytropic_exponent = 1.5      # n used for the head number Y, on the map and live
flow_coefficient_m2 = 0.09     # suction flow element: dp = rho (Q / C)^2
time_to_surge_horizon_s = 60
points = [                     # one point per speed line, rising speed
  { speed_rpm = 9000,  flow_m3_per_s = 0.90, pressure_ratio = 1.75, control_margin = 0.12 },
  { speed_rpm = 10500, flow_m3_per_s = 1.15, pressure_ratio = 2.05, control_margin = 0.10 },
  { speed_rpm = 12000, flow_m3_per_s = 1.45, pressure_ratio = 2.40, control_margin = 0.10 },
]
[stage.surge.control]          # recycle-valve controller (surge-sim)
scan_period_s = 0.02
gain = 2.0
integral_time_s = 2.0
valve_stroke_time_s = 0.8
[stage.surge.plant]            # the compression system around the stage (surge-sim --file; invented)
speed_rpm = 10500              # the speed line to simulate: one of the points above
impeller_tip_diameter_m = 0.73 # tip speed U = pi D N / 60
duct_length_m = 6.0            # effective length of the suction + impeller duct
duct_area_m2 = 0.03            # its flow area
plenum_volume_m3 = 8.0         # discharge volume up to the check valve and the recycle take-off
shutoff_head_fraction = 0.5    # pressure rise at zero flow / at the surge point, this speed
operating_flow_m3_per_s = 1.45 # suction volume flow before the load loss
recycle_valve_full_flow_m3_per_s = 1.5   # recycle valve fully open, at the surge-point pressure rise
valve_dead_time_s = 0.1
polytropic_efficiency = 0.8    # for the power spent recirculating

[stage.flow_element]           # ISO 5167-2 orifice plate in the suction line
pipe_diameter_mm = 300
bore_diameter_mm = 180
taps = "flange"                # corner, flange or d-and-d/2
viscosity_Pa_s = 1.81e-5
"#;

/// The starter file for `n` intercooled plant-air stages.
pub fn air_file(n: usize) -> String {
    let mut t = String::from(HEADER);
    t.push_str(&format!(
        "\n[train]\nname = \"Plant air, {n} stage{} (invented example)\"\n\
         max_interstage_pressure_drop = 0.1   # largest design drop between stages, fraction\n\n\
         [gas]\nmodel = \"ideal\"                # \"ideal\", \"peng-robinson\" or \"table\" (below)\n\
         name = \"air\"                    # built-in: air, nitrogen, methane, ethane, carbon-dioxide, hydrogen, lean-natural-gas\n\
         heat_capacity = \"cp-polynomial\"     # or \"constant-k\"; a custom gas gives molar_mass_kg_per_kmol and heat_capacity_ratio\n\
         compressibility = 1.0\n\
         # Peng-Robinson instead: drop name, heat_capacity and compressibility and give mole fractions by component\n\
         # (nitrogen, oxygen, argon, methane, ethane, propane, n-butane, isobutane,\n\
         # carbon-dioxide, hydrogen-sulfide, hydrogen, water):\n\
         #   model = \"peng-robinson\"\n\
         #   composition = {{ nitrogen = 0.7812, oxygen = 0.2096, argon = 0.0092 }}\n\
         # A GERG-2008 property table instead (`polytrope-host tables --gas air --out air`):\n\
         #   model = \"table\"\n\
         #   table_file = \"air.bin\"     # relative to this file\n",
        if n == 1 { "" } else { "s" }
    ));
    t.push_str(COMMON);
    for (i, (p1, p2)) in air_design(n).into_iter().enumerate() {
        t.push_str(&format!(
            "\n[[stage]]                      # stage {}\nkind = \"compressor\"\n\
             design_suction = \"{p1} bara\"\ndesign_discharge = \"{p2} bara\"\n\
             [stage.cooler]                 # {} after this stage\n\
             coolant_specific_heat_J_per_kg_K = 4180\n",
            i + 1,
            if i + 1 == n {
                "aftercooler"
            } else {
                "intercooler"
            }
        ));
        t.push_str(&readings(i, true, i == 0));
        if i == 0 {
            t.push_str(SURGE);
        }
    }
    t
}

/// The demo train (`polytrope::demo`) as a train file.
pub fn demo_file() -> String {
    let mut t = String::from(HEADER);
    t.push_str(
        "\n[train]\nname = \"Demo: 4 intercooled CO2 stages and a dense-phase pump (invented)\"\n\
         max_interstage_pressure_drop = 0.1\n\n\
         [gas]\nmodel = \"peng-robinson\"        # as the demo itself\n\
         composition = { carbon-dioxide = 1.0 }\n",
    );
    t.push_str(COMMON);
    let design = [
        (1.05, 3.2),
        (3.1, 9.2),
        (9.0, 26.0),
        (25.6, 66.0),
        (65.5, 150.0),
    ];
    for (i, (p1, p2)) in design.iter().enumerate() {
        if i < 4 {
            t.push_str(&format!(
                "\n[[stage]]\nkind = \"compressor\"\ndesign_suction = \"{p1} bara\"\ndesign_discharge = \"{p2} bara\"\n\
                 [stage.cooler]\ncoolant_specific_heat_J_per_kg_K = 4180\n"
            ));
            t.push_str(&readings(i, true, i == 0));
        } else {
            t.push_str(&format!(
                "\n[[stage]]\nkind = \"pump\"\ndesign_suction = \"{p1} bara\"\ndesign_discharge = \"{p2} bara\"\n\
                 density_kg_per_m3 = 780\nefficiency = 0.72\n"
            ));
            t.push_str(&readings(i, false, false));
        }
    }
    t.replace("pressure_max = \"100 bara\"", "pressure_max = \"200 bara\"")
}

/// A small deterministic noise source (64-bit LCG, Knuth's MMIX constants).
struct Noise(u64);

impl Noise {
    /// Uniform in [-1, 1).
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((self.0 >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    }
}

/// An invented log for the `n`-stage starter file: a day of 10 s scans with
/// a diurnal ambient swing, a slow efficiency loss on stage 2, fouling of
/// cooler 1, a low-demand hour that brings stage 1 near its control line,
/// a few blank and non-numeric cells, spikes outside the plausibility
/// limits and one malformed (short) row.
pub fn example_log(n: usize, rows: usize) -> Result<String, CliError> {
    use std::fmt::Write as _;
    let loaded = crate::config::parse(std::path::Path::new("starter"), &air_file(n))?;
    let line = crate::surgemap::line::<f64>(&loaded, 0)?;
    let design = air_design(n);
    let k = 1.4;
    let m_k = (k - 1.0) / k;
    let mut noise = Noise(0x5eed);
    let mut out = String::from("time");
    for s in 1..=n {
        let _ = write!(out, ",s{s}_p_in,s{s}_t_in,s{s}_p_out,s{s}_t_out");
        if s == 1 {
            out.push_str(",s1_flow,s1_dp_flow,s1_recycle");
        }
        let _ = write!(out, ",c{s}_t_gas_out,c{s}_t_water_in,c{s}_t_water_out");
    }
    out.push('\n');
    let start = 1_709_251_200_i64; // 2024-03-01 00:00:00 UTC (an invented day)
    for r in 0..rows {
        let t = r as f64 * 10.0;
        let day = (t / 86_400.0).fract();
        let secs = start + (r as i64) * 10;
        let (d, hms) = (secs.div_euclid(86_400), secs.rem_euclid(86_400));
        let (y, mo, dd) = civil(d);
        let _ = write!(
            out,
            "{y:04}-{mo:02}-{dd:02} {:02}:{:02}:{:02}",
            hms / 3600,
            hms / 60 % 60,
            hms % 60
        );
        if r == rows / 3 {
            // One malformed row: the fields stop early.
            out.push_str(",1.0,20\n");
            continue;
        }
        let ambient = 20.0 + 5.0 * (2.0 * std::f64::consts::PI * (day - 0.375)).sin();
        let water = 24.0 + 2.0 * (2.0 * std::f64::consts::PI * (day - 0.4)).sin();
        // Low demand between 40 % and 45 % of the log: flow falls toward surge.
        let x = r as f64 / rows.max(1) as f64;
        let low = if (0.40..0.45).contains(&x) {
            ((x - 0.40) / 0.05 * std::f64::consts::PI).sin()
        } else {
            0.0
        };
        let mut p1 = design.first().map_or(0.98, |d| d.0) * (1.0 + 0.002 * noise.next());
        let mut t1 = ambient + 0.1 * noise.next();
        for s in 0..n {
            let (d1, d2) = design.get(s).copied().unwrap_or((1.0, 2.0));
            let p2 = p1 * (d2 / d1) * (1.0 - 0.03 * low) * (1.0 + 0.001 * noise.next());
            let eta = if s == 1 {
                0.80 - 0.03 * x
            } else {
                0.80 - 0.01 * s as f64
            };
            let t2k = (t1 + 273.15) * (p2 / p1).powf(m_k / eta);
            let mut t2 = t2k - 273.15 + 0.15 * noise.next();
            let approach = 8.0 + if s == 0 { 3.0 * x } else { 0.5 * s as f64 };
            let gas_out = water + approach + 0.1 * noise.next();
            let water_out = water + 8.0 + 0.1 * noise.next();
            let p2g = (p2 - 1.013) * 1.0;
            let mut p1_text = format!("{:.4}", p1);
            if r % 997 == 13 && s == 0 {
                p1_text.clear(); // a blank cell
            }
            if r % 1499 == 77 {
                t2 = 9999.0; // a spike outside the plausibility limits
            }
            let _ = write!(out, ",{p1_text},{:.2},{:.4},{:.2}", t1, p2g, t2);
            if s == 0 {
                let margin = 0.28 - 0.24 * low + 0.005 * noise.next();
                let hr = {
                    let sigma = 1.0 / 3.0; // (n-1)/n for n = 1.5 as in the starter file
                    ((p2 / p1).powf(sigma) - 1.0) / sigma
                };
                let q2 = line
                    .as_ref()
                    .map_or(0.002, |l| l.lookup(hr).surge_flow_number);
                let dp_mbar = p1 * 1e5 * q2 * (1.0 + margin) * (1.0 + margin) / 100.0;
                let flow = 5.2 * (1.0 + margin) / 1.28 * (1.0 + 0.003 * noise.next());
                let flow_text = if r % 2203 == 500 {
                    "n/a".to_string()
                } else {
                    format!("{flow:.3}")
                };
                let recycle = if margin < 0.15 {
                    1.2 * (0.15 - margin) / 0.15
                } else {
                    0.0
                };
                let _ = write!(out, ",{flow_text},{dp_mbar:.3},{recycle:.3}");
            }
            let _ = write!(out, ",{gas_out:.2},{water:.2},{water_out:.2}");
            p1 = p2 * 0.98;
            t1 = gas_out;
        }
        out.push('\n');
    }
    Ok(out)
}

/// Civil date from days since 1970-01-01 (H. Hinnant's algorithm, public domain).
fn civil(days: i64) -> (i64, i64, i64) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    (if m <= 2 { y + 1 } else { y }, m, d)
}
