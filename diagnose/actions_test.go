package diagnose

import (
	"strings"
	"testing"
)

// TestActions_NegativeVarianceNeedsEvidence: validation beating training
// is cited as training-only regularization only when the gap stands out of
// the epoch-to-epoch noise (95%); otherwise "reduce regularization" keeps
// the avoidable-bias evidence (MLY ch. 25 lists less regularization as a
// bias remedy; the attribution to dropout and similar is common practice).
func TestActions_NegativeVarianceNeedsEvidence(t *testing.T) {
	tests := []struct {
		name         string
		train, val   func(e int) float64
		wantEvidence bool
	}{
		{"SteadyGapOfTwoPoints", func(int) float64 { return 0.20 }, func(int) float64 { return 0.18 }, true},
		{"SmallGapInsideLargeNoise",
			func(e int) float64 { return 0.20 + 0.03*float64(e%2*2-1) },
			func(e int) float64 { return 0.197 - 0.03*float64(e%2*2-1) }, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tr := New(Config{BayesError: 0.05, BayesErrorGiven: true})
			var j Judgement
			for e := 1; e <= 30; e++ {
				j = tr.Add(errPoint(e, tt.train(e), absent, tt.val(e), absent))
			}
			found, evidence := false, false
			for _, a := range j.Actions {
				if strings.HasPrefix(a.Text, "reduce regularization") {
					found = true
					evidence = strings.Contains(a.Why, "validation beats training")
				}
			}
			if !found {
				t.Fatalf("no reduce-regularization action for a high-bias run: %+v", j.Actions)
			}
			if evidence != tt.wantEvidence {
				t.Errorf("cites validation beating training = %v, want %v (variance %v, actions %+v)", evidence, tt.wantEvidence, j.Variance, j.Actions)
			}
		})
	}
}
