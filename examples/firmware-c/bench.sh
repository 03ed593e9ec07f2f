#!/usr/bin/env bash
# Benchmark of the C firmware on both targets: builds it (build.sh), runs
# bench.elf under QEMU with -icount twice per target and fails unless both
# runs print identical figures, then adds the flash and static RAM that the
# C API and the compensation code behind it cost (flashuse.elf minus
# flashref.elf, sections from arm-none-eabi-size -A, as the Rust
# firmware's bench.sh). Prints `metric c_<name> <value> <unit>
# target=<triple>` lines; docs/performance.md sets them beside the Rust
# firmware's figures of the same name.
#
# Usage: examples/firmware-c/bench.sh   (needs qemu-system-arm,
# binutils-arm-none-eabi and gcc-arm-none-eabi: scripts/install-prereqs.sh)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)

for tool in qemu-system-arm arm-none-eabi-size arm-none-eabi-gcc; do
    command -v "$tool" >/dev/null 2>&1 || {
        echo "bench.sh: $tool not found; run scripts/install-prereqs.sh" >&2
        exit 1
    }
done

out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT

# Sum of the sizes of the named sections of an ELF file.
sections() {
    arm-none-eabi-size -A "$1" | awk -v names="$2" '
        BEGIN { n = split(names, list, " "); for (i = 1; i <= n; i++) want[list[i]] = 1 }
        ($1 in want) { sum += $2 }
        END { print sum + 0 }'
}

flash=".vector_table .text .rodata .data"
for target in thumbv7em-none-eabihf thumbv6m-none-eabi; do
    case "$target" in
    thumbv7em-none-eabihf) machine=(-machine mps2-an386 -cpu cortex-m4) ;;
    thumbv6m-none-eabi) machine=(-machine microbit -cpu cortex-m0) ;;
    esac
    "$here/build.sh" "$target"
    elf=$root/target/firmware-c/$target
    for run in 1 2; do
        timeout 600 qemu-system-arm "${machine[@]}" -nographic -monitor none -serial null \
            -semihosting-config enable=on,target=native \
            -icount shift=0,align=off,sleep=off -kernel "$elf/bench.elf" >"$out/$target.$run"
    done
    if ! cmp -s "$out/$target.1" "$out/$target.2"; then
        echo "bench.sh: two runs on $target differ:" >&2
        diff "$out/$target.1" "$out/$target.2" >&2 || true
        exit 1
    fi
    grep '^metric ' "$out/$target.1"
    echo "# $target: two runs printed identical figures" >&2
    use_flash=$(sections "$elf/flashuse.elf" "$flash")
    ref_flash=$(sections "$elf/flashref.elf" "$flash")
    use_ram=$(sections "$elf/flashuse.elf" ".data .bss")
    ref_ram=$(sections "$elf/flashref.elf" ".data .bss")
    echo "metric c_flash_bytes $((use_flash - ref_flash)) bytes target=$target"
    echo "metric c_ram_static_bytes $((use_ram - ref_ram)) bytes target=$target"
done
