package diagnose

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// TestLabelNoiseLoss checks the optimal cross-entropy of uniform label
// noise against its published value and against the entropy of the label
// distribution computed by gonum's stat.Entropy.
func TestLabelNoiseLoss(t *testing.T) {
	// Source: CHECKS.md §7 H10 (from the definition of cross-entropy,
	// Cover & Thomas, Elements of Information Theory, ch. 2): ε = 0.05,
	// K = 2 gives 0.1985 nats.
	if got := LabelNoiseLoss(0.05, 2); math.Abs(got-0.1985) > 5e-5 {
		t.Errorf("LabelNoiseLoss(0.05, 2) = %.5f, want 0.1985", got)
	}
	// Source: the binary entropy of 0.11 is 0.4999 bits (Cover & Thomas,
	// Fig. 2.1, read off as about one half; value from memory, checked
	// here in nats: 0.4999·ln 2 = 0.3465).
	if got := LabelNoiseLoss(0.11, 2); math.Abs(got-0.4999*math.Ln2) > 2e-4 {
		t.Errorf("LabelNoiseLoss(0.11, 2) = %.5f, want %.5f", got, 0.4999*math.Ln2)
	}
	// Source: gonum stat.Entropy, −Σ p·ln p of the label's distribution
	// given the input: 1−ε on the true class, ε/(K−1) on each other.
	for _, k := range []int{2, 3, 10, 100} {
		for _, eps := range []float64{0, 0.01, 0.05, 0.2, 0.5} {
			if eps > float64(k-1)/float64(k) {
				continue
			}
			p := make([]float64, k)
			p[0] = 1 - eps
			for i := 1; i < k; i++ {
				p[i] = eps / float64(k-1)
			}
			want := stat.Entropy(p)
			if got := LabelNoiseLoss(eps, k); math.Abs(got-want) > 1e-12 {
				t.Errorf("LabelNoiseLoss(%g, %d) = %.15f, gonum's entropy %.15f", eps, k, got, want)
			}
		}
	}
	// The uniform guess is the most noise there can be: ε = (K−1)/K gives ln K.
	if got := LabelNoiseLoss(0.9, 10); math.Abs(got-math.Log(10)) > 1e-12 {
		t.Errorf("LabelNoiseLoss(0.9, 10) = %v, want ln 10", got)
	}
	for _, bad := range []struct {
		eps float64
		k   int
	}{{-0.01, 2}, {0.6, 2}, {0.05, 1}, {math.NaN(), 2}, {0.05, 0}} {
		if got := LabelNoiseLoss(bad.eps, bad.k); !math.IsNaN(got) {
			t.Errorf("LabelNoiseLoss(%v, %d) = %v, want NaN", bad.eps, bad.k, got)
		}
	}
}

// TestTracker_OptimalErrorAsLabelNoise: an optimal error given as a rate
// becomes the optimal loss when a cross-entropy loss is judged and the
// number of classes is known, is read as a rate when an error rate is
// judged, and is not used (with a warning saying how to give it) for a
// loss without the number of classes.
func TestTracker_OptimalErrorAsLabelNoise(t *testing.T) {
	point := func(e int) Point {
		return metricPoint(e, acc(SplitTrain, 0.9), acc(SplitVal, 0.88), loss(SplitTrain, 0.3), loss(SplitVal, 0.32))
	}
	tests := []struct {
		name      string
		cfg       Config
		wantBayes float64
		wantGiven bool
		wantNote  string
		wantWarn  string
	}{
		{"LossWithClasses", Config{Metric: "loss", BayesError: 0.05, BayesErrorGiven: true, BayesErrorRate: true, Classes: 2},
			LabelNoiseLoss(0.05, 2), true, "entropy of 5.0% label noise over 2 classes", ""},
		{"ErrorRateSameRate", Config{Metric: "acc", BayesError: 0.05, BayesErrorGiven: true, BayesErrorRate: true, Classes: 2},
			0.05, true, "", ""},
		{"LossWithoutClasses", Config{Metric: "loss", BayesError: 0.05, BayesErrorGiven: true, BayesErrorRate: true},
			0, false, "", "--classes K"},
		{"NoiseBeyondChance", Config{Metric: "loss", BayesError: 0.6, BayesErrorGiven: true, BayesErrorRate: true, Classes: 2},
			0, false, "", "has no optimal loss"},
		{"PlainNumberIsInLossUnits", Config{Metric: "loss", BayesError: 0.05, BayesErrorGiven: true, Classes: 2},
			0.05, true, "", ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tr := New(tt.cfg)
			var j Judgement
			for e := 1; e <= 5; e++ {
				j = tr.Add(point(e))
			}
			if math.Abs(j.BayesError-tt.wantBayes) > 1e-12 || j.BayesErrorGiven != tt.wantGiven || j.BayesNote != tt.wantNote {
				t.Errorf("optimal %v given %v note %q, want %v %v %q", j.BayesError, j.BayesErrorGiven, j.BayesNote, tt.wantBayes, tt.wantGiven, tt.wantNote)
			}
			if tt.wantWarn != "" && !hasWarning(j, tt.wantWarn) {
				t.Errorf("no warning with %q: %q", tt.wantWarn, j.Warnings)
			}
			if tt.wantWarn != "" && hasWarning(j, "optimal error not given") {
				t.Errorf("the optimal error given is said to be not given: %q", j.Warnings)
			}
			for _, w := range j.Warnings {
				if tt.wantWarn == "" && strings.Contains(w, "is a rate") {
					t.Errorf("unexpected warning %q", w)
				}
			}
		})
	}
}
