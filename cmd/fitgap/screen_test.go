package main

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	tea "github.com/charmbracelet/bubbletea"

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
	go func() {
		err, _ := relay(context.Background(), run, batches, feed)
		stopErr <- err
	}()

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

// TestRelay_ScreenReadsWhileRunJudges runs the screen's model on the relay's
// feed while the run judges the next batches, inspecting past epochs and
// trying another metric as a user would: the screen reads the run's
// history under the run's lock while the run writes it (run it under
// -race; the tui tests check what is read).
func TestRelay_ScreenReadsWhileRunJudges(t *testing.T) {
	t.Parallel()
	points, stats, err := watch.ReadAll(overfitLog(t), nil, watch.Options{})
	if err != nil {
		t.Fatal(err)
	}
	run := pipeline.New(pipeline.Options{Name: "overfit.csv", Judge: diagnose.DefaultConfig()})
	batches := make(chan watch.Batch)
	feed := make(chan tui.FeedMsg, 4)
	go relay(context.Background(), run, batches, feed)
	go func() {
		for _, p := range points {
			batches <- watch.Batch{Points: []diagnose.Point{p}, Stats: stats}
		}
		close(batches)
	}()
	var m tea.Model = tui.New(tui.Options{History: run})
	m, _ = m.Update(tea.WindowSizeMsg{Width: 100, Height: 30})
	n := 0
	for msg := range feed {
		m, _ = m.Update(msg)
		n += len(msg.Points)
		key := tea.KeyMsg{Type: tea.KeyLeft}
		if n == len(points)/2 {
			key = tea.KeyMsg{Type: tea.KeyRunes, Runes: []rune{'m'}}
		}
		m, _ = m.Update(key)
		if v := m.View(); n > 1 && !strings.Contains(v, "as judged then") {
			t.Fatalf("after %d points the screen does not inspect a past epoch:\n%s", n, v)
		}
	}
	if n != len(points) {
		t.Errorf("the screen received %d points, want %d", n, len(points))
	}
}
