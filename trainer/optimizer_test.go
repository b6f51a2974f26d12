package trainer

import (
	"math"
	"testing"
)

// Adam on f(θ) = θ², θ₀ = 1, α = 0.1, with the paper's β1, β2, ε.
// Source: Kingma & Ba 2015, Algorithm 1, worked by hand and
// checked with 40-digit decimal arithmetic:
//
//	t=1: g=2, m=0.2, v=0.004, m̂=2, v̂=4, θ = 1 − 0.1·2/(2+1e−8) = 0.9000000005
//	t=2: g=1.800000001, m=0.3600000001, v=0.0072360000036,
//	     m̂=m/0.19=1.8947368426, v̂=v/0.001999=3.6198099068,
//	     θ = 0.9000000005 − 0.1·m̂/(√v̂+ε) = 0.80041222869
//	t=3: g=1.6008244574, m̂=1.7862820879, v̂=3.2670669603, θ = 0.70158627295
func TestAdam_MatchesAlgorithmOne(t *testing.T) {
	want := []float64{
		0.9000000004999999975,
		0.8004122286917921452,
		0.7015862729460295452,
	}
	a := newAdam(1)
	theta := []float64{1}
	grad := []float64{0}
	for i, w := range want {
		grad[0] = 2 * theta[0]
		a.step(theta, grad, 0.1)
		if math.Abs(theta[0]-w) > 1e-15 {
			t.Errorf("after step %d θ = %.18f, want %.18f", i+1, theta[0], w)
		}
	}
}

// The defaults are the paper's (Kingma & Ba 2015, Algorithm 1).
func TestAdam_Defaults(t *testing.T) {
	a := newAdam(1)
	if a.beta1 != 0.9 || a.beta2 != 0.999 || a.eps != 1e-8 {
		t.Errorf("β1, β2, ε = %v, %v, %v; want 0.9, 0.999, 1e-8", a.beta1, a.beta2, a.eps)
	}
}

// Thanks to the bias correction the first step has magnitude α whatever
// the scale of the gradient (Kingma & Ba 2015 §2.1, "the effective step
// taken ... |Δt| ≲ α"; from memory): m̂₁ = g and √v̂₁ = |g|, so the step
// is α·|g|/(|g|+ε), within ε/|g| of α.
func TestAdam_FirstStepIsLearningRate(t *testing.T) {
	const alpha = 0.01
	for _, g := range []float64{1e-3, 1, 1e3, -50} {
		a := newAdam(1)
		theta := []float64{0}
		a.step(theta, []float64{g}, alpha)
		want := -math.Copysign(alpha*math.Abs(g)/(math.Abs(g)+adamEpsilon), g)
		if math.Abs(theta[0]-want) > 1e-15 {
			t.Errorf("gradient %v: first step %.17g, want %.17g", g, theta[0], want)
		}
	}
}

// Heavy-ball momentum on f(θ) = θ², θ₀ = 1, lr = 0.1, μ = 0.9, worked by
// hand from v ← μv − lr·g, θ ← θ + v (Goodfellow et al. 2016, Algorithm
// 8.2; from memory): g=2 → v=−0.2, θ=0.8; g=1.6 → v=−0.34, θ=0.46;
// g=0.92 → v=−0.398, θ=0.062.
func TestMomentumSGD_HandWorked(t *testing.T) {
	s := newMomentumSGD(1, 0.9)
	theta := []float64{1}
	for i, w := range []float64{0.8, 0.46, 0.062} {
		s.step(theta, []float64{2 * theta[0]}, 0.1)
		if math.Abs(theta[0]-w) > 1e-12 {
			t.Errorf("after step %d θ = %v, want %v", i+1, theta[0], w)
		}
	}
}

func TestSchedule_At(t *testing.T) {
	tests := []struct {
		name  string
		s     schedule
		epoch int
		want  float64
	}{
		{"Constant", schedule{base: 0.01}, 7, 0.01},
		{"WarmupFirst", schedule{base: 2, warmup: 10}, 1, 0.2},
		{"WarmupEnd", schedule{base: 2, warmup: 10}, 10, 2},
		{"AfterWarmup", schedule{base: 2, warmup: 10}, 50, 2},
		// Half a cosine: full rate at the start, floor·base at the end,
		// the mean of the two half way (cos(π/2) = 0).
		{"CosineStart", schedule{base: 1, cosine: true, floor: 0.1}, 1, 1},
		{"CosineMiddle", schedule{base: 1, cosine: true, floor: 0.1}, 51, 0.55},
		{"CosineEnd", schedule{base: 1, cosine: true, floor: 0.1}, 101, 0.1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if got := tc.s.at(tc.epoch, 101); math.Abs(got-tc.want) > 1e-12 {
				t.Errorf("at(%d, 101) = %v, want %v", tc.epoch, got, tc.want)
			}
		})
	}
}
