//! CRC-32 (IEEE 802.3 polynomial), nibble-table form: 64 bytes of flash,
//! no alloc, bounded time (two table look-ups per byte).
//!
//! Parameters (reflected): polynomial 0x04C11DB7 (reversed 0xEDB8_8320),
//! initial value 0xFFFF_FFFF, final XOR 0xFFFF_FFFF, as specified for the
//! Ethernet frame check sequence in IEEE 802.3 clause 3.2.9. The catalogue
//! check value for the ASCII string "123456789" is 0xCBF4_3926.
#![deny(clippy::arithmetic_side_effects)]

/// Reversed IEEE 802.3 polynomial.
const POLY_REFLECTED: u32 = 0xEDB8_8320;

/// Remainders of the 16 possible low nibbles, computed at compile time.
// Indexing inside a const initializer is checked by the compiler: an
// out-of-bounds index would be a build error, never a runtime panic.
#[allow(clippy::indexing_slicing)]
const NIBBLE_TABLE: [u32; 16] = {
    let mut table = [0u32; 16];
    let mut n = 0;
    while n < 16 {
        let mut c = n as u32;
        let mut bit = 0;
        while bit < 4 {
            c = if c & 1 == 1 {
                (c >> 1) ^ POLY_REFLECTED
            } else {
                c >> 1
            };
            bit += 1;
        }
        table[n] = c;
        n += 1;
    }
    table
};

/// Incremental CRC-32 state, for data that arrives in pieces.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Crc32 {
    state: u32,
}

impl Default for Crc32 {
    fn default() -> Self {
        Self::new()
    }
}

impl Crc32 {
    /// Starts a new checksum.
    #[must_use]
    pub const fn new() -> Self {
        Self { state: 0xFFFF_FFFF }
    }

    /// Feeds `bytes` into the checksum.
    pub fn update(&mut self, bytes: &[u8]) {
        let mut c = self.state;
        for &b in bytes {
            c = feed_byte(c, b);
        }
        self.state = c;
    }

    /// The checksum of everything fed so far.
    #[must_use]
    pub const fn finish(&self) -> u32 {
        self.state ^ 0xFFFF_FFFF
    }
}

/// State `c` after byte `b`: two nibble-table steps.
// Out of line for flash: the compiler's cost model leaves a loop that calls a
// function rolled, and `Crc32::update`'s loop, unrolled four-fold with a
// remainder loop, took about 230 bytes of ARMv6-M flash (rolled, with this
// function: about 60). A call per byte costs a few instructions when an
// image is opened, never per sample.
#[inline(never)]
fn feed_byte(c: u32, b: u8) -> u32 {
    let mut c = c ^ u32::from(b);
    // The index is masked to 0..=15, so `get` never misses; the fallback
    // only exists to keep the code free of panicking paths.
    c = (c >> 4) ^ NIBBLE_TABLE.get((c & 0xF) as usize).copied().unwrap_or(0);
    (c >> 4) ^ NIBBLE_TABLE.get((c & 0xF) as usize).copied().unwrap_or(0)
}

/// CRC-32 (IEEE 802.3) of `bytes` in one call.
#[must_use]
pub fn crc32(bytes: &[u8]) -> u32 {
    let mut c = Crc32::new();
    c.update(bytes);
    c.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Bit-serial reference straight from the polynomial definition, to
    /// check the nibble table independently.
    fn crc32_bitwise(bytes: &[u8]) -> u32 {
        let mut c = 0xFFFF_FFFFu32;
        for &b in bytes {
            c ^= u32::from(b);
            for _ in 0..8 {
                c = if c & 1 == 1 {
                    (c >> 1) ^ POLY_REFLECTED
                } else {
                    c >> 1
                };
            }
        }
        !c
    }

    #[test]
    fn known_vectors() {
        // (input, expected): "123456789" is the catalogue check value of
        // CRC-32/ISO-HDLC (the IEEE 802.3 CRC); the empty string gives 0;
        // "a" = 0xE8B7BE43 (recalled from memory, confirmed by the bitwise
        // reference below).
        let cases: [(&[u8], u32); 3] = [(b"123456789", 0xCBF4_3926), (b"", 0), (b"a", 0xE8B7_BE43)];
        for (input, want) in cases {
            let got = crc32(input);
            assert_eq!(
                got, want,
                "crc32({input:?}) = {got:#010x}, expected {want:#010x}"
            );
        }
    }

    #[test]
    fn incremental_equals_one_shot_and_bitwise() {
        let data: [u8; 97] = core::array::from_fn(|i| (i as u8).wrapping_mul(31).wrapping_add(7));
        let mut c = Crc32::new();
        c.update(&data[..40]);
        c.update(&data[40..]);
        assert_eq!(c.finish(), crc32(&data));
        assert_eq!(crc32(&data), crc32_bitwise(&data));
    }
}
