#!/usr/bin/env bash
# Builds the C firmware for one target: the compensate-ffi static library
# (cargo profile `firmware-c`: opt-level 3, fat LTO, one codegen unit,
# panic = "abort", as the Rust firmware) and the C programs main, bench,
# flashuse and flashref, linked against it with arm-none-eabi-gcc and
# --gc-sections. The library's panic handler calls an undefined symbol, so
# every link here is also the proof that no panic path is reachable from
# the entry points a program calls.
#
# Usage: examples/firmware-c/build.sh TARGET [--nopanic-selftest]
#   TARGET: thumbv7em-none-eabihf (QEMU mps2-an386, Cortex-M4F) or
#           thumbv6m-none-eabi (QEMU microbit, Cortex-M0)
#   --nopanic-selftest: build the library with a deliberate reachable panic
#           and link main only; this link must fail.
# ELF files go to target/firmware-c/TARGET/ (selftest: .../selftest/).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)

target=${1:?usage: build.sh TARGET [--nopanic-selftest]}
selftest=${2:-}
# rustflags: code-generation options of the library for the target (a TOML
# array for cargo's `target.<triple>.rustflags`, empty for none).
# ARMv7-M: `-arm-restrict-it` keeps IT blocks to one 16-bit instruction,
# so that if-conversion does not turn a rare branch to an error or general
# path into an `IT` plus a predicated 32-bit tail call on the common path
# (one instruction per call on the f32 sample; docs/performance.md).
case "$target" in
thumbv7em-none-eabihf)
    cpu=(-mcpu=cortex-m4 -mthumb -mfloat-abi=hard -mfpu=fpv4-sp-d16)
    memory=memory-mps2-an386.x
    rustflags='["-C", "llvm-args=-arm-restrict-it"]'
    ;;
thumbv6m-none-eabi)
    cpu=(-mcpu=cortex-m0 -mthumb -mfloat-abi=soft)
    memory=memory-microbit.x
    rustflags=
    ;;
*)
    echo "build.sh: unknown target $target (thumbv7em-none-eabihf or thumbv6m-none-eabi)" >&2
    exit 2
    ;;
esac
command -v arm-none-eabi-gcc >/dev/null 2>&1 || {
    echo "build.sh: arm-none-eabi-gcc not found; run scripts/install-prereqs.sh (Debian package gcc-arm-none-eabi)" >&2
    exit 1
}

cargo_args=(build --quiet --locked -p compensate-ffi --profile firmware-c --target "$target")
if [ -n "$rustflags" ]; then
    cargo_args+=(--config "target.$target.rustflags = $rustflags")
fi
out=$root/target/firmware-c/$target
programs=(main bench flashuse flashref)
target_dir=$root/target
if [ "$selftest" = "--nopanic-selftest" ]; then
    # Its own cargo target dir, so the normal library is never replaced.
    target_dir=$root/target/firmware-c/selftest-cargo
    cargo_args+=(--features nopanic-selftest --target-dir "$target_dir")
    out=$out/selftest
    programs=(main)
elif [ -n "$selftest" ]; then
    echo "build.sh: unknown option $selftest" >&2
    exit 2
fi
(cd "$root" && cargo "${cargo_args[@]}")
lib=$target_dir/$target/firmware-c/libcompensate_ffi.a
mkdir -p "$out"

cflags=(
    "${cpu[@]}" -std=c11 -O2 -g -Wall -Wextra -Werror
    -ffreestanding -ffunction-sections -fdata-sections
    -I "$root/compensate/ffi/include"
    -Wa,-I,"$root/examples/firmware/data"
)
ldflags=(
    -nostdlib -nostartfiles -Wl,--gc-sections -Wl,-z,noexecstack
    -Wl,-T,"$root/examples/firmware/$memory" -Wl,-T,"$here/sections.ld"
)
for prog in "${programs[@]}"; do
    arm-none-eabi-gcc "${cflags[@]}" "${ldflags[@]}" -o "$out/$prog.elf" \
        "$here/src/$prog.c" "$here/src/rt.c" "$here/src/stream.c" "$here/src/data.S" \
        "$lib" -lgcc
done
