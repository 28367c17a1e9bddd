#!/usr/bin/env bash
# Times `skybearing batch` against polars, DuckDB, pandas (with usecols) and `cat` of the same
# bytes, side by side in one run (benches/peers/batch_peers.py), on two kinds of data:
#   repeating      N demo sessions of the built-in demo protocol (ten 3-minute epochs, about
#                  30 min at the simulated rig's 100 Hz), made with `demo --headless --speed max`;
#                  the simulated sensor reports headings in 0.1 degree steps;
#   non-repeating  the same sessions with their headings rewritten as a float-valued tracker's
#                  would be archived (0.001 degree steps; benches/peers/jitter_headings.py).
# batch reads each session's samples.columns; `batch --csv-only` reads samples.csv as the peers
# do (and must write the same tables). Checks that all contenders agree and prints each one's
# median and ratio to batch.
#
# Usage: benches/batch_compare.sh [N [REPEATS]]    (defaults 100 sessions, 3 rounds)
#   BATCH_BENCH_DIR=dir  keeps the sessions for reuse (default target/batch-bench)
#   BENCH_VENV=dir       the peers' Python venv (default .bench-venv, made and filled here)
set -euo pipefail
cd "$(dirname "$0")/.."
N=${1:-100}
REPEATS=${2:-3}
WORK=${BATCH_BENCH_DIR:-target/batch-bench}
. benches/peers/common.sh
SESS="$WORK/sessions"
FLOAT="$WORK/sessions-float"
mkdir -p "$SESS"

have=$(find "$SESS" -mindepth 2 -maxdepth 2 -name session.json | wc -l)
if [ "$have" -lt "$N" ]; then
  echo "generating $((N - have)) demo sessions in $SESS ..." >&2
  seq $((have + 1)) "$N" | xargs -P "$(nproc)" -I{} sh -c '
    i={}; mode=sky; [ $((i % 4)) -eq 0 ] && mode=arena
    day=$(( (i % 28) + 1 )); day=$(printf %02d $day)
    '"$BIN"' demo --headless --speed max --seed "$i" --sessions "'"$SESS"'" \
      --start "2026-06-${day}T08:00:00Z" --animal-mode "$mode" > /dev/null'
fi
echo "rewriting headings as a float tracker's into $FLOAT ..." >&2
"$PY" benches/peers/jitter_headings.py "$SESS" "$FLOAT"
# samples.columns where it is missing (the rewritten sessions; sessions made by an older build).
echo "writing samples.columns where missing ..." >&2
"$BIN" check --repair "$SESS" "$FLOAT" > /dev/null

for kind in "$SESS:repeating (0.1 degree steps)" "$FLOAT:non-repeating (0.001 degree steps)"; do
  dir=${kind%%:*}
  count=$(find "$dir" -mindepth 2 -maxdepth 2 -name samples.csv | wc -l)
  rows=$(cat "$dir"/*/samples.csv | wc -l)
  bytes=$(cat "$dir"/*/samples.csv | wc -c)
  echo
  echo "## ${kind#*:} headings: $count sessions, $rows lines, $bytes bytes of samples.csv, $(nproc) cores, warm page cache"
  cat "$dir"/*/samples.csv > /dev/null
  "$PY" benches/peers/batch_peers.py compare "$BIN" "$dir" "$WORK/out" "$REPEATS"
done
