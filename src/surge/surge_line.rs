//! The surge line: the machine maker's surge points, one per speed line,
//! transformed once into map coordinates (see [`super::coordinates`]).
//!
//! Source of the method: piecewise-linear interpolation of the surge line in
//! map coordinates, one surge point and one control margin per map speed
//! line (published compressor-map practice; Gresh, *Compressor Performance*,
//! from memory). Linear interpolation of a strictly increasing table is
//! monotonic: a higher head number never gives a lower surge flow.
//!
//! # How the line and the margin vary with speed
//!
//! Each map speed line contributes one point: its surge flow and pressure
//! ratio, and the control margin chosen for that speed. In reduced
//! coordinates the points rise with speed (`Y` roughly ∝ N², `X` ∝ N²,
//! the fan-law parabola). The live operating point is placed on the line by
//! its head number, so between two speed lines both the surge flow and the
//! control margin are interpolated linearly in `Y`. A per-speed margin lets
//! the low-speed end, where speed lines are flat and the line bends, carry a
//! wider margin than the high-speed end (one margin for all speeds is known
//! to misbehave at low speed: common practice).
//!
//! Outside the mapped heads nothing is extrapolated silently: below the
//! lowest point the lowest surge flow is held (conservative: the true line
//! keeps falling); above the highest the last segment is extended (it
//! rises, conservative). Both are reported [`Quality::Uncertain`]; an
//! extension whose surge flow is not finite (a steep last segment at an
//! absurd head) is [`Quality::Bad`].

use super::coordinates::{
    flow_number_from_volume_flow, head_number, sigma_from_exponent, z_r_t, BinomialSeries,
};
use crate::error::{outside_documented_range, ConfigError, Problem};
use crate::quality::Quality;
use crate::real::Real;
use crate::units::{Kelvin, PressureAbs};

/// One surge point from the machine maker's map (one speed line).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SurgePoint<T> {
    /// Speed of the map line, rpm.
    pub speed_rpm: T,
    /// Actual volume flow at suction at surge, m³/s (at the map's suction
    /// conditions).
    pub suction_volume_flow: T,
    /// Pressure ratio at surge, -.
    pub pressure_ratio: T,
    /// Control margin for this speed line, as a fraction of the surge flow
    /// (0.10 = control line at 10 % more flow than surge; common practice
    /// puts it around 10 %). In [0, 1).
    pub control_margin: T,
}

/// The gas and suction conditions the map was drawn for.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MapConditions<T> {
    /// Suction pressure of the map.
    pub suction_pressure: PressureAbs<T>,
    /// Suction temperature of the map.
    pub suction_temperature: Kelvin<T>,
    /// Molar mass of the map gas, kg/kmol.
    pub molar_mass: T,
    /// Suction compressibility factor of the map gas, -.
    pub compressibility: T,
}

/// Configuration of a surge line.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SurgeLineConfig<'a, T> {
    /// Surge points, one per speed line, in rising speed.
    pub points: &'a [SurgePoint<T>],
    /// Conditions of the map.
    pub map: MapConditions<T>,
    /// Polytropic exponent n used for the head number (map and live), > 1.
    pub polytropic_exponent: T,
    /// Suction flow element coefficient `C` in `Δp = ρ (Q/C)²`, m².
    pub flow_coefficient: T,
}

/// A surge-line point in map coordinates.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LinePoint<T> {
    /// Head number Y, -.
    pub head_number: T,
    /// Flow number X = Δp/ps, -.
    pub flow_number: T,
    /// Control margin of this speed line, - (a configured −0 kept as +0).
    pub control_margin: T,
    /// Reduced speed N/√(Z R Ts), rpm/(m/s).
    pub reduced_speed: T,
}

/// The surge line on the head number at one operating point.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LineLookup<T> {
    /// Surge flow number at this head number.
    pub surge_flow_number: T,
    /// Control margin of the speed lines around this head.
    pub control_margin: T,
    /// `Good` inside the mapped heads, `Uncertain` outside.
    pub quality: Quality,
}

/// The differences across one segment (point `i` to point `i + 1`),
/// computed once at construction: the lookup then subtracts nothing but the
/// live head (the same differences it used to form per scan, so the same
/// bits). The slots after the last segment have an unbounded upper head
/// (the search stops there: the last segment, extended).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Segment<T> {
    /// Head number at the segment's upper end (`+∞` after the last segment).
    head_hi: T,
    /// Head number difference, > 0.
    head_span: T,
    /// Flow number difference, > 0.
    flow_span: T,
    /// Control margin difference.
    margin_span: T,
}

/// A validated surge line with at most `N` points (`N >= 2`).
#[derive(Clone, Debug)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SurgeLine<T, const N: usize> {
    /// The points in rising head; the first `count = last_segment + 2`
    /// are the line (fixed slots, so the lookup indexes them without a
    /// length check).
    points: [LinePoint<T>; N],
    /// Every point has the same control margin, and it is positive: the
    /// interpolated margin is then that margin, bit for bit (`m + f·0` with
    /// `f >= 0` finite is `m + 0 = m` for `m > 0`), and the lookup skips
    /// forming it (a multiplication and an addition: library calls on a
    /// soft-float core). Takes the word the point count took.
    uniform_margin: bool,
    /// Segment `i` (point `i` to `i + 1`) in slot `i` for `i < count − 1`;
    /// the slots from `count − 1` on (at least one: `N` points make `N − 1`
    /// segments) have an unbounded upper head and nothing else.
    segments: [Segment<T>; N],
    /// Index of the last segment, `count − 2`.
    last_segment: usize,
    sigma: T,
    /// `1/σ`, for the live head number (see [`Self::reciprocal_sigma`]).
    reciprocal_sigma: T,
    /// The binomial series of σ (see [`super::coordinates::HeadAnchor`]).
    series: BinomialSeries<T>,
}

fn finite_pos<T: Real>(x: T) -> bool {
    T::is_finite(x) && x > T::ZERO
}

impl<T: Real, const N: usize> SurgeLine<T, N> {
    /// Transforms and validates the map's surge points.
    ///
    /// Errors name `surge_line.points` ([`Problem::Count`]: fewer than 2 or
    /// more than `N` points; [`Problem::NotIncreasing`]: speed, head number
    /// and flow number must all rise strictly; otherwise a point out of
    /// range), or the map conditions, exponent and flow coefficient.
    pub fn new(config: &SurgeLineConfig<'_, T>) -> Result<Self, ConfigError> {
        const { assert!(N >= 2, "a surge line needs room for 2 points") };
        let bad = |field| Err(outside_documented_range(field));
        let m = &config.map;
        if !finite_pos(m.suction_pressure.pa()) {
            return bad("surge_line.map.suction_pressure");
        }
        if !finite_pos(m.suction_temperature.kelvin()) {
            return bad("surge_line.map.suction_temperature");
        }
        if !finite_pos(m.molar_mass) {
            return bad("surge_line.map.molar_mass");
        }
        if !(finite_pos(m.compressibility) && m.compressibility <= T::of(2.0)) {
            return bad("surge_line.map.compressibility");
        }
        let n = config.polytropic_exponent;
        if !(T::is_finite(n) && n > T::ONE && n < T::of(10.0)) {
            return bad("surge_line.polytropic_exponent");
        }
        if !finite_pos(config.flow_coefficient) {
            return bad("surge_line.flow_coefficient");
        }
        let count_error = ConfigError::new(
            "surge_line.points",
            Problem::Count {
                min: 2,
                max: if N > u16::MAX as usize {
                    u16::MAX
                } else {
                    N as u16
                },
            },
        );
        if config.points.len() < 2 || config.points.len() > N {
            return Err(count_error);
        }
        let sigma = sigma_from_exponent(n);
        let zrt = z_r_t(
            m.compressibility,
            m.molar_mass,
            m.suction_temperature.kelvin(),
        );
        // The reference velocity `a* = √(Z R Ts)` of
        // `super::coordinates::reduced_speed`.
        let reference_velocity = T::sqrt(zrt);
        let unset = LinePoint {
            head_number: T::ZERO,
            flow_number: T::ZERO,
            control_margin: T::ZERO,
            reduced_speed: T::ZERO,
        };
        let mut points = [unset; N];
        // Every slot unbounded above until a segment is written into it.
        let mut segments = [Segment {
            head_hi: T::of(f64::INFINITY),
            head_span: T::ONE,
            flow_span: T::ZERO,
            margin_span: T::ZERO,
        }; N];
        let mut count: usize = 0;
        for (i, p) in config.points.iter().enumerate() {
            let ok = finite_pos(p.speed_rpm)
                && finite_pos(p.suction_volume_flow)
                && T::is_finite(p.pressure_ratio)
                && p.pressure_ratio > T::ONE
                && T::is_finite(p.control_margin)
                && p.control_margin >= T::ZERO
                && p.control_margin < T::ONE;
            if !ok {
                return Err(outside_documented_range("surge_line.points").at(i));
            }
            let r = LinePoint {
                head_number: head_number(p.pressure_ratio, sigma),
                flow_number: flow_number_from_volume_flow(
                    p.suction_volume_flow,
                    config.flow_coefficient,
                    zrt,
                ),
                // `+ 0`: a configured −0 is kept as +0, so that no control
                // margin from the lookup is −0 (an interpolated one never
                // is: `m_a + f·(m_b − m_a)` with `m_a >= +0` and `f >= 0`
                // is +0 or positive) and adding a zero margin to it changes
                // no bit (see `SurgeMonitor`). Here, not in the lookup: there
                // the addition was formed ahead of its branch (speculated: a
                // library call on a soft-float core every scan).
                control_margin: p.control_margin + T::ZERO,
                // `reduced_speed(speed, zrt)` with its `√(Z R Ts)` taken
                // once for every point (the same division, so the same
                // bits; configuration-time flash).
                reduced_speed: p.speed_rpm / reference_velocity,
            };
            if !(finite_pos(r.head_number) && finite_pos(r.flow_number)) {
                return Err(outside_documented_range("surge_line.points").at(i));
            }
            if let Some(prev) = count.checked_sub(1).and_then(|k| points.get(k)) {
                let prev: &LinePoint<T> = prev;
                if !(r.head_number > prev.head_number
                    && r.flow_number > prev.flow_number
                    && r.reduced_speed > prev.reduced_speed)
                {
                    return Err(
                        ConfigError::new("surge_line.points", Problem::NotIncreasing).at(i),
                    );
                }
                let segment = Segment {
                    head_hi: r.head_number,
                    head_span: r.head_number - prev.head_number,
                    flow_span: r.flow_number - prev.flow_number,
                    margin_span: r.control_margin - prev.control_margin,
                };
                // Slot `i − 1 < N − 1` (at most `N` points, checked above).
                match segments.get_mut(i.saturating_sub(1)) {
                    Some(slot) => *slot = segment,
                    None => return Err(count_error),
                }
            }
            match points.get_mut(i) {
                Some(slot) => *slot = r,
                None => return Err(count_error),
            }
            count = i + 1;
        }
        // Every point's margin the same (every segment's difference 0:
        // `b − a = 0` exactly when `b = a`) and positive.
        let uniform_margin = points.first().is_some_and(|p| p.control_margin > T::ZERO)
            && segments
                .iter()
                .take(count.saturating_sub(1))
                .all(|s| s.margin_span == T::ZERO);
        Ok(SurgeLine {
            points,
            uniform_margin,
            segments,
            last_segment: count.saturating_sub(2),
            sigma,
            reciprocal_sigma: T::ONE / sigma,
            series: BinomialSeries::new(sigma),
        })
    }

    /// σ = (n − 1)/n used for the head number.
    pub fn sigma(&self) -> T {
        self.sigma
    }

    /// `1/σ = n/(n − 1)` (σ > 0: `n > 1` is checked), taken once here: the
    /// monitor multiplies by it where it divided by σ every scan.
    pub(crate) fn reciprocal_sigma(&self) -> T {
        self.reciprocal_sigma
    }

    /// The binomial series of σ, for head numbers near an anchor.
    pub(crate) fn series(&self) -> &BinomialSeries<T> {
        &self.series
    }

    /// The transformed points, in rising head.
    pub fn points(&self) -> &[LinePoint<T>] {
        self.points.get(..self.last_segment + 2).unwrap_or(&[])
    }

    /// Surge flow and control margin at head number `Y` (finite assumed).
    /// At most `N` iterations. Bad (both 0) where the extended last segment
    /// does not give a finite surge flow (a steep last segment at an absurd
    /// head, or a head that is not finite).
    pub fn lookup(&self, head: T) -> LineLookup<T> {
        self.lookup_by::<{ super::BIT_COMPARES }>(head)
    }

    /// [`Self::lookup`]; `BITS`: see [`super::BIT_COMPARES`].
    #[inline]
    pub(crate) fn lookup_by<const BITS: bool>(&self, head: T) -> LineLookup<T> {
        let bad = LineLookup {
            surge_flow_number: T::ZERO,
            control_margin: T::ZERO,
            quality: Quality::Bad,
        };
        // The first slot whose upper head reaches `head`: a segment, or the
        // first unbounded slot above the mapped heads. A NaN head reaches
        // none and takes the last slot, also unbounded. With `BITS`
        // compared on the bit patterns (`−0 <= head <= upper`; from −0 up
        // the order of the bits is the numeric one, `+∞` included), where a
        // negative head reaches none either (see the extension below).
        // Above the mapped heads the last segment is extended.
        let mut k = N - 1;
        for (i, segment) in self.segments.iter().enumerate() {
            let reaches = if BITS {
                T::within_nonnegative(head, T::ZERO, segment.head_hi)
            } else {
                head <= segment.head_hi
            };
            if reaches {
                k = i;
                break;
            }
        }
        // Below the first point the first point is held: a head in the
        // first slot (the test made here, not before the search, is one
        // comparison fewer for a head in any other slot; with `BITS` on the
        // bits, the head lying in `[−0, upper]`), or a negative one that
        // reached no slot (below).
        let Some(first) = self.points.first() else {
            // Unreachable (`N >= 2`: the slot exists).
            return bad;
        };
        let held = LineLookup {
            surge_flow_number: first.flow_number,
            control_margin: first.control_margin,
            quality: Quality::Uncertain,
        };
        if k == 0 {
            let below = if BITS {
                let upper = self.segments.first().map_or(T::ZERO, |s| s.head_hi);
                !T::within_nonnegative(head, first.head_number, upper)
            } else {
                head < first.head_number
            };
            if below {
                return held;
            }
        }
        let j = k.min(self.last_segment);
        let (Some(a), Some(s)) = (self.points.get(j), self.segments.get(j)) else {
            // Unreachable (`j <= k < N`).
            return bad;
        };
        // `f`, the surge flow and the control margin are formed exactly as
        // `a + f·(b − a)` with `f = (Y − Y_a)/(Y_b − Y_a)`, the differences
        // taken at construction.
        let f = (head - a.head_number) / s.head_span;
        let q2 = a.flow_number + f * s.flow_span;
        let (cm, quality) = if k == j {
            let cm = if self.uniform_margin {
                a.control_margin
            } else {
                a.control_margin + f * s.margin_span
            };
            (cm, Quality::Good)
        } else {
            // With `BITS` a negative head (it reached no slot) lies below
            // the first point: held (a float comparison: false for NaN; the
            // rare path). Compared as floats it was held above.
            if BITS && head < first.head_number {
                return held;
            }
            // Extended: a steep last segment at an absurd head (or a NaN or
            // infinite one) gives a surge flow that is not finite: bad.
            if !T::is_finite(q2) {
                return bad;
            }
            // The last point's (never −0: see the construction).
            let last = self.points.get(j + 1).map_or(T::ZERO, |p| p.control_margin);
            (last, Quality::Uncertain)
        };
        LineLookup {
            surge_flow_number: q2,
            control_margin: cm,
            quality,
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    /// The lookup as a plain scan of the points, forming each difference on
    /// the spot (the form the table replaces): below the first point the
    /// first is held, in a segment it is interpolated, above the last the
    /// last segment is extended with the last point's margin.
    fn reference<T: Real>(pts: &[LinePoint<T>], head: T) -> LineLookup<T> {
        let first = pts[0];
        if head < first.head_number {
            return LineLookup {
                surge_flow_number: first.flow_number,
                control_margin: first.control_margin,
                quality: Quality::Uncertain,
            };
        }
        let mut k = pts.len() - 2;
        let mut quality = Quality::Uncertain;
        for i in 0..pts.len() - 1 {
            if head <= pts[i + 1].head_number {
                k = i;
                quality = Quality::Good;
                break;
            }
        }
        let (a, b) = (pts[k], pts[k + 1]);
        let f = (head - a.head_number) / (b.head_number - a.head_number);
        let cm = if quality == Quality::Good {
            a.control_margin + f * (b.control_margin - a.control_margin)
        } else {
            pts[pts.len() - 1].control_margin
        };
        let q2 = a.flow_number + f * (b.flow_number - a.flow_number);
        if !T::is_finite(q2) {
            return LineLookup {
                surge_flow_number: T::ZERO,
                control_margin: T::ZERO,
                quality: Quality::Bad,
            };
        }
        LineLookup {
            surge_flow_number: q2,
            control_margin: cm,
            quality,
        }
    }

    /// The first `count` points of the invented surge map of the tests,
    /// with the fourth point's control margin set to 0.11 (unlike the
    /// third's), so that with all four the margin held above the last point
    /// differs from the last segment's extension; with `uniform`, every
    /// point's control margin 0.1 instead.
    fn line<T: Real, const N: usize>(count: usize, uniform: bool) -> SurgeLine<T, N> {
        let mut points = crate::surge::demo_map::points::<T>();
        if let Some(last) = points.last_mut() {
            last.control_margin = T::of(0.11);
        }
        if uniform {
            for p in points.iter_mut() {
                p.control_margin = T::of(0.1);
            }
        }
        SurgeLine::new(&crate::surge::demo_map::line_config(&points[..count])).unwrap()
    }

    /// Consistency check: the table lookup gives the plain scan's bits (and
    /// quality) at every head tried, below, on, between and above the
    /// points, at the extremes and for NaN, for 2 to 4 points in 4 slots,
    /// with a control margin per speed line and with one margin for all
    /// (the lookup then skips interpolating it), comparing heads with the
    /// FPU's compares and on the bit patterns alike.
    fn same_bits<T: Real>(bits: fn(T) -> u64) {
        for (count, uniform) in (2..=4).flat_map(|c| [(c, false), (c, true)]) {
            let l = line::<T, 4>(count, uniform);
            assert_eq!(l.uniform_margin, uniform);
            let pts = l.points();
            assert_eq!(pts.len(), count);
            let mut heads = std::vec![
                T::ZERO,
                -T::ZERO,
                -T::of(1e-30),
                -T::ONE,
                T::of(1e-30),
                T::of(1e30),
                T::of(f64::INFINITY),
                T::of(f64::NEG_INFINITY),
            ];
            let (lo, hi) = (pts[0].head_number, pts[count - 1].head_number);
            for i in 0..=400 {
                let h = lo + (hi - lo) * T::of(f64::from(i) / 300.0 - 1.0 / 6.0);
                heads.push(h);
            }
            for p in pts {
                heads.push(p.head_number);
            }
            for (h, bits_first) in heads.iter().flat_map(|&h| [(h, false), (h, true)]) {
                let got = if bits_first {
                    l.lookup_by::<true>(h)
                } else {
                    l.lookup_by::<false>(h)
                };
                let want = reference(pts, h);
                assert_eq!(got.quality, want.quality, "head {h}");
                assert_eq!(
                    bits(got.surge_flow_number),
                    bits(want.surge_flow_number),
                    "head {h}"
                );
                assert_eq!(
                    bits(got.control_margin),
                    bits(want.control_margin),
                    "head {h}"
                );
            }
            // A head that is not finite: a bad lookup with finite values
            // (NaN of either sign), both ways of comparing.
            for h in [f64::NAN, -f64::NAN, f64::INFINITY] {
                for got in [
                    l.lookup_by::<false>(T::of(h)),
                    l.lookup_by::<true>(T::of(h)),
                ] {
                    assert_eq!(got.quality, Quality::Bad);
                    assert_eq!(reference(pts, T::of(h)), got);
                    assert_eq!(bits(got.surge_flow_number), bits(T::ZERO));
                }
            }
        }
    }

    #[test]
    fn table_lookup_matches_the_plain_scan_bit_for_bit() {
        same_bits::<f64>(f64::to_bits);
        same_bits::<f32>(|x| u64::from(x.to_bits()));
    }
}
