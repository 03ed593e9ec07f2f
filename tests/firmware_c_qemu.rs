//! The C firmware in `examples/firmware-c/`, linked against the
//! compensate-ffi static library, runs the demo stream on the Cortex-M4F
//! (QEMU `mps2-an386`) and the Cortex-M0 (QEMU `microbit`) and prints
//! the Rust firmware's sample lines; this test runs both firmware and
//! requires every compensated value, temperature and status to be the
//! same bit for bit, and requires the C firmware's on-target checks of
//! bad state pointers to pass. It also shows that the no-panic link of
//! the C firmware can fail.
//!
//! Missing QEMU, the cross compiler or Rust targets make the test fail
//! with a message saying how to install them (scripts/install-prereqs.sh).

#[path = "common/qemu.rs"]
mod qemu;

use qemu::{TARGETS, inner_cargo, require_tool, run_checked, run_qemu, without_outer_cargo};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::Mutex;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Serialises the builds of this test process: the two targets' tests run
/// in parallel threads and share cargo target dirs.
static BUILD: Mutex<()> = Mutex::new(());

/// `examples/firmware-c/build.sh target [option]`.
fn build_sh(target: &str, option: Option<&str>) -> Command {
    let mut cmd = without_outer_cargo(Command::new("bash"), root());
    cmd.arg(root().join("examples/firmware-c/build.sh"))
        .arg(target);
    cmd.args(option);
    cmd
}

/// Builds the C firmware for `target`; returns the folder of its ELF files.
fn build_c(target: &str) -> PathBuf {
    require_tool("arm-none-eabi-gcc", "--version");
    let _guard = BUILD.lock().unwrap_or_else(|e| e.into_inner());
    run_checked(
        &mut build_sh(target, None),
        &format!("examples/firmware-c/build.sh {target}"),
    );
    root().join("target/firmware-c").join(target)
}

/// Builds the Rust firmware's `main` for `target`; returns its ELF file.
fn build_rust_main(target: &str) -> PathBuf {
    let dir = root().join("examples/firmware");
    let _guard = BUILD.lock().unwrap_or_else(|e| e.into_inner());
    run_checked(
        inner_cargo(&dir).args([
            "build",
            "--release",
            "--locked",
            "--bin",
            "main",
            "--target",
            target,
        ]),
        &format!("cargo build --release --bin main --target {target} in examples/firmware"),
    );
    dir.join("target").join(target).join("release/main")
}

/// The lines both firmware print identically: the image summaries, the
/// sample lines without the Rust firmware's decimal rendering of the f32
/// value (the token after `f32=0x...`: the bit pattern before it is what
/// is compared) and the closing line. The polynomial baseline's lines and
/// the corrupted-image lines (the Rust firmware prints the crate's error
/// text, the C firmware the status codes) are left out.
fn comparable(stdout: &str) -> Vec<String> {
    stdout
        .lines()
        .filter(|l| {
            l.starts_with("image q ok")
                || l.starts_with("image f32 ok")
                || l.starts_with("sample ")
                || l.starts_with("done ")
        })
        .map(|l| {
            let mut out: Vec<&str> = Vec::new();
            for token in l.split(' ') {
                let after_f32 = out.last().is_some_and(|t| t.starts_with("f32=0x"));
                if after_f32 && !token.contains('=') {
                    continue;
                }
                out.push(token);
            }
            out.join(" ")
        })
        .collect()
}

/// Tolerance: none. Both firmware call the same compensate code on the
/// same image bytes and inputs (the C side converts the codes to float as
/// Rust's `as f32` does: round to nearest, the FPSCR reset mode).
fn c_firmware_matches_rust_firmware(target: &str) {
    let c_dir = build_c(target);
    let rust_main = build_rust_main(target);
    let (ok_c, out_c, err_c) = run_qemu(target, &c_dir.join("main.elf"));
    assert!(ok_c, "{target}: C firmware failed\n{out_c}\n{err_c}");
    let (ok_rust, out_rust, err_rust) = run_qemu(target, &rust_main);
    assert!(
        ok_rust,
        "{target}: Rust firmware failed\n{out_rust}\n{err_rust}"
    );

    let want = comparable(&out_rust);
    let got = comparable(&out_c);
    let samples = want.iter().filter(|l| l.starts_with("sample ")).count();
    assert_eq!(
        samples, 120,
        "{target}: Rust firmware sample lines:\n{out_rust}"
    );
    let fpu = target == "thumbv7em-none-eabihf";
    assert_eq!(
        want.iter().filter(|l| l.contains(" f32=0x")).count(),
        if fpu { 120 } else { 0 },
        "{target}: f32 results in the Rust firmware's lines"
    );
    for (k, w) in want.iter().enumerate() {
        let g = got.get(k).map_or("<missing>", String::as_str);
        assert_eq!(
            g,
            w,
            "{target}: C firmware line {} differs from the Rust firmware's",
            k + 1
        );
    }
    assert_eq!(
        got.len(),
        want.len(),
        "{target}: C firmware printed\n{out_c}"
    );
    // NULL, misaligned (1 to 7 bytes either side of a block), zero-filled
    // and copied state blocks through every entry point, on the target
    // (a fault would end the run before this line).
    assert!(
        out_c.lines().any(|l| l == "state checks wrong=0"),
        "{target}: the state-pointer checks failed or did not run:\n{out_c}"
    );
    assert!(
        out_c.lines().any(|l| l
            == "corrupted init status=-5 (image CRC mismatch) sample status=-9 (state not initialised)"),
        "{target}: the corrupted image's status codes are missing:\n{out_c}"
    );

    // No allocator in the C firmware either.
    require_tool("arm-none-eabi-nm", "--version");
    let nm = run_checked(
        Command::new("arm-none-eabi-nm").arg(c_dir.join("main.elf")),
        "arm-none-eabi-nm main.elf",
    );
    let symbols = String::from_utf8_lossy(&nm.stdout);
    assert!(
        symbols.lines().any(|l| l.ends_with(" sd_q_compensate")),
        "nm output: {symbols}"
    );
    assert!(
        !symbols.contains("__rust_alloc"),
        "{target}: C firmware links an allocator"
    );
}

#[test]
fn cortex_m4f_c_firmware_matches_rust_firmware_bit_for_bit() {
    c_firmware_matches_rust_firmware(TARGETS[0]);
}

#[test]
fn cortex_m0_c_firmware_matches_rust_firmware_bit_for_bit() {
    c_firmware_matches_rust_firmware(TARGETS[1]);
}

/// The library with a deliberate reachable panic must fail to link into
/// the C firmware, naming the panic handler's undefined symbol: the proof
/// that every normal build makes can fail.
#[test]
fn c_firmware_link_fails_with_a_reachable_panic() {
    require_tool("arm-none-eabi-gcc", "--version");
    let out = {
        let _guard = BUILD.lock().unwrap_or_else(|e| e.into_inner());
        build_sh(TARGETS[1], Some("--nopanic-selftest"))
            .output()
            .expect("start build.sh")
    };
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        !out.status.success() && stderr.contains("semidrift_ffi_panic_is_reachable"),
        "the self-test build (a deliberate panic) must fail to link naming the sentinel symbol; \
         status {}:\n{stderr}",
        out.status
    );
}
