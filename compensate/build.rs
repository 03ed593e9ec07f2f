//! Sets `cfg(narrow_mul)` on targets without a 32x32 -> 64-bit multiply
//! instruction (ARMv6-M and ARMv8-M Baseline have only the 32-bit MULS).
//!
//! `cfg(target_feature = "v7")` cannot tell these apart on stable Rust: the
//! ARM architecture-version features are unstable, so rustc never sets them
//! in `cfg`, and every ARM target looked like ARMv6-M. The target name is
//! stable and says the architecture version.

use std::env;

fn main() {
    println!("cargo::rustc-check-cfg=cfg(narrow_mul)");
    println!("cargo::rerun-if-changed=build.rs");
    let arch = env::var("CARGO_CFG_TARGET_ARCH").unwrap_or_default();
    let target = env::var("TARGET").unwrap_or_default();
    let narrow =
        arch == "arm" && (target.starts_with("thumbv6m") || target.starts_with("thumbv8m.base"));
    if narrow {
        println!("cargo::rustc-cfg=narrow_mul");
    }
}
