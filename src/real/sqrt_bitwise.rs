//! The `f32` square root, correctly rounded (round to nearest, the only
//! mode the kernel runs in), without `libm`'s 256-byte table.
//!
//! Without a floating-point unit (Cortex-M0): the digit-by-digit
//! (restoring, "bit by bit") method, one bit of the root per step from the
//! top, the remainder kept exact in an integer, the last bit rounded on the
//! remainder: the method of fdlibm's `e_sqrtf.c` (Sun Microsystems, 1993;
//! also musl's `sqrtf` before 2020); see also Hacker's Delight (Warren, 2nd
//! ed., §11-1, the shift-and-subtract integer square root).
//!
//! With one (Cortex-M4F), where a division is one instruction: the
//! argument reduced to `[1, 4)` by its exponent (exactly), Heron's
//! (Newton's) iteration as in [`crate::surge::coordinates::heron_root`] (within one
//! unit in the last place there), then the result made the correctly
//! rounded one by an exact integer test of `(R ± ½)²` against the
//! argument (one 32 × 32 → 64-bit multiplication each).
//!
//! IEEE 754 requires the square root correctly rounded, so the result is
//! the one `libm::sqrtf` gives, bit for bit, for every input (`tests`
//! below compare both forms with it; `libm`'s special cases are kept: ±0
//! and +∞ give themselves, a NaN or a negative gives the default NaN).

use super::HARD_FLOAT;

/// `√x` for `f32`, correctly rounded (see the module note).
#[inline(never)]
pub(crate) fn sqrtf(x: f32) -> f32 {
    sqrtf_by(x, HARD_FLOAT)
}

/// [`sqrtf`] by Heron's iteration and an exact test (`hard_float`), or by
/// the digit-by-digit method.
#[inline(always)]
fn sqrtf_by(x: f32, hard_float: bool) -> f32 {
    let bits = x.to_bits();
    // Positive normals (the usual case) pass one unsigned compare.
    let (m, e) = if bits.wrapping_sub(0x0080_0000) < 0x7f00_0000 {
        // x = m · 2^(e − 23), m with its implicit bit, e unbiased.
        (
            (bits & 0x007f_ffff) | 0x0080_0000,
            (bits >> 23) as i32 - 127,
        )
    } else if bits << 1 == 0 || bits == 0x7f80_0000 {
        // ±0 and +∞: themselves.
        return x;
    } else if bits > 0x7f80_0000 {
        // A NaN or a negative (sign bit set): the default NaN.
        return f32::from_bits(0x7fc0_0000);
    } else {
        // A positive subnormal: normalised (its leading one moved to the
        // implicit bit's place; `bits` below 2^23, so 9 or more leading
        // zeros).
        let shift = bits.leading_zeros() - 8;
        (bits << shift, -126 - shift as i32)
    };
    // x = (m · 2^odd) · 2^(2 half − 23): the root's exponent is `half`, and
    // the root `R` (24 bits, with the implicit one; 2^24 where it rounds up
    // to the next power of two) is √(m · 2^odd) · 2^(23/2), rounded.
    let odd = (e & 1) as u32;
    let half = e >> 1;
    let root = if hard_float {
        heron_corrected(m, odd)
    } else {
        digit_by_digit(m << odd)
    };
    f32::from_bits((root + 0x3f00_0000).wrapping_add((half as u32) << 23))
}

/// `R` = √(m · 2^odd · 2^23) rounded to nearest, for `m` in `[2^23, 2^24)`:
/// Heron's root of `q = m · 2^(odd − 23)` in `[1, 4)` (within one unit in
/// the last place of the correctly rounded one), then one step up or down
/// where the exact test says: `R` is the rounded root exactly when
/// `(2R − 1)² <= 4 N < (2R + 1)²` with `N = m · 2^(odd + 23)` (never equal:
/// the squares are odd, `4 N` even). Every product below fits 64 bits
/// (`2R + 1 <= 2^25 + 1`, `4 N < 2^50`).
#[inline(always)]
fn heron_corrected(m: u32, odd: u32) -> u32 {
    let q = f32::from_bits((m & 0x007f_ffff) | ((127 + odd) << 23));
    let mut s = (1.0 + 3.0 * q) / (3.0 + q);
    s = 0.5 * (s + q / s);
    s = 0.5 * (s + q / s);
    let s = s + 0.5 * (q / s - s);
    // `s` in [1, 2] (the root of a `q` in [1, 4), within one unit): its
    // bits are linear in `R` over both binades (2.0 gives 2^24).
    let mut r = s.to_bits().wrapping_sub(0x3f00_0000);
    let n4 = u64::from(m) << (odd + 25);
    let above = u64::from(2 * r + 1);
    if above * above < n4 {
        r += 1;
    } else {
        let below = u64::from(2 * r - 1);
        if n4 < below * below {
            r -= 1;
        }
    }
    r
}

/// `R` = √(n · 2^23) rounded to nearest, for `n` in `[2^23, 2^25)`, one
/// bit per step (see the module note).
#[inline(always)]
fn digit_by_digit(n: u32) -> u32 {
    // The root of n · 2 (in [2^24, 2^26)), 25 bits: 24 of the result and
    // the rounding bit below them. Each step tries the next bit `b` of the
    // root `q` (the bits above it set): `(q + b)² <=` the radicand is
    // `2 q b + b² <=` the remainder, which, kept shifted so that the step's
    // `b²` is `b`, reads `2 q + b <=` it (fdlibm keeps `2 q` in a variable
    // of its own).
    let mut rem = n << 1;
    let mut root = 0_u32;
    let mut bit = 0x0100_0000_u32;
    loop {
        let trial = (root << 1) + bit;
        if trial <= rem {
            rem -= trial;
            root += bit;
        }
        rem <<= 1;
        bit >>= 1;
        if bit == 0 {
            break;
        }
    }
    // Round to nearest: up when the bit below the result is set (a tie,
    // that bit set and nothing below, cannot occur for a square root).
    (root + (root & 1)) >> 1
}

#[cfg(test)]
mod tests {
    use super::{sqrtf, sqrtf_by};

    /// The same bits as `libm::sqrtf` (a reference library; IEEE 754
    /// requires the correctly rounded root): every special case, every
    /// subnormal step of 97, the neighbours of every power of two and of
    /// every perfect square's root, and a seeded sweep of 2^22 bit patterns
    /// of every sign and exponent, by both forms (with and without a
    /// floating-point unit; consistency with the reference).
    #[test]
    fn bits_equal_libm() {
        let check = |bits: u32| {
            let x = f32::from_bits(bits);
            let want = libm::sqrtf(x);
            // Both forms: with a floating-point unit and without.
            for got in [sqrtf_by(x, true), sqrtf_by(x, false)] {
                let same = got.to_bits() == want.to_bits() || (got.is_nan() && want.is_nan());
                assert!(same, "{bits:#010x}: {got:e} vs {want:e}");
            }
        };
        for bits in [
            0,
            0x8000_0000,
            0x7f80_0000,
            0xff80_0000,
            0x7fc0_0000,
            0xffc0_0000,
            0x7f80_0001,
            1,
            0x007f_ffff,
            0x0080_0000,
            0x7f7f_ffff,
            0x8000_0001,
            0xbf80_0000,
        ] {
            check(bits);
        }
        for bits in (0..0x0080_0000_u32).step_by(97) {
            check(bits);
        }
        for e in 0..256_u32 {
            for d in 0..4_u32 {
                check((e << 23).wrapping_add(d));
                check((e << 23).wrapping_sub(d));
            }
        }
        for n in 1..4096_u32 {
            let sq = (n as f32) * (n as f32);
            for d in 0..3_u32 {
                check(sq.to_bits() + d);
                check(sq.to_bits() - d);
            }
        }
        let mut state = 7_u64;
        for _ in 0..(1 << 22) {
            state = crate::lcg64_step(state);
            check((state >> 32) as u32);
        }
        // The NaN returned is the default one, as `libm`'s.
        for hard_float in [true, false] {
            assert_eq!(sqrtf_by(-1.0, hard_float).to_bits(), 0x7fc0_0000);
            let nan = libm::sqrtf(f32::NAN).to_bits();
            assert_eq!(sqrtf_by(f32::NAN, hard_float).to_bits(), nan);
        }
        assert_eq!(sqrtf(2.0).to_bits(), libm::sqrtf(2.0).to_bits());
    }
}
