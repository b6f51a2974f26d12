package tui

import (
	"math"
	"testing"

	"github.com/fitgap/fitgap/diagnose"
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
