//! Every entry point of the C ABI on bad arguments: each kind of mistake
//! returns its own status code, writes nothing through the output
//! pointers, and never crashes; and on good arguments the results are
//! those of the `compensate` crate called directly, bit for bit.
//!
//! The per-call entry points return their result in registers: an
//! `SdResult` (flags, or a negative code) alone or in the low half of a
//! sample word whose high half is the value; the helpers below read them
//! as the header's `sd_result_status`, `sd_sample_result` and
//! `sd_sample_*_value` do.

use compensate::{Compensator, FixedCompensator, TableView};
use compensate_ffi::*;
use std::ptr;

/// The demo images and stream the Rust and C firmware embed.
static IMAGE_Q: &[u8] = include_bytes!("../../../examples/firmware/data/well_level_q.bin");
static IMAGE_F32: &[u8] = include_bytes!("../../../examples/firmware/data/well_level_f32.bin");
static STREAM: &str = include_str!("../../../examples/firmware/data/well_level_stream.csv");

/// Room for either state block, aligned beyond `SD_STATE_ALIGN` so that
/// offsets into it give chosen misalignments.
#[repr(C, align(16))]
struct Block([u8; 1024]);

impl Block {
    fn new() -> Box<Self> {
        Box::new(Block([0; 1024]))
    }
    fn at<S>(&mut self, offset: usize) -> *mut S {
        self.0[offset..].as_mut_ptr().cast()
    }
}

/// (raw, temp) codes of the demo stream.
fn stream() -> Vec<(i32, i32)> {
    // Same stream parsing as compensate/tests/short_paths.rs: each test crate reads it itself.
    STREAM
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("raw_code") && !l.trim().is_empty())
        .map(|l| {
            let (r, t) = l.split_once(',').expect("two fields");
            (
                r.trim().parse().expect("raw"),
                t.trim().parse().expect("temp"),
            )
        })
        .collect()
}

/// The status code of a result (`sd_result_status`).
fn status(result: SdResult) -> SdStatus {
    if result < 0 { result } else { SD_OK }
}

/// The result half of a sample word (`sd_sample_result`).
fn result_of(sample: u64) -> SdResult {
    ((sample >> 32) as u32).cast_signed()
}

/// The value of an integer sample word (`sd_sample_q_value`).
fn q_value(sample: SdSampleQ) -> i32 {
    (sample as u32).cast_signed()
}

/// The value of an f32 sample word (`sd_sample_f32_value`).
fn f32_value(sample: SdSampleF32) -> f32 {
    f32::from_bits(sample as u32)
}

fn q_state() -> Box<SdQState> {
    let mut s = Box::new(SdQState {
        opaque: [0; SD_Q_STATE_BYTES],
    });
    let rc = unsafe {
        sd_q_init(
            &mut *s,
            size_of::<SdQState>(),
            IMAGE_Q.as_ptr(),
            IMAGE_Q.len(),
        )
    };
    assert_eq!(rc, SD_OK);
    s
}

// Same as q_state for the f32 state: the C API has one init per number format.
fn f32_state() -> Box<SdF32State> {
    let mut s = Box::new(SdF32State {
        opaque: [0; SD_F32_STATE_BYTES],
    });
    let rc = unsafe {
        sd_f32_init(
            &mut *s,
            size_of::<SdF32State>(),
            IMAGE_F32.as_ptr(),
            IMAGE_F32.len(),
        )
    };
    assert_eq!(rc, SD_OK);
    s
}

#[test]
fn status_codes_are_distinct_and_named() {
    let codes = [
        SD_OK,
        SD_ERR_NULL_POINTER,
        SD_ERR_SHORT_BUFFER,
        SD_ERR_MISALIGNED_STATE,
        SD_ERR_STATE_TOO_SMALL,
        SD_ERR_CORRUPT_IMAGE,
        SD_ERR_INVALID_IMAGE,
        SD_ERR_WRONG_FORMAT,
        SD_ERR_UNSUPPORTED,
        SD_ERR_NOT_INITIALISED,
        SD_ERR_LENGTH_RANGE,
    ];
    let mut names = Vec::new();
    for (k, &c) in codes.iter().enumerate() {
        assert!(!codes[..k].contains(&c), "code {c} used twice");
        assert!(c <= 0, "code {c}: errors are negative");
        let name = unsafe { std::ffi::CStr::from_ptr(sd_status_name(c)) };
        let name = name.to_str().expect("ASCII name").to_owned();
        assert_ne!(name, "unknown status", "code {c} has no name");
        assert!(!names.contains(&name), "name {name:?} used twice");
        names.push(name);
    }
    let unknown = unsafe { std::ffi::CStr::from_ptr(sd_status_name(12345)) };
    assert_eq!(unknown.to_str(), Ok("unknown status"));
}

#[test]
fn null_pointers_are_refused() {
    let mut q = q_state();
    let mut f = f32_state();
    let (mut t_q, mut t_c) = (7i32, 7.0f32);
    let len = IMAGE_Q.len();
    unsafe {
        let cases: [(&str, SdStatus); 12] = [
            (
                "q init state",
                sd_q_init(ptr::null_mut(), SD_Q_STATE_BYTES, IMAGE_Q.as_ptr(), len),
            ),
            (
                "q init image",
                sd_q_init(&mut *q, SD_Q_STATE_BYTES, ptr::null(), len),
            ),
            (
                "f32 init state",
                sd_f32_init(ptr::null_mut(), SD_F32_STATE_BYTES, IMAGE_F32.as_ptr(), len),
            ),
            (
                "f32 init image",
                sd_f32_init(&mut *f, SD_F32_STATE_BYTES, ptr::null(), len),
            ),
            (
                "q update state",
                sd_q_update_temperature(ptr::null_mut(), 4_300_000),
            ),
            (
                "f32 update state",
                sd_f32_update_temperature(ptr::null_mut(), 4.3e6),
            ),
            (
                "q sample state",
                result_of(sd_q_compensate(ptr::null(), 1_000_000)),
            ),
            (
                "f32 sample state",
                result_of(sd_f32_compensate(ptr::null(), 1.0e6)),
            ),
            (
                "q temperature state",
                sd_q_temperature_q(ptr::null(), &mut t_q),
            ),
            (
                "q temperature out",
                sd_q_temperature_q(&*q, ptr::null_mut()),
            ),
            (
                "f32 temperature out",
                sd_f32_temperature_c(&*f, ptr::null_mut()),
            ),
            (
                "check image",
                sd_image_check(ptr::null(), len, ptr::null_mut()),
            ),
        ];
        for (what, rc) in cases {
            assert_eq!(rc, SD_ERR_NULL_POINTER, "{what}");
        }
        assert_eq!(
            sd_f32_temperature_c(ptr::null(), &mut t_c),
            SD_ERR_NULL_POINTER
        );
        assert_eq!(
            sd_image_check_q(ptr::null(), len, ptr::null_mut()),
            SD_ERR_NULL_POINTER
        );
    }
    assert_eq!((t_q, t_c), (7, 7.0), "written on error");
    // A refused sample has value 0.
    let refused = unsafe { sd_q_compensate(ptr::null(), 1_000_000) };
    assert_eq!(q_value(refused), 0);
    let refused = unsafe { sd_f32_compensate(ptr::null(), 1.0e6) };
    assert_eq!(f32_value(refused).to_bits(), 0);
    // The earlier failed inits (null image) left the blocks not initialised.
    let sample = unsafe { sd_q_compensate(&*q, 1_000_000) };
    assert_eq!(result_of(sample), SD_ERR_NOT_INITIALISED);
}

#[test]
fn short_buffers_are_refused() {
    let mut block = Block::new();
    for len in [0, 1, 79, 80, IMAGE_Q.len() - 1] {
        let rc = unsafe { sd_q_init(block.at(0), SD_Q_STATE_BYTES, IMAGE_Q.as_ptr(), len) };
        assert_eq!(rc, SD_ERR_SHORT_BUFFER, "Q image cut to {len} bytes");
        let rc = unsafe { sd_f32_init(block.at(0), SD_F32_STATE_BYTES, IMAGE_F32.as_ptr(), len) };
        assert_eq!(rc, SD_ERR_SHORT_BUFFER, "f32 image cut to {len} bytes");
        let rc = unsafe { sd_image_check(IMAGE_Q.as_ptr(), len, ptr::null_mut()) };
        assert_eq!(rc, SD_ERR_SHORT_BUFFER, "check of {len} bytes");
    }
    let rc = unsafe { sd_q_init(block.at(0), SD_Q_STATE_BYTES, IMAGE_Q.as_ptr(), usize::MAX) };
    assert_eq!(rc, SD_ERR_LENGTH_RANGE);
}

#[test]
fn misaligned_and_undersized_state_blocks_are_refused() {
    let mut block = Block::new();
    let (q, f) = (IMAGE_Q, IMAGE_F32);
    for offset in 1..SD_STATE_ALIGN {
        let rc = unsafe { sd_q_init(block.at(offset), SD_Q_STATE_BYTES, q.as_ptr(), q.len()) };
        assert_eq!(rc, SD_ERR_MISALIGNED_STATE, "Q block at +{offset}");
        let rc = unsafe { sd_f32_init(block.at(offset), SD_F32_STATE_BYTES, f.as_ptr(), f.len()) };
        assert_eq!(rc, SD_ERR_MISALIGNED_STATE, "f32 block at +{offset}");
    }
    for bytes in [0, 1, SD_Q_STATE_BYTES - 1] {
        let rc = unsafe { sd_q_init(block.at(0), bytes, q.as_ptr(), q.len()) };
        assert_eq!(rc, SD_ERR_STATE_TOO_SMALL, "Q block of {bytes} bytes");
    }
    let rc = unsafe { sd_f32_init(block.at(0), SD_F32_STATE_BYTES - 1, f.as_ptr(), f.len()) };
    assert_eq!(rc, SD_ERR_STATE_TOO_SMALL);
    // A valid state used through a misaligned pointer is refused before
    // any read through it.
    let rc = unsafe { sd_q_init(block.at(0), SD_Q_STATE_BYTES, q.as_ptr(), q.len()) };
    assert_eq!(rc, SD_OK);
    for offset in 1..SD_STATE_ALIGN {
        unsafe {
            let sample = sd_q_compensate(block.at(offset), 1_000_000);
            assert_eq!(result_of(sample), SD_ERR_MISALIGNED_STATE, "+{offset}");
            assert_eq!(q_value(sample), 0);
            assert_eq!(
                sd_q_update_temperature(block.at(offset), 4_300_000),
                SD_ERR_MISALIGNED_STATE,
                "+{offset}"
            );
        }
    }
    // Same misaligned-pointer loop as the Q state above: the C API has one set of calls per format.
    // The same for an f32 state.
    let rc = unsafe { sd_f32_init(block.at(0), SD_F32_STATE_BYTES, f.as_ptr(), f.len()) };
    assert_eq!(rc, SD_OK);
    for offset in 1..SD_STATE_ALIGN {
        unsafe {
            let sample = sd_f32_compensate(block.at(offset), 1.0e6);
            assert_eq!(result_of(sample), SD_ERR_MISALIGNED_STATE, "+{offset}");
            assert_eq!(
                sd_f32_update_temperature(block.at(offset), 4.3e6),
                SD_ERR_MISALIGNED_STATE,
                "+{offset}"
            );
        }
    }
}

#[test]
fn a_state_copied_after_init_is_refused() {
    // The key of a block is its own address: a copy elsewhere is not
    // initialised (init it again there).
    let q = q_state();
    let mut copy = Box::new(SdQState { opaque: q.opaque });
    let sample = unsafe { sd_q_compensate(&*copy, 1_000_000) };
    assert_eq!(result_of(sample), SD_ERR_NOT_INITIALISED);
    assert_eq!(
        unsafe { sd_q_update_temperature(&mut *copy, 4_300_000) },
        SD_ERR_NOT_INITIALISED
    );
    let rc = unsafe {
        sd_q_init(
            &mut *copy,
            SD_Q_STATE_BYTES,
            IMAGE_Q.as_ptr(),
            IMAGE_Q.len(),
        )
    };
    assert_eq!(rc, SD_OK);
    assert_eq!(
        status(result_of(unsafe { sd_q_compensate(&*copy, 1_000_000) })),
        SD_OK
    );
}

#[test]
fn corrupt_and_invalid_images_are_refused() {
    let mut block = Block::new();
    let init_q = |block: &mut Block, img: &[u8]| unsafe {
        sd_q_init(block.at(0), SD_Q_STATE_BYTES, img.as_ptr(), img.len())
    };
    // One flipped bit in the middle (the gain column): only the CRC sees it.
    let mut flipped = IMAGE_Q.to_vec();
    let mid = flipped.len() / 2;
    flipped[mid] ^= 0x10;
    assert_eq!(init_q(&mut block, &flipped), SD_ERR_CORRUPT_IMAGE);
    // Not an image at all.
    let mut magic = IMAGE_Q.to_vec();
    magic[0] = b'X';
    assert_eq!(init_q(&mut block, &magic), SD_ERR_INVALID_IMAGE);
    // Bytes beyond the declared length.
    let mut long = IMAGE_Q.to_vec();
    long.push(0);
    assert_eq!(init_q(&mut block, &long), SD_ERR_INVALID_IMAGE);
    // The other number format.
    assert_eq!(init_q(&mut block, IMAGE_F32), SD_ERR_WRONG_FORMAT);
    let rc = unsafe {
        sd_f32_init(
            block.at(0),
            SD_F32_STATE_BYTES,
            IMAGE_Q.as_ptr(),
            IMAGE_Q.len(),
        )
    };
    assert_eq!(rc, SD_ERR_WRONG_FORMAT);
    let rc = unsafe { sd_image_check_q(IMAGE_F32.as_ptr(), IMAGE_F32.len(), ptr::null_mut()) };
    assert_eq!(rc, SD_ERR_WRONG_FORMAT);
    let rc = unsafe { sd_image_check(flipped.as_ptr(), flipped.len(), ptr::null_mut()) };
    assert_eq!(rc, SD_ERR_CORRUPT_IMAGE);
}

#[test]
fn calls_in_the_wrong_order_are_refused() {
    // Zero-filled (never initialised) blocks.
    let mut q = Box::new(SdQState {
        opaque: [0; SD_Q_STATE_BYTES],
    });
    let mut f = Box::new(SdF32State {
        opaque: [0; SD_F32_STATE_BYTES],
    });
    unsafe {
        assert_eq!(
            result_of(sd_q_compensate(&*q, 1_000_000)),
            SD_ERR_NOT_INITIALISED
        );
        assert_eq!(
            sd_q_update_temperature(&mut *q, 4_300_000),
            SD_ERR_NOT_INITIALISED
        );
        assert_eq!(
            result_of(sd_f32_compensate(&*f, 1.0e6)),
            SD_ERR_NOT_INITIALISED
        );
        assert_eq!(
            sd_f32_update_temperature(&mut *f, 4.3e6),
            SD_ERR_NOT_INITIALISED
        );
    }
    // A block initialised for the other arithmetic is not initialised for
    // this one.
    let q = q_state();
    let f = f32_state();
    unsafe {
        let q_as_f32 = (&*q as *const SdQState).cast::<SdF32State>();
        assert_eq!(
            result_of(sd_f32_compensate(q_as_f32, 1.0e6)),
            SD_ERR_NOT_INITIALISED
        );
        let f_as_q = (&*f as *const SdF32State).cast::<SdQState>();
        assert_eq!(
            result_of(sd_q_compensate(f_as_q, 1_000_000)),
            SD_ERR_NOT_INITIALISED
        );
    }
    // A good state whose re-initialisation fails is not initialised.
    let mut q = q_state();
    let rc = unsafe {
        sd_q_init(
            &mut *q,
            SD_Q_STATE_BYTES,
            IMAGE_F32.as_ptr(),
            IMAGE_F32.len(),
        )
    };
    assert_eq!(rc, SD_ERR_WRONG_FORMAT);
    assert_eq!(
        result_of(unsafe { sd_q_compensate(&*q, 1_000_000) }),
        SD_ERR_NOT_INITIALISED
    );
    // A sample before the first temperature update is computed but flagged.
    let q = q_state();
    let flags = result_of(unsafe { sd_q_compensate(&*q, 1_000_000) });
    assert!(flags >= 0, "result {flags}");
    assert_ne!(
        flags & i32::from(SD_FLAG_NO_TEMPERATURE),
        0,
        "flags {flags:#x}"
    );
    let f = f32_state();
    let flags = result_of(unsafe { sd_f32_compensate(&*f, 1.0e6) });
    assert!(flags >= 0, "result {flags}");
    assert_ne!(
        flags & i32::from(SD_FLAG_NO_TEMPERATURE),
        0,
        "flags {flags:#x}"
    );
}

/// Tolerance: none. The C ABI calls the same functions on the same image.
#[test]
fn results_equal_the_crate_called_directly() {
    let view_q = TableView::parse_q(IMAGE_Q).expect("demo Q image");
    let mut direct_q = FixedCompensator::new(&view_q).expect("Q image");
    let view_f = TableView::parse(IMAGE_F32).expect("demo f32 image");
    let mut direct_f = Compensator::new(&view_f).expect("f32 image");
    let mut q = q_state();
    let mut f = f32_state();
    let samples = stream();
    assert_eq!(samples.len(), 120, "demo stream");
    let mut flagged = 0;
    for (i, &(raw, temp)) in samples.iter().enumerate() {
        let (mut t_q, mut t_c) = (0, f32::NAN);
        let (tq_flags, r, tf_flags, rf) = unsafe {
            let tq_flags = sd_q_update_temperature(&mut *q, temp);
            let r = sd_q_compensate(&*q, raw);
            assert_eq!(sd_q_temperature_q(&*q, &mut t_q), SD_OK);
            let tf_flags = sd_f32_update_temperature(&mut *f, temp as f32);
            let rf = sd_f32_compensate(&*f, raw as f32);
            assert_eq!(sd_f32_temperature_c(&*f, &mut t_c), SD_OK);
            (tq_flags, r, tf_flags, rf)
        };
        let tq = direct_q.update_temperature(temp);
        let want_q = direct_q.compensate_sample(raw);
        let tf = direct_f.update_temperature(temp as f32);
        let want_f = direct_f.compensate_sample(raw as f32);
        assert_eq!(
            (q_value(r), result_of(r), tq_flags, t_q),
            (
                want_q.value,
                i32::from(want_q.status.bits()),
                i32::from(tq.bits()),
                direct_q.temperature_q()
            ),
            "Q sample {i}"
        );
        assert_eq!(
            (
                f32_value(rf).to_bits(),
                result_of(rf),
                tf_flags,
                t_c.to_bits()
            ),
            (
                want_f.value.to_bits(),
                i32::from(want_f.status.bits()),
                i32::from(tf.bits()),
                direct_f.temperature_c().to_bits()
            ),
            "f32 sample {i}"
        );
        flagged += usize::from(result_of(r) != 0);
    }
    // The stream ends with four fault samples, so flags are exercised too.
    assert!(flagged >= 4, "only {flagged} flagged samples");
}

#[test]
fn image_check_reports_the_header() {
    let mut info = SdImageInfo::default();
    let rc = unsafe { sd_image_check_q(IMAGE_Q.as_ptr(), IMAGE_Q.len(), &mut info) };
    assert_eq!(rc, SD_OK);
    let view = TableView::parse(IMAGE_Q).expect("demo Q image");
    assert_eq!(info.format, 1);
    assert_eq!(
        usize::from(info.temperature_nodes),
        view.temperature_nodes()
    );
    assert_eq!(
        usize::from(info.thermometer_nodes),
        view.thermometer_nodes()
    );
    assert_eq!(usize::from(info.channels), view.channel_count());
    assert_eq!(info.frac_output, view.q_format().output);
    assert_eq!(info.crc, view.crc());
    assert_eq!(
        info.simulated, 1,
        "the demo image is built from simulated data"
    );
    let rc = unsafe { sd_image_check(IMAGE_F32.as_ptr(), IMAGE_F32.len(), &mut info) };
    assert_eq!(rc, SD_OK);
    assert_eq!((info.format, info.frac_output), (0, 0));
}
