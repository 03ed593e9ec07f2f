//! Exact signed 32x32 -> 64-bit multiplication that stays cheap on ARMv6-M.
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

/// Exact unsigned 32x32 -> 64-bit product (see [`mul_wide`] for the
/// target split).
#[inline]
pub(crate) fn mul_wide_u(a: u32, b: u32) -> u64 {
    #[cfg(narrow_mul)]
    {
        mul_wide_u_soft(a, b)
    }
    #[cfg(not(narrow_mul))]
    {
        // < 2^64: no overflow.
        u64::from(a).wrapping_mul(u64::from(b))
    }
}

/// Unsigned 32x32 -> 64-bit product from four 16x16 -> 32-bit products;
/// each partial product is below 2^32, the middle sum below 2^33.
#[inline]
#[cfg_attr(not(narrow_mul), allow(dead_code))]
pub(crate) fn mul_wide_u_soft(a: u32, b: u32) -> u64 {
    let (al, ah) = (a & 0xFFFF, a >> 16);
    let (bl, bh) = (b & 0xFFFF, b >> 16);
    let lo = u64::from(al.wrapping_mul(bl));
    let mid = u64::from(ah.wrapping_mul(bl)).wrapping_add(u64::from(al.wrapping_mul(bh)));
    let hi = u64::from(ah.wrapping_mul(bh));
    (hi << 32).wrapping_add(mid << 16).wrapping_add(lo)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn soft_unsigned_multiply_is_exact() {
        let edge = [0u32, 1, 0xFFFF, 0x1_0000, 0xFFFF_FFFF, 0x8000_0000, 12345];
        let mut x: u32 = 0xDEAD_BEEF;
        let mut vals = edge.to_vec();
        for _ in 0..3000 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            vals.push(x);
        }
        for &a in &vals {
            for &b in edge.iter().chain(vals.iter().take(50)) {
                assert_eq!(
                    mul_wide_u_soft(a, b),
                    u64::from(a) * u64::from(b),
                    "{a} * {b}"
                );
            }
        }
    }
}
