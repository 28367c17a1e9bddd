#!/usr/bin/env bash
# A field season: batch over 1,000 sessions against the same peers as benches/batch_compare.sh.
# Makes COPIES copies (default 10) of that script's 100 demo sessions under new session ids and
# animal ids (`cp -a`, so each samples.columns stays valid: times are kept), 1,000 sessions and
# about 20 GB of samples.csv, more than this machine's page cache holds beside everything else,
# then runs benches/peers/batch_peers.py once (REPEATS, default 1).
#
# Usage: benches/season_compare.sh [COPIES [REPEATS]]
#   BATCH_BENCH_DIR=dir  where batch_compare.sh keeps its sessions (default target/batch-bench)
#   BENCH_VENV=dir       the peers' Python venv (default .bench-venv)
set -euo pipefail
cd "$(dirname "$0")/.."
COPIES=${1:-10}
REPEATS=${2:-1}
WORK=${BATCH_BENCH_DIR:-target/batch-bench}
. benches/peers/common.sh
SRC="$WORK/sessions"
SEASON="$WORK/season"
[ -d "$SRC" ] || { echo "run benches/batch_compare.sh first (no $SRC)" >&2; exit 1; }
mkdir -p "$SEASON"
for k in $(seq 1 "$COPIES"); do
  for d in "$SRC"/*/; do
    old=$(basename "$d")
    # <date>_<site>_<animal>_<NNN>: the copy's animal is <animal>-s<k>.
    new=$(echo "$old" | sed -E "s/_([^_]+)_([0-9]{3})$/_\1-s$k\_\2/")
    [ -d "$SEASON/$new" ] && continue
    cp -a "$d" "$SEASON/$new.tmp"
    "$PY" - "$SEASON/$new.tmp/session.json" "$new" <<'PY'
import json, sys
p, new = sys.argv[1], sys.argv[2]
m = json.load(open(p))
m["animal"] = m["animal"] + new.rsplit("_", 2)[1][len(m["animal"]):]
m["id"] = new
json.dump(m, open(p, "w"), indent=2)
PY
    mv "$SEASON/$new.tmp" "$SEASON/$new"
  done
done
count=$(find "$SEASON" -mindepth 2 -maxdepth 2 -name samples.csv | wc -l)
bytes=$(find "$SEASON" -mindepth 2 -maxdepth 2 -name samples.csv -printf '%s\n' | awk '{s+=$1} END {print s}')
echo "## a season: $count sessions, $bytes bytes of samples.csv, $(nproc) cores, $(free -g | awk '/Mem:/ {print $2}') GB of memory"
"$PY" benches/peers/batch_peers.py compare "$BIN" "$SEASON" "$WORK/season-out" "$REPEATS"
