//! Support code of the on-target harness: the scan table and its codec
//! (shared with the host test), and the two marker functions between which
//! the QEMU instruction-counting plugin (`ci/qemu-plugin`) counts.
#![no_std]

pub mod codec;
pub mod controller;
pub mod front;
pub mod gas_tables;
pub mod proof;
pub mod report;
pub mod table;

/// Ends the program through semihosting (QEMU exits with this status).
pub fn exit(success: bool) -> ! {
    use cortex_m_semihosting::debug;
    debug::exit(if success {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    #[allow(clippy::empty_loop)]
    loop {}
}

/// Defines the link-time panic handler: it calls a symbol that is defined
/// nowhere, so a program links only if no panic path survives optimisation
/// (the panic-freedom check; `panic_probe` shows it can fail).
#[macro_export]
macro_rules! link_time_panic_handler {
    () => {
        #[panic_handler]
        fn panic(_: &core::panic::PanicInfo) -> ! {
            extern "C" {
                fn polytrope_reachable_panic_path() -> !;
            }
            // SAFETY: never defined; a reachable panic fails the link (by design).
            unsafe { polytrope_reachable_panic_path() }
        }
    };
}

/// Start of a measured region; the plugin starts counting at its first
/// instruction. Its body differs from [`polytrope_measure_stop`] so that
/// LTO cannot merge the two.
#[inline(never)]
#[no_mangle]
pub extern "C" fn polytrope_measure_start(region: u32) -> u32 {
    core::hint::black_box(region)
}

/// End of a measured region; the plugin stops counting at its first
/// instruction (exclusive).
#[inline(never)]
#[no_mangle]
pub extern "C" fn polytrope_measure_stop(region: u32) -> u32 {
    core::hint::black_box(region.wrapping_mul(3).wrapping_add(1))
}

/// Runs `f` between the two markers. `f` should call an `#[inline(never)]`
/// function whose inputs went through `black_box`, so nothing moves across
/// the markers.
#[inline(always)]
pub fn measure<R>(region: u32, f: impl FnOnce() -> R) -> R {
    polytrope_measure_start(region);
    let r = core::hint::black_box(f());
    polytrope_measure_stop(region);
    r
}
