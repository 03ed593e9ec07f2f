//! The product stage of the integer compensator's short sample path:
//! `(d g + 2^(s-1)) >> s` for an output shift `s` in 1..=31, with the test
//! that the result fits in i32, in the shape each target runs in the
//! fewest instructions.
#![deny(clippy::arithmetic_side_effects)]

/// A right-shift amount in 1..=31, as a type.
///
/// A load of a field of this type tells the compiler the range (a
/// fieldless enum's value is always one of its discriminants), so a
/// shift by it needs no `& 31` mask: three instructions fewer per sample on
/// ARMv6-M, two on ARMv7-M. A plain `u32` field cannot carry that range.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(u8)]
enum Shift1To31 {
    S1 = 1,
    S2,
    S3,
    S4,
    S5,
    S6,
    S7,
    S8,
    S9,
    S10,
    S11,
    S12,
    S13,
    S14,
    S15,
    S16,
    S17,
    S18,
    S19,
    S20,
    S21,
    S22,
    S23,
    S24,
    S25,
    S26,
    S27,
    S28,
    S29,
    S30,
    S31,
}

impl Shift1To31 {
    /// The amount `s`, or `None` outside 1..=31.
    // A match whose arms map each value to the variant with that
    // discriminant compiles to a range test (no table in flash).
    fn new(s: u32) -> Option<Self> {
        use Shift1To31::*;
        Some(match s {
            1 => S1,
            2 => S2,
            3 => S3,
            4 => S4,
            5 => S5,
            6 => S6,
            7 => S7,
            8 => S8,
            9 => S9,
            10 => S10,
            11 => S11,
            12 => S12,
            13 => S13,
            14 => S14,
            15 => S15,
            16 => S16,
            17 => S17,
            18 => S18,
            19 => S19,
            20 => S20,
            21 => S21,
            22 => S22,
            23 => S23,
            24 => S24,
            25 => S25,
            26 => S26,
            27 => S27,
            28 => S28,
            29 => S29,
            30 => S30,
            31 => S31,
            _ => return None,
        })
    }

    /// The amount as a shift operand.
    const fn get(self) -> u32 {
        self as u32
    }
}

/// What the short sample path needs to take `d g + 2^(s-1)` down to the
/// output: the shift `s` in 1..=31 and constants derived from it, computed
/// once when the compensator is made.
// `repr(C)` with the byte first: it lands within the 31 bytes that an
// ARMv6-M byte load reaches from the compensator's base (see there).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(C)]
pub(super) struct ShortScale {
    shift: Shift1To31,
    /// `32 - s`, in 1..=31 as well.
    shift_c: Shift1To31,
    /// `2^(s-1) - 2^30`: the rounding half-LSB, biased so that the low
    /// partial sum of [`Self::narrow`] fits in i32 for every shift.
    round_lo: i32,
    /// `2^14 + 2^30 - 2^(s-1)`: takes the bias back out through the middle
    /// partial sum (`2^30 = 2^14 2^16`), which has room for it.
    round_mid: i32,
    /// `2^(s-1)`, for the fit test.
    half: u32,
}

/// Offset, within [`ShortScale`], of the last byte an ARMv6-M byte load
/// must reach (`shift_c`, right after `shift`), checked at compile time.
pub(super) const SHORT_SCALE_BYTES_END: usize = core::mem::offset_of!(ShortScale, shift_c) + 1;
const _: () = assert!(core::mem::offset_of!(ShortScale, shift) == 0 && SHORT_SCALE_BYTES_END == 2);

/// `2^30`, the bias taken off the rounding half-LSB in the low partial sum
/// of [`ShortScale::narrow`].
const LOW_BIAS: i32 = 1 << 30;

/// `2^14 + 2^30`: the bias given back through the middle partial sum
/// (`2^14 2^16 = 2^30`), plus the `2^30` that `round_lo` adds to it.
const MID_BIAS: i32 = (1 << 14) | (1 << 30);

impl ShortScale {
    /// A placeholder for a compensator whose short path never runs: its
    /// values are never used (zeros are the cheapest to write).
    pub(super) const UNUSED: Self = Self {
        shift: Shift1To31::S1,
        shift_c: Shift1To31::S1,
        round_lo: 0,
        round_mid: 0,
        half: 0,
    };

    /// The constants of output shift `s` with its rounding half-LSB
    /// `half = 2^(s-1)` (the compensator's, reused), or `None` unless `s`
    /// is in 1..=31 (the short path's range).
    pub(super) fn new(s: u32, half: i64) -> Option<Self> {
        // s in 1..=31: 32 - s is too, and half <= 2^30 keeps both sums in
        // range.
        let half = half as i32;
        Some(Self {
            shift: Shift1To31::new(s)?,
            shift_c: Shift1To31::new(32u32.wrapping_sub(s))?,
            round_lo: half.wrapping_sub(LOW_BIAS),
            round_mid: MID_BIAS.wrapping_sub(half),
            half: half as u32,
        })
    }

    /// `(d g + 2^(s-1)) >> s` where it fits in i32, else `Err` with the
    /// high word of `d g + 2^(s-1)` (whose sign says which way the result
    /// saturates), from three 16x16 -> 32-bit products: the form for
    /// targets without a 32x32 -> 64-bit multiply (ARMv6-M).
    ///
    /// Exact for every `d`, `g` and shift; the bounds below show that no
    /// partial sum that must be exact leaves i32.
    #[inline(always)]
    #[cfg_attr(not(narrow_mul), allow(dead_code))]
    pub(super) fn narrow(&self, d: i32, g: i32) -> Result<i32, i32> {
        // Halves with a signed low part: `d = dh 2^16 + dl` with `dl` in
        // [-2^15, 2^15) and `dh` in [-2^15, 2^15], where `dh = 2^15` only
        // with `dl < 0` (d < 2^31) and `dh = -2^15` only with `dl >= 0`
        // (d >= -2^31); the same for `g`. (Unsigned low halves would make
        // the cross sum 33 bits wide: two more adds with carry.) The high
        // half is floor((d + 2^15) / 2^16), taken as floor((floor(d / 2^15)
        // + 1) / 2) because `(d - dl) >> 16` would wrap at dh = 2^15.
        let dl = i32::from(d as i16);
        let dh = (d >> 15).wrapping_add(1) >> 1;
        let gl = i32::from(g as i16);
        let gh = (g >> 15).wrapping_add(1) >> 1;
        // d g = hh 2^32 + mid 2^16 + ll with
        //   ll  = dl gl in [-2^30 + 2^15, 2^30],
        //   hh  = dh gh in [-2^30, 2^30],
        //   mid = dl gh + dh gl in [-2^31, 2^31 - 2^15]:
        // each cross product lies in [-2^30, 2^30], so mid >= -2^31. For
        // the upper end: with dl = -2^15, dh > -2^15, so dh gl <= 2^30 -
        // 2^15 (dl gh <= 2^30); with dl > -2^15, dl gh <= 2^30 - 2^15
        // (dh gl <= 2^30). Either way mid <= 2^31 - 2^15.
        let ll = dl.wrapping_mul(gl);
        let hh = dh.wrapping_mul(gh);
        // Karatsuba: (dl - dh)(gh - gl) = mid - ll - hh, one product
        // fewer than forming mid directly, and no operand is needed twice
        // (ARMv6-M's MULS overwrites one), so no copies. This product may
        // wrap; only the sum below must be exact, and it is taken mod 2^32
        // to a value that fits.
        let km = dl.wrapping_sub(dh).wrapping_mul(gh.wrapping_sub(gl));
        // The rounding half-LSB r = 2^(s-1) <= 2^30 cannot go into ll
        // alone (ll + r reaches 2^31 at s = 31, dl = gl = -2^15), so it
        // enters as low = ll + r - 2^30 in [-2^31 + 2^15 + 1, 2^30] and
        // m = mid + 2^14 in [-2^31 + 2^14, 2^31 - 2^15 + 2^14]: both fit,
        // and m 2^16 + low = mid 2^16 + ll + r.
        let low = ll.wrapping_add(self.round_lo);
        // m = km + ll + hh + 2^14 = km + hh + low + round_mid: the wrapping
        // sum is m mod 2^32, and m fits in i32, so it is m exactly.
        let m = km
            .wrapping_add(hh)
            .wrapping_add(low)
            .wrapping_add(self.round_mid);
        // d g + r = hh 2^32 + m 2^16 + low as a two-word sum; |d g + r| <
        // 2^63, so the words are its exact two's complement.
        let (lo, carry) = ((m as u32) << 16).overflowing_add(low as u32);
        let hi = hh
            .wrapping_add(m >> 16)
            .wrapping_add(low >> 31)
            .wrapping_add(i32::from(carry));
        self.shift_down(lo, hi)
    }

    /// [`Self::narrow`]'s result from `p = d g + 2^(s-1)`, for targets
    /// whose widening multiply-accumulate forms `p` in one instruction.
    #[inline(always)]
    #[cfg_attr(narrow_mul, allow(dead_code))]
    pub(super) fn wide(&self, p: i64) -> Result<i32, i32> {
        self.shift_down(p as u32, (p >> 32) as i32)
    }

    /// `p >> s` for the two words of `p` if it fits in i32, else
    /// `Err(hi)`: the low word takes bits `s..32` of `lo` and bits `0..s`
    /// of `hi`; the result fits exactly when the bits of `hi` above those
    /// are the sign extension of that word.
    #[inline(always)]
    fn shift_down(&self, lo: u32, hi: i32) -> Result<i32, i32> {
        let s = self.shift.get();
        // s < 32: neither shift wraps (the `& 31` they imply folds away).
        // The result fits exactly when hi is in [-2^(s-1), 2^(s-1)), that is
        // when hi + 2^(s-1) is in [0, 2^s) as an unsigned word (beyond that
        // range it lands in [2^s, 2^32), s <= 31 leaving no wrap into it).
        if (hi as u32).wrapping_add(self.half).wrapping_shr(s) == 0 {
            Ok((lo.wrapping_shr(s) | (hi as u32).wrapping_shl(self.shift_c.get())) as i32)
        } else {
            Err(hi)
        }
    }
}

#[cfg(test)]
// Test fixtures: shifts in 1..=31 and i128 products cannot overflow; the
// runtime's no-overflow rule guards firmware arithmetic, not these.
#[allow(clippy::arithmetic_side_effects)]
mod tests {
    use super::*;
    use crate::widemul::mul_wide_soft;

    /// What the short path computed before [`ShortScale`]: the exact
    /// product plus `2^(s-1)` in i64, shifted by the former word-pair
    /// shift (`Some` where it fits in i32).
    fn former(d: i32, g: i32, s: u32) -> Option<i32> {
        let p = mul_wide_soft(d, g).wrapping_add(1i64 << (s - 1));
        super::super::shr_1_31_to_i32(p, s, 32 - s)
    }

    /// Independent reference in i128: the rounded quotient, `Ok` if it
    /// fits in i32, else `Err` with the sign of the sum.
    fn reference(d: i32, g: i32, s: u32) -> Result<i32, bool> {
        let p = i128::from(d) * i128::from(g) + (1i128 << (s - 1));
        i32::try_from(p >> s).map_err(|_| p < 0)
    }

    /// Both kernels against both references on one input; the message
    /// names the first disagreement.
    fn check(
        kernel: fn(&ShortScale, i32, i32) -> Result<i32, i32>,
        d: i32,
        g: i32,
        s: u32,
    ) -> Result<(), String> {
        let c = ShortScale::new(s, 1i64 << (s - 1)).ok_or(format!("shift {s} rejected"))?;
        let got = kernel(&c, d, g);
        let want = reference(d, g, s);
        // Err carries the high word; only its sign is specified.
        let got_cmp = got.map_err(|hi| hi < 0);
        if got_cmp != want || got.ok() != former(d, g, s) {
            return Err(format!(
                "d {d}, g {g}, s {s}: got {got:?}, expected {want:?} (former {:?})",
                former(d, g, s)
            ));
        }
        Ok(())
    }

    fn narrow(c: &ShortScale, d: i32, g: i32) -> Result<i32, i32> {
        c.narrow(d, g)
    }

    fn wide(c: &ShortScale, d: i32, g: i32) -> Result<i32, i32> {
        c.wide(mul_wide_soft(d, g).wrapping_add(1i64 << (c.shift.get() - 1)))
    }

    /// Operands that reach the ends of every bound in [`ShortScale::narrow`]
    /// (as bit patterns): the i32 extremes, low halves of -2^15 and
    /// 2^15 - 1 under high halves of either sign and both ends, and
    /// values around 0 and 2^16.
    const EDGE: [u32; 22] = [
        0,
        1,
        0xFFFF_FFFF,
        2,
        0x7FFF,
        0x8000,
        0xFFFF_8000,
        0xFFFF,
        0x1_0000,
        0xFFFF_0000,
        0x7FFF_8000,
        0x7FFF_7FFF,
        0x8000_8000,
        0x8000_7FFF,
        0x8000_0001,
        0x7FFF_FFFF,
        0x8000_0000,
        0x7FFF_0000,
        0x0001_8000,
        0xFFFE_8000,
        123_456_789,
        0xC521_1D1F,
    ];

    /// Edge operands against each other at every shift, then seeded
    /// random operands (xorshift32, seed printed on failure) at every
    /// shift, mixing full-range words with edge halves.
    fn sweep(kernel: fn(&ShortScale, i32, i32) -> Result<i32, i32>) -> Result<(), String> {
        for s in 1..=31 {
            for &d in &EDGE {
                for &g in &EDGE {
                    check(kernel, d as i32, g as i32, s)?;
                }
            }
        }
        let seed = 0x5EED_1234_u32;
        let mut x = seed;
        let mut next = || {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            x
        };
        for i in 0..200_000u32 {
            let s = 1 + i % 31;
            let (a, b) = (next() as i32, next() as i32);
            let (d, g) = match i % 4 {
                // Low halves of -2^15 (the corner of the rounding bias)
                // under random high halves.
                0 => ((a | 0xFFFF) ^ 0x7FFF, (b | 0xFFFF) ^ 0x7FFF),
                // Smaller operands: results near the i32 limits after
                // the shift, on both sides of the fit test.
                1 => (a >> (i % 17), b >> (i % 13)),
                _ => (a, b),
            };
            check(kernel, d, g, s).map_err(|e| format!("seed {seed:#x}: {e}"))?;
        }
        Ok(())
    }

    #[test]
    fn narrow_matches_former_formula_and_i128() -> Result<(), String> {
        sweep(narrow)
    }

    #[test]
    fn wide_matches_former_formula_and_i128() -> Result<(), String> {
        sweep(wide)
    }

    /// The sweep catches a kernel that adds the rounding to the low
    /// product without the bias: wrong only at s = 31 with both low halves
    /// -2^15 (the reason for the bias), so this checks the edge cases
    /// reach that corner.
    #[test]
    fn sweep_catches_unbiased_rounding() {
        fn unbiased(c: &ShortScale, d: i32, g: i32) -> Result<i32, i32> {
            let (dl, gl) = (i32::from(d as i16), i32::from(g as i16));
            let (dh, gh) = (((d >> 15) + 1) >> 1, ((g >> 15) + 1) >> 1);
            let (ll, hh) = (dl.wrapping_mul(gl), dh.wrapping_mul(gh));
            let km = dl.wrapping_sub(dh).wrapping_mul(gh.wrapping_sub(gl));
            let mid = km.wrapping_add(ll).wrapping_add(hh);
            let low = ll.wrapping_add(1 << (c.shift.get() - 1));
            let (lo, carry) = ((mid as u32) << 16).overflowing_add(low as u32);
            let hi = hh
                .wrapping_add(mid >> 16)
                .wrapping_add(low >> 31)
                .wrapping_add(i32::from(carry));
            c.shift_down(lo, hi)
        }
        let e = sweep(unbiased).err();
        assert!(
            e.as_deref().is_some_and(|e| e.contains("s 31")),
            "the unbiased kernel passed or failed elsewhere: {e:?}"
        );
    }

    /// The sweep catches a kernel whose high halves come from
    /// `(d - dl) >> 16`, which wraps to -2^15 where the high half is
    /// 2^15 (d or g in [2^31 - 2^15, 2^31)).
    #[test]
    fn sweep_catches_wrapping_high_half() {
        fn wrapping(c: &ShortScale, d: i32, g: i32) -> Result<i32, i32> {
            let (dl, gl) = (i32::from(d as i16), i32::from(g as i16));
            let (dh, gh) = (d.wrapping_sub(dl) >> 16, g.wrapping_sub(gl) >> 16);
            let (ll, hh) = (dl.wrapping_mul(gl), dh.wrapping_mul(gh));
            // Same split product as the kernel above: a wrong copy on purpose (high halves only).
            let km = dl.wrapping_sub(dh).wrapping_mul(gh.wrapping_sub(gl));
            let low = ll.wrapping_add(c.round_lo);
            let m = km
                .wrapping_add(hh)
                .wrapping_add(low)
                .wrapping_add(c.round_mid);
            let (lo, carry) = ((m as u32) << 16).overflowing_add(low as u32);
            let hi = hh
                .wrapping_add(m >> 16)
                .wrapping_add(low >> 31)
                .wrapping_add(i32::from(carry));
            c.shift_down(lo, hi)
        }
        let e = sweep(wrapping).err();
        assert!(
            e.as_deref().is_some_and(|e| e.contains("2147450880")),
            "the wrapping kernel passed or failed elsewhere: {e:?}"
        );
    }

    #[test]
    fn shift_amounts_round_trip() {
        for s in 0..=40u32 {
            let want = (1..=31).contains(&s).then_some(s);
            let got = Shift1To31::new(s).map(Shift1To31::get);
            assert_eq!(got, want, "shift {s}");
            let half = 1i64 << s.saturating_sub(1);
            let got = ShortScale::new(s, half).map(|c| c.shift.get());
            assert_eq!(got, want, "ShortScale::new({s})");
        }
    }
}
