//! `surge-sim`: the closed-loop surge simulation of one section (the
//! Greitzer lumped model in [`crate::greitzer`], invented demo scenario)
//! run through a fast load loss, printed as CSV, or the scan-period sweep.
//!
//! Caution: anti-surge control protects machinery and people; this is a
//! demonstration, not a certified safety function (IEC 61508 / IEC 61511).
//! Surge data come from the machine maker and from commissioning tests.

use crate::cli::{count, CliError, Command, Opt, Parsed};
use crate::greitzer::{run as simulate, Noise, Outcome, Scenario};
use crate::out;

/// The `surge-sim` subcommand.
pub const COMMAND: Command = Command {
    name: "surge-sim",
    summary: "closed-loop surge simulation (Greitzer model, invented scenario): CSV trajectory or scan-period sweep",
    options: OPTIONS,
    run,
};

const OPTIONS: &[Opt] = &[
    Opt {
        name: "unprotected",
        value: None,
        help: "hold the recycle valve closed (shows the surge cycles)",
    },
    Opt {
        name: "scan-ms",
        value: Some("MS"),
        help: "controller scan period in ms, 1 to 500 (default 20)",
    },
    Opt {
        name: "every",
        value: Some("N"),
        help: "print every Nth controller scan (default 1)",
    },
    Opt {
        name: "noise",
        value: None,
        help: "add the stated realistic measurement noise to every signal (seeded)",
    },
    Opt {
        name: "sweep",
        value: None,
        help: "print the minimum margin for scan periods 1 to 100 ms, without and with noise",
    },
];

fn summary(label: &str, o: &Outcome) -> String {
    format!(
        "# {label}: min margin {:.4}, min flow coefficient {:.4}, flow sign changes {}, surge cycles detected {}, trip request {}\n",
        o.min_margin, o.min_flow, o.flow_sign_changes, o.events, o.trip
    )
}

fn run(p: &Parsed) -> Result<String, CliError> {
    let mut text = String::from(
        "# Invented demo scenario: air blower on the Greitzer (1976) lumped model; throttle 0.8 -> 0.3 in 1 s at t = 2 s.\n",
    );
    if p.has("sweep") {
        text.push_str("scan_ms,min_margin,min_margin_noisy,surge_cycles,surge_cycles_noisy\n");
        for ms in [1u32, 2, 5, 10, 20, 50, 100] {
            let sc = Scenario {
                scan_period: f64::from(ms) / 1e3,
                ..Scenario::default()
            };
            let quiet = simulate(&sc)?;
            let noisy = simulate(&Scenario {
                noise: Some(Noise::REALISTIC),
                ..sc
            })?;
            text.push_str(&format!(
                "{ms},{:.4},{:.4},{},{}\n",
                quiet.min_margin, noisy.min_margin, quiet.events, noisy.events
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
        noise: p.has("noise").then_some(Noise::REALISTIC),
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
