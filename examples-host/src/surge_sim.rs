//! `surge-sim`: the closed-loop surge simulation of one section (the
//! Greitzer lumped model in [`crate::greitzer`], invented demo scenario)
//! run through a fast load loss, printed as CSV, or the scan-period sweep.
//!
//! Caution: anti-surge control protects machinery and people; this is a
//! demonstration, not a certified safety function (IEC 61508 / IEC 61511).
//! Surge data come from the machine maker and from commissioning tests.

use crate::cli::{count, CliError, Parsed};
use crate::greitzer::{run as simulate, Noise, Outcome, Scenario};
use crate::out;

fn summary(label: &str, o: &Outcome) -> String {
    format!(
        "# {label}: min margin {:.4}, min flow coefficient {:.4}, flow sign changes {}, surge cycles detected {}, trip request {}\n",
        o.min_margin, o.min_flow, o.flow_sign_changes, o.events, o.trip
    )
}

/// The scenario's controller settings from a train file's first
/// `[stage.surge.control]` table (errors name the file, line and key).
fn from_file(p: &Parsed) -> Result<(Scenario, Option<String>), CliError> {
    let Some(path) = p.get("file") else {
        return Ok((Scenario::default(), None));
    };
    let l = crate::config::load(std::path::Path::new(path))?;
    let Some((i, c)) = l.file.stages.iter().enumerate().find_map(|(i, s)| {
        s.surge
            .as_ref()
            .and_then(|g| g.control.as_ref())
            .map(|c| (i, c))
    }) else {
        return Err(l
            .error(
                "stage",
                "no [stage.surge.control] table: add one to a stage with a surge map",
            )
            .into());
    };
    if p.has("scan-ms") {
        return Err(CliError::Usage(
            "--scan-ms and --file do not apply together: the file sets the scan period".into(),
        ));
    }
    let key = |k: &str| format!("stage[{i}].surge.control.{k}");
    for (k, v, lo, hi) in [
        ("scan_period_s", c.scan_period_s, 0.001, 0.5),
        ("gain", c.gain, 1e-3, 100.0),
        ("integral_time_s", c.integral_time_s, 0.01, 600.0),
        ("valve_stroke_time_s", c.valve_stroke_time_s, 0.05, 60.0),
    ] {
        if !(lo..=hi).contains(&v) {
            return Err(l
                .error(&key(k), format!("{v} is outside [{lo}, {hi}]"))
                .into());
        }
    }
    let sc = Scenario {
        scan_period: c.scan_period_s,
        gain: c.gain,
        integral_time: c.integral_time_s,
        valve_stroke_time: c.valve_stroke_time_s,
        ..Scenario::default()
    };
    Ok((
        sc,
        Some(format!(
            "# Controller from {path} stage {}: gain {}, integral time {} s, scan {} s, valve stroke {} s.\n",
            i + 1,
            c.gain,
            c.integral_time_s,
            c.scan_period_s,
            c.valve_stroke_time_s
        )),
    ))
}

/// Runs the subcommand.
pub fn run(p: &Parsed) -> Result<String, CliError> {
    let (base, note) = from_file(p)?;
    let mut text = String::from(
        "# Invented demo scenario: air blower on the Greitzer (1976) lumped model; throttle 0.8 -> 0.3 in 1 s at t = 2 s.\n",
    );
    if let Some(n) = &note {
        text.push_str(n);
    }
    if p.has("sweep") {
        text.push_str(
            "scan_ms,min_margin,min_margin_noisy,surge_cycles,surge_cycles_noisy,surged,surged_noisy\n",
        );
        // Surged: the true operating point crossed the surge line, the flow
        // reversed or the detector counted a surge cycle.
        let surged = |o: &Outcome| {
            if o.min_margin < 0.0 || o.flow_sign_changes > 0 || o.events > 0 {
                "yes"
            } else {
                "no"
            }
        };
        for ms in [1u32, 2, 5, 10, 20, 50, 100] {
            let sc = Scenario {
                scan_period: f64::from(ms) / 1e3,
                ..base
            };
            let quiet = simulate(&sc)?;
            let noisy = simulate(&Scenario {
                noise: Some(Noise::REALISTIC),
                ..sc
            })?;
            text.push_str(&format!(
                "{ms},{:.4},{:.4},{},{},{},{}\n",
                quiet.min_margin,
                noisy.min_margin,
                quiet.events,
                noisy.events,
                surged(&quiet),
                surged(&noisy)
            ));
        }
        text.push_str(&format!("# {}\n", out::CAUTION));
        return Ok(text);
    }
    let ms = match p.get("scan-ms") {
        Some(v) => count("scan-ms", v, 1, 500)?,
        None => 20,
    };
    let every = match p.get("every") {
        Some(v) => count("every", v, 1, 100_000)? as usize,
        None => 1,
    };
    let sc = Scenario {
        scan_period: if note.is_some() {
            base.scan_period
        } else {
            f64::from(ms) / 1e3
        },
        protection: !p.has("unprotected"),
        noise: p.has("noise").then_some(Noise::REALISTIC),
        ..base
    };
    let o = simulate(&sc)?;
    text.push_str(&summary(
        if sc.protection {
            "protected"
        } else {
            "unprotected"
        },
        &o,
    ));
    text.push_str("t_s,flow_coefficient,throttle_flow_coefficient,pressure_rise_coefficient,margin,margin_seen,control_margin,rate_of_approach_per_s,anticipation,valve_demand,valve_position,recycle_kg_s,recycle_power_kw,surge_cycles,trip_request\n");
    for s in o.samples.iter().step_by(every) {
        text.push_str(&format!(
            "{:.3},{:.5},{:.5},{:.5},{:.5},{:.5},{:.4},{:.4},{:.4},{:.4},{:.4},{:.3},{:.2},{},{}\n",
            s.t,
            s.phi,
            s.throttle_flow,
            s.psi,
            s.margin_true,
            s.margin_measured,
            s.control_margin,
            s.rate_of_approach,
            s.anticipation,
            s.demand,
            s.position,
            s.recycle_mass_flow,
            s.recycle_power_kw,
            s.events,
            u8::from(s.trip)
        ));
    }
    text.push_str(&format!("# {}\n", out::CAUTION));
    Ok(text)
}
