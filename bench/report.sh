#!/usr/bin/env bash
# Times `fitgap report` (read + judge every point + print the summary) against
# ingestion alone (bench/ingest: read + aggregate, no judgement) on the same
# generated 1,000,000-line per-step CSV, in the same run, and prints the ratio
# (target: report within 1.2x of ingestion). Also times `fitgap report` against
# `wc -l` for scale.
#
#   bench/report.sh              # 1,000,000 lines, 9 interleaved runs
#   RUNS=5 LINES=200000 bench/report.sh
set -euo pipefail
cd "$(dirname "$0")/.."
runs=${RUNS:-9}
lines=${LINES:-1000000}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

go build -o "$work/fitgap" ./cmd/fitgap
go build -o "$work/ingest" ./bench/ingest
go build -o "$work/genlog" ./bench/genlog
"$work/genlog" -format csv -lines "$lines" >"$work/run.csv"
cat "$work/run.csv" >/dev/null

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

for _ in $(seq "$runs"); do
	wall wc wc -l "$work/run.csv"
	wall ingest "$work/ingest" "$work/run.csv"
	wall report "$work/fitgap" report "$work/run.csv"
	wall report_json "$work/fitgap" report --json "$work/run.csv"
done
ingest=$(median ingest)
report=$(median report)
json=$(median report_json)
wc=$(median wc)
echo "machine: $(nproc) cores; load $(cut -d' ' -f1-3 /proc/loadavg); $lines lines, $(($(stat -c %s "$work/run.csv") / 1000000)) MB"
echo "medians of $runs: wc -l $wc ms, ingest $ingest ms, report $report ms, report --json $json ms"
awk -v r="$report" -v j="$json" -v i="$ingest" -v w="$wc" 'BEGIN{printf "report / ingest = %.2fx, report --json / ingest = %.2fx (target <= 1.2x); report / wc -l = %.1fx\n", r/i, j/i, r/w}'
if [ -x /usr/bin/time ]; then
	/usr/bin/time -f '%M' -o "$work/rss" "$work/fitgap" report "$work/run.csv" >/dev/null
	echo "peak RSS of report: $(($(cat "$work/rss") / 1024)) MiB"
fi
