//! Every malformed image is rejected with its own error, never a panic.

mod common;

use common::*;
use compensate::TableView;
use compensate::image::{EncodeError, ImageError, NumberFormat, Section, layout::off};
use compensate::interp::Interpolation;

#[test]
fn valid_images_round_trip() {
    for b in [f32_builder(), f32_grid_builder()] {
        let img = encode(&b);
        let v = parse(&img);
        assert_eq!(v.temperature_nodes(), T_NODES);
        assert_eq!(v.channel_count(), 3);
        assert_eq!(v.thermometer_nodes(), 5);
        assert_eq!(&v.serial(), b"SN-000042-WELL01");
        assert!(v.ratiometric());
        assert_eq!(v.full_scale(), 10.0);
        let t = v.tables_f32().unwrap();
        assert!(v.tables_q().is_none());
        assert_eq!(t.temperature.start, T_START_C);
        assert_eq!(TableView::declared_len(&img), Ok(img.len()));
    }
}

#[test]
fn every_truncation_is_rejected() {
    let img = encode(&f32_grid_builder());
    for len in 0..img.len() {
        let got = TableView::parse(&img[..len]);
        assert!(
            matches!(got, Err(ImageError::Truncated { .. })),
            "prefix of {len} bytes: {got:?}"
        );
    }
}

#[test]
fn every_single_bit_flip_is_rejected() {
    // Exhaustive over all 8 * len bit positions of two small images (one
    // with every optional section). CRC-32 detects every single-bit error
    // (IEEE 802.3 clause 3.2.9 polynomial has more than one term), and
    // flips in magic/version/lengths are caught before the CRC.
    for b in [f32_builder(), f32_grid_builder()] {
        let img = encode(&b);
        let mut bad = img.clone();
        for byte in 0..img.len() {
            for bit in 0..8 {
                bad[byte] ^= 1 << bit;
                let got = TableView::parse(&bad);
                assert!(got.is_err(), "flip of byte {byte} bit {bit} accepted");
                bad[byte] ^= 1 << bit;
            }
        }
        assert_eq!(bad, img);
    }
}

#[test]
fn trailing_bytes_rejected() {
    let mut img = encode(&f32_builder());
    let n = img.len();
    img.push(0);
    assert_eq!(
        TableView::parse(&img),
        Err(ImageError::TrailingBytes {
            declared: n,
            got: n + 1
        })
    );
}

/// Applies `edit` to a valid image, fixes the CRC, and expects `want`.
fn expect_after_edit(edit: impl Fn(&mut Vec<u8>), want: ImageError) {
    let mut img = encode(&f32_grid_builder());
    edit(&mut img);
    fix_crc(&mut img);
    let got = TableView::parse(&img);
    assert_eq!(got, Err(want), "expected {want}");
}

fn put_f32(img: &mut [u8], at: usize, v: f32) {
    img[at..at + 4].copy_from_slice(&v.to_le_bytes());
}

#[test]
fn each_defect_has_its_own_error() {
    let img = encode(&f32_grid_builder());
    let n = img.len();
    // Offsets of sections in this image: thermometer at 80 (axis) with 5
    // values, channels at 80 + 8 + 20 = 108, grid after 108 + 8 + 3*9*4.
    let therm = 80;
    let chan = therm + 8 + 5 * 4;
    let grid = chan + 8 + 3 * T_NODES * 4;

    let mut bad = img.clone();
    bad[0] = b'X';
    assert_eq!(TableView::parse(&bad), Err(ImageError::BadMagic));
    let mut bad = img.clone();
    bad[off::VERSION] = 2;
    assert_eq!(
        TableView::parse(&bad),
        Err(ImageError::UnsupportedVersion(2))
    );
    let mut bad = img.clone();
    bad[off::HEADER_LEN] = 81;
    assert_eq!(TableView::parse(&bad), Err(ImageError::BadHeaderLength(81)));
    let mut bad = img.clone();
    bad[n - 1] ^= 0x80;
    assert!(matches!(
        TableView::parse(&bad),
        Err(ImageError::CrcMismatch { .. })
    ));

    type Case = (&'static str, Box<dyn Fn(&mut Vec<u8>)>, ImageError);
    let cases: Vec<Case> = vec![
        (
            "format",
            Box::new(|i| i[off::FORMAT] = 7),
            ImageError::UnknownFormat(7),
        ),
        (
            "interp",
            Box::new(|i| i[off::INTERP] = 9),
            ImageError::UnknownInterpolation(9),
        ),
        (
            "kind",
            Box::new(|i| i[off::SIGNAL_KIND] = 3),
            ImageError::UnknownSignalKind(3),
        ),
        (
            "unit",
            Box::new(|i| i[off::UNIT] = 200),
            ImageError::UnknownUnit(200),
        ),
        (
            "flags",
            Box::new(|i| i[off::FLAGS] |= 0x80),
            ImageError::ReservedNotZero { offset: off::FLAGS },
        ),
        (
            "reserved a",
            Box::new(|i| i[off::RESERVED_A + 1] = 1),
            ImageError::ReservedNotZero {
                offset: off::RESERVED_A,
            },
        ),
        (
            "reserved b",
            Box::new(|i| i[off::RESERVED_B + 3] = 1),
            ImageError::ReservedNotZero {
                offset: off::RESERVED_B,
            },
        ),
        (
            "n_t",
            Box::new(|i| i[off::N_T..off::N_T + 2].copy_from_slice(&1u16.to_le_bytes())),
            ImageError::BadCount {
                field: "n_t",
                value: 1,
            },
        ),
        (
            "n_ch",
            Box::new(|i| i[off::N_CH] = 4),
            ImageError::BadCount {
                field: "n_ch",
                value: 4,
            },
        ),
        (
            "n_sig",
            Box::new(|i| i[off::N_SIG..off::N_SIG + 2].copy_from_slice(&1u16.to_le_bytes())),
            ImageError::BadCount {
                field: "n_sig",
                value: 1,
            },
        ),
        (
            "n_raw",
            Box::new(|i| i[off::N_RAW..off::N_RAW + 2].copy_from_slice(&1u16.to_le_bytes())),
            ImageError::BadCount {
                field: "n_raw",
                value: 1,
            },
        ),
        (
            "lengths",
            Box::new(|i| i[off::N_T..off::N_T + 2].copy_from_slice(&8u16.to_le_bytes())),
            ImageError::LengthMismatch {
                declared: n,
                expected: n - 3 * 4 - 3 * 4,
            },
        ),
        (
            "frac in f32",
            Box::new(|i| i[off::FRAC + 2] = 3),
            ImageError::BadFracBits {
                field: "output",
                value: 3,
            },
        ),
        (
            "full scale",
            Box::new(|i| put_f32(i, off::FULL_SCALE, -1.0)),
            ImageError::BadLimits {
                field: "full_scale",
            },
        ),
        (
            "raw limits",
            Box::new(|i| {
                i[off::RAW_LO..off::RAW_LO + 4].copy_from_slice(&200_000i32.to_le_bytes())
            }),
            ImageError::BadLimits { field: "raw" },
        ),
        (
            "signal limits",
            Box::new(|i| put_f32(i, off::SIG_LO, f32::NAN)),
            ImageError::BadLimits { field: "signal" },
        ),
        (
            "thermometer axis step 0",
            Box::new(move |i| put_f32(i, therm + 4, 0.0)),
            ImageError::BadAxis {
                section: Section::Thermometer,
            },
        ),
        (
            "channel axis negative step",
            Box::new(move |i| put_f32(i, chan + 4, -20.0)),
            ImageError::BadAxis {
                section: Section::Channels,
            },
        ),
        (
            "channel axis vanishing step",
            Box::new(move |i| {
                put_f32(i, chan, 1.0e9);
                put_f32(i, chan + 4, 1.0);
            }),
            ImageError::BadAxis {
                section: Section::Channels,
            },
        ),
        (
            // 1e6 + k * 0.01 rounds to 1e6 in f32 (spacing 0.0625 there):
            // the nodes collapse although every number is finite.
            "channel axis step below f32 spacing",
            Box::new(move |i| {
                put_f32(i, chan, 1.0e6);
                put_f32(i, chan + 4, 0.01);
            }),
            ImageError::BadAxis {
                section: Section::Channels,
            },
        ),
        // Table-driven: one row per refused field, so the rows share their shape.
        (
            "thermometer axis step below f32 spacing",
            Box::new(move |i| {
                put_f32(i, therm, 1.0e6);
                put_f32(i, therm + 4, 0.01);
            }),
            ImageError::BadAxis {
                section: Section::Thermometer,
            },
        ),
        (
            "grid axis infinite",
            Box::new(move |i| put_f32(i, grid, f32::NEG_INFINITY)),
            ImageError::BadAxis {
                section: Section::Grid,
            },
        ),
        (
            "thermometer NaN",
            Box::new(move |i| put_f32(i, therm + 8 + 4 * 2, f32::NAN)),
            ImageError::NonFinite {
                section: Section::Thermometer,
                index: 2,
            },
        ),
        (
            "gain inf",
            Box::new(move |i| put_f32(i, chan + 8 + 4 * (T_NODES + 1), f32::INFINITY)),
            ImageError::NonFinite {
                section: Section::Channels,
                index: T_NODES + 1,
            },
        ),
        (
            "grid NaN",
            Box::new(move |i| put_f32(i, grid + 8 + 4 * 26, f32::NAN)),
            ImageError::NonFinite {
                section: Section::Grid,
                index: 26,
            },
        ),
    ];
    for (name, edit, want) in cases {
        let mut img = encode(&f32_grid_builder());
        edit(&mut img);
        fix_crc(&mut img);
        let got = TableView::parse(&img);
        assert_eq!(
            got,
            Err(want),
            "case {name}: got {got:?}, expected {want:?}"
        );
    }
    // The helper itself can fail: an unedited image is not an error.
    let r = std::panic::catch_unwind(|| expect_after_edit(|_| {}, ImageError::BadMagic));
    assert!(
        r.is_err(),
        "expect_after_edit accepted a valid image as BadMagic"
    );
}

#[test]
fn encoder_reports_errors_and_leaves_nothing_behind() {
    let b = f32_builder();
    let need = b.encoded_len().unwrap();
    let mut small = vec![0xAAu8; need - 1];
    assert_eq!(
        b.encode(&mut small),
        Err(EncodeError::BufferTooSmall {
            needed: need,
            got: need - 1
        })
    );
    let short_gain = [1.0f32; 3];
    let bad = compensate::ImageBuilder {
        gain: &short_gain,
        ..f32_builder()
    };
    assert!(matches!(
        bad.encode(&mut vec![0u8; need]),
        Err(EncodeError::ColumnLength { column: "gain", .. })
    ));
    // An image that would not parse (NaN gain) leaves a zeroed buffer.
    let nan_gain = [f32::NAN; T_NODES];
    let bad = compensate::ImageBuilder {
        gain: &nan_gain,
        ..f32_builder()
    };
    let mut buf = vec![0xAAu8; need + 10];
    let got = bad.encode(&mut buf);
    assert!(
        matches!(got, Err(EncodeError::Invalid(ImageError::NonFinite { .. }))),
        "{got:?}"
    );
    assert!(
        buf[..need].iter().all(|&b| b == 0),
        "partial image left in buffer"
    );
    assert!(
        buf[need..].iter().all(|&b| b == 0xAA),
        "bytes past the image touched"
    );
}

#[test]
fn parse_q_accepts_what_parse_accepts_in_q() {
    for grid in [false, true] {
        let img = encode(&q_builder(grid));
        assert_eq!(
            TableView::parse_q(&img),
            TableView::parse(&img),
            "grid={grid}"
        );
        assert!(TableView::parse_q(&img).is_ok(), "grid={grid}");
    }
}

#[test]
fn parse_q_rejects_f32_images_with_a_typed_error() {
    for b in [f32_builder(), f32_grid_builder()] {
        let img = encode(&b);
        assert_eq!(
            TableView::parse_q(&img),
            Err(ImageError::FormatNotAccepted {
                expected: NumberFormat::Q,
                found: NumberFormat::F32,
            })
        );
    }
}

#[test]
fn parse_q_rejects_every_truncation_and_single_bit_flip() {
    // Same exhaustive check as for `parse`, through the Q-only entry point
    // (it skips the f32 branches, so it gets its own run).
    let img = encode(&q_builder(true));
    for len in 0..img.len() {
        let got = TableView::parse_q(&img[..len]);
        assert!(
            matches!(got, Err(ImageError::Truncated { .. })),
            "prefix of {len} bytes: {got:?}"
        );
    }
    let mut bad = img.clone();
    for byte in 0..img.len() {
        for bit in 0..8 {
            bad[byte] ^= 1 << bit;
            let got = TableView::parse_q(&bad);
            assert!(got.is_err(), "flip of byte {byte} bit {bit} accepted");
            bad[byte] ^= 1 << bit;
        }
    }
    assert_eq!(bad, img);
}

#[test]
fn full_scale_must_be_positive_and_finite() {
    // The parser tests the bits, not an f32 compare: check the edges a
    // float compare would decide (subnormal accepted, zeros, negatives,
    // infinity and NaN rejected), in both entry points.
    let cases = [
        (f32::from_bits(1), true),
        (f32::MIN_POSITIVE, true),
        (f32::MAX, true),
        (0.0, false),
        (-0.0, false),
        (-1.0, false),
        (f32::INFINITY, false),
        (f32::NEG_INFINITY, false),
        (f32::NAN, false),
        (-f32::NAN, false),
    ];
    for (q, b) in [
        (false, encode(&f32_builder())),
        (true, encode(&q_builder(false))),
    ] {
        for (v, ok) in cases {
            let mut img = b.clone();
            img[off::FULL_SCALE..off::FULL_SCALE + 4].copy_from_slice(&v.to_le_bytes());
            fix_crc(&mut img);
            let got = if q {
                TableView::parse_q(&img)
            } else {
                TableView::parse(&img)
            };
            let want_err = Err(ImageError::BadLimits {
                field: "full_scale",
            });
            assert_eq!(
                got.is_ok(),
                ok,
                "full scale {v:e} (q={q}): got {got:?}, expected {}",
                if ok { "Ok" } else { "BadLimits full_scale" }
            );
            if !ok {
                assert_eq!(got, want_err, "full scale {v:e} (q={q})");
            }
        }
    }
}

#[test]
fn cubic_images_follow_the_cubic_feature() {
    // With the `cubic` feature (default) a cubic image parses; without it
    // the parser names the missing kernel instead of running it. The image
    // is a linear one with its interpolation code edited (the encoder
    // itself refuses what the parser would reject).
    for mut img in [encode(&f32_builder()), encode(&q_builder(false))] {
        img[off::INTERP] = Interpolation::MonotoneCubic.code();
        fix_crc(&mut img);
        let got = TableView::parse(&img).map(|v| v.interpolation());
        let want = if cfg!(feature = "cubic") {
            Ok(Interpolation::MonotoneCubic)
        } else {
            Err(ImageError::InterpolationNotCompiled(
                Interpolation::MonotoneCubic,
            ))
        };
        assert_eq!(got, want, "format code {}", img[off::FORMAT]);
    }
}
