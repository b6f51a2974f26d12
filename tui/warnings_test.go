package tui

import (
	"strings"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
)

// baselineRun is a run whose validation error sits at the majority-class
// baseline for 10 epochs (the judgement warns) and then falls far below
// it (the warning's condition ends).
func baselineRun() []diagnose.Point {
	acc := func(sp diagnose.Split) diagnose.Column {
		return metricCol(sp.String()+"_acc", "acc", sp, diagnose.HigherIsBetter, true)
	}
	var pts []diagnose.Point
	for e := 1; e <= 24; e++ {
		val := 0.35
		if e > 10 {
			val = 0.05
		}
		pts = append(pts, diagnose.Point{Epoch: e, EpochLogged: true, Rows: 1, Samples: []diagnose.Sample{
			sampleOf(acc(diagnose.SplitTrain), 1-val+0.01), sampleOf(acc(diagnose.SplitVal), 1-val),
		}})
	}
	return pts
}

// TestWarnings_LingerThenGo: a warning of the judgement stays for
// warnLinger epochs after its condition last held, saying which epoch
// that was, and is gone after.
func TestWarnings_LingerThenGo(t *testing.T) {
	cfg := diagnose.Config{BayesError: 0.01, BayesErrorGiven: true, BaselineError: diagnose.Some(0.30)}
	m := newTestModel(t, 120, 40, Options{Config: cfg})
	m = settle(t, send(t, m, FeedMsg{Points: baselineRun(), Source: liveSource(25)}))
	last := -1 // the last point whose own judgement warns
	for i := 0; i < judgedLen(m); i++ {
		for _, w := range m.judgementAt(i).Warnings {
			if strings.Contains(w, "baseline") {
				last = i
			}
		}
	}
	if last < 0 || last+warnLinger+1 >= judgedLen(m) {
		t.Fatalf("fixture: the baseline warning last holds at point %d of %d", last, judgedLen(m))
	}
	lastEpoch := m.judgementAt(last).Epoch
	for i := last + 1; i <= last+warnLinger+1; i++ {
		shown := false
		for _, w := range m.judgedWarnings(i, m.judgementAt(i)) {
			if strings.Contains(w, "baseline") {
				shown = true
				if !strings.HasSuffix(w, "(epoch "+itoa(lastEpoch)+")") {
					t.Errorf("point %d: the lingering warning does not say when it held: %q", i, w)
				}
			}
		}
		if want := i <= last+warnLinger; shown != want {
			t.Errorf("point %d (%d after the last): baseline warning shown %v, want %v", i, i-last, shown, want)
		}
	}
}

// TestWarnings_LayoutHoldsStill: epoch after epoch, whether a warning is
// shown or not, the chart keeps its height and the stacked layout's next
// action its row.
func TestWarnings_LayoutHoldsStill(t *testing.T) {
	cfg := diagnose.Config{BayesError: 0.01, BayesErrorGiven: true, BaselineError: diagnose.Some(0.30)}
	for _, size := range [][2]int{{80, 24}, {120, 40}} {
		m := newTestModel(t, size[0], size[1], Options{Config: cfg})
		row, lines := -1, -1
		for k, p := range baselineRun() {
			m = settle(t, send(t, m, FeedMsg{Points: []diagnose.Point{p}, Source: liveSource(k + 2)}))
			if k < 3 {
				continue // the first points have no verdict yet
			}
			v := strings.Split(m.View(), "\n")
			r := -1 // the chart's x axis, and in the stacked layout the next action after it
			for i, l := range v {
				if strings.Contains(l, "└") || strings.HasPrefix(l, "next:") {
					r = r*100 + i
				}
			}
			if row >= 0 && (r != row || len(v) != lines) {
				t.Errorf("%dx%d epoch %d: next at row %d of %d, before at %d of %d", size[0], size[1], p.Epoch, r, len(v), row, lines)
			}
			row, lines = r, len(v)
		}
	}
}

// TestWarnKey: one warning's key whatever its numbers.
func TestWarnKey(t *testing.T) {
	a := warnKey("validation error 21.3% is below training 22.0% (variance -0.7 points): common with dropout")
	b := warnKey("validation error 9.1% is below training 10.25% (variance -1.0 point): common with dropout")
	c := warnKey("training error 1.2% is below the optimal error 5.0%: the model fits noise")
	if a != b || a == c {
		t.Errorf("keys %q, %q, %q", a, b, c)
	}
}

// TestWarnings_WaitEndsWithTheWait: "waiting for late.csv" shows while the
// file is awaited and leaves the screen and the summary once it is read;
// other notices stay.
func TestWarnings_WaitEndsWithTheWait(t *testing.T) {
	m := newTestModel(t, 80, 24, Options{})
	m = settle(t, send(t, m, FeedMsg{
		Source:      SourceInfo{Name: "late.csv", State: Waiting},
		Notices:     []string{"cannot watch . (too many open files): checking every 1s"},
		WaitNotices: []string{"waiting for late.csv"},
	}))
	if v := m.View(); !strings.Contains(v, "waiting for late.csv") {
		t.Fatalf("the wait is not shown:\n%s", v)
	}
	m = settle(t, send(t, m, FeedMsg{Points: goldenRun.points()[:5], Source: liveSource(6)}))
	if w := strings.Join(m.Summary().Source.Warnings, "\n"); strings.Contains(w, "waiting for") || !strings.Contains(w, "checking every 1s") {
		t.Errorf("after the file arrived, the summary's warnings are %q", w)
	}
	if v := m.View(); strings.Contains(v, "waiting for late.csv") {
		t.Errorf("the stale wait is still on screen:\n%s", v)
	}
}
