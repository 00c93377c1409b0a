//! Baseline for the size figures: the runtime, semihosting exit and the same
//! input scan as `minimal`, but no kernel.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use cortex_m_semihosting::debug;
use polytrope_firmware::table::MINIMAL_SCAN;

#[entry]
fn main() -> ! {
    core::hint::black_box(&MINIMAL_SCAN);
    debug::exit(debug::EXIT_SUCCESS);
    #[allow(clippy::empty_loop)]
    loop {}
}

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    extern "C" {
        fn polytrope_reachable_panic_path() -> !;
    }
    // SAFETY: never defined; a reachable panic fails the link (by design).
    unsafe { polytrope_reachable_panic_path() }
}
