package main

import (
	"context"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

// TestRelay_StopFileAndFinished drives the screen's relay with the demo's
// overfitting run: the stop file is created once the command line's
// judgement says stop, whatever the screen shows, and the end of the
// writer turns the source to finished.
func TestRelay_StopFileAndFinished(t *testing.T) {
	dir := t.TempDir()
	logPath := filepath.Join(dir, "overfit.csv")
	if out, err := exec.Command(binPath, "demo", "--scenario", "overfit", "--pace", "0", "--write", logPath).CombinedOutput(); err != nil {
		t.Fatalf("demo --write: %v\n%s", err, out)
	}
	points, stats, err := watch.ReadAll(logPath, nil, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	stopPath := filepath.Join(dir, "run.stop")
	stop, err := checkStopFile(stopPath)
	if err != nil {
		t.Fatal(err)
	}
	batches := make(chan watch.Batch)
	writerDone := make(chan struct{})
	feed := make(chan tui.FeedMsg, len(points)+2)
	errs := make(chan error, 1)
	cfg := diagnose.DefaultConfig()
	cfg.BayesError, cfg.BayesErrorGiven = 0.05, true
	go relay(context.Background(), batches, writerDone, feed, logPath, diagnose.New(cfg), stop, errs)

	stats.State = watch.StateLive
	for _, p := range points {
		batches <- watch.Batch{Points: []diagnose.Point{p}, Stats: stats}
	}
	close(writerDone)
	var last tui.FeedMsg
	n := 0
	for last.Source.State != tui.Finished {
		last = <-feed
		n++
	}
	close(batches)
	for range feed {
		n++
	}
	if n != len(points)+1 {
		t.Errorf("relay sent %d messages for %d points, want one per batch plus the finished notice", n, len(points))
	}
	select {
	case err := <-errs:
		t.Fatalf("stop file: %v", err)
	default:
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
	ctx, cancel := context.WithCancel(context.Background())
	batches := make(chan watch.Batch, 1)
	feed := make(chan tui.FeedMsg) // never read
	done := make(chan struct{})
	go func() {
		relay(ctx, batches, nil, feed, "run.csv", diagnose.New(diagnose.DefaultConfig()), nil, make(chan error, 1))
		close(done)
	}()
	batches <- watch.Batch{}
	cancel()
	select {
	case <-done:
	case <-time.After(5 * time.Second):
		t.Fatal("relay still blocked on the feed after the screen closed")
	}
}
