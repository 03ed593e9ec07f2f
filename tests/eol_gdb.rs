//! `semidrift flash` then `semidrift eol` on both emulated boards (QEMU's
//! Cortex-M4F mps2-an386 and Cortex-M0 microbit, running the end-of-line
//! firmware of `examples/firmware`, `--features eol --bin eol`): a Q and
//! an f32 image of the same part pass and agree with `apply` row for row;
//! then each fault with its own exit code and message: a byte corrupted in
//! target memory (the device refuses the image, 1), a table changed in
//! target memory with a matching CRC (the device disagrees with `apply`,
//! 1, Q and f32), another part's image in the part (1), a target that runs
//! no EOL firmware (3), an image address where the firmware faults (3), no
//! server (3), a file that is not the EOL firmware (2). Rows beyond the
//! mailbox's capacity go in several requests.
//! Invented, simulated lot.

mod common;
#[path = "common/target.rs"]
mod target;

use common::{expect_exit, run_in as run};
use host_tools::gdb_remote::Remote;
use serde_json::Value;
use std::path::Path;
use std::process::Output;
use std::sync::OnceLock;
use target::{BOARDS, eol_firmware, free_port, qemu};

/// A lot of two parts, its check rows, and images: WELL-0001 in Q and
/// f32 (the station's choice of interpolation, cubic here, which the EOL
/// firmware compiles), WELL-0002 in Q.
fn lot() -> &'static Path {
    static DIR: OnceLock<tempfile::TempDir> = OnceLock::new();
    DIR.get_or_init(|| {
        common::lot_folder("2", |p, ok| {
            ok(&[
                "simulate",
                "spec.toml",
                "--parts",
                "2",
                "--check",
                "--out",
                "check.csv",
            ]);
            for (serial, format, out) in [
                ("WELL-0001", "q", "q.bin"),
                ("WELL-0001", "f32", "f32.bin"),
                ("WELL-0002", "q", "other.bin"),
            ] {
                let part = format!("parts/{serial}.part.json");
                ok(&["table", &part, "--number-format", format, "--out", out]);
            }
            // WELL-0001's check rows three times over: more rows than the
            // mailbox holds, so they go in several requests.
            let text = std::fs::read_to_string(p.join("check.csv")).unwrap();
            let mut lines = text.lines();
            let mut thrice = format!("{}\n", lines.next().unwrap());
            let own: Vec<&str> = lines.filter(|l| l.starts_with("WELL-0001,")).collect();
            for _ in 0..3 {
                for l in &own {
                    thrice.push_str(l);
                    thrice.push('\n');
                }
            }
            std::fs::write(p.join("check3.csv"), thrice).unwrap();
        })
    })
    .path()
}

#[track_caller]
fn success(o: &Output, what: &str) {
    assert!(
        o.status.success(),
        "{what}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
}

/// `flash` IMAGE (verified against WELL-0001 unless it is another part's).
fn flash(p: &Path, server: &str, address: &str, image: &str) -> Output {
    let mut args = vec![
        "flash",
        image,
        "--gdb",
        server,
        "--address",
        address,
        "--allow-simulated",
    ];
    if image == "other.bin" {
        args.push("--skip-verify");
    } else {
        args.extend(["--against", "parts/WELL-0001.part.json"]);
    }
    run(p, &args)
}

/// `eol` IMAGE against WELL-0001's check rows.
fn eol(p: &Path, server: &str, address: &str, image: &str, elf: &Path, json: bool) -> Output {
    eol_rows(p, server, address, image, elf, json, "check.csv")
}

/// `eol` IMAGE against WELL-0001's rows of `csv`.
fn eol_rows(
    p: &Path,
    server: &str,
    address: &str,
    image: &str,
    elf: &Path,
    json: bool,
    csv: &str,
) -> Output {
    let elf = elf.to_str().unwrap();
    let mut args = vec![
        "eol",
        image,
        csv,
        "--against",
        "parts/WELL-0001.part.json",
        "--gdb",
        server,
        "--address",
        address,
        "--firmware",
        elf,
    ];
    if json {
        args.push("--json");
    }
    run(p, &args)
}

/// Checks an EOL report against `apply`'s on the same image: the same rows
/// in the same order, the host's values and errors equal to `apply`'s
/// exactly (the same code computes both), and the device's equal to the
/// host's (bit for bit: Q always; f32 here because both sides run the same
/// Rust code in IEEE binary32, see `station/checks/eol.rs`).
fn agrees_with_apply(p: &Path, image: &str, csv: &str, report: &Value, what: &str) {
    let o = run(
        p,
        &[
            "apply",
            image,
            csv,
            "--against",
            "parts/WELL-0001.part.json",
            "--json",
        ],
    );
    success(&o, "apply");
    let apply: Value = serde_json::from_slice(&o.stdout).unwrap();
    let a = apply["rows"].as_array().unwrap();
    let e = report["row_results"].as_array().unwrap();
    assert_eq!(a.len(), e.len(), "{what}");
    assert!(!e.is_empty());
    for (a, e) in a.iter().zip(e) {
        assert_eq!(a["compensated"], e["host_value"], "{what}: {e}");
        assert_eq!(
            a["error_ppm"].as_f64(),
            e["error_ppm"].as_f64(),
            "{what}: {e}"
        );
        assert_eq!(e["device_value"], e["host_value"], "{what}: {e}");
        assert_eq!(e["value_diff"], 0, "{what}: {e}");
        assert_eq!(e["agrees"], true, "{what}: {e}");
    }
    assert_eq!(report["mismatches"], 0, "{what}");
    assert_eq!(report["pass"], true, "{what}");
    let judged = report["judged"].as_u64().unwrap();
    assert!(judged > 0, "{what}");
    let worst = report["max_abs_error_ppm"].as_f64().unwrap();
    assert!(worst > 0.0 && worst <= report["budget_ppm"].as_f64().unwrap());
}

/// Reads the image back, changes `byte` at `offset` in target memory and,
/// with `fix_crc`, stores the CRC of the changed bytes so the image still
/// parses.
fn corrupt(server: &str, address: u32, image: &[u8], offset: usize, fix_crc: bool) {
    let mut bytes = image.to_vec();
    bytes[offset] ^= 0x40;
    let body = bytes.len() - 4;
    if fix_crc {
        let crc = compensate::crc::crc32(&bytes[..body]).to_le_bytes();
        bytes[body..].copy_from_slice(&crc);
    }
    let mut r = Remote::connect(server).unwrap();
    r.halt().unwrap();
    r.write_memory(address, &bytes).unwrap();
}

#[test]
fn flash_and_end_of_line_check_on_both_boards() {
    let p = lot();
    let q_image = std::fs::read(p.join("q.bin")).unwrap();
    for (machine, cpu, triple, address) in BOARDS {
        let elf = eol_firmware(triple);
        let q = qemu(machine, cpu, Some(&elf));
        let server = q.server();
        let addr = u32::from_str_radix(&address[2..], 16).unwrap();
        for image in ["q.bin", "f32.bin"] {
            success(&flash(p, &server, address, image), "flash");
            let o = eol(p, &server, address, image, &elf, true);
            success(&o, &format!("{machine} eol {image}"));
            let report: Value = serde_json::from_slice(&o.stdout).unwrap();
            let format = if image == "q.bin" { "q" } else { "f32" };
            assert_eq!(report["number_format"], format);
            agrees_with_apply(
                p,
                image,
                "check.csv",
                &report,
                &format!("{machine} {image}"),
            );
            // The text report says the same and carries the caution.
            let o = eol(p, &server, address, image, &elf, false);
            success(&o, "eol text");
            let text = String::from_utf8_lossy(&o.stdout);
            assert!(text.contains(": pass"), "{text}");
            assert!(text.contains("protects people or property"), "{text}");
        }
        // Rows in several requests (the mailbox holds 64).
        success(&flash(p, &server, address, "q.bin"), "flash");
        let o = eol_rows(p, &server, address, "q.bin", &elf, true, "check3.csv");
        success(&o, "eol in batches");
        let report: Value = serde_json::from_slice(&o.stdout).unwrap();
        let rows = report["rows"].as_u64().unwrap();
        assert!(rows > 128, "{rows} rows");
        assert_eq!(report["requests"].as_u64(), Some(rows.div_ceil(64)));
        agrees_with_apply(p, "q.bin", "check3.csv", &report, "batches");
        // A target left running by `flash --then resume`: halted, run to
        // the ready point, checked.
        let o = run(
            p,
            &[
                "flash",
                "q.bin",
                "--gdb",
                &server,
                "--address",
                address,
                "--allow-simulated",
                "--skip-verify",
                "--then",
                "resume",
            ],
        );
        success(&o, "flash --then resume");
        success(
            &eol(p, &server, address, "q.bin", &elf, false),
            "eol on a running target",
        );
        // The EOL check wrote nothing into the image's range.
        success(&flash(p, &server, address, "f32.bin"), "flash");
        let check = run(
            p,
            &[
                "flash",
                "f32.bin",
                // Same flash call as above, with the f32 image.
                "--gdb",
                &server,
                "--address",
                address,
                "--allow-simulated",
                "--skip-verify",
                "--check-only",
            ],
        );
        success(&check, "read-back after eol");

        // One byte corrupted in target memory: the device's own CRC check
        // refuses the image.
        success(&flash(p, &server, address, "q.bin"), "flash");
        corrupt(&server, addr, &q_image, q_image.len() / 2, false);
        let o = eol(p, &server, address, "q.bin", &elf, false);
        expect_exit(
            &o,
            1,
            &format!("the device refused the image at {addr:#010x}"),
        );
        expect_exit(&o, 1, "CRC");
        // A table byte changed with a matching CRC: the image parses, and
        // the device's results differ from apply's.
        corrupt(&server, addr, &q_image, q_image.len() - 8, true);
        let o = eol(p, &server, address, "q.bin", &elf, false);
        expect_exit(&o, 1, "the device disagrees with apply on");
        assert!(String::from_utf8_lossy(&o.stdout).contains("MISMATCH"));
        // The same for an f32 image: outside the f32 tolerance.
        let f32_image = std::fs::read(p.join("f32.bin")).unwrap();
        success(&flash(p, &server, address, "f32.bin"), "flash");
        corrupt(&server, addr, &f32_image, f32_image.len() - 7, true);
        let o = eol(p, &server, address, "f32.bin", &elf, false);
        expect_exit(&o, 1, "the device disagrees with apply on");
        // Another part's image in the part.
        success(&flash(p, &server, address, "other.bin"), "flash other");
        let o = eol(p, &server, address, "q.bin", &elf, false);
        expect_exit(&o, 1, "the device disagrees with apply on");

        // A target whose mailbox does not identify the EOL firmware.
        let mut r = Remote::connect(&server).unwrap();
        r.halt().unwrap();
        let mailbox = {
            let bytes = std::fs::read(&elf).unwrap();
            host_tools::station::eol_target::firmware_symbols(&bytes)
                .unwrap()
                .mailbox
        };
        r.write_memory(mailbox, b"none").unwrap();
        drop(r);
        success(&flash(p, &server, address, "q.bin"), "flash");
        let o = eol(p, &server, address, "q.bin", &elf, false);
        expect_exit(&o, 3, "no end-of-line firmware answers");
        let mut r = Remote::connect(&server).unwrap();
        r.halt().unwrap();
        r.write_memory(mailbox, b"SDEL").unwrap();
        drop(r);
        // An image address that is no memory: the Cortex-M4F board faults
        // (the firmware's fault handler ends the program, exit 3), the
        // microbit reads zeros (the device refuses the image, exit 1).
        let o = eol(p, &server, "0xf0000000", "q.bin", &elf, false);
        if machine == "mps2-an386" {
            expect_exit(&o, 3, "the target's program ended");
        } else {
            expect_exit(&o, 1, "the device refused the image at 0xf0000000");
        }
    }
}

#[test]
fn eol_refusals_before_and_at_the_connection() {
    let p = lot();
    let server = format!("127.0.0.1:{}", free_port());
    let elf = eol_firmware(BOARDS[0].2);
    // No server: exit 3, the step named.
    let o = eol(p, &server, "0x00100000", "q.bin", &elf, false);
    expect_exit(&o, 3, "cannot connect");
    // Not the EOL firmware: exit 2 before connecting.
    let o = eol(
        p,
        &server,
        "0x00100000",
        "q.bin",
        Path::new("spec.toml"),
        false,
    );
    expect_exit(&o, 2, "not an ELF file");
    // Another part's image against this part's rows: exit 2.
    let o = eol(p, &server, "0x00100000", "other.bin", &elf, false);
    expect_exit(&o, 2, "field 'serial'");
}
