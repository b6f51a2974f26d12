package diagnose

import "math"

// z95 is the 97.5 % quantile of the standard normal distribution, for
// two-sided 95 % intervals (Newcombe 1998 uses z = 1.959964).
const z95 = 1.959963984540054

// Wilson returns the Wilson score interval (without continuity correction)
// of a proportion with x successes out of n at normal quantile z
// (Newcombe 1998, method 3):
//
//	(2x + z² ∓ z·√(z² + 4x(1 − x/n))) / (2(n + z²)).
//
// Unlike the Wald interval it never leaves [0, 1] and has width at x = 0.
// It returns NaNs for n <= 0 or x outside [0, n].
func Wilson(x, n, z float64) (lo, hi float64) {
	if !(n > 0) || !(x >= 0) || x > n || math.IsInf(n, 0) {
		return math.NaN(), math.NaN()
	}
	z2 := z * z
	root := z * math.Sqrt(z2+4*x*(1-x/n))
	den := 2 * (n + z2)
	lo = (2*x + z2 - root) / den
	hi = (2*x + z2 + root) / den
	return math.Max(0, lo), math.Min(1, hi)
}

// binomialSE is the standard error √(p(1−p)/n) of an error rate p
// measured on n independent examples.
func binomialSE(p float64, n int) float64 {
	if n <= 0 {
		return 0
	}
	p = math.Min(1, math.Max(0, p))
	return math.Sqrt(p * (1 - p) / float64(n))
}

// ema is a debiased exponential moving average (Kingma & Ba 2015, §3):
// s_t = β s_{t−1} + (1−β) x_t with s_0 = 0, and ŝ_t = s_t / (1 − β^t).
// w carries 1 − β^t as the sum of the weights, so that a split that is
// not logged at every point is averaged over the points where it is; w2
// is the sum of the squared weights, giving the standard error of ŝ under
// white noise σ as σ·√w2/w.
type ema struct{ s, w, w2 float64 }

func (e *ema) add(x, beta float64) {
	a := 1 - beta
	e.s = beta*e.s + a*x
	e.w = beta*e.w + a
	e.w2 = beta*beta*e.w2 + a*a
}

func (e *ema) value() float64 { return e.s / e.w }

// seFactor is the standard error of the smoothed value per unit of noise.
func (e *ema) seFactor() float64 {
	if e.w <= 0 {
		return 1
	}
	return math.Sqrt(e.w2) / e.w
}

// noiseBeta is the decay of the running mean of squared pseudo-residuals:
// an effective window of (1+ρ)/(1−ρ) = 9 points, so the noise estimate
// follows the recent part of the run (design choice).
const noiseBeta = 0.8

// noise estimates the standard deviation of the per-point values of one
// split around their trend from pseudo-residuals of three consecutive
// values, ẽ = (x₁ + x₃)/2 − x₂ (Gasser, Sroka & Jennen-Steinmetz 1986,
// from memory): for white noise σ, Var ẽ = σ²(¼ + ¼ + 1) = 1.5σ², and a
// linear trend cancels, so σ̂² = (2/3)·mean ẽ².
type noise struct {
	x1, x2 float64 // the two previous finite values, x2 the latest
	n      int32   // finite values seen, saturating at 2
	ms     ema     // running mean of ẽ²
}

func (nz *noise) add(x float64) {
	if nz.n >= 2 {
		e := (nz.x1+x)/2 - nz.x2
		nz.ms.add(e*e, noiseBeta)
	} else {
		nz.n++
	}
	nz.x1, nz.x2 = nz.x2, x
}

// sigma returns the noise estimate, or false before three values.
func (nz *noise) sigma() (float64, bool) {
	if nz.ms.w <= 0 {
		return 0, false
	}
	return math.Sqrt(2.0 / 3.0 * nz.ms.value()), true
}

// slope is the ordinary least-squares slope of y on x (two-pass, for
// accuracy when x is large, e.g. epoch 10 000). It returns NaN for fewer
// than two points or constant x.
func slope(x, y []float64) float64 {
	n := float64(len(x))
	if len(x) < 2 || len(y) != len(x) {
		return math.NaN()
	}
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= n
	my /= n
	var sxy, sxx float64
	for i := range x {
		dx := x[i] - mx
		sxy += dx * (y[i] - my)
		sxx += dx * dx
	}
	if sxx == 0 {
		return math.NaN()
	}
	return sxy / sxx
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
