package diagnose

import (
	"math"
	"slices"
	"testing"
)

// judgeConstant feeds the same values for three epochs (the fewest the
// Tracker judges) and returns the last judgement.
func judgeConstant(t *testing.T, cfg Config, train, trainDev, val, test float64) Judgement {
	t.Helper()
	tr := New(cfg)
	var j Judgement
	for e := 1; e <= minPoints; e++ {
		j = tr.Add(errPoint(e, train, trainDev, val, test))
	}
	return j
}

func near(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
}

// TestTracker_NgExamples reproduces the stated diagnosis and focus of every
// worked example of Ng, Machine Learning Yearning (2018 draft), table B of
// the project's check values. Errors in percent are fed as fractions.
func TestTracker_NgExamples(t *testing.T) {
	tests := []struct {
		name                       string
		source                     string
		bayes                      float64 // < 0: not given (≈ 0 in the source)
		train, trainDev, val       float64 // absent: -1
		wantBias, wantVar, wantMis float64 // NaN: absent
		wantDiag                   Diagnosis
		wantProblems               []Component
		wantFocus                  Component
	}{
		// Source: MLY ch. 21, p. 44: 1% / 11% is high variance ("overfitting").
		{"B1Overfitting", "MLY ch.21 p.44", -1, 0.01, absent, 0.11, 0.01, 0.10, math.NaN(), HighVariance, []Component{Variance}, Variance},
		// Source: MLY ch. 21, p. 44: 15% / 16% is high bias ("underfitting").
		{"B2Underfitting", "MLY ch.21 p.44", -1, 0.15, absent, 0.16, 0.15, 0.01, math.NaN(), HighBias, []Component{AvoidableBias}, AvoidableBias},
		// Source: MLY ch. 21, p. 44: 15% / 30% is high bias and high variance.
		{"B3Both", "MLY ch.21 p.44", -1, 0.15, absent, 0.30, 0.15, 0.15, math.NaN(), HighBiasHighVariance, []Component{AvoidableBias, Variance}, AvoidableBias},
		// Source: MLY ch. 21 (text of ch21.md): 0.5% / 1% is doing well.
		{"B4DoingWell", "MLY ch.21", -1, 0.005, absent, 0.01, 0.005, 0.005, math.NaN(), GoodFit, nil, NoComponent},
		// Source: MLY ch. 22, pp. 46–47: optimal 14%, 15% / 30%: variance is the problem.
		{"B5NoisyVariance", "MLY ch.22 pp.46-47", 0.14, 0.15, absent, 0.30, 0.01, 0.15, math.NaN(), HighVariance, []Component{Variance}, Variance},
		// Source: MLY ch. 22, p. 47: optimal 14%, 15% / 16%: already doing well.
		{"B6NoisyDoingWell", "MLY ch.22 p.47", 0.14, 0.15, absent, 0.16, 0.01, 0.01, math.NaN(), GoodFit, nil, NoComponent},
		// Source: MLY ch. 40, p. 77: 1% / train-dev 1.5% / dev 10%: data mismatch.
		{"B7DataMismatch", "MLY ch.40 p.77", -1, 0.01, 0.015, 0.10, 0.01, 0.005, 0.085, DataMismatch, []Component{Mismatch}, Mismatch},
		// Source: MLY ch. 41, p. 79: 1% / 5% / 5%: high variance.
		{"B8Variance", "MLY ch.41 p.79", -1, 0.01, 0.05, 0.05, 0.01, 0.04, 0, HighVariance, []Component{Variance}, Variance},
		// Source: MLY ch. 41, p. 79: 10% / 11% / 12%: high avoidable bias.
		{"B9Bias", "MLY ch.41 p.79", -1, 0.10, 0.11, 0.12, 0.10, 0.01, 0.01, HighBias, []Component{AvoidableBias}, AvoidableBias},
		// Source: MLY ch. 41, p. 79: 10% / 11% / 20%: avoidable bias and data mismatch, not variance.
		{"B10BiasAndMismatch", "MLY ch.41 p.79", -1, 0.10, 0.11, 0.20, 0.10, 0.01, 0.09, HighBias, []Component{AvoidableBias, Mismatch}, AvoidableBias},
		// Source: Ng, Coursera "Avoidable bias" lecture: human 1%, 8% / 10%: focus on bias.
		{"B11FocusBias", "Coursera avoidable bias", 0.01, 0.08, absent, 0.10, 0.07, 0.02, math.NaN(), HighBias, []Component{AvoidableBias}, AvoidableBias},
		// Source: same lecture: human 7.5%, 8% / 10%: focus on variance.
		{"B12FocusVariance", "Coursera avoidable bias", 0.075, 0.08, absent, 0.10, 0.005, 0.02, math.NaN(), HighVariance, []Component{Variance}, Variance},
		// Source: Ng course-3 notes: human 4%, 7% / train-dev 10% / dev 6%:
		// no single label stated; the mismatch is negative (dev data easier).
		{"B13NegativeMismatch", "course-3 notes", 0.04, 0.07, 0.10, 0.06, 0.03, 0.03, -0.04, HighBiasHighVariance, []Component{AvoidableBias, Variance}, AvoidableBias},
		// Source: MLY p. 47 footnote 8: optimal 14%, train 13.5%: negative
		// avoidable bias means overfitting the training set, so variance
		// methods apply. The dev error 16% is ours (the footnote gives none).
		{"B14NegativeBias", "MLY p.47 fn.8", 0.14, 0.135, absent, 0.16, -0.005, 0.025, math.NaN(), HighVariance, []Component{Variance}, Variance},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			cfg := DefaultConfig()
			if tc.bayes >= 0 {
				cfg.BayesError, cfg.BayesErrorGiven = tc.bayes, true
			}
			j := judgeConstant(t, cfg, tc.train, tc.trainDev, tc.val, absent)
			if j.Diagnosis != tc.wantDiag || j.Focus != tc.wantFocus || !slices.Equal(j.Problems, tc.wantProblems) {
				t.Errorf("%s: optimal %v train %v train-dev %v val %v: got %v problems %v focus %v, want %v problems %v focus %v",
					tc.source, tc.bayes, tc.train, tc.trainDev, tc.val, j.Diagnosis, j.Problems, j.Focus, tc.wantDiag, tc.wantProblems, tc.wantFocus)
			}
			checkNum(t, "avoidable bias", j.AvoidableBias, tc.wantBias)
			checkNum(t, "variance", j.Variance, tc.wantVar)
			checkNum(t, "data mismatch", j.DataMismatch, tc.wantMis)
		})
	}
}

func checkNum(t *testing.T, what string, got Num, want float64) {
	t.Helper()
	if math.IsNaN(want) {
		if got.OK {
			t.Errorf("%s = %v, want absent", what, got.V)
		}
		return
	}
	if !got.OK || !near(got.V, want, 1e-9) {
		t.Errorf("%s = %+v, want %v", what, got, want)
	}
}

// TestTracker_NgWarnings checks the warnings that the signs of the
// components call for.
func TestTracker_NgWarnings(t *testing.T) {
	// Source: MLY p. 47 footnote 8 (negative avoidable bias).
	t.Run("B14WarnsNegativeBias", func(t *testing.T) {
		j := judgeConstant(t, Config{BayesError: 0.14, BayesErrorGiven: true}, 0.135, absent, 0.16, absent)
		if !hasWarning(j, "below the optimal error") {
			t.Errorf("warnings %q lack the negative-bias warning", j.Warnings)
		}
	})
	// Source: Ng course-3 notes (B13: mismatch −4 points).
	t.Run("B13WarnsEasierValidation", func(t *testing.T) {
		j := judgeConstant(t, Config{BayesError: 0.04, BayesErrorGiven: true}, 0.07, 0.10, 0.06, absent)
		if !hasWarning(j, "easier") {
			t.Errorf("warnings %q lack the negative-mismatch warning", j.Warnings)
		}
	})
	t.Run("OptimalNotGivenIsUpperBound", func(t *testing.T) {
		j := judgeConstant(t, Config{}, 0.15, absent, 0.16, absent)
		if !hasWarning(j, "upper bound") {
			t.Errorf("warnings %q lack the upper-bound warning", j.Warnings)
		}
	})
}
