package trainer

import "math"

// optimizer updates parameters in place from their gradients.
type optimizer interface {
	// step applies one update with learning rate lr.
	step(params, grads []float64, lr float64)
}

// Adam's default hyperparameters. Source: Kingma & Ba 2015, Algorithm 1
// ("Good default settings for the tested machine learning problems are
// α = 0.001, β1 = 0.9, β2 = 0.999 and ε = 10⁻⁸").
const (
	adamBeta1   = 0.9
	adamBeta2   = 0.999
	adamEpsilon = 1e-8
)

// adam is the optimizer of Kingma & Ba (2015), Algorithm 1, with bias
// corrected moment estimates. The learning rate is α.
type adam struct {
	beta1, beta2, eps float64
	m, v              []float64
	t                 int
	// pow1, pow2 are β1ᵗ and β2ᵗ, kept as running products.
	pow1, pow2 float64
}

func newAdam(n int) *adam {
	return &adam{
		beta1: adamBeta1, beta2: adamBeta2, eps: adamEpsilon,
		m: make([]float64, n), v: make([]float64, n),
		pow1: 1, pow2: 1,
	}
}

// step is one iteration of Algorithm 1:
//
//	m ← β1·m + (1−β1)·g;  v ← β2·v + (1−β2)·g²
//	m̂ ← m/(1−β1ᵗ);  v̂ ← v/(1−β2ᵗ);  θ ← θ − α·m̂/(√v̂ + ε)
//
//go:norace
func (a *adam) step(params, grads []float64, lr float64) {
	a.t++
	a.pow1 *= a.beta1
	a.pow2 *= a.beta2
	c1 := 1 / (1 - a.pow1)
	c2 := 1 / (1 - a.pow2)
	b1, b2 := a.beta1, a.beta2
	for i, g := range grads {
		m := b1*a.m[i] + (1-b1)*g
		v := b2*a.v[i] + (1-b2)*g*g
		a.m[i], a.v[i] = m, v
		params[i] -= lr * (m * c1) / (math.Sqrt(v*c2) + a.eps)
	}
}

// momentumSGD is stochastic gradient descent with classical (heavy-ball)
// momentum: v ← μ·v − lr·g; θ ← θ + v (Sutskever et al. 2013, eq. 1,
// from memory; Goodfellow et al. 2016 Algorithm 8.2).
type momentumSGD struct {
	mu  float64
	vel []float64
}

func newMomentumSGD(n int, mu float64) *momentumSGD {
	return &momentumSGD{mu: mu, vel: make([]float64, n)}
}

func (s *momentumSGD) step(params, grads []float64, lr float64) {
	for i, g := range grads {
		v := s.mu*s.vel[i] - lr*g
		s.vel[i] = v
		params[i] += v
	}
}
