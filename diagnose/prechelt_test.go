package diagnose

import (
	"math"
	"testing"
)

// Source: the 15-epoch worked example of Prechelt's criteria in the
// project's check values, §3 (computed by hand and checked in Python from
// the definitions of Prechelt 1998, "Early Stopping — But When?").
var (
	precheltTrain = []float64{10, 8, 6.5, 5.5, 5.0, 4.05, 3.75, 3.6, 3.45, 3.3, 3.28, 3.26, 3.24, 3.22, 3.20}
	precheltVal   = []float64{12, 10, 8, 7, 6.5, 6.2, 6.0, 6.1, 6.24, 6.6, 6.9, 7.2, 7.05, 7.35, 7.8}
	// GL(t) for t = 1..15, §3 table.
	precheltGL = []float64{0, 0, 0, 0, 0, 0, 0, 1.6667, 4, 10, 15, 20, 17.5, 22.5, 30}
)

// precheltRun judges the example as a loss in its own units, unsmoothed
// (Prechelt's criteria are defined on the values as measured).
func precheltRun(t *testing.T, cfg Config) []Judgement {
	t.Helper()
	cfg.Smoothing = SmoothingOff
	tr := New(cfg)
	out := make([]Judgement, 0, len(precheltTrain))
	for i := range precheltTrain {
		out = append(out, tr.Add(metricPoint(i+1, loss(SplitTrain, precheltTrain[i]), loss(SplitVal, precheltVal[i]))))
	}
	return out
}

func TestTracker_PrecheltValues(t *testing.T) {
	js := precheltRun(t, Config{Patience: 1000})
	for i, j := range js {
		// Four decimals are published (1.6667), the rest are exact on paper.
		if !j.EarlyStop.GL.OK || math.Abs(j.EarlyStop.GL.V-precheltGL[i]) > 5e-5 {
			t.Errorf("GL(%d) = %+v, want %v", i+1, j.EarlyStop.GL, precheltGL[i])
		}
	}
	for _, tc := range []struct {
		epoch  int
		p5, pq float64
	}{
		{5, 400, 0},     // P5(5): strip 10, 8, 6.5, 5.5, 5.0 → 1000·(35/25 − 1)
		{10, 100, 0.1},  // P5(10): 18.15 / 16.5; PQ = 10/100
		{15, 12.5, 2.4}, // P5(15): 16.2 / 16; PQ = 30/12.5
	} {
		es := js[tc.epoch-1].EarlyStop
		if !es.PK.OK || !near(es.PK.V, tc.p5, 1e-9) {
			t.Errorf("P5(%d) = %+v, want %v", tc.epoch, es.PK, tc.p5)
		}
		if !es.PQ.OK || !near(es.PQ.V, tc.pq, 1e-9) {
			t.Errorf("PQ(%d) = %+v, want %v", tc.epoch, es.PQ, tc.pq)
		}
	}
	if es := js[3].EarlyStop; es.PK.OK || es.PQ.OK {
		t.Errorf("P5 and PQ at epoch 4 = %+v, %+v, want absent before the first strip ends", es.PK, es.PQ)
	}
	// §3: the checkpoint to restore is epoch 7 (E_va = 6.0).
	if got := js[14].EarlyStop.BestEpoch; got != 7 {
		t.Errorf("best epoch = %d, want 7", got)
	}
}

// TestTracker_PrecheltStoppingEpochs checks the first epoch at which each
// criterion fires, from the values the Tracker reports at every epoch.
func TestTracker_PrecheltStoppingEpochs(t *testing.T) {
	js := precheltRun(t, Config{Patience: 1000})
	first := func(fires func(t int, es EarlyStop) bool) int {
		for i, j := range js {
			if fires(i+1, j.EarlyStop) {
				return i + 1
			}
		}
		return 0 // never
	}
	stripEnd := func(t int) bool { return t%DefaultStrip == 0 }
	tests := []struct {
		name  string
		fires func(t int, es EarlyStop) bool
		want  int
	}{
		// Source: check values A6 (GL_α stops after the first GL > α).
		{"GL1", func(_ int, es EarlyStop) bool { return es.GL.V > 1 }, 8},
		{"GL2", func(_ int, es EarlyStop) bool { return es.GL.V > 2 }, 9},
		{"GL3", func(_ int, es EarlyStop) bool { return es.GL.V > 3 }, 9},
		{"GL5", func(_ int, es EarlyStop) bool { return es.GL.V > 5 }, 10},
		// PQ_α at strip ends only: at 10, PQ is 0.1.
		{"PQ0.5", func(t int, es EarlyStop) bool { return stripEnd(t) && es.PQ.V > 0.5 }, 15},
		{"PQ0.75", func(t int, es EarlyStop) bool { return stripEnd(t) && es.PQ.V > 0.75 }, 15},
		{"PQ1", func(t int, es EarlyStop) bool { return stripEnd(t) && es.PQ.V > 1 }, 15},
		{"PQ2", func(t int, es EarlyStop) bool { return stripEnd(t) && es.PQ.V > 2 }, 15},
		{"PQ3", func(t int, es EarlyStop) bool { return stripEnd(t) && es.PQ.V > 3 }, 0},
		// UP_s: validation up in s successive strips (ends 5, 10, 15).
		{"UP1", func(t int, es EarlyStop) bool { return stripEnd(t) && es.UP >= 1 }, 10},
		{"UP2", func(t int, es EarlyStop) bool { return stripEnd(t) && es.UP >= 2 }, 15},
		{"UP3", func(t int, es EarlyStop) bool { return stripEnd(t) && es.UP >= 3 }, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := first(tc.fires); got != tc.want {
				t.Errorf("stops after epoch %d, want %d (0 = never)", got, tc.want)
			}
		})
	}
}

// TestTracker_PrecheltSignal checks that the stop signal follows PQ_α with
// the default α = 1 when patience is out of the way, and patience otherwise.
func TestTracker_PrecheltSignal(t *testing.T) {
	t.Run("PQStopsAtFifteen", func(t *testing.T) {
		js := precheltRun(t, Config{Patience: 1000})
		for i, j := range js {
			wantStop := i+1 == 15
			if (j.EarlyStop.Signal == Stop) != wantStop {
				t.Errorf("epoch %d: signal %v (%s), want stop only at 15", i+1, j.EarlyStop.Signal, j.EarlyStop.Reason)
			}
		}
		if es := js[14].EarlyStop; es.BestEpoch != 7 {
			t.Errorf("restore epoch %d, want 7", es.BestEpoch)
		}
	})
	t.Run("PatienceStopsFiveAfterBest", func(t *testing.T) {
		js := precheltRun(t, Config{Patience: 5})
		for i, j := range js {
			if j.EarlyStop.Signal == Stop {
				if i+1 != 12 {
					t.Errorf("first stop at epoch %d, want 12 (best 7 + patience 5)", i+1)
				}
				return
			}
		}
		t.Error("never stopped")
	})
}
