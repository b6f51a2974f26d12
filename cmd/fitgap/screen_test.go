package main

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

// TestRelay_StopFileAndFinished drives the screen's relay with the demo's
// overfitting run: the stop file is created once the command line's
// judgement says stop, whatever the screen shows, the screen receives
// every point judged, and the end of the writer turns the source to
// finished.
func TestRelay_StopFileAndFinished(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	logPath := overfitLog(t)
	points, stats, err := watch.ReadAll(logPath, nil, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	stopPath := filepath.Join(dir, "run.stop")
	src := pipeline.Source{Path: logPath}
	stop, err := openStopFile(stopPath, src)
	if err != nil {
		t.Fatal(err)
	}
	batches := make(chan watch.Batch)
	writerDone := make(chan struct{})
	feed := make(chan tui.FeedMsg, len(points)+2)
	cfg := diagnose.DefaultConfig()
	cfg.BayesError, cfg.BayesErrorGiven = 0.05, true
	run := pipeline.New(pipeline.Options{Name: logPath, Judge: cfg, StopFile: stop, WriterDone: writerDone})
	stopErr := make(chan error, 1)
	go func() { stopErr <- relay(context.Background(), run, batches, feed) }()

	stats.State = watch.StateLive
	for _, p := range points {
		batches <- watch.Batch{Points: []diagnose.Point{p}, Stats: stats}
	}
	close(writerDone)
	var last tui.FeedMsg
	n, judged := 0, 0
	for last.Source.State != tui.Finished {
		last = <-feed
		n++
		judged += len(last.Judgements)
	}
	close(batches)
	for range feed {
		n++
	}
	if n != len(points)+1 || judged != len(points) {
		t.Errorf("relay sent %d messages with %d judgements for %d points, want one per batch plus the finished notice", n, judged, len(points))
	}
	if err := <-stopErr; err != nil {
		t.Fatalf("stop file: %v", err)
	}
	b, err := os.ReadFile(stopPath)
	if err != nil {
		t.Fatalf("the overfitting run reached stop but no stop file: %v", err)
	}
	var body stopFileBody
	if err := json.Unmarshal(b, &body); err != nil || body.BestEpoch < 1 || body.BestEpoch >= body.Epoch {
		t.Errorf("stop file %q (%v): want an earlier best epoch than the stop", b, err)
	}
}

// TestRelay_EndsWhenTheScreenIsGone: once the screen has closed (its
// context ends) nobody reads the feed; the relay must not block on it.
func TestRelay_EndsWhenTheScreenIsGone(t *testing.T) {
	t.Parallel()
	ctx, cancel := context.WithCancel(context.Background())
	batches := make(chan watch.Batch, 1)
	feed := make(chan tui.FeedMsg) // never read
	done := make(chan struct{})
	run := pipeline.New(pipeline.Options{Name: "run.csv", Judge: diagnose.DefaultConfig()})
	go func() {
		relay(ctx, run, batches, feed)
		close(done)
	}()
	batches <- watch.Batch{}
	cancel()
	select {
	case <-done:
	case <-time.After(5 * time.Second):
		t.Fatal("relay still blocked on the feed after the screen closed")
	}
	if _, open := <-feed; open {
		t.Error("relay left the feed open")
	}
}
