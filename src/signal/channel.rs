//! Channel configuration and scaling: raw signal (mA, V, ADC counts or an
//! engineering value from a fieldbus) to an SI value (Pa absolute, K, Pa
//! differential, or any other SI quantity).
//!
//! Linear scaling of a live-zero or zero-based signal onto the engineering
//! range is common practice; the 4–20 mA diagnostics follow NAMUR NE 43
//! ([`super::ne43`]).

use super::ne43;
use super::rtd_class::RtdClass;
use super::FaultCode;
use crate::error::{check_positive, check_range, ConfigError, Problem};
use crate::quality::Quality;
use crate::real::Real;
use crate::units::{PressureAbs, ZERO_CELSIUS_K};

/// A voltage or count signal may lie this far outside its span (fraction of
/// span) before it is a fault (a small over- and under-range is normal;
/// common practice, value chosen here).
pub const SPAN_ALLOWANCE: f64 = 0.025;

/// What the raw number is.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SignalKind<T> {
    /// Loop current in mA, 4–20 mA over the engineering range, with NAMUR
    /// NE 43 diagnostics.
    Current4To20,
    /// Voltage in V, 0–10 V over the engineering range. (A broken 0–10 V
    /// wire reads 0 V, which is indistinguishable from 0 % of span.)
    Voltage0To10,
    /// ADC counts: `zero` counts at `range_low`, `full` counts at
    /// `range_high`.
    Counts {
        /// Counts at the low end of the range.
        zero: T,
        /// Counts at the high end of the range.
        full: T,
    },
    /// Already an engineering value in the channel's [`Unit`] (fieldbus).
    Engineering,
}

/// The unit of the engineering range (and of an [`SignalKind::Engineering`]
/// value). The channel output is always SI: Pa absolute, K, Pa, or the
/// unit of [`Unit::Other`].
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Unit<T> {
    /// Absolute pressure, Pa.
    PressureAbs,
    /// Gauge pressure, Pa; converted to absolute with `atmosphere`.
    PressureGauge {
        /// Local atmospheric pressure.
        atmosphere: PressureAbs<T>,
    },
    /// Temperature, K.
    Kelvin,
    /// Temperature, °C; converted to K.
    Celsius,
    /// Differential pressure, Pa.
    DifferentialPressure,
    /// Any other quantity already in its SI unit (kg/s, -, ...).
    Other,
}

/// Instrument accuracy, used by the cross-checks as the allowance of one
/// reading.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum InstrumentClass<T> {
    /// A platinum resistance thermometer of an IEC 60751 class.
    Rtd(RtdClass),
    /// A fraction of the engineering span (0.001 = 0.1 % of span).
    FractionOfSpan(T),
    /// A fixed allowance in the SI output unit.
    Absolute(T),
}

/// Configuration of one channel (plain data, validated by
/// [`ChannelConfig::validate`] and [`super::Channel::new`]).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ChannelConfig<T> {
    /// Channel id (in statuses, events and errors).
    pub id: u8,
    /// Raw signal type.
    pub signal: SignalKind<T>,
    /// Unit of `range_low` / `range_high`.
    pub unit: Unit<T>,
    /// Engineering value at 0 % of the signal span, in `unit`.
    pub range_low: T,
    /// Engineering value at 100 % of the signal span, in `unit`.
    pub range_high: T,
    /// Lowest plausible value, SI output unit (Pa abs, K, ...).
    pub plausible_low: T,
    /// Highest plausible value, SI output unit.
    pub plausible_high: T,
    /// Noise floor, SI output unit: a channel whose values stay within this
    /// band over the whole frozen window is frozen. 0 flags only exact
    /// repeats.
    pub noise_floor: T,
    /// Instrument accuracy (cross-check allowance).
    pub instrument: InstrumentClass<T>,
    /// Largest plausible rate of change, SI unit per second; faster is a
    /// spike.
    pub max_rate: T,
    /// First-order low-pass time constant, s (0: no low-pass).
    pub filter_time_constant_s: T,
    /// How long a bad channel holds its last good value as uncertain, ms.
    pub hold_ms: u32,
}

fn finite<T: Real>(x: T) -> bool {
    T::is_finite(x)
}

impl<T: Real> ChannelConfig<T> {
    /// Checks every field; the error names the first bad one.
    pub fn validate(&self) -> Result<(), ConfigError> {
        let channel = usize::from(self.id);
        let not_above =
            |field, other| ConfigError::new(field, Problem::NotAbove { other }).at(channel);
        let not_finite = |field| ConfigError::not_finite(field).at(channel);
        for (field, v) in [
            ("channel.range_low", self.range_low),
            ("channel.range_high", self.range_high),
        ] {
            if !finite(v) {
                return Err(not_finite(field));
            }
        }
        if !(self.range_high > self.range_low) {
            return Err(not_above("channel.range_high", "channel.range_low"));
        }
        if let SignalKind::Counts { zero, full } = self.signal {
            if !(finite(zero) && finite(full)) {
                return Err(not_finite("channel.signal"));
            }
            if zero == full {
                return Err(ConfigError::new(
                    "channel.signal",
                    Problem::Inconsistent {
                        with: "itself (zero and full scale are equal)",
                    },
                )
                .at(channel));
            }
        }
        if let Unit::PressureGauge { atmosphere } = self.unit {
            let a = atmosphere.pa();
            check_positive("channel.unit.atmosphere", a).map_err(|e| e.at(channel))?;
        }
        for (field, v) in [
            ("channel.plausible_low", self.plausible_low),
            ("channel.plausible_high", self.plausible_high),
        ] {
            if !finite(v) {
                return Err(not_finite(field));
            }
        }
        if !(self.plausible_high > self.plausible_low) {
            return Err(not_above("channel.plausible_high", "channel.plausible_low"));
        }
        match self.instrument {
            InstrumentClass::Rtd(_) => {}
            InstrumentClass::FractionOfSpan(x) | InstrumentClass::Absolute(x) => {
                check_range("channel.instrument", x, 0.0, f64::INFINITY)
                    .map_err(|e| e.at(channel))?;
            }
        }
        check_range("channel.noise_floor", self.noise_floor, 0.0, f64::INFINITY)
            .map_err(|e| e.at(channel))?;
        check_positive("channel.max_rate", self.max_rate).map_err(|e| e.at(channel))?;
        check_range(
            "channel.filter_time_constant_s",
            self.filter_time_constant_s,
            0.0,
            f64::INFINITY,
        )
        .map_err(|e| e.at(channel))?;
        Ok(())
    }

    /// Converts an engineering value in `unit` to SI.
    #[inline]
    pub fn to_si(&self, engineering: T) -> T {
        Scaling::new(self).si_of(engineering)
    }

    /// Scales a raw sample to SI and classifies the signal level. The value
    /// is meaningful unless the fault's quality is bad.
    pub fn scale(&self, raw: T) -> (T, FaultCode) {
        Scaling::new(self).scale(raw)
    }

    /// The instrument allowance (half-width) at SI value `si`.
    pub fn tolerance(&self, si: T) -> T {
        match self.instrument {
            InstrumentClass::Rtd(class) => class.tolerance(si - T::of(ZERO_CELSIUS_K)),
            InstrumentClass::FractionOfSpan(f) => f * (self.range_high - self.range_low),
            InstrumentClass::Absolute(a) => a,
        }
    }
}

/// The scaling of a configuration with its per-sample constants worked out
/// once (span, span per mA, counts span, SI offset): the same operations on
/// the same values as the configuration's formulas, or ones that give the
/// same bits (see [`Source::Current`]), so the same results.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Scaling<T> {
    source: Source<T>,
    range_low: T,
    /// What multiplies the signal: `range_high − range_low`, or for
    /// [`Source::Current`] that over 16 mA.
    gain: T,
    /// `full − zero` of a counts signal (0 otherwise).
    counts_span: T,
    /// What [`ChannelConfig::to_si`] adds (0 if nothing).
    offset: T,
    /// Which additions the scaling makes.
    adds: Adds,
}

/// The raw signal, as the scaling reads it.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Source<T> {
    /// [`Source::Current`] whose every value in the NE 43 measuring band
    /// (3.8–20.5 mA) is finite: the scaling at both band edges is (checked at
    /// construction), and every step of it (I − 4 mA, × a positive gain, the
    /// additions of finite constants) is monotonic in I, rounding included,
    /// so the values in between lie between them. A current in the band then
    /// needs no finiteness test and no classification (its fault is none).
    CurrentInBandFinite,
    /// 4–20 mA, scaled as (I − 4 mA) × (span / 16 mA): the same bits as
    /// ((I − 4 mA) / 16 mA) × span whenever span / 16 is exact (checked at
    /// construction). Division by 16 only lowers the exponent, so
    /// (I − 4 mA) / 16 is exact too (I − 4 mA is 0 or at least a rounding
    /// step of 4 mA away from it, never near the subnormal range; an infinite
    /// or NaN current gives the same infinity or a NaN either way), and both
    /// products are the one real number (I − 4)·span/16 rounded once.
    /// Saves a multiplication per sample (a soft-float call on a Cortex-M0).
    Current,
    /// 4–20 mA with a span so small that span / 16 would round: fraction of
    /// span, then × span, as written.
    CurrentBySpan,
    /// [`SignalKind::Voltage0To10`].
    Voltage,
    /// [`SignalKind::Counts`]: counts at `range_low`.
    Counts { zero: T },
    /// [`SignalKind::Engineering`].
    Engineering,
}

/// The additions after fraction × span: `range_low`, then the SI offset.
/// `range_low` is left out where adding it changes no bit: a zero
/// `range_low` under a 4–20 mA signal with a span of at least 1 (then
/// fraction × span is never −0: I − 4 is +0 at 4 mA and at least a rounding
/// step of 4 away from it otherwise, so the product does not underflow;
/// 0 + it is it, for either zero). One case per combination, so that
/// neither addition is computed and then discarded (on a Cortex-M0 each is a
/// soft-float call).
#[derive(Clone, Copy, Debug, PartialEq)]
enum Adds {
    None,
    Low,
    Offset,
    LowOffset,
}

impl<T: Real> Scaling<T> {
    #[inline]
    pub(crate) fn new(cfg: &ChannelConfig<T>) -> Self {
        let offset = match cfg.unit {
            Unit::PressureGauge { atmosphere } => Some(atmosphere.pa()),
            Unit::Celsius => Some(T::of(ZERO_CELSIUS_K)),
            Unit::PressureAbs | Unit::Kelvin | Unit::DifferentialPressure | Unit::Other => None,
        };
        let span = cfg.range_high - cfg.range_low;
        let low = !(cfg.range_low == T::ZERO
            && span >= T::ONE
            && matches!(cfg.signal, SignalKind::Current4To20));
        let per_ma = span / T::of(ne43::RANGE_HIGH_MA - ne43::RANGE_LOW_MA);
        let per_ma_exact = per_ma * T::of(ne43::RANGE_HIGH_MA - ne43::RANGE_LOW_MA) == span;
        let (source, gain) = match cfg.signal {
            SignalKind::Current4To20 if per_ma_exact => (Source::Current, per_ma),
            SignalKind::Current4To20 => (Source::CurrentBySpan, span),
            SignalKind::Voltage0To10 => (Source::Voltage, span),
            SignalKind::Counts { zero, .. } => (Source::Counts { zero }, span),
            SignalKind::Engineering => (Source::Engineering, span),
        };
        Scaling {
            source,
            range_low: cfg.range_low,
            gain,
            counts_span: match cfg.signal {
                SignalKind::Counts { zero, full } => full - zero,
                _ => T::ZERO,
            },
            offset: offset.unwrap_or(T::ZERO),
            adds: match (low, offset.is_some()) {
                (false, false) => Adds::None,
                (true, false) => Adds::Low,
                (false, true) => Adds::Offset,
                (true, true) => Adds::LowOffset,
            },
        }
    }

    /// As [`Scaling::new`], for a channel that scales every sample: a
    /// current source whose band-edge values are finite becomes
    /// [`Source::CurrentInBandFinite`] (the same values and faults).
    pub(crate) fn for_channel(cfg: &ChannelConfig<T>) -> Self {
        let scaling = Self::new(cfg);
        // At the band edges the fault is none exactly when the value is
        // finite.
        let in_band_finite = scaling.source == Source::Current
            && [ne43::VALID_LOW_MA, ne43::VALID_HIGH_MA]
                .iter()
                .all(|&ma| scaling.scale(T::of(ma)).1 == FaultCode::None);
        Scaling {
            source: if in_band_finite {
                Source::CurrentInBandFinite
            } else {
                scaling.source
            },
            ..scaling
        }
    }

    /// The additions after fraction × span (see [`Adds`]).
    #[inline(always)]
    fn add_low_and_offset(&self, p: T) -> T {
        match self.adds {
            Adds::None => p,
            Adds::Low => self.range_low + p,
            Adds::Offset => p + self.offset,
            Adds::LowOffset => (self.range_low + p) + self.offset,
        }
    }

    #[inline]
    pub(crate) fn si_of(&self, engineering: T) -> T {
        match self.adds {
            Adds::Offset | Adds::LowOffset => engineering + self.offset,
            Adds::None | Adds::Low => engineering,
        }
    }

    /// [`ChannelConfig::scale`].
    #[inline]
    pub(crate) fn scale(&self, raw: T) -> (T, FaultCode) {
        let (v, fault, _) = self.scale_classified(raw);
        (v, fault)
    }

    /// [`Scaling::scale`] with the fault's quality (`fault.quality()`),
    /// known without classifying the fault again on the usual path (a
    /// current in the measuring band).
    #[inline(always)]
    pub(crate) fn scale_classified(&self, raw: T) -> (T, FaultCode, Quality) {
        let (v, fault) = match self.source {
            // (`ne43::classify`'s first test: its fault is none.)
            Source::CurrentInBandFinite
                if T::within_positive(
                    raw,
                    T::of(ne43::VALID_LOW_MA),
                    T::of(ne43::VALID_HIGH_MA),
                ) =>
            {
                let fraction = raw - T::of(ne43::RANGE_LOW_MA);
                let v = self.add_low_and_offset(fraction * self.gain);
                return (v, FaultCode::None, Quality::Good);
            }
            _ => self.scale_general(raw),
        };
        (v, fault, fault.quality())
    }

    /// [`Scaling::scale`] of every source but the usual path of
    /// [`Source::CurrentInBandFinite`].
    #[inline]
    fn scale_general(&self, raw: T) -> (T, FaultCode) {
        let (fraction, fault) = match self.source {
            // A current in the measuring band is finite: the band test
            // comes first, the finiteness test only outside it.
            // One NE 43 classification for the three current sources.
            Source::Current | Source::CurrentInBandFinite | Source::CurrentBySpan => {
                let fraction = if self.source == Source::CurrentBySpan {
                    ne43::fraction(raw)
                } else {
                    raw - T::of(ne43::RANGE_LOW_MA)
                };
                (fraction, ne43::classify(raw))
            }
            _ if !T::is_finite(raw) => return (T::ZERO, FaultCode::NotFinite),
            // A 0–10 V signal as counts from zero over a span of 10 (`raw −
            // 0` is `raw`, bit for bit, −0 included): one copy of the code.
            Source::Voltage | Source::Counts { .. } => {
                let (zero, span) = match self.source {
                    Source::Counts { zero } => (zero, self.counts_span),
                    _ => (T::ZERO, T::of(10.0)),
                };
                span_fraction((raw - zero) / span)
            }
            Source::Engineering => {
                let v = self.si_of(raw);
                return if T::is_finite(v) {
                    (v, FaultCode::None)
                } else {
                    (T::ZERO, FaultCode::NotFinite)
                };
            }
        };
        self.scale_fraction(fraction, fault)
    }

    /// The value of fraction `fraction` (for a current source I − 4 mA) of a
    /// signal whose level fault is `fault`.
    #[inline(always)]
    fn scale_fraction(&self, fraction: T, fault: FaultCode) -> (T, FaultCode) {
        // × span, or for `Source::Current` (I − 4 mA) × span / 16 mA.
        let v = self.add_low_and_offset(fraction * self.gain);
        if T::is_finite(v) {
            (v, fault)
        } else if fault != FaultCode::None {
            // Also a non-finite current (its fault says so).
            (T::ZERO, fault)
        } else {
            (T::ZERO, FaultCode::NotFinite)
        }
    }
}

fn span_fraction<T: Real>(f: T) -> (T, FaultCode) {
    let a = T::of(SPAN_ALLOWANCE);
    // (The two compares are false for a NaN and for either infinity: no
    // finiteness test of its own.)
    if f >= -a && f <= T::ONE + a {
        (f, FaultCode::None)
    } else {
        (f, FaultCode::SignalOutOfRange)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A 0–10 V signal scaled as counts from 0 over 10 gives the bits of
    /// its own form, `raw / 10` (consistency check of the shared arm):
    /// seeded voltages of every exponent and sign, the span edges, ±0,
    /// infinities and NaN; values compared bit for bit, faults equal.
    #[test]
    fn voltage_as_counts_from_zero_gives_the_same_bits() {
        let cfg = ChannelConfig {
            id: 0,
            signal: SignalKind::Voltage0To10,
            unit: Unit::Celsius,
            range_low: -50.0_f32,
            range_high: 150.0,
            plausible_low: -60.0,
            plausible_high: 160.0,
            noise_floor: 0.0,
            instrument: InstrumentClass::Absolute(0.0),
            max_rate: 1.0,
            filter_time_constant_s: 0.0,
            hold_ms: 0,
        };
        let c = Scaling::for_channel(&cfg);
        let mut raws = std::vec![
            0.0_f32,
            -0.0,
            10.0,
            -0.25,
            10.25,
            f32::INFINITY,
            f32::NEG_INFINITY,
            f32::NAN,
            f32::MAX,
            1.0e-45,
        ];
        let mut state = 29_u64;
        for _ in 0..50_000 {
            state = crate::lcg64_step(state);
            raws.push(f32::from_bits((state >> 32) as u32));
            raws.push(((state >> 40) % 11_000) as f32 * 1.0e-3 - 0.5);
        }
        for raw in raws {
            let (want, fault) = if raw.is_finite() {
                let (f, fault) = span_fraction(raw / 10.0);
                c.scale_fraction(f, fault)
            } else {
                (0.0, FaultCode::NotFinite)
            };
            let (got, got_fault) = c.scale(raw);
            assert_eq!(
                (got.to_bits(), got_fault),
                (want.to_bits(), fault),
                "{raw:e} V"
            );
        }
    }

    /// The scaling as the configuration's formulas write it (fraction of
    /// span, then × span, then the additions): the reference for
    /// [`Scaling::scale`] of a 4–20 mA signal.
    fn scale_as_written(cfg: &ChannelConfig<f32>, raw: f32) -> (f32, FaultCode) {
        let fault = ne43::classify(raw);
        let p = ne43::fraction(raw) * (cfg.range_high - cfg.range_low);
        let v = cfg.to_si(cfg.range_low + p);
        if v.is_finite() {
            (v, fault)
        } else if fault != FaultCode::None {
            (0.0, fault)
        } else {
            (0.0, FaultCode::NotFinite)
        }
    }

    /// (I − 4 mA) × (span / 16) gives the bits of ((I − 4 mA) / 16) × span
    /// (consistency check of `Source::Current`, and of
    /// `Source::CurrentInBandFinite` with its fault's quality): seeded currents of every
    /// exponent and sign, the NE 43 band edges, infinities and NaN, over
    /// spans from subnormal (where span / 16 rounds and the as-written form
    /// is kept) to the largest; values compared bit for bit (a NaN as NaN).
    #[test]
    fn current_scaling_by_span_per_ma_gives_the_same_bits() {
        let mut state = 3_u64;
        let mut next = || {
            state = crate::lcg64_step(state);
            (state >> 32) as u32
        };
        let spans = [
            1.0e-44_f32,
            3.0e-39,
            1.0e-37,
            1.0e-3,
            0.7,
            1.0,
            3.0,
            1.0e5,
            2.5e7,
            1.0e38,
            3.4e38,
        ];
        let lows = [0.0_f32, -0.0, -1.0e5, 0.5, 1.0e30];
        let mut currents = std::vec![
            3.6_f32,
            3.8,
            4.0,
            20.0,
            20.5,
            21.0,
            0.0,
            -0.0,
            f32::INFINITY,
            f32::NEG_INFINITY,
            f32::NAN,
            f32::MAX,
            -f32::MAX,
            f32::MIN_POSITIVE,
            1.0e-45,
        ];
        for _ in 0..20_000 {
            currents.push(f32::from_bits(next()));
            // Near the measuring band too.
            currents.push(4.0 + (next() % 2_000_000) as f32 * 1.0e-5 - 1.0);
        }
        for (&span, &low, unit) in spans.iter().flat_map(|s| {
            lows.iter()
                .flat_map(move |l| [(s, l, Unit::Celsius), (s, l, Unit::PressureAbs)])
        }) {
            {
                let cfg = ChannelConfig {
                    id: 0,
                    signal: SignalKind::Current4To20,
                    unit,
                    range_low: low,
                    range_high: low + span,
                    plausible_low: 0.0,
                    plausible_high: 1.0,
                    noise_floor: 0.0,
                    instrument: InstrumentClass::Absolute(0.0),
                    max_rate: 1.0,
                    filter_time_constant_s: 0.0,
                    hold_ms: 0,
                };
                let s = Scaling::new(&cfg);
                // A channel's scaling (in-band fast path where the band
                // edges are finite) gives the same bits, faults and their
                // qualities.
                let c = Scaling::for_channel(&cfg);
                for &ma in &currents {
                    let (v, f) = s.scale(ma);
                    let (w, g) = scale_as_written(&cfg, ma);
                    assert_eq!(
                        (v.to_bits(), f),
                        (w.to_bits(), g),
                        "{ma:e} mA, span {span:e}, low {low:e}"
                    );
                    let (x, h, q) = c.scale_classified(ma);
                    assert_eq!(
                        (x.to_bits(), h, q),
                        (w.to_bits(), g, g.quality()),
                        "channel scaling, {ma:e} mA, span {span:e}, low {low:e}"
                    );
                }
            }
        }
    }
}
