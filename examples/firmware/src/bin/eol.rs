//! End-of-line check firmware: runs the table image flashed into the part
//! on rows a calibration station writes into a RAM mailbox through a debug
//! server, and writes the compensator's results back
//! (`semidrift eol`, layout in `eol_mailbox.rs`).
//!
//! At boot it fills the mailbox's identification words, then halts at
//! `semidrift_eol_ready` (the host's breakpoint) for each request. It reads
//! the image in place, as the product firmware would: the bytes checked are
//! the bytes flashed. Both number formats run on both boards (f32 in
//! software on the Cortex-M0). Built only with the `eol` feature, which
//! also compiles the cubic kernel, so every image the station builds runs
//! here while the benchmark binaries keep their own build.
#![no_std]
#![no_main]

use compensate::image::NumberFormat;
use compensate::{Compensator, FixedCompensator, TableView};
use core::fmt::Write;
use core::sync::atomic::{Ordering, compiler_fence};
use cortex_m_rt::entry;
use semidrift_firmware::eol_mailbox as mb;

semidrift_firmware::printing_fault_handlers!();

/// The mailbox. Exported under this name so the host finds it in the ELF.
#[unsafe(no_mangle)]
static mut SEMIDRIFT_EOL_MAILBOX: [u32; mb::WORDS] = [0; mb::WORDS];

/// Longest image the firmware accepts, bytes (the host's own cap on images,
/// `host-tools` `station/inputs/limits.rs`, is far below it).
const MAX_IMAGE_BYTES: u32 = 1 << 20;

/// Reads mailbox word `i` (0 past the end).
fn get(i: usize) -> u32 {
    if i >= mb::WORDS {
        return 0;
    }
    // SAFETY: `i` is in bounds. The debugger writes the mailbox only while
    // the core is halted and nothing else in this single-threaded program
    // (no interrupts are enabled) touches it; volatile, because those
    // writes are invisible to the compiler.
    unsafe {
        (&raw const SEMIDRIFT_EOL_MAILBOX)
            .cast::<u32>()
            .add(i)
            .read_volatile()
    }
}

/// Writes mailbox word `i` (ignored past the end).
fn set(i: usize, value: u32) {
    if i >= mb::WORDS {
        return;
    }
    // SAFETY: as in `get`.
    unsafe {
        (&raw mut SEMIDRIFT_EOL_MAILBOX)
            .cast::<u32>()
            .add(i)
            .write_volatile(value)
    }
}

/// The host's breakpoint: the core halts here before every request.
#[inline(never)]
#[unsafe(no_mangle)]
pub extern "C" fn semidrift_eol_ready() {
    compiler_fence(Ordering::SeqCst);
    // A side effect the compiler keeps, so calls to this function stay.
    cortex_m::asm::nop();
    compiler_fence(Ordering::SeqCst);
}

/// Text into the mailbox's message words (cut at their length).
struct Message {
    bytes: [u8; 4 * mb::MESSAGE_WORDS],
    len: usize,
}

impl Write for Message {
    fn write_str(&mut self, s: &str) -> core::fmt::Result {
        for &b in s.as_bytes() {
            if let Some(slot) = self.bytes.get_mut(self.len) {
                *slot = b;
                self.len += 1;
            }
        }
        Ok(())
    }
}

/// Ends a request with `result` and the message `args`.
fn reply(result: u32, args: core::fmt::Arguments) {
    let mut m = Message {
        bytes: [0; 4 * mb::MESSAGE_WORDS],
        len: 0,
    };
    let _ = m.write_fmt(args);
    for (k, w) in m.bytes.chunks_exact(4).enumerate() {
        set(
            mb::MESSAGE + k,
            u32::from_le_bytes([w[0], w[1], w[2], w[3]]),
        );
    }
    set(mb::RESULT, result);
}

/// Runs one request.
fn serve() {
    let address = get(mb::IMAGE_ADDRESS);
    let len = get(mb::IMAGE_LEN);
    let rows = get(mb::ROWS) as usize;
    if rows > mb::CAPACITY {
        return reply(
            mb::RESULT_BAD_REQUEST,
            format_args!("{rows} rows, capacity {}", mb::CAPACITY),
        );
    }
    if address == 0 || len == 0 || len > MAX_IMAGE_BYTES || address.checked_add(len).is_none() {
        return reply(
            mb::RESULT_BAD_REQUEST,
            format_args!("image range {address:#x}+{len} refused"),
        );
    }
    // SAFETY: the station flashed the image at `address` and names its
    // range (non-null, no wrap, checked above); flash is not written while
    // the slice lives (the debugger writes only while the core is halted at
    // `semidrift_eol_ready`, after this function returned). A range that is
    // not memory faults, and the fault handler ends the run.
    let image = unsafe { core::slice::from_raw_parts(address as usize as *const u8, len as usize) };
    let view = match TableView::parse(image) {
        Ok(v) => v,
        Err(e) => return reply(mb::RESULT_IMAGE_REJECTED, format_args!("{e}")),
    };
    match view.format() {
        NumberFormat::Q => {
            set(mb::FORMAT, 1);
            let mut c = match FixedCompensator::new(&view) {
                Ok(c) => c,
                Err(e) => return reply(mb::RESULT_IMAGE_REJECTED, format_args!("{e}")),
            };
            for i in 0..rows {
                let ts = c.update_temperature(get(mb::INPUTS + 2 * i) as i32);
                let r = c.compensate_sample(get(mb::INPUTS + 2 * i + 1) as i32);
                set(mb::OUTPUTS + 3 * i, r.value as u32);
                set(mb::OUTPUTS + 3 * i + 1, c.temperature_q() as u32);
                set(mb::OUTPUTS + 3 * i + 2, u32::from((ts | r.status).bits()));
            }
        }
        _ => {
            set(mb::FORMAT, 0);
            let mut c = match Compensator::new(&view) {
                Ok(c) => c,
                Err(e) => return reply(mb::RESULT_IMAGE_REJECTED, format_args!("{e}")),
            };
            for i in 0..rows {
                let ts = c.update_temperature(f32::from_bits(get(mb::INPUTS + 2 * i)));
                let r = c.compensate_sample(f32::from_bits(get(mb::INPUTS + 2 * i + 1)));
                set(mb::OUTPUTS + 3 * i, r.value.to_bits());
                set(mb::OUTPUTS + 3 * i + 1, c.temperature_c().to_bits());
                set(mb::OUTPUTS + 3 * i + 2, u32::from((ts | r.status).bits()));
            }
        }
    }
    reply(mb::RESULT_OK, format_args!(""));
}

#[entry]
fn main() -> ! {
    set(mb::VERSION, mb::VERSION_WORD);
    set(mb::ROW_CAPACITY, mb::CAPACITY as u32);
    set(mb::MAGIC, mb::MAGIC_WORD);
    loop {
        semidrift_eol_ready();
        let request = get(mb::REQUEST_SEQ);
        if request != get(mb::REPLY_SEQ) {
            serve();
            set(mb::REPLY_SEQ, request);
        }
    }
}
