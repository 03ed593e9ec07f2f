//! Emulated targets for the debug-server tests (`flash_gdb.rs`,
//! `eol_gdb.rs`): QEMU halted at reset with its gdbstub on a free loopback
//! port, optionally running a firmware ELF, and the end-of-line firmware
//! built from `examples/firmware`. Included with `#[path]` by the tests
//! that need it.

#![allow(dead_code)] // each test file uses a different subset

use std::net::{TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::{Mutex, OnceLock};
use std::time::{Duration, Instant};

/// Both boards: QEMU machine, CPU, Rust target and a flash address past
/// any firmware (the EOL firmware is under 32 KiB at 0).
pub const BOARDS: [(&str, &str, &str, &str); 2] = [
    (
        "mps2-an386",
        "cortex-m4",
        "thumbv7em-none-eabihf",
        "0x00100000",
    ),
    ("microbit", "cortex-m0", "thumbv6m-none-eabi", "0x00030000"),
];

/// A halted QEMU with its gdbstub on a free loopback port, killed on drop.
pub struct Qemu {
    child: Child,
    /// gdbstub port.
    pub port: u16,
}

impl Qemu {
    /// `HOST:PORT` of the gdbstub.
    pub fn server(&self) -> String {
        format!("127.0.0.1:{}", self.port)
    }
}

impl Drop for Qemu {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// A loopback port nobody listens on (bound and released).
pub fn free_port() -> u16 {
    TcpListener::bind("127.0.0.1:0")
        .unwrap()
        .local_addr()
        .unwrap()
        .port()
}

/// Starts QEMU halted at reset (`-S`), with `kernel` loaded if given
/// (semihosting on, as the firmware's fault handlers print through it).
pub fn qemu(machine: &str, cpu: &str, kernel: Option<&Path>) -> Qemu {
    let port = free_port();
    let mut cmd = Command::new("qemu-system-arm");
    cmd.args(["-machine", machine, "-cpu", cpu])
        .args(["-nographic", "-monitor", "none", "-serial", "null", "-S"])
        .args(["-gdb", &format!("tcp:127.0.0.1:{port}")]);
    if let Some(k) = kernel {
        cmd.args(["-semihosting-config", "enable=on,target=native", "-kernel"])
            .arg(k);
    }
    let child = cmd
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("qemu-system-arm runs (scripts/install-prereqs.sh installs it)");
    let q = Qemu { child, port };
    let start = Instant::now();
    while TcpStream::connect(("127.0.0.1", port)).is_err() {
        assert!(
            start.elapsed() < Duration::from_secs(10),
            "QEMU gdbstub did not listen"
        );
        std::thread::sleep(Duration::from_millis(50));
    }
    // The probe connection above was accepted and closed; QEMU takes the next.
    std::thread::sleep(Duration::from_millis(100));
    q
}

/// Builds the end-of-line firmware (`--features eol --bin eol`) for both
/// boards once per test process and returns the ELF for `target`. The
/// inner cargo gets none of the outer cargo's target dir, flags or target.
pub fn eol_firmware(target: &str) -> PathBuf {
    static BUILT: OnceLock<Mutex<bool>> = OnceLock::new();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/firmware");
    let mut built = BUILT
        .get_or_init(|| Mutex::new(false))
        .lock()
        .unwrap_or_else(|e| e.into_inner());
    if !*built {
        let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
        let mut cmd = Command::new(cargo);
        cmd.current_dir(&dir);
        for (key, _) in std::env::vars_os() {
            let Some(key) = key.to_str() else { continue };
            let keep = key == "CARGO_HOME"
                || key.starts_with("CARGO_NET_")
                || key.starts_with("CARGO_HTTP_");
            if (key.starts_with("CARGO_") && !keep)
                || matches!(
                    key,
                    "RUSTFLAGS" | "RUSTC" | "RUSTC_WRAPPER" | "RUSTC_WORKSPACE_WRAPPER"
                )
            {
                cmd.env_remove(key);
            }
        }
        cmd.args([
            "build",
            "--release",
            "--locked",
            "--features",
            "eol",
            "--bin",
            "eol",
        ]);
        for (_, _, t, _) in BOARDS {
            cmd.args(["--target", t]);
        }
        let out = cmd.output().expect("start cargo for the firmware");
        assert!(
            out.status.success(),
            "building the EOL firmware failed (Rust targets missing? run scripts/install-prereqs.sh):\n{}",
            String::from_utf8_lossy(&out.stderr)
        );
        *built = true;
    }
    dir.join("target").join(target).join("release").join("eol")
}
