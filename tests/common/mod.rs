//! Helpers for tests that run the real `semidrift` binary.
//!
//! The binary belongs to the `host-tools` package, so cargo does not set
//! `CARGO_BIN_EXE_semidrift` for this (root) package's tests. It is found
//! next to the test executable instead: tests live in `target/<profile>/deps/`
//! and binaries in `target/<profile>/`. `cargo test --workspace` builds it, because
//! `host-tools/tests/cli_smoke.rs` names it through `CARGO_BIN_EXE_semidrift`.

#![allow(dead_code)] // each test file uses a different subset

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Path of the `semidrift` binary built alongside this test.
pub fn semidrift_bin() -> PathBuf {
    let exe = std::env::current_exe().expect("test executable path");
    let deps = exe.parent().expect("test executable has a directory");
    let profile_dir = if deps.ends_with("deps") {
        deps.parent().expect("target/<profile>")
    } else {
        deps
    };
    let bin = profile_dir.join(format!("semidrift{}", std::env::consts::EXE_SUFFIX));
    assert!(
        bin.is_file(),
        "{} not found: build it with `cargo build -p host-tools` or run `cargo test --workspace`",
        bin.display()
    );
    bin
}

/// Runs `semidrift ARGS` in `dir` and returns its output.
pub fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(semidrift_bin())
        .args(args)
        .current_dir(dir)
        .output()
        .expect("semidrift runs")
}

/// Runs `semidrift ARGS` in a fresh temporary directory.
pub fn run(args: &[&str]) -> Output {
    let dir = tempfile::tempdir().expect("temporary directory");
    run_in(dir.path(), args)
}

/// Stdout as text.
pub fn stdout(o: &Output) -> String {
    String::from_utf8(o.stdout.clone()).expect("stdout is UTF-8")
}

/// Stderr as text.
pub fn stderr(o: &Output) -> String {
    String::from_utf8(o.stderr.clone()).expect("stderr is UTF-8")
}

/// Asserts success and returns stdout.
pub fn ok(args: &[&str]) -> String {
    succeeded(args, &run(args))
}

/// Asserts success of a run in `dir` and returns stdout.
pub fn ok_in(dir: &Path, args: &[&str]) -> String {
    succeeded(args, &run_in(dir, args))
}

/// Asserts that the run of `args` succeeded and returns its stdout.
fn succeeded(args: &[&str], o: &Output) -> String {
    assert!(
        o.status.success(),
        "semidrift {args:?}: exit {:?}: {}",
        o.status.code(),
        stderr(o)
    );
    stdout(o)
}

/// Simulates a well-logger lot of `parts` parts in `dir` (`cal.csv` and
/// its scenario `spec.toml`) and calibrates it into `dir/parts`.
pub fn calibrated_lot(dir: &Path, parts: &str) {
    ok_in(
        dir,
        &[
            "simulate",
            "well-logger",
            "--parts",
            parts,
            "--out",
            "cal.csv",
            "--write-spec",
            "spec.toml",
        ],
    );
    ok_in(
        dir,
        &[
            "calibrate",
            "spec.toml",
            "cal.csv",
            "--out-dir",
            "parts",
            "-q",
        ],
    );
}

/// A temporary folder with a calibrated lot of `parts` parts
/// ([`calibrated_lot`]), to which `more` adds what a test needs: it gets
/// the folder and a runner of `semidrift` commands there (each must
/// succeed).
pub fn lot_folder(parts: &str, more: impl FnOnce(&Path, &dyn Fn(&[&str]))) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    calibrated_lot(p, parts);
    more(p, &|args| {
        ok_in(p, args);
    });
    dir
}

/// Asserts that a run exited with `code` and that its stderr contains
/// `fragment`.
#[track_caller]
pub fn expect_exit(o: &Output, code: i32, fragment: &str) {
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(code), "stderr: {err}");
    assert!(err.contains(fragment), "stderr lacks {fragment:?}: {err}");
}

/// Asserts exit code 2, empty stdout and a single-line error on stderr that
/// contains every fragment; returns that line.
pub fn bad_input(args: &[&str], fragments: &[&str]) -> String {
    let o = run(args);
    let err = stderr(&o);
    assert_eq!(
        o.status.code(),
        Some(2),
        "semidrift {args:?}: exit code, stderr {err:?}"
    );
    assert!(
        o.stdout.is_empty(),
        "semidrift {args:?}: stdout must stay empty, got {:?}",
        stdout(&o)
    );
    assert_eq!(
        err.lines().count(),
        1,
        "semidrift {args:?}: one-line error expected, got {err:?}"
    );
    for f in fragments {
        assert!(
            err.contains(f),
            "semidrift {args:?}: error {err:?} lacks {f:?}"
        );
    }
    err
}
