//! Surge-cycle detection from fast signals on fixed buffers, the margin added
//! to the control line after a detected cycle, and the trip request after
//! repeated cycles.
//!
//! Method (common practice; the signature of a surge cycle is described in
//! Greitzer, "Surge and rotating stall in axial flow compressors", ASME J.
//! Eng. Power 98 (1976), and Botros & Henderson (1994), from memory): during
//! a surge cycle the forward flow collapses within tens of milliseconds (the
//! flow element's differential pressure drops sharply), the discharge
//! pressure falls as the plenum blows down through the machine, and hot gas
//! flowing back raises the suction temperature. With every signal first
//! passed through a 3-sample median (so no single-sample excursion, however
//! large, reaches the test), a cycle is recognised when, within the last
//! `window` seconds,
//!
//! ```text
//! Δp_now ≤ (1 − flow_dp_drop) · max(Δp)                   (and max(Δp) ≥ min_flow_dp)
//! and ( pd_now ≤ max(pd) − pressure_rise_drop · (max(pd) − ps_now)
//!       or Ts_now ≥ min(Ts) + suction_temperature_rise )
//! ```
//!
//! The pressure test is relative to the pressure *rise*, so a high-pressure,
//! low-ratio machine is judged like any other. The window is defined in
//! seconds (it holds `W` time slots of `window / W` each, each slot keeping
//! its maxima and minimum), so it does not change length with the scan
//! period.
//!
//! One cycle counts once: after a detection the detector is disarmed; it
//! re-arms only after `holdoff` seconds *and* once the flow Δp has recovered
//! from its lowest value since the event by half the collapse it detected
//! (`½ · flow_dp_drop · peak`), and it then starts from an empty window, so
//! the pre-blowdown values of one cycle cannot trigger a second count.
//!
//! Each event adds `added_margin_per_cycle` to the control margin (up to
//! `max_added_margin`) until an operator resets it; `trip_count` events
//! within `trip_window` seconds latch a trip request (common practice: a few
//! cycles within a minute), also reset by an operator.
//!
//! **Caution.** The trip request is advisory: a certified protection system
//! decides to trip (this crate is not a certified safety function, IEC 61508 /
//! IEC 61511).

use super::check_setting;
use crate::error::ConfigError;
use crate::quality::Measured;
use crate::real::Real;
use crate::units::{Kelvin, PressureAbs};
use crate::window::Window;

/// Detection settings. Ranges are checked by [`SurgeDetector::new`]; errors
/// name the field as `surge_detection.<field>`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DetectionConfig<T> {
    /// Nominal scan period, s, in [0.0005, 1].
    pub scan_period: T,
    /// Detection window, s, in [0.05, 10]; at least 4 flow-measurement lags
    /// (a lagged collapse must fit in it) and 2 scan periods.
    pub window: T,
    /// First-order lag of the flow measurement (transmitter and impulse
    /// lines), s, in [0, 2].
    pub flow_lag: T,
    /// Fractional drop of the flow element Δp from the window maximum, in
    /// [0.05, 0.95].
    pub flow_dp_drop: T,
    /// Smallest window-maximum Δp for a detection, Pa, in [0, 1e6] (ignores
    /// low-flow noise).
    pub min_flow_dp: T,
    /// Drop of the discharge pressure as a fraction of the pressure rise
    /// `max(pd) − ps`, in [0.01, 0.95].
    pub pressure_rise_drop: T,
    /// Rise of suction temperature over the window minimum, K, in [0.1, 100].
    pub suction_temperature_rise: T,
    /// Least time from a detection to the next, s, in [0, 60].
    pub holdoff: T,
    /// Margin added to the control line per surge cycle, -, in [0, 0.2].
    pub added_margin_per_cycle: T,
    /// Largest total added margin, -, in [0, 0.5].
    pub max_added_margin: T,
    /// Events within `trip_window` that request a trip (1..=E).
    pub trip_count: u8,
    /// Trip counting window, s, in [1, 3600].
    pub trip_window: T,
}

/// One scan of the fast signals.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DetectionScan<T> {
    /// Suction flow element differential pressure, Pa.
    pub flow_dp: Measured<T>,
    /// Suction pressure.
    pub suction_pressure: Measured<PressureAbs<T>>,
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
    /// Present margin added to the control line, -.
    pub added_margin: T,
    /// Trip requested (latched until [`SurgeDetector::reset_trip`]).
    pub trip_request: bool,
    /// The window holds too few good samples to detect (after bad data).
    pub blind: bool,
    /// Ready to count a new cycle (false from a detection until the flow
    /// has recovered).
    pub armed: bool,
}

#[derive(Clone, Copy, Debug, Default)]
struct Sample<T> {
    dp: T,
    ps: T,
    pd: T,
    ts: Option<T>,
}

#[derive(Clone, Copy, Debug, Default)]
struct Slot<T> {
    start_us: u64,
    dp_max: T,
    pd_max: T,
    ts_min: Option<T>,
}

impl<T: Real> Slot<T> {
    fn of(s: &Sample<T>, start_us: u64) -> Self {
        Slot {
            start_us,
            dp_max: s.dp,
            pd_max: s.pd,
            ts_min: s.ts,
        }
    }

    fn merge(&mut self, s: &Sample<T>) {
        self.dp_max = T::max(self.dp_max, s.dp);
        self.pd_max = T::max(self.pd_max, s.pd);
        self.ts_min = min_opt(self.ts_min, s.ts);
    }
}

fn min_opt<T: Real>(a: Option<T>, b: Option<T>) -> Option<T> {
    match (a, b) {
        (Some(x), Some(y)) => Some(T::min(x, y)),
        (x, None) => x,
        (None, y) => y,
    }
}

fn median3<T: Real>(a: T, b: T, c: T) -> T {
    T::max(T::min(a, b), T::min(T::max(a, b), c))
}

/// Seconds to whole microseconds (saturating, rounded).
fn micros<T: Real>(seconds: T) -> u64 {
    let us = seconds.to_f64() * 1.0e6;
    if us >= u64::MAX as f64 {
        u64::MAX
    } else if us > 0.0 {
        (us + 0.5) as u64
    } else {
        0
    }
}

/// Surge-cycle detector with a window of `W` time slots and room for `E`
/// event times.
#[derive(Clone, Debug)]
pub struct SurgeDetector<T, const W: usize, const E: usize> {
    config: DetectionConfig<T>,
    recent: Window<Sample<T>, 3>,
    slots: Window<Slot<T>, W>,
    open: Option<Slot<T>>,
    samples_in_window: u32,
    events: Window<u64, E>,
    now_us: u64,
    window_us: u64,
    slot_us: u64,
    holdoff_until_us: u64,
    trip_window_us: u64,
    peak_at_event: T,
    low_since_event: T,
    state: DetectionState<T>,
}

impl<T: Real, const W: usize, const E: usize> SurgeDetector<T, W, E> {
    /// A detector. Errors name the offending field.
    pub fn new(config: DetectionConfig<T>) -> Result<Self, ConfigError> {
        const { assert!(W >= 2 && E >= 1, "need 2 window slots and 1 event slot") };
        let c = &config;
        check_setting("surge_detection.scan_period", c.scan_period, 5.0e-4, 1.0)?;
        check_setting("surge_detection.flow_lag", c.flow_lag, 0.0, 2.0)?;
        let least_window = f64::max(
            f64::max(0.05, 4.0 * c.flow_lag.to_f64()),
            2.0 * c.scan_period.to_f64(),
        );
        check_setting("surge_detection.window", c.window, least_window, 10.0)?;
        check_setting("surge_detection.flow_dp_drop", c.flow_dp_drop, 0.05, 0.95)?;
        check_setting("surge_detection.min_flow_dp", c.min_flow_dp, 0.0, 1.0e6)?;
        check_setting(
            "surge_detection.pressure_rise_drop",
            c.pressure_rise_drop,
            0.01,
            0.95,
        )?;
        check_setting(
            "surge_detection.suction_temperature_rise",
            c.suction_temperature_rise,
            0.1,
            100.0,
        )?;
        check_setting("surge_detection.holdoff", c.holdoff, 0.0, 60.0)?;
        check_setting(
            "surge_detection.added_margin_per_cycle",
            c.added_margin_per_cycle,
            0.0,
            0.2,
        )?;
        check_setting(
            "surge_detection.max_added_margin",
            c.max_added_margin,
            0.0,
            0.5,
        )?;
        if !(c.trip_count >= 1 && usize::from(c.trip_count) <= E) {
            return Err(ConfigError::out_of_range(
                "surge_detection.trip_count",
                1.0,
                E as f64,
            ));
        }
        check_setting("surge_detection.trip_window", c.trip_window, 1.0, 3600.0)?;
        let window_us = micros(c.window);
        Ok(SurgeDetector {
            window_us,
            slot_us: (window_us / W as u64).max(1),
            trip_window_us: micros(c.trip_window),
            config,
            recent: Window::default(),
            slots: Window::default(),
            open: None,
            samples_in_window: 0,
            events: Window::filled_with(0),
            now_us: 0,
            holdoff_until_us: 0,
            peak_at_event: T::ZERO,
            low_since_event: T::ZERO,
            state: DetectionState {
                surge_this_scan: false,
                event_count: 0,
                events_in_window: 0,
                added_margin: T::ZERO,
                trip_request: false,
                blind: true,
                armed: true,
            },
        })
    }

    /// The last output.
    pub fn state(&self) -> &DetectionState<T> {
        &self.state
    }

    /// Operator reset of the added margin and the event count.
    pub fn reset_added_margin(&mut self) {
        self.state.added_margin = T::ZERO;
        self.state.event_count = 0;
    }

    /// Operator reset of the trip request (and of the events counted for it).
    pub fn reset_trip(&mut self) {
        self.state.trip_request = false;
        self.events.clear();
        self.state.events_in_window = 0;
    }

    fn clear_window(&mut self) {
        self.slots.clear();
        self.open = None;
        self.samples_in_window = 0;
    }

    /// One scan, `dt` seconds (measured) after the previous one; a `dt` that
    /// is not finite or not positive counts as one nominal scan period, and
    /// a gap longer than the window empties it. At most `W + E + 3`
    /// comparisons. A bad flow or pressure clears the window (the detector
    /// is blind until it refills).
    pub fn update(&mut self, scan: &DetectionScan<T>, dt: T) -> &DetectionState<T> {
        let c = self.config;
        let step = if T::is_finite(dt) && dt > T::ZERO {
            micros(dt)
        } else {
            micros(c.scan_period)
        };
        self.now_us = self.now_us.saturating_add(step.max(1));
        if step > self.window_us {
            self.clear_window();
            self.recent.clear();
        }
        self.state.surge_this_scan = false;
        let usable = |m: Measured<T>| m.quality.is_usable() && T::is_finite(m.value);
        let dp = scan.flow_dp;
        let ps = scan.suction_pressure.map(|p| p.pa());
        let pd = scan.discharge_pressure.map(|p| p.pa());
        if !(usable(dp) && usable(ps) && usable(pd)) {
            self.clear_window();
            self.recent.clear();
            self.state.blind = true;
            self.count_window();
            return &self.state;
        }
        let ts = scan
            .suction_temperature
            .map(|t| t.map(|k| k.kelvin()))
            .filter(|t| usable(*t))
            .map(|t| t.value);
        self.recent.write(Sample {
            dp: dp.value,
            ps: ps.value,
            pd: pd.value,
            ts,
        });
        let Some(s) = self.filtered() else {
            self.state.blind = true;
            self.count_window();
            return &self.state;
        };
        if !self.state.armed {
            self.low_since_event = T::min(self.low_since_event, s.dp);
            let recovered =
                s.dp >= self.low_since_event + T::of(0.5) * c.flow_dp_drop * self.peak_at_event;
            if self.now_us >= self.holdoff_until_us && recovered {
                self.state.armed = true;
                self.clear_window();
            }
        }
        self.add_to_window(&s);
        self.state.blind = self.samples_in_window < 2;
        if self.state.armed && !self.state.blind {
            if let Some(peak) = self.cycle_in_window(&s) {
                self.on_event(peak, s.dp);
            }
        }
        self.count_window();
        &self.state
    }

    /// The 3-sample median of each signal, once 3 samples are held.
    fn filtered(&self) -> Option<Sample<T>> {
        let r = self.recent.as_slice();
        let [a, b, c] = r else {
            return None;
        };
        let ts = match (a.ts, b.ts, c.ts) {
            (Some(x), Some(y), Some(z)) => Some(median3(x, y, z)),
            _ => None,
        };
        Some(Sample {
            dp: median3(a.dp, b.dp, c.dp),
            ps: median3(a.ps, b.ps, c.ps),
            pd: median3(a.pd, b.pd, c.pd),
            ts,
        })
    }

    fn add_to_window(&mut self, s: &Sample<T>) {
        self.samples_in_window = self.samples_in_window.saturating_add(1);
        match &mut self.open {
            Some(slot) if self.now_us < slot.start_us.saturating_add(self.slot_us) => {
                slot.merge(s);
            }
            open => {
                if let Some(done) = open.take() {
                    self.slots.write(done);
                }
                *open = Some(Slot::of(s, self.now_us));
            }
        }
    }

    /// The window maximum Δp when the scan completes a cycle.
    fn cycle_in_window(&self, s: &Sample<T>) -> Option<T> {
        let c = &self.config;
        let oldest = self.now_us.saturating_sub(self.window_us);
        let mut dp_max = s.dp;
        let mut pd_max = s.pd;
        let mut ts_min = s.ts;
        let live = self
            .slots
            .as_slice()
            .iter()
            .chain(self.open.iter())
            .filter(|slot| slot.start_us >= oldest);
        for slot in live {
            dp_max = T::max(dp_max, slot.dp_max);
            pd_max = T::max(pd_max, slot.pd_max);
            ts_min = min_opt(ts_min, slot.ts_min);
        }
        let flow_collapse = dp_max >= c.min_flow_dp && s.dp <= (T::ONE - c.flow_dp_drop) * dp_max;
        let rise = pd_max - s.ps;
        let pressure_drop = rise > T::ZERO && s.pd <= pd_max - c.pressure_rise_drop * rise;
        let temperature_rise = match (s.ts, ts_min) {
            (Some(t), Some(m)) => t >= m + c.suction_temperature_rise,
            _ => false,
        };
        (flow_collapse && (pressure_drop || temperature_rise)).then_some(dp_max)
    }

    fn on_event(&mut self, peak: T, dp_now: T) {
        let c = &self.config;
        self.state.surge_this_scan = true;
        self.state.event_count = self.state.event_count.saturating_add(1);
        self.state.added_margin = T::min(
            self.state.added_margin + c.added_margin_per_cycle,
            c.max_added_margin,
        );
        self.events.write(self.now_us);
        self.state.armed = false;
        self.peak_at_event = peak;
        self.low_since_event = dp_now;
        self.holdoff_until_us = self.now_us.saturating_add(micros(c.holdoff));
        self.clear_window();
        self.state.blind = true;
    }

    fn count_window(&mut self) {
        let now = self.now_us;
        let mut n: u8 = 0;
        for &t in self.events.as_slice() {
            if now.saturating_sub(t) <= self.trip_window_us {
                n = n.saturating_add(1);
            }
        }
        self.state.events_in_window = n;
        if n >= self.config.trip_count {
            self.state.trip_request = true;
        }
    }
}
