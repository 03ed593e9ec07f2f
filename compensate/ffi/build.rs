//! Sets `cfg(aligned_loads_only)` on targets whose word loads fault on an
//! unaligned address (ARMv6-M and ARMv8-M Baseline), by the target name as
//! `compensate/build.rs` does (their architecture-version features are
//! unstable in `cfg`): there `src/state.rs` tests a state pointer's
//! alignment before it reads the key word through it.

use std::env;

fn main() {
    println!("cargo::rustc-check-cfg=cfg(aligned_loads_only)");
    println!("cargo::rerun-if-changed=build.rs");
    let arch = env::var("CARGO_CFG_TARGET_ARCH").unwrap_or_default();
    let target = env::var("TARGET").unwrap_or_default();
    if arch == "arm" && (target.starts_with("thumbv6m") || target.starts_with("thumbv8m.base")) {
        println!("cargo::rustc-cfg=aligned_loads_only");
    }
}
