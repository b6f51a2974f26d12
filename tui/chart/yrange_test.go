package chart

import (
	"math"
	"testing"
)

func TestEarlyEpochs(t *testing.T) {
	tests := []struct{ n, want int }{
		{0, 0}, {1, 0}, {3, 0}, {4, 1}, {6, 1}, {7, 2}, {10, 3}, {36, 3}, {10000, 3},
	}
	for _, tt := range tests {
		if got := earlyEpochs(tt.n); got != tt.want {
			t.Errorf("earlyEpochs(%d) = %d, want %d", tt.n, got, tt.want)
		}
	}
}

func TestYRange_Limits(t *testing.T) {
	tests := []struct {
		name           string
		vals           []float64 // one series, a value per row
		lo, hi         float64
		clipped        bool
		cutAbove, cutB bool
	}{
		// The loss of a uniform guess over ten classes is −ln(1/10) = 2.3026
		// (cross-entropy at initialisation; from memory: CS231n notes,
		// "Neural Networks Part 3", sanity checks). The rest runs from 0.5 to
		// 0.2: span 0.3, so the top is 0.5 + 1.5 × 0.3 = 0.95.
		{"FirstEpochAtRandomGuess", []float64{2.3026, 0.9, 0.6, 0.5, 0.4, 0.35, 0.3, 0.25, 0.22, 0.2}, 0.2, 0.95, true, true, false},
		// An ordinary falling curve keeps its first epochs on the scale.
		{"OrdinaryDecay", []float64{0.48, 0.41, 0.36, 0.31, 0.28, 0.25, 0.23, 0.21, 0.2, 0.19}, 0.19, 0.48, false, false, false},
		// A late rise (divergence) is never cut: only leading epochs can be.
		{"LateRise", []float64{0.5, 0.4, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 5, 40}, 0.3, 40, false, false, false},
		// Too short a run to tell a warm-up: everything shows.
		{"ShortRun", []float64{9, 0.3, 0.2}, 0.2, 9, false, false, false},
		// A flat rest gets the room a flat chart gets: 0.1 × 0.3 at least 0.05.
		{"FlatRest", []float64{3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3}, 0.3, 0.3 + 1.5*0.05, true, true, false},
		// Early values far below the rest are cut too.
		{"FirstFarBelow", []float64{-10, 1, 1.1, 1.2, 1.1, 1.0, 1.2}, 1 - 1.5*0.2, 1.2, true, false, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var r YRange
			r.Reset(len(tt.vals))
			for i, v := range tt.vals {
				r.Add(i, v)
			}
			lo, hi := r.Limits()
			if math.Abs(lo-tt.lo) > 1e-9 || math.Abs(hi-tt.hi) > 1e-9 {
				t.Errorf("limits of %v = [%g, %g], want [%g, %g]", tt.vals, lo, hi, tt.lo, tt.hi)
			}
			if r.Clipped() != tt.clipped || r.cut != tt.cutAbove || r.cutLo != tt.cutB {
				t.Errorf("clipped %v (above %v, below %v), want %v (%v, %v)", r.Clipped(), r.cut, r.cutLo, tt.clipped, tt.cutAbove, tt.cutB)
			}
		})
	}
}

func TestYAxis(t *testing.T) {
	tests := []struct {
		name       string
		lo, hi     float64
		logY       bool
		ymin, ymax float64
	}{
		// 4% headroom of the span each way.
		{"Headroom", 0.2, 0.7, false, 0.18, 0.72},
		// Errors and losses are not negative: 0 stays the floor.
		{"FloorAtZero", 0.01, 0.51, false, 0, 0.53},
		{"NegativeValues", -1, 1, false, -1.08, 1.08},
		// A flat range: a tenth of the value each way, at least 0.05.
		{"FlatLarge", 2, 2, false, 1.8 - 0.016, 2.2 + 0.016},
		{"FlatSmall", 0.1, 0.1, false, 0.05 - 0.004, 0.15 + 0.004},
		// On a log axis a flat range gets half a decade each way, and the
		// floor does not apply (log10 of a value below 1 is negative).
		{"FlatLog", -1, -1, true, -1.54, -0.46},
		{"Log", -2, 0, true, -2.08, 0.08},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ymin, ymax := YAxis(tt.lo, tt.hi, tt.logY)
			if math.Abs(ymin-tt.ymin) > 1e-12 || math.Abs(ymax-tt.ymax) > 1e-12 {
				t.Errorf("YAxis(%g, %g, log %v) = [%g, %g], want [%g, %g]", tt.lo, tt.hi, tt.logY, ymin, ymax, tt.ymin, tt.ymax)
			}
		})
	}
}
