//! Minimal firmware: builds the demo train and updates it with one scan,
//! then builds a surge-margin monitor and a 4–20 mA signal channel and
//! updates each once. Two jobs: its size minus `empty` is the kernel's flash
//! and RAM, and it is a panic-freedom check: its panic handler calls a
//! symbol that is defined nowhere, so if any panic path of `Train::new`,
//! `Train::update`, `SurgeMonitor::new`/`update` or `Channel::new`/`update`
//! survives optimisation, the link fails. The `proof` firmware does the same
//! for every other public entry point.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use polytrope::demo;
use polytrope_firmware::codec::decode_scan;
use polytrope_firmware::front;
use polytrope_firmware::table::MINIMAL_SCAN;

#[entry]
fn main() -> ! {
    let train_ok = match demo::train::<f32>() {
        Ok(mut train) => {
            let scan = decode_scan::<f32, { demo::STAGES }>(core::hint::black_box(&MINIMAL_SCAN));
            let snapshot = train.update(&scan);
            core::hint::black_box(snapshot);
            true
        }
        Err(_) => false,
    };
    let k = core::hint::black_box(0_u32);
    let surge_ok = match front::surge_monitor() {
        Ok(mut monitor) => {
            let shift = core::hint::black_box(0.0);
            core::hint::black_box(monitor.update(&front::surge_scan(k), shift, 0.02));
            true
        }
        Err(_) => false,
    };
    let channel_ok = match front::pressure_channel() {
        Ok(mut channel) => {
            let (raw, t_ms) = front::raw_sample(k);
            core::hint::black_box(channel.update(core::hint::black_box(raw), t_ms));
            true
        }
        Err(_) => false,
    };
    polytrope_firmware::exit(train_ok && surge_ok && channel_ok)
}

polytrope_firmware::link_time_panic_handler!();
