#!/usr/bin/env bash
# Streaming statistics against astropy (rayleightest + circmean) and scipy (circmean +
# circvar) on 10^7 headings; CPU time, interleaved rounds, agreement
# checked (benches/peers/sky_stats_peers.py).
#
# Usage: benches/stats_compare.sh [ROUNDS]   (default 5; BENCH_VENV as for batch_compare.sh)
set -euo pipefail
cd "$(dirname "$0")/.."
. benches/peers/common.sh
cargo bench --quiet --bench peer_timing --no-run
"$PY" benches/peers/sky_stats_peers.py stats "${BENCH_WORK:-target/peer-bench}" "${1:-5}"
