package chart

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
			if got := FormatNum(tt.v, tt.digits); got != tt.want {
				t.Errorf("FormatNum(%v, %d) = %q, want %q", tt.v, tt.digits, got, tt.want)
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

func TestLogTicks(t *testing.T) {
	// Marks of a logarithmic scale: powers of ten, or 1, 2, 5 per decade on
	// a short axis (common practice, as on log graph paper).
	tests := []struct {
		name   string
		lo, hi float64 // data values; the axis is their log10
		scale  float64
		want   []string
	}{
		{"ThreeDecades", 0.0005, 0.9, 1, []string{"0.001", "0.01", "0.1"}},
		{"JustOverADecade", 0.025, 0.37, 100, []string{"5", "10", "20"}},
		{"TwoDecadesLoss", 0.04, 3, 1, []string{"0.05", "0.1", "0.2", "0.5", "1", "2"}},
		{"UnderADecade", 0.12, 0.19, 1, []string{"0.12", "0.13", "0.14", "0.15", "0.16", "0.17", "0.18", "0.19"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, got := logTicks(math.Log10(tt.lo), math.Log10(tt.hi), 6, tt.scale)
			if len(got) != len(tt.want) {
				t.Fatalf("logTicks(%g, %g) labels %q, want %q", tt.lo, tt.hi, got, tt.want)
			}
			for i := range got {
				if got[i] != tt.want[i] {
					t.Fatalf("logTicks(%g, %g) labels %q, want %q", tt.lo, tt.hi, got, tt.want)
				}
			}
		})
	}
}

func TestTicks_NoNegativeZero(t *testing.T) {
	vals, step := ticks(-0.0004, 0.36, 6)
	for _, v := range vals {
		if l := formatTick(v*100, step*100); l == "-0" || l == "-0.0" {
			t.Errorf("tick %v prints as %q", v, l)
		}
	}
}

func TestFormatFit(t *testing.T) {
	tests := []struct {
		v    float64
		w    int
		want string
	}{
		{0.0003061, 8, "0.000306"},
		{0.04783, 8, "0.04783"},
		{29.01, 8, "29.01"},
		{-0.000123456, 8, "-1.23e-4"},
		{123456.7, 8, "123457"}, {-0.00001234, 7, "-1.2e-5"},
		{math.NaN(), 8, "NaN"},
	}
	for _, tt := range tests {
		if got := FormatFit(tt.v, tt.w); got != tt.want || len(got) > tt.w {
			t.Errorf("FormatFit(%v, %d) = %q, want %q", tt.v, tt.w, got, tt.want)
		}
	}
}
