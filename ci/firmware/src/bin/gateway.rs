//! Gateway firmware: the minimal firmware's work plus the register image:
//! it packs the demo train's snapshot, a surge monitor's state and a
//! channel's output into a `RegisterImage` and decodes a command block. Its
//! panic handler calls a symbol defined nowhere, so it links only if no
//! panic path of `RegisterImage::new` / `pack`, `decode_command`,
//! `record_command` or `acknowledge_surge_events` survives optimisation;
//! its size minus the minimal firmware's is the packer's flash.
#![no_std]
#![no_main]

use core::hint::black_box;

use cortex_m_rt::entry;
use polytrope::demo;
use polytrope::registers::{decode_command, SurgeView, WordOrder};
use polytrope_firmware::codec::decode_scan;
use polytrope_firmware::front::{self, Image};
use polytrope_firmware::table::MINIMAL_SCAN;

#[entry]
fn main() -> ! {
    let k = black_box(0_u32);
    let (Ok(mut train), Ok(mut monitor), Ok(mut channel)) = (
        demo::train::<f32>(),
        front::surge_monitor(),
        front::pressure_channel(),
    ) else {
        polytrope_firmware::exit(false)
    };
    let scan = decode_scan::<f32, { demo::STAGES }>(black_box(&MINIMAL_SCAN));
    let state = *monitor.update(&front::surge_scan(k), black_box(0.0), 0.02);
    let (raw, t_ms) = front::raw_sample(k);
    let out = channel.update(black_box(raw), t_ms);
    let order = if black_box(k) == 0 {
        WordOrder::HighWordFirst
    } else {
        WordOrder::LowWordFirst
    };
    let mut image = Image::new(order, black_box(0x5EED_0001));
    let view = SurgeView {
        state,
        detection: front::quiet_detection(),
    };
    image.pack(train.update(&scan), &[view], &[out]);
    let words = black_box([2_u16, 0, !2, 7]);
    if let Ok(c) = decode_command(black_box(0), &words, 1) {
        image.acknowledge_surge_events(usize::from(c.target), 0);
        image.record_command(c);
    }
    black_box(image.registers());
    polytrope_firmware::exit(true)
}

polytrope_firmware::link_time_panic_handler!();
