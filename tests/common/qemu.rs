//! Running bare-metal firmware under QEMU from a test: the machine for a
//! target, tool checks that say how to install what is missing, a `cargo`
//! for the firmware package without the outer build's environment, and
//! one QEMU run with `-icount` under a timeout.

#![allow(dead_code)] // each test file uses a different subset

use std::path::Path;
use std::process::{Command, Output};
use std::time::Duration;

/// Upper bound on one QEMU run. The demo firmware executes well under 1e8
/// instructions (about a second of emulation); 60 s only catches a hang.
pub const QEMU_TIMEOUT: Duration = Duration::from_secs(60);

/// Both firmware targets.
pub const TARGETS: [&str; 2] = ["thumbv7em-none-eabihf", "thumbv6m-none-eabi"];

/// QEMU machine and CPU for a target triple, as in examples/firmware/.cargo/config.toml.
pub fn machine(target: &str) -> (&'static str, &'static str) {
    match target {
        "thumbv7em-none-eabihf" => ("mps2-an386", "cortex-m4"),
        "thumbv6m-none-eabi" => ("microbit", "cortex-m0"),
        other => panic!("no QEMU machine for target {other}"),
    }
}

/// Fails with the install hint unless `program arg` runs and succeeds.
pub fn require_tool(program: &str, arg: &str) {
    match Command::new(program).arg(arg).output() {
        Ok(o) if o.status.success() => {}
        Ok(o) => panic!(
            "`{program} {arg}` failed ({}): {}\nrun scripts/install-prereqs.sh",
            o.status,
            String::from_utf8_lossy(&o.stderr)
        ),
        Err(e) => panic!(
            "`{program}` not found ({e}); the firmware tests need it: run \
             scripts/install-prereqs.sh (Debian packages qemu-system-arm, \
             binutils-arm-none-eabi, gcc-arm-none-eabi)"
        ),
    }
}

/// A command run in `dir` with the outer cargo's environment removed: an
/// inner build must not inherit the outer target dir, flags or target, but
/// keeps the same toolchain (RUSTUP_TOOLCHAIN).
pub fn without_outer_cargo(mut cmd: Command, dir: &Path) -> Command {
    cmd.current_dir(dir);
    for (key, _) in std::env::vars_os() {
        let Some(key) = key.to_str() else { continue };
        let keep =
            key == "CARGO_HOME" || key.starts_with("CARGO_NET_") || key.starts_with("CARGO_HTTP_");
        if (key.starts_with("CARGO_") && !keep)
            || matches!(
                key,
                "RUSTFLAGS"
                    | "RUSTDOCFLAGS"
                    | "RUSTC"
                    | "RUSTC_WRAPPER"
                    | "RUSTC_WORKSPACE_WRAPPER"
                    | "RUSTDOC"
            )
        {
            cmd.env_remove(key);
        }
    }
    cmd
}

/// A `cargo` command in `dir` (see [`without_outer_cargo`]).
pub fn inner_cargo(dir: &Path) -> Command {
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    without_outer_cargo(Command::new(cargo), dir)
}

/// Runs `cmd` and fails the test with its output unless it succeeds.
pub fn run_checked(cmd: &mut Command, what: &str) -> Output {
    let out = cmd
        .output()
        .unwrap_or_else(|e| panic!("{what}: cannot start: {e}"));
    assert!(
        out.status.success(),
        "{what} failed ({}):\n--- stdout\n{}\n--- stderr\n{}",
        out.status,
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    out
}

/// Runs `elf` under QEMU for `target` with `-icount` (as the cargo runner
/// does), killed after [`QEMU_TIMEOUT`]; returns exit success, stdout and
/// stderr.
pub fn run_qemu(target: &str, elf: &Path) -> (bool, String, String) {
    require_tool("qemu-system-arm", "--version");
    require_tool("timeout", "--version");
    let (machine, cpu) = machine(target);
    let out = Command::new("timeout")
        .arg(QEMU_TIMEOUT.as_secs().to_string())
        .args(["qemu-system-arm", "-machine", machine, "-cpu", cpu])
        .args(["-nographic", "-monitor", "none", "-serial", "null"])
        .args(["-semihosting-config", "enable=on,target=native"])
        .args(["-icount", "shift=0,align=off,sleep=off", "-kernel"])
        .arg(elf)
        .output()
        .unwrap_or_else(|e| panic!("cannot start qemu-system-arm: {e}"));
    (
        out.status.success(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}
