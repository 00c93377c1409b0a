//! The surge-margin monitor and a 4–20 mA signal channel as the harness and
//! the minimal firmware run them. Everything here is an invented scenario
//! (demo data): a 4-point surge line and a suction-pressure transmitter.

use polytrope::signal::{Channel, ChannelConfig, InstrumentClass, SignalKind, Unit};
use polytrope::surge::{demo_map, ExponentConfig, SurgeLine, SurgeMonitor, SurgeScan};
use polytrope::units::{Kelvin, PressureAbs};
use polytrope::{ConfigError, Measured};

/// Surge monitor: a 4-point line and a two-pole rate filter (50 ms).
pub type Monitor = SurgeMonitor<f32, 4>;

/// One transmitter channel: 8-sample frozen window, 5-sample median.
pub type PressureChannel = Channel<f32, 8, 5>;

/// Scans to run before measuring, so the rate filter has settled (4 τ).
pub const WARM_SCANS: u32 = 12;

/// The monitor on the kernel's invented 4-speed surge line
/// (`polytrope::surge::demo_map`, demo data): one copy of the map for the
/// tests, the host tools and the firmware.
pub fn surge_monitor() -> Result<Monitor, ConfigError> {
    let points = demo_map::points::<f32>();
    let line = SurgeLine::new(&demo_map::line_config(&points))?;
    SurgeMonitor::new(line, demo_map::monitor_config())
}

/// Scans to run before measuring the measured-exponent monitor, so its σ
/// filter (1 s) has settled at 20 ms scans.
pub const WARM_SCANS_EXPONENT: u32 = 60;

/// The same monitor with the head exponent from the measured temperatures
/// (σ filter 1 s, sensors 0.5 K; invented settings).
pub fn surge_monitor_measured() -> Result<Monitor, ConfigError> {
    surge_monitor()?.with_measured_exponent(ExponentConfig {
        filter_time: 1.0,
        temperature_accuracy: 0.5,
    })
}

/// Scan `k` of an invented slow approach to the line (flow falling, head
/// rising), all signals good.
pub fn surge_scan(k: u32) -> SurgeScan<f32> {
    let k = (k % 64) as f32;
    SurgeScan {
        suction_pressure: Measured::good(PressureAbs::from_pa(1.0e5)),
        discharge_pressure: Measured::good(PressureAbs::from_pa(1.85e5 + 300.0 * k)),
        flow_dp: Measured::good(2_600.0 - 15.0 * k),
        // σ about 0.31 (read only by the measured-exponent monitor).
        suction_temperature: Measured::good(Kelvin::new(293.15)),
        discharge_temperature: Measured::good(Kelvin::new(354.7 + 0.17 * k)),
    }
}

/// An invented suction-pressure transmitter: 4–20 mA over 0..10 bar gauge.
pub fn pressure_channel() -> Result<PressureChannel, ConfigError> {
    PressureChannel::new(ChannelConfig {
        id: 1,
        signal: SignalKind::Current4To20,
        unit: Unit::PressureGauge {
            atmosphere: PressureAbs::from_pa(101_325.0),
        },
        range_low: 0.0,
        range_high: 10.0e5,
        plausible_low: 0.5e5,
        plausible_high: 12.0e5,
        noise_floor: 20.0,
        instrument: InstrumentClass::FractionOfSpan(0.001),
        max_rate: 5.0e5,
        filter_time_constant_s: 0.1,
        hold_ms: 500,
    })
}

/// Raw sample `k` (mA) of the transmitter, with a little invented noise,
/// taken every 20 ms (a 32-bit millisecond tick).
pub fn raw_sample(k: u32) -> (f32, u32) {
    let noise = [0.0, 0.004, -0.003, 0.006, -0.005, 0.002, -0.001];
    let n = noise.get((k % 7) as usize).copied().unwrap_or(0.0);
    (8.0 + n, k.wrapping_mul(20))
}

/// The register image of the demo train with one surge monitor and one
/// channel.
pub type Image = polytrope::registers::RegisterImage<
    { polytrope::demo::STAGES },
    1,
    1,
    { polytrope::registers::image_len(polytrope::demo::STAGES, 1, 1) },
>;

/// A detection state to pack next to the monitor's (no detector runs in the
/// harness; the packer's cost does not depend on these values).
pub const fn quiet_detection() -> polytrope::surge::DetectionState<f32> {
    polytrope::surge::DetectionState {
        surge_this_scan: false,
        event_count: 0,
        events_in_window: 0,
        added_margin: 0.0,
        trip_request: false,
        blind: false,
        armed: true,
    }
}
