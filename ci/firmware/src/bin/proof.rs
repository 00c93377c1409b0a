//! Panic-freedom check of every public entry point that `minimal` does not
//! run: calls `polytrope_firmware::proof::exercise` (surge detection,
//! recycle controller and outputs, orifice, flow element, low-flow cut-off,
//! cross-checks, event log, recycle loss) with the same link-time panic
//! handler, so it links only if none of them can panic. Kept apart from
//! `minimal` so the kernel-flash figure stays that of the train, the surge
//! monitor and one channel.
#![no_std]
#![no_main]

use cortex_m_rt::entry;

#[entry]
fn main() -> ! {
    let k = core::hint::black_box(0_u32);
    polytrope_firmware::exit(polytrope_firmware::proof::exercise(k))
}

polytrope_firmware::link_time_panic_handler!();
