package trainer

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// numericalGradient returns the central difference (f(p+h) − f(p−h)) / 2h
// of loss with respect to every parameter of n.
func numericalGradient(n *network, loss func() float64, h float64) []float64 {
	g := make([]float64, len(n.params))
	for i := range n.params {
		p := n.params[i]
		n.params[i] = p + h
		up := loss()
		n.params[i] = p - h
		down := loss()
		n.params[i] = p
		g[i] = (up - down) / (2 * h)
	}
	return g
}

// Gradient check: back-propagation against central finite differences.
// Source: common practice, numerical gradient checking as described in the
// CS231n notes "Neural Networks Part 3" (centred formula, relative error
// |a−n|/max(|a|,|n|); below 1e-7 is good in double precision, kinks of
// ReLU can raise it) and Goodfellow et al. 2016 §11.5 — both from memory.
// Each case is a minibatch of 3 examples with an L2 penalty, so the check
// covers the batch average, the penalty, the nonlinearities and, with
// dropout, the masks (the same mask is drawn for every evaluation by
// re-seeding the generator).
func TestNetwork_GradientMatchesFiniteDifferences(t *testing.T) {
	tests := []struct {
		name    string
		act     activation
		dropout float64
		sizes   []int
	}{
		{"TanhTwoHidden", tanhAct, 0, []int{4, 5, 3, 1}},
		{"ReLUTwoHidden", relu, 0, []int{4, 5, 3, 1}},
		{"LeakyReLU", leakyReLU, 0, []int{4, 6, 1}},
		{"TanhDropout", tanhAct, 0.3, []int{4, 5, 3, 1}},
		{"ReLUDropout", relu, 0.3, []int{4, 7, 1}},
		{"Linear", tanhAct, 0, []int{4, 1}},
	}
	const (
		lambda = 1e-2
		h      = 1e-5
		// relTol is the largest relative error accepted. Central
		// differences with h = 1e-5 carry a truncation error of order
		// h² and a rounding error of order 1e-16/h, far below it.
		relTol = 1e-6
	)
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(3, 4))
			n := newNetwork(tc.sizes, tc.act, tc.dropout, rng)
			for l := range n.b {
				for j := range n.b[l] {
					n.b[l][j] = 0.3 * rng.NormFloat64()
				}
			}
			xs := make([][]float64, 3)
			for k := range xs {
				xs[k] = make([]float64, tc.sizes[0])
				for i := range xs[k] {
					xs[k][i] = rng.NormFloat64()
				}
			}
			ys := []float64{1, 0, 1}
			maskRNG := func(k int) *rand.Rand { return rand.New(rand.NewPCG(11, uint64(k))) }
			loss := func() float64 {
				var s float64
				for k, x := range xs {
					s += crossEntropy(n.forward(x, true, maskRNG(k)), ys[k])
				}
				return s/float64(len(xs)) + lambda*n.l2Penalty()
			}
			n.zeroGrads()
			for k, x := range xs {
				z := n.forward(x, true, maskRNG(k))
				n.backward((sigmoid(z) - ys[k]) / float64(len(xs)))
			}
			n.addL2(lambda)
			analytic := append([]float64(nil), n.grads...)
			numeric := numericalGradient(n, loss, h)
			worst := 0.0
			for i := range analytic {
				a, m := analytic[i], numeric[i]
				rel := math.Abs(a-m) / math.Max(math.Max(math.Abs(a), math.Abs(m)), 1e-4)
				worst = math.Max(worst, rel)
				if rel > relTol {
					t.Errorf("param %d: backprop %.10g, finite difference %.10g, relative error %.2g > %g", i, a, m, rel, relTol)
				}
			}
			t.Logf("%d parameters, worst relative error %.2g", len(analytic), worst)
		})
	}
}

// A hand-set linear model: z = x0 − x1 + 0.5. The cross-entropy of a logit
// is softplus((1−2y)·z) (Goodfellow et al. 2016 §6.2.2.2, from memory).
func TestNetwork_EvaluateHandSetModel(t *testing.T) {
	n := newNetwork([]int{2, 1}, tanhAct, 0, rand.New(rand.NewPCG(1, 1)))
	copy(n.w[0], []float64{1, -1})
	n.b[0][0] = 0.5
	d := &dataset{n: 3, dim: 2, x: []float64{
		1, 0, // z = 1.5, label 1: correct
		0, 2, // z = −1.5, label 1: wrong
		0, 0, // z = 0.5, label 0: wrong
	}, y: []float64{1, 1, 0}}
	got := n.evaluate(d)
	want := (math.Log1p(math.Exp(-1.5)) + math.Log1p(math.Exp(1.5)) + math.Log1p(math.Exp(0.5))) / 3
	if math.Abs(got.loss-want) > 1e-12 {
		t.Errorf("loss = %.15g, want %.15g", got.loss, want)
	}
	if got.acc != 1.0/3 {
		t.Errorf("acc = %v, want 1/3", got.acc)
	}
}

func TestCrossEntropy(t *testing.T) {
	tests := []struct {
		name string
		z, y float64
		want float64
	}{
		// ln 2: a logit of 0 is p = ½ (definition of the logistic function).
		{"ZeroLogitPositive", 0, 1, math.Ln2},
		{"ZeroLogitNegative", 0, 0, math.Ln2},
		// For large |z| the loss is |z| on the wrong side, 0 on the right
		// side, with no overflow of e^z.
		{"HugeRight", 1000, 1, 0},
		{"HugeWrong", 1000, 0, 1000},
		{"HugeWrongNegative", -1000, 1, 1000},
		{"InfiniteWrong", math.Inf(1), 0, math.Inf(1)},
		{"InfiniteRight", math.Inf(1), 1, 0},
		{"NaN", math.NaN(), 1, math.NaN()},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := crossEntropy(tc.z, tc.y)
			same := got == tc.want || (math.IsNaN(got) && math.IsNaN(tc.want)) || math.Abs(got-tc.want) < 1e-12
			if !same {
				t.Errorf("crossEntropy(%v, %v) = %v, want %v", tc.z, tc.y, got, tc.want)
			}
		})
	}
}

// σ(−z) = 1 − σ(z) (symmetry of the logistic function), and it saturates
// without overflow.
func TestSigmoid(t *testing.T) {
	for _, z := range []float64{-800, -30, -2.5, -1e-9, 0, 0.7, 4, 30, 800} {
		t.Run(fmt.Sprint(z), func(t *testing.T) {
			s, r := sigmoid(z), sigmoid(-z)
			if math.IsNaN(s) || s < 0 || s > 1 {
				t.Fatalf("sigmoid(%v) = %v", z, s)
			}
			if math.Abs(s+r-1) > 1e-15 {
				t.Errorf("sigmoid(%v) + sigmoid(%v) = %v, want 1", z, -z, s+r)
			}
		})
	}
	if got := sigmoid(0); got != 0.5 {
		t.Errorf("sigmoid(0) = %v, want 0.5", got)
	}
}

// He initialization draws weights with variance 2/fan_in (He et al. 2015,
// from memory); Glorot uniform with variance 2/(fan_in+fan_out), a uniform
// on ±√(6/(fan_in+fan_out)) (Glorot & Bengio 2010, from memory). With
// 64·256 weights the sample variance is within a few percent.
func TestNewNetwork_InitialWeightScale(t *testing.T) {
	tests := []struct {
		name string
		act  activation
		want float64
	}{
		{"HeForReLU", relu, 2.0 / 256},
		{"GlorotForTanh", tanhAct, 2.0 / (256 + 64)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			n := newNetwork([]int{256, 64, 1}, tc.act, 0, rand.New(rand.NewPCG(5, 5)))
			var ss float64
			for _, w := range n.w[0] {
				ss += w * w
			}
			v := ss / float64(len(n.w[0]))
			if math.Abs(v/tc.want-1) > 0.05 {
				t.Errorf("first-layer weight variance %.6g, want %.6g ±5%%", v, tc.want)
			}
			for _, b := range n.b[0] {
				if b != 0 {
					t.Fatalf("bias %v, want 0", b)
				}
			}
		})
	}
}

// The unrolled kernels must equal the plain loops they replace.
func TestKernels_MatchPlainLoops(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	for n := range 11 {
		a, b := make([]float64, n), make([]float64, n)
		for i := range a {
			a[i], b[i] = rng.NormFloat64(), rng.NormFloat64()
		}
		var want float64
		for i := range a {
			want += a[i] * b[i]
		}
		if got := dot(a, b); math.Abs(got-want) > 1e-12 {
			t.Errorf("dot len %d = %v, want %v", n, got, want)
		}
		gw, prev := make([]float64, n), make([]float64, n)
		axpy2(0.5, a, b, gw, prev)
		for i := range a {
			if gw[i] != 0.5*a[i] || prev[i] != 0.5*b[i] {
				t.Fatalf("axpy2 len %d at %d: got %v %v", n, i, gw[i], prev[i])
			}
		}
	}
}
