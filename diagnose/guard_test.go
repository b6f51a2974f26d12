package diagnose

import (
	"strings"
	"testing"
)

// labelNoiseRun is an invented run with 20 % wrong training labels and a
// slow optimizer: the training error on the noisy labels falls from 30 %
// to 8 % (the network memorizes the wrong labels) while the validation
// error climbs from 4 % to 12 % after epoch 40 — the shape of
// mlp-labelnoise20-sgd in testdata/runs.
func labelNoiseRun(epochs int) []Point {
	var pts []Point
	for e := 1; e <= epochs; e++ {
		f := float64(e)
		te := 0.30 - 0.22*f/float64(epochs)
		ve := 0.04 + 0.004*wiggle(e)
		if e > 40 {
			ve += 0.08 * (f - 40) / float64(epochs-40)
		}
		pts = append(pts, errPoint(e, te, absent, ve, absent))
	}
	return pts
}

func TestTracker_KeepTrainingOnlyOnValidation(t *testing.T) {
	t.Run("TrainingStillFallingIsNoReason", func(t *testing.T) {
		// Issue case: "high bias, keep training" while the validation
		// error triples. The guard may not look at the training curve.
		_, js := run(Config{}, labelNoiseRun(160))
		last := js[len(js)-1]
		if last.EarlyStop.Signal != Stop {
			t.Errorf("signal %v (%s), want stop", last.EarlyStop.Signal, last.EarlyStop.Reason)
		}
		for _, j := range js {
			if strings.Contains(j.EarlyStop.Reason, "keep training") && j.Val.Smooth.V-j.EarlyStop.BestVal.V > 5*j.Noise.V {
				t.Fatalf("epoch %d: %q with the validation error far above its best", j.Epoch, j.EarlyStop.Reason)
			}
		}
	})
	t.Run("FarRiseStopsWhateverTheBias", func(t *testing.T) {
		// Patience and PQ out of the way: the rise beyond 5 noise s.d.
		// alone stops the run, and the trend does not say "improving".
		_, js := run(Config{Patience: 1000, StopPQ: 1e9}, labelNoiseRun(160))
		last := js[len(js)-1]
		if last.EarlyStop.Signal != Stop || !strings.Contains(last.EarlyStop.Reason, "times its epoch-to-epoch noise") {
			t.Errorf("signal %v: %s", last.EarlyStop.Signal, last.EarlyStop.Reason)
		}
		if last.Progress == Improving {
			t.Errorf("progress improving %.3g above the best", last.Val.Smooth.V-last.EarlyStop.BestVal.V)
		}
	})
	t.Run("FarRiseNeedsSmoothing", func(t *testing.T) {
		// With smoothing off the signal follows Prechelt's criteria and
		// patience only (the worked example's signal test relies on it).
		_, js := run(Config{Patience: 1000, StopPQ: 1e9, Smoothing: SmoothingOff}, labelNoiseRun(160))
		for _, j := range js {
			if strings.Contains(j.EarlyStop.Reason, "times its epoch-to-epoch noise") {
				t.Fatalf("epoch %d: far-rise stop with smoothing off", j.Epoch)
			}
		}
	})
}

func TestTracker_Memorization(t *testing.T) {
	t.Run("VarianceRemediesAndALabelCheck", func(t *testing.T) {
		_, js := run(Config{}, labelNoiseRun(160))
		last := js[len(js)-1]
		if last.Diagnosis != HighVariance || last.Focus != Variance {
			t.Fatalf("%v focus %v, want high variance (memorization)", last.Diagnosis, last.Focus)
		}
		for _, a := range last.Actions {
			if strings.HasPrefix(a.Text, "train a larger model") || strings.HasPrefix(a.Text, "train longer") {
				t.Errorf("bias remedy %q for a memorizing run", a.Text)
			}
		}
		if !hasWarning(last, "memorizes its training set") {
			t.Errorf("warnings %q", last.Warnings)
		}
		if len(last.Actions) < 2 || !strings.HasPrefix(last.Actions[0].Text, "restore the checkpoint") ||
			!strings.HasPrefix(last.Actions[1].Text, "check the training labels") || !strings.Contains(last.Actions[1].Why, "give the optimal error") {
			t.Errorf("actions %+v, want restore, then a label check asking for the optimal error", last.Actions)
		}
	})
	t.Run("ComparedWithAGivenOptimalError", func(t *testing.T) {
		// Source: MLY ch. 22, footnote 8 (check value B14): a training
		// error below the optimal error fits noise of the training set.
		_, js := run(Config{BayesError: 0.2, BayesErrorGiven: true}, labelNoiseRun(160))
		last := js[len(js)-1]
		found := false
		for _, a := range last.Actions {
			found = found || strings.HasPrefix(a.Text, "check the training labels") && strings.Contains(a.Why, "is below the optimal error 20.0%")
		}
		if !found {
			t.Errorf("actions %+v lack the label check against the optimal error", last.Actions)
		}
	})
	t.Run("MemorizingWhileValidationIsBelowTraining", func(t *testing.T) {
		// At epoch 90 the validation error (about 7 %) has risen from its
		// best but is still far below the training error on the noisy
		// labels (about 18 %): memorizing, not "high variance", whose
		// description says validation well above training.
		_, js := run(Config{}, labelNoiseRun(160))
		j := js[89]
		if j.Diagnosis != Memorizing || j.Focus != Variance || j.Val.Smooth.V >= j.Train.Smooth.V {
			t.Errorf("epoch 90: %v focus %v, train %v val %v", j.Diagnosis, j.Focus, j.Train.Smooth, j.Val.Smooth)
		}
		for _, a := range j.Actions {
			if strings.HasPrefix(a.Text, "get more training data") && !strings.HasPrefix(a.Why, "since epoch ") {
				t.Errorf("variance remedy cites %q, want how the curves moved since the best epoch", a.Why)
			}
		}
	})
	t.Run("NotBeforeTheValidationRises", func(t *testing.T) {
		// Up to epoch 40 the validation error is flat: the high training
		// error is judged as bias (an upper bound, no optimal error given).
		_, js := run(Config{}, labelNoiseRun(160))
		if j := js[39]; j.Diagnosis != HighBias || hasWarning(j, "memorizes") {
			t.Errorf("epoch 40: %v, warnings %q", j.Diagnosis, j.Warnings)
		}
	})
}
