//! Surge-cycle detection from fast signals on fixed buffers, the control
//! line shift after a surge, and the trip request after repeated surges.
//!
//! Method (common practice; the signature of a surge cycle is described in
//! Greitzer, "Surge and rotating stall in axial flow compressors", ASME J.
//! Eng. Power 98 (1976), and Botros & Henderson (1994), from memory): during
//! a surge cycle the forward flow collapses within tens of milliseconds (the
//! flow element's differential pressure drops sharply), the discharge
//! pressure falls as the plenum blows down through the machine, and hot gas
//! flowing back raises the suction temperature. A cycle is recognised when,
//! within the last `W` scans,
//!
//! ```text
//! Δp_now ≤ (1 − flow_dp_drop) · max(Δp)          (and max(Δp) ≥ min_flow_dp)
//! and ( pd_now ≤ (1 − discharge_pressure_drop) · max(pd)
//!       or Ts_now ≥ min(Ts) + suction_temperature_rise )
//! ```
//!
//! After a detection the window is cleared (one cycle counts once) and the
//! detector holds off for `holdoff` seconds. Each event moves the control
//! line out by `shift_per_event` (up to `max_shift`) until an operator resets
//! it; `trip_count` events within `trip_window` seconds latch a trip request
//! (common practice: a few cycles within a minute), also reset by an
//! operator.
//!
//! **Caution.** The trip request is advisory: a certified protection system
//! decides to trip (this crate is not a certified safety function, IEC 61508 /
//! IEC 61511).

use crate::error::{outside_documented_range, ConfigError};
use crate::quality::Measured;
use crate::real::Real;
use crate::units::{Kelvin, PressureAbs};
use crate::window::Window;

/// Detection settings.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DetectionConfig<T> {
    /// Scan period, s.
    pub scan_period: T,
    /// Fractional drop of the flow element Δp from the window maximum, in (0, 1).
    pub flow_dp_drop: T,
    /// Smallest window-maximum Δp for a detection, Pa (ignores low-flow noise).
    pub min_flow_dp: T,
    /// Fractional drop of discharge pressure from the window maximum, in (0, 1).
    pub discharge_pressure_drop: T,
    /// Rise of suction temperature over the window minimum, K (> 0).
    pub suction_temperature_rise: T,
    /// Time after a detection during which no new one is counted, s (>= 0).
    pub holdoff: T,
    /// Control line shift added per surge event, - (>= 0).
    pub shift_per_event: T,
    /// Largest total shift, - (>= 0).
    pub max_shift: T,
    /// Events within `trip_window` that request a trip (1..=E).
    pub trip_count: u8,
    /// Trip counting window, s (> 0).
    pub trip_window: T,
}

/// One scan of the fast signals.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DetectionScan<T> {
    /// Suction flow element differential pressure, Pa.
    pub flow_dp: Measured<T>,
    /// Discharge pressure.
    pub discharge_pressure: Measured<PressureAbs<T>>,
    /// Suction temperature, if measured fast enough.
    pub suction_temperature: Option<Measured<Kelvin<T>>>,
}

/// Detector output for one scan.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DetectionState<T> {
    /// A surge cycle was recognised on this scan.
    pub surge_this_scan: bool,
    /// Events since the last operator reset of the count.
    pub event_count: u32,
    /// Events within the trip window.
    pub events_in_window: u8,
    /// Present control line shift, -.
    pub control_line_shift: T,
    /// Trip requested (latched until [`SurgeDetector::reset_trip`]).
    pub trip_request: bool,
    /// The window holds too few good samples to detect (after bad data).
    pub blind: bool,
}

#[derive(Clone, Copy, Debug, Default)]
struct Sample<T> {
    dp: T,
    pd: T,
    ts: Option<T>,
}

/// Surge-cycle detector with a `W`-scan signal window and room for `E`
/// event times.
#[derive(Clone, Debug)]
pub struct SurgeDetector<T, const W: usize, const E: usize> {
    config: DetectionConfig<T>,
    window: Window<Sample<T>, W>,
    events: Window<u64, E>,
    scan: u64,
    holdoff_left: u32,
    holdoff_scans: u32,
    trip_window_scans: u64,
    state: DetectionState<T>,
}

fn scans_of<T: Real>(seconds: T, period: T) -> u32 {
    let n = (seconds / period).to_f64();
    if n >= u32::MAX as f64 {
        u32::MAX
    } else if n > 0.0 {
        // Round up: a window never shorter than asked.
        let t = n as u32;
        if (t as f64) < n {
            t.saturating_add(1)
        } else {
            t
        }
    } else {
        0
    }
}

impl<T: Real, const W: usize, const E: usize> SurgeDetector<T, W, E> {
    /// A detector. Errors name the offending field.
    pub fn new(config: DetectionConfig<T>) -> Result<Self, ConfigError> {
        const { assert!(W >= 2 && E >= 1, "need a 2-scan window and 1 event slot") };
        let c = &config;
        let fin = |x: T| T::is_finite(x);
        let frac = |x: T| fin(x) && x > T::ZERO && x < T::ONE;
        let checks = [
            (
                fin(c.scan_period) && c.scan_period > T::ZERO,
                "surge_detection.scan_period",
            ),
            (frac(c.flow_dp_drop), "surge_detection.flow_dp_drop"),
            (
                fin(c.min_flow_dp) && c.min_flow_dp >= T::ZERO,
                "surge_detection.min_flow_dp",
            ),
            (
                frac(c.discharge_pressure_drop),
                "surge_detection.discharge_pressure_drop",
            ),
            (
                fin(c.suction_temperature_rise) && c.suction_temperature_rise > T::ZERO,
                "surge_detection.suction_temperature_rise",
            ),
            (
                fin(c.holdoff) && c.holdoff >= T::ZERO,
                "surge_detection.holdoff",
            ),
            (
                fin(c.shift_per_event) && c.shift_per_event >= T::ZERO,
                "surge_detection.shift_per_event",
            ),
            (
                fin(c.max_shift) && c.max_shift >= T::ZERO,
                "surge_detection.max_shift",
            ),
            (
                c.trip_count >= 1 && usize::from(c.trip_count) <= E,
                "surge_detection.trip_count",
            ),
            (
                fin(c.trip_window) && c.trip_window > T::ZERO,
                "surge_detection.trip_window",
            ),
        ];
        for (ok, field) in checks {
            if !ok {
                return Err(outside_documented_range(field));
            }
        }
        Ok(SurgeDetector {
            holdoff_scans: scans_of(c.holdoff, c.scan_period),
            trip_window_scans: u64::from(scans_of(c.trip_window, c.scan_period)),
            config,
            window: Window::default(),
            events: Window::filled_with(0),
            scan: 0,
            holdoff_left: 0,
            state: DetectionState {
                surge_this_scan: false,
                event_count: 0,
                events_in_window: 0,
                control_line_shift: T::ZERO,
                trip_request: false,
                blind: true,
            },
        })
    }

    /// The last output.
    pub fn state(&self) -> &DetectionState<T> {
        &self.state
    }

    /// Operator reset of the control line shift and the event count.
    pub fn reset_shift(&mut self) {
        self.state.control_line_shift = T::ZERO;
        self.state.event_count = 0;
    }

    /// Operator reset of the trip request (and of the events counted for it).
    pub fn reset_trip(&mut self) {
        self.state.trip_request = false;
        self.events.clear();
        self.state.events_in_window = 0;
    }

    /// One scan: at most `W + E` comparisons. A bad flow or discharge
    /// pressure clears the window (the detector is blind until it refills).
    pub fn update(&mut self, scan: &DetectionScan<T>) -> &DetectionState<T> {
        self.scan = self.scan.saturating_add(1);
        self.state.surge_this_scan = false;
        self.holdoff_left = self.holdoff_left.saturating_sub(1);
        let dp = scan.flow_dp;
        let pd = scan.discharge_pressure.map(|p| p.pa());
        let usable = |m: Measured<T>| m.quality.is_usable() && T::is_finite(m.value);
        if !(usable(dp) && usable(pd)) {
            self.window.clear();
            self.state.blind = true;
            self.count_window();
            return &self.state;
        }
        let ts = scan
            .suction_temperature
            .map(|t| t.map(|k| k.kelvin()))
            .filter(|t| usable(*t))
            .map(|t| t.value);
        self.window.write(Sample {
            dp: dp.value,
            pd: pd.value,
            ts,
        });
        self.state.blind = self.window.len() < 2;
        if !self.state.blind
            && self.holdoff_left == 0
            && self.cycle_in_window(dp.value, pd.value, ts)
        {
            self.on_event();
        }
        self.count_window();
        &self.state
    }

    fn cycle_in_window(&self, dp: T, pd: T, ts: Option<T>) -> bool {
        let c = &self.config;
        let mut dp_max = dp;
        let mut pd_max = pd;
        let mut ts_min = ts;
        for s in self.window.as_slice() {
            dp_max = T::max(dp_max, s.dp);
            pd_max = T::max(pd_max, s.pd);
            if let Some(t) = s.ts {
                ts_min = Some(ts_min.map_or(t, |m| T::min(m, t)));
            }
        }
        let flow_collapse = dp_max >= c.min_flow_dp && dp <= (T::ONE - c.flow_dp_drop) * dp_max;
        let pressure_drop = pd <= (T::ONE - c.discharge_pressure_drop) * pd_max;
        let temperature_rise = match (ts, ts_min) {
            (Some(t), Some(m)) => t >= m + c.suction_temperature_rise,
            _ => false,
        };
        flow_collapse && (pressure_drop || temperature_rise)
    }

    fn on_event(&mut self) {
        let c = &self.config;
        self.state.surge_this_scan = true;
        self.state.event_count = self.state.event_count.saturating_add(1);
        self.state.control_line_shift = T::min(
            self.state.control_line_shift + c.shift_per_event,
            c.max_shift,
        );
        self.events.write(self.scan);
        self.window.clear();
        self.state.blind = true;
        self.holdoff_left = self.holdoff_scans;
    }

    fn count_window(&mut self) {
        let now = self.scan;
        let mut n: u8 = 0;
        for &t in self.events.as_slice() {
            if now.saturating_sub(t) <= self.trip_window_scans {
                n = n.saturating_add(1);
            }
        }
        self.state.events_in_window = n;
        if n >= self.config.trip_count {
            self.state.trip_request = true;
        }
    }
}
