#!/usr/bin/env bash
# What `fitgap report --plot` costs beside `fitgap report` on the same
# one-row-per-epoch CSV log, in the same run: medians of interleaved runs
# (wall and CPU time), their ratios, and peak RSS (wc -l for scale).
#
#   bench/plot.sh                         # 300 and 1,000,000 epochs, 7 runs
#   EPOCHS=100000 RUNS=5 bench/plot.sh
#
# Needs GNU time (/usr/bin/time).
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${RUNS:-7}
epochs=${EPOCHS:-"300 1000000"}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

go build -o "$work/fitgap" ./cmd/fitgap
go build -o "$work/genlog" ./bench/genlog

# wall NAME CMD...: records the wall time (from date, in µs) and the CPU
# time (user + system, GNU time's 10 ms steps: read it on the large log),
# which moves less than wall time on a shared machine.
wall() {
	local name=$1
	shift
	local t0 t1
	t0=$(date +%s%N)
	/usr/bin/time -f '%U %S' -o "$work/t" "$@" >/dev/null
	t1=$(date +%s%N)
	echo $(((t1 - t0) / 1000)) >>"$work/t_$name"
	awk '{print ($1+$2)*1000000}' "$work/t" >>"$work/c_$name"
}
median() { sort -n "$work/$2_$1" | awk '{a[NR]=$1} END{m=(NR%2)?a[(NR+1)/2]:(a[NR/2]+a[NR/2+1])/2; printf "%.1f", m/1000}'; }
rss() { /usr/bin/time -f '%M' -o "$work/rss" "$@" >/dev/null && echo $(($(cat "$work/rss") / 1024)); }

echo "machine: $(nproc) cores; load $(cut -d' ' -f1-3 /proc/loadavg)"
for n in $epochs; do
	rm -f "$work"/t_* "$work"/c_*
	"$work/genlog" -epochs "$n" >"$work/run.csv"
	for _ in $(seq "$runs"); do
		wall wc wc -l "$work/run.csv"
		wall report "$work/fitgap" report "$work/run.csv"
		wall png "$work/fitgap" report --plot "$work/c.png" "$work/run.csv"
		wall svg "$work/fitgap" report --plot "$work/c.svg" "$work/run.csv"
	done
	for m in t c; do
		r=$(median report $m) p=$(median png $m) s=$(median svg $m)
		what=wall
		[ $m = c ] && what=CPU
		echo "$n epochs ($(($(stat -c %s "$work/run.csv") / 1000)) kB), $what medians of $runs: wc -l $(median wc $m) ms, report $r ms, --plot .png $p ms, --plot .svg $s ms"
		awk -v r="$r" -v p="$p" -v s="$s" 'BEGIN{if (r == 0) exit; printf "  --plot .png / report = %.2fx (+%.0f ms), --plot .svg / report = %.2fx (+%.0f ms)\n", p/r, p-r, s/r, s-r}'
	done
	echo "  peak RSS: report $(rss "$work/fitgap" report "$work/run.csv") MiB, --plot .png $(rss "$work/fitgap" report --plot "$work/c.png" "$work/run.csv") MiB, --plot .svg $(rss "$work/fitgap" report --plot "$work/c.svg" "$work/run.csv") MiB"
	echo "  picture sizes: $(stat -c %s "$work/c.png") B png, $(stat -c %s "$work/c.svg") B svg"
done
