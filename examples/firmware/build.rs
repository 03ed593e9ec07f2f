//! Selects the memory map for the target being built (one `memory.x` per
//! target) and links with cortex-m-rt's `link.x`.

use std::{env, fs, path::PathBuf};

fn main() {
    let target = env::var("TARGET").unwrap_or_default();
    let map = if target.starts_with("thumbv7em") {
        "memory-mps2-an386.x"
    } else if target.starts_with("thumbv6m") {
        "memory-microbit.x"
    } else {
        panic!(
            "semidrift-firmware builds for thumbv7em-none-eabihf (QEMU mps2-an386) \
             or thumbv6m-none-eabi (QEMU microbit), not for `{target}`"
        );
    };
    // `fpu`: the target has a single-precision FPU, so the f32 path runs.
    println!("cargo::rustc-check-cfg=cfg(fpu)");
    if target == "thumbv7em-none-eabihf" {
        println!("cargo::rustc-cfg=fpu");
    }
    // `armv6m`: no 32x32->64 multiply instruction (see poly::mul_wide).
    println!("cargo::rustc-check-cfg=cfg(armv6m)");
    if target.starts_with("thumbv6m") {
        println!("cargo::rustc-cfg=armv6m");
    }
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("cargo sets OUT_DIR"));
    fs::copy(map, out.join("memory.x")).expect("copy the memory map to OUT_DIR");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rustc-link-arg-bins=-Tlink.x");
    println!("cargo:rerun-if-changed={map}");
    println!("cargo:rerun-if-changed=build.rs");
}
