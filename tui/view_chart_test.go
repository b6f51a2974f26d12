package tui

import (
	"math"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/tui/chart"
)

func TestSparklines_CursorWithoutColour(t *testing.T) {
	m := feed(t, newTestModel(t, 80, 24, Options{NoColor: true}), goldenRun)
	rowsOf := func(v string) []string {
		var out []string
		for _, l := range strings.Split(v, "\n") {
			if strings.HasPrefix(l, "lr ") || strings.HasPrefix(l, "train_loss ") {
				out = append(out, l)
			}
		}
		return out
	}
	live := rowsOf(m.View())
	if len(live) == 0 {
		t.Fatalf("no sparklines:\n%s", m.View())
	}
	for _, l := range live {
		if strings.Contains(l, string(chart.GlyphCursor)) {
			t.Errorf("a live screen marks an inspected epoch: %q", l)
		}
	}
	m = press(t, m, "left", "left", "left", "left", "left")
	per := m.cache.lay.sparkCols // each of these rows is full
	for _, l := range rowsOf(m.View()) {
		if got := strings.Count(l, string(chart.GlyphCursor)); got != per {
			t.Errorf("inspecting: %d cursor lines in a row of %d sparklines: %q", got, per, l)
		}
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
