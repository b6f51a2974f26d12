package figure

import (
	"math"
	"testing"

	"gonum.org/v1/plot"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
)

func TestNiceSteps(t *testing.T) {
	t.Parallel()
	// Source: Heckbert, "Nice numbers for graph labels", Graphics Gems
	// (1990): steps of 1, 2 and 5 times a power of ten.
	floors := []struct{ raw, want float64 }{
		{0.07, 0.05}, {0.052, 0.05}, {0.012, 0.01}, {0.02, 0.02}, {2.9, 2}, {5, 5}, {9.9, 5}, {1, 1},
		{1e-7, 1e-7}, {4.4e6, 2e6}, {0, 1}, {-1, 1}, {math.NaN(), 1}, {math.Inf(1), 1},
	}
	for _, tt := range floors {
		if got := niceFloor(tt.raw); math.Abs(got-tt.want) > 1e-12*tt.want {
			t.Errorf("niceFloor(%g) = %g, want %g", tt.raw, got, tt.want)
		}
	}
	for s, want := range map[float64]float64{0.01: 0.02, 0.02: 0.05, 0.05: 0.1, 1: 2, 5: 10, 1e5: 2e5, 0.001: 0.002} {
		if got := nextNice(s); math.Abs(got-want) > 1e-12*want {
			t.Errorf("nextNice(%g) = %g, want %g", s, got, want)
		}
	}
}

func labels(ts []plot.Tick) []string {
	var out []string
	for _, t := range ts {
		out = append(out, t.Label)
	}
	return out
}

func TestValueTicks(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		fraction bool
		lo, hi   float64
		want     []string
	}{
		{"ErrorRates", true, 0, 0.35, []string{"0.0%", "10.0%", "20.0%", "30.0%"}},
		{"FiveToThirty", true, 0.04, 0.30, []string{"5.0%", "10.0%", "15.0%", "20.0%", "25.0%", "30.0%"}},
		{"BelowOnePercent", true, 0.001, 0.009, []string{"0.20%", "0.40%", "0.60%", "0.80%"}},
		// A narrow range: 0.05% steps would print 5.2% twice (the report
		// writes one decimal from 1%), so the step grows to 0.1 points.
		{"NarrowRange", true, 0.0512, 0.0534, []string{"5.2%", "5.3%"}},
		{"Loss", false, 0.2, 2.4, []string{"0.5", "1", "1.5", "2"}},
		{"NegativeLoss", false, -1.2, 0.3, []string{"-1", "-0.5", "0"}},
		{"Empty", true, 1, 1, nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			ticks := valueTicks{fraction: tt.fraction}.Ticks(tt.lo, tt.hi)
			got := labels(ticks)
			if len(got) != len(tt.want) {
				t.Fatalf("labels %q, want %q", got, tt.want)
			}
			for i := range got {
				if got[i] != tt.want[i] {
					t.Errorf("labels %q, want %q", got, tt.want)
				}
				// One number format: each label is the report's.
				if v := report.Value(tt.fraction, diagnose.Some(ticks[i].Value)); v != got[i] {
					t.Errorf("tick %g labelled %q, the report writes %q", ticks[i].Value, got[i], v)
				}
			}
		})
	}
}

func TestEpochTicks(t *testing.T) {
	t.Parallel()
	tests := []struct {
		lo, hi float64
		want   []string
	}{
		{1, 100, []string{"20", "40", "60", "80", "100"}},
		{1, 3, []string{"1", "2", "3"}},
		{0, 1, []string{"0", "1"}},
		{1, 1_000_000, []string{"200000", "400000", "600000", "800000", "1000000"}},
	}
	for _, tt := range tests {
		got := labels(epochTicks{}.Ticks(tt.lo, tt.hi))
		if len(got) != len(tt.want) {
			t.Errorf("epochs %g–%g: labels %q, want %q", tt.lo, tt.hi, got, tt.want)
			continue
		}
		for i := range got {
			if got[i] != tt.want[i] {
				t.Errorf("epochs %g–%g: labels %q, want %q", tt.lo, tt.hi, got, tt.want)
				break
			}
		}
	}
}

// TestValueAxis: a first epoch at the loss of a uniform guess over ten
// classes, −ln(1/10) = 2.3026 (the cross-entropy of a random start; common
// practice), is left off a run that then falls to 0.3; an ordinary decay
// keeps its start; values that are not negative get no axis below 0.
func TestValueAxis(t *testing.T) {
	t.Parallel()
	axis := func(vs ...float64) (float64, float64) {
		s := line{&Line{Epochs: make([]int, len(vs)), Values: vs}}
		for i := range vs {
			s.l.Epochs[i] = i + 1
		}
		all, rest, _ := spans(s)
		return valueAxis(all, rest)
	}
	tests := []struct {
		name   string
		vs     []float64
		lo, hi float64
	}{
		// Ten points: the first three may be left off. The rest spans
		// 0.3–0.4, room 1.5 × 0.1 = 0.15 above it, then 4 % headroom.
		{"UniformGuessLeftOff", []float64{2.3026, 0.5, 0.45, 0.4, 0.38, 0.35, 0.33, 0.32, 0.31, 0.3}, 0.3 - 0.01, 0.55 + 0.01},
		// The rest spans 0.55–0.61: room 0.09 reaches 0.70, the first value.
		{"OrdinaryDecayKept", []float64{0.70, 0.66, 0.63, 0.61, 0.6, 0.59, 0.58, 0.57, 0.56, 0.55}, 0.55 - 0.15*0.04, 0.70 + 0.15*0.04},
		// Three points: too short to tell a start from the rest.
		{"ShortRunKeepsAll", []float64{2.3, 0.5, 0.4}, 0.4 - 1.9*0.04, 2.3 + 1.9*0.04},
		{"FloorAtZero", []float64{0.02, 0.01, 0}, 0, 0.02 + 0.02*0.04},
		{"Flat", []float64{0.2, 0.2, 0.2}, 0.2 - 0.05 - 0.1*0.04, 0.25 + 0.1*0.04},
		{"Negative", []float64{-3, -2, -1}, -3 - 0.08, -1 + 0.08},
		{"None", nil, 0, 1},
		{"Extremes", []float64{-1e308, 1e308}, -math.MaxFloat64/4 - math.MaxFloat64/2*0.04, math.MaxFloat64/4 + math.MaxFloat64/2*0.04},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			lo, hi := axis(tt.vs...)
			if math.Abs(lo-tt.lo) > 1e-9*math.Max(1, math.Abs(tt.lo)) || math.Abs(hi-tt.hi) > 1e-9*math.Max(1, math.Abs(tt.hi)) {
				t.Errorf("axis %g–%g, want %g–%g", lo, hi, tt.lo, tt.hi)
			}
		})
	}
}
