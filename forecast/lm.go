package forecast

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Levenberg–Marquardt settings.
const (
	// lmMaxIter bounds the iterations of a fit that crawls: noisy curves
	// shaped like a power law draw the saturating families along a valley
	// towards the power law, lowering the residuals by a fraction of a
	// percent per step. On the demo network's curves, fits stopped at 10,
	// 15, 20 or 30 iterations (one start) and at 300 (four starts) gave
	// the same evaluation figures to the second digit, at a tenth of the
	// cost or less. A fit still
	// gaining more than lmFastGain per iteration (exact data, a far start)
	// goes on up to lmHardIter.
	lmMaxIter  = 15
	lmFastGain = 0.01
	lmHardIter = 400
	// lmRelTol stops when an accepted step lowers the residual sum of
	// squares by less than this fraction.
	lmRelTol = 1e-7
	// lmLambda0 is the first damping (Marquardt 1963 starts small, so
	// that a good start takes Gauss–Newton steps at once).
	lmLambda0 = 1e-3
	// lmMaxTries bounds the raises of λ (×4 each) within one iteration:
	// 4^16 ≈ 4·10⁹ turns any step into a tiny gradient step, so a
	// rejection after that means the fit sits at a minimum.
	lmMaxTries = 16
)

// solver holds the work space of Levenberg–Marquardt for one parameter
// count: the normal equations JᵀWJ·δ = JᵀW·r damped by Marquardt's scaling
// λ·diag(JᵀWJ). The damped system is solved by a Cholesky factorization
// written out for these 2–4 unknowns; gonum's mat.Cholesky gives the same
// steps (TestSolver_SmallCholeskyMatchesGonum) but estimates a condition
// number on every call and makes a whole forecast about 1.3 times slower
// (BenchmarkFit, DEVELOPERS.md). The covariance at the end uses gonum's
// symmetric eigendecomposition.
type solver struct {
	p           int
	jtj         *mat.SymDense
	grad, trial []float64
	ata         []float64 // JᵀWJ, row-major p×p (lower triangle), filled by normal
	atb         []float64 // JᵀWr
	damped, dx  []float64
	iterations  int
	// useGonum solves the damped system with mat.Cholesky instead, for
	// the comparison benchmark and test.
	useGonum bool
	chol     mat.Cholesky
	dampedM  *mat.SymDense
	rhs, sol *mat.VecDense

	eigen  mat.EigenSym
	eigVec mat.Dense
	eigVal []float64
}

func newSolver(p int) *solver {
	return &solver{
		p:       p,
		jtj:     mat.NewSymDense(p, nil),
		grad:    make([]float64, p),
		trial:   make([]float64, p),
		ata:     make([]float64, p*p),
		atb:     make([]float64, p),
		damped:  make([]float64, p*p),
		dx:      make([]float64, p),
		dampedM: mat.NewSymDense(p, nil),
		rhs:     mat.NewVecDense(p, nil),
		sol:     mat.NewVecDense(p, nil),
		eigVal:  make([]float64, p),
	}
}

// normal fills JᵀWJ and JᵀWr at th and returns the weighted residual sum
// of squares (+Inf when the curve is not finite somewhere).
func (s *solver) normal(f *family, d *dataset, th []float64) float64 {
	p := s.p
	clear(s.ata)
	clear(s.atb)
	var rss float64
	for i := range d.x {
		r := d.y[i] - f.eval(th, d.x[i], d.lx[i], s.grad)
		w := d.w[i]
		rss += w * r * r
		for a := 0; a < p; a++ {
			ga := w * s.grad[a]
			s.atb[a] += ga * r
			row := s.ata[a*p:]
			for b := 0; b <= a; b++ {
				row[b] += ga * s.grad[b]
			}
		}
	}
	if !finite(rss) {
		return math.Inf(1)
	}
	return rss
}

// fit runs Levenberg–Marquardt from th (changed in place) with the box of
// f on d as a projection, and returns the weighted residual sum of
// squares.
func (s *solver) fit(f *family, d *dataset, th []float64) float64 {
	p := s.p
	rss := s.normal(f, d, th)
	if !finite(rss) {
		return rss
	}
	lambda, nu := lmLambda0, 2.0
	s.iterations = 0
	for it := 0; it < lmHardIter && rss > 0; it++ {
		s.iterations++
		var maxDiag float64
		for a := 0; a < p; a++ {
			maxDiag = math.Max(maxDiag, s.ata[a*p+a])
		}
		if !(maxDiag > 0) {
			break
		}
		accepted := false
		var rssTrial float64
		for try := 0; try < lmMaxTries; try++ {
			copy(s.damped, s.ata)
			for a := 0; a < p; a++ {
				// The absolute floor keeps a parameter that the data do
				// not move (a zero column) from making the system singular.
				s.damped[a*p+a] = s.ata[a*p+a]*(1+lambda) + 1e-12*maxDiag
			}
			if s.solve() {
				for a := 0; a < p; a++ {
					s.trial[a] = th[a] + s.dx[a]
				}
				d.project(f, s.trial)
				rssTrial = d.rss(f, s.trial)
				// Gain ratio: the actual decrease over the one the
				// linearized model predicts for the (projected) step,
				// 2·δᵀJᵀWr − δᵀJᵀWJ·δ.
				pred := 0.0
				for a := 0; a < p; a++ {
					da := s.trial[a] - th[a]
					pred += 2 * da * s.atb[a]
					for b := 0; b < p; b++ {
						pred -= da * s.sym(a, b) * (s.trial[b] - th[b])
					}
				}
				if rssTrial < rss {
					accepted = true
					// Nielsen (1999): shrink λ by up to 3 when the model
					// predicted the decrease well, keep it when not.
					rho := (rss - rssTrial) / pred
					if !(pred > 0) {
						rho = 1
					}
					lambda *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
					nu = 2
					break
				}
			}
			lambda *= nu
			nu *= 2
		}
		if !accepted {
			break
		}
		copy(th, s.trial)
		lambda = math.Max(lambda, 1e-12)
		gain := (rss - rssTrial) / rss
		done := gain <= lmRelTol || (it+1 >= lmMaxIter && gain < lmFastGain)
		rss = s.normal(f, d, th)
		if done || !finite(rss) {
			break
		}
	}
	return rss
}

// sym returns element (a, b) of JᵀWJ, whose lower triangle normal fills.
func (s *solver) sym(a, b int) float64 {
	if b > a {
		a, b = b, a
	}
	return s.ata[a*s.p+b]
}

// solve solves damped·dx = atb (damped symmetric positive definite, lower
// triangle used); false when it is not positive definite.
func (s *solver) solve() bool {
	p := s.p
	if s.useGonum {
		for a := 0; a < p; a++ {
			for b := 0; b <= a; b++ {
				s.dampedM.SetSym(a, b, s.damped[a*p+b])
			}
			s.rhs.SetVec(a, s.atb[a])
		}
		if !s.chol.Factorize(s.dampedM) || s.chol.SolveVecTo(s.sol, s.rhs) != nil {
			return false
		}
		for a := 0; a < p; a++ {
			s.dx[a] = s.sol.AtVec(a)
		}
		return true
	}
	return choleskySolve(s.damped, p, s.atb, s.dx)
}

// choleskySolve solves A·x = b for a symmetric positive definite A (p×p,
// row-major, lower triangle read, overwritten by its factor L with
// A = L·Lᵀ): the textbook Cholesky–Banachiewicz order, then forward and
// back substitution (Golub & Van Loan, Matrix Computations, §4.2).
func choleskySolve(A []float64, p int, b, x []float64) bool {
	for i := 0; i < p; i++ {
		for j := 0; j <= i; j++ {
			sum := A[i*p+j]
			for k := 0; k < j; k++ {
				sum -= A[i*p+k] * A[j*p+k]
			}
			if i == j {
				if !(sum > 0) {
					return false
				}
				A[i*p+i] = math.Sqrt(sum)
			} else {
				A[i*p+j] = sum / A[j*p+j]
			}
		}
	}
	for i := 0; i < p; i++ { // L·y = b
		sum := b[i]
		for k := 0; k < i; k++ {
			sum -= A[i*p+k] * x[k]
		}
		x[i] = sum / A[i*p+i]
	}
	for i := p - 1; i >= 0; i-- { // Lᵀ·x = y
		sum := x[i]
		for k := i + 1; k < p; k++ {
			sum -= A[k*p+i] * x[k]
		}
		x[i] = sum / A[i*p+i]
	}
	return true
}

// covariance stores in cov (p×p, row-major) the pseudo-inverse of JᵀWJ as
// last filled by normal: the unscaled covariance of the parameters.
// Directions the data do not determine (eigenvalues below 1e-12 of the
// largest) get no variance instead of an infinite one: a curve that does
// not move with a parameter does not move the forecast with it either.
// A parameter held at a bound of its box (active[a]) is treated as fixed.
func (s *solver) covariance(cov []float64, active []bool) bool {
	p := s.p
	for a := 0; a < p; a++ {
		for b := 0; b <= a; b++ {
			v := s.ata[a*p+b]
			if active[a] || active[b] {
				v = 0
			}
			s.jtj.SetSym(a, b, v)
		}
	}
	if !s.eigen.Factorize(s.jtj, true) {
		return false
	}
	s.eigen.Values(s.eigVal)
	s.eigen.VectorsTo(&s.eigVec)
	top := 0.0
	for _, v := range s.eigVal {
		top = math.Max(top, v)
	}
	clear(cov)
	for k, v := range s.eigVal {
		if !(v > 1e-12*top) {
			continue
		}
		for a := 0; a < p; a++ {
			va := s.eigVec.At(a, k) / v
			for b := 0; b < p; b++ {
				cov[a*p+b] += va * s.eigVec.At(b, k)
			}
		}
	}
	return top > 0
}

// clamp returns v held inside [lo, hi] (NaN stays NaN).
func clamp(v, lo, hi float64) float64 { return min(max(v, lo), hi) }
