#!/usr/bin/env bash
# CPU share of four rigs at 1 kHz each run from one process (issue 15): one `skybearing sim`
# serves four simulated rigs on pseudo-terminals at 1000 lines/s each, and one `skybearing run`
# with four --rig/--animal pairs runs them in real time, first headless, then on the live screen
# in tmux at 160x48. Prints the run process's CPU (% of one core, from /proc/PID/stat over
# MEASURE_S seconds) for both, and for the live screen its main thread (the screen: it draws
# about 30 frames a second, so its CPU share / 30 is the CPU time of one frame). The simulator's
# own CPU is printed apart (it stands in for the hardware and is not part of the cost).
# Target: the run process under 10% of one core. Usage: bash benches/multi_rig_cpu.sh
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=$PWD/target/release/skybearing
measure_s=${MEASURE_S:-30}
tmp=$(mktemp -d)
tck=$(getconf CLK_TCK)
trap 'tmux -L multicpu kill-server 2>/dev/null || true; [ -n "${sim:-}" ] && kill "$sim" 2>/dev/null; rm -rf "$tmp"' EXIT

"$bin" sim --rate-hz 1000 --seed 7 --stops-per-hour 0 --sun-azimuth-deg 180 \
  --write-rig "$tmp/rig-1.toml" --write-rig "$tmp/rig-2.toml" \
  --write-rig "$tmp/rig-3.toml" --write-rig "$tmp/rig-4.toml" >/dev/null 2>"$tmp/sim.err" &
sim=$!
for k in 1 2 3 4; do until [ -f "$tmp/rig-$k.toml" ]; do sleep 0.1; done; done
sleep 0.5
rigs=()
for k in 1 2 3 4; do rigs+=(--rig "$tmp/rig-$k.toml" --animal "lm-6$k"); done

# ticks (utime + stime) of a process or thread from its stat file
ticks() { awk '{print $14 + $15}' "$1"; }
# % of one core of stat file $1 over measure_s seconds; sets pct
measure() {
  local a b t0 t1
  a=$(ticks "$1"); t0=$(date +%s.%N)
  sleep "$measure_s"
  b=$(ticks "$1"); t1=$(date +%s.%N)
  python3 -c "print(f'{100*($b-$a)/$tck/($t1-$t0):.1f}')"
}

# Headless.
"$bin" run --headless --allow-no-sun --protocol protocols/demo.toml "${rigs[@]}" \
  --sessions "$tmp/headless" </dev/null >"$tmp/headless.out" 2>&1 &
run=$!
sleep 5
s0=$(ticks /proc/$sim/stat)
headless=$(measure /proc/$run/stat)
s1=$(ticks /proc/$sim/stat)
kill -INT "$run"; wait "$run" || true
sim_pct=$(python3 -c "print(f'{100*($s1-$s0)/$tck/$measure_s:.1f}')")
lines=$(grep -c '^\[rig-' "$tmp/headless.out" || true)

# Live screen in tmux.
tmux -L multicpu kill-server 2>/dev/null || true
tmux -L multicpu new-session -d -s live -x 160 -y 48 \
  "$bin run --allow-no-sun --protocol protocols/demo.toml ${rigs[*]} --sessions $tmp/live; sleep 5"
sleep 5
pid=$(for p in $(pgrep -x skybearing); do grep -qa -- "$tmp/live" /proc/$p/cmdline && echo $p; done | head -1)
m0=$(ticks /proc/$pid/task/$pid/stat)
live=$(measure /proc/$pid/stat)
m1=$(ticks /proc/$pid/task/$pid/stat)
screen_pct=$(python3 -c "print(f'{100*($m1-$m0)/$tck/$measure_s:.1f}')")
frame_ms=$(python3 -c "print(f'{10*$screen_pct/30:.2f}')")
tmux -L multicpu send-keys -t live q; sleep 0.3; tmux -L multicpu send-keys -t live y; sleep 3
tmux -L multicpu kill-server 2>/dev/null || true

echo "four rigs at 1 kHz from one process, ${measure_s} s each:"
echo "  run --headless: ${headless}% of one core ($lines progress lines)"
echo "  run, live screen 160x48: ${live}% of one core; screen thread ${screen_pct}% (about ${frame_ms} ms CPU per frame at 30 frames/s)"
echo "  (the simulator serving the four rigs: ${sim_pct}% of one core, not counted)"
