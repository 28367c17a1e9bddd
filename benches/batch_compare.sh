#!/usr/bin/env bash
# Times `skybearing batch` against the straightforward pandas script
# (tests/reference/batch_pandas_bench.py) computing the same per-epoch statistics, on N demo
# sessions (default 200) of the built-in demo protocol (ten 3-minute epochs, about 30 min at
# the simulated rig's rate), generated with `demo --headless --speed max`; prints the ratio.
#
# Usage: benches/batch_compare.sh [N]      (BATCH_BENCH_DIR=dir keeps the sessions for reuse)
set -euo pipefail
cd "$(dirname "$0")/.."
N=${1:-200}
WORK=${BATCH_BENCH_DIR:-$(mktemp -d)}
SESS="$WORK/sessions"
mkdir -p "$SESS"
cargo build --release --quiet
BIN=target/release/skybearing

have=$(find "$SESS" -mindepth 2 -maxdepth 2 -name session.json | wc -l)
if [ "$have" -lt "$N" ]; then
  echo "generating $((N - have)) demo sessions in $SESS ..." >&2
  seq $((have + 1)) "$N" | xargs -P "$(nproc)" -I{} sh -c '
    i={}; mode=sky; [ $((i % 4)) -eq 0 ] && mode=arena
    day=$(( (i % 28) + 1 )); day=$(printf %02d $day)
    '"$BIN"' demo --headless --speed max --seed "$i" --sessions "'"$SESS"'" \
      --start "2026-06-${day}T08:00:00Z" --animal-mode "$mode" > /dev/null'
fi
count=$(find "$SESS" -mindepth 2 -maxdepth 2 -name samples.csv | wc -l)
rows=$(cat "$SESS"/*/samples.csv | wc -l)
bytes=$(du -sb "$SESS" | cut -f1)
echo "sessions: $count, sample rows: $rows, bytes: $bytes" >&2
# Warm the page cache for both contenders alike.
cat "$SESS"/*/samples.csv > /dev/null

now() { date +%s.%N; }
t0=$(now)
"$BIN" batch "$SESS" --out "$WORK/batch-out" --include-incomplete > /dev/null
t1=$(now)
python3 tests/reference/batch_pandas_bench.py "$SESS" "$WORK/pandas-epochs.csv" > /dev/null
t2=$(now)
python3 -c "
rust, py = $t1 - $t0, $t2 - $t1
print(f'skybearing batch: {rust:.2f} s')
print(f'pandas script:    {py:.2f} s')
print(f'ratio:            {py / rust:.1f}x (pandas / batch)')"
echo "cores: $(nproc); sessions kept in $SESS" >&2
