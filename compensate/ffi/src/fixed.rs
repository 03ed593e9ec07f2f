//! The integer (Q format) compensator (parts without an FPU) through the
//! C ABI: bit-exact with the host's verification.

use compensate::{FixedCompensator, TableView};

use crate::state::{Key, SdQState, checked_slot, image_bytes, init, slot, slot_mut};
use crate::status::{
    SD_ERR_NULL_POINTER, SD_OK, SdResult, SdSampleQ, SdStatus, image_status, sample,
};

/// Checks a Q-format table image and makes an integer compensator from it
/// in the caller's state block. No f32 check of the image is linked for
/// this call (a part without FPU pays for none).
///
/// `state` must be aligned to `SD_STATE_ALIGN` and `state_bytes` at least
/// `SD_Q_STATE_BYTES` (pass `sizeof(sd_q_state)`). The image (`image_len`
/// bytes at `image`, exactly the image's declared length) must stay in
/// place and unchanged while the state is used.
///
/// Until the first temperature update, samples carry
/// `SD_FLAG_NO_TEMPERATURE`.
///
/// Returns `SD_OK`, or `SD_ERR_NULL_POINTER`, `SD_ERR_MISALIGNED_STATE`,
/// `SD_ERR_STATE_TOO_SMALL`, `SD_ERR_LENGTH_RANGE`, `SD_ERR_SHORT_BUFFER`,
/// `SD_ERR_CORRUPT_IMAGE`, `SD_ERR_INVALID_IMAGE`, `SD_ERR_WRONG_FORMAT`
/// (an f32 image), `SD_ERR_UNSUPPORTED`. On any error after the state
/// checks the block reads as not initialised.
///
/// # Safety
/// `state` (if non-null and aligned) must point to `state_bytes` writable
/// bytes; `image` (if non-null) to `image_len` readable bytes that outlive
/// every use of the state.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_q_init(
    state: *mut SdQState,
    state_bytes: usize,
    image: *const u8,
    image_len: usize,
) -> SdStatus {
    // SAFETY: the caller's contract above covers both blocks.
    unsafe {
        init(
            state,
            state_bytes,
            Key::Q,
            || TableView::parse_q(image_bytes(image, image_len)?).map_err(image_status),
            FixedCompensator::new,
        )
    }
}

/// Takes a new temperature signal and caches the coefficients at it.
///
/// `signal_q` is the temperature signal times 2^`frac_signal` (an image
/// with a thermometer or over the signal axis; the demo images: the
/// bridge's resistance as a 24-bit ADC code, `frac_signal` 0), or degrees
/// Celsius times 2^`frac_temperature` (an image without thermometer). A
/// signal outside the image's plausible range flags
/// `SD_FLAG_SENSOR_FAULT`; outside the table axis it is clamped and flags
/// `SD_FLAG_TEMPERATURE_CLAMPED`.
///
/// Returns the update's `SD_FLAG_*` bits (0 or more), or a negative
/// code: `SD_ERR_NULL_POINTER`, `SD_ERR_MISALIGNED_STATE` or
/// `SD_ERR_NOT_INITIALISED` (`sd_result_status` and `sd_result_flags`
/// split the two).
///
/// # Safety
/// `state` (if non-null) must point to an `sd_q_state` used by no one else
/// during the call.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_q_update_temperature(state: *mut SdQState, signal_q: i32) -> SdResult {
    // SAFETY: the caller's contract above.
    match unsafe { slot_mut::<_, FixedCompensator<'static>>(state, Key::Q) } {
        Ok(c) => {
            if c.update_temperature_short(signal_q) {
                0 // the short update's status is OK: no flags
            } else {
                update_general(c, signal_q)
            }
        }
        Err(e) => e.status(),
    }
}

/// Compensates one raw sample (integer ADC code) at the cached
/// temperature.
///
/// Returns the reading in registers (`sd_sample_q`, a 64-bit word): the
/// measurand times 2^`frac_output` (`sd_sample_q_value`) and an
/// `sd_result` (`sd_sample_result`): the sample's `SD_FLAG_*` bits (rail
/// codes flag `SD_FLAG_SENSOR_FAULT`, codes outside the calibrated range
/// `SD_FLAG_INPUT_OUT_OF_RANGE`, a result beyond int32
/// `SD_FLAG_SATURATED`), or a negative code: `SD_ERR_NULL_POINTER`,
/// `SD_ERR_MISALIGNED_STATE` or `SD_ERR_NOT_INITIALISED`, with value 0.
///
/// # Safety
/// `state` (if non-null) must point to an `sd_q_state` not written during
/// the call.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_q_compensate(state: *const SdQState, raw: i32) -> SdSampleQ {
    #[cfg(feature = "nopanic-selftest")]
    selftest_panic(raw);
    // SAFETY: the caller's contract above.
    match unsafe { slot::<_, FixedCompensator<'static>>(state, Key::Q) } {
        Ok(c) => match c.compensate_sample_short_map(raw, |r| {
            sample(r.value.cast_unsigned(), SdResult::from(r.status.bits()))
        }) {
            Some(word) => word,
            // SAFETY: the block passed the checks just above.
            None => unsafe { sample_general(state, raw) },
        },
        Err(e) => e.sample(),
    }
}

/// An update off the short path (outside the plausible range or the
/// table, NaN, an image the short path does not serve), out of line so
/// that the entry point reaches it by a tail call and its short path needs
/// no stack frame.
#[inline(never)]
fn update_general(c: &mut FixedCompensator<'static>, signal_q: i32) -> SdResult {
    SdResult::from(c.update_general(signal_q).bits())
}

/// A sample off the short path, out of line and reached by a tail call
/// (in the integer sample this measured fewer instructions on the short
/// path than a call in place, see `sd_f32_compensate`).
///
/// It takes the block, not the compensator: the short path then keeps no
/// second pointer live for it (on the Cortex-M4F one register and a `MOV`
/// fewer, and a paired load).
///
/// # Safety
/// `state` passed the per-call checks of `sd_q_compensate`.
#[inline(never)]
unsafe fn sample_general(state: *const SdQState, raw: i32) -> SdSampleQ {
    // SAFETY: the caller's contract.
    let c = unsafe { checked_slot::<_, FixedCompensator<'static>>(state) };
    let r = c.compensate_general(raw);
    sample(r.value.cast_unsigned(), SdResult::from(r.status.bits()))
}

/// A reachable panic, so that the no-panic link can be shown to fail.
#[cfg(feature = "nopanic-selftest")]
#[allow(clippy::panic)]
fn selftest_panic(raw: i32) {
    if core::hint::black_box(raw) == i32::MIN {
        panic!("nopanic self-test");
    }
}

/// Temperature of the cached coefficients in degrees Celsius times
/// 2^`frac_temperature` (through the image's thermometer column, clamped to
/// the table's ends on an image over the signal axis); costs one table
/// look-up, so call it when the temperature is wanted, not per sample.
///
/// Returns `SD_OK`, `SD_ERR_NULL_POINTER` (state or `t_q`),
/// `SD_ERR_MISALIGNED_STATE` or `SD_ERR_NOT_INITIALISED`.
///
/// # Safety
/// As `sd_q_compensate`; `t_q` (if non-null) must point to a writable
/// int32.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn sd_q_temperature_q(state: *const SdQState, t_q: *mut i32) -> SdStatus {
    if t_q.is_null() {
        return SD_ERR_NULL_POINTER;
    }
    // SAFETY: the caller's contract above.
    match unsafe { slot::<_, FixedCompensator<'static>>(state, Key::Q) } {
        Ok(c) => {
            // SAFETY: non-null and writable by the caller's contract.
            unsafe { t_q.write(c.temperature_q()) };
            SD_OK
        }
        Err(e) => e.status(),
    }
}
