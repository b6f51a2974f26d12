package tui

import (
	"math"
	"testing"
)

func TestNiceStep(t *testing.T) {
	// Source: Heckbert (1990), "Nice numbers for graph labels": steps are
	// 1, 2 or 5 times a power of ten (worked by hand for these spans).
	tests := []struct {
		name string
		span float64
		n    int
		want float64
	}{
		{"Unit", 1, 5, 0.2},
		{"Tenth", 0.37, 4, 0.1},
		{"Hundreds", 730, 5, 100},
		{"Fives", 0.023, 5, 0.005},
		{"Zero", 0, 5, 1},
		{"NaN", math.NaN(), 5, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := niceStep(tt.span, tt.n); math.Abs(got-tt.want) > 1e-12 {
				t.Errorf("niceStep(%v, %d) = %v, want %v", tt.span, tt.n, got, tt.want)
			}
		})
	}
}

func TestFormatNum(t *testing.T) {
	tests := []struct {
		name   string
		v      float64
		digits int
		want   string
	}{
		{"Zero", 0, 4, "0"},
		{"Fraction", 0.18349, 4, "0.1835"},
		{"TrailingZeros", 0.5, 4, "0.5"},
		{"Large", 1234.6, 4, "1235"},
		{"Tiny", 0.00003, 3, "3.0e-5"},
		{"Huge", 2.5e7, 3, "2.5e7"},
		{"Negative", -0.0123, 3, "-0.0123"},
		{"NaN", math.NaN(), 3, "NaN"},
		{"Inf", math.Inf(1), 3, "+Inf"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := formatNum(tt.v, tt.digits); got != tt.want {
				t.Errorf("formatNum(%v, %d) = %q, want %q", tt.v, tt.digits, got, tt.want)
			}
		})
	}
}

func TestTicks_SnapToGrid(t *testing.T) {
	vals, step := ticks(0.1, 0.7, 6)
	if step != 0.1 {
		t.Fatalf("step = %v, want 0.1", step)
	}
	for _, v := range vals {
		if got := formatTick(v, step); len(got) > 3 {
			t.Errorf("tick %v prints as %q: not snapped to the grid", v, got)
		}
	}
}
