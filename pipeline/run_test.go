package pipeline

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"runtime/pprof"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/watch"
)

// overfitCSV is an invented run whose validation error turns upwards after
// epoch 10, so the early-stopping signal reaches stop some epochs later.
func overfitCSV(epochs int) string {
	var b strings.Builder
	b.WriteString("epoch,train_loss,val_loss,train_acc,val_acc\n")
	for e := 1; e <= epochs; e++ {
		x := float64(e)
		tr := 0.05 + 0.5*math.Exp(-x/6)
		va := 0.1 + 0.45*math.Exp(-x/6)
		if e > 10 {
			va += 0.008 * float64(e-10)
		}
		fmt.Fprintf(&b, "%d,%.4f,%.4f,%.4f,%.4f\n", e, 2.2*tr, 2.2*va, 1-tr, 1-va)
	}
	return b.String()
}

// readCSV reads a log held in a string.
func readCSV(t testing.TB, csv string) ([]diagnose.Point, watch.Stats) {
	t.Helper()
	pts, stats, err := watch.ReadAll("run.csv", strings.NewReader(csv), watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return pts, stats
}

// batchesOf cuts points into batches of n, as a reader hands them on.
func batchesOf(pts []diagnose.Point, stats watch.Stats, n int) []watch.Batch {
	var out []watch.Batch
	for i := 0; i < len(pts); i += n {
		out = append(out, watch.Batch{Points: pts[i:min(i+n, len(pts))], Stats: stats})
	}
	return out
}

// firstStop is the index of the first judgement whose signal is stop, -1
// for none, judged by a plain Tracker.
func firstStop(pts []diagnose.Point, cfg diagnose.Config) int {
	t := diagnose.New(cfg)
	for i, p := range pts {
		if t.Add(p).EarlyStop.Signal == diagnose.Stop {
			return i
		}
	}
	return -1
}

// TestRun_ApplyJudgesAsOneTracker: whatever the batching, the run's
// judgements are those of one Tracker fed the same points, and its history
// answers "as judged then" for every point.
func TestRun_ApplyJudgesAsOneTracker(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(30))
	ref := diagnose.New(diagnose.DefaultConfig())
	var want []diagnose.Judgement
	for _, p := range pts {
		want = append(want, ref.Add(p))
	}
	for _, size := range []int{1, 7, 30} {
		t.Run(fmt.Sprintf("Batches%d", size), func(t *testing.T) {
			run := New(Options{Name: "run.csv", Judge: diagnose.DefaultConfig()})
			var got []diagnose.Judgement
			for _, b := range batchesOf(pts, stats, size) {
				u := run.Apply(b)
				if len(u.Points) != len(b.Points) || len(u.Judgements) != len(b.Points) {
					t.Fatalf("update has %d points and %d judgements for a batch of %d", len(u.Points), len(u.Judgements), len(b.Points))
				}
				got = append(got, u.Judgements...)
			}
			if !reflect.DeepEqual(got, want) {
				t.Fatalf("judgements differ from one Tracker's")
			}
			run.Read(func(h *diagnose.Tracker) {
				if h.Len() != len(want) {
					t.Fatalf("history holds %d points, want %d", h.Len(), len(want))
				}
				for i := range want {
					if j := h.At(i); !reflect.DeepEqual(j, want[i]) {
						t.Fatalf("history at %d: epoch %d %v, want as judged then: epoch %d %v", i, j.Epoch, j.Diagnosis, want[i].Epoch, want[i].Diagnosis)
					}
				}
			})
		})
	}
}

// TestRun_ApplyRejudged: the update says when the Tracker judged earlier
// points again — here an accuracy column written in percent shows itself
// only at epoch 3 (a value above 1), so epochs 1 and 2 were read on the
// wrong scale — and not when only the first point of a run was judged.
func TestRun_ApplyRejudged(t *testing.T) {
	csv := "epoch,train_acc,val_acc\n1,0.9,0.8\n2,0.95,0.85\n3,96,86\n4,97,87\n"
	pts, stats := readCSV(t, csv)
	run := New(Options{Name: "run.csv"})
	for i, want := range []bool{false, false, true, false} {
		u := run.Apply(watch.Batch{Points: pts[i : i+1], Stats: stats})
		if u.Rejudged != want {
			t.Errorf("epoch %d: Rejudged %v, want %v", i+1, u.Rejudged, want)
		}
	}
}

// TestRun_StopFileOnce: the stop file is created at the first point whose
// signal is stop, holds that judgement, and is not touched again.
func TestRun_StopFileOnce(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(40))
	stopAt := firstStop(pts, diagnose.DefaultConfig())
	if stopAt < 0 || stopAt > 35 {
		t.Fatalf("fixture: first stop at index %d, want one well before the end", stopAt)
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "run.stop")
	sf, err := OpenStopFile(path, "")
	if err != nil {
		t.Fatal(err)
	}
	run := New(Options{Name: "run.csv", StopFile: sf})
	events := 0
	for i, b := range batchesOf(pts, stats, 1) {
		u := run.Apply(b)
		if u.Stop == nil {
			continue
		}
		events++
		if u.Stop.Err != nil || i != stopAt || u.Stop.Epoch != pts[stopAt].Epoch {
			t.Errorf("stop event at index %d: %+v, want one at index %d (epoch %d) without error", i, u.Stop, stopAt, pts[stopAt].Epoch)
		}
	}
	if events != 1 {
		t.Errorf("%d stop events, want 1", events)
	}
	var body struct {
		Epoch     int      `json:"epoch"`
		BestEpoch int      `json:"best_epoch"`
		BestVal   *float64 `json:"best_val"`
		Metric    string   `json:"metric"`
		Reason    string   `json:"reason"`
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &body); err != nil || body.Epoch != pts[stopAt].Epoch || body.BestEpoch < 1 || body.BestEpoch >= body.Epoch || body.BestVal == nil || body.Metric == "" || body.Reason == "" {
		t.Errorf("stop file %q (%v): want the judgement of epoch %d", b, err, pts[stopAt].Epoch)
	}
	assertNoTemp(t, dir)
}

// TestRun_StopFileNeverOverwrites: a file that appears at the stop path
// after the start is left alone; the update says why nothing was created,
// and the next point that says stop tries again.
func TestRun_StopFileNeverOverwrites(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(41))
	dir := t.TempDir()
	path := filepath.Join(dir, "run.stop")
	sf, err := OpenStopFile(path, "")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, []byte("someone else's\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	run := New(Options{Name: "run.csv", StopFile: sf})
	u := run.Apply(watch.Batch{Points: pts[:40], Stats: stats})
	if u.Stop == nil || u.Stop.Err == nil || !strings.Contains(u.Stop.Err.Error(), "already exists") {
		t.Fatalf("stop event %+v, want an error saying the file exists", u.Stop)
	}
	if b, _ := os.ReadFile(path); string(b) != "someone else's\n" {
		t.Errorf("the file that appeared was overwritten: %q", b)
	}
	assertNoTemp(t, dir)
	if err := os.Remove(path); err != nil {
		t.Fatal(err)
	}
	u = run.Apply(watch.Batch{Points: pts[40:], Stats: stats})
	if u.Stop == nil || u.Stop.Err != nil || u.Stop.Epoch != 41 {
		t.Fatalf("stop event %+v at epoch 41, want the file created", u.Stop)
	}
	if _, err := os.Stat(path); err != nil {
		t.Errorf("no stop file after the retry: %v", err)
	}
}

// TestRun_EndOnStop cuts the batch after the first stop.
func TestRun_EndOnStop(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(40))
	stopAt := firstStop(pts, diagnose.DefaultConfig())
	run := New(Options{Name: "run.csv", EndOnStop: true, Summaries: true})
	u := run.Apply(watch.Batch{Points: pts, Stats: stats})
	if !u.Ended || len(u.Points) != stopAt+1 || len(u.Judgements) != stopAt+1 || len(u.Summaries) != stopAt+1 {
		t.Fatalf("ended %v with %d points, %d judgements, %d summaries; want the batch cut after index %d",
			u.Ended, len(u.Points), len(u.Judgements), len(u.Summaries), stopAt)
	}
	if n := run.Len(); n != stopAt+1 {
		t.Errorf("history holds %d points after the end, want %d", n, stopAt+1)
	}
}

// TestRun_SummariesAsOfEachPoint: follow's summaries are those a whole-log
// report gives on the log cut after each point.
func TestRun_SummariesAsOfEachPoint(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(25))
	run := New(Options{Name: "run.csv", Summaries: true})
	var got []report.Summary
	for _, b := range batchesOf(pts, stats, 4) {
		got = append(got, run.Apply(b).Summaries...)
	}
	for _, i := range []int{0, 9, 24} {
		cut := New(Options{Name: "run.csv"})
		cut.Load(watch.Batch{Points: pts[:i+1], Stats: stats})
		if want := cut.Summary(); !reflect.DeepEqual(got[i], want) {
			t.Errorf("summary of point %d differs from a report on the log cut there", i)
		}
	}
}

// TestAppendLine_SameBytesAsBefore: a follow line is the summary marshalled
// whole with its time; its bytes are those of the compact report JSON with
// the "time" key added last, as follow has always printed.
func TestAppendLine_SameBytesAsBefore(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(12))
	run := New(Options{Name: "runs/<odd> & name.csv"})
	run.Load(watch.Batch{Points: pts, Stats: stats})
	s := run.Summary()
	at := time.Date(2026, 3, 1, 12, 0, 0, 123456789, time.FixedZone("x", 3600))
	got, err := AppendLine(nil, s, at)
	if err != nil {
		t.Fatal(err)
	}
	indented, err := s.JSON()
	if err != nil {
		t.Fatal(err)
	}
	var want bytes.Buffer
	if err := json.Compact(&want, indented); err != nil {
		t.Fatal(err)
	}
	want.Truncate(want.Len() - 1) // the closing brace
	want.WriteString(`,"time":"2026-03-01T11:00:00.123Z"}` + "\n")
	if string(got) != want.String() {
		t.Errorf("line\n%s\nwant\n%s", got, want.String())
	}
}

// TestRun_Drive covers how a run ends: its source ends, its context ends,
// it stops on stop, no line comes for IdleEnd, or its sink fails.
func TestRun_Drive(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(40))
	sinkErr := errors.New("disk full")
	tests := []struct {
		name    string
		opts    Options
		close   bool // close the batches after sending them
		cancel  bool // cancel the context after sending them
		failAt  int  // emit fails at this update (1-based); 0 never
		wantErr error
		wantPts int // points handed on
	}{
		{"SourceEnds", Options{}, true, false, 0, nil, 40},
		{"ContextEnds", Options{}, false, true, 0, nil, 40},
		{"EndOnStop", Options{EndOnStop: true}, false, false, 0, nil, firstStop(pts, diagnose.DefaultConfig()) + 1},
		{"IdleEnd", Options{IdleEnd: 20 * time.Millisecond}, false, false, 0, nil, 40},
		// The timer fires at once, with batches waiting: they are not
		// idleness, so every one is taken before the run ends.
		{"IdleEndWithBatchesWaiting", Options{IdleEnd: time.Microsecond}, false, false, 0, nil, 40},
		{"SinkFails", Options{}, false, false, 3, sinkErr, 3},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			batches := make(chan watch.Batch, len(pts))
			for _, b := range batchesOf(pts, stats, 1) {
				batches <- b
			}
			if tt.close {
				close(batches)
			}
			handed, updates := 0, 0
			emit := func(u Update) error {
				updates++
				handed += len(u.Points)
				if updates == tt.failAt {
					return sinkErr
				}
				if handed == len(pts) && tt.cancel {
					cancel()
				}
				return nil
			}
			opts := tt.opts
			opts.Name = "run.csv"
			done := make(chan error, 1)
			go func() { done <- New(opts).Drive(ctx, batches, emit) }()
			select {
			case err := <-done:
				if !errors.Is(err, tt.wantErr) || handed != tt.wantPts {
					t.Errorf("Drive = %v after %d points, want %v after %d", err, handed, tt.wantErr, tt.wantPts)
				}
			case <-time.After(10 * time.Second):
				t.Fatal("Drive did not end")
			}
		})
	}
}

// TestRun_WriterDoneFinishes: once the log's writer has ended, a live
// source is reported finished, now and in later updates.
func TestRun_WriterDoneFinishes(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(3))
	stats.State = watch.StateLive
	writerDone := make(chan struct{})
	batches := make(chan watch.Batch)
	updates := make(chan Update)
	run := New(Options{Name: "run.csv", WriterDone: writerDone})
	driven := make(chan struct{})
	go func() {
		defer close(driven)
		run.Drive(context.Background(), batches, func(u Update) error { updates <- u; return nil })
	}()
	batches <- watch.Batch{Points: pts[:1], Stats: stats}
	if u := <-updates; u.Stats.State != watch.StateLive {
		t.Fatalf("state %v before the writer ended, want live", u.Stats.State)
	}
	close(writerDone)
	if u := <-updates; u.Stats.State != watch.StateFinished || len(u.Points) != 0 {
		t.Errorf("update on the writer's end: state %v, %d points; want finished, none", u.Stats.State, len(u.Points))
	}
	batches <- watch.Batch{Points: pts[1:], Stats: stats}
	if u := <-updates; u.Stats.State != watch.StateFinished || len(u.Points) != 2 {
		t.Errorf("last lines after the writer's end: state %v, %d points; want finished, 2", u.Stats.State, len(u.Points))
	}
	close(batches)
	<-driven
}

// TestRun_ReadWhileDriving reads the history from another goroutine while
// the run judges (run under -race): every read sees a whole history.
func TestRun_ReadWhileDriving(t *testing.T) {
	pts, stats := readCSV(t, overfitCSV(200))
	run := New(Options{Name: "run.csv"})
	batches := make(chan watch.Batch)
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		run.Drive(context.Background(), batches, func(Update) error { return nil })
	}()
	stop := make(chan struct{})
	reads := make(chan int)
	go func() {
		n := 0
		for {
			select {
			case <-stop:
				reads <- n
				return
			default:
			}
			run.Read(func(h *diagnose.Tracker) {
				if l := h.Len(); l > 0 && h.At(l-1).Index != l-1 {
					t.Errorf("read a torn history: last index %d of %d", h.At(l-1).Index, l)
				}
			})
			_ = run.Summary()
			n++
		}
	}()
	for _, b := range batchesOf(pts, stats, 3) {
		batches <- b
	}
	close(batches)
	wg.Wait()
	close(stop)
	if n := <-reads; n == 0 {
		t.Error("no read happened")
	}
	if run.Len() != len(pts) {
		t.Errorf("run judged %d points, want %d", run.Len(), len(pts))
	}
}

// TestRun_IdleCostsOneBlockedGoroutine: a run waiting on an idle log is one
// goroutine parked in Drive's select, and the pipeline starts nothing else,
// so a thousand idle runs cost a thousand parked goroutines. It reads the
// goroutine dump, not the clock.
func TestRun_IdleCostsOneBlockedGoroutine(t *testing.T) {
	const runs = 1000
	ctx, cancel := context.WithCancel(context.Background())
	var wg sync.WaitGroup
	for i := 0; i < runs; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			New(Options{Name: "run.csv"}).Drive(ctx, make(chan watch.Batch), func(Update) error { return nil })
		}()
	}
	defer func() {
		cancel()
		wg.Wait()
	}()
	deadline := time.Now().Add(10 * time.Second)
	for {
		parked, others := pipelineGoroutines(t)
		if parked == runs && others == 0 {
			return
		}
		if time.Now().After(deadline) {
			t.Fatalf("%d idle runs: %d goroutines parked in Drive's select, %d other pipeline goroutines; want %d and 0", runs, parked, others, runs)
		}
		runtime.Gosched()
	}
}

// pipelineGoroutines counts, in the goroutine dump, the goroutines parked
// in Run.Drive's select and the other goroutines running pipeline code
// (the test's own functions aside).
func pipelineGoroutines(t *testing.T) (parked, others int) {
	t.Helper()
	var buf bytes.Buffer
	if err := pprof.Lookup("goroutine").WriteTo(&buf, 2); err != nil {
		t.Fatal(err)
	}
	for _, g := range strings.Split(buf.String(), "\n\n") {
		inDrive := strings.Contains(g, "pipeline.(*Run).Drive(")
		switch {
		case inDrive && strings.Contains(strings.SplitN(g, "\n", 2)[0], "[select"):
			parked++
		case inDrive, strings.Contains(g, "fitgap/pipeline.") && !strings.Contains(g, "pipeline.Test"):
			others++
		}
	}
	return parked, others
}

func assertNoTemp(t *testing.T, dir string) {
	t.Helper()
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp-") {
			t.Errorf("temporary file left behind: %s", e.Name())
		}
	}
}
