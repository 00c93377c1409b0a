//! The whole controller scan once (`polytrope_firmware::controller`: 12
//! channels, the 4-stage 3-intercooler train fed by them, 4 surge monitors).
//! Two jobs, as `minimal`: its size minus `empty` is the kernel flash of
//! everything a controller scan links, and its link-time panic handler makes
//! it a panic-freedom check of that scan.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use polytrope::demo;
use polytrope::gas::GasModel;
use polytrope_firmware::controller::{self, Controller};
use polytrope_firmware::table::MINIMAL_SCAN;

/// The whole scan as one out-of-line call: the root from which
/// `ci/reach_flash.py` measures the flash the scan links (the code it can
/// run and the constants it can read), apart from the start-up code.
#[inline(never)]
fn scan_once<G: GasModel<f32>>(
    ctl: &mut Controller<G>,
    raw: &[f32; controller::CHANNELS],
    t_ms: u32,
    slow: &mut polytrope::scan::Scan<f32, { controller::SECTIONS }>,
) -> controller::ScanSummary {
    ctl.scan(raw, t_ms, slow)
}

#[entry]
fn main() -> ! {
    let ok = match (demo::config::<f32>(), controller::ideal_gas()) {
        (Ok(cfg), Ok(gas)) => {
            let mut slot = core::mem::MaybeUninit::uninit();
            // The configuration as an opaque value, as a device's stored or
            // received one is: its checks are not folded away at build time.
            let config = core::hint::black_box(controller::train_config(&cfg, gas));
            match Controller::build_in(&mut slot, config) {
                Ok(ctl) => {
                    let mut slow = core::mem::MaybeUninit::uninit();
                    let slow = controller::section_scan_in(
                        &mut slow,
                        core::hint::black_box(&MINIMAL_SCAN),
                    );
                    // Raw samples (mA) unknown at compile time; the transmitter
                    // simulation of `Controller::samples` stays out of this
                    // firmware's flash.
                    let raw = core::hint::black_box([8.0_f32; controller::CHANNELS]);
                    let t = core::hint::black_box(0_u32);
                    core::hint::black_box(scan_once(ctl, core::hint::black_box(&raw), t, slow));
                    true
                }
                _ => false,
            }
        }
        _ => false,
    };
    polytrope_firmware::exit(ok)
}

polytrope_firmware::link_time_panic_handler!();
