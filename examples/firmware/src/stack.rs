//! Stack high-water marks by painting.
//!
//! cortex-m-rt's `paint-stack` feature fills the whole stack with
//! [`PAINT`] at reset, so [`program_high_water_bytes`] gives the deepest
//! stack use of the program so far. [`measure_call_bytes`] repaints the free
//! stack below the caller and reports how deep one call went. Both are lower
//! bounds: a word that was written with the paint value itself does not show.

/// The value cortex-m-rt paints the stack with (`STACK_PAINT_VALUE`).
pub const PAINT: u32 = cortex_m_rt::STACK_PAINT_VALUE;

unsafe extern "C" {
    /// Lowest address of the stack region (end of `.bss`/`.uninit`), from link.x.
    static _stack_end: u32;
    /// Initial stack pointer (top of RAM), from link.x.
    static _stack_start: u32;
}

fn stack_bounds() -> (usize, usize) {
    // Only the addresses of the linker symbols are taken, never their values.
    (
        core::ptr::addr_of!(_stack_end) as usize,
        core::ptr::addr_of!(_stack_start) as usize,
    )
}

/// Current stack pointer.
#[inline(always)]
fn sp() -> usize {
    let sp: usize;
    // SAFETY: reads SP into a register; no memory access.
    unsafe { core::arch::asm!("mov {}, sp", out(reg) sp, options(nomem, nostack)) };
    sp
}

/// Address of the lowest word in `[bottom, top)` that no longer holds the
/// paint, or `top` when all of it is intact. Inlined and call-free, so it
/// never writes below the stack pointer of the function using it.
#[inline(always)]
fn lowest_used(bottom: usize, top: usize) -> usize {
    let mut addr = bottom;
    while addr < top {
        // SAFETY: `addr` is word aligned and inside the RAM stack region
        // reserved by link.x; volatile so the scan is not optimised away.
        let word = unsafe { core::ptr::read_volatile(addr as *const u32) };
        if word != PAINT {
            return addr;
        }
        addr += 4;
    }
    top
}

/// Deepest stack use since reset, in bytes (painted at reset by cortex-m-rt).
pub fn program_high_water_bytes() -> usize {
    let (bottom, top) = stack_bounds();
    top - lowest_used(bottom, top)
}

/// Runs `f(state, input)` once on freshly painted stack and returns how many
/// bytes of stack it used below this function's own frame, i.e. the stack the
/// call costs a caller.
///
/// Painting and scanning are inlined, call-free loops with volatile accesses
/// (so they cannot become `memset` calls): any spill they need lives in this
/// function's frame, above the stack pointer, and only `f` writes below it.
#[inline(never)]
pub fn measure_call_bytes<S, A, R>(state: &mut S, input: A, f: fn(&mut S, A) -> R) -> usize {
    let (bottom, _) = stack_bounds();
    let top = sp();
    let mut addr = bottom;
    while addr < top {
        // SAFETY: `[bottom, sp)` is free stack below every live frame; this
        // firmware enables no interrupt, so nothing else writes there.
        unsafe { core::ptr::write_volatile(addr as *mut u32, PAINT) };
        addr += 4;
    }
    let f = core::hint::black_box(f);
    let r = f(core::hint::black_box(state), core::hint::black_box(input));
    core::hint::black_box(r);
    top - lowest_used(bottom, top)
}
