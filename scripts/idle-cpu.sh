#!/usr/bin/env bash
# The terminal UI's CPU use while idle: starts it in tmux on a logbook of 10,000 contacts,
# leaves it alone for 30 s and prints the CPU time it used, from /proc (target < 0.2 % of one
# core). Needs tmux.
set -euo pipefail
cd "$(dirname "$0")/.."
seconds="${1:-30}"
cargo build --release --locked -q
bin="$PWD/target/release/nearsky"
dir="$(mktemp -d)"
trap 'tmux kill-session -t nearsky-idle 2>/dev/null || true; rm -rf "$dir"' EXIT
db="$dir/idle.db"
"$bin" --db "$db" station set --call Q1TST --grid JN17ga >/dev/null
"$bin" --db "$db" __writer --count 10000 --call Q1TST >/dev/null
tmux new-session -d -s nearsky-idle -x 80 -y 24 "$bin --db $db"
sleep 2
pid="$(tmux display-message -p -t nearsky-idle '#{pane_pid}')"
ticks() { awk '{print $14 + $15}' "/proc/$pid/stat"; }
hz="$(getconf CLK_TCK)"
t0="$(ticks)"; s0="$(date +%s.%N)"
sleep "$seconds"
t1="$(ticks)"; s1="$(date +%s.%N)"
awk -v a="$t0" -v b="$t1" -v hz="$hz" -v s0="$s0" -v s1="$s1" 'BEGIN {
  cpu = (b - a) / hz; wall = s1 - s0;
  printf "idle UI on 10,000 contacts: %.2f s CPU in %.1f s = %.3f %% of one core (target < 0.2 %%)\n", cpu, wall, 100 * cpu / wall }'
grep -E "VmRSS" "/proc/$pid/status" | awk '{printf "resident memory: %.1f MB\n", $2 / 1024}'
