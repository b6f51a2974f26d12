package chart

import (
	"math"
	"testing"
)

func TestSparkline_Row(t *testing.T) {
	tests := []struct {
		name string
		vals []float64
		w    int
		want string
	}{
		{"RightAligned", []float64{0, 7}, 4, "  ▁█"},
		{"Ramp", []float64{0, 1, 2, 3, 4, 5, 6, 7}, 8, "▁▂▃▄▅▆▇█"},
		// The library clamps negatives to 0: shifted by the minimum they keep their shape.
		{"NegativesKeepShape", []float64{-7, 0}, 2, "▁█"},
		{"AllNegative", []float64{-3, -2, -1}, 3, "▁▅█"},
		{"GapIsBlank", []float64{1, math.NaN(), 2}, 3, "▁ █"},
		{"FlatIsALine", []float64{3, math.NaN(), 3}, 3, "─ ─"},
		{"AllGaps", []float64{math.NaN(), math.Inf(1)}, 2, "  "},
		// The range is the window's: a spike that scrolled out no longer flattens the rest.
		{"KeepsNewest", []float64{0, 0, 9, 1}, 2, "█▁"},
		{"Huge", []float64{-math.MaxFloat64, math.MaxFloat64}, 2, "──"},
		{"ZeroWidth", []float64{1}, 0, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var s Sparkline
			got := s.Row(tt.vals, tt.w, nil)
			if string(got) != tt.want {
				t.Errorf("Row(%v, %d) = %q, want %q", tt.vals, tt.w, string(got), tt.want)
			}
		})
	}
}

// TestSparkline_ReusedModel draws a spike and then a window without it on
// one model: the second must not inherit the first's maximum.
func TestSparkline_ReusedModel(t *testing.T) {
	var s Sparkline
	first := s.Row([]float64{0, 100, 0, 1}, 4, nil)
	if string(first) != "▁█▁▁" {
		t.Fatalf("first window = %q", string(first))
	}
	model := s.model
	second := s.Row([]float64{0, 1, 0, 1}, 4, nil)
	if s.model != model {
		t.Errorf("a model of the right width was not reused")
	}
	if string(second) != "▁█▁█" {
		t.Errorf("second window = %q, want %q", string(second), "▁█▁█")
	}
	if third := s.Row([]float64{5, 6}, 3, nil); string(third) != " ▁█" {
		t.Errorf("after a resize = %q", string(third))
	}
}
