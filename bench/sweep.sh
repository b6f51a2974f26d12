#!/usr/bin/env bash
# sweep.sh: fitgap on a sweep of many runs, whole process.
#
#   bench/sweep.sh [RUNS] [EPOCHS] [FITGAP]     (default 1000 runs of 300 epochs)
#
# Builds a tree of RUNS runs (bench/sweepbench build: half CSV, a quarter
# JSON Lines, a quarter console text, nested group/lr=…,width=…,seed=…
# directories, every other one with hparams.json), then measures:
#   - report DIR: wall time, CPU and peak RSS (median of 3), against
#     reading the same logs with cat | wc -l in the same run;
#   - the run table (fitgap DIR in a 200×50 tmux pane): the time to the
#     first complete table (every run read, none left "reading"), to every
#     run's first forecast (none left "forecasting"), idle CPU
#     over 30 s, CPU while 100 runs each append an epoch a second, the
#     write-to-screen latency of one run's new epoch (capture-pane every
#     2 ms), and peak RSS; once with inotify and once with --poll 2s.
# Needs tmux. The machine is shared: quote medians and the load average.
set -euo pipefail
runs=${1:-1000}
epochs=${2:-300}
root=$(cd "$(dirname "$0")/.." && pwd)
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
bin=${3:-}
if [ -z "$bin" ]; then
  (cd "$root" && go build -o "$tmp/fitgap" ./cmd/fitgap)
  bin=$tmp/fitgap
fi
(cd "$root" && go build -o "$tmp/sweepbench" ./bench/sweepbench)
tree=$tmp/runs
"$tmp/sweepbench" build -runs "$runs" -epochs "$epochs" "$tree"
echo "tree: $runs runs x $epochs epochs, $(du -sh "$tree" | cut -f1), load average $(cut -d' ' -f1-3 /proc/loadavg)"

median() { sort -n | awk '{ a[NR] = $1 } END { print a[int((NR + 1) / 2)] }'; }
for i in 1 2 3; do
  /usr/bin/time -f '%e %U %S %M' -o "$tmp/t$i" "$bin" report "$tree" > /dev/null
  /usr/bin/time -f '%e' -o "$tmp/w$i" sh -c "find '$tree' -name 'metrics.*' -o -name 'train.log' | xargs cat | wc -l > /dev/null"
done
wall=$(cat "$tmp"/t? | awk '{ print $1 }' | median)
cpu=$(cat "$tmp"/t? | awk '{ print $2 + $3 }' | median)
rss=$(cat "$tmp"/t? | awk '{ print $4 }' | median)
wc=$(cat "$tmp"/w? | median)
awk -v w="$wall" -v c="$cpu" -v r="$rss" -v ref="$wc" 'BEGIN {
  printf "report DIR: %.2f s wall, %.2f s CPU, peak RSS %.0f MiB; cat | wc -l of the same logs: %.2f s (%.1fx)\n", w, c, r/1024, ref, w/ref }'

echo "run table, inotify:"
"$tmp/sweepbench" screen -fitgap "$bin" -of "$runs" "$tree" | sed 's/^/  /'
echo "run table, --poll 2s:"
"$tmp/sweepbench" build -runs "$runs" -epochs "$epochs" "$tree"   # the same tree again, unappended
"$tmp/sweepbench" screen -fitgap "$bin" -of "$runs" -poll 2s "$tree" | sed 's/^/  /'
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
