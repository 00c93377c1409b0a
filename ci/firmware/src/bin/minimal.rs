//! Minimal firmware: builds the demo train and updates it with one scan.
//! Two jobs: its size minus `empty` is the kernel's flash and RAM, and it is
//! the panic-freedom check: its panic handler calls a symbol that is defined
//! nowhere, so if any panic path of `Train::new` or `Train::update`
//! survives optimisation, the link fails.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use cortex_m_semihosting::debug;
use polytrope::demo;
use polytrope_firmware::codec::decode_scan;
use polytrope_firmware::table::MINIMAL_SCAN;

#[entry]
fn main() -> ! {
    let status = match demo::train::<f32>() {
        Ok(mut train) => {
            let scan = decode_scan::<f32, { demo::STAGES }>(core::hint::black_box(&MINIMAL_SCAN));
            let snapshot = train.update(&scan);
            core::hint::black_box(snapshot);
            debug::EXIT_SUCCESS
        }
        Err(_) => debug::EXIT_FAILURE,
    };
    debug::exit(status);
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
