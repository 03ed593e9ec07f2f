//! Little-endian reads from byte slices that cannot panic.
//!
//! Callers check lengths first; a read past the end returns zero so that no
//! panicking path exists even if that check were wrong.

/// Four bytes at `off`, or zeros past the end.
// Out of line on parts without unaligned word loads (`aligned_loads_only`:
// ARMv6-M and ARMv8-M Baseline): each inlined read is four byte loads and
// their assembly, and the parser reads a dozen header words. Inlined
// elsewhere, where a read is one load.
#[cfg_attr(aligned_loads_only, inline(never))]
#[cfg_attr(not(aligned_loads_only), inline)]
pub fn word(b: &[u8], off: usize) -> [u8; 4] {
    match b.get(off..off.saturating_add(4)) {
        Some(&[a, c, d, e]) => [a, c, d, e],
        _ => [0; 4],
    }
}

/// u16 at `off`.
#[inline]
pub fn u16_at(b: &[u8], off: usize) -> u16 {
    match b.get(off..off.saturating_add(2)) {
        Some(&[a, c]) => u16::from_le_bytes([a, c]),
        _ => 0,
    }
}

/// u8 at `off`.
#[inline]
pub fn u8_at(b: &[u8], off: usize) -> u8 {
    b.get(off).copied().unwrap_or(0)
}

/// u32 at `off`.
#[inline]
pub fn u32_at(b: &[u8], off: usize) -> u32 {
    u32::from_le_bytes(word(b, off))
}

/// i32 at `off`.
#[inline]
pub fn i32_at(b: &[u8], off: usize) -> i32 {
    i32::from_le_bytes(word(b, off))
}

/// f32 at `off`.
#[inline]
pub fn f32_at(b: &[u8], off: usize) -> f32 {
    f32::from_le_bytes(word(b, off))
}
