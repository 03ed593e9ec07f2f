//! Writing a table image into a part through a debug server (GDB remote
//! protocol, [`crate::gdb_remote`]) and proving the bytes landed: halt,
//! optional serial check against a serial record on the device, write,
//! read back byte for byte, CRC over the target's memory, then halt,
//! resume or reset as asked. Only `[address, address + image length)` is
//! ever written.

use crate::gdb_remote::{Remote, RemoteError};
use compensate::image::layout::{CRC_LEN, SERIAL_LEN, off};

/// What the target does after a successful flash.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum After {
    /// Stays halted (the connection is closed with the target stopped).
    Halt,
    /// Runs on (detach).
    Resume,
    /// Reset through the server's `system_reset` monitor command, then runs.
    Reset,
}

/// Where and how to flash.
#[derive(Debug, Clone)]
pub struct FlashTarget {
    /// Debug server, `HOST:PORT`.
    pub server: String,
    /// Flash address of the image.
    pub address: u32,
    /// Address of a 16-byte serial record on the device to compare with the
    /// image's serial field before writing (none: not checked).
    pub serial_address: Option<u32>,
}

/// What a flash did and measured (`flash --json`).
#[derive(Debug, Clone, serde::Serialize)]
pub struct FlashReport {
    /// Image serial field (text up to its first zero byte).
    pub serial: String,
    /// Flash address.
    pub address: u32,
    /// Bytes written and read back.
    pub bytes: usize,
    /// CRC-32 computed over the target's memory (equal to the image's).
    pub crc32: u32,
    /// `X` (binary) or `M` (hex) writes, `none` for a check only.
    pub write_packets: &'static str,
    /// The server's packet size, bytes.
    pub packet_size: usize,
    /// Whether the serial record on the device was compared.
    pub serial_checked: bool,
    /// Whether bytes were written (false for a read-back check only).
    pub written: bool,
    /// What the target did afterwards.
    pub after: After,
    /// Safety refusals overridden for this flash, by option name
    /// (`--allow-simulated`, `--skip-verify`); set by the caller.
    pub overrides: Vec<&'static str>,
}

/// Why a flash failed; each names the step.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum FlashError {
    /// The image runs past the 32-bit address space at this address.
    #[error("image of {len} bytes at {address:#010x} runs past the 32-bit address space")]
    AddressRange {
        /// Address.
        address: u32,
        /// Image length.
        len: usize,
    },
    /// Talking to the server failed.
    #[error(transparent)]
    Remote(#[from] RemoteError),
    /// The device's serial record is not the image's serial.
    #[error(
        "serial check: device serial record at {address:#010x} is '{device}', the image is for '{image}'; nothing written"
    )]
    Serial {
        /// Serial record address.
        address: u32,
        /// What the device holds.
        device: String,
        /// What the image is for.
        image: String,
    },
    /// The bytes read back differ from the image.
    #[error(
        "read-back: {count} byte(s) differ, first at {first:#010x} (wrote {wrote:#04x}, read {read:#04x}); range {address:#010x}..{end:#010x} is not the image"
    )]
    ReadBack {
        /// Image start.
        address: u32,
        /// Image end (exclusive).
        end: u64,
        /// First differing address.
        first: u64,
        /// Byte written there.
        wrote: u8,
        /// Byte read there.
        read: u8,
        /// How many bytes differ.
        count: usize,
    },
    /// The CRC over the target's memory is not the image's stored CRC.
    #[error("CRC over target memory {computed:#010x} != stored {stored:#010x}")]
    Crc {
        /// Stored in the image.
        stored: u32,
        /// Computed over the bytes read back.
        computed: u32,
    },
}

impl FlashError {
    /// Whether the error is a failed check (as opposed to a communication
    /// failure or bad input).
    pub fn is_check(&self) -> bool {
        matches!(
            self,
            FlashError::Serial { .. } | FlashError::ReadBack { .. } | FlashError::Crc { .. }
        )
    }
}

fn text(bytes: &[u8]) -> String {
    let end = bytes.iter().position(|&b| b == 0).unwrap_or(bytes.len());
    String::from_utf8_lossy(&bytes[..end])
        .escape_debug()
        .to_string()
}

/// Flashes `image` (already parsed and checked by the caller) to `target`,
/// or with `write = false` only reads the range back and checks it.
pub fn flash(
    image: &[u8],
    target: &FlashTarget,
    write: bool,
    after: After,
) -> Result<FlashReport, FlashError> {
    let len = image.len();
    if u64::from(target.address) + len as u64 > 1 << 32 {
        return Err(FlashError::AddressRange {
            address: target.address,
            len,
        });
    }
    let serial_bytes = &image[off::SERIAL..off::SERIAL + SERIAL_LEN];
    let mut remote = Remote::connect(&target.server)?;
    remote.halt()?;
    if let Some(at) = target.serial_address {
        let device = remote.read_memory(at, SERIAL_LEN)?;
        if device != serial_bytes {
            return Err(FlashError::Serial {
                address: at,
                device: text(&device),
                image: text(serial_bytes),
            });
        }
    }
    if write {
        remote.write_memory(target.address, image)?;
    }
    let back = remote.read_memory(target.address, len)?;
    let diffs: Vec<usize> = (0..len).filter(|&k| back[k] != image[k]).collect();
    if let Some(&k) = diffs.first() {
        return Err(FlashError::ReadBack {
            address: target.address,
            end: u64::from(target.address) + len as u64,
            first: u64::from(target.address) + k as u64,
            wrote: image[k],
            read: back[k],
            count: diffs.len(),
        });
    }
    let body = len - CRC_LEN;
    let stored = u32::from_le_bytes([back[body], back[body + 1], back[body + 2], back[body + 3]]);
    let computed = compensate::crc::crc32(&back[..body]);
    if stored != computed {
        return Err(FlashError::Crc { stored, computed });
    }
    match after {
        After::Halt => {}
        After::Resume => remote.detach()?,
        After::Reset => {
            remote.monitor("system_reset")?;
            remote.detach()?;
        }
    }
    Ok(FlashReport {
        serial: text(serial_bytes),
        address: target.address,
        bytes: len,
        crc32: computed,
        write_packets: match (write, remote.binary_writes) {
            (false, _) => "none",
            (true, true) => "X",
            (true, false) => "M",
        },
        packet_size: remote.packet_size,
        serial_checked: target.serial_address.is_some(),
        written: write,
        after,
        overrides: Vec::new(),
    })
}
