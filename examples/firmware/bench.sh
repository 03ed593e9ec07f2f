#!/usr/bin/env bash
# Runs the firmware benchmark on both targets, twice each, and fails unless
# the two runs print identical figures; adds the flash and static RAM the
# compensation code costs (size of `flashuse` minus `flashref`, sections
# from arm-none-eabi-size -A), the same for the polynomial baseline and,
# on the Cortex-M4F, for the runtime model with each math backend. Prints
# every figure as `metric <name> <value> <unit> target=<triple>`.
#
# Usage: examples/firmware/bench.sh   (needs qemu-system-arm and
# binutils-arm-none-eabi: scripts/install-prereqs.sh installs them)
set -euo pipefail
cd "$(dirname "$0")"

# Same tool check as examples/firmware-c/bench.sh: each script runs on its own.
for tool in qemu-system-arm arm-none-eabi-size; do
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

# Runs the benchmark twice with the given cargo arguments; fails on any
# difference, otherwise prints the metric lines.
twice() {
    local name=$1
    shift
    for run in 1 2; do
        cargo run --quiet --release --locked --bin bench "$@" >"$out/$name.$run"
    done
    if ! cmp -s "$out/$name.1" "$out/$name.2"; then
        echo "bench.sh: two runs of $name differ:" >&2
        diff "$out/$name.1" "$out/$name.2" >&2 || true
        exit 1
    fi
    grep '^metric ' "$out/$name.1"
    echo "# $name: two runs printed identical figures" >&2
}

flash="vector_table text rodata data"
flash=".${flash// / .}"
for target in thumbv7em-none-eabihf thumbv6m-none-eabi; do
    cargo build --quiet --release --locked --bins --target "$target"
    twice "$target" --target "$target"
    elf=target/$target/release
    use_flash=$(sections "$elf/flashuse" "$flash")
    ref_flash=$(sections "$elf/flashref" "$flash")
    use_ram=$(sections "$elf/flashuse" ".data .bss .uninit")
    ref_ram=$(sections "$elf/flashref" ".data .bss .uninit")
    poly_flash=$(sections "$elf/flashpoly" "$flash")
    poly_ram=$(sections "$elf/flashpoly" ".data .bss .uninit")
    echo "metric flash_bytes $((use_flash - ref_flash)) bytes target=$target"
    echo "metric ram_static_bytes $((use_ram - ref_ram)) bytes target=$target"
    echo "metric poly_flash_bytes $((poly_flash - ref_flash)) bytes target=$target"
    echo "metric poly_ram_static_bytes $((poly_ram - ref_ram)) bytes target=$target"
    if [ "$target" = thumbv7em-none-eabihf ]; then
        for backend in libm micromath; do
            model_flash=$(sections "$elf/flashmodel_$backend" "$flash")
            echo "metric flash_model_${backend}_bytes $((model_flash - ref_flash)) bytes target=$target"
        done
    fi
done
