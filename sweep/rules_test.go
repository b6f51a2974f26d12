package sweep

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// curveOf builds a curve of values at epochs 1, 2, ….
func curveOf(vals ...float64) *Curve {
	c := &Curve{}
	for i, v := range vals {
		c.Append(i+1, v)
	}
	return c
}

func TestCurve_MeanBestFrom(t *testing.T) {
	c := curveOf(0.5, math.NaN(), 0.3, 0.4, math.Inf(1), 0.2)
	// Source: the running mean of the finite values, checked against
	// gonum's stat.Mean on the same values.
	for _, tt := range []struct {
		name string
		t    int
		vals []float64
		best float64
	}{
		{"FirstEpoch", 1, []float64{0.5}, 0.5},
		{"NaNLeftOut", 2, []float64{0.5}, 0.5},
		{"ThirdEpoch", 3, []float64{0.5, 0.3}, 0.3},
		{"InfLeftOut", 5, []float64{0.5, 0.3, 0.4}, 0.3},
		{"PastTheEnd", 99, []float64{0.5, 0.3, 0.4, 0.2}, 0.2},
	} {
		t.Run(tt.name, func(t *testing.T) {
			m, ok := c.MeanBy(tt.t)
			if want := stat.Mean(tt.vals, nil); !ok || math.Abs(m-want) > 1e-15 {
				t.Errorf("MeanBy(%d) = %v, %v; want %v (gonum stat.Mean)", tt.t, m, ok, want)
			}
			if b, ok := c.BestBy(tt.t); !ok || b != tt.best {
				t.Errorf("BestBy(%d) = %v, %v; want %v", tt.t, b, ok, tt.best)
			}
		})
	}
	if _, ok := c.MeanBy(0); ok {
		t.Error("MeanBy before the first epoch should have no value")
	}
	if e, v, ok := c.From(4); !ok || e != 4 || v != 0.4 {
		t.Errorf("From(4) = %d, %v, %v; want 4, 0.4", e, v, ok)
	}
	if _, _, ok := c.From(7); ok {
		t.Error("From past the last epoch should be false")
	}
	c.Set(2, []int{3, 4}, []float64{0.1, 0.15})
	if c.Len() != 4 || c.LastEpoch() != 4 {
		t.Fatalf("after Set: %d points, last epoch %d; want 4, 4", c.Len(), c.LastEpoch())
	}
	if b, _ := c.BestBy(4); b != 0.1 {
		t.Errorf("after a rewind BestBy = %v, want 0.1", b)
	}
	c.Append(4, 0.01) // not above the last epoch: ignored
	if c.Len() != 4 {
		t.Errorf("an epoch that does not rise was appended")
	}
}

// TestCurve_RewindPastNonFinite rewinds a curve to before its non-finite
// values: the running mean counts the values that replace them, and the
// best is found among the points kept. Source: the running mean checked
// against gonum's stat.Mean on the same values.
func TestCurve_RewindPastNonFinite(t *testing.T) {
	c := curveOf(0.5, 0.4, math.NaN(), math.Inf(1), 0.1)
	c.Set(2, []int{3, 4}, []float64{0.45, 0.3})
	m, ok := c.MeanBy(4)
	if want := stat.Mean([]float64{0.5, 0.4, 0.45, 0.3}, nil); !ok || math.Abs(m-want) > 1e-15 {
		t.Errorf("MeanBy(4) = %v, %v; want %v (gonum stat.Mean)", m, ok, want)
	}
	if b, ok := c.BestBy(4); !ok || b != 0.3 {
		t.Errorf("BestBy(4) = %v, %v; want 0.3", b, ok)
	}
	only := curveOf(math.NaN())
	if _, ok := only.BestBy(1); ok {
		t.Error("BestBy of a curve of NaN only should have no value")
	}
}

// TestMedian_WorkedByHand applies the median stopping rule as Golovin et
// al. state it (KDD 2017, §3.2: stop a pending trial at step s when its
// best objective by s is strictly worse than the median of the running
// averages of all completed trials' objectives up to s), worked by hand.
func TestMedian_WorkedByHand(t *testing.T) {
	// Three completed runs, lower is better. Running means up to epoch 3:
	// a: (0.40+0.30+0.20)/3 = 0.30; b: (0.50+0.45+0.40)/3 = 0.45;
	// c: (0.30+0.25+0.20)/3 = 0.25. Median of {0.25, 0.30, 0.45} = 0.30.
	a := curveOf(0.40, 0.30, 0.20, 0.10)
	b := curveOf(0.50, 0.45, 0.40, 0.35)
	c := curveOf(0.30, 0.25, 0.20, 0.15)
	done := []*Curve{a, b, c}
	tests := []struct {
		name     string
		run      *Curve
		median   float64
		best     float64
		hopeless bool
	}{
		// Best 0.35 by epoch 3 > 0.30: stopped.
		{"WorseThanMedian", curveOf(0.45, 0.35, 0.36), 0.30, 0.35, true},
		// Best exactly the median: "strictly worse" keeps it.
		{"EqualToMedianKept", curveOf(0.50, 0.30, 0.31), 0.30, 0.30, false},
		{"BetterThanMedian", curveOf(0.35, 0.29, 0.28), 0.30, 0.28, false},
		// At epoch 2 the running means are 0.35, 0.475, 0.275: median 0.35.
		{"EarlierEpoch", curveOf(0.50, 0.36), 0.35, 0.36, true},
		// A run with only NaN has no best: worse than any median.
		{"AllNaN", curveOf(math.NaN(), math.NaN()), 0.35, math.Inf(1), true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, ok := Median(tt.run, done)
			if !ok {
				t.Fatal("the rule did not apply")
			}
			if math.Abs(got.Median-tt.median) > 1e-12 || got.Best != tt.best || got.Hopeless != tt.hopeless || got.Completed != 3 {
				t.Errorf("Median = %+v; want median %v, best %v, hopeless %v over 3 runs", got, tt.median, tt.best, tt.hopeless)
			}
		})
	}
	// An even count takes the mean of the two middle running means:
	// {0.25, 0.30, 0.45, 0.60} → 0.375.
	d := curveOf(0.6, 0.6, 0.6)
	got, _ := Median(curveOf(0.4, 0.38, 0.37), []*Curve{a, b, c, d})
	if math.Abs(got.Median-0.375) > 1e-12 || !hopelessWas(got, false) {
		t.Errorf("even count: %+v; want median 0.375, kept (0.37 < 0.375)", got)
	}
	if _, ok := Median(curveOf(0.4), nil); ok {
		t.Error("with no completed run the rule must not apply")
	}
	// A completed run shorter than t counts with all it reported.
	short := curveOf(0.2)
	got, _ = Median(curveOf(0.3, 0.25, 0.22), []*Curve{short})
	if got.Median != 0.2 || !got.Hopeless {
		t.Errorf("short completed run: %+v; want median 0.2, hopeless", got)
	}
}

func hopelessWas(m MedianCheck, want bool) bool { return m.Hopeless == want }

// TestHalving_AsynchronousWorkedExample replays the asynchronous
// successive halving example of Dive into Deep Learning (Zhang, Lipton,
// Li & Smola, §19.5 "Asynchronous Successive Halving", Figure asha): η = 2;
// trials 0 and 1 reach the first rung, the better (0) is promoted; trial
// 3 arrives worse than 0: with 3 trials only the top ⌊3/2⌋ = 1 goes on,
// so 3 waits; trial 2 arrives worse than 3: the top ⌊4/2⌋ = 2 are 0 and 3,
// and 3 is promoted. A trial the rung does not promote is flagged here.
func TestHalving_AsynchronousWorkedExample(t *testing.T) {
	r := Rungs{First: 1, Eta: 2}
	val := map[int]float64{0: 0.20, 1: 0.50, 2: 0.40, 3: 0.30}
	at := func(ids ...int) []*Curve {
		cs := make([]*Curve, 4)
		for _, id := range ids {
			cs[id] = curveOf(val[id]) // each at epoch 1: the first rung
		}
		return cs
	}
	steps := []struct {
		name    string
		arrived []int
		flagged []int
	}{
		{"OneTrialNoDecision", []int{0}, nil},
		{"TwoTrialsBestGoesOn", []int{0, 1}, []int{1}},
		{"ThirdTrialWaits", []int{0, 1, 3}, []int{1, 3}},
		{"FourthTrialPromotesThree", []int{0, 1, 3, 2}, []int{1, 2}},
	}
	for _, st := range steps {
		t.Run(st.name, func(t *testing.T) {
			got := Halving(r, at(st.arrived...))
			var flagged []int
			for id := range 4 {
				if got[id].Hopeless {
					flagged = append(flagged, id)
				}
			}
			if !sameInts(flagged, st.flagged) {
				t.Errorf("flagged %v, want %v (checks %+v)", flagged, st.flagged, got)
			}
		})
	}
}

// TestHalving_SynchronousRound checks one rung of successive halving as
// Feurer & Hutter summarize it (Automated Machine Learning, Springer 2019,
// ch. 1, on successive halving: drop the worst fraction (η−1)/η and give
// the rest η times the budget): nine runs at η = 3 keep three.
func TestHalving_SynchronousRound(t *testing.T) {
	cs := make([]*Curve, 9)
	for i := range cs {
		cs[i] = curveOf(0.1*float64(i+1), 0.1*float64(i+1), 0.1*float64(i+1)) // epochs 1–3
	}
	got := Halving(Rungs{First: 3, Eta: 3}, cs)
	for id := range 9 {
		chk := got[id]
		if want := id >= 3; chk.Hopeless != want || chk.Keep != 3 || chk.Reached != 9 || chk.Place != id+1 || chk.Epoch != 3 {
			t.Errorf("run %d: %+v; want hopeless %v, keep 3 of 9, place %d at epoch 3", id, chk, want, id+1)
		}
	}
}

func TestRungs_Epochs(t *testing.T) {
	// Source: Dive into Deep Learning §19.4: r_min = 2, η = 2 give the
	// rungs 2, 4, 8 below r_max = 10 (r_max itself is a rung there; here a
	// run's length plays no part).
	r := Rungs{First: 2, Eta: 2}
	for k, want := range []int{2, 4, 8, 16} {
		if e, ok := r.Epoch(k); !ok || e != want {
			t.Errorf("Epoch(%d) = %d, want %d", k, e, want)
		}
	}
	for _, tt := range []struct{ epoch, rung int }{{1, -1}, {2, 0}, {3, 0}, {4, 1}, {9, 2}, {1 << 40, 29}} {
		if got := r.Highest(tt.epoch); got != tt.rung {
			t.Errorf("Highest(%d) = %d, want %d", tt.epoch, got, tt.rung)
		}
	}
	if (Rungs{First: 0, Eta: 3}).Highest(100) != -1 || (Rungs{First: 3, Eta: 1}).Highest(100) != -1 {
		t.Error("invalid rungs must judge nothing")
	}
}

func TestHalving_Edges(t *testing.T) {
	r := Rungs{First: 1, Eta: 2}
	t.Run("TieWithLastKeptIsKept", func(t *testing.T) {
		got := Halving(r, []*Curve{curveOf(0.1), curveOf(0.3), curveOf(0.3), curveOf(0.5)})
		if got[1].Hopeless || got[2].Hopeless || !got[3].Hopeless {
			t.Errorf("ties: %+v", got)
		}
	})
	t.Run("DivergedRanksLast", func(t *testing.T) {
		got := Halving(r, []*Curve{curveOf(math.NaN()), curveOf(0.9)})
		if !got[0].Hopeless || got[1].Hopeless {
			t.Errorf("NaN at the rung: %+v", got)
		}
	})
	t.Run("JudgedAtHighestRung", func(t *testing.T) {
		// Run 0 is ahead (epoch 2, rung 1) where it is alone: no decision,
		// though it was last at rung 0.
		got := Halving(r, []*Curve{curveOf(0.9, 0.8), curveOf(0.1), curveOf(0.2)})
		if got[0].Hopeless || got[0].Rung != 1 || !got[2].Hopeless {
			t.Errorf("highest rung: %+v", got)
		}
	})
	t.Run("SkippedRungEpoch", func(t *testing.T) {
		// Evaluations every 2 epochs: the value at rung epoch 3 is epoch 4's.
		c := &Curve{}
		c.Append(2, 0.5)
		c.Append(4, 0.4)
		got := Halving(Rungs{First: 3, Eta: 2}, []*Curve{c})
		if got[0].Value != 0.4 || got[0].Epoch != 3 {
			t.Errorf("skipped epoch: %+v", got[0])
		}
	})
}

func sameInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func TestFlag_Text(t *testing.T) {
	frac := metricFrac
	tests := []struct {
		name string
		f    Flag
		want string
	}{
		{"Median", Flag{Rule: RuleMedian, Epoch: 12, Value: 0.231, Bar: 0.21, Count: 4},
			"median rule at epoch 12: best 23.1% is worse than the median 21.0% of the running means of 4 finished runs"},
		{"Rungs", Flag{Rule: RuleRungs, Epoch: 9, Rung: 1, Value: 0.3, Bar: 0.25, Count: 12, Place: 7, Keep: 4},
			"rung 2 (epoch 9): 30.0%, 7th of 12; only the top 4 (1/η) go on, the last at 25.0%"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := tt.f.Text(frac); got != tt.want {
				t.Errorf("Text =\n%q\nwant\n%q", got, tt.want)
			}
		})
	}
	for n, want := range map[int]string{1: "1st", 2: "2nd", 3: "3rd", 4: "4th", 11: "11th", 12: "12th", 13: "13th", 21: "21st", 112: "112th"} {
		if got := ordinal(n); got != want {
			t.Errorf("ordinal(%d) = %q, want %q", n, got, want)
		}
	}
}
