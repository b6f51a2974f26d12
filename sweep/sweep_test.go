package sweep

import (
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

var t0 = time.Date(2026, 3, 1, 12, 0, 0, 0, time.UTC)

// judged is a judgement of a run at its last point with the sweep's
// fields filled in.
func judged(m diagnose.Metric, epoch int, best, now float64, d diagnose.Diagnosis, sig diagnose.Signal) diagnose.Judgement {
	return diagnose.Judgement{
		Index: epoch - 1, Epoch: epoch, Metric: m, Diagnosis: d,
		Val:       diagnose.Estimate{Raw: diagnose.Some(now), Smooth: diagnose.Some(now)},
		EarlyStop: diagnose.EarlyStop{Signal: sig, BestVal: diagnose.Some(best), BestEpoch: epoch},
	}
}

// addRun adds a run with a curve of vals at epochs 1…, written at lastWrite.
func addRun(s *Sweep, name string, p Params, m diagnose.Metric, vals []float64, o Observation) int {
	id := s.Add(name, p)
	epochs := make([]int, len(vals))
	best := vals[0]
	for i := range vals {
		epochs[i] = i + 1
		best = min(best, vals[i])
	}
	s.SetCurve(id, 0, epochs, vals)
	if o.Latest.Index == 0 && !o.Latest.Judged() || o.Latest.Metric.Label == "" {
		o.Latest = judged(m, len(vals), best, vals[len(vals)-1], diagnose.GoodFit, diagnose.Continue)
	}
	o.Points = len(vals)
	s.Observe(id, o)
	return id
}

func TestSweep_States(t *testing.T) {
	live := Observation{LastWrite: t0.Add(-time.Second), Pace: time.Second}
	tests := []struct {
		name string
		p    Params
		o    Observation
		vals []float64
		want State
	}{
		{"Live", nil, live, []float64{0.3, 0.2}, Live},
		{"QuietAfterThreePaces", nil, Observation{LastWrite: t0.Add(-31 * time.Second), Pace: 10 * time.Second}, []float64{0.3}, Quiet},
		{"FloorKeepsFastLogLive", nil, Observation{LastWrite: t0.Add(-9 * time.Second), Pace: time.Second}, []float64{0.3}, Live},
		{"FinishedAtTotal", nil, Observation{LastWrite: t0.Add(-time.Hour), Total: 2}, []float64{0.3, 0.2}, Finished},
		{"FinishedAtParamsEpochs", ps("epochs", "2"), live, []float64{0.3, 0.2}, Finished},
		{"FinishedWhenWriterEnded", nil, Observation{Ended: true}, []float64{0.3}, Finished},
		{"Removed", nil, Observation{Removed: true, Total: 1}, []float64{0.3}, Removed},
		{"QuietAfterOwnStopIsFinished", nil, Observation{LastWrite: t0.Add(-time.Hour), Pace: time.Second,
			Latest: judged(metricFrac, 2, 0.2, 0.2, diagnose.HighVariance, diagnose.Stop)}, []float64{0.3, 0.2}, Finished},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := New(DefaultConfig())
			addRun(s, "r", tt.p, metricFrac, tt.vals, tt.o)
			s.Evaluate(t0)
			if got := s.Rows()[0].State; got != tt.want {
				t.Errorf("state %v, want %v", got, tt.want)
			}
		})
	}
	t.Run("WaitingWithoutPoints", func(t *testing.T) {
		s := New(DefaultConfig())
		s.Add("empty", nil)
		s.Evaluate(t0)
		if got := s.Rows()[0].State; got != Waiting {
			t.Errorf("state %v, want waiting", got)
		}
	})
	t.Run("StoppedForFlagIsQuietNotFinished", func(t *testing.T) {
		s := New(DefaultConfig())
		id := addRun(s, "r", nil, metricFrac, []float64{0.3, 0.2}, Observation{LastWrite: t0.Add(-time.Hour), Pace: time.Second,
			Latest: judged(metricFrac, 2, 0.2, 0.2, diagnose.HighVariance, diagnose.Stop)})
		s.MarkStopFile(id, "/runs/r/STOP", true)
		s.Evaluate(t0)
		if got := s.Rows()[0].State; got != Quiet {
			t.Errorf("state %v, want quiet", got)
		}
	})
	t.Run("UnknownPaceTakesTheSweepsMedian", func(t *testing.T) {
		s := New(DefaultConfig())
		addRun(s, "a", nil, metricFrac, []float64{0.3}, Observation{LastWrite: t0, Pace: 2 * time.Second})
		addRun(s, "b", nil, metricFrac, []float64{0.3}, Observation{LastWrite: t0.Add(-time.Minute)})
		s.Evaluate(t0)
		if got := s.Rows()[1].State; got != Quiet {
			t.Errorf("state %v, want quiet (a minute is well past 3 × 2 s and the 10 s floor)", got)
		}
	})
}

func TestSweep_RanksAndMetric(t *testing.T) {
	s := New(DefaultConfig())
	live := Observation{LastWrite: t0, Pace: time.Second}
	addRun(s, "b", nil, metricFrac, []float64{0.3, 0.2}, live)
	addRun(s, "a", nil, metricFrac, []float64{0.3, 0.1}, live)
	addRun(s, "c", nil, metricFrac, []float64{0.3, 0.2}, live) // tie with b: by name
	addRun(s, "loss-only", nil, metricLoss, []float64{0.01}, live)
	s.Add("waiting", nil)
	s.Evaluate(t0)
	if s.Metric().Label != metricFrac.Label {
		t.Fatalf("sweep metric %q", s.Metric().Label)
	}
	var names []string
	for _, id := range s.Ranked() {
		names = append(names, s.Rows()[id].Name+":"+itoa(s.Rows()[id].Rank))
	}
	if got := strings.Join(names, " "); got != "a:1 b:2 c:3 loss-only:0 waiting:0" {
		t.Errorf("ranked: %s", got)
	}
	if s.Rows()[3].Comparable {
		t.Error("a run judged in another metric is not comparable")
	}
}

func itoa(n int) string { return strconv.Itoa(n) }

func TestSweep_Flags(t *testing.T) {
	t.Run("MedianWaitsForAFinishedRun", func(t *testing.T) {
		s := New(Config{Median: true})
		live := Observation{LastWrite: t0, Pace: time.Second}
		addRun(s, "good", nil, metricFrac, []float64{0.3, 0.2, 0.1}, live)
		addRun(s, "bad", nil, metricFrac, []float64{0.5, 0.5, 0.5}, live)
		s.Evaluate(t0)
		for _, r := range s.Rows() {
			if r.Hopeless() {
				t.Errorf("%s flagged while no run has finished: %+v", r.Name, r.Flags)
			}
		}
		if s.Completed() != 0 {
			t.Errorf("completed %d", s.Completed())
		}
	})
	t.Run("MedianAgainstFinished", func(t *testing.T) {
		s := New(Config{Median: true, Rungs: Rungs{First: 3, Eta: 3}})
		done := Observation{Ended: true}
		live := Observation{LastWrite: t0, Pace: time.Second}
		addRun(s, "f1", nil, metricFrac, []float64{0.4, 0.3, 0.2, 0.1}, done)
		addRun(s, "f2", nil, metricFrac, []float64{0.5, 0.4, 0.3, 0.2}, done)
		addRun(s, "f3", nil, metricFrac, []float64{0.3, 0.2, 0.1, 0.1}, done)
		bad := addRun(s, "bad", nil, metricFrac, []float64{0.6, 0.5, 0.45}, live)
		early := addRun(s, "early", nil, metricFrac, []float64{0.9, 0.9}, live) // before the first rung's epoch
		s.Evaluate(t0)
		rows := s.Rows()
		// Running means at epoch 3: 0.3, 0.4, 0.2 → median 0.3; best 0.45.
		if f := rows[bad].Flags; len(f) != 1 || f[0].Rule != RuleMedian || f[0].Bar != 0.3 || f[0].Value != 0.45 || f[0].Count != 3 {
			t.Errorf("bad: %+v", f)
		}
		if rows[early].Hopeless() {
			t.Errorf("a run before the rules' first epoch was flagged: %+v", rows[early].Flags)
		}
		for _, id := range []int{0, 1, 2} {
			if rows[id].Hopeless() {
				t.Errorf("finished run %s flagged", rows[id].Name)
			}
		}
	})
	t.Run("RungsFlagTheBottom", func(t *testing.T) {
		s := New(Config{UseRungs: true, Rungs: Rungs{First: 1, Eta: 3}})
		live := Observation{LastWrite: t0, Pace: time.Second}
		for i, v := range []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6} {
			addRun(s, string(rune('a'+i)), nil, metricFrac, []float64{v}, live)
		}
		s.Evaluate(t0)
		var flagged []string
		for _, r := range s.Rows() {
			if r.Hopeless() {
				flagged = append(flagged, r.Name)
				if !strings.Contains(r.Flags[0].Text(metricFrac), "only the top 2") {
					t.Errorf("text: %s", r.Flags[0].Text(metricFrac))
				}
			}
		}
		if strings.Join(flagged, "") != "cdef" {
			t.Errorf("flagged %v, want c–f (top ⌊6/3⌋ = 2 go on)", flagged)
		}
	})
}

func TestSweep_EvaluateOnlyWhenNeeded(t *testing.T) {
	s := New(DefaultConfig())
	addRun(s, "a", nil, metricFrac, []float64{0.3}, Observation{LastWrite: t0, Pace: time.Second})
	s.Evaluate(t0)
	before := &s.Rows()[0]
	s.Evaluate(t0.Add(time.Second)) // nothing changed, still live
	if &s.Rows()[0] != before {
		t.Error("rows rebuilt without a change")
	}
	s.Evaluate(t0.Add(time.Hour)) // quiet now
	if s.Rows()[0].State != Quiet {
		t.Errorf("state %v after an hour", s.Rows()[0].State)
	}
}

func TestSweep_Verdict(t *testing.T) {
	build := func(ds ...diagnose.Diagnosis) Verdict {
		s := New(DefaultConfig())
		for i, d := range ds {
			id := s.Add(string(rune('a'+i)), nil)
			s.SetCurve(id, 0, []int{1, 2, 3}, []float64{0.3, 0.3, 0.3})
			s.Observe(id, Observation{Points: 3, LastWrite: t0, Pace: time.Second, Latest: judged(metricFrac, 3, 0.3, 0.3, d, diagnose.Continue)})
		}
		s.Evaluate(t0)
		return s.Verdict()
	}
	hb, hv, te := diagnose.HighBias, diagnose.HighVariance, diagnose.TooEarly
	tests := []struct {
		name   string
		v      Verdict
		shared bool
		text   string
	}{
		{"MostUnderfit", build(hb, hb, hb, hv), true, "3 of 4 runs underfitting: whatever the settings, training error stays well above the optimal error"},
		{"HalfIsNotMost", build(hb, hb, hv, hv), false, ""},
		{"TooFewRuns", build(hb, hb), false, ""},
		{"TooEarlyNotCounted", build(hb, hb, hb, te, te, te, te), true, "3 of 3 runs underfitting"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if tt.v.Shared != tt.shared || !strings.HasPrefix(tt.v.Text(), tt.text) {
				t.Errorf("verdict %+v text %q; want shared %v, text starting %q", tt.v, tt.v.Text(), tt.shared, tt.text)
			}
		})
	}
}

// TestSweep_DataForecast checks that the law is fitted to the best run of
// each training-set size: with runs on an exact power law ε(m) = 2·m^(−0.5)
// + 0.05 and worse runs beside them, the forecast is forecast.Data's on
// the law's points alone.
func TestSweep_DataForecast(t *testing.T) {
	s := New(DefaultConfig())
	law := func(m float64) float64 { return 2/sqrt(m) + 0.05 }
	var pts []forecast.SizePoint
	for _, m := range []float64{100, 200, 400, 800, 1600} {
		v := law(m)
		pts = append(pts, forecast.SizePoint{Size: m, Value: v})
		for _, worse := range []float64{0, 0.05} {
			id := s.Add("run", ps("train_size", ftoa(m)))
			s.SetCurve(id, 0, []int{1}, []float64{v + worse})
			s.Observe(id, Observation{Points: 1, Ended: true, Latest: judged(metricFrac, 1, v+worse, v+worse, diagnose.GoodFit, diagnose.Continue)})
		}
	}
	s.Evaluate(t0)
	got, ok := s.DataForecast(forecast.DataOptions{})
	want := forecast.Data(pts, forecast.DataOptions{Fraction: true})
	if !ok || got.Status != forecast.OK || got.Phrase() != want.Phrase() {
		t.Errorf("data forecast %q (%v), want %q", got.Phrase(), ok, want.Phrase())
	}
	one := New(DefaultConfig())
	addRun(one, "a", ps("train_size", "100"), metricFrac, []float64{0.3}, Observation{Ended: true})
	addRun(one, "b", ps("train_size", "100"), metricFrac, []float64{0.2}, Observation{Ended: true})
	one.Evaluate(t0)
	if _, ok := one.DataForecast(forecast.DataOptions{}); ok {
		t.Error("runs of one size gave a data forecast")
	}
}
