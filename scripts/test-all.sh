#!/usr/bin/env bash
# The one test command of semidrift (README, DEVELOPERS.md and .ci/run call it).
# It installs, idempotently, what the tests need, then runs every check:
# formatting, lints, host tests (including published-reference checks, the
# Python/mpmath reference check and the QEMU firmware runs), docs, and the
# cross builds of the runtime crate.
#
# Long sweeps, fuzzing and mutation testing are opt-in:
# SEMIDRIFT_SLOW=1 scripts/test-all.sh
set -euo pipefail
cd "$(dirname "$0")/.."

step() { printf '\n== %s ==\n' "$*"; }

step "prerequisites"
scripts/install-prereqs.sh

step "format"
cargo fmt --all -- --check

step "clippy (warnings are errors)"
cargo clippy --workspace --all-targets --locked -- -D warnings

step "runtime crate: cross builds for each target and feature set"
for target in thumbv7em-none-eabihf thumbv6m-none-eabi riscv32imc-unknown-none-elf; do
    for features in "" "--no-default-features --features micromath" "--features defmt"; do
        echo "compensate --target $target $features"
        # $features is split into words on purpose (unquoted).
        cargo build -p compensate --locked --release --target "$target" $features
    done
done

step "runtime crate without the cubic kernel (host tests)"
cargo test -p compensate --locked --no-default-features --features libm

step "docs (warnings are errors)"
RUSTDOCFLAGS="-D warnings" cargo doc --workspace --no-deps --locked

step "host tests (workspace, including firmware runs under QEMU)"
cargo test --workspace --locked

if [ "${SEMIDRIFT_SLOW:-}" = "1" ]; then
    step "mutation testing (slow; scripts/mutants.sh)"
    scripts/mutants.sh
fi

echo
echo "test-all: every check passed"
