#!/usr/bin/env bash
# Mutation testing of the code that decides whether a table is trusted:
# image validation, CRC and axes in the runtime crate; the error budget,
# the interpolation bound, the table choice and the frame at one
# temperature (table_grid.rs) in the station. cargo-mutants
# makes one small change at a time (an operator swapped, a function body
# replaced by a constant) and runs the tests; a test must fail for each.
# A missed mutant either gets a test or, when it changes no behaviour, a
# line in scripts/mutants-equivalent.txt saying why; this script fails on
# any missed mutant not listed there. Figures: docs/mutation-testing.md.
#
# Slow (a build and a test run per mutant): `SEMIDRIFT_SLOW=1
# scripts/test-all.sh` runs it, or run it alone. Arguments narrow it to
# some of the files below:
#   scripts/mutants.sh host-tools/src/station/tables/budget.rs
# `scripts/mutants.sh --install` only installs cargo-mutants.
set -euo pipefail
export LC_ALL=C
cd "$(dirname "$0")/.."

VERSION=27.1.0
if ! cargo mutants --version 2>/dev/null | grep -qx "cargo-mutants $VERSION"; then
    cargo install --locked cargo-mutants --version "$VERSION"
fi
if [ "${1-}" = "--install" ]; then
    exit 0
fi

# Each group: the package, its files, and the tests run for every mutant
# (arguments to `cargo test`). The runtime crate's unit tests and its image
# tests (image_rejects, image_props) are where validation, CRC and axes are
# pinned; the station modules have their known-answer tests beside them.
# Narrower than the whole workspace so that a mutant costs seconds, not
# minutes. A missed mutant is listed only when it changes no behaviour, so
# that no test anywhere could catch it.
COMPENSATE_FILES=(compensate/src/image/validate.rs compensate/src/crc.rs compensate/src/interp/axis.rs)
COMPENSATE_TESTS=(--lib --test image_rejects --test image_props --test interp_props)
STATION_FILES=(host-tools/src/station/tables/budget.rs host-tools/src/station/tables/bound.rs host-tools/src/station/tables/choose.rs host-tools/src/station/tables/table_grid.rs)
STATION_TESTS=(--lib)

wanted() {
    # Files of "$@" that were asked for (all without arguments).
    local f a
    for f in "$@"; do
        if [ ${#ARGS[@]} -eq 0 ]; then
            echo "$f"
            continue
        fi
        for a in "${ARGS[@]}"; do
            [ "$a" = "$f" ] && echo "$f"
        done
    done
}

ARGS=("$@")
out_root=target/mutants
mkdir -p "$out_root"
missed_all=$(mktemp)
trap 'rm -f "$missed_all"' EXIT

run_group() {
    local name=$1 package=$2
    shift 2
    local files=() tests=() in_tests=0 a
    for a in "$@"; do
        if [ "$a" = "--" ]; then in_tests=1; continue; fi
        if [ $in_tests -eq 1 ]; then tests+=("$a"); else files+=("$a"); fi
    done
    mapfile -t files < <(wanted "${files[@]}")
    [ ${#files[@]} -eq 0 ] && return 0
    local file_args=() test_args=() f
    for f in "${files[@]}"; do file_args+=(--file "$f"); done
    # As cargo arguments (not after `--`), so that the build of each mutant
    # is limited to these test targets too.
    for f in "${tests[@]}"; do test_args+=("--cargo-arg=$f"); done
    echo "== mutants: $name (${files[*]}) =="
    # Exit code 2 means missed mutants, judged below against the list; 3
    # means some mutants made the tests hang (an endless loop), which a
    # test run that never passes detects as well as a failure.
    set +e
    nice -n 10 cargo mutants --package "$package" "${file_args[@]}" \
        --test-package "$package" --copy-target=true -j 1 --no-times \
        "${test_args[@]}" -o "$out_root/$name"
    local rc=$?
    set -e
    if [ $rc -ne 0 ] && [ $rc -ne 2 ] && [ $rc -ne 3 ]; then
        echo "mutants: cargo-mutants failed ($rc) for $name" >&2
        exit $rc
    fi
    cat "$out_root/$name/mutants.out/missed.txt" >>"$missed_all"
}

run_group compensate compensate "${COMPENSATE_FILES[@]}" -- "${COMPENSATE_TESTS[@]}"
run_group station host-tools "${STATION_FILES[@]}" -- "${STATION_TESTS[@]}"

# Compare without line and column (they move with every edit above a
# mutant), counting repeats: two identical mutants in one function need
# two lines in the list.
strip() { sed -E 's/^([^:]+):[0-9]+:[0-9]+: /\1: /' | sed -E 's/ +#.*$//' | sed '/^$/d' | sort; }
unexplained=$(comm -23 <(strip <"$missed_all") <(grep -v '^#' scripts/mutants-equivalent.txt | strip) || true)
if [ -n "$unexplained" ]; then
    echo "mutants: missed, not listed as equivalent in scripts/mutants-equivalent.txt:" >&2
    echo "$unexplained" >&2
    exit 1
fi
echo "mutants: every missed mutant is a listed equivalent ($(wc -l <"$missed_all") missed)"
