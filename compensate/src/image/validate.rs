//! Validation rules of the table image that need no section data:
//! fractional bits and axis geometry.

use super::error::ImageError;
use super::layout::{
    MAX_COEFF_FRAC_BITS, MAX_FRAC_BITS, MAX_SHIFT, NumberFormat, QFormat, RawLimits,
};

/// Uniform f32 axis with finite, strictly increasing nodes.
pub(super) fn f32_axis_ok(start: f32, step: f32, len: usize) -> bool {
    if !(start.is_finite() && step.is_finite() && step > 0.0) {
        return false;
    }
    let mut prev = start;
    for k in 1..len {
        let x = start + step * k as f32;
        if !(x.is_finite() && x > prev) {
            return false;
        }
        prev = x;
    }
    true
}

/// Names of the six fractional-bit counts, in header order (that of
/// [`QFormat::to_bytes`]), for [`ImageError::BadFracBits`].
const FRAC_FIELDS: [&str; 6] = [
    "temperature",
    "signal",
    "output",
    "offset",
    "gain",
    "quadratic",
];

/// Largest fractional-bit count of each field of a Q image, in header
/// order: quantities that scale i32 inputs or outputs get at most 30 bits;
/// the gain and quadratic coefficients are tiny numbers (units per code)
/// and may use up to 62, limited below by the shifts they imply.
const Q_FRAC_MAX: [u8; 6] = [
    MAX_FRAC_BITS,
    MAX_FRAC_BITS,
    MAX_FRAC_BITS,
    MAX_FRAC_BITS,
    MAX_COEFF_FRAC_BITS,
    MAX_COEFF_FRAC_BITS,
];

/// Fractional bits fit the format and keep the integer path overflow-free.
// Shaped for flash on ARMv6-M (where the compensation code must fit in
// 8 KiB): the per-field limits come from one table (f32: all zero) and the
// first bad field's name from another, so the six tests share one error
// path; the rail test compares against i32 limits shifted right instead of
// shifting the rails left in i64, which would link the 64-bit shift
// routine.
pub(super) fn check_frac(
    format: NumberFormat,
    q: QFormat,
    n_ch: usize,
    limits: RawLimits,
) -> Result<(), ImageError> {
    let max = match format {
        NumberFormat::F32 => [0; 6],
        NumberFormat::Q => Q_FRAC_MAX,
    };
    for ((&field, value), max) in FRAC_FIELDS.iter().zip(q.to_bytes()).zip(max) {
        if value > max {
            return Err(ImageError::BadFracBits { field, value });
        }
    }
    if format == NumberFormat::F32 {
        return Ok(());
    }
    // Every count is now at most 62: the u8 sums below cannot wrap.
    // (raw << offset - offset) * gain >> shift lands in Q(output): the
    // shift offset + gain - output must not be negative.
    if q.offset + q.gain < q.output || q.offset + q.gain - q.output > MAX_SHIFT {
        return Err(ImageError::BadFracBits {
            field: "output",
            value: q.output,
        });
    }
    // quadratic * d is Q(quadratic + offset), shifted down to Q(gain).
    if n_ch > 2 && (q.quadratic + q.offset < q.gain || q.quadratic + q.offset - q.gain > MAX_SHIFT)
    {
        return Err(ImageError::BadFracBits {
            field: "quadratic",
            value: q.quadratic,
        });
    }
    if n_ch == 2 && q.quadratic != 0 {
        return Err(ImageError::BadFracBits {
            field: "quadratic",
            value: q.quadratic,
        });
    }
    // Raw codes up to the rails, shifted to Q(offset), must fit in i32:
    // the lower rail not below (its shifted value not below i32::MIN), the
    // upper not above. With `shift` at most 30 (checked above),
    // `x << shift >= i32::MIN` exactly when `x >= i32::MIN >> shift`
    // (`-2^(31 - shift)`, exact), and `x << shift <= i32::MAX` exactly
    // when `x <= i32::MAX >> shift` (rounded down).
    let shift = u32::from(q.offset);
    if limits.rail_lo < i32::MIN >> shift || limits.rail_hi > i32::MAX >> shift {
        return Err(ImageError::BadFracBits {
            field: "offset",
            value: q.offset,
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `check_frac` as it read before it was shaped for flash (the
    /// 64-bit rail shift, one error path per field): the reference the
    /// current one must agree with on every input, error value included.
    fn check_frac_reference(
        format: NumberFormat,
        q: QFormat,
        n_ch: usize,
        limits: RawLimits,
    ) -> Result<(), ImageError> {
        let named = [
            ("temperature", q.temperature, MAX_FRAC_BITS),
            ("signal", q.signal, MAX_FRAC_BITS),
            ("output", q.output, MAX_FRAC_BITS),
            ("offset", q.offset, MAX_FRAC_BITS),
            ("gain", q.gain, MAX_COEFF_FRAC_BITS),
            ("quadratic", q.quadratic, MAX_COEFF_FRAC_BITS),
        ];
        for (field, value, max) in named {
            let bad = match format {
                NumberFormat::F32 => value != 0,
                NumberFormat::Q => value > max,
            };
            if bad {
                return Err(ImageError::BadFracBits { field, value });
            }
        }
        if format == NumberFormat::F32 {
            return Ok(());
        }
        if q.offset + q.gain < q.output || q.offset + q.gain - q.output > MAX_SHIFT {
            return Err(ImageError::BadFracBits {
                field: "output",
                value: q.output,
            });
        }
        if n_ch > 2
            && (q.quadratic + q.offset < q.gain || q.quadratic + q.offset - q.gain > MAX_SHIFT)
        {
            // The rule of `check_frac` above, restated as the test reference it is checked against.
            return Err(ImageError::BadFracBits {
                field: "quadratic",
                value: q.quadratic,
            });
        }
        if n_ch == 2 && q.quadratic != 0 {
            return Err(ImageError::BadFracBits {
                field: "quadratic",
                value: q.quadratic,
            });
        }
        let shift = u32::from(q.offset);
        let lo = i64::from(limits.rail_lo) << shift;
        let hi = i64::from(limits.rail_hi) << shift;
        if lo < i64::from(i32::MIN) || hi > i64::from(i32::MAX) {
            return Err(ImageError::BadFracBits {
                field: "offset",
                value: q.offset,
            });
        }
        Ok(())
    }

    #[test]
    fn f32_axis_table() {
        // 1e6 lies in [2^19, 2^20), where f32 values are 2^(19 - 23) =
        // 0.0625 apart (IEEE 754 binary32: 24-bit significand): a step of
        // 0.0625 gives distinct nodes, a step of 0.01 rounds 1e6 + 0.01
        // back to 1e6 and the nodes collapse.
        // (start, step, len, accepted)
        let cases = [
            (-40.0f32, 5.0f32, 34usize, true),
            (1.0e6, 0.0625, 3, true),
            (1.0e6, 0.01, 2, false),
            (1.0e6, 0.01, 3, false),
            (1.0e6, 0.01, 200, false),
            // One node: nothing to compare, but the step is still checked.
            (1.0, 1.0, 1, true),
            (1.0, 0.0, 1, false),
            (1.0, -1.0, 1, false),
            (f32::NAN, 1.0, 1, false),
            (f32::INFINITY, 1.0, 1, false),
            (1.0, f32::NAN, 1, false),
            (1.0, f32::INFINITY, 1, false),
            // Finite start and step, last node overflows to infinity.
            (3.0e38, 3.0e38, 2, false),
            (0.0, 0.0, 3, false),
        ];
        for (start, step, len, ok) in cases {
            assert_eq!(
                f32_axis_ok(start, step, len),
                ok,
                "f32_axis_ok({start}, {step}, {len})"
            );
        }
    }

    /// Counts around every limit of the rules (0, 30, 62, the shifts).
    const COUNTS: [u8; 12] = [0, 1, 2, 12, 29, 30, 31, 32, 61, 62, 63, 255];

    /// Rail codes around the i32 limits of every shift 0..=30, and some
    /// ordinary ones; `(rail_lo, rail_hi)` pairs in either order, as an
    /// image may hold them (the order is checked later).
    fn rails() -> std::vec::Vec<i32> {
        let mut r = std::vec![0, 1, -1, 100_000, -100_000, i32::MIN, i32::MAX];
        for s in 0..=31u32 {
            let lo = i32::MIN >> s.min(31);
            let hi = i32::MAX >> s.min(31);
            r.extend([lo, lo.wrapping_sub(1), lo.wrapping_add(1)]);
            r.extend([hi, hi.wrapping_sub(1), hi.wrapping_add(1)]);
        }
        r
    }

    #[test]
    fn frac_rules_match_reference() {
        let rails = rails();
        let mut x: u32 = 0x2545_F491;
        let mut cases = 0u32;
        let mut errors = 0u32;
        for format in [NumberFormat::F32, NumberFormat::Q] {
            for n_ch in [2usize, 3] {
                for i in 0..40_000u32 {
                    // xorshift32, seeded: fixed, reproducible cases.
                    x ^= x << 13;
                    x ^= x >> 17;
                    x ^= x << 5;
                    let pick = |k: u32| COUNTS[((x >> (4 * k)) % 12) as usize];
                    let mut b = [pick(0), pick(1), pick(2), pick(3), pick(4), pick(5)];
                    if i % 2 == 0 {
                        // Half the cases have only valid single counts,
                        // so the shift and rail rules are reached.
                        for (v, m) in b.iter_mut().zip(Q_FRAC_MAX) {
                            *v %= m + 1;
                        }
                    }
                    let q = QFormat::from_bytes(b);
                    let r = |k: u32| rails[(x.rotate_left(k) as usize) % rails.len()];
                    let limits = RawLimits {
                        rail_lo: r(7),
                        raw_lo: 0,
                        raw_hi: 0,
                        rail_hi: r(19),
                    };
                    let got = check_frac(format, q, n_ch, limits);
                    let want = check_frac_reference(format, q, n_ch, limits);
                    assert_eq!(
                        got, want,
                        "{format:?} n_ch={n_ch} q={b:?} rails {}..{}: got {got:?}, expected {want:?}",
                        limits.rail_lo, limits.rail_hi
                    );
                    cases += 1;
                    errors += u32::from(got.is_err());
                }
            }
        }
        // The sweep reaches both outcomes (a sweep that only ever saw
        // errors, or none, would compare little).
        assert!(errors > cases / 10 && errors < cases, "{errors} of {cases}");
    }

    #[test]
    fn rail_rule_matches_reference_at_every_shift() {
        for offset in 0..=MAX_FRAC_BITS {
            // gain = output keeps the shift rule satisfied.
            let q = QFormat {
                offset,
                gain: 20,
                output: 20,
                ..QFormat::F32
            };
            for &rail_lo in &rails() {
                for &rail_hi in &rails() {
                    let limits = RawLimits {
                        rail_lo,
                        raw_lo: 0,
                        raw_hi: 0,
                        rail_hi,
                    };
                    let got = check_frac(NumberFormat::Q, q, 2, limits);
                    let want = check_frac_reference(NumberFormat::Q, q, 2, limits);
                    assert_eq!(got, want, "offset {offset}, rails {rail_lo}..{rail_hi}");
                }
            }
        }
    }

    #[test]
    fn reference_comparison_can_fail() {
        // One code decides at the rail limit: the reference accepts the
        // limit and rejects one above it, so a rule off by one code (or one
        // whose 32-bit shift wrapped) would disagree and be seen above.
        let q = QFormat {
            offset: 8,
            gain: 20,
            output: 20,
            ..QFormat::F32
        };
        let limits = |rail_hi| RawLimits {
            rail_lo: -1,
            raw_lo: 0,
            raw_hi: 0,
            rail_hi,
        };
        let at = check_frac_reference(NumberFormat::Q, q, 2, limits(i32::MAX >> 8));
        let above = check_frac_reference(NumberFormat::Q, q, 2, limits((i32::MAX >> 8) + 1));
        assert_eq!(at, Ok(()), "at the limit");
        assert_eq!(
            above,
            Err(ImageError::BadFracBits {
                field: "offset",
                value: 8
            }),
            "one above the limit"
        );
    }
}
