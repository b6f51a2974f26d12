package tui

import (
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// TestVerdict_ProvisionalBias: at epoch 7 of the overfit demo (its
// training and validation accuracy, seed 1) the verdict of high bias is
// marked provisional at every size, with its reason in the wide panel,
// and the first next action is to train longer.
func TestVerdict_ProvisionalBias(t *testing.T) {
	accs := [][2]float64{{0.66, 0.672}, {0.655, 0.644}, {0.73, 0.746}, {0.69, 0.705}, {0.7, 0.715}, {0.695, 0.719}, {0.695, 0.715}}
	acc := func(sp diagnose.Split) diagnose.Column {
		return metricCol(sp.String()+"_acc", "acc", sp, diagnose.HigherIsBetter, true)
	}
	var pts []diagnose.Point
	for e, a := range accs {
		pts = append(pts, diagnose.Point{Epoch: e + 1, EpochLogged: true, Rows: 1, Samples: []diagnose.Sample{
			sampleOf(acc(diagnose.SplitTrain), a[0]), sampleOf(acc(diagnose.SplitVal), a[1]),
		}})
	}
	for _, size := range [][2]int{{120, 40}, {80, 24}, {50, 14}} {
		m := newTestModel(t, size[0], size[1], Options{Config: diagnose.Config{BayesError: 0.05, BayesErrorGiven: true}})
		v := settle(t, send(t, m, FeedMsg{Points: pts, Source: liveSource(8)})).View()
		if !strings.Contains(v, "underfitting (provisional)") {
			t.Errorf("%dx%d: no provisional verdict:\n%s", size[0], size[1], v)
		}
		if size[0] >= 80 && !strings.Contains(v, "train longer") {
			t.Errorf("%dx%d: the first action is not to train longer:\n%s", size[0], size[1], v)
		}
		if size[0] >= wideW && !strings.Contains(v, "7 of the 8 points") {
			t.Errorf("%dx%d: the wide panel lacks the reason:\n%s", size[0], size[1], v)
		}
	}
}

// TestBarTotal: the error bar says which total it adds up to: the
// validation error when every part is positive, the training error when
// validation beats training (the negative variance takes no room), and
// the parts drawn when it is no split's value.
func TestBarTotal(t *testing.T) {
	m := newTestModel(t, 80, 24, Options{})
	est := func(v float64) diagnose.Estimate { return diagnose.Estimate{Smooth: diagnose.Some(v)} }
	tests := []struct {
		name       string
		j          diagnose.Judgement
		total, tot string
	}{
		{"Validation", diagnose.Judgement{BayesError: 0.05, BayesErrorGiven: true, Train: est(0.15), Val: est(0.25),
			AvoidableBias: diagnose.Some(0.10), Variance: diagnose.Some(0.10)}, "25.0%", "val"},
		{"ValidationBeatsTraining", diagnose.Judgement{BayesError: 0.05, BayesErrorGiven: true, Train: est(0.22), Val: est(0.213),
			AvoidableBias: diagnose.Some(0.17), Variance: diagnose.Some(-0.007)}, "22.0%", "train"},
		{"TrainingBelowOptimal", diagnose.Judgement{BayesError: 0.05, BayesErrorGiven: true, Train: est(0.001), Val: est(0.214),
			AvoidableBias: diagnose.Some(-0.049), Variance: diagnose.Some(0.213)}, "26.3%", "opt+var"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			j := tt.j
			j.Metric.Fraction = true
			total, name := m.barTotal(j, components(j))
			if total != tt.total || name != tt.tot {
				t.Errorf("bar total %q %q, want %q %q", total, name, tt.total, tt.tot)
			}
		})
	}
}
