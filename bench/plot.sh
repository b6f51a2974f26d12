#!/usr/bin/env bash
# What `fitgap report --plot` costs beside `fitgap report` on the same
# one-row-per-epoch CSV log, in the same run: wall-time medians of
# interleaved runs, their ratio, and peak RSS (wc -l for scale).
#
#   bench/plot.sh                         # 300 and 1,000,000 epochs, 7 runs
#   EPOCHS=100000 RUNS=5 bench/plot.sh
#
# Needs GNU time (/usr/bin/time) for the peak RSS (its %M, in KiB).
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${RUNS:-7}
epochs=${EPOCHS:-"300 1000000"}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

go build -o "$work/fitgap" ./cmd/fitgap
go build -o "$work/genlog" ./bench/genlog

wall() {
	local name=$1
	shift
	local t0 t1
	t0=$(date +%s%N)
	"$@" >/dev/null
	t1=$(date +%s%N)
	echo $(((t1 - t0) / 1000)) >>"$work/t_$name"
}
median() { sort -n "$work/t_$1" | awk '{a[NR]=$1} END{m=(NR%2)?a[(NR+1)/2]:(a[NR/2]+a[NR/2+1])/2; printf "%.1f", m/1000}'; }
rss() { /usr/bin/time -f '%M' -o "$work/rss" "$@" >/dev/null && echo $(($(cat "$work/rss") / 1024)); }

echo "machine: $(nproc) cores; load $(cut -d' ' -f1-3 /proc/loadavg)"
for n in $epochs; do
	rm -f "$work"/t_*
	"$work/genlog" -epochs "$n" >"$work/run.csv"
	for _ in $(seq "$runs"); do
		wall wc wc -l "$work/run.csv"
		wall report "$work/fitgap" report "$work/run.csv"
		wall png "$work/fitgap" report --plot "$work/c.png" "$work/run.csv"
		wall svg "$work/fitgap" report --plot "$work/c.svg" "$work/run.csv"
	done
	r=$(median report) p=$(median png) s=$(median svg)
	echo "$n epochs ($(($(stat -c %s "$work/run.csv") / 1000)) kB), medians of $runs: wc -l $(median wc) ms, report $r ms, --plot .png $p ms, --plot .svg $s ms"
	awk -v r="$r" -v p="$p" -v s="$s" 'BEGIN{printf "  --plot .png / report = %.2fx (+%.0f ms), --plot .svg / report = %.2fx (+%.0f ms)\n", p/r, p-r, s/r, s-r}'
	if [ -x /usr/bin/time ]; then
		echo "  peak RSS: report $(rss "$work/fitgap" report "$work/run.csv") MiB, --plot .png $(rss "$work/fitgap" report --plot "$work/c.png" "$work/run.csv") MiB, --plot .svg $(rss "$work/fitgap" report --plot "$work/c.svg" "$work/run.csv") MiB"
	fi
	echo "  picture sizes: $(stat -c %s "$work/c.png") B png, $(stat -c %s "$work/c.svg") B svg"
done
