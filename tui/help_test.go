package tui

import (
	"strings"
	"testing"
)

// TestHelp_Pages: ? opens the keys, ? again the page that explains the
// screen, ? a third time closes; esc closes from either page; at every
// size, the text-only one below 60×16 included, the help opens.
func TestHelp_Pages(t *testing.T) {
	for _, size := range [][2]int{{100, 30}, {80, 24}, {60, 16}, {50, 14}, {40, 10}} {
		m := feed(t, newTestModel(t, size[0], size[1], Options{}), goldenRun)
		m = press(t, m, "?")
		if v := m.View(); !strings.Contains(v, "KEYS") || !strings.Contains(v, "pause/resume") {
			t.Errorf("%dx%d: ? shows no keys:\n%s", size[0], size[1], v)
		}
		m = press(t, m, "?")
		if v := m.View(); !strings.Contains(v, "THE SCREEN") {
			t.Errorf("%dx%d: ? ? does not explain the screen:\n%s", size[0], size[1], v)
		}
		// Scrolled to its end, the page shows its last line at every size.
		seen := m.View()
		for i := 0; i < 80; i++ {
			m = press(t, m, "down")
			seen += m.View()
		}
		for _, word := range []string{"GL", "warnings"} {
			if !strings.Contains(seen, word) {
				t.Errorf("%dx%d: scrolling the page never shows %q", size[0], size[1], word)
			}
		}
		if m = press(t, m, "?"); m.helpPage != helpClosed {
			t.Errorf("%dx%d: a third ? leaves page %d open", size[0], size[1], m.helpPage)
		}
		for _, keys := range [][]string{{"?", "esc"}, {"?", "?", "esc"}} {
			if mm := press(t, m, keys...); mm.helpPage != helpClosed || strings.Contains(mm.View(), "KEYS") {
				t.Errorf("%dx%d: %v leaves the help open", size[0], size[1], keys)
			}
		}
	}
}

// TestHelp_LegendExplainsTheScreen: every abbreviation and mark the
// screen's panels write has its line in the legend, and each line fits
// 80 columns.
func TestHelp_LegendExplainsTheScreen(t *testing.T) {
	var text strings.Builder
	for _, e := range screenLegend() {
		text.WriteString(e.mark + " " + e.meaning + "\n")
		if w := ansiLen(e.mark); w > legendMarkW {
			t.Errorf("mark %q is %d columns, the column %d", e.mark, w, legendMarkW)
		}
		if w := legendMarkW + 2 + ansiLen(e.meaning); w > 80 {
			t.Errorf("%q takes %d columns at 80", e.mark, w)
		}
	}
	for _, word := range []string{"GL", "PQ", "pp", "◂", "focus", "smoothed", "logged", "patience", "provisional",
		"░ opt", "▒ bias", "▓ var", "█ mismatch", "*", "│", "↑", "!", "⠤", "CONTINUE", "WATCH", "STOP", "= ", "~ forecast", "more"} {
		if !strings.Contains(text.String(), word) {
			t.Errorf("the legend does not explain %q", word)
		}
	}
}
