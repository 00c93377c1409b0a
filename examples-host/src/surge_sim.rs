//! `surge-sim`: the closed-loop surge simulation of one section (the
//! Greitzer lumped model in [`crate::greitzer`], invented demo scenario)
//! run through a fast load loss, printed as CSV, or the scan-period sweep.
//!
//! Caution: anti-surge control protects machinery and people; this is a
//! demonstration, not a certified safety function (IEC 61508 / IEC 61511).
//! Surge data come from the machine maker and from commissioning tests.

use crate::cli::{count, CliError, Parsed};
use crate::greitzer::{run as simulate, Outcome, Scenario};
use crate::out;

fn summary(label: &str, o: &Outcome) -> String {
    format!(
        "# {label}: min margin {:.4}, min flow coefficient {:.4}, flow sign changes {}, surge cycles detected {}, trip request {}\n",
        o.min_margin, o.min_flow, o.flow_sign_changes, o.events, o.trip
    )
}

/// Runs the subcommand.
pub fn run(p: &Parsed) -> Result<String, CliError> {
    let mut text = String::from(
        "# Invented demo scenario: air blower on the Greitzer (1976) lumped model; throttle 0.8 -> 0.3 in 0.5 s at t = 2 s.\n",
    );
    if p.has("sweep") {
        text.push_str("scan_ms,min_margin_protected,surged\n");
        for ms in [5u32, 20, 50, 100] {
            let o = simulate(&Scenario {
                scan_period: f64::from(ms) / 1e3,
                ..Scenario::default()
            })?;
            // Surged: the true operating point crossed the surge line, the flow
            // reversed or the detector counted a surge cycle.
            let surged = o.min_margin < 0.0 || o.flow_sign_changes > 0 || o.events > 0;
            text.push_str(&format!(
                "{ms},{:.4},{}\n",
                o.min_margin,
                if surged { "yes" } else { "no" }
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
        scan_period: f64::from(ms) / 1e3,
        protection: !p.has("unprotected"),
        ..Scenario::default()
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
    text.push_str("t_s,flow_coefficient,pressure_rise_coefficient,margin,margin_seen,control_margin,valve_demand,valve_position,recycle_power_kw,surge_cycles,trip_request\n");
    for s in o.samples.iter().step_by(every) {
        text.push_str(&format!(
            "{:.3},{:.5},{:.5},{:.5},{:.5},{:.4},{:.4},{:.4},{:.2},{},{}\n",
            s.t,
            s.phi,
            s.psi,
            s.margin_true,
            s.margin_measured,
            s.control_margin,
            s.demand,
            s.position,
            s.recycle_power_kw,
            s.events,
            u8::from(s.trip)
        ));
    }
    text.push_str(&format!("# {}\n", out::CAUTION));
    Ok(text)
}
