//! The end-of-line check's RAM mailbox: the word layout the `eol` binary
//! serves and `semidrift eol` (host-tools `station/files/eol_target.rs`)
//! drives through a debug server. Both sides state the layout; the magic
//! and version words guard against a mismatch, and `tests/eol_gdb.rs`
//! runs them together.
//!
//! Every field is a little-endian 32-bit word at `4 * index` from the
//! mailbox symbol `SEMIDRIFT_EOL_MAILBOX`. The host writes a request while
//! the core is halted at `semidrift_eol_ready`, lets it run, and reads the
//! reply when it halts there again.

/// Number of 32-bit words in the mailbox.
pub const WORDS: usize = OUTPUTS + 3 * CAPACITY;
/// Rows one request carries at most (20 bytes each: 2 input and 3 output
/// words; 64 rows keep the mailbox under 1.4 KiB of the microbit's 16 KiB).
pub const CAPACITY: usize = 64;
/// Value of [`MAGIC`] once the firmware is up: `SDEL` in ASCII.
pub const MAGIC_WORD: u32 = u32::from_le_bytes(*b"SDEL");
/// Layout version of this file.
pub const VERSION_WORD: u32 = 1;

/// Firmware: [`MAGIC_WORD`], written at boot.
pub const MAGIC: usize = 0;
/// Firmware: [`VERSION_WORD`].
pub const VERSION: usize = 1;
/// Firmware: [`CAPACITY`].
pub const ROW_CAPACITY: usize = 2;
/// Host: sequence number of the request; a new value asks for a run.
pub const REQUEST_SEQ: usize = 3;
/// Firmware: the request sequence number last served.
pub const REPLY_SEQ: usize = 4;
/// Host: address of the flashed table image.
pub const IMAGE_ADDRESS: usize = 5;
/// Host: length of the image, bytes.
pub const IMAGE_LEN: usize = 6;
/// Host: rows in this request.
pub const ROWS: usize = 7;
/// Firmware: outcome, one of the `RESULT_*` values.
pub const RESULT: usize = 8;
/// Firmware: the image's number format (0 f32, 1 Q).
pub const FORMAT: usize = 9;
/// Firmware: the runtime crate's message for a refusal, UTF-8, zero-padded.
pub const MESSAGE: usize = 10;
/// Words of [`MESSAGE`].
pub const MESSAGE_WORDS: usize = 24;
/// Host: per row, the temperature-signal word then the raw word (f32 bits
/// for an f32 image; i32 for a Q image, the signal in the image's Q format).
pub const INPUTS: usize = MESSAGE + MESSAGE_WORDS;
/// Firmware: per row, the value word, the temperature word (f32 bits or the
/// Q temperature) and the status bits (temperature update | sample).
pub const OUTPUTS: usize = INPUTS + 2 * CAPACITY;

/// Every row was run.
pub const RESULT_OK: u32 = 1;
/// The request was malformed (row count, address range); see the message.
pub const RESULT_BAD_REQUEST: u32 = 2;
/// The runtime crate refused the image in memory; see the message.
pub const RESULT_IMAGE_REJECTED: u32 = 3;
