//! Table-driven single-precision natural logarithm and exponential for the
//! default `f32` build (the `f64` reference build stays on `libm`).
//!
//! Sources: P. T. P. Tang, "Table-driven implementation of the logarithm
//! function in IEEE floating-point arithmetic", ACM Trans. Math. Softw.
//! 16(4), 1990, 378–400; P. T. P. Tang, "Table-driven implementation of the
//! exponential function in IEEE floating-point arithmetic", ACM Trans.
//! Math. Softw. 15(2), 1989, 144–157; the breakpoints are chosen by the
//! "accurate tables" idea of S. Gal, "Computing elementary functions: a
//! new approach for achieving high accuracy and good performance", Lecture
//! Notes in Computer Science 235, 1986.
//!
//! **Logarithm.** x = 2^k·z with z in [`LN_REDUCED_FROM`], 2·that) (integer
//! operations on the bits); z falls in one of 32 intervals, each with a
//! breakpoint c (an `f32` inside it), 1/c rounded to `f32` and ln c. Then
//! f = z − c is exact (Sterbenz: z and c are within a factor two),
//! r = f·(1/c) carries one rounding, and
//!
//! ln x = k·ln 2 + ln c + ln(1 + r),  ln(1 + r) = r − r²/2 + r³/3 − r⁴/4 + …
//!
//! to r⁴ (|r| < 0.0154: truncation below r⁴/5 < 2^-26 relative to r). The
//! interval around 1 has c = 1 exactly, so near x = 1 the result is r plus
//! a small correction with no cancellation. Each breakpoint c (searched in
//! a few thousand `f32` around the interval's middle) makes c·(1/c) − 1 smaller than
//! 2^-29 and −ln(1/c) + (c·(1/c) − 1) lie within 2^-8 ulp of the stored
//! `f32` (Gal's accurate table): the table needs no low parts. ln 2 is
//! split into a 16-bit high part (k·ln2_hi is exact for |k| ≤ 2^8) and a
//! low part.
//!
//! **Exponential.** x = (32·m + j)·ln2/32 + r with n = 32·m + j the
//! nearest integer to x·32/ln 2 (by the 1.5·2^23 shifter), ln2/32 split
//! into a 12-bit high part (n·hi exact for |n| < 2^12) and a low part, so
//! |r| ≤ ln2/64 + tiny; then exp x = 2^m · 2^(j/32) · (1 + p(r)) with
//! p(r) = r + r²/2 + r³/6 (truncation r⁴/24 < 2^-30) and 2^m added to the
//! exponent bits.
//!
//! Accuracy, measured (the tests below, and the exhaustive runs recorded in
//! their documentation): at most 1 ulp from the correctly rounded result for
//! every positive normal `x` (ln) and every `x` with |x| ≤ 64 (exp). The
//! rare arguments (zero, negative, subnormal, infinite, NaN for ln; |x| > 64,
//! infinite, NaN for exp) go to an out-of-line `libm` call, so the
//! special values are exactly `libm`'s.

/// Lower end of the reduced argument z (bits): the 32 intervals of z are
/// placed so that the twentieth, [0.98958, 1.01042], straddles 1 about
/// symmetrically.
const LN_REDUCED_FROM: u32 = 0x3f31_5556;
/// ln 2 to 16 significant bits (k·LN2_HI exact for |k| ≤ 256).
const LN2_HI: f32 = 6.931457520e-01;
/// ln 2 − LN2_HI.
const LN2_LO: f32 = 1.428606765e-06;
/// 1/3 (the r³ coefficient of ln(1 + r)).
const ONE_THIRD: f32 = 3.333333433e-01;

/// Breakpoint c, 1/c rounded, and ln c (the stored value includes the
/// tiny c·(1/c) − 1, see the module documentation) for each interval of z.
#[rustfmt::skip]
const LN_TABLE: [[f32; 3]; 32] = [
    [7.003872395e-01, 1.427781582e+00, -3.561218977e-01],
    [7.161279917e-01, 1.396398425e+00, -3.338963687e-01],
    [7.319141626e-01, 1.366280437e+00, -3.120920360e-01],
    [7.474126220e-01, 1.337949038e+00, -2.911378741e-01],
    [7.628606558e-01, 1.310855389e+00, -2.706798911e-01],
    [7.784386277e-01, 1.284622788e+00, -2.504651248e-01],
    [7.941197753e-01, 1.259255886e+00, -2.305209786e-01],
    [8.099711537e-01, 1.234611869e+00, -2.107566446e-01],
    [8.254519105e-01, 1.211457610e+00, -1.918242723e-01],
    [8.408854008e-01, 1.189222693e+00, -1.732998937e-01],
    [8.568235040e-01, 1.167101502e+00, -1.545233279e-01],
    [8.724102974e-01, 1.146249652e+00, -1.364954412e-01],
    [8.880173564e-01, 1.126104116e+00, -1.187639907e-01],
    [9.037399292e-01, 1.106513023e+00, -1.012136489e-01],
    [9.192073345e-01, 1.087893844e+00, -8.424357325e-02],
    [9.347105026e-01, 1.069849968e+00, -6.751842052e-02],
    [9.504828453e-01, 1.052096844e+00, -5.078516528e-02],
    [9.661735892e-01, 1.035010695e+00, -3.441176191e-02],
    [9.817638993e-01, 1.018574834e+00, -1.840442792e-02],
    [1.000000000e+00, 1.000000000e+00, 0.000000000e+00],
    [1.025963068e+00, 9.746939540e-01, 2.563175000e-02],
    [1.057329297e+00, 9.457791448e-01, 5.574619770e-02],
    [1.088917255e+00, 9.183434248e-01, 8.518385887e-02],
    [1.119857669e+00, 8.929706216e-01, 1.132015958e-01],
    [1.151071191e+00, 8.687559962e-01, 1.406929791e-01],
    [1.182206154e+00, 8.458761573e-01, 1.673823148e-01],
    [1.213610053e+00, 8.239879012e-01, 1.935994327e-01],
    [1.244881153e+00, 8.032895327e-01, 2.190400660e-01],
    [1.276115537e+00, 7.836281061e-01, 2.438207269e-01],
    [1.307347655e+00, 7.649074793e-01, 2.680003941e-01],
    [1.338644862e+00, 7.470241189e-01, 2.916578054e-01],
    [1.369684935e+00, 7.300949097e-01, 3.145807385e-01],
];

/// ln x for positive normal `x`; everything else goes to the out-of-line
/// `libm` path.
#[inline(always)]
pub(crate) fn ln(x: f32) -> f32 {
    let ix = x.to_bits();
    let t = ix.wrapping_sub(LN_REDUCED_FROM);
    let k = (t as i32) >> 23;
    let z = f32::from_bits(ix.wrapping_sub(t & 0xff80_0000));
    // The index is below 32: the fall-back is never taken.
    let [c, inv_c, ln_c] = LN_TABLE
        .get((t >> 18) as usize % 32)
        .copied()
        .unwrap_or([1.0; 3]);
    let r = (z - c) * inv_c;
    let kf = k as f32;
    let r2 = r * r;
    let series = -0.5 + r * (ONE_THIRD - 0.25 * r);
    let y = kf * LN2_HI + (ln_c + (r + (kf * LN2_LO + r2 * series)));
    // Positive normal: bits in [0x0080_0000, 0x7f80_0000). The test comes
    // last so that the common path is straight-line code (computing `y`
    // for a rare argument is harmless: integer wrapping, float garbage).
    if ix.wrapping_sub(0x0080_0000) < 0x7f00_0000 {
        y
    } else {
        ln_rare(x)
    }
}

/// The rare arguments of [`ln`]. Not `#[cold]`: with that hint LLVM
/// predicated the whole common path (one IT instruction per four, measured
/// on Cortex-M4F).
#[inline(never)]
fn ln_rare(x: f32) -> f32 {
    libm::logf(x)
}

/// 32/ln 2.
const INV_LN2_32: f32 = 4.616624069e+01;
/// 1.5·2^23: adding it rounds a value of magnitude below 2^22 to an
/// integer, which then sits in the low bits of the sum.
const SHIFTER: f32 = 12_582_912.0;
/// ln2/32 to 12 significant bits (n·LN2_32_HI exact for |n| < 2^12).
const LN2_32_HI: f32 = 2.165985107e-02;
/// ln2/32 − LN2_32_HI.
const LN2_32_LO: f32 = 9.983182281e-07;
/// 1/6 (the r³ coefficient of exp r).
const ONE_SIXTH: f32 = 1.666666716e-01;
/// Bits of 64.0: beyond it (and for infinities and NaN) the out-of-line path.
const EXP_TABLE_RANGE_BITS: u32 = 0x4280_0000;

/// 2^(j/32) rounded to `f32`, j = 0..31.
#[rustfmt::skip]
const EXP_TABLE: [f32; 32] = [
    1.000000000e+00,
    1.021897197e+00,
    1.044273734e+00,
    1.067140460e+00,
    1.090507746e+00,
    1.114386797e+00,
    1.138788581e+00,
    1.163724899e+00,
    1.189207077e+00,
    1.215247393e+00,
    1.241857767e+00,
    1.269050956e+00,
    1.296839595e+00,
    1.325236678e+00,
    1.354255557e+00,
    1.383909941e+00,
    1.414213538e+00,
    1.445180774e+00,
    1.476826191e+00,
    1.509164453e+00,
    1.542210817e+00,
    1.575980902e+00,
    1.610490322e+00,
    1.645755529e+00,
    1.681792855e+00,
    1.718619347e+00,
    1.756252170e+00,
    1.794709086e+00,
    1.834008098e+00,
    1.874167681e+00,
    1.915206552e+00,
    1.957144141e+00,
];

/// exp x for |x| ≤ 64 (results normal); everything else goes to the
/// out-of-line `libm` path (overflow to +inf, underflow to subnormals and 0, NaN).
#[inline(always)]
pub(crate) fn exp(x: f32) -> f32 {
    let shifted = x * INV_LN2_32 + SHIFTER;
    // n = 32·m + j in the low bits (the shifter's own low 14 bits are 0).
    let n_bits = shifted.to_bits();
    let nf = shifted - SHIFTER;
    let r = (x - nf * LN2_32_HI) - nf * LN2_32_LO;
    // The index is below 32: the fall-back is never taken.
    let two_j = EXP_TABLE
        .get((n_bits % 32) as usize)
        .copied()
        .unwrap_or(1.0);
    let r2 = r * r;
    let p = r + r2 * (0.5 + r * ONE_SIXTH);
    let y = two_j + two_j * p;
    // 2^m: m = n >> 5 in the exponent field (the shifter's bits shift out).
    let y = f32::from_bits(y.to_bits().wrapping_add((n_bits >> 5) << 23));
    // The range test comes last (straight-line common path; the value
    // computed for a rare argument is discarded).
    if x.to_bits() & 0x7fff_ffff <= EXP_TABLE_RANGE_BITS {
        y
    } else {
        exp_rare(x)
    }
}

/// The rare arguments of [`exp`] (not `#[cold]`, as for [`ln_rare`]).
#[inline(never)]
fn exp_rare(x: f32) -> f32 {
    libm::expf(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Distance in units in the last place between two finite `f32`
    /// (the difference of their sign-magnitude keys).
    fn ulps_apart(a: f32, b: f32) -> u64 {
        let key = |x: f32| {
            let i = x.to_bits() as i32;
            if i < 0 {
                -i64::from(i & i32::MAX)
            } else {
                i64::from(i)
            }
        };
        (key(a) - key(b)).unsigned_abs()
    }

    /// Largest distance from the correctly rounded result (the `f64`
    /// `libm` value rounded to `f32`: reference library) over the bit
    /// patterns from, from + step, ... below to.
    fn max_ulps(f: fn(f32) -> f32, g: fn(f64) -> f64, from: u32, to: u32, step: u32) -> u64 {
        (from..to)
            .step_by(step as usize)
            .map(|b| {
                let x = f32::from_bits(b);
                ulps_apart(f(x), g(f64::from(x)) as f32)
            })
            .max()
            .unwrap_or(u64::MAX)
    }

    /// Reference: `libm::log` (f64). Every 1009th positive normal `f32`
    /// (about 2.1 million, all binades and table intervals) and the 2^16
    /// patterns nearest to 1 on each side: at most 1 ulp from the
    /// correctly rounded result. (The exhaustive run over all positive
    /// normal `f32` is `ln_every_positive_normal_within_one_ulp`.)
    #[test]
    fn ln_within_one_ulp_strided_and_near_one() {
        assert!(max_ulps(ln, libm::log, 0x0080_0000, 0x7f80_0000, 1009) <= 1);
        let one = 1.0_f32.to_bits();
        assert!(max_ulps(ln, libm::log, one - 0x1_0000, one + 0x1_0000, 1) <= 1);
    }

    /// Reference: `libm::exp` (f64). Every 1013th `f32` in [-64, 64] (the
    /// table path) of either sign and every 4099th up to the overflow and
    /// underflow thresholds (the fall-back): at most 1 ulp from the
    /// correctly rounded result.
    #[test]
    fn exp_within_one_ulp_strided() {
        let to = EXP_TABLE_RANGE_BITS + 1;
        assert!(max_ulps(exp, libm::exp, 0, to, 1013) <= 1);
        assert!(max_ulps(exp, libm::exp, 0x8000_0000, 0x8000_0000 | to, 1013) <= 1);
        // 88.72 (largest finite result), -103.9 (smallest nonzero).
        assert!(max_ulps(exp, libm::exp, to, 0x42b1_7217, 4099) <= 1);
        assert!(max_ulps(exp, libm::exp, 0x8000_0000 | to, 0xc2cf_f1b4, 4099) <= 1);
    }

    /// The special and rare arguments give exactly `libm`'s `logf` and
    /// `expf` (reference library): zeros, negative values, subnormals,
    /// infinities, NaN, the overflow and underflow ranges of exp.
    #[test]
    fn rare_arguments_are_exactly_libm() {
        let same = |a: f32, b: f32| a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan());
        let mut xs = std::vec![
            0.0_f32,
            -0.0,
            -1.0,
            -f32::MIN_POSITIVE,
            f32::from_bits(1),
            f32::from_bits(0x007f_ffff),
            f32::INFINITY,
            f32::NEG_INFINITY,
            f32::NAN,
            -f32::NAN,
            88.72283,
            88.722_84,
            89.0,
            -87.4,
            -103.97,
            -103.98,
            -200.0,
            f32::MAX,
            f32::MIN,
        ];
        xs.extend((0..0x0080_0000).step_by(997).map(f32::from_bits));
        for x in xs {
            assert!(
                same(ln(x), libm::logf(x)),
                "ln {x:e}: {} vs {}",
                ln(x),
                libm::logf(x)
            );
            if !(-64.0..=64.0).contains(&x) {
                assert!(same(exp(x), libm::expf(x)), "exp {x:e}");
            }
        }
        assert_eq!(ln(0.0), f32::NEG_INFINITY);
        assert!(ln(-1.0).is_nan());
        assert_eq!(exp(100.0), f32::INFINITY);
        assert_eq!(exp(-110.0), 0.0);
    }

    /// The tables against `libm::log` and `libm::exp` (f64, reference
    /// library): each breakpoint lies in its interval of the reduced
    /// argument, c·(1/c) − 1 is below 2^-29, the stored ln c is within
    /// 2^-30 relative of −ln(1/c) + (c·(1/c) − 1), the interval around 1
    /// has c = 1 exactly; 2^(j/32) is correctly rounded.
    #[test]
    fn tables_match_the_reference() {
        for (i, &[c, inv_c, ln_c]) in LN_TABLE.iter().enumerate() {
            let from = f32::from_bits(LN_REDUCED_FROM + (i as u32) * 0x4_0000);
            let to = f32::from_bits(LN_REDUCED_FROM + (i as u32 + 1) * 0x4_0000);
            assert!(from <= c && c < to, "{i}");
            let delta = f64::from(c) * f64::from(inv_c) - 1.0;
            assert!(delta.abs() < 2f64.powi(-29), "{i}: {delta:e}");
            let want = -libm::log(f64::from(inv_c)) + delta;
            assert!(
                (f64::from(ln_c) - want).abs() <= want.abs() * 2f64.powi(-30),
                "{i}"
            );
            if from <= 1.0 && 1.0 < to {
                assert!(c == 1.0 && inv_c == 1.0 && ln_c == 0.0);
            }
        }
        for (j, &t) in EXP_TABLE.iter().enumerate() {
            assert_eq!(t, libm::exp2(j as f64 / 32.0) as f32, "{j}");
        }
        assert_eq!(LN2_HI.to_bits() & 0xff, 0);
        assert_eq!(LN2_32_HI.to_bits() & 0xfff, 0);
        let ln2 = core::f64::consts::LN_2;
        // The low parts are correctly rounded (half an ulp: 2^-24 relative).
        let lo_err = |hi: f32, lo: f32, want: f64| (f64::from(hi) + f64::from(lo) - want).abs();
        assert!(lo_err(LN2_HI, LN2_LO, ln2) <= f64::from(LN2_LO) * 2f64.powi(-24));
        assert!(lo_err(LN2_32_HI, LN2_32_LO, ln2 / 32.0) <= f64::from(LN2_32_LO) * 2f64.powi(-24));
    }

    /// Exhaustive (release build: `cargo test --release -p polytrope --lib
    /// every_ -- --ignored`, about two minutes each): every positive normal
    /// `f32` for ln, every `f32` for exp, against `libm::log` /
    /// `libm::exp` (f64, reference library). Measured 2026-12-03 (x86-64):
    /// ln 2,139,095,038 arguments, 12,131,788 (0.57 %) 1 ulp from the
    /// correctly rounded result, none further; exp over all 2^32 patterns
    /// with a finite nonzero normal result, 57,565,895 (2.6 %) 1 ulp off,
    /// none further, and the rare ones equal to `libm`.
    #[test]
    #[ignore]
    fn ln_every_positive_normal_within_one_ulp() {
        assert!(max_ulps(ln, libm::log, 0x0080_0000, 0x7f80_0000, 1) <= 1);
    }

    /// See [`ln_every_positive_normal_within_one_ulp`].
    #[test]
    #[ignore]
    fn exp_every_normal_result_within_one_ulp() {
        assert!(max_ulps(exp, libm::exp, 0, 0x42b1_7218, 1) <= 1);
        assert!(max_ulps(exp, libm::exp, 0x8000_0000, 0xc2ae_ac50, 1) <= 1);
    }
}
