package tui

import (
	"math"
	"testing"

	"github.com/fitgap/fitgap/tui/chart"
)

// naiveMinMax is the reference for stepSeries.minMax: a plain scan.
func naiveMinMax(vals []float32, i, j int) (float64, float64, bool) {
	lo, hi, ok := math.Inf(1), math.Inf(-1), false
	for k := i; k < j; k++ {
		v := float64(vals[k])
		if isFinite(v) {
			lo, hi, ok = math.Min(lo, v), math.Max(hi, v), true
		}
	}
	return lo, hi, ok
}

// TestStepSeries_MinMaxMatchesScan checks the block summary against a
// plain scan on every range of a series that spans several blocks, with
// gaps and a rewind.
func TestStepSeries_MinMaxMatchesScan(t *testing.T) {
	var s stepSeries
	for k := 0; k < 3*stepBlock+17; k++ {
		v := math.Sin(float64(k) * 0.61)
		if k%29 == 5 {
			v = math.NaN()
		}
		s.add(int64(k*2), v)
	}
	// A resume from step 150 drops the later samples.
	s.add(150, 9)
	s.add(152, -9)
	if got := s.steps[len(s.steps)-1]; got != 152 {
		t.Fatalf("last step %d after rewind, want 152", got)
	}
	n := len(s.vals)
	for i := 0; i <= n; i++ {
		for j := i; j <= n; j++ {
			gl, gh, gok := s.minMax(i, j)
			wl, wh, wok := naiveMinMax(s.vals, i, j)
			if gok != wok || (gok && (gl != wl || gh != wh)) {
				t.Fatalf("minMax(%d,%d) = %v %v %v, want %v %v %v", i, j, gl, gh, gok, wl, wh, wok)
			}
		}
	}
}

func TestStepSeries_IndexRange(t *testing.T) {
	var s stepSeries
	for _, st := range []int64{10, 20, 30, 40} {
		s.add(st, 1)
	}
	tests := []struct {
		name   string
		lo, hi int64
		i, j   int
	}{
		{"All", 0, 100, 0, 4},
		{"HalfOpen", 20, 40, 1, 3},
		{"Empty", 21, 29, 2, 2},
		{"Before", -5, 5, 0, 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			i, j := s.indexRange(tt.lo, tt.hi)
			if i != tt.i || j != tt.j {
				t.Errorf("indexRange(%d,%d) = %d,%d, want %d,%d", tt.lo, tt.hi, i, j, tt.i, tt.j)
			}
		})
	}
}

func TestStepClock_Knots(t *testing.T) {
	var c stepClock
	// Epoch 1: steps 1..100; epoch 2: 101..200; epoch 3 in progress: 201..250.
	for st := int64(1); st <= 250; st++ {
		c.observe(int((st-1)/100)+1, st)
	}
	k := c.knots(nil)
	want := []chart.Point{{X: 0, Y: 0}, {X: 1, Y: 100}, {X: 2, Y: 200}, {X: 3, Y: 300}}
	if len(k) != len(want) {
		t.Fatalf("knots = %v, want %v", k, want)
	}
	for i := range want {
		if k[i] != want[i] {
			t.Errorf("knot %d = %v, want %v (the epoch in progress ends at the last epoch's pace)", i, k[i], want[i])
		}
	}
	// Step 250 is half-way through epoch 3.
	if x := epochAt(k, 250); math.Abs(x-2.5) > 1e-12 {
		t.Errorf("epochAt(250) = %v, want 2.5", x)
	}
	if s := stepAt(k, 1.5); math.Abs(s-150) > 1e-12 {
		t.Errorf("stepAt(1.5) = %v, want 150 (half-way through epoch 2)", s)
	}
	// A resume from epoch 2 drops epoch 3's end.
	c.observe(2, 120)
	if k := c.knots(nil); k[len(k)-1].X != 2 {
		t.Errorf("after a resume at epoch 2 the last knot is %v", k[len(k)-1])
	}
}
