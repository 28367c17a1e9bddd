#!/usr/bin/env bash
# Regenerates the committed test archive tests/data/sessions with the simulated rig
# (fixed seeds and start times, so the archive is reproducible), then the expected tables
# tests/fixtures/batch_reference with the Python reference. Run from the repository root:
#   bash tests/data/make_sessions.sh
set -euo pipefail
cd "$(dirname "$0")/../.."
cargo build --quiet
BIN=target/debug/skybearing
OUT=tests/data/sessions
rm -rf "$OUT"
mkdir -p "$OUT"
# animal  mode   seed  start
while read -r animal mode seed start; do
  "$BIN" demo --headless --speed max --seed "$seed" --sessions "$OUT" --start "$start" \
    --animal "$animal" --animal-mode "$mode" --rate-hz 20 \
    --protocol tests/data/short-two-conditions.toml < /dev/null > /dev/null
done <<'LIST'
lm-01 sky   11 2026-06-21T08:30:00Z
lm-02 sky   12 2026-06-21T09:30:00Z
lm-03 arena 13 2026-06-21T10:30:00Z
lm-04 sky   14 2026-06-22T08:30:00Z
lm-05 none  15 2026-06-22T09:30:00Z
lm-01 sky   16 2026-06-22T10:30:00Z
LIST
du -sh "$OUT"
python3 tests/reference/batch_reference.py "$OUT" tests/fixtures/batch_reference
