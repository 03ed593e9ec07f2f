//! The caller-owned state blocks and the checks every entry point makes on
//! a state pointer before it reads through it.

use core::mem::{MaybeUninit, align_of, size_of};

use compensate::{Compensator, CompensatorError, FixedCompensator, TableView};

use crate::status::{
    SD_ERR_LENGTH_RANGE, SD_ERR_MISALIGNED_STATE, SD_ERR_NOT_INITIALISED, SD_ERR_NULL_POINTER,
    SD_ERR_STATE_TOO_SMALL, SD_OK, SdStatus, compensator_status,
};

/// Alignment in bytes every state block needs (its address must be a
/// multiple of it). `sd_f32_state` and `sd_q_state` declared in C have it.
pub const SD_STATE_ALIGN: usize = 8;

/// Bytes of an f32 state block (`sizeof(sd_f32_state)`) on 32-bit targets.
#[cfg(not(target_pointer_width = "64"))]
pub const SD_F32_STATE_BYTES: usize = 224;
/// Bytes of an f32 state block (`sizeof(sd_f32_state)`) on 64-bit hosts.
#[cfg(target_pointer_width = "64")]
pub const SD_F32_STATE_BYTES: usize = 320;

/// Bytes of an integer (Q) state block (`sizeof(sd_q_state)`) on 32-bit
/// targets.
#[cfg(not(target_pointer_width = "64"))]
pub const SD_Q_STATE_BYTES: usize = 352;
/// Bytes of an integer (Q) state block (`sizeof(sd_q_state)`) on 64-bit
/// hosts.
#[cfg(target_pointer_width = "64")]
pub const SD_Q_STATE_BYTES: usize = 464;

/// Caller-owned storage of one f32 compensator: declare one (static, or on
/// a stack that outlives its use) and pass its address and `sizeof` to
/// `sd_f32_init`. Its contents are private. Calls before the first
/// successful init are refused by a tag word in the block: keep a block
/// zero-filled until then (static storage is), since leftover stack
/// contents could match the tag by chance.
#[repr(C, align(8))]
pub struct SdF32State {
    /// Private to the library.
    pub opaque: [u8; SD_F32_STATE_BYTES],
}

/// Caller-owned storage of one integer (Q) compensator; see `sd_f32_state`.
#[repr(C, align(8))]
pub struct SdQState {
    /// Private to the library.
    pub opaque: [u8; SD_Q_STATE_BYTES],
}

/// What a state block holds: a tag saying which `sd_*_init` filled it,
/// then the compensator.
#[repr(C)]
pub(crate) struct Slot<C> {
    tag: u32,
    comp: C,
}

/// Tag of a block that holds no compensator (written first by every init,
/// so that a failed init leaves the block not initialised).
const TAG_NONE: u32 = 0;
/// Tag of a block filled by `sd_f32_init`. Tags have the byte pattern
/// `0xXYXYXYXY`, which ARMv7-M compares with one instruction (a Thumb-2
/// modified immediate), where another word needs two more to load.
pub(crate) const TAG_F32: u32 = 0xF3F3_F3F3;
/// Tag of a block filled by `sd_q_init`.
pub(crate) const TAG_Q: u32 = 0xA9A9_A9A9;

// The header's constants hold each compensator on the target being built,
// and waste no more than the padding to the next alignment step.
const _: () = {
    assert!(size_of::<Slot<Compensator<'static>>>() <= SD_F32_STATE_BYTES);
    assert!(size_of::<Slot<FixedCompensator<'static>>>() <= SD_Q_STATE_BYTES);
    assert!(size_of::<Slot<Compensator<'static>>>() + SD_STATE_ALIGN > SD_F32_STATE_BYTES);
    assert!(size_of::<Slot<FixedCompensator<'static>>>() + SD_STATE_ALIGN > SD_Q_STATE_BYTES);
    assert!(align_of::<Slot<Compensator<'static>>>() <= SD_STATE_ALIGN);
    assert!(align_of::<Slot<FixedCompensator<'static>>>() <= SD_STATE_ALIGN);
    assert!(size_of::<SdF32State>() == SD_F32_STATE_BYTES);
    assert!(size_of::<SdQState>() == SD_Q_STATE_BYTES);
    assert!(align_of::<SdF32State>() == SD_STATE_ALIGN);
};

/// Null and alignment checks of a state pointer; the common path is a
/// shift and a compare with zero, each with a branch to one cold function.
#[inline(always)]
fn check_address<S>(state: *const S) -> Result<(), SdStatus> {
    let addr = state.addr();
    if addr & (SD_STATE_ALIGN - 1) != 0 || addr == 0 {
        return Err(address_error(addr));
    }
    Ok(())
}

/// Which of the two address checks failed (off the common path).
#[cold]
#[inline(never)]
fn address_error(addr: usize) -> SdStatus {
    if addr == 0 {
        SD_ERR_NULL_POINTER
    } else {
        SD_ERR_MISALIGNED_STATE
    }
}

/// The status of a block whose tag is not the expected one (off the
/// common path).
#[cold]
#[inline(never)]
fn not_initialised() -> SdStatus {
    SD_ERR_NOT_INITIALISED
}

/// The compensator in a state block filled by the init whose tag is `tag`.
///
/// # Safety
/// A non-null, aligned `state` must point to at least `size_of::<S>()`
/// readable bytes (the C type's size), not written by anyone else while the
/// returned reference lives.
#[inline(always)]
pub(crate) unsafe fn slot<'s, S, C>(state: *const S, tag: u32) -> Result<&'s C, SdStatus> {
    check_address(state)?;
    let slot = state.cast::<Slot<C>>();
    // SAFETY: `state` is non-null and aligned (checked above) and points
    // to a block of `size_of::<S>()` bytes (caller's contract), which holds
    // a `Slot<C>` (asserted at compile time); `tag` is its first word and
    // any bit pattern is a valid u32.
    let found = unsafe { core::ptr::addr_of!((*slot).tag).read() };
    if found != tag {
        return Err(not_initialised());
    }
    // SAFETY: only `init` writes `tag`, and only after writing a valid
    // `C` into the same block; the image the compensator borrows stays
    // valid by the caller's contract (see the crate docs).
    Ok(unsafe { &(*slot).comp })
}

/// The compensator in a state block, for an update (see [`slot`]).
///
/// # Safety
/// As [`slot`], and no other reference to the block lives meanwhile.
#[inline(always)]
pub(crate) unsafe fn slot_mut<'s, S, C>(state: *mut S, tag: u32) -> Result<&'s mut C, SdStatus> {
    check_address(state)?;
    let slot = state.cast::<Slot<C>>();
    // SAFETY: as in `slot`.
    let found = unsafe { core::ptr::addr_of!((*slot).tag).read() };
    if found != tag {
        return Err(not_initialised());
    }
    // SAFETY: as in `slot`; exclusive by the caller's contract.
    Ok(unsafe { &mut (*slot).comp })
}

/// The image bytes `image[0..len]` after the null and range checks.
///
/// # Safety
/// A non-null `image` must point to `len` readable bytes that stay in
/// place and unchanged for `'a`.
#[inline]
pub(crate) unsafe fn image_bytes<'a>(image: *const u8, len: usize) -> Result<&'a [u8], SdStatus> {
    if image.is_null() {
        return Err(SD_ERR_NULL_POINTER);
    }
    if len > isize::MAX as usize {
        return Err(SD_ERR_LENGTH_RANGE);
    }
    // SAFETY: non-null, a u8 pointer is always aligned, `len` is within
    // `isize::MAX` (checked above), and the bytes are readable and
    // unchanged for `'a` by the caller's contract.
    Ok(unsafe { core::slice::from_raw_parts(image, len) })
}

/// Fills a state block: checks the block, marks it not initialised, gets
/// the table view from `view`, builds the compensator with `new`, copies
/// it into the block and writes `tag`.
///
/// # Safety
/// A non-null, aligned `state` must point to `state_bytes` writable bytes
/// not used by anyone else during the call.
pub(crate) unsafe fn init<S, C>(
    state: *mut S,
    state_bytes: usize,
    tag: u32,
    view: impl FnOnce() -> Result<TableView<'static>, SdStatus>,
    new: fn(&TableView<'static>) -> Result<C, CompensatorError>,
) -> SdStatus {
    if let Err(e) = check_address(state) {
        return e;
    }
    if state_bytes < size_of::<S>() {
        return SD_ERR_STATE_TOO_SMALL;
    }
    let slot = state.cast::<Slot<C>>();
    // SAFETY: non-null, aligned, and `state_bytes >= size_of::<S>()`
    // writable bytes hold a `Slot<C>` (compile-time assertion above).
    unsafe { core::ptr::addr_of_mut!((*slot).tag).write(TAG_NONE) };
    let view = match view() {
        Ok(v) => v,
        Err(e) => return e,
    };
    // Matched by reference, so that the compensator is copied once, from
    // where `new` built it.
    match &new(&view) {
        Ok(comp) => {
            // SAFETY: as above; the tag is written after the compensator.
            unsafe {
                copy_words(comp, core::ptr::addr_of_mut!((*slot).comp));
                core::ptr::addr_of_mut!((*slot).tag).write(tag);
            }
            SD_OK
        }
        Err(e) => compensator_status(*e),
    }
}

/// Copies `*src` to `dst` one 32-bit word at a time, in a loop.
///
/// A plain copy of a compensator (over 200 bytes) is a call to `memcpy`,
/// which would link compiler-builtins' general `memcpy` and
/// `__aeabi_memcpy4` (about 0.9 KiB of flash on a Cortex-M) into firmware
/// that needs neither. Volatile accesses keep the compiler from turning
/// the loop back into that call, and a word count it cannot see keeps it
/// from unrolling the loop into more code than `memcpy` itself. It runs
/// once per initialisation.
///
/// # Safety
/// `dst` must be valid for writing a `T` and aligned for it.
unsafe fn copy_words<T>(src: &T, dst: *mut T) {
    const {
        assert!(align_of::<T>() >= 4 && size_of::<T>().is_multiple_of(4));
    }
    let from = core::ptr::from_ref(src).cast::<MaybeUninit<u32>>();
    let to = dst.cast::<MaybeUninit<u32>>();
    let words = core::hint::black_box(size_of::<T>() / 4);
    for k in 0..words.min(size_of::<T>() / 4) {
        // SAFETY: both `T`s span `size_of::<T>() / 4` aligned words (the
        // assertion above, and `k` stays below that count), and a
        // `MaybeUninit` may hold a padding byte.
        unsafe { to.add(k).write_volatile(from.add(k).read_volatile()) };
    }
}
