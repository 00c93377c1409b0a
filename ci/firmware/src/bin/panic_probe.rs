//! The panic-freedom check's own test: a deliberately panicking program
//! with the same link-time panic handler as `minimal`. It MUST fail to link
//! (`ci/checks.d/firmware.sh` fails if it links), which proves the check
//! can fail.
#![no_std]
#![no_main]

use cortex_m_rt::entry;

#[entry]
fn main() -> ! {
    let values = [1_u32, 2, 3];
    let i = core::hint::black_box(7_usize);
    let missing: Option<u32> = core::hint::black_box(None);
    #[allow(clippy::indexing_slicing, clippy::unwrap_used)]
    let v = values[i] + missing.unwrap();
    core::hint::black_box(v);
    polytrope_firmware::exit(true)
}

polytrope_firmware::link_time_panic_handler!();
