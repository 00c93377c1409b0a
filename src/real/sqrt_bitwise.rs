//! The `f32` square root, correctly rounded (round to nearest, the only
//! mode the kernel runs in), by the digit-by-digit (restoring, "bit by
//! bit") method: one bit of the root per step from the top, the remainder
//! kept exact in an integer, the last bit rounded on the remainder. The
//! method as in fdlibm's `e_sqrtf.c` (Sun Microsystems, 1993; also musl's
//! `sqrtf` before 2020); see also Hacker's Delight (Warren, 2nd ed.,
//! §11-1, the shift-and-subtract integer square root).
//!
//! IEEE 754 requires the square root correctly rounded, so the result is
//! the one `libm::sqrtf` gives, bit for bit, for every input (`tests`
//! below compare them; `libm`'s special cases are kept: ±0 and +∞ give
//! themselves, a NaN or a negative gives the default NaN). The loop and
//! no table: some 300 bytes of flash fewer than `libm`'s table-driven
//! root on Cortex-M4F, for a few more instructions per call (no
//! square root runs in a scan of the controller).

/// `√x` for `f32`, correctly rounded (see the module note).
#[inline(never)]
pub(crate) fn sqrtf(x: f32) -> f32 {
    let bits = x.to_bits();
    // Positive normals (the usual case) pass one unsigned compare.
    let (mut m, mut e) = if bits.wrapping_sub(0x0080_0000) < 0x7f00_0000 {
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
    // An even exponent: the root's exponent is half of it.
    if e & 1 != 0 {
        m <<= 1;
    }
    e >>= 1;
    // The root of m · 2 (in [2^24, 2^26)), 25 bits: 24 of the result and
    // the rounding bit below them.
    let mut rem = m << 1;
    let (mut root, mut twice) = (0_u32, 0_u32);
    let mut bit = 0x0100_0000_u32;
    while bit != 0 {
        let trial = twice + bit;
        if trial <= rem {
            twice = trial + bit;
            rem -= trial;
            root += bit;
        }
        rem <<= 1;
        bit >>= 1;
    }
    // Round to nearest: up when the bit below the result is set (a tie,
    // that bit set and nothing below, cannot occur for a square root).
    root += root & 1;
    let biased = (root >> 1) + 0x3f00_0000;
    f32::from_bits(biased.wrapping_add((e as u32) << 23))
}

#[cfg(test)]
mod tests {
    use super::sqrtf;

    /// The same bits as `libm::sqrtf` (a reference library; IEEE 754
    /// requires the correctly rounded root): every special case, every
    /// subnormal step of 97, the neighbours of every power of two and of
    /// every perfect square's root, and a seeded sweep of 2^22 bit patterns
    /// of every sign and exponent (consistency with the reference).
    #[test]
    fn bits_equal_libm() {
        let check = |bits: u32| {
            let x = f32::from_bits(bits);
            let (got, want) = (sqrtf(x), libm::sqrtf(x));
            let same = got.to_bits() == want.to_bits() || (got.is_nan() && want.is_nan());
            assert!(same, "{bits:#010x}: {got:e} vs {want:e}");
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
        assert_eq!(sqrtf(-1.0).to_bits(), 0x7fc0_0000);
        assert_eq!(sqrtf(f32::NAN).to_bits(), libm::sqrtf(f32::NAN).to_bits());
    }
}
