#!/usr/bin/env bash
# Memory over a simulated 12-hour session at 1 kHz (43 million samples), written to a
# temporary sessions folder: prints resident memory every few seconds and the peak (VmHWM).
# Target: flat, under 100 MB. Needs ~5 GB of free disk for the archive while it runs.
# Usage: bash benches/memory_12h.sh   (from the repository root)
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
start=$(date +%s)
./target/release/skybearing demo --headless --speed max --rate-hz 1000 --seed 1 \
    --start 2026-06-21T03:00:00Z --protocol benches/data/twelve-hours.toml \
    --sessions "$tmp" > "$tmp/progress.txt" &
pid=$!
while kill -0 "$pid" 2>/dev/null; do
    rss=$(awk '/VmRSS/ {print $2}' "/proc/$pid/status" 2>/dev/null || true)
    hwm=$(awk '/VmHWM/ {print $2}' "/proc/$pid/status" 2>/dev/null || true)
    last=$(grep -E '^t ' "$tmp/progress.txt" | tail -1 || true)
    [ -n "$rss" ] && echo "rss ${rss} kB  peak ${hwm} kB  | ${last}"
    sleep 5
done
wait "$pid"
end=$(date +%s)
dir=$(tail -1 "$tmp/progress.txt")
rows=$(($(wc -l < "$dir/samples.csv") - 1))
echo "samples: $rows in $((end - start)) s; archive $(du -sh "$dir" | cut -f1)"
