#!/usr/bin/env bash
# Installs, idempotently, what the tests need on a fresh Debian machine:
# the pinned Rust toolchain with its targets (rust-toolchain.toml), QEMU for
# Cortex-M, the cross binutils and C compiler and headless Chromium (Debian
# packages), and Python's mpmath for the
# reference check; with SEMIDRIFT_SLOW=1 also cargo-mutants (scripts/mutants.sh).
# Fails loudly if something cannot be installed.
set -euo pipefail
cd "$(dirname "$0")/.."

# rustup reads rust-toolchain.toml; make sure toolchain, components and targets exist.
if command -v rustup >/dev/null 2>&1; then
    rustup show active-toolchain >/dev/null 2>&1 || rustup toolchain install
    installed=$(rustup target list --installed)
    for t in thumbv7em-none-eabihf thumbv6m-none-eabi riscv32imc-unknown-none-elf; do
        grep -qx "$t" <<<"$installed" || rustup target add "$t"
    done
    for c in rustfmt clippy; do
        rustup component list --installed | grep -q "^$c" || rustup component add "$c"
    done
else
    echo "install-prereqs: rustup not found; install Rust with rustup first" >&2
    exit 1
fi

need_apt=()
command -v qemu-system-arm >/dev/null 2>&1 || need_apt+=(qemu-system-arm)
command -v arm-none-eabi-size >/dev/null 2>&1 || need_apt+=(binutils-arm-none-eabi)
# The C firmware example (examples/firmware-c) and its tests.
command -v arm-none-eabi-gcc >/dev/null 2>&1 || need_apt+=(gcc-arm-none-eabi)
# Headless browser of the lot-report test (tests/lot_report_browser.rs).
command -v chromium >/dev/null 2>&1 || need_apt+=(chromium)
if ((${#need_apt[@]})); then
    if [ "$(id -u)" -ne 0 ] && ! command -v sudo >/dev/null 2>&1; then
        echo "install-prereqs: need ${need_apt[*]} (Debian packages) but not root and no sudo" >&2
        exit 1
    fi
    SUDO=""; [ "$(id -u)" -eq 0 ] || SUDO=sudo
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq --no-install-recommends "${need_apt[@]}"
fi
qemu-system-arm --version | head -1
chromium --version

if ! python3 -c 'import mpmath' >/dev/null 2>&1; then
    python3 -m pip install --quiet mpmath
fi
python3 -c 'import mpmath; print("mpmath", mpmath.__version__)'

if [ "${SEMIDRIFT_SLOW:-}" = "1" ]; then
    scripts/mutants.sh --install
    cargo mutants --version
fi
