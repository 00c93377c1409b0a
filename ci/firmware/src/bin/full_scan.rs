//! The whole controller scan measured as one call (a harness of its own, so
//! that the Cortex-M0 board's 16 KiB of RAM hold the controller's state
//! beside nothing else): `polytrope_firmware::controller` (12 channels, the
//! 4-stage 3-intercooler train fed by them, 4 surge monitors), warmed with
//! the first scans of the committed table, then three measured scans; prints
//! the outputs of the last (`F` lines, for before/after comparisons), the
//! stack high-water mark and the state sizes.
//!
//! Output lines: `M region name`, `S key value`, `F name bits...`, `END ok`
//! (as the main harness).
#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use polytrope::demo;
use polytrope::fields::FieldValue;
use polytrope::gas::IdealGasConstantK;
use polytrope::quality::Quality;
use polytrope::scan::Scan;
use polytrope::surge::SurgeScan;
use polytrope_firmware::codec::quality_code;
use polytrope_firmware::controller::{self, Controller, ScanSummary};
use polytrope_firmware::measure;
use polytrope_firmware::report::{stack_used, Host};
use polytrope_firmware::table::SCANS;

type Ctl = Controller<IdealGasConstantK<f32>>;

macro_rules! out {
    ($h:expr, $($t:tt)*) => { $h.line(format_args!($($t)*)) };
}

fn fail(h: &mut Host, what: &str) -> ! {
    out!(h, "ERROR {}", what);
    polytrope_firmware::exit(false)
}

#[inline(never)]
fn full_scan(
    c: &mut Ctl,
    raw: &[f32; controller::CHANNELS],
    t_ms: u32,
    scan: &mut Scan<f32, { controller::SECTIONS }>,
) -> ScanSummary {
    c.scan(raw, t_ms, scan)
}

/// The three phases of one scan as separately measured calls (the
/// breakdown of the whole scan, in the same firmware).
#[inline(never)]
fn phase_channels(
    c: &mut Ctl,
    raw: &[f32; controller::CHANNELS],
    t_ms: u32,
    scan: &mut Scan<f32, { controller::SECTIONS }>,
) -> ([SurgeScan<f32>; controller::SECTIONS], f32) {
    c.read_channels(raw, t_ms, scan)
}

#[inline(never)]
fn phase_train(c: &mut Ctl, scan: &Scan<f32, { controller::SECTIONS }>) -> f32 {
    c.update_train(scan)
}

#[inline(never)]
fn phase_monitors(
    c: &mut Ctl,
    surge: &[SurgeScan<f32>; controller::SECTIONS],
    dt: f32,
) -> [f32; controller::SECTIONS] {
    c.update_monitors(surge, dt)
}

/// The measured path is the usual one: every channel and every margin good,
/// the total power usable (the ideal-gas model may mark the stages above
/// its validity pressure uncertain: the demo is a CO2 train up to 66 bar).
fn all_good(ctl: &Ctl) -> bool {
    ctl.snapshot().totals.total_power.quality.is_usable()
        && ctl
            .channels()
            .iter()
            .all(|c| c.output().filtered.quality == Quality::Good)
        && ctl
            .monitors()
            .iter()
            .all(|m| m.state().margin.quality == Quality::Good)
}

#[inline(never)]
fn print_outputs(h: &mut Host, ctl: &Ctl) {
    for (i, c) in ctl.channels().iter().enumerate() {
        let o = c.output();
        out!(
            h,
            "F channel.{} {:08x} {:08x} {}",
            i,
            o.raw.value.to_bits(),
            o.filtered.value.to_bits(),
            quality_code(o.filtered.quality)
        );
    }
    for (i, m) in ctl.monitors().iter().enumerate() {
        let s = m.state();
        out!(
            h,
            "F surge.{} {:08x} {:08x} {:08x} {:08x} {:08x} {:08x}",
            i,
            s.flow_number.value.to_bits(),
            s.head_number.value.to_bits(),
            s.margin.value.to_bits(),
            s.clearance.value.to_bits(),
            s.rate_of_approach.value.to_bits(),
            s.time_to_surge.value.to_bits()
        );
    }
    ctl.snapshot().visit_groups(&mut |g, spec, value| {
        if let FieldValue::Real(m) = value {
            out!(
                h,
                "F {}.{}.{} {:08x} {}",
                g.as_str(),
                g.index(),
                spec.key,
                m.value.to_bits(),
                quality_code(m.quality)
            );
        }
    });
}

/// Warm-up, three measured scans, the outputs and the stack high-water mark
/// (out of line: main's frame holds only the controller).
#[inline(never)]
fn run(h: &mut Host, label: &mut impl FnMut(&mut Host, &str) -> u32, ctl: &mut Ctl) {
    let mut k = 0_u32;
    for raw in SCANS.iter().take(controller::WARM_SCANS) {
        let mut slow = controller::section_scan(black_box(raw));
        let samples = ctl.samples(&slow, k);
        full_scan(ctl, &samples, k * controller::SCAN_MS, &mut slow);
        k += 1;
    }
    for raw in SCANS.iter().skip(controller::WARM_SCANS).take(3) {
        let mut slow = black_box(controller::section_scan(black_box(raw)));
        let samples = black_box(ctl.samples(&slow, k));
        let t = black_box(k * controller::SCAN_MS);
        let r = label(h, "full_scan");
        measure(r, || full_scan(ctl, &samples, t, &mut slow));
        k += 1;
    }
    if !all_good(ctl) {
        fail(h, "whole scan not good after warm-up");
    }
    print_outputs(h, ctl);

    // The breakdown: three more (normal) scans, each phase a measured call.
    for raw in SCANS.iter().skip(controller::WARM_SCANS - 3).take(3) {
        let mut slow = black_box(controller::section_scan(black_box(raw)));
        let samples = black_box(ctl.samples(&slow, k));
        let t = black_box(k * controller::SCAN_MS);
        let r = label(h, "full_scan_channels");
        let (surge, dt) = measure(r, || phase_channels(ctl, &samples, t, &mut slow));
        let (surge, dt, slow) = black_box((surge, dt, slow));
        let r = label(h, "full_scan_monitors");
        measure(r, || phase_monitors(ctl, &surge, dt));
        let r = label(h, "full_scan_train");
        measure(r, || phase_train(ctl, &slow));
        k += 1;
    }

    if !all_good(ctl) {
        fail(h, "breakdown scans not good");
    }

    // The last normal scan of the table (edge cases follow it).
    let raw = &SCANS[controller::WARM_SCANS + 2];
    let mut slow = black_box(controller::section_scan(black_box(raw)));
    let samples = black_box(ctl.samples(&slow, k));
    let t = black_box(k * controller::SCAN_MS);
    let used = stack_used(|| {
        full_scan(ctl, &samples, t, &mut slow);
    });
    out!(h, "S stack_full_scan {}", used);
    out!(h, "S state_full_scan {}", core::mem::size_of::<Ctl>());
    k += 1;

    // The same whole scan when every stage's output qualities change from
    // the scan before (the suction temperatures uncertain in every other
    // scan, as the main harness's `update_4_stages_3_intercoolers_regraded`):
    // a stage whose input qualities are unchanged keeps its output
    // qualities without rewriting them, so `full_scan` above is a steady
    // scan's; this is a scan that regrades every stage. Measured last (it
    // leaves the train's windows as the uncertain scans left them).
    for (i, raw) in SCANS
        .iter()
        .skip(controller::WARM_SCANS)
        .take(3)
        .enumerate()
    {
        let mut slow = controller::section_scan(black_box(raw));
        if i % 2 == 0 {
            for st in slow.stages.iter_mut() {
                st.suction_temperature.quality = Quality::Uncertain;
            }
        }
        let mut slow = black_box(slow);
        let samples = black_box(ctl.samples(&slow, k));
        let t = black_box(k * controller::SCAN_MS);
        let r = label(h, "full_scan_regraded");
        measure(r, || full_scan(ctl, &samples, t, &mut slow));
        k += 1;
    }
    black_box(k);
}

/// Bytes of RAM between the end of the statics and the lowest stack word
/// reached by a call that used `used` bytes below the caller's stack pointer
/// (RAM left; meaningful where the stack and the statics share one RAM
/// block, as on the Cortex-M0 board).
fn stack_left(used: usize) -> usize {
    extern "C" {
        static mut __ebss: u32;
    }
    let sp: usize;
    // SAFETY: reads the stack pointer only.
    unsafe { core::arch::asm!("mov {}, sp", out(reg) sp) };
    sp.saturating_sub(used)
        .saturating_sub(core::ptr::addr_of!(__ebss) as usize)
}

#[entry]
fn main() -> ! {
    let mut h = Host::open();
    out!(h, "polytrope whole-scan harness (invented demo scenario)");
    let mut region = 0_u32;
    let mut label = |h: &mut Host, name: &str| {
        out!(h, "M {} {}", region, name);
        region += 1;
        region - 1
    };
    let r = label(&mut h, "empty");
    measure(r, || black_box(0_u32));

    let Ok(demo_cfg) = demo::config::<f32>() else {
        fail(&mut h, "demo config");
    };
    let Ok(gas) = controller::ideal_gas() else {
        fail(&mut h, "ideal gas");
    };
    let mut slot = core::mem::MaybeUninit::uninit();
    let mut built = None;
    // Start-up stack (the Cortex-M0 board's 16 KiB of RAM hold main's frame
    // with the controller's state and this): the construction's high-water
    // mark, and what is left below it.
    let used = stack_used(|| {
        built = Ctl::build_in(&mut slot, controller::train_config(&demo_cfg, gas)).ok();
    });
    let Some(ctl) = built else {
        fail(&mut h, "controller config");
    };
    out!(h, "S stack_build_controller {}", used);
    out!(h, "S stack_left_build_controller {}", stack_left(used));
    run(&mut h, &mut label, ctl);
    out!(
        h,
        "S state_channel {}",
        core::mem::size_of::<controller::TransmitterChannel>()
    );
    out!(
        h,
        "S state_surge_monitor {}",
        core::mem::size_of::<controller::SectionMonitor>()
    );
    out!(h, "END ok");
    polytrope_firmware::exit(true)
}

#[panic_handler]
fn panic(info: &core::panic::PanicInfo) -> ! {
    let mut h = Host::open();
    out!(h, "PANIC {}", info);
    polytrope_firmware::exit(false)
}
