package diagnose

import (
	"strings"
	"testing"
)

// overfitDemoOpening is the training and validation accuracy of the first
// seven epochs of the demo's overfit scenario (seed 1, `fitgap demo
// --scenario overfit --pace 0 --write`): a large network whose training
// error still falls, judged high-bias at epoch 7.
var overfitDemoOpening = [][2]float64{
	{0.66, 0.672}, {0.655, 0.644}, {0.73, 0.746}, {0.69, 0.705}, {0.7, 0.715}, {0.695, 0.719}, {0.695, 0.715},
}

// TestActions_TrainLongerFirst: while the training error still falls
// steeply, or still falls before a trend window (8 points) has passed, the
// model has not shown what it can fit: the first remedy for high bias is
// to train longer, and the verdict says it is provisional. Once the
// training curve has flattened over a full window, a larger model comes
// first again (Machine Learning Yearning, ch. 23 and 25: a bigger model
// is the first bias remedy) and the verdict is settled.
func TestActions_TrainLongerFirst(t *testing.T) {
	cfg := Config{BayesError: 0.05, BayesErrorGiven: true}
	t.Run("OverfitDemoAtEpoch7", func(t *testing.T) {
		tr := New(cfg)
		var j Judgement
		for e, v := range overfitDemoOpening {
			j = tr.Add(metricPoint(e+1, acc(SplitTrain, v[0]), acc(SplitVal, v[1])))
		}
		if j.Diagnosis != HighBias {
			t.Fatalf("epoch 7 judged %v, want high bias", j.Diagnosis)
		}
		if !strings.HasPrefix(j.Actions[0].Text, "train longer") {
			t.Errorf("first action %q, want train longer", j.Actions[0].Text)
		}
		if !strings.Contains(j.Provisional, "7 of the 8 points") {
			t.Errorf("provisional = %q, want the count of points", j.Provisional)
		}
	})
	t.Run("SteepFallOverAFullWindow", func(t *testing.T) {
		tr := New(cfg)
		var j Judgement
		for e := 1; e <= 12; e++ {
			train := 0.60 - 0.03*float64(e) // 3 points an epoch: 24 over the window, bias about 20
			j = tr.Add(errPoint(e, train, absent, train+0.01, absent))
		}
		if j.Diagnosis != HighBias || !(strings.HasPrefix(j.Actions[0].Text, "train longer") && strings.HasSuffix(j.Actions[0].Text, "still falling steeply")) {
			t.Fatalf("judged %v, first action %q; want high bias, train longer", j.Diagnosis, j.Actions[0].Text)
		}
		if !strings.Contains(j.Actions[0].Why, "over the last 8 epochs") || !strings.Contains(j.Provisional, "over the last 8 epochs") {
			t.Errorf("a full window cites its evidence: why %q, provisional %q", j.Actions[0].Why, j.Provisional)
		}
		if !strings.HasPrefix(j.Actions[1].Text, "train a larger model") {
			t.Errorf("second action %q, want a larger model", j.Actions[1].Text)
		}
	})
	t.Run("SlowFallLargeBias", func(t *testing.T) {
		tr := New(cfg)
		var j Judgement
		for e := 1; e <= 20; e++ {
			train := 0.40 - 0.002*float64(e) // 1.6 points per window, bias about 30: not steep
			j = tr.Add(errPoint(e, train, absent, train+0.01, absent))
		}
		if !strings.HasPrefix(j.Actions[0].Text, "train a larger model") || j.Provisional != "" {
			t.Errorf("first action %q, provisional %q; want a larger model, settled", j.Actions[0].Text, j.Provisional)
		}
	})
}

// TestActions_WindowEvidenceOnlyWhenFull: a sentence that cites the trend
// window ("no progress over the last 8 epochs") appears only once the
// window holds 8 points; at epoch 3 of a run whose training error rises
// (the demo's diverge scenario before its NaN) no sentence claims 8
// epochs of evidence.
func TestActions_WindowEvidenceOnlyWhenFull(t *testing.T) {
	// The diverge scenario's first three epochs, seed 1: training
	// accuracy 0.876, 0.822, then falling.
	trains := []float64{0.124, 0.178, 0.21}
	tr := New(Config{})
	var j Judgement
	for e, v := range trains {
		j = tr.Add(errPoint(e+1, v, absent, v-0.006, absent))
	}
	for _, a := range j.Actions {
		if strings.Contains(a.Text+a.Why, "last 8 epochs") {
			t.Errorf("epoch 3 cites 8 epochs: %q — %q", a.Text, a.Why)
		}
	}
	for e := 4; e <= 12; e++ {
		j = tr.Add(errPoint(e, 0.21, absent, 0.204, absent))
	}
	found := false
	for _, a := range j.Actions {
		found = found || strings.Contains(a.Why, "no progress over the last 8 epochs")
	}
	if !found {
		t.Errorf("a plateau over a full window is not cited: %+v", j.Actions)
	}
}
