//! The surge map of a stage from the train file, through the kernel's surge
//! line and margin monitor (`polytrope::surge`). Every use of the kernel's
//! surge API by the host's file-driven commands is in this file.

use polytrope::surge::margin::{MonitorConfig, SurgeMonitor, SurgeScan};
use polytrope::surge::surge_line::{MapConditions, SurgeLine, SurgeLineConfig, SurgePoint};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{Measured, Real};

use crate::config::{FileError, Loaded};
use crate::units;

/// Surge points a stage may have.
pub const MAX_POINTS: usize = 8;
/// Time constant of the margin monitor's rate filter, s (the host reports
/// margins, not rates, for logged scans).
const RATE_FILTER_TIME_S: f64 = 2.0;

/// The margin monitor type used by the host.
pub type Monitor<T> = SurgeMonitor<T, MAX_POINTS>;

/// One point of the surge and control lines in the surge coordinates.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LinePoint {
    /// Reduced head hr, -.
    pub reduced_head: f64,
    /// Flow number X on the surge line, -.
    pub surge_flow_squared: f64,
    /// Flow number on the control line, -: X(1 + m)².
    pub control_flow_squared: f64,
    /// Control margin, -.
    pub control_margin: f64,
}

/// The kernel surge line of stage `i` (`None` if it has no `[stage.surge]`).
pub fn line<T: Real>(l: &Loaded, i: usize) -> Result<Option<SurgeLine<T, MAX_POINTS>>, FileError> {
    let Some(sg) = l.file.stages.get(i).and_then(|s| s.surge.as_ref()) else {
        return Ok(None);
    };
    let key = |k: &str| format!("stage[{i}].surge.{k}");
    let ps = units::pressure(&sg.map_suction_pressure)
        .map_err(|e| l.error(&key("map_suction_pressure"), e))?
        .absolute(l.atmosphere_pa);
    let ts = units::temperature(&sg.map_suction_temperature)
        .map_err(|e| l.error(&key("map_suction_temperature"), e))?;
    if sg.points.len() > MAX_POINTS || sg.points.len() < 2 {
        return Err(l.error(
            &key("points"),
            format!(
                "{} points; give 2 to {MAX_POINTS} surge points, one per speed line",
                sg.points.len()
            ),
        ));
    }
    let points: Vec<SurgePoint<T>> = sg
        .points
        .iter()
        .map(|p| SurgePoint {
            speed_rpm: T::of(p.speed_rpm),
            suction_volume_flow: T::of(p.flow_m3_per_s),
            pressure_ratio: T::of(p.pressure_ratio),
            control_margin: T::of(p.control_margin),
        })
        .collect();
    let cfg = SurgeLineConfig {
        points: &points,
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(T::of(ps)),
            suction_temperature: Kelvin::new(T::of(ts)),
            molar_mass: T::of(sg.map_molar_mass_kg_per_kmol.unwrap_or(l.molar_mass)),
            compressibility: T::of(sg.map_compressibility),
        },
        polytropic_exponent: T::of(sg.polytropic_exponent),
        flow_coefficient: T::of(sg.flow_coefficient_m2),
    };
    SurgeLine::new(&cfg)
        .map(Some)
        .map_err(|e| l.kernel_error(&e, Some(i)))
}

/// The line of stage `i` in the surge coordinates, for reports and plots.
pub fn line_points(l: &Loaded, i: usize) -> Result<Vec<LinePoint>, FileError> {
    let Some(line) = line::<f64>(l, i)? else {
        return Ok(Vec::new());
    };
    Ok(line
        .points()
        .iter()
        .map(|p| LinePoint {
            reduced_head: p.head_number,
            surge_flow_squared: p.flow_number,
            control_flow_squared: p.flow_number
                * (1.0 + p.control_margin)
                * (1.0 + p.control_margin),
            control_margin: p.control_margin,
        })
        .collect())
}

/// The margin monitor of stage `i` at scan period `scan_period_s`.
pub fn monitor<T: Real>(
    l: &Loaded,
    i: usize,
    scan_period_s: f64,
) -> Result<Option<Monitor<T>>, FileError> {
    let Some(line) = line::<T>(l, i)? else {
        return Ok(None);
    };
    let horizon = l
        .file
        .stages
        .get(i)
        .and_then(|s| s.surge.as_ref())
        .map_or(60.0, |s| s.time_to_surge_horizon_s);
    SurgeMonitor::new(
        line,
        MonitorConfig {
            scan_period: T::of(scan_period_s),
            time_to_surge_horizon: T::of(horizon),
            rate_filter_time: T::of(RATE_FILTER_TIME_S.max(scan_period_s)),
        },
    )
    .map(Some)
    .map_err(|e| l.kernel_error(&e, Some(i)))
}

/// Margin results of one scan, widened to f64 (value, usable).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct MarginPoint {
    /// Reduced flow squared, -.
    pub reduced_flow_squared: Option<f64>,
    /// Reduced head, -.
    pub reduced_head: Option<f64>,
    /// Surge margin, -.
    pub margin: Option<f64>,
    /// Deviation from the control line, - (> 0 safe).
    pub deviation: Option<f64>,
    /// Margin quality word.
    pub quality: &'static str,
}

/// One monitor update from SI readings (Pa absolute, Pa differential).
pub fn update<T: Real>(
    m: &mut Monitor<T>,
    suction: Measured<T>,
    discharge: Measured<T>,
    flow_dp: Measured<T>,
) -> MarginPoint {
    let s = m.update(
        &SurgeScan::pressures_only(
            suction.map(PressureAbs::from_pa),
            discharge.map(PressureAbs::from_pa),
            flow_dp,
        ),
        T::ZERO,
        T::ONE,
    );
    let v = |x: Measured<T>| x.quality.is_usable().then(|| x.value.to_f64());
    MarginPoint {
        reduced_flow_squared: v(s.flow_number),
        reduced_head: v(s.head_number),
        margin: v(s.margin),
        deviation: v(s.clearance),
        quality: crate::out::quality_word(s.margin.quality),
    }
}

/// Surge and control lines, then X, Y and time (s) of each sample.
pub type Trajectory = (Vec<LinePoint>, Vec<f64>, Vec<f64>, Vec<f64>);

/// The protected surge simulation (`crate::greitzer`, invented scenario) as
/// a trajectory in the surge coordinates: (line, X, Y, time s).
pub fn sim_trajectory() -> Result<Trajectory, crate::cli::CliError> {
    sim_trajectory_of(&crate::greitzer::Scenario::default())
}

/// A surge simulation run (`crate::greitzer`) as a trajectory in the surge
/// coordinates of its plant's surge line: (line, X, Y, time s).
pub fn sim_trajectory_of(
    sc: &crate::greitzer::Scenario,
) -> Result<Trajectory, crate::cli::CliError> {
    use crate::greitzer as g;
    let pl = &sc.plant;
    let line = SurgeLine::<f64, MAX_POINTS>::new(&SurgeLineConfig {
        points: pl.surge_points(),
        map: MapConditions {
            suction_pressure: PressureAbs::from_pa(pl.suction_pressure),
            suction_temperature: Kelvin::new(pl.suction_temperature),
            molar_mass: pl.molar_mass,
            compressibility: pl.compressibility,
        },
        polytropic_exponent: pl.polytropic_exponent,
        flow_coefficient: pl.flow_coefficient,
    })?;
    let lp = line
        .points()
        .iter()
        .map(|p| LinePoint {
            reduced_head: p.head_number,
            surge_flow_squared: p.flow_number,
            control_flow_squared: p.flow_number
                * (1.0 + p.control_margin)
                * (1.0 + p.control_margin),
            control_margin: p.control_margin,
        })
        .collect();
    let mon = SurgeMonitor::<f64, MAX_POINTS>::new(
        line,
        MonitorConfig {
            scan_period: sc.scan_period,
            time_to_surge_horizon: 60.0,
            rate_filter_time: 0.1_f64.max(sc.scan_period),
        },
    )?;
    let out = g::run(sc)?;
    let (mut q2, mut hr, mut t) = (Vec::new(), Vec::new(), Vec::new());
    for s in &out.samples {
        let (ps, pd, dp) = pl.signals(s.phi, s.psi);
        let (a, b, _) = mon.map_point(&SurgeScan::pressures_only(
            Measured::good(PressureAbs::from_pa(ps)),
            Measured::good(PressureAbs::from_pa(pd)),
            Measured::good(dp),
        ));
        q2.push(if a.quality.is_usable() {
            a.value
        } else {
            f64::NAN
        });
        hr.push(if b.quality.is_usable() {
            b.value
        } else {
            f64::NAN
        });
        t.push(s.t);
    }
    Ok((lp, q2, hr, t))
}
