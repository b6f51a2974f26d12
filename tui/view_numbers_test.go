package tui

import (
	"math"
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// TestNumbers_ScreenAsReport: a value of the judged metric reads the same
// on the screen as in the report (one number format: a training error of
// about 1e-8 is "0.00%" in both, never "8.4e-8%"), and a gap the same number
// of points.
func TestNumbers_ScreenAsReport(t *testing.T) {
	acc := func(sp diagnose.Split) diagnose.Column {
		return metricCol(sp.String()+"_acc", "acc", sp, diagnose.HigherIsBetter, true)
	}
	var pts []diagnose.Point
	for e := 1; e <= 30; e++ {
		train := 0.3 * math.Pow(1e-9, float64(e)/30) // down to 3e-10
		pts = append(pts, diagnose.Point{Epoch: e, EpochLogged: true, Rows: 1, Samples: []diagnose.Sample{
			sampleOf(acc(diagnose.SplitTrain), 1-train), sampleOf(acc(diagnose.SplitVal), 1-0.2-0.001*float64(e)),
		}})
	}
	m := newTestModel(t, 120, 40, Options{})
	m = settle(t, send(t, m, FeedMsg{Points: pts, Source: liveSource(31)}))
	md := m.Summary().Markdown()
	j := m.judgementAt(m.inspected())
	for _, c := range []struct {
		name  string
		num   diagnose.Num
		cell  string // the report's table row that holds it
		onGap bool
	}{
		{"train", j.Train.Smooth, "| train | ", false},
		{"val", j.Val.Smooth, "| val | ", false},
		{"variance", j.Variance, "| variance | ", true},
	} {
		screen := m.fmtValue(c.num.V)
		if c.onGap {
			screen = strings.TrimSuffix(m.fmtGap(c.num), " pp")
		}
		if strings.ContainsAny(screen, "e") {
			t.Errorf("%s: the screen writes %q in scientific notation", c.name, screen)
		}
		i := strings.Index(md, c.cell)
		if i < 0 {
			t.Fatalf("report has no row %q:\n%s", c.cell, md)
		}
		if row := md[i : i+strings.IndexByte(md[i:], '\n')]; !strings.Contains(row, screen) {
			t.Errorf("%s: the screen writes %q, the report's row is %q", c.name, screen, row)
		}
	}
	if got := m.fmtValue(j.Train.Smooth.V); got != "0.00%" {
		t.Errorf("a training error of %g reads %q on the screen, want 0.00%%", j.Train.Smooth.V, got)
	}
	if v := settle(t, m).View(); !strings.Contains(v, "train 0.00%") {
		t.Errorf("the verdict does not show train 0.00%%:\n%s", v)
	}
}

// TestLegend_FitsNarrowestPanel: a legend row of the decomposition, with
// the longest note, fits the narrowest side panel uncut.
func TestLegend_FitsNarrowestPanel(t *testing.T) {
	const longestNote = "no train-dev"
	if w := legendNoteX + ansiLen(longestNote); w > sideMin {
		t.Errorf("legend row needs %d columns, the side panel may have %d", w, sideMin)
	}
	if w := ansiLen("-12.5 pp"); w > legendValueW {
		t.Errorf("a gap of %d columns does not fit the value column of %d", w, legendValueW)
	}
}

// TestValuesLine_ShowsJudgedValues: the verdict's values are the smoothed
// ones the decomposition and actions are computed from, so the panel never
// shows two different "train" numbers; the logged value stands in only
// while no smoothed one exists.
func TestValuesLine_ShowsJudgedValues(t *testing.T) {
	m := New(Options{})
	j := diagnose.Judgement{
		Train: diagnose.Estimate{Raw: diagnose.Some(0.1), Smooth: diagnose.Some(0.12)},
		Val:   diagnose.Estimate{Raw: diagnose.Some(0.3)},
	}
	if got, want := m.valuesLine(j), "train 0.12 · val 0.3"; got != want {
		t.Errorf("valuesLine = %q, want %q", got, want)
	}
}
