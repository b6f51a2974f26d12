package diagnose

import (
	"encoding/json"
	"math"
	"reflect"
	"slices"
	"strings"
	"sync"
	"testing"
)

// wiggle is a fixed pseudo-random sequence in [−1, 1] (a small linear
// congruential generator, so tests need no seed bookkeeping).
func wiggle(i int) float64 {
	x := uint32(i)*1664525 + 1013904223
	x ^= x >> 13
	x *= 2654435761
	return float64(x%2001)/1000 - 1
}

func TestTracker_HighBiasImprovingNeverStops(t *testing.T) {
	// Common practice (and the issue): a run that cannot fit its training
	// set and still improves is not stopped; longer training is a remedy.
	// The validation error is noisy enough that patience 2 would fire.
	tr := New(Config{Patience: 2})
	sawGuard := false
	for e := 1; e <= 80; e++ {
		train := 0.40 - 0.002*float64(e)
		j := tr.Add(errPoint(e, train, absent, train+0.01+0.01*wiggle(e), absent))
		if j.Diagnosis == HighBias && j.EarlyStop.Signal == Stop {
			t.Fatalf("epoch %d: stop while high-bias and improving: %s", e, j.EarlyStop.Reason)
		}
		if strings.Contains(j.EarlyStop.Reason, "still improving: keep training") {
			sawGuard = true
		}
	}
	if j, _ := tr.Latest(); j.Diagnosis != HighBias {
		t.Errorf("diagnosis %v, want high-bias", j.Diagnosis)
	}
	if !sawGuard {
		t.Error("patience never ran out, so the guard was not exercised")
	}
}

func TestTracker_Diverging(t *testing.T) {
	t.Run("NaNLoss", func(t *testing.T) {
		tr := New(Config{})
		for e := 1; e <= 5; e++ {
			tr.Add(metricPoint(e, loss(SplitTrain, 1/float64(e)), loss(SplitVal, 1.1/float64(e))))
		}
		j := tr.Add(metricPoint(6, loss(SplitTrain, math.NaN()), loss(SplitVal, math.Inf(1))))
		if j.Diagnosis != Diverging || j.EarlyStop.Signal != Stop {
			t.Fatalf("got %v / %v, want diverging / stop", j.Diagnosis, j.EarlyStop.Signal)
		}
		if j.EarlyStop.BestEpoch != 5 {
			t.Errorf("restore epoch %d, want 5", j.EarlyStop.BestEpoch)
		}
		if !hasWarning(j, `"train_loss" = NaN`) || !hasWarning(j, "line 7") {
			t.Errorf("warnings %q do not name the column and line", j.Warnings)
		}
		if len(j.Actions) == 0 || !strings.Contains(j.Actions[0].Text+j.Actions[1].Text, "learning rate") {
			t.Errorf("actions %v lack a lower learning rate", j.Actions)
		}
		if _, err := json.Marshal(j); err != nil {
			t.Errorf("judgement with NaN does not marshal: %v", err)
		}
	})
	t.Run("LossBlowsUp", func(t *testing.T) {
		tr := New(Config{})
		vals := []float64{2.3, 1.2, 0.7, 0.5, 0.4, 0.45, 1.6, 2.8}
		var j Judgement
		for e, v := range vals {
			j = tr.Add(metricPoint(e+1, loss(SplitTrain, v), loss(SplitVal, v+0.05)))
			if e+1 < 7 && j.Diagnosis == Diverging {
				t.Fatalf("epoch %d: diverging too early", e+1)
			}
		}
		if j.Diagnosis != Diverging || j.EarlyStop.Signal != Stop {
			t.Errorf("got %v / %v, want diverging / stop", j.Diagnosis, j.EarlyStop.Signal)
		}
	})
}

func TestTracker_NegativeVariance(t *testing.T) {
	// Source: check values §4 (validation below training is common with
	// dropout; it must not read as a good fit).
	j := judgeConstant(t, Config{}, 0.12, absent, 0.08, absent)
	if !j.Variance.OK || !near(j.Variance.V, -0.04, 1e-9) {
		t.Errorf("variance %+v, want -0.04", j.Variance)
	}
	if j.Diagnosis == GoodFit {
		t.Error("negative variance judged a good fit")
	}
	if !hasWarning(j, "not evidence of a good fit") {
		t.Errorf("warnings %q lack the negative-variance warning", j.Warnings)
	}
	found := false
	for _, a := range j.Actions {
		found = found || strings.Contains(a.Text, "reduce regularization") && strings.Contains(a.Why, "validation beats training")
	}
	if !found {
		t.Errorf("actions %v lack less regularization with its evidence", j.Actions)
	}
}

// run feeds points and returns every judgement as made.
func run(cfg Config, pts []Point) (*Tracker, []Judgement) {
	tr := New(cfg)
	var out []Judgement
	for _, p := range pts {
		out = append(out, tr.Add(p))
	}
	return tr, out
}

func curve(from, to int, shift float64) []Point {
	var pts []Point
	for e := from; e <= to; e++ {
		tr := 0.5/float64(e) + 0.01
		va := 0.12 + 0.0004*float64((e-15)*(e-15)) + 0.004*wiggle(e) + shift
		pts = append(pts, metricPoint(e, acc(SplitTrain, 1-tr), acc(SplitVal, 1-va), loss(SplitTrain, 3*tr), loss(SplitVal, 3*va)))
	}
	return pts
}

func TestTracker_Rewind(t *testing.T) {
	clean := curve(1, 30, 0)
	_, want := run(Config{}, clean)

	t.Run("ResumeFromCheckpoint", func(t *testing.T) {
		// Epochs 1–20, then a resume from epoch 10 with other values that
		// is itself resumed from epoch 10 with the clean values.
		pts := append(slices.Clone(clean[:20]), curve(10, 18, 0.05)...)
		pts = append(pts, clean[9:]...)
		tr, _ := run(Config{}, pts)
		if tr.Len() != len(clean) {
			t.Fatalf("Len = %d, want %d", tr.Len(), len(clean))
		}
		for i := range want {
			if got := tr.At(i); !reflect.DeepEqual(got, want[i]) {
				t.Fatalf("point %d after rewinds differs from a clean run:\n got %+v\nwant %+v", i, got, want[i])
			}
		}
	})
	t.Run("RepeatedEpochReplacesLast", func(t *testing.T) {
		pts := slices.Clone(clean[:10])
		pts = append(pts, curve(10, 10, 0.3)...)
		pts = append(pts, clean[9:]...)
		tr, _ := run(Config{}, pts)
		for i := range want {
			if got := tr.At(i); !reflect.DeepEqual(got, want[i]) {
				t.Fatalf("point %d differs after a repeated epoch", i)
			}
		}
	})
	t.Run("AcrossCheckpoints", func(t *testing.T) {
		// Rewinds to just after, on and just before a checkpoint, and to
		// the start, in a run longer than several checkpoint intervals.
		long := curve(1, 5*ckptEvery, 0)
		_, want := run(Config{}, long)
		for _, back := range []int{ckptEvery + 1, 2 * ckptEvery, 3*ckptEvery - 1, 1, 5 * ckptEvery} {
			pts := slices.Clone(long)
			pts = append(pts, curve(back, back+3, 0.1)...)
			pts = append(pts, long[back-1:]...)
			tr, _ := run(Config{}, pts)
			if tr.Len() != len(long) {
				t.Fatalf("rewind to %d: Len = %d, want %d", back, tr.Len(), len(long))
			}
			for i := range want {
				if got := tr.At(i); !reflect.DeepEqual(got, want[i]) {
					t.Fatalf("rewind to epoch %d: point %d differs from a clean run", back, i)
				}
			}
		}
	})
	t.Run("PushThenAtEqualsAdd", func(t *testing.T) {
		tr := New(Config{})
		for _, p := range clean {
			tr.Push(p)
		}
		for i := range want {
			if !reflect.DeepEqual(tr.At(i), want[i]) {
				t.Fatalf("At(%d) after Push differs from Add", i)
			}
		}
		if j, _ := tr.Latest(); !reflect.DeepEqual(j, want[len(want)-1]) {
			t.Fatal("Latest after Push differs from Add")
		}
	})
	t.Run("HistoryKeepsJudgementsAsMade", func(t *testing.T) {
		tr, made := run(Config{}, clean)
		for i := range made {
			if !reflect.DeepEqual(tr.At(i), made[i]) {
				t.Fatalf("At(%d) differs from what Add returned", i)
			}
		}
	})
}

func TestTracker_Metrics(t *testing.T) {
	t.Run("ErrorRatePreferred", func(t *testing.T) {
		tr, js := run(Config{}, curve(1, 5, 0))
		if got := js[4].Metric; got.Base != "acc" || !got.Error || got.Label != "error (1 − acc)" {
			t.Errorf("metric %+v, want the error of acc", got)
		}
		if got := tr.Metrics(); !slices.Equal(got, []string{"acc", "loss"}) {
			t.Errorf("Metrics = %v", got)
		}
	})
	t.Run("ChosenLoss", func(t *testing.T) {
		_, js := run(Config{Metric: "loss"}, curve(1, 5, 0))
		if got := js[4].Metric; got.Base != "loss" || got.Error {
			t.Errorf("metric %+v, want loss", got)
		}
	})
	t.Run("MissingMetric", func(t *testing.T) {
		_, js := run(Config{Metric: "f1"}, curve(1, 5, 0))
		j := js[4]
		if j.Diagnosis != TooEarly || !hasWarning(j, `"f1" is not in the log (judgeable: acc, loss)`) {
			t.Errorf("got %v, warnings %q", j.Diagnosis, j.Warnings)
		}
	})
	t.Run("PercentAccuracy", func(t *testing.T) {
		// A rate above 1 is percent: 1 − 97.5/100 = 0.025.
		frac := curve(1, 12, 0)
		pct := make([]Point, len(frac))
		for i, p := range frac {
			q := p
			q.Samples = slices.Clone(p.Samples)
			for k := range q.Samples {
				if q.Samples[k].Column.Base == "acc" {
					q.Samples[k].Value *= 100
				}
			}
			pct[i] = q
		}
		_, want := run(Config{}, frac)
		_, got := run(Config{}, pct)
		for i := range want {
			a, b := got[i], want[i]
			if !near(a.Val.Smooth.V, b.Val.Smooth.V, 1e-12) || a.Diagnosis != b.Diagnosis || a.EarlyStop.Signal != b.EarlyStop.Signal {
				t.Fatalf("point %d: percent judged %v/%v, fractions %v/%v", i, a.Val.Smooth, a.Diagnosis, b.Val.Smooth, b.Diagnosis)
			}
		}
	})
	t.Run("PercentMarkedByReader", func(t *testing.T) {
		// The reader's Percent mark rules even when no value exceeds 1
		// (an error rate below 1% written in percent).
		c := col("err", SplitVal, true, LowerIsBetter)
		c.Percent = true
		ct := col("err", SplitTrain, true, LowerIsBetter)
		ct.Percent = true
		tr := New(Config{})
		var j Judgement
		for e := 1; e <= 3; e++ {
			j = tr.Add(metricPoint(e, Sample{Column: &ct, Value: 0.4}, Sample{Column: &c, Value: 0.9}))
		}
		if !near(j.Val.Raw.V, 0.009, 1e-12) || !near(j.Train.Raw.V, 0.004, 1e-12) {
			t.Errorf("val %v train %v, want 0.009 and 0.004", j.Val.Raw, j.Train.Raw)
		}
	})
	t.Run("BetterMetricLaterReplays", func(t *testing.T) {
		// Loss alone first; an accuracy with a validation split appears at
		// epoch 4 and every point is judged in error rates from then on.
		pts := []Point{
			metricPoint(1, loss(SplitTrain, 2)), metricPoint(2, loss(SplitTrain, 1.5)), metricPoint(3, loss(SplitTrain, 1.2)),
			metricPoint(4, loss(SplitTrain, 1.0), acc(SplitTrain, 0.7), acc(SplitVal, 0.65)),
		}
		tr, _ := run(Config{}, pts)
		if got := tr.At(0).Metric.Base; got != "acc" {
			t.Errorf("point 0 judged in %q after the replay, want acc", got)
		}
	})
}

func TestTracker_Overconfidence(t *testing.T) {
	// Source: Guo et al. (2017), §3, Fig. 3: the NLL rises while the error
	// still falls.
	tr := New(Config{})
	var j Judgement
	for e := 1; e <= 30; e++ {
		ve := 0.30 - 0.004*float64(e)
		vl := 1.0
		if e > 10 {
			vl = 1.0 + 0.05*float64(e-10)
		}
		j = tr.Add(metricPoint(e, acc(SplitTrain, 1-ve+0.05), acc(SplitVal, 1-ve), loss(SplitTrain, 0.5), loss(SplitVal, vl)))
	}
	if !hasWarning(j, "overconfident") {
		t.Errorf("warnings %q lack overconfidence", j.Warnings)
	}
	found := false
	for _, a := range j.Actions {
		found = found || strings.Contains(a.Text, "calibrate")
	}
	if !found {
		t.Errorf("actions %v lack calibration", j.Actions)
	}
}

func TestTracker_Baseline(t *testing.T) {
	j := judgeConstant(t, Config{BaselineError: Some(0.05)}, 0.04, absent, 0.049, absent)
	if !hasWarning(j, "majority-class baseline") {
		t.Errorf("warnings %q lack the baseline warning", j.Warnings)
	}
	ok := judgeConstant(t, Config{BaselineError: Some(0.05)}, 0.01, absent, 0.02, absent)
	if hasWarning(ok, "majority-class baseline") {
		t.Errorf("a run clearly below the baseline is flagged: %q", ok.Warnings)
	}
}

func TestTracker_Reconfigure(t *testing.T) {
	pts := curve(1, 25, 0)
	tr, _ := run(Config{}, pts)
	cfg := Config{BayesError: 0.1, BayesErrorGiven: true, Metric: "acc"}
	tr.Reconfigure(cfg)
	_, want := run(cfg, pts)
	for i := range want {
		if !reflect.DeepEqual(tr.At(i), want[i]) {
			t.Fatalf("point %d after Reconfigure differs from a fresh run", i)
		}
	}
	if got := tr.Config(); got.BayesError != 0.1 || got.Tolerance != DefaultTolerance {
		t.Errorf("Config = %+v", got)
	}
}

func TestTracker_TooEarlyAndSplits(t *testing.T) {
	tr := New(Config{})
	for e := 1; e < minPoints; e++ {
		if j := tr.Add(errPoint(e, 0.3, absent, 0.5, absent)); j.Diagnosis != TooEarly || j.EarlyStop.Signal != Continue {
			t.Errorf("epoch %d: %v / %v, want too-early / continue", e, j.Diagnosis, j.EarlyStop.Signal)
		}
	}
	t.Run("NoValidation", func(t *testing.T) {
		j := judgeConstant(t, Config{}, 0.3, absent, absent, absent)
		if j.Diagnosis != HighBias || !hasWarning(j, "variance cannot be estimated") {
			t.Errorf("got %v, warnings %q", j.Diagnosis, j.Warnings)
		}
	})
	t.Run("ValOverfit", func(t *testing.T) {
		j := judgeConstant(t, Config{}, 0.01, absent, 0.02, 0.08)
		if !slices.Contains(j.Problems, ValOverfit) || j.Focus != ValOverfit {
			t.Errorf("problems %v focus %v, want val-overfit", j.Problems, j.Focus)
		}
	})
	t.Run("EmptyTracker", func(t *testing.T) {
		if _, ok := New(Config{}).Latest(); ok {
			t.Error("Latest of an empty tracker reports a judgement")
		}
	})
	t.Run("PointWithoutMetrics", func(t *testing.T) {
		j := New(Config{}).Add(Point{Epoch: 1})
		if j.Diagnosis != TooEarly || !hasWarning(j, "no judgeable metric") {
			t.Errorf("got %v, warnings %q", j.Diagnosis, j.Warnings)
		}
	})
}

func TestTracker_BayesErrorAboveOneForRate(t *testing.T) {
	// "--bayes-error 4" on an error rate: read as 4% and said so.
	j := judgeConstant(t, Config{BayesError: 4, BayesErrorGiven: true}, 0.05, absent, 0.06, absent)
	if !near(j.BayesError, 0.04, 1e-12) || !near(j.AvoidableBias.V, 0.01, 1e-9) || !hasWarning(j, "read as 4.0%") {
		t.Errorf("bayes %v bias %v warnings %q", j.BayesError, j.AvoidableBias, j.Warnings)
	}
}

func TestConfig_Normalized(t *testing.T) {
	got := Config{Tolerance: math.NaN(), Patience: -3, Smoothing: 7, Strip: -1, StopPQ: math.Inf(1), MinDelta: -1}.normalized()
	want := DefaultConfig()
	if got != want {
		t.Errorf("normalized = %+v, want %+v", got, want)
	}
	if New(Config{Smoothing: SmoothingOff}).Config().beta() != 0 {
		t.Error("SmoothingOff does not switch smoothing off")
	}
}

// TestTracker_HistoryReaders: Epoch and Logged read the compact history
// as At would, and Revision counts the times every point was judged again
// (not a rewind, which keeps the judgements before it).
func TestTracker_HistoryReaders(t *testing.T) {
	pts := curve(1, 3*ckptEvery, 0)
	tr, _ := run(Config{}, pts)
	for i := 0; i < tr.Len(); i++ {
		j := tr.At(i)
		if tr.Epoch(i) != j.Epoch {
			t.Fatalf("Epoch(%d) = %d, At says %d", i, tr.Epoch(i), j.Epoch)
		}
		for s := SplitNone; s <= SplitTest+1; s++ {
			if got, want := tr.Logged(i, s), j.Estimate(s).Raw; got != want {
				t.Fatalf("Logged(%d, %v) = %v, At says %v", i, s, got, want)
			}
		}
	}
	rev := tr.Revision()
	tr.Add(pts[10]) // a rewind to epoch 11
	if tr.Revision() != rev || tr.Len() != 11 {
		t.Errorf("a rewind: revision %d → %d, Len %d", rev, tr.Revision(), tr.Len())
	}
	tr.Reconfigure(Config{BayesError: 0.05, BayesErrorGiven: true})
	if tr.Revision() != rev+1 {
		t.Errorf("Reconfigure: revision %d → %d, want one more", rev, tr.Revision())
	}
	// A value above 1 shows the accuracy is in percent: every point is
	// judged again.
	tr.Add(metricPoint(12, acc(SplitTrain, 95), acc(SplitVal, 90)))
	if tr.Revision() != rev+2 {
		t.Errorf("percent found: revision %d → %d, want one more", rev+1, tr.Revision())
	}
	defer func() {
		if recover() == nil {
			t.Error("Epoch out of range did not panic")
		}
	}()
	tr.Epoch(tr.Len())
}

// TestTracker_ConcurrentReaders: At, Latest and the history readers share
// nothing mutable, so several readers may inspect past epochs at once
// (run with -race).
func TestTracker_ConcurrentReaders(t *testing.T) {
	tr, want := run(Config{}, curve(1, 2*ckptEvery+17, 0))
	var wg sync.WaitGroup
	for g := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := g; i < tr.Len(); i += 3 {
				if got := tr.At(i); !reflect.DeepEqual(got, want[i]) {
					t.Errorf("reader %d: At(%d) differs", g, i)
					return
				}
				_ = tr.Logged(i, SplitVal)
				_, _ = tr.Latest()
			}
		}()
	}
	wg.Wait()
}
