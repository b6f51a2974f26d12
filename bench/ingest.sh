#!/usr/bin/env bash
# Times the whole process of reading a metrics log backlog in every layout,
# against `wc -l` and a plain Go line count (bufio.Scanner) on the same
# generated file, in the same run, and prints the ratios with their goals;
# for CSV also one core (GOMAXPROCS=1), two cores whatever the load
# (-busyload 0) and an awk column sum. Then peak RSS,
# idle CPU while following, and the follow latency benchmark.
#
#   bench/ingest.sh              # 1,000,000 lines per layout, 11 runs each
#   RUNS=3 LINES=200000 bench/ingest.sh
#   LAYOUTS="csv text" bench/ingest.sh
#   BIG=1 bench/ingest.sh        # also peak RSS at 10,000,000 lines
#   INSTR=1 bench/ingest.sh      # also instruction counts (valgrind), at INSTR_LINES (200,000)
#   BASE=/tmp/ingest.old bench/ingest.sh   # also a build of bench/ingest from another
#                                # commit, interleaved: before and after under one load
#   FRAME=0 bench/ingest.sh      # without the screen's first frame at the end
#                                # (tui/first_frame.sh, when tmux is there)
#   FRAME_BASE=/tmp/fitgap.old bench/ingest.sh   # the frame of another fitgap build too
#
# Wall times are medians over RUNS interleaved runs (the machine may be
# shared: the load average is printed before and after); ratios are of
# medians. The per-step layouts carry the same run (bench/loggen): an epoch
# every 1,000 steps; table and rounds are one row per epoch or round, as
# those writers print. With INSTR=1 the instructions executed (callgrind,
# all threads; Go needs GODEBUG=asyncpreemptoff=1 under valgrind) are the
# figure the load of the machine does not move. Needs GNU time for RSS.
set -euo pipefail
cd "$(dirname "$0")/.."

runs=${RUNS:-11}
lines=${LINES:-1000000}
idle=${IDLE_SECONDS:-20}
layouts=${LAYOUTS:-csv jsonl text table pydict rounds bars}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

go build -o "$work/ingest" ./bench/ingest
go build -o "$work/genlog" ./bench/genlog
go build -o "$work/linecount" ./bench/linecount
for f in $layouts; do
	"$work/genlog" -format "$f" -lines "$lines" >"$work/run.$f"
	cat "$work/run.$f" >/dev/null # page cache warm
done

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
ratio() { awk -v a="$1" -v b="$2" 'BEGIN{printf "%.1f", a / b}'; }
goal() {
	case $1 in
	csv) echo 6 ;;
	jsonl) echo 10 ;;
	text) echo 12 ;;
	*) echo 15 ;;
	esac
}

load0=$(cut -d' ' -f1-3 /proc/loadavg)
for _ in $(seq "$runs"); do
	for f in $layouts; do
		wall "wc_$f" wc -l "$work/run.$f"
		wall "lc_$f" "$work/linecount" "$work/run.$f"
		wall "in_$f" "$work/ingest" "$work/run.$f"
		if [ -n "${BASE:-}" ]; then
			wall "base_$f" "$BASE" "$work/run.$f"
		fi
		if [ "$f" = csv ]; then
			wall seq_csv env GOMAXPROCS=1 "$work/ingest" "$work/run.csv"
			wall par_csv "$work/ingest" -busyload 0 "$work/run.csv"
			wall awk_csv awk -F, '{s+=$3} END{print s}' "$work/run.csv"
		fi
	done
done

echo "machine: $(nproc) cores, $(awk -F': ' '/model name/{print $2; exit}' /proc/cpuinfo); load $load0 before, $(cut -d' ' -f1-3 /proc/loadavg) after"
echo "$lines lines per layout, medians of $runs interleaved runs (ms); Go lines = a bufio.Scanner line count"
printf '%-7s %6s %8s %8s %8s %9s %10s  %s\n' layout MB fitgap "wc -l" "Go lines" "/ wc -l" "/ Go lines" goal
for f in $layouts; do
	in=$(median "in_$f")
	wc=$(median "wc_$f")
	lc=$(median "lc_$f")
	r=$(ratio "$in" "$wc")
	met=$(awk -v r="$r" -v g="$(goal "$f")" 'BEGIN{print (r <= g) ? "met" : "NOT met"}')
	printf '%-7s %6d %8s %8s %8s %8sx %9sx  <= %sx wc -l: %s\n' "$f" "$(($(stat -c %s "$work/run.$f") / 1000000))" \
		"$in" "$wc" "$lc" "$r" "$(ratio "$in" "$lc")" "$(goal "$f")" "$met"
done
if [ -n "${BASE:-}" ]; then
	printf 'baseline %s, same runs:' "$BASE"
	for f in $layouts; do
		b=$(median "base_$f")
		printf ' %s %s ms (%sx wc -l, this build %sx faster);' "$f" "$b" "$(ratio "$b" "$(median "wc_$f")")" "$(ratio "$b" "$(median "in_$f")")"
	done
	echo
fi
case " $layouts " in *" csv "*)
	seq=$(median seq_csv)
	awk_ms=$(median awk_csv)
	printf 'CSV on 1 core (GOMAXPROCS=1): %s ms, %sx wc -l; awk column sum %s ms: %sx slower than fitgap on 2 cores (goal >= 4x), %sx than on 1 core\n' \
		"$seq" "$(ratio "$seq" "$(median wc_csv)")" "$awk_ms" "$(ratio "$awk_ms" "$(median in_csv)")" "$(ratio "$awk_ms" "$seq")"
	par=$(median par_csv)
	printf 'CSV always on 2 cores (-busyload 0, whatever the load): %s ms, %sx wc -l; the load-chosen path above: %s ms\n' \
		"$par" "$(ratio "$par" "$(median wc_csv)")" "$(median in_csv)"
	echo "awk: $(readlink -f "$(command -v awk)")"
	;;
esac

if [ "${INSTR:-0}" = 1 ]; then
	ilines=${INSTR_LINES:-200000}
	# instr CMD...: instructions executed by CMD and all its threads, in millions.
	instr() {
		GODEBUG=asyncpreemptoff=1 valgrind --tool=callgrind --trace-children=yes --callgrind-out-file=/dev/null "$@" 2>&1 >/dev/null |
			awk '/refs:/{gsub(",", "", $NF); printf "%.1f", $NF / 1e6}'
	}
	echo "instructions (callgrind, millions; $ilines lines): layout fitgap wc-l Go-lines ratio-to-wc"
	for f in $layouts; do
		"$work/genlog" -format "$f" -lines "$ilines" >"$work/i.$f"
		a=$(instr "$work/ingest" "$work/i.$f")
		b=$(instr wc -l "$work/i.$f")
		c=$(instr "$work/linecount" "$work/i.$f")
		echo "  $f $a $b $c $(ratio "$a" "$b")x"
		if [ "$f" = csv ]; then
			echo "  csv-1-core $(instr env GOMAXPROCS=1 "$work/ingest" "$work/i.csv") awk $(instr awk -F, '{s+=$3} END{print s}' "$work/i.csv")"
		fi
		rm -f "$work/i.$f"
	done
fi

rss() { /usr/bin/time -f '%M' -o "$work/rss" "$work/ingest" "$1" >/dev/null && echo "$(($(cat "$work/rss") / 1024))"; }
printf 'peak RSS (MiB) at %d lines:' "$lines"
for f in $layouts; do printf ' %s %s' "$f" "$(rss "$work/run.$f")"; done
echo
if [ "${BIG:-0}" = 1 ]; then
	for f in csv text; do
		"$work/genlog" -format "$f" -lines 10000000 >"$work/big.$f"
		echo "peak RSS: $f $(rss "$work/big.$f") MiB at 10000000 lines"
		rm -f "$work/big.$f"
	done
fi

case " $layouts " in *" csv "*)
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
	;;
esac

# Follow latency: write a line to a followed file, wait for its point.
go test ./watch -run '^$' -bench FollowLatency -benchtime 500x | grep -E 'Benchmark'

# The screen's first frame of a per-step log against the same epochs
# without step rows (issue goal ≤ 2×), when tmux is there; FRAME=0 skips
# it. Its runs are capped at 7: a frame takes a second or more.
if [ "${FRAME:-1}" = 1 ] && command -v tmux >/dev/null; then
	echo "first frame (tui/first_frame.sh $lines $((runs < 7 ? runs : 7))):"
	# BASE above is a build of bench/ingest; the frame's is FRAME_BASE, a
	# build of fitgap.
	env -u BASE ${FRAME_BASE:+BASE="$FRAME_BASE"} tui/first_frame.sh "$lines" "$((runs < 7 ? runs : 7))" | sed 's/^/  /'
fi
