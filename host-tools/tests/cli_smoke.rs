//! Smoke test of the `semidrift` binary through `CARGO_BIN_EXE_semidrift`.
//!
//! Naming the binary here makes `cargo test --workspace` build it; the
//! fuller CLI tests in the repository's `tests/` then find it beside their
//! own executables.

use std::process::Command;

#[test]
fn help_lists_the_subcommands_and_bad_usage_exits_2() {
    let bin = env!("CARGO_BIN_EXE_semidrift");
    let help = Command::new(bin)
        .arg("--help")
        .output()
        .expect("semidrift runs");
    assert!(help.status.success());
    let text = String::from_utf8_lossy(&help.stdout);
    for sub in ["model", "plot", "arrhenius"] {
        assert!(text.contains(sub), "--help lacks {sub}: {text}");
    }
    let bad = Command::new(bin)
        .arg("no-such-command")
        .output()
        .expect("semidrift runs");
    assert_eq!(
        bad.status.code(),
        Some(2),
        "unknown subcommand is a usage error"
    );
}
