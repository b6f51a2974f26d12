#!/usr/bin/env bash
# Times the whole process of reading a metrics log backlog, against wc -l
# and an awk column sum on the same generated file, in the same run, and
# prints the ratios; then peak RSS, idle CPU while following, and the
# follow latency benchmark.
#
#   bench/ingest.sh              # 1,000,000 lines, 11 runs each
#   RUNS=3 LINES=200000 bench/ingest.sh
#   BIG=1 bench/ingest.sh        # also peak RSS at 10,000,000 lines
#   INSTR=1 bench/ingest.sh      # also instruction counts (valgrind)
#
# Wall times are medians over RUNS interleaved runs (the machine may be
# shared: the load average is printed before and after); ratios are of
# medians. "1 core" is the same binary with GOMAXPROCS=1, the sequential
# path. With perf(1) the CPU time of each command (task-clock, summed over
# its threads) is printed too: unlike wall time it hardly depends on the
# other jobs of the machine, and neither do the instruction counts of
# INSTR=1 (callgrind; Go needs GODEBUG=asyncpreemptoff=1 under valgrind).
# Needs GNU time (/usr/bin/time) for RSS.
set -euo pipefail
cd "$(dirname "$0")/.."

runs=${RUNS:-11}
lines=${LINES:-1000000}
idle=${IDLE_SECONDS:-20}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

go build -o "$work/ingest" ./bench/ingest
go build -o "$work/genlog" ./bench/genlog
"$work/genlog" -format csv -lines "$lines" >"$work/run.csv"
"$work/genlog" -format jsonl -lines "$lines" >"$work/run.jsonl"
cat "$work/run.csv" "$work/run.jsonl" >/dev/null # page cache warm for all

# wall NAME CMD...: run CMD once, append its wall time in ms to $work/NAME.
wall() {
	local name=$1
	shift
	local t0 t1
	t0=$(date +%s%N)
	"$@" >/dev/null
	t1=$(date +%s%N)
	awk -v a="$t0" -v b="$t1" 'BEGIN{printf "%.3f\n", (b - a) / 1e6}' >>"$work/$name"
}

median() { sort -n "$work/$1" | awk '{a[NR]=$1} END{print (NR%2) ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2}'; }

load0=$(cut -d' ' -f1-3 /proc/loadavg)
for _ in $(seq "$runs"); do
	wall wc_csv wc -l "$work/run.csv"
	wall awk_csv awk -F, '{s+=$3} END{print s}' "$work/run.csv"
	wall ingest_csv "$work/ingest" "$work/run.csv"
	wall seq_csv env GOMAXPROCS=1 "$work/ingest" "$work/run.csv"
	wall wc_jsonl wc -l "$work/run.jsonl"
	wall ingest_jsonl "$work/ingest" "$work/run.jsonl"
done

wc_csv=$(median wc_csv)
awk_csv=$(median awk_csv)
ingest_csv=$(median ingest_csv)
seq_csv=$(median seq_csv)
wc_jsonl=$(median wc_jsonl)
ingest_jsonl=$(median ingest_jsonl)
ratio() { awk -v a="$1" -v b="$2" 'BEGIN{printf "%.1f", a / b}'; }

echo "machine: $(nproc) cores, $(awk -F': ' '/model name/{print $2; exit}' /proc/cpuinfo); load $load0 before, $(cut -d' ' -f1-3 /proc/loadavg) after"
echo "awk: $(readlink -f "$(command -v awk)")"
printf 'CSV   %d lines, %s MB: ingest %s ms (1 core %s ms), wc -l %s ms, awk sum %s ms\n' "$lines" \
	"$(($(stat -c %s "$work/run.csv") / 1000000))" "$ingest_csv" "$seq_csv" "$wc_csv" "$awk_csv"
printf '      ingest / wc -l = %sx (target <= 10x); awk / ingest = %sx (target >= 4x); 1 core: %sx, %sx\n' \
	"$(ratio "$ingest_csv" "$wc_csv")" "$(ratio "$awk_csv" "$ingest_csv")" \
	"$(ratio "$seq_csv" "$wc_csv")" "$(ratio "$awk_csv" "$seq_csv")"
printf 'JSONL %d lines, %s MB: ingest %s ms, wc -l %s ms\n' "$lines" \
	"$(($(stat -c %s "$work/run.jsonl") / 1000000))" "$ingest_jsonl" "$wc_jsonl"
printf '      ingest / wc -l = %sx (target <= 20x)\n' "$(ratio "$ingest_jsonl" "$wc_jsonl")"

# cpu CMD...: the median CPU time (task-clock, ms) of CMD over RUNS runs.
cpu() {
	perf stat -x, -e task-clock -r "$runs" "$@" 2>&1 >/dev/null | awk -F, '/task-clock/{printf "%.1f", $1}'
}
if perf stat -e task-clock true >/dev/null 2>&1; then
	echo "CPU time (perf task-clock, mean of $runs): ingest $(cpu "$work/ingest" "$work/run.csv") ms," \
		"1 core $(cpu env GOMAXPROCS=1 "$work/ingest" "$work/run.csv") ms, awk $(cpu awk -F, '{s+=$3} END{print s}' "$work/run.csv") ms," \
		"wc -l $(cpu wc -l "$work/run.csv") ms"
fi
if [ "${INSTR:-0}" = 1 ]; then
	# instr CMD...: instructions executed by CMD and all its threads.
	instr() {
		GODEBUG=asyncpreemptoff=1 valgrind --tool=callgrind --trace-children=yes --callgrind-out-file=/dev/null "$@" 2>&1 >/dev/null |
			awk '/refs:/{gsub(",", "", $NF); printf "%.0f M", $NF / 1e6}'
	}
	echo "instructions (callgrind): ingest $(instr "$work/ingest" "$work/run.csv")," \
		"1 core $(instr env GOMAXPROCS=1 "$work/ingest" "$work/run.csv"), awk $(instr awk -F, '{s+=$3} END{print s}' "$work/run.csv")," \
		"wc -l $(instr wc -l "$work/run.csv")"
fi

rss() { /usr/bin/time -f '%M' -o "$work/rss" "$work/ingest" "$1" >/dev/null && echo "$(($(cat "$work/rss") / 1024))"; }
echo "peak RSS: CSV $(rss "$work/run.csv") MiB, JSONL $(rss "$work/run.jsonl") MiB at $lines lines (target < 48 MiB)"
if [ "${BIG:-0}" = 1 ]; then
	"$work/genlog" -format csv -lines 10000000 >"$work/big.csv"
	echo "peak RSS: CSV $(rss "$work/big.csv") MiB at 10000000 lines (target < 64 MiB)"
	rm -f "$work/big.csv"
fi

# Idle CPU: follow the (finished) CSV and read the process's CPU ticks.
"$work/ingest" -follow "$work/run.csv" >/dev/null &
pid=$!
sleep 2 # the backlog
ticks() { awk '{print $14 + $15}' "/proc/$pid/stat"; }
t0=$(ticks)
sleep "$idle"
t1=$(ticks)
kill "$pid"
wait "$pid" || true
hz=$(getconf CLK_TCK)
echo "idle CPU while following: $(awk -v d=$((t1 - t0)) -v hz="$hz" -v s="$idle" 'BEGIN{printf "%.2f", 100 * d / (hz * s)}')% of one core over ${idle}s (target < 0.5%)"

# Follow latency: write a line to a followed file, wait for its point.
go test ./watch -run '^$' -bench FollowLatency -benchtime 500x | grep -E 'Benchmark'
