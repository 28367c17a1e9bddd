#!/usr/bin/env bash
# CPU share of the live demo (engine + screen) at a 1 kHz simulated sensor in real time, in
# tmux at 160x48, over 30 s. Target: under 10% of one core. Usage: bash benches/live_cpu.sh
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=./target/release/skybearing
tmp=$(mktemp -d)
tmux -L cpu kill-server 2>/dev/null || true
tmux -L cpu new-session -d -s live -x 160 -y 48 "$bin demo --speed 1 --rate-hz 1000 --start 2026-06-21T08:00:00Z --sessions $tmp; sleep 5"
sleep 5
pid=$(for p in $(pgrep -x skybearing); do grep -qa -- "$tmp" /proc/$p/cmdline && echo $p; done | head -1)
tck=$(getconf CLK_TCK)
read -r u0 s0 < <(awk '{print $14, $15}' /proc/$pid/stat)
t0=$(date +%s.%N)
sleep 30
read -r u1 s1 < <(awk '{print $14, $15}' /proc/$pid/stat)
t1=$(date +%s.%N)
tmux -L cpu send-keys -t live q; sleep 0.3; tmux -L cpu send-keys -t live y; sleep 3
tmux -L cpu kill-server 2>/dev/null || true
python3 -c "print(f'live demo at 1 kHz: {100*(($u1-$u0)+($s1-$s0))/$tck/($t1-$t0):.1f}% of one core over {($t1-$t0):.0f} s')"
rm -rf "$tmp"
