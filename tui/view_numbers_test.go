package tui

import (
	"math"
	"testing"
)

// TestFormatPoints: differences of rates are printed in percentage points
// with the report's precision (one decimal, two below one point) and no
// negative zero.
func TestFormatPoints(t *testing.T) {
	tests := []struct {
		name string
		v    float64
		want string
	}{
		{"Zero", 0, "0.0"},
		{"OneDecimal", 0.215, "21.5"},
		{"Negative", -0.0498, "-5.0"},
		{"BelowOnePoint", -0.00226, "-0.23"},
		{"RoundsToZero", -0.00001, "0.00"},
		{"WholeRange", 1, "100.0"},
		{"NaN", math.NaN(), "NaN"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := formatPoints(tt.v); got != tt.want {
				t.Errorf("formatPoints(%v) = %q, want %q", tt.v, got, tt.want)
			}
		})
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
