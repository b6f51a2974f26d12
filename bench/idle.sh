#!/usr/bin/env bash
# idle.sh: the CPU `fitgap follow` uses while its log does not change.
#
#   bench/idle.sh [SECONDS] [FITGAP]     (default 60 s; FITGAP: a built binary)
#
# Trains the demo's 60-epoch log, starts `fitgap follow` on it (output to
# /dev/null) and, as the reference in the same run, `tail -F` on the same
# log; lets both settle for 3 s, then reads each process's CPU time from
# /proc/PID/task/*/schedstat (nanoseconds on a CPU, summed over threads)
# before and after SECONDS of idling, and prints it as a share of one core
# and per second.
set -euo pipefail
secs=${1:-60}
root=$(cd "$(dirname "$0")/.." && pwd)
tmp=$(mktemp -d)
pids=()
trap 'for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done; rm -rf "$tmp"' EXIT
bin=${2:-}
if [ -z "$bin" ]; then
  (cd "$root" && go build -o "$tmp/fitgap" ./cmd/fitgap)
  bin=$tmp/fitgap
fi
"$bin" demo --pace 0 --epochs 60 --write "$tmp/run.csv" 2> /dev/null
"$bin" follow "$tmp/run.csv" > /dev/null &
pids+=($!); follow=$!
tail -F "$tmp/run.csv" > /dev/null 2>&1 &
pids+=($!); tail=$!
sleep 3
ns() { cat /proc/"$1"/task/*/schedstat | awk '{ s += $1 } END { printf "%d", s }'; }
f0=$(ns "$follow"); r0=$(ns "$tail"); t0=$(date +%s.%N)
sleep "$secs"
f1=$(ns "$follow"); r1=$(ns "$tail"); t1=$(date +%s.%N)
awk -v f0="$f0" -v f1="$f1" -v r0="$r0" -v r1="$r1" -v t0="$t0" -v t1="$t1" 'BEGIN {
  wall = t1 - t0
  printf "idle for %.1f s:\n", wall
  printf "  fitgap follow  %8.2f ms CPU = %.4f%% of one core (%.3f ms/s)\n", (f1-f0)/1e6, 100*(f1-f0)/1e9/wall, (f1-f0)/1e6/wall
  printf "  tail -F        %8.2f ms CPU = %.4f%% of one core (%.3f ms/s)\n", (r1-r0)/1e6, 100*(r1-r0)/1e9/wall, (r1-r0)/1e6/wall }'
