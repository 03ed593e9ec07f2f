//! Exact 32x32 -> 64-bit multiplication (full signed product, unsigned
//! high word) that stays cheap on ARMv6-M.
#![deny(clippy::arithmetic_side_effects)]

/// Exact signed 32x32 -> 64-bit product.
///
/// Targets with a widening multiply (ARMv7-M SMULL, RV32IM MULH, x86) use
/// it; ARMv6-M has only a 32-bit MULS, and the generic 64x64 library call
/// (`__aeabi_lmul`) costs far more than four 16x16 partial products, so it
/// gets [`mul_wide_soft`]. Both are exact, hence bit-identical.
#[inline]
pub(crate) fn mul_wide(a: i32, b: i32) -> i64 {
    #[cfg(narrow_mul)]
    {
        mul_wide_soft(a, b)
    }
    #[cfg(not(narrow_mul))]
    {
        // |a * b| <= 2^62: no overflow.
        i64::from(a).wrapping_mul(i64::from(b))
    }
}

/// Signed 32x32 -> 64-bit product from four 16x16 -> 32-bit products.
///
/// Split `a = ah 2^16 + al` with `al` unsigned (0..2^16) and `ah = a >> 16`
/// signed, the same for `b`; then
/// `a b = ah bh 2^32 + (ah bl + al bh) 2^16 + al bl`, where `al bl` fits in
/// u32, `ah bl` and `al bh` in i32 (|.| < 2^31) and `ah bh` in i32.
#[inline]
#[cfg_attr(not(narrow_mul), allow(dead_code))]
pub(crate) fn mul_wide_soft(a: i32, b: i32) -> i64 {
    let (al, ah) = ((a & 0xFFFF) as u32, a >> 16);
    let (bl, bh) = ((b & 0xFFFF) as u32, b >> 16);
    // Bounds as stated above; wrapping ops cannot wrap here.
    let lo = u64::from(al.wrapping_mul(bl)) as i64;
    let m1 = i64::from(ah.wrapping_mul(bl as i32));
    let m2 = i64::from((al as i32).wrapping_mul(bh));
    let hi = i64::from(ah.wrapping_mul(bh));
    (hi << 32)
        .wrapping_add(m1.wrapping_add(m2) << 16)
        .wrapping_add(lo)
}

/// High word of the unsigned 32x32 -> 64-bit product `a b`, with `b`
/// given as its 16-bit halves `b = bh 2^16 + bl` (`bh, bl < 2^16`).
///
/// On ARMv6-M from four 16x16 -> 32-bit products with `a = ah 2^16 + al`:
/// `a b = ah bh 2^32 + (ah bl + al bh) 2^16 + al bl`. The bits below 2^32
/// that can carry into the high word are collected in
/// `mid = (al bl >> 16) + (ah bl & 0xFFFF) + (al bh & 0xFFFF) < 3 2^16`;
/// then `hi = ah bh + (ah bl >> 16) + (al bh >> 16) + (mid >> 16)`, which is
/// the exact high word and so below 2^32: no step wraps. Taking `b` as
/// halves (precomputed by the caller) also keeps the compiler from recognising the
/// pattern and calling the 64x64 library multiply instead.
#[inline]
pub(crate) fn mul_hi_u32_halves(a: u32, bh: u32, bl: u32) -> u32 {
    #[cfg(narrow_mul)]
    {
        mul_hi_u32_halves_soft(a, bh, bl)
    }
    #[cfg(not(narrow_mul))]
    {
        let b = (bh << 16) | bl;
        // < 2^64: no overflow; the shifted value is below 2^32.
        (u64::from(a).wrapping_mul(u64::from(b)) >> 32) as u32
    }
}

/// [`mul_hi_u32_halves`] in 32-bit operations (see there for the bounds).
#[inline]
#[cfg_attr(not(narrow_mul), allow(dead_code))]
pub(crate) fn mul_hi_u32_halves_soft(a: u32, bh: u32, bl: u32) -> u32 {
    let (al, ah) = (a & 0xFFFF, a >> 16);
    let ll = al.wrapping_mul(bl);
    let hl = ah.wrapping_mul(bl);
    let lh = al.wrapping_mul(bh);
    let hh = ah.wrapping_mul(bh);
    let mid = (ll >> 16)
        .wrapping_add(hl & 0xFFFF)
        .wrapping_add(lh & 0xFFFF);
    hh.wrapping_add(hl >> 16)
        .wrapping_add(lh >> 16)
        .wrapping_add(mid >> 16)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn soft_high_word_is_exact() {
        let edge = [
            0u32,
            1,
            0xFFFF,
            0x1_0000,
            0xFFFF_FFFF,
            0x8000_0000,
            0xFFFF_0001,
        ];
        let mut x: u32 = 0x0BAD_F00D;
        let mut vals = edge.to_vec();
        for _ in 0..3000 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            vals.push(x);
        }
        for &a in &vals {
            for &b in edge.iter().chain(vals.iter().take(50)) {
                let want = ((u64::from(a) * u64::from(b)) >> 32) as u32;
                let (bh, bl) = (b >> 16, b & 0xFFFF);
                assert_eq!(mul_hi_u32_halves_soft(a, bh, bl), want, "hi({a} * {b})");
                assert_eq!(mul_hi_u32_halves(a, bh, bl), want, "hi({a} * {b})");
            }
        }
    }
}
