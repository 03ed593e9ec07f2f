//! Q-format integer interpolation kernels: linear, monotone cubic Hermite,
//! bilinear. Pure integer arithmetic, bit-exact on every target.
//!
//! Values are i32 in any Q format; the position fraction is Q0.16. Results
//! are rounded half up and saturate at the i32 range.
#![deny(clippy::arithmetic_side_effects)]

use super::{Nodes, PositionQ};
use crate::widemul::mul_wide;

/// `(a * frac_q16) >> 16` rounded half up, `a` within +-2^47,
/// `frac_q16 < 2^16`.
#[inline]
fn scale_q16(a: i64, frac_q16: u32) -> i64 {
    // Node differences usually fit in i32: then two 32-bit multiplies
    // suffice (same exact result); otherwise |a| < 2^47 and frac < 2^16 keep
    // the i64 product and the rounding offset below 2^63.
    match i32::try_from(a) {
        Ok(a32) => i64::from(scale_q16_i32(a32, frac_q16)),
        Err(_) => a.wrapping_mul(i64::from(frac_q16)).wrapping_add(1 << 15) >> 16,
    }
}

/// [`scale_q16`] for i32 in 32-bit arithmetic: with `a = hi 2^16 + lo`
/// (`lo` unsigned 16 bits), `floor((a f + 2^15) / 2^16)
/// = hi f + floor((lo f + 2^15) / 2^16)` exactly, because `hi f 2^16` is a
/// multiple of `2^16`. `|hi f| < 2^31`, `lo f + 2^15 < 2^32`.
#[inline]
fn scale_q16_i32(a: i32, frac_q16: u32) -> i32 {
    let f = frac_q16 & 0xFFFF;
    let hi = a >> 16;
    let lo = (a & 0xFFFF) as u32;
    let low = (lo.wrapping_mul(f).wrapping_add(0x8000) >> 16) as i32;
    hi.wrapping_mul(f as i32).wrapping_add(low)
}

/// i64 to i32 with saturation.
// A range test and a sign choice, not `clamp`: smaller on ARMv6-M, where
// each 64-bit compare and select is several instructions.
#[inline]
fn saturate(v: i64) -> i32 {
    match i32::try_from(v) {
        Ok(x) => x,
        Err(_) if v < 0 => i32::MIN,
        Err(_) => i32::MAX,
    }
}

/// Linear interpolation at `p`; exact at nodes, within the two neighbouring
/// node values, error against the exact line at most 0.5 LSB plus the
/// position error of [`PositionQ::frac_q16`] times the node difference.
#[inline]
pub fn linear_q<N: Nodes<Value = i32>>(nodes: &N, p: PositionQ) -> i32 {
    if p.frac_q16 == 0 {
        return nodes.node(p.index);
    }
    let (v0, v1) = nodes.pair(p.index);
    lerp_q(v0, v1, p.frac_q16)
}

/// [`linear_q`] between two node values `v0`, `v1` at fraction
/// `frac_q16 < 2^16`: `v0 + round(frac (v1 - v0))`, rounded half up.
///
/// `lerp_q(v0, v1, 0)` is `v0` exactly (the scaled step is
/// `floor(2^15 / 2^16) = 0` on both paths), so a caller that has both
/// words at hand need not test for a node first and still matches
/// [`linear_q`]'s node read bit for bit.
#[inline]
pub(crate) fn lerp_q(v0: i32, v1: i32, frac_q16: u32) -> i32 {
    match lerp_q_narrow(v0, v1, frac_q16) {
        Some(v) => v,
        None => lerp_q_wide(v0, v1, frac_q16),
    }
}

/// [`lerp_q`] when the node difference `v1 - v0` fits in i32 (always for
/// neighbouring nodes of a smooth column), in 32-bit arithmetic; `None`
/// otherwise. A caller that has another way for that case (the integer
/// compensator's short update falls back to its general one) needs no
/// call to [`lerp_q_wide`] and keeps its registers.
#[inline]
pub(crate) fn lerp_q_narrow(v0: i32, v1: i32, frac_q16: u32) -> Option<i32> {
    let d = v1.checked_sub(v0)?;
    // With f = frac < 2^16, s = floor((d f + 2^15) / 2^16) lies between 0
    // and d: for d > 0, d f + 2^15 <= d (2^16 - 1) + 2^15 < (d + 1) 2^16
    // gives s <= d; for d < 0, d f + 2^15 >= d (2^16 - 1) + 2^15 > d 2^16
    // gives s >= d. So v0 + s lies between v0 and v1: it fits in i32,
    // needs no saturation, and equals the i64 result of `lerp_q_wide` bit
    // for bit.
    Some(lerp_q_diff(v0, d, frac_q16))
}

/// [`lerp_q_narrow`]'s result from the first node value `v0` and the node
/// difference `d = v1 - v0` (which must fit in i32): the very arithmetic
/// `lerp_q_narrow` runs, so a caller that caches `v0` and `d` (the integer
/// compensator's interval cell) gets its result bit for bit.
#[inline]
pub(crate) fn lerp_q_diff(v0: i32, d: i32, frac_q16: u32) -> i32 {
    v0.wrapping_add(scale_q16_i32(d, frac_q16))
}

/// [`lerp_q`] for node differences beyond the i32 range, in i64: out of
/// line and cold, so that every inlined [`linear_q`] carries a call
/// instead of its own copy (with a 64-bit library multiply on ARMv6-M)
/// of a case that smooth columns never reach.
#[cold]
#[inline(never)]
fn lerp_q_wide(v0: i32, v1: i32, frac_q16: u32) -> i32 {
    // |v1 - v0| < 2^32, so the scaled step fits and v0 + step lies between
    // v0 and v1 (rounding cannot pass v1 because frac < 2^16).
    let d = i64::from(v1).wrapping_sub(i64::from(v0));
    saturate(i64::from(v0).wrapping_add(scale_q16_split(d, frac_q16)))
}

/// [`scale_q16`]'s i64 case, `floor((a f + 2^15) / 2^16)` for
/// `|a| < 2^47` and `f = frac_q16 < 2^16`, from `a = hi 2^16 + lo` (`lo`
/// unsigned 16 bits, `hi` then within +-2^31): `hi f + floor((lo f +
/// 2^15) / 2^16)` exactly, as in [`scale_q16_i32`], with `hi f` an exact
/// 32x32 -> 64-bit product (`mul_wide`). On ARMv6-M that is four 16-bit
/// multiplies where the i64 product linked the 64-bit library multiply
/// for [`lerp_q_wide`] alone.
#[inline]
fn scale_q16_split(a: i64, frac_q16: u32) -> i64 {
    let f = frac_q16 & 0xFFFF;
    let hi = (a >> 16) as i32;
    let lo = (a & 0xFFFF) as u32;
    let low = i64::from(lo.wrapping_mul(f).wrapping_add(0x8000) >> 16);
    mul_wide(hi, f as i32).wrapping_add(low)
}

/// Fritsch–Carlson tangent at node `k` in LSB per node step (see the f32
/// kernel for the method and sources). Out of line: it is called twice per
/// cubic interpolation, and its i64 arithmetic is large on ARMv6-M.
#[inline(never)]
fn tangent_q<N: Nodes<Value = i32>>(nodes: &N, k: usize) -> i64 {
    let last = nodes.len().saturating_sub(1);
    let at = |i: usize| i64::from(nodes.node(i));
    if k == 0 {
        return at(1).wrapping_sub(at(0));
    }
    if k >= last {
        return at(last).wrapping_sub(at(last.saturating_sub(1)));
    }
    let a = at(k).wrapping_sub(at(k.wrapping_sub(1)));
    let b = at(k.wrapping_add(1)).wrapping_sub(at(k));
    if a == 0 || b == 0 || (a < 0) != (b < 0) {
        return 0;
    }
    // 2 a b / (a + b) = 2 a * (b / (a + b)); b/(a+b) in [0, 1) as Q0.16
    // (a, b of one sign, so the ratio of magnitudes is the same), then
    // |2 a r| < 2^33 * 2^16.
    let r = ratio_q16(
        b.unsigned_abs(),
        a.unsigned_abs().wrapping_add(b.unsigned_abs()),
    );
    a.wrapping_mul(2).wrapping_mul(i64::from(r)) >> 16
}

/// `floor(num 2^16 / den)` for `0 < num < den < 2^33`, by 16 steps of
/// restoring binary long division (the quotient is below 2^16 because
/// `num < den`, and the remainder stays below `den`, so doubling it fits
/// in a u64): ARMv6-M needs no 64-bit division routine (about 1 KiB).
/// Equals the truncating i64 division `(b << 16) / (a + b)` for `a`, `b`
/// of one sign with `|a|`, `|b|` as `den - num`, `num`.
#[inline(always)]
fn ratio_q16(num: u64, den: u64) -> u32 {
    let mut rem = num;
    // A sentinel bit above the quotient ends the loop after 16 steps; with
    // a plain counted loop the compiler unrolls all 16 (about 1.2 KiB on ARMv6-M).
    let mut q: u32 = 1;
    while q < 1 << 16 {
        // rem < den < 2^33: no overflow in the shift.
        rem <<= 1;
        let bit = rem >= den;
        if bit {
            rem = rem.wrapping_sub(den);
        }
        q = (q << 1) | u32::from(bit);
    }
    q & 0xFFFF
}

/// Monotone piecewise-cubic Hermite interpolation at `p` in Q arithmetic;
/// exact at nodes. Tangents and the cubic are evaluated in i64 with Q0.16
/// weights, so the result stays within a few LSB of the f32 kernel applied
/// to the same data (see the tests).
// Same shape as cubic_monotone in kernel_f32.rs, but integer arithmetic throughout.
#[inline]
pub fn cubic_monotone_q<N: Nodes<Value = i32>>(nodes: &N, p: PositionQ) -> i32 {
    let v0 = nodes.node(p.index);
    if p.frac_q16 == 0 {
        return v0;
    }
    let k1 = p.index.wrapping_add(1);
    let v1 = nodes.node(k1);
    let m0 = tangent_q(nodes, p.index);
    let m1 = tangent_q(nodes, k1);
    let d = i64::from(v1).wrapping_sub(i64::from(v0));
    // |d|, |m| < 2^33, so |c2|, |c3| < 2^36: every Horner product below
    // stays under 2^36 * 2^16 (times small constants), far from 2^63.
    let c2 = d
        .wrapping_mul(3)
        .wrapping_sub(m0.wrapping_mul(2))
        .wrapping_sub(m1);
    let c3 = m0.wrapping_add(m1).wrapping_sub(d.wrapping_mul(2));
    let t = p.frac_q16;
    let mut acc = scale_q16(c3, t).wrapping_add(c2);
    acc = scale_q16(acc, t).wrapping_add(m0);
    acc = scale_q16(acc, t);
    saturate(i64::from(v0).wrapping_add(acc))
}

/// Bilinear interpolation on a row-major Q grid (`cols` nodes per row) at
/// row position `r` and column position `c`; exact at grid nodes.
#[inline]
pub fn bilinear_q<N: Nodes<Value = i32>>(
    nodes: &N,
    cols: usize,
    r: PositionQ,
    c: PositionQ,
) -> i32 {
    let base = r.index.wrapping_mul(cols).wrapping_add(c.index);
    // Each step is `lerp_q`: its result lies between its two i32 inputs, so
    // the row values need no i64 and no saturation, and the result equals
    // `v0 + scale_q16(v1 - v0, f)` in i64 bit for bit (see `lerp_q_narrow`;
    // at `f == 0` it is `v0` whatever `v1`). The narrow case stays inline
    // and the wide one is the shared out-of-line function, so the 2-D
    // correction links no 64-bit multiply of its own.
    let at = |i: usize| {
        let v0 = nodes.node(i);
        if c.frac_q16 == 0 {
            return v0;
        }
        lerp_q(v0, nodes.node(i.wrapping_add(1)), c.frac_q16)
    };
    let w0 = at(base);
    if r.frac_q16 == 0 {
        return w0;
    }
    lerp_q(w0, at(base.wrapping_add(cols)), r.frac_q16)
}

#[cfg(test)]
mod tests {
    use super::super::{Axis, AxisQ, cubic_monotone, linear};
    use super::*;

    #[test]
    fn split_scale_matches_i64_product() {
        // Node differences beyond i32 (what `lerp_q_wide` sees, |a| < 2^32)
        // and up to the +-2^47 bound, against the i64 product.
        let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
        let mut vals: std::vec::Vec<i64> = std::vec![
            0,
            1,
            -1,
            i64::from(i32::MAX) + 1,
            i64::from(i32::MIN) - 1,
            (1 << 32) - 1,
            -(1 << 32) + 1,
            (1 << 47) - 1,
            -(1 << 47) + 1,
        ];
        for _ in 0..20_000 {
            // xorshift64: deterministic spread.
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            vals.push((x as i64) >> (16 + x % 16));
        }
        let fracs = [0u32, 1, 0x7FFF, 0x8000, 0x8001, 0xFFFE, 0xFFFF, 12_345];
        for &a in &vals {
            for f in fracs {
                let want = a.wrapping_mul(i64::from(f)).wrapping_add(1 << 15) >> 16;
                let got = scale_q16_split(a, f);
                assert_eq!(got, want, "a={a} f={f}: got {got}, expected {want}");
            }
        }
        // The comparison sees a dropped rounding term: (2^33 + 1) / 2
        // rounds up to 2^32 + 1, truncates to 2^32.
        let a = (1i64 << 33) + 1;
        assert_eq!(scale_q16_split(a, 0x8000), (1 << 32) + 1);
        assert_ne!(scale_q16_split(a, 0x8000), (a * 0x8000) >> 16);
    }

    #[test]
    fn ratio_q16_matches_i64_division() {
        // Independent reference: the truncating i64 division the tangent
        // used before, on same-sign slopes up to the i32 node range
        // (|a|, |b| < 2^32): edges and a seeded xorshift sweep.
        let edge: [i64; 8] = [
            1,
            2,
            3,
            0xFFFF,
            0x1_0000,
            0x7FFF_FFFF,
            0xFFFF_FFFF,
            12_345_678,
        ];
        let mut pairs: Vec<(i64, i64)> = Vec::new();
        for &a in &edge {
            for &b in &edge {
                pairs.push((a, b));
                pairs.push((-a, -b));
            }
        }
        let mut x: u64 = 0xD1B5_4A32_D192_ED03;
        for _ in 0..50_000 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            let a = ((x & 0xFFFF_FFFF) as i64).max(1) >> (x >> 59);
            let b = ((x >> 32) as i64).max(1) >> ((x >> 54) & 31);
            let (a, b) = (a.max(1), b.max(1));
            pairs.push(if x & 1 == 0 { (a, b) } else { (-a, -b) });
        }
        for (a, b) in pairs {
            let want = (b << 16) / (a + b);
            let got = i64::from(ratio_q16(
                b.unsigned_abs(),
                a.unsigned_abs() + b.unsigned_abs(),
            ));
            assert_eq!(got, want, "a={a} b={b}: got {got}, expected {want}");
        }
    }

    #[test]
    fn lerp_q_matches_the_i64_formula() {
        // Independent reference: v0 + floor((d f + 2^15) / 2^16) in i128,
        // saturated. Node values at the i32 edges (differences beyond the
        // i32 range: the wide case), fractions 0 (a node: the first value
        // exactly), 1 LSB, 1/2, 1 LSB below 1, and a seeded sweep.
        let edge = [i32::MIN, i32::MIN + 1, -65_536, -1, 0, 1, 65_535, i32::MAX];
        let mut cases: Vec<(i32, i32, u32)> = Vec::new();
        for &v0 in &edge {
            for &v1 in &edge {
                for f in [0, 1, 0x8000, 0xFFFF] {
                    cases.push((v0, v1, f));
                }
            }
        }
        let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
        for _ in 0..20_000 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            cases.push((
                x as i32,
                (x >> 32) as i32 >> (x % 24),
                (x >> 40) as u32 & 0xFFFF,
            ));
        }
        for (v0, v1, f) in cases {
            let d = i128::from(v1) - i128::from(v0);
            let want = (i128::from(v0) + ((d * i128::from(f) + (1 << 15)) >> 16))
                .clamp(i128::from(i32::MIN), i128::from(i32::MAX)) as i32;
            let got = lerp_q(v0, v1, f);
            assert_eq!(
                got, want,
                "lerp_q({v0}, {v1}, {f}) = {got}, expected {want}"
            );
            if f == 0 {
                assert_eq!(got, v0, "lerp_q({v0}, {v1}, 0) is not the node value");
            }
            // The 32-bit form answers exactly when the difference fits.
            let narrow = lerp_q_narrow(v0, v1, f);
            let fits = i32::try_from(d).is_ok();
            assert_eq!(
                narrow,
                fits.then_some(want),
                "lerp_q_narrow({v0}, {v1}, {f}) = {narrow:?}"
            );
        }
    }

    // Same xorshift sweep as fixed.rs's soft_shift test, on another function.
    #[test]
    fn split_scale_matches_wide_product() {
        let mut x: u64 = 0x2545_F491_4F6C_DD1D;
        for i in 0..50_000u32 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            let a = match i % 3 {
                0 => x as i32,
                1 => (x as i32) >> 12,
                _ => [i32::MIN, i32::MAX, -1, 0, 1, -65536, 65535][(i / 3 % 7) as usize],
            };
            let f = (x >> 40) as u32 & 0xFFFF;
            let want = (i64::from(a) * i64::from(f) + (1 << 15)) >> 16;
            assert_eq!(i64::from(scale_q16_i32(a, f)), want, "a={a} f={f}");
        }
    }

    #[test]
    fn linear_q_table() -> Result<(), &'static str> {
        let v = [0i32, 1000, 3000, i32::MAX, i32::MIN];
        let axis = AxisQ::new(0, 1 << 16, 5).ok_or("valid geometry")?;
        // (x in Q16.16, expected)
        let cases = [
            (0, 0),
            (1 << 15, 500),
            (1 << 16, 1000),
            (3 << 15, 2000),
            (3 << 16, i32::MAX),
            // halfway between MAX and MIN: -0.5 rounds half up to 0
            (7 << 15, 0),
            (4 << 16, i32::MIN),
            (i32::MAX, i32::MIN),
        ];
        for (x, want) in cases {
            let got = linear_q(&v, axis.locate(x));
            assert_eq!(got, want, "linear_q({x}) = {got}, expected {want}");
        }
        Ok(())
    }

    #[test]
    fn cubic_q_tracks_f32_kernel() -> Result<(), &'static str> {
        let vf = [0.0f32, 100.0, 1500.0, 1600.0, 9000.0, 9000.0, -30000.0];
        let vq = vf.map(|v| v as i32);
        let axis = Axis {
            start: 0.0,
            step: 1.0,
            len: 7,
        };
        let axis_q = AxisQ::new(0, 1 << 16, 7).ok_or("valid geometry")?;
        for i in 0..=(6 << 8) {
            let xq = i << 8;
            let got = cubic_monotone_q(&vq, axis_q.locate(xq));
            let want = cubic_monotone(&vf, axis.locate(xq as f32 / 65536.0));
            // Tolerance: 3 roundings of 0.5 LSB in the Horner chain, one in
            // each tangent ratio (relative 2^-16 of |m| <= 2 * 39000,
            // ~1.2 LSB each), plus f32 rounding of values up to 3e4
            // (2 ulp = 0.004): 4 LSB covers the sum.
            assert!(
                (f64::from(got) - f64::from(want)).abs() <= 4.0,
                "x={xq}: q {got} f32 {want}"
            );
            let lin = linear_q(&vq, axis_q.locate(xq));
            let lin_f = linear(&vf, axis.locate(xq as f32 / 65536.0));
            // One rounding (0.5 LSB) plus f32 rounding of values < 4e4.
            assert!(
                (f64::from(lin) - f64::from(lin_f)).abs() <= 0.51,
                "x={xq}: q {lin} f32 {lin_f}"
            );
        }
        Ok(())
    }

    /// `bilinear_q` in 32-bit steps equals the i64 form it replaced (each
    /// row value `v0 + scale_q16(v1 - v0, fc)` kept in i64, the column
    /// step on those, saturated once) bit for bit, on grids with node
    /// differences inside and beyond the i32 range and every kind of
    /// fraction (0, 1, 2^15, 2^16 - 1 and a seeded sweep).
    #[test]
    fn bilinear_q_matches_the_i64_form() {
        fn reference(g: &[i32], cols: usize, r: PositionQ, c: PositionQ) -> i32 {
            let base = r.index * cols + c.index;
            let at = |i: usize| {
                let v0 = i64::from(g[i]);
                if c.frac_q16 == 0 {
                    return v0;
                }
                v0 + (((i64::from(g[i + 1]) - v0) * i64::from(c.frac_q16) + (1 << 15)) >> 16)
            };
            let w0 = at(base);
            if r.frac_q16 == 0 {
                return saturate(w0);
            }
            let w1 = at(base + cols);
            saturate(w0 + (((w1 - w0) * i64::from(r.frac_q16) + (1 << 15)) >> 16))
        }
        let mut x: u64 = 0x2545_F491_4F6C_DD1D;
        let mut next = || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        };
        let edges = [0u32, 1, 1 << 15, 0xFFFF];
        for case in 0..20_000u32 {
            // 3 x 3 grid; every fourth grid spans the whole i32 range.
            let g: [i32; 9] = core::array::from_fn(|_| {
                let v = next() as i32;
                if case % 4 == 0 { v } else { v >> 12 }
            });
            let frac = |k: u32, v: u64| {
                if k < 4 {
                    edges[k as usize]
                } else {
                    (v & 0xFFFF) as u32
                }
            };
            let pos = |index: usize, frac_q16: u32| PositionQ {
                index,
                frac_q16,
                clamped: false,
            };
            let r = pos((next() % 2) as usize, frac(case % 6, next()));
            let c = pos((next() % 2) as usize, frac((case / 6) % 6, next()));
            let got = bilinear_q(&g, 3, r, c);
            let want = reference(&g, 3, r, c);
            assert_eq!(
                got, want,
                "grid {g:?} r {r:?} c {c:?}: got {got}, expected {want}"
            );
        }
    }

    #[test]
    fn bilinear_q_exact_on_plane() -> Result<(), &'static str> {
        // f(r, c) = 1000 r + 10 c on a 3 x 4 grid of Q16.16 axes.
        let g: [i32; 12] = core::array::from_fn(|i| 1000 * (i / 4) as i32 + 10 * (i % 4) as i32);
        let ra = AxisQ::new(0, 1 << 16, 3).ok_or("valid row geometry")?;
        let ca = AxisQ::new(0, 1 << 16, 4).ok_or("valid column geometry")?;
        for (r, c) in [
            (0, 0),
            (2 << 16, 3 << 16),
            (1 << 15, 3 << 15),
            (1 << 14, 5 << 14),
        ] {
            let got = bilinear_q(&g, 4, ra.locate(r), ca.locate(c));
            let want = (1000.0 * f64::from(r) + 10.0 * f64::from(c)) / 65536.0;
            // Two roundings of 0.5 LSB.
            assert!(
                (f64::from(got) - want).abs() <= 1.0,
                "({r},{c}): got {got}, expected {want}"
            );
        }
        Ok(())
    }
}
