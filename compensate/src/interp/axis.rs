//! Uniform axes: where a point falls between nodes, with clamping.

use crate::widemul::mul_hi_u32_halves;

/// A uniform f32 axis: nodes at `start + k * step`, `k = 0..len`.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Axis {
    /// First node abscissa.
    pub start: f32,
    /// Node spacing, `> 0`.
    pub step: f32,
    /// Number of nodes, `>= 2` for interpolation.
    pub len: usize,
}

/// Where a point lies on an f32 axis.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Position {
    /// Left node; `frac == 0` means exactly on this node.
    pub index: usize,
    /// Fraction of the way to node `index + 1`, in `[0, 1)`.
    pub frac: f32,
    /// The point was outside the axis and was clamped to its nearest end.
    pub clamped: bool,
}

impl Axis {
    /// Abscissa of the last node.
    #[inline]
    #[must_use]
    pub fn end(&self) -> f32 {
        self.start + self.step * self.len.saturating_sub(1) as f32
    }

    /// Locates `x` on the axis, clamping outside it; NaN maps to node 0 with
    /// `clamped` set.
    ///
    /// A node is hit exactly (`frac == 0`) whenever `x - start` and the
    /// quotient by `step` are exact in f32, e.g. on any grid of dyadic
    /// rationals (integers, halves, quarters...).
    #[inline]
    #[must_use]
    // `!(pos > 0.0)` is deliberate: it is true for NaN as well.
    #[allow(clippy::neg_cmp_op_on_partial_ord)]
    pub fn locate(&self, x: f32) -> Position {
        self.locate_from_last(x, self.len.saturating_sub(1))
    }

    /// [`Self::locate`] on an axis known to have at least one node (a
    /// validated image's axes have two or more): `len - 1` needs no
    /// saturation, which saves the compensators a compare and a select per
    /// look-up. With `len == 0` the result is meaningless but every node
    /// read after it stays bounds-checked.
    #[inline]
    #[must_use]
    pub(crate) fn locate_nonempty(&self, x: f32) -> Position {
        self.locate_from_last(x, self.len.wrapping_sub(1))
    }

    #[inline(always)]
    #[allow(clippy::neg_cmp_op_on_partial_ord)]
    fn locate_from_last(&self, x: f32, last: usize) -> Position {
        let pos = (x - self.start) / self.step;
        // `!(pos > 0)` also catches NaN.
        if !(pos > 0.0) {
            return Position {
                index: 0,
                frac: 0.0,
                clamped: pos != 0.0,
            };
        }
        let last_f = last as f32;
        if pos >= last_f {
            return Position {
                index: last,
                frac: 0.0,
                clamped: pos > last_f,
            };
        }
        // 0 < pos < last, so the truncating cast is a floor and in range;
        // `pos - index` is exact (Sterbenz for pos >= 1, trivially below).
        let index = pos as usize;
        Position {
            index,
            frac: pos - index as f32,
            clamped: false,
        }
    }
}

/// A uniform Q-format axis: nodes at `start + k * step` (i32, any fixed
/// binary point shared with the input), `k = 0..len`.
///
/// Construct with [`AxisQ::new`], which precomputes the reciprocal of the
/// step so that locating a point costs two 32x32->64 multiplications and
/// no division.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AxisQ {
    /// First node and reciprocal step: what locating a point inside the
    /// axis takes.
    inside: InsideQ,
    step: u32,
    len: usize,
    /// `(len - 1) * step`, below 2^32 because the last node fits in i32.
    span: u32,
}

/// The part of an [`AxisQ`] that locates a point inside the axis (from
/// the first node up to, not including, the last): the first node and the
/// reciprocal of the step. [`AxisQ::locate`] runs [`InsideQ::locate`]
/// after its clamping tests; a caller that has already tested the range
/// (the integer compensator's short temperature update) keeps a copy of
/// this part alone and runs the same arithmetic.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct InsideQ {
    start: i32,
    /// `inv = ceil(2^48 / step)` split as `inv_hi 2^32 + inv_mid 2^16 +
    /// inv_low` (`inv_hi <= 2^16`; the other two 16-bit halves, stored
    /// apart so that ARMv6-M code forms the high word of `u inv_lo` from
    /// 16x16 products instead of a 64-bit library multiply).
    inv_hi: u32,
    inv_mid: u32,
    inv_low: u32,
}

/// `ceil(2^48 / step)` for `step` in `1..2^31`, by restoring binary long
/// division (one quotient bit per step, 49 steps): the remainder stays
/// below `step < 2^31`, so doubling it fits in a u32 and no 64-bit division
/// (about 1 KiB of library code on ARMv6-M) is linked. Runs once per axis
/// at parse time, never per sample.
const fn ceil_2pow48_div(step: u32) -> u64 {
    let mut q: u64 = 0;
    let mut r: u32 = 0;
    let mut i = 0;
    while i < 49 {
        // The dividend 2^48 has a single one bit, the first one brought down.
        let bit;
        (r, bit) = reduce((r << 1) | (i == 0) as u32, step);
        q = (q << 1) | bit;
        i += 1;
    }
    // q <= 2^48, so the rounding increment cannot overflow.
    if r != 0 { q.wrapping_add(1) } else { q }
}

/// One step of [`ceil_2pow48_div`]: `(r - step, 1)` when `r >= step`,
/// else `(r, 0)`.
// Out of line for flash: the compiler's cost model leaves a loop that calls a
// function rolled, and the 49-step loop around this, unrolled seven-fold,
// took about 300 bytes of ARMv6-M flash (rolled: a few dozen). It runs 49
// times per axis when an image is opened, never per sample.
#[inline(never)]
const fn reduce(r: u32, step: u32) -> (u32, u64) {
    if r >= step {
        (r.wrapping_sub(step), 1)
    } else {
        (r, 0)
    }
}

/// Exact `n * step` for `n < 2^16` and `step < 2^31`, from the step's
/// 16-bit halves: two 32-bit products (below 2^31 and 2^32) that cannot
/// wrap. For targets without a widening multiply (ARMv6-M), where an i64
/// product would link the 64-bit library multiply.
#[cfg_attr(not(narrow_mul), allow(dead_code))]
const fn mul_u16_u31(n: u32, step: u32) -> i64 {
    (((n * (step >> 16)) as i64) << 16) + (n * (step & 0xFFFF)) as i64
}

/// Where a point lies on a Q-format axis.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PositionQ {
    /// Left node; `frac_q16 == 0` means exactly on this node.
    pub index: usize,
    /// Fraction of the way to node `index + 1`, in Q0.16 (`0..65536`),
    /// within 1 LSB of the exact fraction (exact when that is a whole LSB).
    pub frac_q16: u32,
    /// The point was outside the axis and was clamped to its nearest end.
    pub clamped: bool,
}

impl AxisQ {
    /// A Q axis; `None` when `step <= 0`, `len < 2`, or the last node
    /// `start + (len - 1) * step` does not fit in i32.
    // Out of line: an image parser builds up to three axes, and each
    // inlined copy of the reciprocal's long division cost about 300 bytes
    // of ARMv6-M flash. Construction runs once per axis, never per sample.
    #[inline(never)]
    #[must_use]
    pub const fn new(start: i32, step: i32, len: usize) -> Option<Self> {
        let Some(span) = Self::span(start, step, len) else {
            return None;
        };
        let step = step as u32;
        let inv = ceil_2pow48_div(step);
        Some(Self {
            inside: InsideQ {
                start,
                inv_hi: (inv >> 32) as u32,
                inv_mid: ((inv >> 16) & 0xFFFF) as u32,
                inv_low: (inv & 0xFFFF) as u32,
            },
            step,
            len,
            span,
        })
    }

    /// `(len - 1) * step` when [`Self::new`] accepts the geometry, else
    /// `None`: the validity test alone, without the reciprocal, for the
    /// image parser, which only checks the axes.
    #[inline]
    pub(crate) const fn span(start: i32, step: i32, len: usize) -> Option<u32> {
        if step <= 0 || len < 2 || len > u16::MAX as usize {
            return None;
        }
        // (len - 1) * step < 2^16 * 2^31 fits in i64.
        let n = (len - 1) as u32;
        #[cfg(narrow_mul)]
        let product = mul_u16_u31(n, step as u32);
        #[cfg(not(narrow_mul))]
        let product = n as i64 * step as i64;
        let end = start as i64 + product;
        if end > i32::MAX as i64 {
            return None;
        }
        Some((end - start as i64) as u32)
    }

    /// First node abscissa.
    #[must_use]
    pub const fn start(&self) -> i32 {
        self.inside.start
    }

    /// Abscissa of the last node.
    #[must_use]
    pub(crate) const fn end(&self) -> i32 {
        // The last node fits in i32 (see `new`), so the wrapping u32 sum
        // of the first node and the span is exact.
        (self.inside.start as u32).wrapping_add(self.span) as i32
    }

    /// What locating a point inside the axis takes (see [`InsideQ`]).
    #[must_use]
    pub(crate) const fn inside(&self) -> InsideQ {
        self.inside
    }

    /// Node spacing.
    #[must_use]
    pub const fn step(&self) -> i32 {
        // Constructed from a positive i32.
        self.step as i32
    }

    /// Number of nodes.
    #[must_use]
    pub const fn len(&self) -> usize {
        self.len
    }

    /// Always `false`: a Q axis has at least two nodes.
    #[must_use]
    pub const fn is_empty(&self) -> bool {
        false
    }

    /// Locates `x` on the axis, clamping outside it. Nodes are hit exactly.
    #[inline]
    #[must_use]
    pub fn locate(&self, x: i32) -> PositionQ {
        // Integer arithmetic here is bounded by construction (see `new`);
        // wrapping operations state that no overflow is possible.
        let last = self.len.wrapping_sub(1);
        let start = self.inside.start;
        if x <= start {
            return PositionQ {
                index: 0,
                frac_q16: 0,
                clamped: x < start,
            };
        }
        // x > start, so the exact difference is in 1..2^32 and the wrapping
        // u32 difference equals it.
        let u = (x as u32).wrapping_sub(start as u32);
        if u >= self.span {
            return PositionQ {
                index: last,
                frac_q16: 0,
                clamped: u > self.span,
            };
        }
        let (index, frac_q16) = self.inside.locate(x);
        if index >= last {
            // Only within one LSB of the last node.
            return PositionQ {
                index: last,
                frac_q16: 0,
                clamped: false,
            };
        }
        PositionQ {
            index,
            frac_q16,
            clamped: false,
        }
    }
}

impl InsideQ {
    /// A placeholder: first node 0, step 1 (for a short update that never
    /// runs).
    pub(crate) const UNIT_STEP: Self = Self {
        start: 0,
        inv_hi: 1 << 16,
        inv_mid: 0,
        inv_low: 0,
    };

    /// Node index and Q0.16 fraction of `x`, for `x` from the first node
    /// up to, not including, the last; the index may then equal the last
    /// node's (within one LSB of it, with any fraction), which
    /// [`AxisQ::locate`] maps to the last node. At the first node both are
    /// 0, as [`AxisQ::locate`] gives there.
    #[inline(always)]
    #[must_use]
    pub(crate) fn locate(&self, x: i32) -> (usize, u32) {
        // start <= x < end, so the exact difference is in 0..span and the
        // wrapping u32 difference equals it.
        let u = (x as u32).wrapping_sub(self.start as u32);
        // Division-free: with inv = ceil(2^48 / step) = inv_hi 2^32 + inv_lo
        // (inv_hi <= 2^16), t = floor(u inv / 2^32) = u inv_hi +
        // floor(u inv_lo / 2^32) is the position in Q.16. The rounded-up
        // reciprocal overshoots by u (inv - 2^48/step) / 2^32 < 1 LSB, and
        // not at all in whole LSBs at a node (u = k step makes the
        // overshoot k step (inv - 2^48/step) < 2^32, i.e. below one LSB,
        // and the exact value an integer): |t - exact| < 1 LSB, nodes
        // exact. Since u < (len - 1) step, t < (len - 1) 2^16 + 1 <=
        // 2^32 - 2^17 + 1: t and both terms fit in u32, so 32-bit wrapping
        // arithmetic computes them exactly (one 32-bit multiply and one
        // high word of a 32x32 product, instead of two 64-bit products on
        // ARMv6-M). u = 0 gives t = 0.
        let t = u.wrapping_mul(self.inv_hi).wrapping_add(mul_hi_u32_halves(
            u,
            self.inv_mid,
            self.inv_low,
        ));
        ((t >> 16) as usize, t & 0xFFFF)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_division_matches_div_ceil() {
        // Independent reference: u64::div_ceil. Edge steps, every step below
        // 2^12, powers of two and their neighbours, and a seeded sweep.
        let mut steps: Vec<u32> = (1..4096).collect();
        for k in 0..31 {
            let p = 1u32 << k;
            steps.extend([p.saturating_sub(1).max(1), p, p + 1]);
        }
        steps.extend([
            i32::MAX as u32,
            i32::MAX as u32 - 1,
            3 << 29,
            65_535 * 32_767,
        ]);
        let mut x: u64 = 0x9E37_79B9_7F4A_7C15;
        for _ in 0..20_000 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            steps.push(((x >> 33) as u32).max(1));
        }
        for step in steps {
            let got = ceil_2pow48_div(step);
            let want = (1u64 << 48).div_ceil(u64::from(step));
            assert_eq!(got, want, "step={step}: got {got}, expected {want}");
        }
    }

    #[test]
    fn split_product_is_exact() {
        let ns = [0u32, 1, 2, 0xFF, 0x100, 0x7FFF, 0xFFFE, 0xFFFF];
        let steps = [
            1u32,
            0xFFFF,
            0x1_0000,
            0x1_0001,
            0x7FFF_FFFF,
            0x7FFF_0000,
            0x4000_0000,
            0x1234_5678,
        ];
        for n in ns {
            for step in steps {
                let got = mul_u16_u31(n, step);
                let want = i64::from(n) * i64::from(step);
                assert_eq!(got, want, "{n} * {step}: got {got}, expected {want}");
            }
        }
        // The comparison sees a dropped high half.
        assert_ne!(
            mul_u16_u31(0xFFFF, 0x7FFF_FFFF) & 0xFFFF_FFFF,
            mul_u16_u31(0xFFFF, 0x7FFF_FFFF)
        );
    }

    #[test]
    fn long_division_check_can_fail() {
        // The comparison above would see an off-by-one quotient.
        assert_ne!(ceil_2pow48_div(3), (1u64 << 48) / 3);
    }

    #[test]
    fn f32_locate_table() {
        let axis = Axis {
            start: -40.0,
            step: 5.0,
            len: 34,
        };
        // (x, index, frac, clamped)
        let cases = [
            (-40.0, 0, 0.0, false),
            (-50.0, 0, 0.0, true),
            (-37.5, 0, 0.5, false),
            (25.0, 13, 0.0, false),
            (125.0, 33, 0.0, false),
            (126.0, 33, 0.0, true),
            (f32::NAN, 0, 0.0, true),
            (f32::INFINITY, 33, 0.0, true),
        ];
        for (x, index, frac, clamped) in cases {
            let got = axis.locate(x);
            let want = Position {
                index,
                frac,
                clamped,
            };
            assert_eq!(got, want, "locate({x}): got {got:?}, expected {want:?}");
        }
    }

    #[test]
    fn q_locate_table() -> Result<(), &'static str> {
        // Q16.16 degrees: -40 C start, 5 C step.
        let one = 1 << 16;
        let axis = AxisQ::new(-40 * one, 5 * one, 34).ok_or("valid geometry")?;
        let cases = [
            (-40 * one, 0, 0, false),
            (-41 * one, 0, 0, true),
            (-40 * one + 5 * one / 2, 0, 32768, false),
            (25 * one, 13, 0, false),
            (125 * one, 33, 0, false),
            (i32::MAX, 33, 0, true),
            (i32::MIN, 0, 0, true),
        ];
        // Same shape as the f32 cases above: the Q axis must locate the same points.
        for (x, index, frac_q16, clamped) in cases {
            let got = axis.locate(x);
            let want = PositionQ {
                index,
                frac_q16,
                clamped,
            };
            assert_eq!(got, want, "locate({x}): got {got:?}, expected {want:?}");
        }
        Ok(())
    }

    #[test]
    fn f32_end_is_the_last_node() {
        // (start, step, len, end = start + (len - 1) step): every value is
        // a small dyadic rational, so the f32 arithmetic is exact and the
        // comparison bit for bit. One node or none: the first node.
        let cases = [
            (-40.0f32, 5.0f32, 34usize, 125.0f32),
            (2.5, 0.25, 2, 2.75),
            (-8.0, 3.0, 3, -2.0),
            (7.0, 3.0, 1, 7.0),
            (7.0, 3.0, 0, 7.0),
        ];
        for (start, step, len, end) in cases {
            let got = Axis { start, step, len }.end();
            assert_eq!(
                got.to_bits(),
                end.to_bits(),
                "Axis {{ {start}, {step}, {len} }}.end(): got {got}, expected {end}"
            );
        }
    }

    #[test]
    fn q_end_is_the_last_node() -> Result<(), &'static str> {
        // (start, step, len, end = start + (len - 1) step), exact integers,
        // including an axis wholly below zero and one ending at i32::MAX.
        let cases = [
            (-40 << 16, 5 << 16, 34usize, 125 << 16),
            (-1000, 7, 3, -986),
            (i32::MIN, 1 << 30, 3, 0),
            (i32::MAX - 3, 1, 4, i32::MAX),
        ];
        for (start, step, len, end) in cases {
            let got = AxisQ::new(start, step, len).ok_or("valid geometry")?.end();
            assert_eq!(got, end, "AxisQ::new({start}, {step}, {len}).end()");
        }
        Ok(())
    }

    #[test]
    fn q_axis_takes_at_most_65_535_nodes() -> Result<(), &'static str> {
        // The node count is capped at u16::MAX (the header stores counts
        // in 16 bits, and the Q0.16 position bound of `InsideQ::locate`
        // assumes len - 1 < 2^16): 65 535 nodes are accepted and located
        // to the last interval, 65 536 are refused whatever the step.
        let axis = AxisQ::new(0, 4, 65_535).ok_or("65 535 nodes are valid")?;
        assert_eq!(axis.len(), 65_535);
        assert!(!axis.is_empty(), "a Q axis always has nodes");
        assert_eq!(axis.end(), 4 * 65_534);
        let cases = [
            // (x, index, frac_q16, clamped)
            (4 * 65_533 + 2, 65_533, 32_768, false),
            (4 * 65_534 - 1, 65_533, 49_152, false),
            (4 * 65_534, 65_534, 0, false),
            (4 * 65_534 + 1, 65_534, 0, true),
        ];
        for (x, index, frac_q16, clamped) in cases {
            let got = axis.locate(x);
            let want = PositionQ {
                index,
                frac_q16,
                clamped,
            };
            assert_eq!(got, want, "locate({x}): got {got:?}, expected {want:?}");
        }
        assert!(AxisQ::new(0, 4, 65_536).is_none());
        assert!(AxisQ::new(0, 1, 65_536).is_none());
        assert!(AxisQ::span(0, 1, 65_536).is_none());
        assert_eq!(AxisQ::span(0, 1, 65_535), Some(65_534));
        Ok(())
    }

    #[test]
    fn q_axis_rejects_bad_geometry() {
        assert!(AxisQ::new(0, 0, 4).is_none());
        assert!(AxisQ::new(0, -1, 4).is_none());
        assert!(AxisQ::new(0, 1, 1).is_none());
        assert!(AxisQ::new(i32::MAX - 2, 1, 4).is_none());
        assert!(AxisQ::new(i32::MAX - 3, 1, 4).is_some());
    }

    #[test]
    fn q_fraction_error_within_documented_bound() -> Result<(), &'static str> {
        // Awkward steps (primes, one above 2^16 and one near 2^31/8) to
        // exercise the truncated reciprocal; bound from `PositionQ::frac_q16`.
        for step in [1i32, 3, 65_536, 7919, 327_673, 268_435_399] {
            let axis = AxisQ::new(-1000, step, 8).ok_or("valid geometry")?;
            for k in 0..20_000i64 {
                let u = (k * i64::from(step) * 7 / 20_000) as i32;
                let p = axis.locate(-1000 + u);
                // Compare whole positions in Q.16 (index and fraction), so
                // that a fraction rounding up into the next node counts as
                // the sub-LSB error it is.
                let exact = f64::from(u) / f64::from(step) * 65536.0;
                let got = p.index as f64 * 65536.0 + f64::from(p.frac_q16);
                let err = exact - got;
                assert!(
                    err.abs() < 1.0,
                    "step={step} u={u}: got {got} exact {exact}"
                );
                if u % step == 0 {
                    assert_eq!(p.frac_q16, 0, "node not exact: step={step} u={u}");
                }
            }
        }
        Ok(())
    }
}
