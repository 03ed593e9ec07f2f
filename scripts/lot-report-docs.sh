#!/usr/bin/env bash
# Regenerates the 50-part demo's lot reports kept in the docs: the reports
# and summaries in docs/lot-report/ (opened in Chromium by
# tests/lot_report_browser.rs, which fails when they are not the current
# demo's) and their screenshots in docs/img/. Run it after a change
# that changes the demo's output. Needs chromium (scripts/install-prereqs.sh).
set -euo pipefail
cd "$(dirname "$0")/.."

out=target/lot-report-docs
rm -rf "$out"
# The tests' (debug) build: the slow test compares these files with what
# that build's demo writes.
cargo build -p host-tools
target/debug/semidrift demo --parts 50 --out-dir "$out" -q >/dev/null
mkdir -p docs/lot-report docs/img
for scenario in well battery; do
    cp "$out/$scenario/report.html" "docs/lot-report/$scenario.html"
    cp "$out/$scenario/summary.json" "docs/lot-report/$scenario-summary.json"
    chromium --headless --no-sandbox --disable-gpu \
        --user-data-dir="$(mktemp -d)" \
        --screenshot="docs/img/lot-report-$scenario.png" \
        --window-size=1000,1600 \
        "file://$PWD/docs/lot-report/$scenario.html"
done
echo "docs/lot-report/ and docs/img/lot-report-*.png regenerated"
