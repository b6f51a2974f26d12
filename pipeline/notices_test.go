package pipeline

import (
	"context"
	"fmt"
	"io"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/watch"
)

// TestRun_NoticesReachTheSummary: what the reader noticed (a fall back to
// polling, a truncation) reaches the summary as well as the update, so a
// report, a summary file or a follow line says it too; repeats are kept
// once with their count, and a flood is bounded.
func TestRun_NoticesReachTheSummary(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(4))
	at := time.Unix(1700000000, 0)
	polling := watch.Notice{Time: at, Text: "cannot watch /logs (too many open files): checking every 250ms"}
	trunc := watch.Notice{Time: at, Text: "run.csv truncated: reading from the start (segment 2)"}
	waitingStats := stats
	waitingStats.State = watch.StateWaiting
	waiting := watch.Notice{Time: at, Text: "waiting for run.csv"}
	tests := []struct {
		name    string
		batches []watch.Batch
		load    bool // Run.Load (report) instead of Run.Apply
		want    []string
		absent  []string
	}{
		{"Apply", []watch.Batch{{Points: pts[:2], Notices: []watch.Notice{polling}, Stats: stats}, {Points: pts[2:], Stats: stats}},
			false, []string{polling.Text}, nil},
		{"Load", []watch.Batch{{Points: pts, Notices: []watch.Notice{trunc}, Stats: stats}}, true, []string{trunc.Text}, nil},
		{"RepeatsOnce", []watch.Batch{{Points: pts, Notices: []watch.Notice{trunc, trunc, trunc}, Stats: stats}}, false,
			[]string{trunc.Text + " (3 times)"}, nil},
		{"BeforeAnyPoint", []watch.Batch{{Notices: []watch.Notice{{Time: at, Text: "waiting for run.csv"}}, Stats: waitingStats}}, false,
			[]string{"waiting for run.csv"}, nil},
		// A wait that ended is not a warning: the file arrived.
		{"WaitGoesOn", []watch.Batch{{Notices: []watch.Notice{waiting}, Stats: waitingStats}}, false,
			[]string{"waiting for run.csv"}, nil},
		{"WaitEnded", []watch.Batch{{Notices: []watch.Notice{waiting, polling}, Stats: waitingStats}, {Points: pts, Stats: stats}}, false,
			[]string{polling.Text}, []string{"waiting for run.csv"}},
		{"Flood", []watch.Batch{{Points: pts, Notices: flood(100), Stats: stats}}, false,
			[]string{"notice 0", "notice 7", "notice 99", "84 more notices"}, []string{"notice 50"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			run := New(Options{Name: "run.csv"})
			for _, b := range tt.batches {
				if tt.load {
					run.Load(b)
				} else if u := run.Apply(b); len(u.Notices) != len(b.Notices) {
					t.Fatalf("the update carries %d notices of %d", len(u.Notices), len(b.Notices))
				}
			}
			got := run.Summary().Source.Warnings
			for _, w := range tt.want {
				if !slices.ContainsFunc(got, func(s string) bool { return strings.Contains(s, w) }) {
					t.Errorf("summary warnings %q lack %q", got, w)
				}
			}
			for _, w := range tt.absent {
				if slices.ContainsFunc(got, func(s string) bool { return strings.HasSuffix(s, w) }) {
					t.Errorf("summary warnings %q hold %q, which the bound should drop", got, w)
				}
			}
			if md := run.Summary().Markdown(); !strings.Contains(md, tt.want[0]) {
				t.Errorf("the Markdown summary lacks %q:\n%s", tt.want[0], md)
			}
		})
	}
}

func flood(n int) []watch.Notice {
	out := make([]watch.Notice, n)
	for i := range out {
		out[i] = watch.Notice{Text: fmt.Sprintf("notice %d", i)}
	}
	return out
}

// TestSource_QuietPipeHint: a followed pipe that brings no evaluation
// point for a while gets a notice saying why (an output buffered by
// Python) and how to fix it, once; the first points end it, in the
// summary too.
func TestSource_QuietPipeHint(t *testing.T) {
	r, w := io.Pipe()
	defer r.Close()
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	src := Source{Path: "-", Stdin: r, Read: watch.Options{Follow: true}, QuietHint: 20 * time.Millisecond}
	batches, err := src.Follow(ctx)
	if err != nil {
		t.Fatal(err)
	}
	run := New(Options{Name: src.Name()})
	next := func() watch.Batch {
		t.Helper()
		select {
		case b, ok := <-batches:
			if !ok {
				t.Fatal("the batches ended")
			}
			run.Apply(b)
			return b
		case <-time.After(10 * time.Second):
			t.Fatal("no batch in 10 s")
		}
		return watch.Batch{}
	}
	b := next()
	if len(b.Notices) != 1 || !strings.Contains(b.Notices[0].Text, "python -u") || !b.Notices[0].Waits() {
		t.Fatalf("the first batch of a silent pipe is %+v, want the hint", b)
	}
	if got := strings.Join(run.Summary().Source.Warnings, "\n"); !strings.Contains(got, "PYTHONUNBUFFERED=1") {
		t.Errorf("the summary lacks the hint while the pipe is silent: %q", got)
	}
	go func() {
		io.WriteString(w, overfitCSV(4))
		w.Close()
	}()
	for points := 0; points < 4; {
		b := next()
		points += len(b.Points)
		for _, n := range b.Notices {
			if strings.Contains(n.Text, "python -u") {
				t.Errorf("the hint came twice")
			}
		}
	}
	if got := strings.Join(run.Summary().Source.Warnings, "\n"); strings.Contains(got, "python -u") {
		t.Errorf("the hint stays in the summary after the points came: %q", got)
	}
}
