//! `semidrift flash` against QEMU's gdbstub on both emulated boards (the
//! Cortex-M4F mps2-an386 and the Cortex-M0 microbit, halted at reset with
//! no firmware): write, read back and CRC; then each fault with its own exit
//! code: a byte corrupted in target memory (1), a wrong device serial (1,
//! nothing written), a server that drops the connection (3), an image for
//! another part or an unverified image (2). Invented, simulated lot.

mod common;
#[path = "common/target.rs"]
mod target;

use common::{expect_exit, run_in as run};
use host_tools::gdb_remote::Remote;
use std::io::{Read, Write};
use std::net::TcpListener;
use std::path::Path;
use std::sync::OnceLock;
use target::{BOARDS, free_port, qemu};

/// A folder with a scenario, part files and the images of two parts.
fn lot() -> &'static Path {
    static DIR: OnceLock<tempfile::TempDir> = OnceLock::new();
    DIR.get_or_init(|| {
        common::lot_folder("2", |_, ok| {
            for s in ["WELL-0001", "WELL-0002"] {
                ok(&[
                    "table",
                    &format!("parts/{s}.part.json"),
                    "--out",
                    &format!("{s}.bin"),
                ]);
            }
        })
    })
    .path()
}

#[test]
fn flash_read_back_and_faults_on_both_boards() {
    let p = lot();
    let image = std::fs::read(p.join("WELL-0001.bin")).unwrap();
    for (machine, cpu, _, address) in BOARDS {
        let q = qemu(machine, cpu, None);
        let server = format!("127.0.0.1:{}", q.port);
        let addr = u32::from_str_radix(&address[2..], 16).unwrap();
        let flash = |extra: &[&str]| {
            let mut args = vec![
                "flash",
                "WELL-0001.bin",
                "--gdb",
                &server,
                "--address",
                address,
                "--allow-simulated",
            ];
            args.extend_from_slice(extra);
            run(p, &args)
        };
        // A good flash, verified against its part first.
        let o = flash(&["--against", "parts/WELL-0001.part.json", "--json"]);
        assert!(
            o.status.success(),
            "{machine}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let report: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        assert_eq!(report["bytes"], image.len(), "{machine}");
        assert_eq!(report["written"], true);
        // The override is on stderr and in the report.
        assert_eq!(
            report["overrides"],
            serde_json::json!(["--allow-simulated"])
        );
        assert!(String::from_utf8_lossy(&o.stderr).contains("made from simulated data"));
        // The target's memory holds the image (read with our own client).
        let mut r = Remote::connect(&server).unwrap();
        r.halt().unwrap();
        assert_eq!(
            r.read_memory(addr, image.len()).unwrap(),
            image,
            "{machine}"
        );
        // Corrupt one byte in target memory: the read-back check fails.
        r.write_memory(addr + 100, &[image[100] ^ 0x5a]).unwrap();
        drop(r);
        let o = flash(&["--skip-verify", "--check-only"]);
        expect_exit(&o, 1, &format!("first at {:#010x}", addr + 100));
        // A serial record naming another part: refused before writing.
        let serial_at = addr - 0x1000;
        let mut r = Remote::connect(&server).unwrap();
        r.halt().unwrap();
        let mut other = [0u8; 16];
        other[..9].copy_from_slice(b"WELL-0002");
        r.write_memory(serial_at, &other).unwrap();
        drop(r);
        let at = format!("{serial_at:#x}");
        let o = flash(&["--skip-verify", "--serial-address", &at]);
        expect_exit(&o, 1, "serial check");
        // The corrupted byte is still there: nothing was written.
        let mut r = Remote::connect(&server).unwrap();
        r.halt().unwrap();
        assert_eq!(r.read_memory(addr + 100, 1).unwrap(), [image[100] ^ 0x5a]);
        // The right serial record: the flash goes through and repairs it.
        let mut own = [0u8; 16];
        own[..9].copy_from_slice(b"WELL-0001");
        r.write_memory(serial_at, &own).unwrap();
        drop(r);
        let o = flash(&["--skip-verify", "--serial-address", &at]);
        assert!(
            o.status.success(),
            "{machine}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        assert!(String::from_utf8_lossy(&o.stdout).contains("device serial matches"));
    }
}

#[test]
fn refusals_before_any_connection() {
    let p = lot();
    // Nothing listens on this port: only the refusals that come first
    // (exit 2) may be reported, never a connection error.
    let server = format!("127.0.0.1:{}", free_port());
    let base = ["flash", "--gdb", server.as_str(), "--address", "0x00100000"];
    let with = |extra: &[&str]| {
        let mut a: Vec<&str> = base.to_vec();
        a.extend_from_slice(extra);
        run(p, &a)
    };
    // Made from simulated data, without the override.
    let o = with(&["WELL-0001.bin", "--against", "parts/WELL-0001.part.json"]);
    expect_exit(&o, 2, "field 'flags'");
    // Another part's image.
    let o = with(&[
        "WELL-0002.bin",
        "--against",
        "parts/WELL-0001.part.json",
        "--allow-simulated",
    ]);
    expect_exit(&o, 2, "field 'serial'");
    // Neither verified nor explicitly unverified.
    let o = with(&["WELL-0001.bin", "--allow-simulated"]);
    expect_exit(&o, 2, "--against");
    // The server is not there: exit 3, the step named.
    let o = with(&["WELL-0001.bin", "--allow-simulated", "--skip-verify"]);
    expect_exit(&o, 3, "cannot connect");
}

#[test]
fn a_server_that_drops_the_connection_mid_write_is_a_clean_error() {
    let p = lot();
    // A fake server: answers qSupported and the halt, acknowledges the
    // first write packet, then closes the connection.
    let listener = TcpListener::bind("127.0.0.1:0").unwrap();
    let port = listener.local_addr().unwrap().port();
    let server = std::thread::spawn(move || {
        let (mut s, _) = listener.accept().unwrap();
        let mut buf = [0u8; 8192];
        let mut packets = 0;
        loop {
            let n = match s.read(&mut buf) {
                Ok(0) | Err(_) => return,
                Ok(n) => n,
            };
            for chunk in buf[..n].split(|&b| b == b'$').skip(1) {
                packets += 1;
                let data = &chunk[..chunk.iter().position(|&b| b == b'#').unwrap_or(0)];
                let reply: &[u8] = if data.starts_with(b"qSupported") {
                    b"PacketSize=100"
                } else if data == b"?" {
                    b"S05"
                } else if data.starts_with(b"M") || data.starts_with(b"X") {
                    if data.starts_with(b"M") && packets > 4 {
                        return; // drop mid-write
                    }
                    if data.starts_with(b"X") { b"" } else { b"OK" }
                } else {
                    b""
                };
                let cs = reply.iter().fold(0u8, |a, &b| a.wrapping_add(b));
                let _ = s.write_all(b"+");
                let _ = s
                    .write_all(&[b"$".as_slice(), reply, format!("#{cs:02x}").as_bytes()].concat());
            }
        }
    });
    let o = run(
        p,
        &[
            "flash",
            "WELL-0001.bin",
            "--gdb",
            &format!("127.0.0.1:{port}"),
            "--address",
            "0x00100000",
            "--allow-simulated",
            "--skip-verify",
        ],
    );
    expect_exit(&o, 3, "write 0x");
    expect_exit(&o, 3, "connection lost");
    server.join().unwrap();
}
