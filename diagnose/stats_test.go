package diagnose

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"
)

// TestWilson checks the Wilson score interval against Newcombe (1998),
// Table I, as reproduced by statsmodels 0.13.5 (check values D1–D4), to the
// four decimals published, and the hand computation D10 at z = 1.96.
func TestWilson(t *testing.T) {
	tests := []struct {
		name   string
		x, n   float64
		z      float64
		lo, hi float64
		tol    float64
	}{
		{"D1_81of263", 81, 263, 1.959964, 0.2553, 0.3662, 5e-5},                        // Source: Newcombe 1998a Table I
		{"D2_15of148", 15, 148, 1.959964, 0.0624, 0.1605, 5e-5},                        // Source: Newcombe 1998a Table I
		{"D3_0of20", 0, 20, 1.959964, 0, 0.1611, 5e-5},                                 // Source: Newcombe 1998a Table I
		{"D4_1of29", 1, 29, 1.959964, 0.0061, 0.1718, 5e-5},                            // Source: Newcombe 1998a Table I
		{"D10ByHand", 81, 263, 1.96, 0.25529, 0.36621, 5e-6},                           // Source: hand computation, check values D10
		{"ZeroUpperIsZ2OverNPlusZ2", 0, 20, z95, 0, z95 * z95 / (20 + z95*z95), 1e-12}, // Source: closed form for x = 0
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			lo, hi := Wilson(tc.x, tc.n, tc.z)
			if math.Abs(lo-tc.lo) > tc.tol || math.Abs(hi-tc.hi) > tc.tol {
				t.Errorf("Wilson(%v/%v, z=%v) = %.5f–%.5f, want %.5f–%.5f", tc.x, tc.n, tc.z, lo, hi, tc.lo, tc.hi)
			}
		})
	}
	t.Run("RejectsBadInput", func(t *testing.T) {
		for _, in := range [][2]float64{{1, 0}, {-1, 10}, {11, 10}, {math.NaN(), 10}, {1, math.Inf(1)}} {
			if lo, hi := Wilson(in[0], in[1], z95); !math.IsNaN(lo) || !math.IsNaN(hi) {
				t.Errorf("Wilson(%v, %v) = %v, %v, want NaN", in[0], in[1], lo, hi)
			}
		}
	})
}

// TestTracker_WilsonInterval checks that a validation error of 81/263
// with --val-size 263 gets Newcombe's interval, and the gap its standard
// error √(p1(1−p1)/n1 + p2(1−p2)/n2) (check value D9: 150/1000 vs 120/1000
// gives 0.015268, statsmodels).
func TestTracker_WilsonInterval(t *testing.T) {
	t.Run("D1", func(t *testing.T) {
		j := judgeConstant(t, Config{ValSize: 263}, 0.2, absent, 81.0/263, absent)
		if math.Abs(j.ValLow.V-0.2553) > 5e-5 || math.Abs(j.ValHigh.V-0.3662) > 5e-5 {
			t.Errorf("interval %v–%v, want 0.2553–0.3662", j.ValLow, j.ValHigh)
		}
	})
	t.Run("D9GapSE", func(t *testing.T) {
		j := judgeConstant(t, Config{ValSize: 1000, TrainSize: 1000}, 0.12, absent, 0.15, absent)
		if math.Abs(j.GapSE.V-0.015268) > 5e-7 {
			t.Errorf("gap SE %v, want 0.015268", j.GapSE)
		}
	})
	t.Run("GapInsideUncertaintyIsNoProblem", func(t *testing.T) {
		// A 3-point gap measured on 100 validation examples: its SE is
		// √(0.04·0.96/100) = 2.0 points, 1.96·SE = 3.8 points, so it is
		// not called high variance; on 100 000 examples it is.
		j := judgeConstant(t, Config{ValSize: 100}, 0.01, absent, 0.04, absent)
		if j.Diagnosis != GoodFit {
			t.Errorf("got %v (SE %v), want good-fit: the gap is inside its uncertainty", j.Diagnosis, j.GapSE)
		}
		big := judgeConstant(t, Config{ValSize: 100000}, 0.01, absent, 0.04, absent)
		if big.Diagnosis != HighVariance {
			t.Errorf("with 100000 examples got %v, want high-variance", big.Diagnosis)
		}
	})
}

// TestTracker_DebiasedEMA checks the smoothed values against check value
// F1: β = 0.9, x = 10, 8, 6, 5 → 10, 8.947368, 7.859779, 7.028206
// (by hand; equal to pandas ewm(alpha=0.1, adjust=True)), the bias
// correction of Kingma & Ba (2015), §3.
func TestTracker_DebiasedEMA(t *testing.T) {
	want := []float64{10, 8.947368, 7.859779, 7.028206}
	tr := New(Config{Smoothing: 0.9})
	for i, x := range []float64{10, 8, 6, 5} {
		j := tr.Add(metricPoint(i+1, loss(SplitVal, x)))
		if got := j.Val.Smooth.V; math.Abs(got-want[i]) > 5e-7 {
			t.Errorf("t=%d: smoothed %v, want %v", i+1, got, want[i])
		}
	}
	t.Run("SeededVariantDiffers", func(t *testing.T) {
		// F2 (pandas adjust=False, seeded with x1) gives 9.8 at t = 2; the
		// debiased average must not.
		var e ema
		e.add(10, 0.9)
		e.add(8, 0.9)
		if math.Abs(e.value()-9.8) < 1e-3 {
			t.Errorf("debiased EMA equals the seeded variant: %v", e.value())
		}
	})
	t.Run("F3Debias", func(t *testing.T) {
		// Source: check value F3: β = 0.98, θ1 = 40: v1 = 0.8 and v1/(1−0.98) = 40.
		var e ema
		e.add(40, 0.98)
		if !near(e.s, 0.8, 1e-12) || !near(e.value(), 40, 1e-12) {
			t.Errorf("v1 = %v, debiased %v, want 0.8 and 40", e.s, e.value())
		}
	})
}

// TestSlope cross-checks the least-squares slope of the progress window
// against gonum's stat.LinearRegression on random windows.
func TestSlope(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	for k := range 200 {
		n := 2 + r.IntN(slopeWindow*2)
		x, y := make([]float64, n), make([]float64, n)
		base := float64(r.IntN(100000))
		for i := range x {
			x[i] = base - float64(i*(1+r.IntN(3))) // newest first, gaps allowed
			y[i] = r.NormFloat64()
		}
		_, want := stat.LinearRegression(x, y, nil, false)
		if got := slope(x, y); !near(got, want, 1e-9) {
			t.Fatalf("window %d: slope %v, gonum %v (x %v)", k, got, want, x)
		}
	}
	if !math.IsNaN(slope([]float64{1}, []float64{2})) || !math.IsNaN(slope([]float64{3, 3}, []float64{1, 2})) {
		t.Error("slope of one point or constant x is not NaN")
	}
}

// TestNoise checks the pseudo-residual noise estimate on white noise
// around a linear trend: averaged over many runs its square is σ²
// (unbiased by construction: Var ẽ = 1.5σ², derivation in stats.go).
func TestNoise(t *testing.T) {
	const sigma, runs = 0.01, 4000
	r := rand.New(rand.NewPCG(3, 4))
	sum := 0.0
	for range runs {
		var nz noise
		for i := range 40 {
			nz.add(0.5 - 0.003*float64(i) + sigma*r.NormFloat64())
		}
		s, ok := nz.sigma()
		if !ok {
			t.Fatal("no estimate after 40 values")
		}
		sum += s * s
	}
	if got := math.Sqrt(sum / runs); math.Abs(got-sigma)/sigma > 0.05 {
		t.Errorf("noise estimate %v, want %v within 5%%", got, sigma)
	}
}
