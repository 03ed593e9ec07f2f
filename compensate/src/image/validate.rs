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

/// Fractional bits fit the format and keep the integer path overflow-free.
pub(super) fn check_frac(
    format: NumberFormat,
    q: QFormat,
    n_ch: usize,
    limits: RawLimits,
) -> Result<(), ImageError> {
    // Quantities that scale i32 inputs or outputs get at most 30 bits; the
    // gain and quadratic coefficients are tiny numbers (units per code) and
    // may use up to 62, limited below by the shifts they imply.
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
    // Raw codes up to the rails, shifted to Q(offset), must fit in i32.
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
