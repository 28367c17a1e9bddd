#!/usr/bin/env bash
# The sun against pvlib: exact sun_position against spa_python, and the series form (SunTrack)
# against spa_python on a 60 s grid plus numpy.interp; CPU time, interleaved rounds, agreement
# checked (benches/peers/sky_stats_peers.py).
#
# Usage: benches/sun_compare.sh [ROUNDS]   (default 5; BENCH_VENV as for batch_compare.sh)
set -euo pipefail
cd "$(dirname "$0")/.."
. benches/peers/common.sh
cargo bench --quiet --bench peer_timing --no-run
"$PY" benches/peers/sky_stats_peers.py sun "${BENCH_WORK:-target/peer-bench}" "${1:-5}"
