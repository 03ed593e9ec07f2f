//! Return codes of the entry points and the per-sample status flags.

use compensate::{CompensatorError, ImageError};
use core::ffi::c_char;

/// Return code of the entry points: `SD_OK` (0) on success, a negative
/// `SD_ERR_*` code otherwise (updates and samples return the same codes
/// in an `sd_result`). On an error nothing is written through the output
/// pointers, except that a failed `sd_*_init` marks the state block as not
/// initialised.
pub type SdStatus = i32;

/// Result of a temperature update, and the lower half of a sample: 0 or
/// more is the call's `SD_FLAG_*` bits (success), a negative value is an
/// `SD_ERR_*` code (`sd_result_status` and `sd_result_flags` split the two).
pub type SdResult = i32;

/// One compensated integer sample, returned in registers (r0, r1 on
/// Cortex-M): bits 0-31 the measurand times 2^`frac_output` as an int32
/// (`sd_sample_q_value`), bits 32-63 an `sd_result` (`sd_sample_result`).
/// The value is 0 when the result is an error code.
pub type SdSampleQ = u64;

/// One compensated f32 sample, returned in registers (r0, r1 on
/// Cortex-M): bits 0-31 the measurand in the image's unit as an IEEE 754
/// single (`sd_sample_f32_value`), bits 32-63 an `sd_result`
/// (`sd_sample_result`). The value is 0 when the result is an error
/// code or the input was NaN.
pub type SdSampleF32 = u64;

/// Success.
pub const SD_OK: SdStatus = 0;
/// A pointer argument that must not be NULL was NULL.
pub const SD_ERR_NULL_POINTER: SdStatus = -1;
/// The image buffer is shorter than the image header, or than the length
/// the header declares.
pub const SD_ERR_SHORT_BUFFER: SdStatus = -2;
/// The state block's address is not a multiple of `SD_STATE_ALIGN`.
pub const SD_ERR_MISALIGNED_STATE: SdStatus = -3;
/// The state block is smaller than `SD_F32_STATE_BYTES` / `SD_Q_STATE_BYTES`.
pub const SD_ERR_STATE_TOO_SMALL: SdStatus = -4;
/// The image's CRC-32 does not match its contents: damaged in storage or
/// in transfer.
pub const SD_ERR_CORRUPT_IMAGE: SdStatus = -5;
/// The bytes are not a valid table image (wrong magic or layout version,
/// bad count, axis, limit or number, reserved bits set, bytes beyond the
/// declared length).
pub const SD_ERR_INVALID_IMAGE: SdStatus = -6;
/// A valid image in the other number format (an f32 image given to a Q
/// state or the reverse).
pub const SD_ERR_WRONG_FORMAT: SdStatus = -7;
/// A valid image that asks for an interpolation this library was built
/// without (monotone cubic without the `cubic` feature).
pub const SD_ERR_UNSUPPORTED: SdStatus = -8;
/// Calls in the wrong order: the state block was never initialised by the
/// matching `sd_*_init`, or its last initialisation failed.
pub const SD_ERR_NOT_INITIALISED: SdStatus = -9;
/// A length is beyond the address space (above `PTRDIFF_MAX`).
pub const SD_ERR_LENGTH_RANGE: SdStatus = -10;

/// Status flag (bit of `flags` in a reading or a temperature update; 0
/// means within the calibrated domain, flags accumulate): the temperature
/// (or temperature signal) was outside the table axis and was clamped to
/// its nearest end.
pub const SD_FLAG_TEMPERATURE_CLAMPED: u8 = 1 << 0;
/// The raw input was outside the calibrated input range and was clamped
/// (the value is extrapolated).
pub const SD_FLAG_INPUT_OUT_OF_RANGE: u8 = 1 << 1;
/// The raw input sat at a rail code, or the temperature signal was outside
/// its plausible range: open or shorted sensor. Not a reading.
pub const SD_FLAG_SENSOR_FAULT: u8 = 1 << 2;
/// The state has no valid table. Not a reading (value 0).
pub const SD_FLAG_TABLE_INVALID: u8 = 1 << 3;
/// An input was NaN or infinite. Not a reading (value 0).
pub const SD_FLAG_NAN_INPUT: u8 = 1 << 4;
/// The fixed-point result saturated at the int32 range.
pub const SD_FLAG_SATURATED: u8 = 1 << 5;
/// No valid temperature update since the state was initialised: the
/// coefficients are those of the first temperature node. Not a reading.
pub const SD_FLAG_NO_TEMPERATURE: u8 = 1 << 6;

/// A sample word: `value_bits` below, `result` above.
#[inline(always)]
pub(crate) fn sample(value_bits: u32, result: SdResult) -> u64 {
    (u64::from(result.cast_unsigned()) << 32) | u64::from(value_bits)
}

/// The status code of an image that failed to parse.
pub(crate) fn image_status(e: ImageError) -> SdStatus {
    match e {
        ImageError::Truncated { .. } => SD_ERR_SHORT_BUFFER,
        ImageError::CrcMismatch { .. } => SD_ERR_CORRUPT_IMAGE,
        ImageError::FormatNotAccepted { .. } => SD_ERR_WRONG_FORMAT,
        ImageError::InterpolationNotCompiled(_) => SD_ERR_UNSUPPORTED,
        _ => SD_ERR_INVALID_IMAGE,
    }
}

/// The status code of an image that does not fit the compensator.
pub(crate) fn compensator_status(e: CompensatorError) -> SdStatus {
    match e {
        CompensatorError::WrongFormat { .. } => SD_ERR_WRONG_FORMAT,
        _ => SD_ERR_INVALID_IMAGE,
    }
}

/// A short English name of a return code, as a NUL-terminated string in
/// static storage (never NULL; unknown codes give "unknown status").
#[unsafe(no_mangle)]
pub extern "C" fn sd_status_name(status: SdStatus) -> *const c_char {
    let name = match status {
        SD_OK => c"ok",
        SD_ERR_NULL_POINTER => c"null pointer",
        SD_ERR_SHORT_BUFFER => c"image buffer too short",
        SD_ERR_MISALIGNED_STATE => c"state block misaligned",
        SD_ERR_STATE_TOO_SMALL => c"state block too small",
        SD_ERR_CORRUPT_IMAGE => c"image CRC mismatch",
        SD_ERR_INVALID_IMAGE => c"not a valid table image",
        SD_ERR_WRONG_FORMAT => c"image in the other number format",
        SD_ERR_UNSUPPORTED => c"interpolation not built in",
        SD_ERR_NOT_INITIALISED => c"state not initialised",
        SD_ERR_LENGTH_RANGE => c"length beyond the address space",
        _ => c"unknown status",
    };
    name.as_ptr()
}

#[cfg(test)]
mod tests {
    use super::*;
    use compensate::interp::Interpolation;

    /// The mapping of the errors the host tests cannot provoke through the
    /// entry points (the workspace builds `compensate` with `cubic`).
    #[test]
    fn errors_map_to_their_codes() {
        let cases = [
            (
                ImageError::InterpolationNotCompiled(Interpolation::MonotoneCubic),
                SD_ERR_UNSUPPORTED,
            ),
            (
                ImageError::Truncated { needed: 80, got: 3 },
                SD_ERR_SHORT_BUFFER,
            ),
            (
                ImageError::CrcMismatch {
                    stored: 1,
                    computed: 2,
                },
                SD_ERR_CORRUPT_IMAGE,
            ),
            (ImageError::BadMagic, SD_ERR_INVALID_IMAGE),
        ];
        for (e, want) in cases {
            assert_eq!(image_status(e), want, "{e:?}");
        }
    }
}
