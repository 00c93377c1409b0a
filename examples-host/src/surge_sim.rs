//! `surge-sim`: the closed-loop surge simulation of one section (the
//! Greitzer lumped model in [`crate::greitzer`], invented demo scenario)
//! run through a fast load loss, printed as CSV, or the scan-period sweep.
//!
//! Caution: anti-surge control protects machinery and people; this is a
//! demonstration, not a certified safety function (IEC 61508 / IEC 61511).
//! Surge data come from the machine maker and from commissioning tests.

use crate::cli::{count, CliError, Parsed};
use crate::greitzer::{run as simulate, Noise, Outcome, Plant, Scenario};
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
    let (plant, b, dead_time, throttle, plant_note) = plant_from_file(&l, i)?;
    let sc = Scenario {
        plant,
        greitzer_b: b,
        valve_dead_time: dead_time,
        throttle_before: throttle,
        throttle_after: throttle * LOAD_LOSS_FRACTION,
        scan_period: c.scan_period_s,
        gain: c.gain,
        integral_time: c.integral_time_s,
        valve_stroke_time: c.valve_stroke_time_s,
        ..Scenario::default()
    };
    Ok((
        sc,
        Some(format!(
            "{plant_note}# Controller from {path} stage {}: gain {}, integral time {} s, scan {} s, valve stroke {} s.\n",
            i + 1,
            c.gain,
            c.integral_time_s,
            c.scan_period_s,
            c.valve_stroke_time_s
        )),
    ))
}

/// The load loss of a file-driven run: the process throttle closes to this
/// fraction of its opening (the built-in scenario's 0.8 -> 0.3).
pub const LOAD_LOSS_FRACTION: f64 = 0.3 / 0.8;

/// The Greitzer plant of stage `i` from its `[stage.surge]` map and
/// `[stage.surge.plant]` table: (plant, Greitzer B, valve dead time s,
/// throttle before the load loss, a note for the output).
///
/// Greitzer (1976): B = U / (2 ω_H Lc), ω_H = a √(Ac / (Vp Lc)); the
/// characteristic is the Moore–Greitzer cubic (1986) with its peak at the
/// map's surge point of the chosen speed line (Φ = Q / (U Ac) = 2W,
/// Ψ = Δp / (½ ρ U²)) and the given shut-off fraction; the recycle valve's
/// γr from its full-open flow at the surge-point pressure rise; the speed
/// of sound from the file's gas model at the map's suction state.
fn plant_from_file(
    l: &crate::config::Loaded,
    i: usize,
) -> Result<(Plant, f64, f64, f64, String), CliError> {
    use polytrope::gas::GasModel;
    let Some(sg) = l.file.stages.get(i).and_then(|s| s.surge.as_ref()) else {
        return Err(l.error("stage", "no [stage.surge] map").into());
    };
    let base = format!("stage[{i}].surge.plant");
    let Some(pt) = &sg.plant else {
        return Err(l
            .error(
                &format!("stage[{i}].surge"),
                format!(
                    "surge-sim --file needs [{}] (speed_rpm, impeller_tip_diameter_m, duct_length_m, duct_area_m2, plenum_volume_m3, shutoff_head_fraction, operating_flow_m3_per_s, recycle_valve_full_flow_m3_per_s, valve_dead_time_s, polytropic_efficiency); `new-train` writes an example",
                    "stage.surge.plant"
                ),
            )
            .into());
    };
    let key = |k: &str| format!("{base}.{k}");
    let need = |k: &str, v: Option<f64>, lo: f64, hi: f64| -> Result<f64, CliError> {
        match v {
            None => Err(l
                .error(&base, format!("missing {k} (required by surge-sim --file)"))
                .into()),
            Some(x) if x.is_finite() && (lo..=hi).contains(&x) => Ok(x),
            Some(x) => Err(l
                .error(&key(k), format!("{x} is outside [{lo}, {hi}]"))
                .into()),
        }
    };
    let speed = need("speed_rpm", pt.speed_rpm, 1.0, 1.0e6)?;
    let d = need(
        "impeller_tip_diameter_m",
        pt.impeller_tip_diameter_m,
        0.02,
        5.0,
    )?;
    let lc = need("duct_length_m", pt.duct_length_m, 0.1, 500.0)?;
    let ac = need("duct_area_m2", pt.duct_area_m2, 1.0e-4, 50.0)?;
    let vp = need("plenum_volume_m3", pt.plenum_volume_m3, 1.0e-3, 1.0e5)?;
    let shutoff = need(
        "shutoff_head_fraction",
        pt.shutoff_head_fraction,
        0.05,
        0.95,
    )?;
    let q_op = need(
        "operating_flow_m3_per_s",
        pt.operating_flow_m3_per_s,
        1e-6,
        1e6,
    )?;
    let q_r = need(
        "recycle_valve_full_flow_m3_per_s",
        pt.recycle_valve_full_flow_m3_per_s,
        1e-6,
        1e6,
    )?;
    let dead = need("valve_dead_time_s", pt.valve_dead_time_s, 0.0, 2.0)?;
    let eta = need("polytropic_efficiency", pt.polytropic_efficiency, 0.3, 1.0)?;
    // The speed line: one of the map's points.
    let Some(point) = sg
        .points
        .iter()
        .find(|p| (p.speed_rpm - speed).abs() <= 0.5)
    else {
        let speeds: Vec<String> = sg
            .points
            .iter()
            .map(|p| format!("{}", p.speed_rpm))
            .collect();
        return Err(l
            .error(
                &key("speed_rpm"),
                format!(
                    "{speed} rpm is not one of the map's speed lines ({} rpm)",
                    speeds.join(", ")
                ),
            )
            .into());
    };
    // The kernel's surge line from the same map (refusals name the map keys).
    crate::surgemap::line::<f64>(l, i)?;
    let ps = crate::units::pressure(&sg.map_suction_pressure)
        .map_err(|e| l.error(&format!("stage[{i}].surge.map_suction_pressure"), e))?
        .absolute(l.atmosphere_pa);
    let ts = crate::units::temperature(&sg.map_suction_temperature)
        .map_err(|e| l.error(&format!("stage[{i}].surge.map_suction_temperature"), e))?;
    let molar_mass = sg.map_molar_mass_kg_per_kmol.unwrap_or(l.molar_mass);
    let gas = l.gas::<f64>()?;
    let state = gas.state(ps, ts, Some(sg.map_compressibility));
    if !(state.validity.quality.is_usable() && state.speed_of_sound > 0.0) {
        return Err(l
            .error(
                &format!("stage[{i}].surge.map_suction_temperature"),
                "the gas model gives no usable speed of sound at the map's suction state",
            )
            .into());
    }
    let a = state.speed_of_sound;
    let u = core::f64::consts::PI * d * speed / 60.0;
    let omega_h = a * (ac / (vp * lc)).sqrt();
    let b = u / (2.0 * omega_h * lc);
    if !(0.05..=50.0).contains(&b) {
        return Err(l
            .error(
                &key("plenum_volume_m3"),
                format!("the duct and plenum give Greitzer B = {b:.3}; this model is set up for 0.05 to 50"),
            )
            .into());
    }
    if omega_h * crate::greitzer::STEP > 0.05 {
        return Err(l
            .error(
                &key("plenum_volume_m3"),
                format!(
                    "Helmholtz frequency {omega_h:.0} rad/s is too high for the simulation step {} s",
                    crate::greitzer::STEP
                ),
            )
            .into());
    }
    let mut plant = Plant {
        duct_length: lc,
        tip_speed: u,
        duct_area: ac,
        suction_pressure: ps,
        suction_temperature: ts,
        molar_mass,
        compressibility: sg.map_compressibility,
        flow_coefficient: sg.flow_coefficient_m2,
        polytropic_exponent: sg.polytropic_exponent,
        efficiency: eta,
        point_count: 0,
        ..Plant::demo()
    };
    let q = plant.dynamic_pressure();
    let phi_s = point.flow_m3_per_s / (u * ac);
    let psi_peak = (point.pressure_ratio - 1.0) * ps / q;
    plant.semi_width = 0.5 * phi_s;
    plant.psi_0 = shutoff * psi_peak;
    plant.semi_height = 0.5 * (psi_peak - plant.psi_0);
    plant.recycle_gamma = q_r / (u * ac) / psi_peak.sqrt();
    for (dst, src) in plant.points.iter_mut().zip(&sg.points) {
        *dst = polytrope::surge::SurgePoint {
            speed_rpm: src.speed_rpm,
            suction_volume_flow: src.flow_m3_per_s,
            pressure_ratio: src.pressure_ratio,
            control_margin: src.control_margin,
        };
    }
    plant.point_count = sg.points.len().min(plant.points.len());
    // The operating point: right of the peak and before the
    // characteristic's end of range (Φ < 4W, twice the surge flow).
    let phi_op = q_op / (u * ac);
    if !(phi_op > phi_s && phi_op < 2.0 * phi_s) {
        return Err(l
            .error(
                &key("operating_flow_m3_per_s"),
                format!(
                    "{q_op} m3/s must lie between the surge flow of this speed line ({} m3/s) and twice it",
                    point.flow_m3_per_s
                ),
            )
            .into());
    }
    let psi_op = plant.characteristic(phi_op);
    if psi_op <= 0.0 {
        return Err(l
            .error(
                &key("operating_flow_m3_per_s"),
                "no pressure rise left at this flow",
            )
            .into());
    }
    let throttle = phi_op / psi_op.sqrt();
    plant.design_throttle = throttle;
    let note = format!(
        "# Plant from the train file, stage {} (Greitzer 1976 lumped model, Moore–Greitzer cubic characteristic): speed line {speed} rpm, tip speed {u:.1} m/s, speed of sound {a:.1} m/s ({}), Helmholtz frequency {omega_h:.2} rad/s, B = {b:.3}; surge point {} m3/s at ratio {}; load loss: the process throttle closes to {:.1} % of its opening in 1 s at t = 2 s (the built-in event). The model is incompressible in the duct: use it for controller timing and valve sizing questions, not for absolute pressures.\n",
        i + 1,
        l.file.gas.model(),
        point.flow_m3_per_s,
        point.pressure_ratio,
        LOAD_LOSS_FRACTION * 100.0
    );
    Ok((plant, b, dead, throttle, note))
}

/// Runs the subcommand.
pub fn run(p: &Parsed) -> Result<String, CliError> {
    let (base, note) = from_file(p)?;
    let mut text = String::from(if note.is_some() {
        ""
    } else {
        "# Invented demo scenario: air blower on the Greitzer (1976) lumped model; throttle 0.8 -> 0.3 in 1 s at t = 2 s.\n"
    });
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
