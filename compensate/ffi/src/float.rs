//! The f32 compensator (parts with an FPU) through the C ABI.

use compensate::{Compensator, TableView};

use crate::state::{Key, SdF32State, image_bytes, init, slot, slot_mut};
use crate::status::{
    SD_ERR_NULL_POINTER, SD_OK, SdResult, SdSampleF32, SdStatus, image_status, sample,
};

/// Checks an f32 table image and makes an f32 compensator from it in the
/// caller's state block.
///
/// `state` must be aligned to `SD_STATE_ALIGN` and `state_bytes` at least
/// `SD_F32_STATE_BYTES` (pass `sizeof(sd_f32_state)`). The image
/// (`image_len` bytes at `image`, exactly the image's declared length)
/// must stay in place and unchanged while the state is used.
///
/// Until the first temperature update, samples carry
/// `SD_FLAG_NO_TEMPERATURE`.
///
/// Returns `SD_OK`, or `SD_ERR_NULL_POINTER`, `SD_ERR_MISALIGNED_STATE`,
/// `SD_ERR_STATE_TOO_SMALL`, `SD_ERR_LENGTH_RANGE`, `SD_ERR_SHORT_BUFFER`,
/// `SD_ERR_CORRUPT_IMAGE`, `SD_ERR_INVALID_IMAGE`, `SD_ERR_WRONG_FORMAT`
/// (a Q image), `SD_ERR_UNSUPPORTED`. On any error after the state checks
/// the block reads as not initialised.
///
/// # Safety
/// `state` (if non-null and aligned) must point to `state_bytes` writable
/// bytes; `image` (if non-null) to `image_len` readable bytes that outlive
/// every use of the state.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_f32_init(
    state: *mut SdF32State,
    state_bytes: usize,
    image: *const u8,
    image_len: usize,
) -> SdStatus {
    // SAFETY: the caller's contract above covers both blocks.
    unsafe {
        init(
            state,
            state_bytes,
            Key::F32,
            || TableView::parse(image_bytes(image, image_len)?).map_err(image_status),
            Compensator::new,
        )
    }
}

/// Takes a new temperature signal and caches the coefficients at it.
/// The f32 twin of `sd_q_update_temperature` (the C API has one entry
/// point per number format), with the signal as a float.
///
/// `signal` is in the image's temperature-signal unit: degrees Celsius,
/// ohm, or ADC code (the demo images: the bridge's resistance as a 24-bit
/// ADC code). A signal outside the image's plausible range flags
/// `SD_FLAG_SENSOR_FAULT`; outside the table axis, it is clamped and flags
/// `SD_FLAG_TEMPERATURE_CLAMPED`; NaN or infinite keeps the previous
/// coefficients and flags `SD_FLAG_NAN_INPUT` until a valid update.
///
/// Returns the update's `SD_FLAG_*` bits (0 or more), or a negative
/// code: `SD_ERR_NULL_POINTER`, `SD_ERR_MISALIGNED_STATE` or
/// `SD_ERR_NOT_INITIALISED`.
///
/// # Safety
/// `state` (if non-null) must point to an `sd_f32_state` used by no one
/// else during the call.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_f32_update_temperature(
    state: *mut SdF32State,
    signal: f32,
) -> SdResult {
    // Same shape as sd_q_* in fixed.rs: the C header has one entry point per format.
    // SAFETY: the caller's contract above.
    match unsafe { slot_mut::<_, Compensator<'static>>(state, Key::F32) } {
        Ok(c) => {
            if c.update_temperature_short(signal) {
                0 // the short update's status is OK: no flags
            } else {
                update_general(c, signal)
            }
        }
        Err(e) => e.status(),
    }
}

/// Compensates one raw sample (ADC code as a float, on the scale of the
/// image's offset channel) at the cached temperature.
///
/// Returns the reading in registers (`sd_sample_f32`, a 64-bit word): the
/// measurand in the image's unit (`sd_sample_f32_value`) and an
/// `sd_result` (`sd_sample_result`): the sample's `SD_FLAG_*` bits (rail
/// codes flag `SD_FLAG_SENSOR_FAULT`, codes outside the calibrated range
/// `SD_FLAG_INPUT_OUT_OF_RANGE`), or a negative code:
/// `SD_ERR_NULL_POINTER`, `SD_ERR_MISALIGNED_STATE` or
/// `SD_ERR_NOT_INITIALISED`, with value 0.
///
/// # Safety
/// `state` (if non-null) must point to an `sd_f32_state` not written
/// during the call.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_f32_compensate(state: *const SdF32State, raw: f32) -> SdSampleF32 {
    // SAFETY: the caller's contract above.
    match unsafe { slot::<_, Compensator<'static>>(state, Key::F32) } {
        Ok(c) => match c.compensate_sample_short(raw) {
            Some(r) => sample(r.value.to_bits(), SdResult::from(r.status.bits())),
            None => {
                // A call, not a tail call: only this path needs a stack
                // frame, so the short path goes without one.
                let r = c.compensate_general(raw);
                sample(r.value.to_bits(), SdResult::from(r.status.bits()))
            }
        },
        Err(e) => e.sample(),
    }
}

/// An update off the short path (outside the plausible range or the
/// table, NaN, an image the short path does not serve), out of line so
/// that the entry point reaches it by a tail call and its short path needs
/// no stack frame.
#[inline(never)]
fn update_general(c: &mut Compensator<'static>, signal: f32) -> SdResult {
    SdResult::from(c.update_general(signal).bits())
}

/// Temperature of the cached coefficients in degrees Celsius (through the
/// image's thermometer column, clamped to the table's ends on an image over
/// the signal axis); costs one table look-up, so call it when the
/// temperature is wanted, not per sample.
///
/// Returns `SD_OK`, `SD_ERR_NULL_POINTER` (state or `t_c`),
/// `SD_ERR_MISALIGNED_STATE` or `SD_ERR_NOT_INITIALISED`.
///
/// # Safety
/// As `sd_f32_compensate`; `t_c` (if non-null) must point to a writable
/// float.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_f32_temperature_c(state: *const SdF32State, t_c: *mut f32) -> SdStatus {
    if t_c.is_null() {
        return SD_ERR_NULL_POINTER;
    }
    // SAFETY: the caller's contract above.
    match unsafe { slot::<_, Compensator<'static>>(state, Key::F32) } {
        Ok(c) => {
            // SAFETY: non-null and writable by the caller's contract.
            unsafe { t_c.write(c.temperature_c()) };
            SD_OK
        }
        Err(e) => e.status(),
    }
}
