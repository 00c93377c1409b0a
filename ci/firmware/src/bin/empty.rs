//! Baseline for the size figures: the runtime, semihosting exit and the same
//! input scan as `minimal`, but no kernel.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use polytrope_firmware::table::MINIMAL_SCAN;

#[entry]
fn main() -> ! {
    core::hint::black_box(&MINIMAL_SCAN);
    polytrope_firmware::exit(true)
}

polytrope_firmware::link_time_panic_handler!();
