//! Sets `cfg(narrow_mul)` on targets without a 32x32 -> 64-bit multiply
//! instruction (ARMv6-M and ARMv8-M Baseline have only the 32-bit MULS),
//! and `cfg(aligned_loads_only)` on targets whose word loads fault on an
//! unaligned address (the same two: their LDR needs a multiple of 4), so
//! a word read from an image at any address is four byte loads there.
//!
//! `cfg(target_feature = "v7")` cannot tell these apart on stable Rust: the
//! architecture-version features of thumb targets are unstable, so rustc
//! never sets them in `cfg`, and every thumb target looked like v6-M. The target name is
//! stable and says the architecture version.

use std::env;

fn main() {
    println!("cargo::rustc-check-cfg=cfg(narrow_mul)");
    println!("cargo::rustc-check-cfg=cfg(aligned_loads_only)");
    println!("cargo::rerun-if-changed=build.rs");
    let arch = env::var("CARGO_CFG_TARGET_ARCH").unwrap_or_default();
    let target = env::var("TARGET").unwrap_or_default();
    let narrow =
        arch == "arm" && (target.starts_with("thumbv6m") || target.starts_with("thumbv8m.base"));
    if narrow {
        println!("cargo::rustc-cfg=narrow_mul");
        println!("cargo::rustc-cfg=aligned_loads_only");
    }
}
