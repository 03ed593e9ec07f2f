//! The runtime crate's CRC-32 against an independent implementation: the
//! `crc` crate's CRC-32/ISO-HDLC (the IEEE 802.3 CRC the image layout
//! names), on the check string of the CRC catalogue and on pseudo-random
//! buffers of every length up to 300 bytes.

use crc::{CRC_32_ISO_HDLC, Crc};

#[test]
fn image_crc_matches_an_independent_crc32() {
    let reference = Crc::<u32>::new(&CRC_32_ISO_HDLC);
    // Catalogue check value of CRC-32/ISO-HDLC for "123456789": 0xCBF43926.
    assert_eq!(compensate::crc::crc32(b"123456789"), 0xCBF4_3926);
    assert_eq!(reference.checksum(b"123456789"), 0xCBF4_3926);
    // An xorshift generator: deterministic bytes with every value.
    let mut x: u32 = 0x9E37_79B9;
    let mut bytes = Vec::new();
    for len in 0..=300 {
        assert_eq!(
            compensate::crc::crc32(&bytes),
            reference.checksum(&bytes),
            "length {len}"
        );
        x ^= x << 13;
        x ^= x >> 17;
        x ^= x << 5;
        bytes.push(x as u8);
    }
}
