package tui

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/charmbracelet/x/ansi"

	"github.com/fitgap/fitgap/diagnose"
)

// golden compares got with testdata/name.golden, or rewrites the file
// under -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", name+".golden")
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("read golden (run go test ./tui -update to create it): %v", err)
	}
	if got != string(want) {
		t.Errorf("screen differs from %s (go test ./tui -update rewrites it)\n--- got\n%s\n--- want\n%s", path, got, want)
	}
}

// checkFits asserts that a screen has at most h lines of at most w columns.
func checkFits(t *testing.T, view string, w, h int) {
	t.Helper()
	if view == "" {
		return
	}
	lines := strings.Split(view, "\n")
	if len(lines) > h {
		t.Errorf("%dx%d: view has %d lines", w, h, len(lines))
	}
	for i, l := range lines {
		if n := ansi.StringWidth(l); n > w {
			t.Errorf("%dx%d: line %d is %d columns: %q", w, h, i, n, l)
		}
	}
}

var goldenRun = runSpec{epochs: 36, total: 60, stepsPer: 25, turn: 18, trainBase: 0.06, valBase: 0.11}

// forecastRun is still improving 30 epochs into a run of 80: its
// validation curve is forecast to the end.
var forecastRun = runSpec{epochs: 30, total: 80, trainBase: 0.04, valBase: 0.09}

func TestView_Golden(t *testing.T) {
	tests := []struct {
		name    string
		w, h    int
		run     runSpec
		keys    []string
		noColor bool // NoColor as well as the Ascii profile of TestMain
		spike   bool // the first epoch at a uniform guess (spikeRun)
	}{
		{"stacked_80x24", 80, 24, goldenRun, nil, false, false},
		{"wide_120x40", 120, 40, runSpec{epochs: 36, total: 60, stepsPer: 25, turn: 18, trainBase: 0.06, valBase: 0.11, trainDev: true}, nil, false, false},
		{"compact_50x14", 50, 14, goldenRun, nil, false, false},
		{"inspect_120x40", 120, 40, goldenRun, []string{"left", "left", "left", "left", "left", "left", "left", "left", "left", "left"}, false, false},
		{"help_100x30", 100, 30, goldenRun, []string{"?"}, false, false},
		// The second help page: the screen explained, one line each.
		{"screen_help_80x24", 80, 24, goldenRun, []string{"?", "?"}, false, false},
		// Below 60×16 the help still opens, over the whole text view.
		{"compact_help_50x14", 50, 14, goldenRun, []string{"?"}, false, false},
		// At 60 columns lines drop whole parts, never a number cut in two.
		{"stacked_60x20", 60, 20, goldenRun, nil, false, false},
		{"waiting_80x24", 80, 24, runSpec{}, nil, false, false},
		// Without colour: the first epoch off the scale (arrow and value),
		// the inspected epoch as a line on the chart and in every sparkline.
		{"nocolor_offscale_inspect_80x24", 80, 24, goldenRun, []string{"left", "left", "left", "left", "left", "left"}, true, true},
		// The forecast: a band and its expected curve to the run's last
		// epoch; as of an inspected epoch (overlapping what came after);
		// hidden by f. The goldenRun screens above show a refusal (the
		// curve has turned).
		{"forecast_80x24", 80, 24, forecastRun, nil, false, false},
		{"forecast_120x40", 120, 40, forecastRun, nil, false, false},
		{"forecast_inspect_120x40", 120, 40, forecastRun, []string{"left", "left", "left", "left", "left", "left", "left", "left", "left", "left"}, true, false},
		{"forecast_off_80x24", 80, 24, forecastRun, []string{"f"}, false, false},
		// Validation below training (augmentation or dropout at training
		// time, an easier validation split): the variance part is negative,
		// drawn as none in the bar, its number kept with its sign, and the
		// total adds up to the training value.
		{"negvariance_80x24", 80, 24, runSpec{epochs: 20, total: 60, trainBase: 0.10, valBase: 0.07}, nil, false, false},
		{"negvariance_120x40", 120, 40, runSpec{epochs: 20, total: 60, trainBase: 0.10, valBase: 0.07}, nil, false, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			m := newTestModel(t, tt.w, tt.h, Options{NoColor: tt.noColor})
			switch {
			case tt.spike:
				m = spikeRun(t, m)
			case tt.run.epochs > 0:
				m = feed(t, m, tt.run)
			default:
				m = settle(t, send(t, m, FeedMsg{Source: SourceInfo{Name: "runs/next.csv", State: Waiting}}))
			}
			m = press(t, m, tt.keys...)
			v := m.View()
			checkFits(t, v, tt.w, tt.h)
			golden(t, tt.name, v)
		})
	}
}

// TestView_EverySize resizes through many sizes, tiny ones included: the
// screen must never panic nor draw outside the terminal.
func TestView_EverySize(t *testing.T) {
	m := newTestModel(t, 80, 24, Options{})
	m = feed(t, m, runSpec{epochs: 40, total: 50, stepsPer: 10, turn: 20, trainBase: 0.05, valBase: 0.1, trainDev: true})
	sizes := [][2]int{{0, 0}, {1, 1}, {0, 10}, {10, 0}, {2, 2}, {5, 3}, {20, 5}, {59, 15}, {60, 16}, {61, 17},
		{79, 23}, {80, 24}, {99, 19}, {100, 20}, {101, 21}, {150, 45}, {200, 60}, {300, 100}}
	for w := 1; w <= 130; w += 7 {
		for h := 1; h <= 50; h += 5 {
			sizes = append(sizes, [2]int{w, h})
		}
	}
	for _, s := range sizes {
		m = send(t, m, tea_WindowSize(s[0], s[1]))
		checkFits(t, m.View(), s[0], s[1])
		// Keys at every size too.
		m = press(t, m, "left", "?")
		checkFits(t, m.View(), s[0], s[1])
		m = press(t, m, "?", "space")
	}
}

func TestView_HostileColumnName(t *testing.T) {
	m := newTestModel(t, 120, 40, Options{})
	pts := goldenRun.points()
	evil := "lr\x1b]0;pwned\x07\x1b[2J\x1b[31m\u202e"
	for i := range pts {
		pts[i].Samples = append(pts[i].Samples, sampleOf(otherCol(evil), 0.01))
	}
	m = send(t, m, FeedMsg{Points: pts, Source: SourceInfo{
		Name: "run\x1b[1;1H.csv", Format: "csv", State: Live, Skipped: 1,
		Examples: []string{"line 3: \x1b[31mbad\x1b[0m"},
	}, Notices: []string{"file truncated\x1b[?1049l"}})
	m = settle(t, m)
	v := m.View()
	if strings.ContainsAny(v, "\x1b\x07\u202e") {
		t.Fatalf("hostile text reached the screen: %q", v)
	}
	for _, want := range []string{"lr", "run.csv", "line 3: bad", "file truncated"} {
		if !strings.Contains(v, want) {
			t.Errorf("screen lacks the sanitized %q", want)
		}
	}
}

func TestStatus_LongNameKeepsState(t *testing.T) {
	long := "/tmp/fitgap-demo-2114978045/a-rather-long-directory/train-overfit.csv"
	for _, w := range []int{30, 50, 80, 100} {
		t.Run(itoa(w), func(t *testing.T) {
			m := newTestModel(t, w, 24, Options{})
			src := liveSource(37)
			src.Name = long
			m = send(t, m, FeedMsg{Points: goldenRun.points(), Source: src})
			m = settle(t, press(t, m, "space"))
			status := strings.SplitN(m.View(), "\n", 2)[0]
			if !strings.Contains(status, "live") || !strings.Contains(status, "PAUSED") {
				t.Errorf("width %d: status lost the state or the badge: %q", w, status)
			}
			if !strings.Contains(status, "overfit") && w >= 50 {
				t.Errorf("width %d: status lost the file name: %q", w, status)
			}
		})
	}
}

func TestErrorBar(t *testing.T) {
	m := newTestModel(t, 80, 24, Options{})
	j := diagnose.Judgement{
		BayesError: 0.05, BayesErrorGiven: true,
		AvoidableBias: diagnose.Some(0.10), Variance: diagnose.Some(0.25), DataMismatch: diagnose.Some(-0.02),
	}
	comps := components(j)
	for _, w := range []int{1, 2, 3, 7, 20, 40} {
		bar := m.errorBar(comps, w)
		if n := utf8.RuneCountInString(bar); n != w {
			t.Errorf("width %d: bar has %d cells: %q", w, n, bar)
		}
		if w >= 3 && strings.ContainsRune(bar, glyphMismatch) {
			t.Errorf("width %d: a negative part took room: %q", w, bar)
		}
		if w >= 3 && !(strings.ContainsRune(bar, glyphOptimal) && strings.ContainsRune(bar, glyphBias) && strings.ContainsRune(bar, glyphVariance)) {
			t.Errorf("width %d: a positive part vanished: %q", w, bar)
		}
	}
	// 0.05 : 0.10 : 0.25 of 40 cells is 5 : 10 : 25.
	bar := m.errorBar(comps, 40)
	for g, want := range map[rune]int{glyphOptimal: 5, glyphBias: 10, glyphVariance: 25} {
		if got := strings.Count(bar, string(g)); got != want {
			t.Errorf("%c: %d cells, want %d", g, got, want)
		}
	}
	if empty := m.errorBar(components(diagnose.Judgement{}), 5); empty != "·····" {
		t.Errorf("no parts: %q", empty)
	}
}

// TestStatus_PathShortensFirst: a long path gives way first, down to its
// file name, before the percent and the time left; the progress bar takes
// room left over (at 80 columns with a demo's path in a temporary
// directory, everything else stays).
func TestStatus_PathShortensFirst(t *testing.T) {
	long := "/tmp/fitgap-demo-2982065161/train-overfit.csv"
	tests := []struct {
		w    int
		want []string
		not  []string
	}{
		{80, []string{"…/train-overfit.csv", "epoch 36/60", "60%", "eta 12m", "live"}, []string{"/tmp/"}},
		{130, []string{long, "60%", "eta 12m", "━━━━━━━─────"}, nil},
		{50, []string{"train-overfit.csv", "live"}, nil},
	}
	for _, tt := range tests {
		t.Run(itoa(tt.w), func(t *testing.T) {
			m := newTestModel(t, tt.w, 24, Options{})
			src := liveSource(37)
			src.Name = long
			m = settle(t, send(t, m, FeedMsg{Points: goldenRun.points(), Source: src}))
			status := strings.SplitN(m.View(), "\n", 2)[0]
			for _, w := range tt.want {
				if !strings.Contains(status, w) {
					t.Errorf("width %d: status %q lacks %q", tt.w, status, w)
				}
			}
			for _, w := range tt.not {
				if strings.Contains(status, w) {
					t.Errorf("width %d: status %q has %q", tt.w, status, w)
				}
			}
		})
	}
}
