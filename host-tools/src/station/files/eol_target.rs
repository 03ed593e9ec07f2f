//! Running rows through the end-of-line check firmware on a part
//! (`examples/firmware/src/bin/eol.rs`) over a debug server: the rows go
//! into the firmware's RAM mailbox, the core runs from one halt at
//! `semidrift_eol_ready` to the next, and the results come back. The
//! mailbox's word layout is stated here and in the firmware's
//! `eol_mailbox.rs`; its magic and version words guard against a mismatch.
//!
//! Only the mailbox (the ELF symbol's address range) is ever written; the
//! flashed image is read by the firmware in place.

use crate::gdb_remote::{Remote, RemoteError};
use crate::station::apply::{RuntimeInput, RuntimeOutput};
use std::time::Duration;

/// Mailbox symbol in the firmware's ELF.
pub const MAILBOX_SYMBOL: &str = "SEMIDRIFT_EOL_MAILBOX";
/// The function the core halts in before each request.
pub const READY_SYMBOL: &str = "semidrift_eol_ready";
/// Magic word of a running EOL firmware (`SDEL`).
pub const MAGIC_WORD: u32 = u32::from_le_bytes(*b"SDEL");
/// Mailbox layout version this module speaks.
pub const VERSION_WORD: u32 = 1;
/// How long one request may run on the target (QEMU serves 64 rows in
/// milliseconds; a real part at a few MHz in well under a second).
pub const RUN_TIMEOUT: Duration = Duration::from_secs(20);

// Word indices (see the firmware's `eol_mailbox.rs`).
// Constant lists look alike (e.g. physics/mobility.rs): these are mailbox words.
const MAGIC: u32 = 0;
const VERSION: u32 = 1;
const ROW_CAPACITY: u32 = 2;
const REQUEST_SEQ: u32 = 3;
const REPLY_SEQ: u32 = 4;
const IMAGE_ADDRESS: u32 = 5;
const RESULT: u32 = 8;
const MESSAGE: u32 = 10;
const MESSAGE_WORDS: u32 = 24;
const INPUTS: u32 = MESSAGE + MESSAGE_WORDS;
const RESULT_OK: u32 = 1;
const RESULT_IMAGE_REJECTED: u32 = 3;
/// Largest row capacity believed from a device (keeps a garbage capacity
/// word from sizing huge reads).
const MAX_CAPACITY: u32 = 4096;

/// Where the EOL firmware keeps its mailbox and halts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct FirmwareSymbols {
    /// Mailbox address.
    pub mailbox: u32,
    /// Mailbox size, bytes.
    pub mailbox_bytes: u32,
    /// Address of the ready function (Thumb bit cleared).
    pub ready: u32,
}

/// Why running rows on the target failed; each names the step.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum EolTargetError {
    /// The firmware ELF is unreadable or lacks a symbol.
    #[error("{0}")]
    Symbols(String),
    /// Talking to the server failed.
    #[error(transparent)]
    Remote(#[from] RemoteError),
    /// The core did not halt at the ready function.
    #[error(
        "the target halted at pc {pc:#010x}, not at {READY_SYMBOL} ({ready:#010x}): is the end-of-line firmware running?"
    )]
    NotReady {
        /// Where it halted.
        pc: u32,
        /// Where it should have.
        ready: u32,
    },
    /// The mailbox does not hold the firmware's identification.
    #[error(
        "no end-of-line firmware answers at {mailbox:#010x}: magic {magic:#010x}, version {version} (expected {MAGIC_WORD:#010x}, version {VERSION_WORD}, capacity 1..={MAX_CAPACITY} rows within the {mailbox_bytes}-byte symbol)"
    )]
    NoFirmware {
        /// Mailbox address.
        mailbox: u32,
        /// Mailbox size from the ELF, bytes.
        mailbox_bytes: u32,
        /// Magic word found.
        magic: u32,
        /// Version word found.
        version: u32,
    },
    /// The firmware did not serve the request (sequence number unchanged).
    #[error("request {request}: the firmware halted without serving it (reply {reply})")]
    NotServed {
        /// Request sequence number written.
        request: u32,
        /// Reply sequence number read.
        reply: u32,
    },
    /// The runtime crate on the device refused the image in its memory.
    #[error("the device refused the image at {address:#010x}: {message}")]
    ImageRejected {
        /// Image address.
        address: u32,
        /// The device's message.
        message: String,
    },
    /// The firmware refused the request itself.
    #[error("the firmware refused request {request} (result {result}): {message}")]
    Refused {
        /// Request sequence number.
        request: u32,
        /// Result word.
        result: u32,
        /// The device's message.
        message: String,
    },
    /// A write would leave the mailbox (a bug; nothing was written).
    #[error(
        "refused to write words {first}..{end} outside the {mailbox_bytes}-byte mailbox at {mailbox:#010x}"
    )]
    OutsideMailbox {
        /// Mailbox address.
        mailbox: u32,
        /// Mailbox size, bytes.
        mailbox_bytes: u32,
        /// First word.
        first: u32,
        /// End word (exclusive).
        end: u64,
    },
}

/// Finds the mailbox and the ready function in the EOL firmware's ELF.
pub fn firmware_symbols(elf: &[u8]) -> Result<FirmwareSymbols, EolTargetError> {
    use object::{Object, ObjectSymbol};
    let file = object::File::parse(elf)
        .map_err(|e| EolTargetError::Symbols(format!("not an ELF file: {e}")))?;
    if file.architecture() != object::Architecture::Arm {
        return Err(EolTargetError::Symbols(format!(
            "an ELF for {:?}, not for 32-bit ARM",
            file.architecture()
        )));
    }
    let find = |name: &str| {
        file.symbols()
            .find(|s| s.name() == Ok(name))
            .map(|s| (s.address(), s.size()))
            .ok_or_else(|| {
                EolTargetError::Symbols(format!(
                    "no symbol {name}: not the end-of-line firmware (examples/firmware, --features eol --bin eol)"
                ))
            })
    };
    let (mailbox, size) = find(MAILBOX_SYMBOL)?;
    let (ready, _) = find(READY_SYMBOL)?;
    let word = |v: u64, what: &str| {
        u32::try_from(v)
            .map_err(|_| EolTargetError::Symbols(format!("{what} {v:#x} is not a 32-bit address")))
    };
    Ok(FirmwareSymbols {
        mailbox: word(mailbox, MAILBOX_SYMBOL)?,
        mailbox_bytes: word(size, "mailbox size")?,
        ready: word(ready, READY_SYMBOL)? & !1,
    })
}

/// Refuses `count` words from word `first` unless all lie inside the
/// mailbox symbol's range: the only memory `run_rows` writes.
pub fn check_in_mailbox(
    symbols: &FirmwareSymbols,
    first: u32,
    count: usize,
) -> Result<(), EolTargetError> {
    let end = u64::from(first) + count as u64;
    if end * 4 > u64::from(symbols.mailbox_bytes) {
        return Err(EolTargetError::OutsideMailbox {
            mailbox: symbols.mailbox,
            mailbox_bytes: symbols.mailbox_bytes,
            first,
            end,
        });
    }
    Ok(())
}

/// What the device computed, and how it was asked.
#[derive(Debug, Clone)]
pub struct DeviceRun {
    /// One result per input row, in order.
    pub outputs: Vec<RuntimeOutput>,
    /// Requests sent (rows go in batches of the mailbox's capacity).
    pub requests: usize,
    /// The mailbox's row capacity.
    pub capacity: u32,
    /// Breakpoint type used (1 hardware, 0 software).
    pub breakpoint: u8,
}

/// The mailbox of one connected target.
struct Mailbox<'a> {
    remote: &'a mut Remote,
    symbols: FirmwareSymbols,
    /// Breakpoint type in use at the ready function.
    breakpoint: u8,
}

impl Mailbox<'_> {
    fn word_address(&self, index: u32) -> u32 {
        self.symbols.mailbox.wrapping_add(4 * index)
    }

    fn read(&mut self, first: u32, count: u32) -> Result<Vec<u32>, EolTargetError> {
        let bytes = self
            .remote
            .read_memory(self.word_address(first), 4 * count as usize)?;
        Ok(bytes
            .chunks_exact(4)
            .map(|w| u32::from_le_bytes([w[0], w[1], w[2], w[3]]))
            .collect())
    }

    /// Writes words from `first`, refusing anything past the mailbox.
    fn write(&mut self, first: u32, words: &[u32]) -> Result<(), EolTargetError> {
        check_in_mailbox(&self.symbols, first, words.len())?;
        let bytes: Vec<u8> = words.iter().flat_map(|w| w.to_le_bytes()).collect();
        self.remote
            .write_memory(self.word_address(first), &bytes)
            .map_err(EolTargetError::from)
    }

    /// Runs the core to its next halt, which must be the ready function.
    /// Halted on the breakpoint itself, it first steps off it with the
    /// breakpoint removed (a server stops again at once otherwise).
    fn run_to_ready(&mut self, step: &str) -> Result<(), EolTargetError> {
        if self.remote.read_pc()? == self.symbols.ready {
            self.remote
                .remove_breakpoint(self.symbols.ready, self.breakpoint)?;
            self.remote.step()?;
            self.breakpoint = self.remote.insert_breakpoint(self.symbols.ready)?;
        }
        self.remote.continue_until_stop(step, RUN_TIMEOUT)?;
        let pc = self.remote.read_pc()?;
        if pc != self.symbols.ready {
            return Err(EolTargetError::NotReady {
                pc,
                ready: self.symbols.ready,
            });
        }
        Ok(())
    }

    fn message(&mut self) -> Result<String, EolTargetError> {
        let words = self.read(MESSAGE, MESSAGE_WORDS)?;
        let bytes: Vec<u8> = words.iter().flat_map(|w| w.to_le_bytes()).collect();
        let end = bytes.iter().position(|&b| b == 0).unwrap_or(bytes.len());
        Ok(String::from_utf8_lossy(&bytes[..end])
            .escape_debug()
            .to_string())
    }
}

/// Runs `inputs` through the image flashed at `image_address` (`image_len`
/// bytes) on the target at `server`, whose EOL firmware has `symbols`.
/// The target is halted first and left halted at the ready function, with
/// the breakpoint removed.
pub fn run_rows(
    server: &str,
    symbols: FirmwareSymbols,
    image_address: u32,
    image_len: u32,
    inputs: &[RuntimeInput],
) -> Result<DeviceRun, EolTargetError> {
    let mut remote = Remote::connect(server)?;
    remote.halt()?;
    let breakpoint = remote.insert_breakpoint(symbols.ready)?;
    let mut mb = Mailbox {
        remote: &mut remote,
        symbols,
        breakpoint,
    };
    let served = serve_all(&mut mb, image_address, image_len, inputs);
    let breakpoint = mb.breakpoint;
    // Leave no breakpoint behind, also after a failed check (best effort
    // then: the first error is the one reported).
    let removed = remote.remove_breakpoint(symbols.ready, breakpoint);
    let (outputs, requests, capacity) = served?;
    removed?;
    Ok(DeviceRun {
        outputs,
        requests,
        capacity,
        breakpoint,
    })
}

/// Runs every batch of `inputs` through the firmware behind `mb`; returns
/// the results, the requests sent and the mailbox's capacity.
fn serve_all(
    mb: &mut Mailbox,
    image_address: u32,
    image_len: u32,
    inputs: &[RuntimeInput],
) -> Result<(Vec<RuntimeOutput>, usize, u32), EolTargetError> {
    // From reset (or wherever it was) to the ready function: the firmware
    // has then filled its identification words.
    if mb.remote.read_pc()? != mb.symbols.ready {
        mb.run_to_ready("run to the ready point")?;
    }
    let head = mb.read(MAGIC, ROW_CAPACITY + 1)?;
    let at = |i: u32| head[i as usize];
    let (magic, version, capacity) = (at(MAGIC), at(VERSION), at(ROW_CAPACITY));
    let fits =
        (u64::from(INPUTS) + 5 * u64::from(capacity)) * 4 <= u64::from(mb.symbols.mailbox_bytes);
    if magic != MAGIC_WORD
        || version != VERSION_WORD
        || capacity == 0
        || capacity > MAX_CAPACITY
        || !fits
    {
        return Err(EolTargetError::NoFirmware {
            mailbox: mb.symbols.mailbox,
            mailbox_bytes: mb.symbols.mailbox_bytes,
            magic,
            version,
        });
    }
    let outputs_at = INPUTS + 2 * capacity;
    let mut outputs = Vec::with_capacity(inputs.len());
    let mut requests = 0;
    for batch in inputs.chunks(capacity as usize) {
        let n = batch.len() as u32;
        let words: Vec<u32> = batch
            .iter()
            .flat_map(|r| [r.signal_word, r.raw_word])
            .collect();
        mb.write(INPUTS, &words)?;
        let reply = mb.read(REPLY_SEQ, 1)?[0];
        let request = reply.wrapping_add(1);
        mb.write(IMAGE_ADDRESS, &[image_address, image_len, n])?;
        // The sequence number last: it is what asks for the run.
        mb.write(REQUEST_SEQ, &[request])?;
        mb.run_to_ready(&format!("run request {request} ({n} rows)"))?;
        requests += 1;
        let served = mb.read(REPLY_SEQ, 1)?[0];
        if served != request {
            return Err(EolTargetError::NotServed {
                request,
                reply: served,
            });
        }
        let result = mb.read(RESULT, 1)?[0];
        if result != RESULT_OK {
            let message = mb.message()?;
            return Err(if result == RESULT_IMAGE_REJECTED {
                EolTargetError::ImageRejected {
                    address: image_address,
                    message,
                }
            } else {
                EolTargetError::Refused {
                    request,
                    result,
                    message,
                }
            });
        }
        let words = mb.read(outputs_at, 3 * n)?;
        outputs.extend(words.chunks_exact(3).map(|w| RuntimeOutput {
            value_word: w[0],
            temperature_word: w[1],
            status_bits: w[2] as u8,
        }));
    }
    Ok((outputs, requests, capacity))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_stay_inside_the_mailbox() {
        let symbols = FirmwareSymbols {
            mailbox: 0x2000_0000,
            mailbox_bytes: 40,
            ready: 0x100,
        };
        // 10 words fit exactly; one more word, or a start past the end, does not.
        assert!(check_in_mailbox(&symbols, 0, 10).is_ok());
        assert!(check_in_mailbox(&symbols, 9, 1).is_ok());
        assert!(matches!(
            check_in_mailbox(&symbols, 9, 2),
            Err(EolTargetError::OutsideMailbox { end: 11, .. })
        ));
        assert!(check_in_mailbox(&symbols, u32::MAX, 1).is_err());
    }

    #[test]
    fn symbols_come_only_from_an_arm_elf_with_both_names() {
        let not_elf = firmware_symbols(b"SDRT not an ELF");
        assert!(matches!(not_elf, Err(EolTargetError::Symbols(m)) if m.contains("not an ELF")));
        // This test executable is an ELF, but not a 32-bit ARM one.
        if cfg!(target_os = "linux") {
            let me = std::fs::read(std::env::current_exe().unwrap()).unwrap();
            let host = firmware_symbols(&me);
            assert!(
                matches!(&host, Err(EolTargetError::Symbols(m)) if m.contains("not for 32-bit ARM")),
                "{host:?}"
            );
        }
    }
}
