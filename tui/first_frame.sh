#!/usr/bin/env bash
# first_frame.sh: how long the live screen takes to show a whole per-step
# backlog, and its peak memory, against the same epochs without step rows.
#
#   tui/first_frame.sh [LINES] [RUNS]   (default 1000000 steps, 5 runs; needs tmux, GNU time)
#   BASE=/tmp/fitgap.old tui/first_frame.sh   # also a build of fitgap from another
#                                # commit, interleaved: before and after under one load
#   CPU=1 tui/first_frame.sh     # CPU time by perf stat, to the millisecond
#
# Builds fitgap and bench/genlog, writes a per-step CSV of LINES steps (an
# epoch every 1,000 steps) and the same file cut to its epoch rows, then,
# interleaved RUNS times each, opens `fitgap watch` on it in a detached
# 200×60 tmux pane and times from the start of the process to the first
# frame whose status line reads the last epoch (the whole backlog read,
# judged and drawn). Peak RSS is GNU time's maximum resident set size, CPU
# the process's user + system time to its exit (the frame, a keypress and
# the exit: a measure that a busy machine disturbs less than the wall), by
# GNU time (in 10 ms steps), or with CPU=1 by perf stat's task-clock (to
# the millisecond, but perf's start adds to every wall time, so the
# ratios of walls lean towards 1: compare walls of runs without it).
# Prints medians and the ratio of the per-step file to the epochs-only one.
set -euo pipefail
lines=${1:-1000000}
runs=${2:-5}
root=$(cd "$(dirname "$0")/.." && pwd)
tmp=$(mktemp -d)
name="fitgap-frame-$$"
trap 'tmux -L "$name" kill-server 2>/dev/null || true; rm -rf "$tmp"' EXIT
(cd "$root" && go build -o "$tmp/fitgap" ./cmd/fitgap && go build -o "$tmp/genlog" ./bench/genlog)
"$tmp/genlog" -format csv -lines "$lines" >"$tmp/steps.csv"
awk -F, 'NR == 1 || $6 != ""' "$tmp/steps.csv" >"$tmp/epochs.csv"
last=$(tail -n 1 "$tmp/epochs.csv" | cut -d, -f1)
cat "$tmp/steps.csv" "$tmp/epochs.csv" >/dev/null # page cache warm

# waitfor FILE PATTERN: waits up to 30 s for a line of FILE matching PATTERN.
waitfor() {
	local i
	for i in $(seq 600); do
		grep -q "$2" "$1" 2>/dev/null && return 0
		sleep 0.05
	done
	echo "first_frame.sh: nothing in $1 after 30 s" >&2
	exit 1
}

# once KIND [BIN [TAG]]: one run of BIN (this build) on $tmp/KIND.csv;
# appends "ms rss_kib cpu_ms" to $tmp/TAGKIND.
once() {
	local kind=$1 bin=${2:-$tmp/fitgap} tag=${3:-} t0 t1
	rm -f "$tmp/rss" "$tmp/cpu"
	t0=$(date +%s%N)
	tmux -L "$name" new-session -d -s "$name" -x 200 -y 60 \
		"$cpu /usr/bin/time -f '%M %U %S' -o $tmp/rss $bin watch $tmp/$kind.csv"
	local deadline=$((t0 + 120 * 1000000000)) # a frame that never comes is an error, not a hang
	until tmux -L "$name" capture-pane -p -t "$name" 2>/dev/null | grep -q "epoch $last "; do
		if [ "$(date +%s%N)" -gt "$deadline" ]; then
			echo "first_frame.sh: $bin on $kind.csv showed no frame with epoch $last in 120 s" >&2
			exit 1
		fi
		sleep 0.005
	done
	t1=$(date +%s%N)
	tmux -L "$name" send-keys -t "$name" q
	# The pane goes once its command is done: GNU time's and perf's
	# figures are written by then (killing the pane first lost perf's).
	waitfor "$tmp/rss" .
	[ -z "$cpu" ] || waitfor "$tmp/cpu" task-clock
	tmux -L "$name" kill-server 2>/dev/null || true
	local used
	used=$(tail -n 1 "$tmp/rss" | awk '{printf "%d", ($2 + $3) * 1000}')
	if [ -n "$cpu" ]; then
		used=$(grep task-clock "$tmp/cpu" | cut -d, -f1 | awk '{printf "%d", $1}')
	fi
	echo "$(((t1 - t0) / 1000000)) $(tail -n 1 "$tmp/rss" | cut -d' ' -f1) $used" >>"$tmp/$tag$kind"
}

cpu=""
if [ -n "${CPU:-}" ] && perf stat -x, -e task-clock -o /dev/null true 2>/dev/null; then
	cpu="perf stat -x, -e task-clock -o $tmp/cpu --"
fi

median() { sort -n | awk '{a[NR]=$1} END{print (NR%2) ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2}'; }

echo "load before: $(cut -d' ' -f1-3 /proc/loadavg)"
for _ in $(seq "$runs"); do
	once steps
	once epochs
	if [ -n "${BASE:-}" ]; then
		once steps "$BASE" base_
		once epochs "$BASE" base_
	fi
done
echo "load after:  $(cut -d' ' -f1-3 /proc/loadavg)"
# show TAG KIND LABEL: the medians of one build on one file.
show() {
	local f=$tmp/$1$2
	printf "%-12s first full frame %6s ms (runs: %s), peak RSS %s MiB, CPU %s ms\n" "$3" \
		"$(cut -d' ' -f1 "$f" | median)" "$(cut -d' ' -f1 "$f" | tr '\n' ' ' | sed 's/ $//')" \
		"$(cut -d' ' -f2 "$f" | median | awk '{printf "%.1f", $1/1024}')" "$(cut -d' ' -f3 "$f" | median)"
}
for kind in epochs steps; do show "" $kind $kind; done
awk -v a="$(cut -d' ' -f1 "$tmp/steps" | median)" -v b="$(cut -d' ' -f1 "$tmp/epochs" | median)" \
	'BEGIN{printf "ratio   %.2f× (%d step rows against %d epoch rows)\n", a/b, '"$lines"', '"$last"'}'
if [ -n "${BASE:-}" ]; then
	for kind in epochs steps; do show base_ $kind "base $kind"; done
	awk -v a="$(cut -d' ' -f1 "$tmp/base_steps" | median)" -v b="$(cut -d' ' -f1 "$tmp/base_epochs" | median)" \
		'BEGIN{printf "base ratio %.2f× (%s)\n", a/b, "'"$BASE"'"}'
fi
