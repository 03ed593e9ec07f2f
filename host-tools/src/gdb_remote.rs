//! A small client of the GDB remote serial protocol (the open protocol every
//! common debug probe's server and QEMU's gdbstub speak), enough to halt a
//! target, read and write its memory and let it go again.
//!
//! Framing as the protocol's documentation describes it (GDB manual,
//! appendix "GDB Remote Serial Protocol", sections "Overview" and "Packets"):
//! a packet is `$` data `#` and two lower-case hex digits of the modulo-256
//! sum of the data bytes; the receiver answers `+` (received) or `-`
//! (resend). In binary data (`X` writes) the bytes `#`, `$`, `}` and `*` are
//! sent as `}` followed by the byte XOR 0x20; replies may use run-length
//! encoding (`c*N`: `c` and then `N - 29` more copies of it, [`decode_rle`]).
//!
//! No crate on the registry offers a maintained client of this protocol
//! (the maintained ones implement servers), so the client is this one
//! module, its framing tested against the documented rules.

use std::io::{ErrorKind, Read, Write};
use std::net::{TcpStream, ToSocketAddrs};
use std::time::{Duration, Instant};

/// How long one reply may take.
pub const REPLY_TIMEOUT: Duration = Duration::from_secs(5);
/// How often a packet is resent after a `-` or a missing ack.
pub const RETRIES: usize = 3;
/// Packet size assumed when the server does not state one in `qSupported`.
pub const DEFAULT_PACKET_SIZE: usize = 256;

/// What went wrong talking to the server.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum RemoteError {
    /// Connecting failed.
    #[error("cannot connect to {addr}: {message}")]
    Connect {
        /// Server address as given.
        addr: String,
        /// Underlying error.
        message: String,
    },
    /// The connection broke or timed out.
    #[error("{step}: connection lost or no reply within {timeout_s} s ({message})")]
    Lost {
        /// What the client was doing.
        step: String,
        /// Timeout in seconds.
        timeout_s: u64,
        /// Underlying error.
        message: String,
    },
    /// The server kept asking for the packet again.
    #[error("{step}: packet not acknowledged after {RETRIES} tries")]
    NotAcknowledged {
        /// What the client was doing.
        step: String,
    },
    /// The target's program ended (a `W` or `X` stop reply), e.g. a fault
    /// handler that exits through semihosting.
    #[error("{step}: the target's program ended ({reply}); did it fault?")]
    Ended {
        /// What the client was doing.
        step: String,
        /// The stop reply.
        reply: String,
    },
    /// The server answered with an error or something unexpected.
    #[error("{step}: server replied '{reply}'")]
    Refused {
        /// What the client was doing.
        step: String,
        /// The reply.
        reply: String,
    },
}

/// The modulo-256 sum of a packet's data bytes.
pub fn checksum(data: &[u8]) -> u8 {
    data.iter().fold(0u8, |s, &b| s.wrapping_add(b))
}

/// A complete packet for `data`: `$data#cs`.
pub fn frame(data: &[u8]) -> Vec<u8> {
    let mut v = Vec::with_capacity(data.len() + 4);
    v.push(b'$');
    v.extend_from_slice(data);
    v.extend_from_slice(format!("#{:02x}", checksum(data)).as_bytes());
    v
}

/// Escapes binary data for an `X` packet: `#`, `$`, `}` and `*` become `}`
/// and the byte XOR 0x20.
pub fn escape_binary(data: &[u8]) -> Vec<u8> {
    let mut v = Vec::with_capacity(data.len());
    for &b in data {
        if matches!(b, b'#' | b'$' | b'}' | b'*') {
            v.push(b'}');
            v.push(b ^ 0x20);
        } else {
            v.push(b);
        }
    }
    v
}

/// Expands run-length encoding in a reply: `c*N` stands for `c` followed by
/// `N - 29` more copies of `c` (N is a printable character, so repeats of
/// 3 to 97).
pub fn decode_rle(data: &[u8]) -> Vec<u8> {
    let mut out: Vec<u8> = Vec::with_capacity(data.len());
    let mut i = 0;
    while i < data.len() {
        if data[i] == b'*' && i + 1 < data.len() {
            if let Some(&last) = out.last() {
                let n = usize::from(data[i + 1]).saturating_sub(29);
                out.extend(std::iter::repeat_n(last, n));
            }
            i += 2;
        } else {
            out.push(data[i]);
            i += 1;
        }
    }
    out
}

/// Lower-case hex of bytes.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Bytes of a hex string (`None` when it is not hex or has odd length).
pub fn unhex(text: &[u8]) -> Option<Vec<u8>> {
    if !text.len().is_multiple_of(2) {
        return None;
    }
    text.chunks(2)
        .map(|p| u8::from_str_radix(std::str::from_utf8(p).ok()?, 16).ok())
        .collect()
}

/// A connection to a GDB remote-protocol server.
pub struct Remote {
    stream: TcpStream,
    /// Largest packet the server accepts, bytes (from `qSupported`).
    pub packet_size: usize,
    /// Whether the server takes binary `X` writes.
    pub binary_writes: bool,
    pending: Vec<u8>,
}

impl Remote {
    /// Connects to `addr` (`HOST:PORT`) and asks the server what it supports.
    pub fn connect(addr: &str) -> Result<Remote, RemoteError> {
        let connect_err = |message: String| RemoteError::Connect {
            addr: addr.to_string(),
            message,
        };
        let sock = addr
            .to_socket_addrs()
            .map_err(|e| connect_err(e.to_string()))?
            .next()
            .ok_or_else(|| connect_err("no address".into()))?;
        let stream = TcpStream::connect_timeout(&sock, REPLY_TIMEOUT)
            .map_err(|e| connect_err(e.to_string()))?;
        let _ = stream.set_nodelay(true);
        let mut remote = Remote {
            stream,
            packet_size: DEFAULT_PACKET_SIZE,
            binary_writes: false,
            pending: Vec::new(),
        };
        let reply = remote.request("qSupported", b"qSupported:multiprocess-;swbreak+")?;
        for feature in reply.split(|&b| b == b';') {
            if let Some(n) = feature
                .strip_prefix(b"PacketSize=")
                .and_then(|v| std::str::from_utf8(v).ok())
                .and_then(|s| usize::from_str_radix(s, 16).ok())
            {
                remote.packet_size = n.clamp(64, 1 << 16);
            }
        }
        Ok(remote)
    }

    fn lost(&self, step: &str, e: std::io::Error) -> RemoteError {
        RemoteError::Lost {
            step: step.to_string(),
            timeout_s: REPLY_TIMEOUT.as_secs(),
            message: e.to_string(),
        }
    }

    /// Reads one byte, waiting at most until `deadline`.
    fn byte(&mut self, step: &str, deadline: Instant) -> Result<u8, RemoteError> {
        if !self.pending.is_empty() {
            return Ok(self.pending.remove(0));
        }
        let mut buf = [0u8; 4096];
        loop {
            let left = deadline.saturating_duration_since(Instant::now());
            if left.is_zero() {
                return Err(self.lost(step, std::io::Error::from(ErrorKind::TimedOut)));
            }
            self.stream
                .set_read_timeout(Some(left))
                .map_err(|e| self.lost(step, e))?;
            match self.stream.read(&mut buf) {
                Ok(0) => {
                    return Err(self.lost(step, std::io::Error::from(ErrorKind::UnexpectedEof)));
                }
                Ok(n) => {
                    self.pending.extend_from_slice(&buf[1..n]);
                    return Ok(buf[0]);
                }
                // A read timeout shows as WouldBlock on Unix: wait on to the
                // deadline, which then reports `timed out`.
                Err(e)
                    if matches!(
                        e.kind(),
                        ErrorKind::Interrupted | ErrorKind::WouldBlock | ErrorKind::TimedOut
                    ) => {}
                Err(e) => return Err(self.lost(step, e)),
            }
        }
    }

    /// Sends raw bytes.
    fn send_raw(&mut self, step: &str, bytes: &[u8]) -> Result<(), RemoteError> {
        self.stream
            .write_all(bytes)
            .and_then(|()| self.stream.flush())
            .map_err(|e| self.lost(step, e))
    }

    /// Sends a packet until the server acknowledges it.
    fn send_packet(&mut self, step: &str, data: &[u8]) -> Result<(), RemoteError> {
        let packet = frame(data);
        for _ in 0..RETRIES {
            self.send_raw(step, &packet)?;
            let deadline = Instant::now() + REPLY_TIMEOUT;
            loop {
                match self.byte(step, deadline) {
                    Ok(b'+') => return Ok(()),
                    Ok(b'-') => break,
                    // A stray byte before the ack (a late reply's end): skip.
                    Ok(_) => {}
                    Err(RemoteError::Lost { message, .. }) if message.contains("timed out") => {
                        break;
                    }
                    Err(e) => return Err(e),
                }
            }
        }
        Err(RemoteError::NotAcknowledged {
            step: step.to_string(),
        })
    }

    /// Receives one packet (acknowledging it), skipping console output
    /// packets (`O...`).
    fn receive(&mut self, step: &str) -> Result<Vec<u8>, RemoteError> {
        for _ in 0..RETRIES * 64 {
            let deadline = Instant::now() + REPLY_TIMEOUT;
            while self.byte(step, deadline)? != b'$' {}
            let mut data = Vec::new();
            loop {
                match self.byte(step, deadline)? {
                    b'#' => break,
                    b => data.push(b),
                }
            }
            let cs = [self.byte(step, deadline)?, self.byte(step, deadline)?];
            let want = unhex(&cs).and_then(|v| v.first().copied());
            if want != Some(checksum(&data)) {
                self.send_raw(step, b"-")?;
                continue;
            }
            self.send_raw(step, b"+")?;
            let data = decode_rle(&data);
            if data.first() == Some(&b'O') && data != b"OK" {
                continue; // console output (monitor command text)
            }
            return Ok(data);
        }
        Err(RemoteError::NotAcknowledged {
            step: step.to_string(),
        })
    }

    /// Sends a packet and returns the reply.
    pub fn request(&mut self, step: &str, data: &[u8]) -> Result<Vec<u8>, RemoteError> {
        self.send_packet(step, data)?;
        self.receive(step)
    }

    fn expect_ok(&mut self, step: &str, data: &[u8]) -> Result<(), RemoteError> {
        let reply = self.request(step, data)?;
        if reply == b"OK" {
            Ok(())
        } else {
            Err(RemoteError::Refused {
                step: step.to_string(),
                reply: String::from_utf8_lossy(&reply).into_owned(),
            })
        }
    }

    /// Halts the target: asks for the stop reason; a running target gets an
    /// interrupt (0x03) first.
    pub fn halt(&mut self) -> Result<(), RemoteError> {
        self.send_packet("halt", b"?")?;
        match self.receive("halt") {
            Ok(r) if matches!(r.first(), Some(b'S' | b'T' | b'W' | b'X')) => return Ok(()),
            Ok(r) => {
                return Err(RemoteError::Refused {
                    step: "halt".into(),
                    reply: String::from_utf8_lossy(&r).into_owned(),
                });
            }
            Err(RemoteError::Lost { message, .. }) if message.contains("timed out") => {}
            Err(e) => return Err(e),
        }
        self.send_raw("halt", &[0x03])?;
        let r = self.receive("halt")?;
        if matches!(r.first(), Some(b'S' | b'T')) {
            Ok(())
        } else {
            Err(RemoteError::Refused {
                step: "halt".into(),
                reply: String::from_utf8_lossy(&r).into_owned(),
            })
        }
    }

    /// Largest data chunk of one memory packet.
    fn chunk(&self) -> usize {
        // `$M` + address + `,` + length + `:` + payload + `#cs`: 32 bytes
        // of overhead is plenty; hex doubles the payload.
        ((self.packet_size.saturating_sub(32)) / 2).max(16)
    }

    /// Reads `len` bytes at `addr`.
    pub fn read_memory(&mut self, addr: u32, len: usize) -> Result<Vec<u8>, RemoteError> {
        let mut out = Vec::with_capacity(len);
        while out.len() < len {
            let n = (len - out.len()).min(self.chunk());
            let at = addr as usize + out.len();
            let step = format!("read {at:#010x}..{:#010x}", at + n);
            let reply = self.request(&step, format!("m{at:x},{n:x}").as_bytes())?;
            match unhex(&reply) {
                Some(bytes) if bytes.len() == n => out.extend_from_slice(&bytes),
                _ => {
                    return Err(RemoteError::Refused {
                        step,
                        reply: String::from_utf8_lossy(&reply).into_owned(),
                    });
                }
            }
        }
        Ok(out)
    }

    /// Writes `bytes` at `addr`, in binary `X` packets where the server takes
    /// them (probed once with an empty write), else hex `M` packets. Each
    /// packet is retried on a lost ack; an error names the range not written.
    pub fn write_memory(&mut self, addr: u32, bytes: &[u8]) -> Result<(), RemoteError> {
        self.binary_writes = self
            .request("probe binary writes", format!("X{addr:x},0:").as_bytes())
            .is_ok_and(|r| r == b"OK");
        let mut done = 0;
        while done < bytes.len() {
            let at = addr as usize + done;
            let n = (bytes.len() - done).min(self.chunk());
            let part = &bytes[done..done + n];
            let step = format!("write {at:#010x}..{:#010x}", at + n);
            let mut packet = if self.binary_writes {
                format!("X{at:x},{n:x}:").into_bytes()
            } else {
                format!("M{at:x},{n:x}:").into_bytes()
            };
            if self.binary_writes {
                packet.extend(escape_binary(part));
            } else {
                packet.extend(hex(part).into_bytes());
            }
            self.expect_ok(&step, &packet)?;
            done += n;
        }
        Ok(())
    }

    /// Sets a breakpoint at `addr` (a Thumb instruction, kind 2): a
    /// hardware one (`Z1`, which works in flash) where the server offers it,
    /// else a software one (`Z0`). Returns the packet type used (1 or 0).
    pub fn insert_breakpoint(&mut self, addr: u32) -> Result<u8, RemoteError> {
        for kind in [1u8, 0] {
            let step = format!("set breakpoint at {addr:#010x}");
            let reply = self.request(&step, format!("Z{kind},{addr:x},2").as_bytes())?;
            match reply.as_slice() {
                b"OK" => return Ok(kind),
                // Empty: this breakpoint type is not supported.
                b"" => continue,
                r => {
                    return Err(RemoteError::Refused {
                        step,
                        reply: String::from_utf8_lossy(r).into_owned(),
                    });
                }
            }
        }
        Err(RemoteError::Refused {
            step: format!("set breakpoint at {addr:#010x}"),
            reply: "no breakpoint type supported".into(),
        })
    }

    /// Removes a breakpoint set by [`Remote::insert_breakpoint`] (`kind` as
    /// it returned).
    pub fn remove_breakpoint(&mut self, addr: u32, kind: u8) -> Result<(), RemoteError> {
        self.expect_ok(
            &format!("remove breakpoint at {addr:#010x}"),
            format!("z{kind},{addr:x},2").as_bytes(),
        )
    }

    /// Reads the program counter (register 15 of the ARM register file, the
    /// 16th word of the `g` reply, little-endian).
    pub fn read_pc(&mut self) -> Result<u32, RemoteError> {
        let reply = self.request("read registers", b"g")?;
        match unhex(reply.get(120..128).unwrap_or_default()) {
            Some(b) => Ok(u32::from_le_bytes([b[0], b[1], b[2], b[3]])),
            None => Err(RemoteError::Refused {
                step: "read registers".into(),
                reply: String::from_utf8_lossy(&reply).into_owned(),
            }),
        }
    }

    /// Executes one instruction (`s`) and waits for the stop.
    pub fn step(&mut self) -> Result<(), RemoteError> {
        let reply = self.request("single step", b"s")?;
        match reply.first() {
            Some(b'S' | b'T') => Ok(()),
            _ => Err(RemoteError::Refused {
                step: "single step".into(),
                reply: String::from_utf8_lossy(&reply).into_owned(),
            }),
        }
    }

    /// Lets the target run (`c`) and waits up to `timeout` for it to stop
    /// (a breakpoint or a signal). A target that exits (`W`/`X` replies) or
    /// does not stop in time is an error naming `step`.
    pub fn continue_until_stop(
        &mut self,
        step: &str,
        timeout: Duration,
    ) -> Result<(), RemoteError> {
        self.send_packet(step, b"c")?;
        let deadline = Instant::now() + timeout;
        let reply = loop {
            match self.receive(step) {
                Ok(r) => break r,
                Err(RemoteError::Lost { message, .. })
                    if message.contains("timed out") && Instant::now() < deadline => {}
                Err(RemoteError::Lost { message, .. }) if message.contains("timed out") => {
                    // Stop it, so the connection is left in a known state.
                    let _ = self.send_raw(step, &[0x03]);
                    return Err(RemoteError::Lost {
                        step: step.to_string(),
                        timeout_s: timeout.as_secs(),
                        message: "the target did not stop".into(),
                    });
                }
                Err(e) => return Err(e),
            }
        };
        let text = String::from_utf8_lossy(&reply).into_owned();
        match reply.first() {
            Some(b'S' | b'T') => Ok(()),
            Some(b'W' | b'X') => Err(RemoteError::Ended {
                step: step.to_string(),
                reply: text,
            }),
            _ => Err(RemoteError::Refused {
                step: step.to_string(),
                reply: text,
            }),
        }
    }

    /// Runs a monitor command (`qRcmd`), e.g. `system_reset` on QEMU.
    pub fn monitor(&mut self, command: &str) -> Result<(), RemoteError> {
        let data = format!("qRcmd,{}", hex(command.as_bytes()));
        self.expect_ok(&format!("monitor {command}"), data.as_bytes())
    }

    /// Detaches: the target runs on.
    pub fn detach(&mut self) -> Result<(), RemoteError> {
        self.expect_ok("detach", b"D")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn framing_follows_the_documented_rules() {
        // Checksums summed by hand: 'O' + 'K' = 0x4f + 0x4b = 0x9a;
        // "m0,4" = 0x6d + 0x30 + 0x2c + 0x34 = 0xfd.
        assert_eq!(frame(b"OK"), b"$OK#9a");
        assert_eq!(frame(b"m0,4"), b"$m0,4#fd");
        assert_eq!(frame(b""), b"$#00");
        // The four bytes that must be escaped in binary data, and one that
        // must not.
        assert_eq!(
            escape_binary(b"#$}*a"),
            vec![b'}', 0x03, b'}', 0x04, b'}', 0x5d, b'}', 0x0a, b'a']
        );
        // Run-length: "0* " is '0' and ' ' - 29 = 3 more copies.
        assert_eq!(decode_rle(b"0* "), b"0000");
        assert_eq!(decode_rle(b"ab*\"c"), b"abbbbbbc");
        assert_eq!(hex(&[0x00, 0xab, 0xff]), "00abff");
        assert_eq!(unhex(b"00abff"), Some(vec![0x00, 0xab, 0xff]));
        assert_eq!(unhex(b"0g"), None);
        assert_eq!(unhex(b"abc"), None);
    }
}
