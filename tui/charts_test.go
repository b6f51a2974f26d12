package tui

import (
	"math"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/fitgap/fitgap/diagnose"
)

func TestLine_ConnectsEndpoints(t *testing.T) {
	tests := []struct {
		name           string
		x0, y0, x1, y1 int
	}{
		{"Flat", 0, 0, 9, 0},
		{"Steep", 0, 0, 2, 11},
		{"Backwards", 7, 5, -3, -1},
		{"Point", 4, 4, 4, 4},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var pts [][2]int
			line(tt.x0, tt.y0, tt.x1, tt.y1, func(x, y int) { pts = append(pts, [2]int{x, y}) })
			if pts[0] != [2]int{tt.x0, tt.y0} || pts[len(pts)-1] != [2]int{tt.x1, tt.y1} {
				t.Fatalf("line does not run from (%d,%d) to (%d,%d): %v", tt.x0, tt.y0, tt.x1, tt.y1, pts)
			}
			for i := 1; i < len(pts); i++ {
				dx, dy := absInt(pts[i][0]-pts[i-1][0]), absInt(pts[i][1]-pts[i-1][1])
				if dx > 1 || dy > 1 {
					t.Fatalf("gap between %v and %v", pts[i-1], pts[i])
				}
			}
			// Bresenham: one dot per step of the longer axis.
			if want := max(absInt(tt.x1-tt.x0), absInt(tt.y1-tt.y0)) + 1; len(pts) != want {
				t.Errorf("%d dots, want %d", len(pts), want)
			}
		})
	}
}

func TestSparkRow(t *testing.T) {
	tests := []struct {
		name string
		vals []float64
		w    int
		want string
	}{
		{"RightAligned", []float64{0, 7}, 4, "  ▁█"},
		{"Ramp", []float64{0, 1, 2, 3, 4, 5, 6, 7}, 8, "▁▂▃▄▅▆▇█"},
		{"NegativesKeepShape", []float64{-7, 0}, 2, "▁█"},
		{"GapIsBlank", []float64{1, math.NaN(), 2}, 3, "▁ █"},
		{"FlatIsMid", []float64{3, 3, 3}, 3, "▄▄▄"},
		{"KeepsNewest", []float64{0, 0, 9, 1}, 2, "█▁"},
		{"ZeroWidth", []float64{1}, 0, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := string(sparkRow(tt.vals, tt.w, nil)); got != tt.want {
				t.Errorf("sparkRow(%v, %d) = %q, want %q", tt.vals, tt.w, got, tt.want)
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
