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
