#!/usr/bin/env bash
# The README's demo figure for p_oriented: the fraction of demo epochs with p_oriented < 0.05 and
# < 0.01, for the sky-compass animal, the arena follower and the animal that steers by nothing.
#
#   bash benches/demo_p_oriented.sh [SEEDS] [MODES...]     (default: 40 seeds, sky arena none)
#
# Each session is `skybearing demo --headless --speed max --seed S --animal-mode M
# --start 2026-06-21T09:00:00Z --sessions DIR` (ten 3-minute epochs); the p-values are read from
# each session's summary.json with jq. Uses target/release/skybearing (or $SKYBEARING).
set -euo pipefail
cd "$(dirname "$0")/.."
seeds=${1:-40}
shift || true
modes=("$@")
[ ${#modes[@]} -gt 0 ] || modes=(sky arena none)
bin=${SKYBEARING:-target/release/skybearing}
[ -x "$bin" ] || { echo "build first: cargo build --release (or set SKYBEARING)" >&2; exit 1; }
command -v jq >/dev/null || { echo "needs jq" >&2; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
for mode in "${modes[@]}"; do
    : >"$work/p_$mode"
    for seed in $(seq 1 "$seeds"); do
        dir="$work/$mode-$seed"
        folder=$("$bin" demo --headless --speed max --seed "$seed" --animal-mode "$mode" \
            --start 2026-06-21T09:00:00Z --sessions "$dir" | tail -n 1)
        jq -r '.epochs[].p_oriented // "null"' "$folder/summary.json" >>"$work/p_$mode"
    done
    awk -v mode="$mode" -v seeds="$seeds" '
        $1 == "null" { nulls++; next }
        { n++; if ($1 < 0.05) a++; if ($1 < 0.01) b++ }
        END {
            printf "%-6s seeds 1-%d: %d epochs with a p (%d null): p<0.05 %.1f %%, p<0.01 %.1f %%\n",
                mode, seeds, n, nulls, 100 * a / n, 100 * b / n
        }' "$work/p_$mode"
done
