package tui

import (
	"strings"
	"testing"
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
		if strings.Contains(l, string(glyphCursor)) {
			t.Errorf("a live screen marks an inspected epoch: %q", l)
		}
	}
	m = press(t, m, "left", "left", "left", "left", "left")
	per := m.cache.lay.sparkCols // each of these rows is full
	for _, l := range rowsOf(m.View()) {
		if got := strings.Count(l, string(glyphCursor)); got != per {
			t.Errorf("inspecting: %d cursor lines in a row of %d sparklines: %q", got, per, l)
		}
	}
}
