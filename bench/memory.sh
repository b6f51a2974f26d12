#!/usr/bin/env bash
# Peak RSS and wall time of `fitgap report` on one-row-per-epoch CSV logs
# (read + judge every epoch + print the summary), beside `wc -l` on the same
# file in the same run for scale.
#
#   bench/memory.sh                    # 1,000,000 epochs
#   EPOCHS="1000000 10000000" bench/memory.sh
#   FITGAP=/tmp/old-fitgap bench/memory.sh   # measure another build
#
# Needs GNU time (/usr/bin/time) for the peak RSS (its %M, in KiB).
set -euo pipefail
cd "$(dirname "$0")/.."
epochs=${EPOCHS:-1000000}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

bin=${FITGAP:-}
if [ -z "$bin" ]; then
	go build -o "$work/fitgap" ./cmd/fitgap
	bin="$work/fitgap"
fi
go build -o "$work/genlog" ./bench/genlog

# measure NAME CMD...: wall seconds and peak RSS in MiB.
measure() {
	local name=$1
	shift
	/usr/bin/time -f '%e %M' -o "$work/t" "$@" >/dev/null
	read -r secs kib <"$work/t"
	printf '  %-14s %8.2f s %9.1f MiB\n' "$name" "$secs" "$(echo "$kib / 1024" | bc -l)"
}

echo "machine: $(nproc) cores; load $(cut -d' ' -f1-3 /proc/loadavg)"
for n in $epochs; do
	"$work/genlog" -epochs "$n" >"$work/run.csv"
	echo "$n epochs, $(($(stat -c %s "$work/run.csv") / 1000000)) MB:"
	measure "wc -l" wc -l "$work/run.csv"
	measure "report" "$bin" report "$work/run.csv"
	measure "report --json" "$bin" report --json "$work/run.csv"
	rm -f "$work/run.csv"
done
