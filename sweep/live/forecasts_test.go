package live

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
	"github.com/fitgap/fitgap/sweep"
)

// TestSweep_LoadForecasts: report DIR forecasts every run not finished to
// its last epoch — its log's, its epochs hyperparameter, else --epochs —
// the same forecast as its own summary's; a finished run has none.
func TestSweep_LoadForecasts(t *testing.T) {
	root := t.TempDir()
	csvRun(t, filepath.Join(root, "params", "metrics.csv"), 12, 0.5, 0.10)
	csvRun(t, filepath.Join(root, "flag", "metrics.csv"), 12, 0.5, 0.15)
	csvRun(t, filepath.Join(root, "done", "metrics.csv"), 12, 0.5, 0.20)
	os.WriteFile(filepath.Join(root, "params", "hparams.yaml"), []byte("epochs: 30\n"), 0o644)
	os.WriteFile(filepath.Join(root, "done", "hparams.yaml"), []byte("epochs: 12\n"), 0o644)
	s, err := New(Options{Paths: []string{root}, Rules: sweep.Config{UseForecast: true, Epochs: 40}})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Load(context.Background()); err != nil {
		t.Fatal(err)
	}
	rep := s.Report(true)
	for i, row := range rep.Rows {
		want := map[string]int{"params": 30, "flag": 40, "done": 12}[row.Name]
		if s.Length(row.ID) != want || row.Total != want {
			t.Errorf("%s: length %d, total %d, want %d", row.Name, s.Length(row.ID), row.Total, want)
		}
		if row.Name == "done" {
			if row.State != sweep.Finished || row.Forecast != nil {
				t.Errorf("finished run: state %v, forecast %+v", row.State, row.Forecast)
			}
			continue
		}
		f := row.Forecast
		if f == nil || f.Status != forecast.OK || f.Target != want || !f.TargetGiven {
			t.Fatalf("%s: forecast %+v, want one to epoch %d", row.Name, f, want)
		}
		own := rep.Summaries[i].Forecasts.Val
		if own.Target != f.Target || own.At != f.At {
			t.Errorf("%s: the row's forecast %+v differs from the run's summary's %+v", row.Name, f.At, own.At)
		}
		if !row.Chance.OK {
			t.Errorf("%s: no chance to beat the other runs", row.Name)
		}
	}
}

// TestSweep_FollowForecasts: a run that logs a new epoch is forecast
// again from it, and its done channel closes when the sweep finds it
// finished.
func TestSweep_FollowForecasts(t *testing.T) {
	root := t.TempDir()
	a := filepath.Join(root, "a", "metrics.csv")
	csvRun(t, a, 10, 0.5, 0.1)
	csvRun(t, filepath.Join(root, "b", "metrics.csv"), 10, 0.5, 0.2)
	s, _ := New(Options{Paths: []string{root}, Rules: sweep.Config{UseForecast: true, Epochs: 20}})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	c := newCollector()
	go s.Follow(ctx, c.emit)
	lastForecast := func() int {
		if f := rowsByName(s)["a"].Forecast; f != nil {
			return f.LastEpoch
		}
		return 0
	}
	waitFor(t, c, "a's first forecast", func() bool { return lastForecast() == 10 })
	appendLine(t, a, epochLine(11, 0.5, 0.1))
	waitFor(t, c, "a's forecast from epoch 11", func() bool { return lastForecast() == 11 })
	if f := rowsByName(s)["a"].Forecast; f.Target != 20 || !f.TargetGiven {
		t.Errorf("forecast to epoch %d (given %v), want 20", f.Target, f.TargetGiven)
	}
	select {
	case <-s.Finished(0):
		t.Fatal("a is reported finished while live")
	default:
	}
	s.MarkEnded(a)
	select {
	case <-s.Finished(0):
	case <-time.After(waitTimeout):
		t.Fatal("a's done channel did not close once it finished")
	}
	if rowsByName(s)["a"].Forecast != nil {
		t.Error("a finished run still shows a forecast")
	}
}

// TestForecastWithin: each evaluation makes at least one due forecast and
// stops when its budget is spent.
func TestForecastWithin(t *testing.T) {
	root := t.TempDir()
	for _, name := range []string{"a", "b", "c"} {
		csvRun(t, filepath.Join(root, name, "metrics.csv"), 10, 0.5, 0.1)
	}
	s, _ := New(Options{Paths: []string{root}, Rules: sweep.Config{UseForecast: true}})
	if err := s.Load(context.Background()); err != nil {
		t.Fatal(err)
	}
	s.mu.Lock()
	for _, e := range s.runs {
		e.fcStale = true
	}
	due := s.dueForecasts(s.now(), false)
	s.mu.Unlock()
	if len(due) != 3 {
		t.Fatalf("%d due, want 3", len(due))
	}
	ms, more := forecastWithin(due, time.Nanosecond)
	if len(ms) != 1 || !more {
		t.Fatalf("made %d (more %v) within a nanosecond, want 1 and more", len(ms), more)
	}
	all, more := forecastWithin(due, 0)
	if len(all) != 3 || more {
		t.Errorf("without a budget: %d made, more %v", len(all), more)
	}
	for _, m := range all {
		if m.f.Status != forecast.OK {
			t.Errorf("%s: %s", m.e.found.Name, m.f.Phrase())
		}
		if got := m.e.run.Forecast(diagnose.SplitVal); got.At != m.f.At {
			t.Errorf("the run's own forecast %+v differs from the one made %+v", got.At, m.f.At)
		}
	}
}

// TestDueForecasts_Paced: while following, a run not forecast yet comes
// first; a run forecast within forecastEvery waits; runs forecast before
// are refreshed at most refreshRate a second, the longest waiting first.
func TestDueForecasts_Paced(t *testing.T) {
	root := t.TempDir()
	n := 2*refreshRate + 10
	for i := range n {
		csvRun(t, filepath.Join(root, fmt.Sprintf("r%02d", i), "metrics.csv"), 10, 0.5, 0.1)
	}
	s, _ := New(Options{Paths: []string{root}, Rules: sweep.Config{UseForecast: true}})
	if err := s.Load(context.Background()); err != nil {
		t.Fatal(err)
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	t0 := s.now()
	stale := func(at time.Time, ids ...int) {
		for _, id := range ids {
			s.runs[id].fcStale, s.runs[id].fcAt = true, at
		}
	}
	names := func(es []*entry) []int {
		var out []int
		for _, e := range es {
			out = append(out, e.id)
		}
		return out
	}
	// Every run has new points; run 3 was forecast last, run 5 never.
	for id := range n {
		stale(t0.Add(-time.Duration(n-id)*time.Second), id)
	}
	stale(t0, 3)
	stale(time.Time{}, 5)
	if got := s.dueForecasts(t0.Add(forecastEvery/2), true); len(got) != 1+refreshRate || got[0].id != 5 || slices.Contains(names(got), 3) {
		t.Errorf("due %v: want run 5 (never forecast) first, then %d refreshes, not run 3 (forecast %v ago)", names(got), refreshRate, forecastEvery/2)
	}
	// The refreshes are spent: only a run never forecast is due.
	var ms []made
	for _, e := range s.dueForecasts(t0.Add(forecastEvery), true) {
		ms = append(ms, made{e: e})
	}
	s.keep(ms, t0.Add(forecastEvery))
	stale(time.Time{}, 7)
	if got := s.dueForecasts(t0.Add(forecastEvery), true); len(got) != 1 || got[0].id != 7 {
		t.Errorf("with no refresh left, due %v; want the new run 7 only", names(got))
	}
	// Half a second later, half the rate again, the longest waiting first.
	got := s.dueForecasts(t0.Add(forecastEvery+500*time.Millisecond), true)
	if len(got) != 1+refreshRate/2 || got[1].fcAt.After(got[len(got)-1].fcAt) {
		t.Errorf("due %v half a second later; want run 7 and %d refreshes, oldest first", names(got), refreshRate/2)
	}
	// Unpaced (report DIR, follow DIR), every stale run.
	want := 0
	for _, e := range s.runs {
		if e.fcStale {
			want++
		}
	}
	if got := s.dueForecasts(t0, false); len(got) != want {
		t.Errorf("unpaced: %d due, want every stale run, %d", len(got), want)
	}
}
