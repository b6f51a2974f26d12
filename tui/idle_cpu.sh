#!/usr/bin/env bash
# idle_cpu.sh: how much CPU the live screen uses while nothing changes.
#
#   tui/idle_cpu.sh [SECONDS]      (default 30; needs tmux)
#
# Builds fitgap, opens `fitgap watch` on a finished 60-epoch log in a
# detached 200×60 tmux pane, lets the first frames settle, then reads the
# process's user+system CPU time from /proc before and after SECONDS of
# idling and prints it as a share of one core.
set -euo pipefail
secs=${1:-30}
root=$(cd "$(dirname "$0")/.." && pwd)
tmp=$(mktemp -d)
name="fitgap-idle-$$"
trap 'tmux -L "$name" kill-server 2>/dev/null || true; rm -rf "$tmp"' EXIT
(cd "$root" && go build -o "$tmp/fitgap" ./cmd/fitgap)
{
  echo "epoch,train_loss,val_loss,train_acc,val_acc,lr"
  for e in $(seq 1 60); do
    awk -v e="$e" 'BEGIN { tr = 0.05 + 0.5*exp(-e/6); va = 0.1 + 0.45*exp(-e/6) + (e > 30 ? 0.004*(e-30) : 0);
      printf "%d,%.4f,%.4f,%.4f,%.4f,0.01\n", e, 2.2*tr, 2.2*va, 1-tr, 1-va }'
  done
} > "$tmp/run.csv"
tmux -L "$name" new-session -d -s "$name" -x 200 -y 60 "$tmp/fitgap watch $tmp/run.csv"
sleep 3
shell=$(tmux -L "$name" display-message -p -t "$name" '#{pane_pid}')
pid=$shell
[ "$(cat /proc/$pid/comm)" = fitgap ] || pid=$(cat /proc/$shell/task/$shell/children | awk '{print $1}')
ticks() { awk '{ print $14 + $15 }' "/proc/$1/stat"; }
hz=$(getconf CLK_TCK)
a=$(ticks "$pid")
t0=$(date +%s.%N)
sleep "$secs"
b=$(ticks "$pid")
t1=$(date +%s.%N)
awk -v a="$a" -v b="$b" -v hz="$hz" -v t0="$t0" -v t1="$t1" 'BEGIN {
  cpu = (b - a) / hz; wall = t1 - t0
  printf "fitgap watch, idle at 200x60 for %.1f s: %.3f s CPU = %.3f%% of one core\n", wall, cpu, 100*cpu/wall }'
