package live

import (
	"context"
	"os"
	"path/filepath"
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
// stops when its budget is spent; the next round starts after the last
// one made.
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
	now := s.now()
	due := s.dueForecasts(now, false)
	s.mu.Unlock()
	if len(due) != 3 {
		t.Fatalf("%d due, want 3", len(due))
	}
	ms, more := forecastWithin(due, time.Nanosecond)
	if len(ms) != 1 || !more {
		t.Fatalf("made %d (more %v) within a nanosecond, want 1 and more", len(ms), more)
	}
	s.mu.Lock()
	s.keep(ms, now)
	next := s.dueForecasts(now, false)
	soon := s.dueForecasts(now.Add(forecastEvery/2), true)
	paced := s.dueForecasts(now.Add(forecastEvery), true)
	s.mu.Unlock()
	if len(next) != 2 || next[0].id != (ms[0].e.id+1)%3 {
		t.Errorf("next round %d runs from %d, want 2 from the one after %d", len(next), next[0].id, ms[0].e.id)
	}
	// Load forecast every run at now: paced, they are due again after
	// forecastEvery, but for the one just made.
	if len(soon) != 0 || len(paced) != 2 {
		t.Errorf("paced: %d due before forecastEvery, %d after; want 0 and the 2 not forecast", len(soon), len(paced))
	}
	all, more := forecastWithin(next, 0)
	if len(all) != 2 || more {
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
