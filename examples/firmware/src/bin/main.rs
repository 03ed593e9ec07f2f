//! Demo and verification firmware: validates the embedded table images at
//! boot, shows that a corrupted image is refused, replays the simulated
//! sample stream through the compensators and prints one line per sample
//! (the f32 result as its exact bit pattern and in decimal, the integer
//! result as the raw i32) and one line with the polynomial baseline's
//! readings (`poly.rs`), for `tests/firmware_qemu.rs` to recompute on the
//! host. Exits 0 when every check passed, 1 otherwise.
//!
//! On the Cortex-M4F both paths run; on the Cortex-M0 (no FPU) only the
//! integer fixed-point path does.
// Same preamble as bench.rs: each binary is its own crate root.
#![no_std]
#![no_main]

use compensate::{FixedCompensator, ImageError, Status, TableView};
use cortex_m_rt::entry;
use cortex_m_semihosting::hprintln;
use semidrift_firmware::poly;
use semidrift_firmware::report::{FloatResult, PolyLine, SampleLine};
use semidrift_firmware::{rt, stream};

semidrift_firmware::printing_fault_handlers!();

/// Q-format table image (the integer path).
static IMAGE_Q: &[u8] = include_bytes!("../../data/well_level_q.bin");
/// f32 table image (the FPU path).
#[cfg(fpu)]
static IMAGE_F32: &[u8] = include_bytes!("../../data/well_level_f32.bin");
/// The simulated raw and temperature-signal codes.
static STREAM: &str = include_str!("../../data/well_level_stream.csv");

/// How an image is parsed: [`TableView::parse_q`] for the Q images (the
/// Cortex-M0 then links no f32 validation), [`TableView::parse`] otherwise.
type Parser<'a> = fn(&'a [u8]) -> Result<TableView<'a>, ImageError>;

/// Parses an image and prints what was found; `None` means refused.
fn validate<'a>(name: &str, bytes: &'a [u8], parse: Parser<'a>) -> Option<TableView<'a>> {
    match parse(bytes) {
        Ok(view) => {
            hprintln!(
                "image {} ok bytes={} t_nodes={} sig_nodes={} channels={}",
                name,
                bytes.len(),
                view.temperature_nodes(),
                view.thermometer_nodes(),
                view.channel_count()
            );
            Some(view)
        }
        Err(e) => {
            hprintln!("image {} rejected: {}", name, e);
            None
        }
    }
}

/// A compensator on `view`, or the unconfigured one that refuses to
/// compensate (every sample 0 with `TABLE_INVALID`).
fn fixed_compensator<'a>(view: Option<&TableView<'a>>) -> FixedCompensator<'a> {
    view.and_then(|v| FixedCompensator::new(v).ok())
        .unwrap_or(FixedCompensator::unconfigured())
}

/// Room for the copy that `corrupt_copy_is_refused` damages: the demo
/// images are 704 bytes; 2 KiB of the microbit board's 16 KiB RAM leaves room
/// for a larger plan (a larger image fails with a clear line, not a panic).
const CORRUPTION_BUFFER_BYTES: usize = 2048;

/// Flips one bit in a copy of `image` and checks the copy is refused and
/// that a compensator on it refuses to compensate. Returns `true` on the
/// expected outcome.
fn corrupt_copy_is_refused(image: &[u8]) -> bool {
    let mut copy = [0u8; CORRUPTION_BUFFER_BYTES];
    let Some(copy) = copy.get_mut(..image.len()) else {
        hprintln!("error: image larger than the {CORRUPTION_BUFFER_BYTES}-byte corruption buffer");
        return false;
    };
    copy.copy_from_slice(image);
    // A byte inside the gain column: only the CRC can catch this change.
    let at = copy.len() / 2;
    if let Some(b) = copy.get_mut(at) {
        *b ^= 0x10;
    }
    let view = validate("corrupted", copy, TableView::parse_q);
    let refused = view.is_none();
    let mut comp = fixed_compensator(view.as_ref());
    comp.update_temperature(4_194_304);
    let r = comp.compensate_sample(1_000_000);
    hprintln!(
        "refused sample value={} status={}",
        r.value,
        r.status.bits()
    );
    refused && r.value == 0 && r.status.contains(Status::TABLE_INVALID)
}

#[entry]
fn main() -> ! {
    let mut ok = true;
    let view_q = validate("q", IMAGE_Q, TableView::parse_q);
    ok &= view_q.is_some();
    let mut fixed = fixed_compensator(view_q.as_ref());

    #[cfg(fpu)]
    let mut float = {
        let view = validate("f32", IMAGE_F32, TableView::parse);
        ok &= view.is_some();
        view.and_then(|v| compensate::Compensator::new(&v).ok())
            .unwrap_or(compensate::Compensator::unconfigured())
    };

    if !corrupt_copy_is_refused(IMAGE_Q) {
        hprintln!("error: a corrupted image was not refused");
        ok = false;
    }

    let mut poly_q = poly::fitted_q();
    #[cfg(fpu)]
    let mut poly_f32 = poly::fitted_f32();

    let mut n = 0usize;
    for (i, sample) in stream::samples(STREAM).enumerate() {
        let s = match sample {
            Ok(s) => s,
            Err(e) => {
                hprintln!(
                    "error: well_level_stream.csv line {}: expected raw_code,temp_code",
                    e.line
                );
                rt::exit_failure();
            }
        };
        let tq = fixed.update_temperature(s.temp_code);
        let q = fixed.compensate_sample(s.raw_code);

        #[cfg(fpu)]
        let float_result = {
            let tf = float.update_temperature(s.temp_code as f32);
            let f = float.compensate_sample(s.raw_code as f32);
            Some(FloatResult::new(&float, f, tf))
        };
        #[cfg(not(fpu))]
        let float_result: Option<FloatResult> = None;
        let line = SampleLine::new(i, s, float_result, &fixed, q, tq);
        hprintln!("{}", line);

        poly_q.update_temperature(s.temp_code);
        #[cfg(fpu)]
        let f32_value = {
            poly_f32.update_temperature(s.temp_code as f32);
            Some(poly_f32.sample(s.raw_code as f32))
        };
        #[cfg(not(fpu))]
        let f32_value = None;
        let line = PolyLine {
            index: i,
            f32_value,
            q: poly_q.sample(s.raw_code),
        };
        hprintln!("{}", line);
        n += 1;
    }
    hprintln!("done samples={} ok={}", n, ok);
    if ok {
        rt::exit_success()
    } else {
        rt::exit_failure()
    }
}
