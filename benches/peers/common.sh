# Sourced by the benches/*_compare.sh scripts: makes the Python venv of the peers
# (benches/peers/requirements.txt) in $BENCH_VENV (default .bench-venv/ at the repo root,
# ignored by git) and builds skybearing. Sets PY and BIN.
BENCH_VENV=${BENCH_VENV:-.bench-venv}
if [ ! -x "$BENCH_VENV/bin/python" ]; then
  echo "making the peers' venv in $BENCH_VENV ..." >&2
  python3 -m venv "$BENCH_VENV"
fi
PY="$BENCH_VENV/bin/python"
"$PY" -m pip install --quiet -r benches/peers/requirements.txt
cargo build --release --quiet
BIN=target/release/skybearing
