package diagnose

import (
	"math"
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

// TestMetric_Fraction: error rates and shortfalls of bounded scores are
// fractions (shown in percent, gaps in points); a loss is in its own units.
func TestMetric_Fraction(t *testing.T) {
	f1 := func(split Split, v float64) Sample {
		return Sample{Column: ref(col("f1", split, false, HigherIsBetter)), Value: v, Last: v}
	}
	tests := []struct {
		name   string
		sample func(Split, float64) Sample
		metric string
		want   bool
	}{
		{"AccuracyAsError", acc, "acc", true},
		{"ShortfallOfF1", f1, "f1", true},
		{"Loss", loss, "loss", false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tr := New(Config{Metric: tt.metric})
			var j Judgement
			for e := 1; e <= 4; e++ {
				j = tr.Add(metricPoint(e, tt.sample(SplitTrain, 0.8), tt.sample(SplitVal, 0.7)))
			}
			if j.Metric.Fraction != tt.want {
				t.Errorf("%s judged as %q: Fraction = %v, want %v", tt.metric, j.Metric.Label, j.Metric.Fraction, tt.want)
			}
		})
	}
}

// TestPercent: rates and gaps of rates, as practitioners quote them
// (common practice: one decimal; two below one point so small gaps stay
// visible; no negative zero).
func TestPercent(t *testing.T) {
	tests := []struct {
		v    float64
		want string
	}{
		{0.151, "15.1"}, {0.02, "2.0"}, {0.004, "0.40"}, {-0.0226, "-2.3"},
		{-0.00001, "0.00"}, {0, "0.0"}, {1, "100.0"}, {math.NaN(), "NaN"}, {math.Inf(-1), "-Inf"},
	}
	for _, tt := range tests {
		if got := Percent(tt.v); got != tt.want {
			t.Errorf("Percent(%v) = %q, want %q", tt.v, got, tt.want)
		}
	}
}
