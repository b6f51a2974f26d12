package tui

import (
	"math"
	"strings"
	"testing"
)

func TestEarlyEpochs(t *testing.T) {
	tests := []struct{ n, want int }{
		{0, 0}, {1, 0}, {3, 0}, {4, 1}, {6, 1}, {7, 2}, {10, 3}, {36, 3}, {10000, 3},
	}
	for _, tt := range tests {
		if got := earlyEpochs(tt.n); got != tt.want {
			t.Errorf("earlyEpochs(%d) = %d, want %d", tt.n, got, tt.want)
		}
	}
}

func TestYRange_Limits(t *testing.T) {
	tests := []struct {
		name           string
		vals           []float64 // one series, a value per row
		lo, hi         float64
		clipped        bool
		cutAbove, cutB bool
	}{
		// The loss of a uniform guess over ten classes is −ln(1/10) = 2.3026
		// (cross-entropy at initialisation; from memory: CS231n notes,
		// "Neural Networks Part 3", sanity checks). The rest runs from 0.5 to
		// 0.2: span 0.3, so the top is 0.5 + 1.5 × 0.3 = 0.95.
		{"FirstEpochAtRandomGuess", []float64{2.3026, 0.9, 0.6, 0.5, 0.4, 0.35, 0.3, 0.25, 0.22, 0.2}, 0.2, 0.95, true, true, false},
		// An ordinary falling curve keeps its first epochs on the scale.
		{"OrdinaryDecay", []float64{0.48, 0.41, 0.36, 0.31, 0.28, 0.25, 0.23, 0.21, 0.2, 0.19}, 0.19, 0.48, false, false, false},
		// A late rise (divergence) is never cut: only leading epochs can be.
		{"LateRise", []float64{0.5, 0.4, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 5, 40}, 0.3, 40, false, false, false},
		// Too short a run to tell a warm-up: everything shows.
		{"ShortRun", []float64{9, 0.3, 0.2}, 0.2, 9, false, false, false},
		// A flat rest gets the room a flat chart gets: 0.1 × 0.3 at least 0.05.
		{"FlatRest", []float64{3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3}, 0.3, 0.3 + 1.5*0.05, true, true, false},
		// Early values far below the rest are cut too.
		{"FirstFarBelow", []float64{-10, 1, 1.1, 1.2, 1.1, 1.0, 1.2}, 1 - 1.5*0.2, 1.2, true, false, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var r yRange
			r.reset(len(tt.vals))
			for i, v := range tt.vals {
				r.add(i, v)
			}
			lo, hi := r.limits()
			if math.Abs(lo-tt.lo) > 1e-9 || math.Abs(hi-tt.hi) > 1e-9 {
				t.Errorf("limits of %v = [%g, %g], want [%g, %g]", tt.vals, lo, hi, tt.lo, tt.hi)
			}
			if r.clipped() != tt.clipped || r.cut != tt.cutAbove || r.cutLo != tt.cutB {
				t.Errorf("clipped %v (above %v, below %v), want %v (%v, %v)", r.clipped(), r.cut, r.cutLo, tt.clipped, tt.cutAbove, tt.cutB)
			}
		})
	}
}

// spikeRun is goldenRun with a first epoch at a uniform guess over ten
// classes: error 0.9 on both splits, loss −ln(1/10) = 2.3026 (from memory:
// CS231n notes, "Neural Networks Part 3", sanity checks).
func spikeRun(t *testing.T, m Model) Model {
	t.Helper()
	pts := goldenRun.points()
	for i, s := range pts[0].Samples {
		switch s.Column.Name {
		case "train_acc", "val_acc":
			pts[0].Samples[i].Value, pts[0].Samples[i].Last = 0.1, 0.1
		case "train_loss", "val_loss":
			pts[0].Samples[i].Value, pts[0].Samples[i].Last = 2.3026, 2.3026
		}
	}
	m = send(t, m, FeedMsg{Points: pts, Source: liveSource(len(pts) + 1)})
	return settle(t, m)
}

// chartOf returns the main chart's rows of a stacked or wide screen (the
// lines between the status line and the x axis labels).
func chartOf(t *testing.T, v string) []string {
	t.Helper()
	lines := strings.Split(v, "\n")
	var out []string
	for _, l := range lines[1:] {
		out = append(out, l)
		if strings.Contains(l, "└") {
			break
		}
	}
	return out
}

func TestChart_FirstEpochOffScale(t *testing.T) {
	m := spikeRun(t, newTestModel(t, 80, 24, Options{}))
	v := m.View()
	chart := chartOf(t, v)
	if len(chart) < 5 {
		t.Fatalf("no chart:\n%s", v)
	}
	// The highest y label shows the range stops well below the 90% of epoch 1.
	top := ""
	for _, l := range chart[1:] {
		if i := strings.Index(l, "┤"); i > 0 {
			top = strings.TrimSpace(l[:i])
			break
		}
	}
	if top == "" || strings.HasPrefix(top, "9") || strings.HasPrefix(top, "8") {
		t.Errorf("top of the y axis is %q: the first epoch still sets the range\n%s", top, strings.Join(chart, "\n"))
	}
	// An arrow at the top edge of the first column, with epoch 1's value.
	plotTop := chart[1]
	if !strings.Contains(plotTop, "↑90%") {
		t.Errorf("first plot row lacks the off-scale mark ↑90%%: %q\n%s", plotTop, strings.Join(chart, "\n"))
	}
	if !strings.Contains(chart[0], "↑ off scale") {
		t.Errorf("legend lacks the off-scale entry: %q", chart[0])
	}
	// The judged values are untouched: the verdict still sees epoch 1.
	if got := m.judgementAt(0).Train.Raw; !got.OK || math.Abs(got.V-0.9) > 1e-9 {
		t.Errorf("epoch 1 judged as %+v, want train error 0.9", got)
	}

	// Without the spike nothing is off the scale.
	plain := feed(t, newTestModel(t, 80, 24, Options{}), runSpec{epochs: 36, total: 60, turn: 18, trainBase: 0.06, valBase: 0.11})
	if pv := plain.View(); strings.ContainsAny(pv, "↑↓") || strings.Contains(pv, "off scale") {
		t.Errorf("an ordinary run shows off-scale marks:\n%s", pv)
	}
}

// TestChart_OffScaleLogAxis: on a log axis the range is judged in log
// units, where a random-guess epoch usually fits; the screen must still
// draw without marks that point nowhere.
func TestChart_OffScaleLogAxis(t *testing.T) {
	m := spikeRun(t, newTestModel(t, 120, 40, Options{}))
	m = press(t, m, "g")
	v := m.View()
	checkFits(t, v, 120, 40)
	if strings.Contains(v, "↓") {
		t.Errorf("a log axis marks values below the range:\n%s", v)
	}
}
