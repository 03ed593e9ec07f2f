//! The caller-owned state blocks and the checks every entry point makes on
//! a state pointer before it reads through it.

use core::mem::{MaybeUninit, align_of, size_of};

use compensate::{Compensator, CompensatorError, FixedCompensator, TableView};

use crate::status::{
    SD_ERR_LENGTH_RANGE, SD_ERR_MISALIGNED_STATE, SD_ERR_NOT_INITIALISED, SD_ERR_NULL_POINTER,
    SD_ERR_STATE_TOO_SMALL, SD_OK, SdStatus, compensator_status, sample,
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
/// successful init are refused by a key word in the block (the block's
/// own address, negated): keep a block zero-filled until then (static
/// storage is), since leftover stack contents could match it by chance,
/// and do not move or copy a block after its init (the copy is refused).
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

/// What a state block holds: two key words saying which `sd_*_init`
/// filled it and where, then the compensator.
///
/// The key of an initialised block is the two's complement negation of the
/// block's own address (its low 32 bits), in the word of its number format
/// (`key_f32` or `key_q`); the other word is 0. A call finds the key by
/// adding the word to the address it was given and testing for 0 (on
/// Cortex-M one load, one `CMN` and one branch). A block that was never
/// initialised (zero-filled), whose last init failed, that was made for the
/// other format, or that was copied elsewhere after its init, has no key
/// at the address given; and since init writes a key only into a block
/// aligned to `SD_STATE_ALIGN`, a found key also proves the alignment.
#[repr(C)]
pub(crate) struct Slot<C> {
    key_f32: u32,
    key_q: u32,
    comp: C,
}

/// Which key word of a [`Slot`] an entry point reads.
#[derive(Clone, Copy, PartialEq, Eq)]
pub(crate) enum Key {
    /// `key_f32`: blocks filled by `sd_f32_init`.
    F32,
    /// `key_q`: blocks filled by `sd_q_init`.
    Q,
}

/// Where the key word of format `key` of the block at `slot` is.
#[inline(always)]
fn key_word<C>(slot: *mut Slot<C>, key: Key) -> *mut u32 {
    slot.cast::<u32>().wrapping_byte_add(key_offset::<C>(key))
}

/// Offset of the key word of format `key` in a [`Slot`].
#[inline(always)]
const fn key_offset<C>(key: Key) -> usize {
    match key {
        Key::F32 => core::mem::offset_of!(Slot<C>, key_f32),
        Key::Q => core::mem::offset_of!(Slot<C>, key_q),
    }
}

/// The key word of a block at address `addr`.
#[inline(always)]
fn key_of(addr: usize) -> u32 {
    // The low 32 bits: the whole address on the 32-bit targets, and still
    // different for any two addresses less than 4 GiB apart on hosts.
    #[allow(clippy::cast_possible_truncation)]
    (addr as u32).wrapping_neg()
}

/// Whether a state pointer must be rounded to a word before its key is
/// read: on targets without unaligned word loads (ARMv6-M, ARMv8-M
/// Baseline: `cfg(aligned_loads_only)`, set by `build.rs`). Elsewhere
/// (ARMv7-M, hosts) the key is read with an unaligned load. Either way a
/// misaligned pointer cannot find a key (see [`Slot`]), so the key test
/// is also the alignment test.
const ROUND_TO_WORD: bool = cfg!(aligned_loads_only);

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

/// What is wrong with a state pointer that failed a check (off the common
/// path): NULL, misaligned, or an aligned block without the key.
#[cold]
#[inline(never)]
fn state_error(addr: usize) -> SdStatus {
    classify(addr)
}

/// The status code of a state address that failed a check: NULL,
/// misaligned, or an aligned block without the key.
#[inline(always)]
fn classify(addr: usize) -> SdStatus {
    if addr == 0 {
        SD_ERR_NULL_POINTER
    } else if addr & (SD_STATE_ALIGN - 1) != 0 {
        SD_ERR_MISALIGNED_STATE
    } else {
        SD_ERR_NOT_INITIALISED
    }
}

/// A state pointer that failed the per-call checks (its address).
#[derive(Clone, Copy)]
pub(crate) struct BadState(usize);

impl BadState {
    /// Its status code.
    ///
    /// Where loads may be unaligned (ARMv7-M, hosts) computed in place, in
    /// one block that both failed checks branch to; on ARMv6-M a call of
    /// the out-of-line [`state_error`]. Each choice measured the fewer
    /// instructions on its target's update path (docs/performance.md).
    #[inline(always)]
    pub(crate) fn status(self) -> SdStatus {
        #[cfg(aligned_loads_only)]
        {
            state_error(self.0)
        }
        #[cfg(not(aligned_loads_only))]
        {
            classify(self.0)
        }
    }

    /// The sample word of a call refused with it: value 0 and its status
    /// code. Out of line, returning the whole word, so that the entry
    /// point reaches it by a tail call and its common path stays without
    /// a stack frame.
    #[cold]
    #[inline(never)]
    pub(crate) fn sample(self) -> u64 {
        sample(0, state_error(self.0))
    }
}

/// `x`, through an empty assembly block, so that the optimiser cannot
/// replace it by what it knows about it (zero-cost: no instruction).
#[inline(always)]
fn opaque(mut x: usize) -> usize {
    // SAFETY: the assembly is empty: it reads and writes no memory and
    // returns the register unchanged.
    unsafe {
        core::arch::asm!("/* {0} */", inout(reg) x, options(pure, nomem, nostack, preserves_flags));
    }
    x
}

/// The compensator in a state block filled by the init of format `key`:
/// the per-call checks (NULL, then the key, see [`Slot`]).
///
/// # Safety
/// A non-null `state` must point to at least `size_of::<S>()` readable
/// bytes (the C type's size), not written by anyone else while the
/// returned pointer is used.
#[inline(always)]
unsafe fn find<S, C>(state: *const S, key: Key) -> Result<*mut Slot<C>, BadState> {
    let addr = state.addr();
    if addr == 0 {
        // The address as the optimiser cannot see it (not the constant 0),
        // so that this failure and the key's below share one error block,
        // near enough for a `CBZ` (ARMv7-M).
        return Err(BadState(opaque(addr)));
    }
    let at = key_offset::<C>(key);
    // Where loads must be aligned, the key is read from a word-aligned
    // address that a valid pointer keeps: the pointer rounded down to a
    // word when the key is not the block's first word, else rounded up,
    // so that the word read stays inside the caller's block either way. A
    // misaligned pointer cannot find a key there (see [`Slot`]), so no
    // separate alignment test is needed.
    let slot = if ROUND_TO_WORD {
        let up = if at >= 4 { 0 } else { 3 };
        state
            // Two shifts (an opaque value between them, so that they are
            // not folded into a mask, which ARMv6-M builds in three).
            // Wrapping: no block the caller's contract allows ends within
            // 3 bytes of the address space's end.
            .map_addr(|a| opaque(a.wrapping_add(up) >> 2) << 2)
            .cast::<Slot<C>>()
            .cast_mut()
    } else {
        state.cast::<Slot<C>>().cast_mut()
    };
    let word = key_word(slot, key);
    // SAFETY: non-null and, by the caller's contract, inside a readable
    // block of `size_of::<S>()` bytes, which holds the key words
    // (compile-time assertion above): at most 3 bytes past `state` plus
    // the key's offset. Read unaligned where loads may be (ARMv7-M,
    // hosts), where the pointer may be misaligned; elsewhere word-aligned
    // by the rounding above. Any bit pattern is a valid u32.
    let found = unsafe {
        if ROUND_TO_WORD {
            word.read()
        } else {
            word.read_unaligned()
        }
    };
    if found != key_of(addr) {
        return Err(BadState(addr));
    }
    // The key proved `slot == state` (see [`Slot`]).
    Ok(slot)
}

/// The compensator in a state block filled by the init of format `key`.
///
/// # Safety
/// As [`find`].
#[inline(always)]
pub(crate) unsafe fn slot<'s, S, C>(state: *const S, key: Key) -> Result<&'s C, BadState> {
    // SAFETY: the caller's contract.
    let slot = unsafe { find::<S, C>(state, key)? };
    // SAFETY: only `init` writes a key, at the block's own (aligned)
    // address and only after writing a valid `C` into the same block; the
    // image the compensator borrows stays valid by the caller's contract
    // (see the crate docs).
    Ok(unsafe { &*core::ptr::addr_of!((*slot).comp) })
}

/// The compensator in a state block that has passed the per-call checks
/// of [`slot`] in the same call (for the out-of-line general paths).
///
/// # Safety
/// `state` passed [`slot`]'s checks with the key of `C`'s format, and the
/// block is not written while the reference lives.
#[inline(always)]
pub(crate) unsafe fn checked_slot<'s, S, C>(state: *const S) -> &'s C {
    let slot = state.cast::<Slot<C>>();
    // SAFETY: as in `slot`, whose checks the caller's contract says passed.
    unsafe { &*core::ptr::addr_of!((*slot).comp) }
}

/// The compensator in a state block, for an update (see [`slot`]).
///
/// # Safety
/// As [`slot`], and no other reference to the block lives meanwhile.
#[inline(always)]
pub(crate) unsafe fn slot_mut<'s, S, C>(state: *mut S, key: Key) -> Result<&'s mut C, BadState> {
    // SAFETY: the caller's contract.
    let slot = unsafe { find::<S, C>(state, key)? };
    // SAFETY: as in `slot`; exclusive by the caller's contract.
    Ok(unsafe { &mut *core::ptr::addr_of_mut!((*slot).comp) })
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
/// the table view from `view`, builds the compensator with `new`, copies it
/// into the block and writes the key of format `key` (see [`Slot`]).
///
/// # Safety
/// A non-null, aligned `state` must point to `state_bytes` writable bytes
/// not used by anyone else during the call.
#[inline(always)]
pub(crate) unsafe fn init<S, C>(
    state: *mut S,
    state_bytes: usize,
    key: Key,
    view: impl FnOnce() -> Result<TableView<'static>, SdStatus>,
    new: impl FnOnce(&TableView<'static>) -> Result<C, CompensatorError>,
) -> SdStatus {
    let addr = state.addr();
    if addr & (SD_STATE_ALIGN - 1) != 0 || addr == 0 {
        return state_error(addr);
    }
    if state_bytes < size_of::<S>() {
        return SD_ERR_STATE_TOO_SMALL;
    }
    let slot = state.cast::<Slot<C>>();
    // SAFETY: non-null, aligned, and `state_bytes >= size_of::<S>()`
    // writable bytes hold a `Slot<C>` (compile-time assertion above).
    unsafe {
        core::ptr::addr_of_mut!((*slot).key_f32).write(0);
        core::ptr::addr_of_mut!((*slot).key_q).write(0);
    }
    let view = match view() {
        Ok(v) => v,
        Err(e) => return e,
    };
    // Matched by reference, so that the compensator is copied once, from
    // where `new` built it (a copy of the `Result` would call `memcpy`).
    match &new(&view) {
        Ok(comp) => {
            let word = key_word(slot, key);
            // SAFETY: as above; the key is written after the compensator.
            unsafe {
                copy_words(comp, core::ptr::addr_of_mut!((*slot).comp));
                word.write(key_of(state.addr()));
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
