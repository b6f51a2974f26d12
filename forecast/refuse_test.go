package forecast

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// noisy returns f(epoch) plus normal noise of standard deviation sd for
// epochs 1..n.
func noisy(n int, sd float64, seed uint64, f func(x float64) float64) []float64 {
	r := rand.New(rand.NewPCG(seed, 1))
	v := make([]float64, n)
	for i := range v {
		v[i] = f(float64(i+1)) + sd*r.NormFloat64()
	}
	return v
}

func powerCurve(x float64) float64 { return 0.08 + 0.5*math.Pow(x, -0.7) }

// uShape falls like powerCurve, then rises by 0.0015 per epoch after
// epoch 25: an overfitting validation error.
func uShape(x float64) float64 { return powerCurve(x) + 0.0015*math.Max(0, x-25) }

func TestEpochs_Refusals(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name   string
		curve  Curve
		status Status
		reason string // a piece of the reason
	}{
		{
			name:   "NoEpochs",
			curve:  Curve{Fraction: true},
			status: TooFew, reason: "no epochs yet",
		},
		{
			name:   "TooFewEpochs",
			curve:  Curve{Values: noisy(5, 0.003, 1, powerCurve), Fraction: true},
			status: TooFew, reason: "5 epochs so far, need 8",
		},
		{
			name:   "TurnedUpward",
			curve:  Curve{Values: noisy(50, 0.003, 2, uShape), Fraction: true},
			status: Turned, reason: "the curve has turned",
		},
		{
			name:   "LatestNaN",
			curve:  Curve{Values: append(noisy(20, 0.003, 3, powerCurve), nan), Fraction: true},
			status: Diverging, reason: "NaN at epoch 21",
		},
		{
			name:   "LatestInf",
			curve:  Curve{Values: append(noisy(20, 0.003, 3, powerCurve), math.Inf(1))},
			status: Diverging, reason: "+Inf at epoch 21",
		},
		{
			name: "FewSinceLRStep",
			curve: Curve{
				Values: append(noisy(30, 0.003, 4, powerCurve), noisy(5, 0.003, 5, func(x float64) float64 { return 0.05 })...),
				LR:     steps(35, 30, 0.1, 0.01), Fraction: true,
			},
			status: TooFew, reason: "5 epochs since the learning-rate step at epoch 31, need 8",
		},
		{
			name:   "LRRangeTest",
			curve:  Curve{Values: noisy(30, 0.003, 6, powerCurve), LR: rising(30, 1e-4, 1.2), Fraction: true},
			status: LRRising, reason: "the learning rate is rising, ×2.99 over the last 6 epochs", // 1.2⁶, 30/5 = 6
		},
		{
			name:   "InWarmup",
			curve:  Curve{Values: noisy(12, 0.003, 6, powerCurve), LR: warmupRates(12, 20), Fraction: true},
			status: LRRising, reason: "the learning rate is rising",
		},
		{
			name:   "EpochsAndValuesDiffer",
			curve:  Curve{Epochs: []int{1, 2, 3}, Values: []float64{1, 2}},
			status: BadInput, reason: "3 epochs but 2 values",
		},
		{
			name:   "LRAndValuesDiffer",
			curve:  Curve{Values: []float64{1, 2}, LR: []float64{1}},
			status: BadInput, reason: "1 learning rates but 2 values",
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f := Epochs(tt.curve, Options{})
			if f.Status != tt.status || !strings.Contains(f.Reason, tt.reason) {
				t.Errorf("got %v %q, want %v containing %q", f.Status, f.Reason, tt.status, tt.reason)
			}
			if f.Phrase() != f.Reason {
				t.Errorf("phrase %q, want the reason", f.Phrase())
			}
			if f.At != (Interval{}) || f.Families != nil {
				t.Errorf("a refusal carries numbers: %+v", f)
			}
			if _, ok := f.Band(100); ok {
				t.Error("a refusal draws a band")
			}
			if !math.IsNaN(f.Chance(0.1)) || !f.CanReach(0) {
				t.Error("a refusal has a chance, or rules a run out")
			}
		})
	}
}

// rising is a learning rate that grows by factor every epoch from lr0 (a
// range test).
func rising(n int, lr0, factor float64) []float64 {
	lr := make([]float64, n)
	for i := range lr {
		lr[i] = lr0 * math.Pow(factor, float64(i))
	}
	return lr
}

// warmupRates rises linearly over the first warm epochs, then holds.
func warmupRates(n, warm int) []float64 {
	lr := make([]float64, n)
	for i := range lr {
		lr[i] = 0.1 * math.Min(1, float64(i+1)/float64(warm))
	}
	return lr
}

// steps is a learning rate of hi for the first `at` epochs and lo after.
func steps(n, at int, hi, lo float64) []float64 {
	lr := make([]float64, n)
	for i := range lr {
		lr[i] = hi
		if i >= at {
			lr[i] = lo
		}
	}
	return lr
}

// TestEpochs_TurnReported checks that a turned curve reports where it was
// best and where it is now.
func TestEpochs_TurnReported(t *testing.T) {
	f := Epochs(Curve{Values: noisy(60, 0.002, 7, uShape), Fraction: true}, Options{})
	if f.Status != Turned || f.Turn == nil {
		t.Fatalf("status %v, turn %v", f.Status, f.Turn)
	}
	if f.Turn.BestEpoch < 15 || f.Turn.BestEpoch > 40 {
		t.Errorf("best epoch %d, want near 25", f.Turn.BestEpoch)
	}
	// The last window (7 points) sits near epoch 57: uShape(57) −
	// uShape(25) = 0.025.
	if rise := f.Turn.Now - f.Turn.Best; rise < 0.02 || rise > 0.035 {
		t.Errorf("rise %.4f, want about 0.025", rise)
	}
}

// TestEpochs_NoTurnOnNoise: a flat noisy plateau is not a turn, at any
// length (the threshold grows with the number of windows compared).
func TestEpochs_NoTurnOnNoise(t *testing.T) {
	for seed := uint64(1); seed <= 40; seed++ {
		for _, n := range []int{20, 80, 300} {
			c := Curve{Values: noisy(n, 0.01, seed, func(float64) float64 { return 0.2 }), Fraction: true}
			if f := Epochs(c, Options{}); f.Status == Turned {
				t.Errorf("seed %d, %d epochs of noise: %s", seed, n, f.Reason)
			}
		}
	}
}

func TestBreakPoint(t *testing.T) {
	cosine := make([]float64, 100)
	for i := range cosine {
		cosine[i] = 0.001 * 0.5 * (1 + math.Cos(math.Pi*float64(i)/99)) // to 0 at the end
	}
	linear := make([]float64, 100)
	for i := range linear {
		linear[i] = 0.01 * (1 - float64(i)/100)
	}
	warmup := make([]float64, 40)
	for i := range warmup {
		warmup[i] = 0.1 * math.Min(1, float64(i+1)/5)
	}
	midEpoch := steps(60, 30, 0.1, 0.01)
	midEpoch[30] = 0.055 // the drop came in the middle of epoch 31: its mean rate
	restart := steps(60, 30, 0.1, 0.01)
	for i := 30; i < 60; i++ { // a warm restart back up at epoch 31
		restart[i] = 0.1
		restart[i-30] = 0.1 * math.Pow(0.9, float64(i-30))
	}
	tests := []struct {
		name  string
		lr    []float64
		want  int
		cause BreakCause
	}{
		{"Constant", steps(50, 50, 0.1, 0.1), 0, NoBreak},
		{"StepDecay", steps(60, 30, 0.1, 0.01), 30, BreakLR},
		{"ReduceByHalf", steps(60, 40, 0.1, 0.05), 40, BreakLR},
		{"DropWithinAnEpoch", midEpoch, 31, BreakLR},
		{"CosineToZero", cosine, 0, NoBreak},
		{"LinearToZero", linear, 0, NoBreak},
		{"Warmup", warmup, 2, BreakLR},
		{"WarmRestart", restart, 30, BreakLR},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			n := len(tt.lr)
			epochs := make([]int, n)
			for i := range epochs {
				epochs[i] = i + 1
			}
			v := noisy(n, 0.002, 1, powerCurve)
			got, cause := breakPoint(epochs, v, tt.lr)
			if got != tt.want || cause != tt.cause {
				t.Errorf("break at index %d (%v), want %d (%v)", got, cause, tt.want, tt.cause)
			}
		})
	}
}

// TestBreakPoint_Curve checks the step found in the curve itself when no
// learning rate is logged, and that ordinary curves have none.
func TestBreakPoint_Curve(t *testing.T) {
	epochs := make([]int, 80)
	for i := range epochs {
		epochs[i] = i + 1
	}
	// Plateau at 0.2 until epoch 40, then a drop to a new curve.
	stepped := noisy(80, 0.004, 3, func(x float64) float64 {
		if x <= 40 {
			return 0.08 + 0.12*math.Exp(-x/5) + 0.12
		}
		return 0.08 + 0.1*math.Exp(-(x-40)/4)
	})
	if got, cause := breakPoint(epochs, stepped, nil); got != 40 || cause != BreakCurve {
		t.Errorf("stepped curve: break at %d (%v), want 40 (curve-step)", got, cause)
	}
	for seed := uint64(1); seed <= 30; seed++ {
		for _, f := range []func(float64) float64{powerCurve, func(x float64) float64 { return 0.1 + 0.6*math.Exp(-x/3) }} {
			v := noisy(80, 0.004, seed, f)
			if got, cause := breakPoint(epochs, v, nil); cause != NoBreak {
				t.Errorf("seed %d: a smooth curve broke at %d (%v)", seed, got, cause)
			}
		}
	}
	// Restart and non-finite values.
	resumed := []int{1, 2, 3, 4, 5, 3, 4, 5, 6, 7}
	if got, cause := breakPoint(resumed, make([]float64, 10), nil); got != 5 || cause != BreakRestart {
		t.Errorf("resumed run: %d (%v), want 5 (restart)", got, cause)
	}
	withNaN := noisy(30, 0.002, 1, powerCurve)
	withNaN[12] = math.NaN()
	if got, cause := breakPoint(epochs[:30], withNaN, nil); got != 13 || cause != BreakNonFinite {
		t.Errorf("NaN at index 12: %d (%v), want 13 (non-finite)", got, cause)
	}
}

// TestEpochs_FitsAfterLRStep: after a step the forecast follows the new
// curve, not the old one, and says where it starts.
func TestEpochs_FitsAfterLRStep(t *testing.T) {
	n := 70
	v := noisy(n, 0.002, 9, func(x float64) float64 {
		if x <= 40 {
			return powerCurve(x) + 0.03
		}
		return 0.06 + 0.04*math.Exp(-(x-40)/6)
	})
	c := Curve{Values: v, LR: steps(n, 40, 0.1, 0.01), Fraction: true, Total: 100}
	f := Epochs(c, Options{})
	if f.Status != OK {
		t.Fatalf("%v: %s", f.Status, f.Reason)
	}
	if f.Break == nil || f.Break.Epoch != 41 || f.Break.Cause != BreakLR {
		t.Fatalf("break %+v, want epoch 41 (lr-step)", f.Break)
	}
	if f.Points != 30 {
		t.Errorf("fitted %d points, want the 30 after the step", f.Points)
	}
	if math.Abs(f.At.Value-0.06) > 0.01 || f.At.Lo > 0.06 || f.At.Hi < 0.06 {
		t.Errorf("at 100: %+v, want about 0.06", f.At)
	}
}
