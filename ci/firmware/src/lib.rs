//! Support code of the on-target harness: the scan table and its codec
//! (shared with the host test), and the two marker functions between which
//! the QEMU instruction-counting plugin (`ci/qemu-plugin`) counts.
#![no_std]

pub mod codec;
pub mod front;
pub mod gas_tables;
pub mod table;

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
