package forecast

import (
	"math"
	"sort"
)

// fitted is one family fitted to a dataset.
type fitted struct {
	fam *family
	th  []float64
	// rss is the residual sum of squares over the raw points, in score
	// units: the binned sum plus the spread inside the bins.
	rss float64
	// cov is the pseudo-inverse of JᵀWJ at th (p×p, row-major): the
	// covariance of the parameters per unit of residual variance.
	cov []float64
	// iterations of Levenberg–Marquardt, summed over the starts.
	iterations int
}

// startsPerFamily is how many of the best grid points each family is
// polished from. Two guard against a start in the wrong valley (a sharp
// early bend against a slow one) at twice the cost of one.
const startsPerFamily = 1

// candidate is a grid start with its residual sum of squares.
type candidate struct {
	th  []float64
	rss float64
}

// fitter fits families, reusing one solver per parameter count.
type fitter struct {
	solvers [5]*solver
	cands   []candidate
}

func (ft *fitter) solver(p int) *solver {
	if ft.solvers[p] == nil {
		ft.solvers[p] = newSolver(p)
	}
	return ft.solvers[p]
}

// fit fits f to d from its best grid starts. ok is false when no start
// gives a finite curve.
func (ft *fitter) fit(f *family, d *dataset) (fitted, bool) {
	p := len(f.lo)
	ft.cands = ft.cands[:0]
	f.starts(d, func(th []float64, r float64) {
		if !finite(r) {
			return
		}
		// The exact linear solve may leave the box (a plateau above 1);
		// a projected start is then scored again.
		for a := range th {
			if lo, hi := d.bounds(f, a); th[a] < lo || th[a] > hi {
				d.project(f, th)
				r = d.rss(f, th)
				break
			}
		}
		if finite(r) {
			ft.cands = append(ft.cands, candidate{append([]float64(nil), th...), r})
		}
	})
	if len(ft.cands) == 0 {
		return fitted{}, false
	}
	sort.SliceStable(ft.cands, func(i, j int) bool { return ft.cands[i].rss < ft.cands[j].rss })
	s := ft.solver(p)
	best := fitted{fam: f, rss: math.Inf(1)}
	for k := 0; k < min(startsPerFamily, len(ft.cands)); k++ {
		th := ft.cands[k].th
		r := s.fit(f, d, th)
		best.iterations += s.iterations
		if r < best.rss {
			best.th, best.rss = th, r
		}
	}
	if !finite(best.rss) {
		return fitted{}, false
	}
	// Fill JᵀWJ at the winner (the last fit may have been the other start).
	s.normal(f, d, best.th)
	best.cov = make([]float64, p*p)
	// Parameters held at a bound keep their variance: a plateau pressed
	// against zero error is not known to lie there, and the values are
	// clamped to the metric's range afterwards.
	if !s.covariance(best.cov, make([]bool, p)) {
		return fitted{}, false
	}
	best.rss += d.within
	return best, true
}

// derive returns the fit of fam, the twin of f's family, mapped from f:
// the same curve and residuals, the parameters and their covariance
// carried over by the map's Jacobian (cov' = J·cov·Jᵀ).
func (f fitted) derive(fam *family) fitted {
	th, jac := fam.fromTwin(f.th)
	p := len(th)
	cov := make([]float64, p*p)
	for a := 0; a < p; a++ {
		for b := 0; b < p; b++ {
			var v float64
			for k := 0; k < p; k++ {
				for l := 0; l < p; l++ {
					v += jac[a*p+k] * f.cov[k*p+l] * jac[b*p+l]
				}
			}
			cov[a*p+b] = v
		}
	}
	return fitted{fam: fam, th: th, rss: f.rss, cov: cov, iterations: 0}
}

// variance returns the variance of g·θ per unit of residual variance:
// gᵀ·cov·g, the delta method.
func (f *fitted) variance(g []float64) float64 {
	p := len(g)
	var v float64
	for a := 0; a < p; a++ {
		var row float64
		for b := 0; b < p; b++ {
			row += f.cov[a*p+b] * g[b]
		}
		v += g[a] * row
	}
	return math.Max(v, 0)
}

// at returns u(x) and the variance of its estimate per unit of residual
// variance.
func (f *fitted) at(x float64, g []float64) (u, v float64) {
	u = f.fam.eval(f.th, x, math.Log(x), g[:len(f.th)])
	return u, f.variance(g[:len(f.th)])
}

// plateau returns the limit of u and its variance per unit of residual
// variance.
func (f *fitted) plateau(g []float64) (u, v float64) {
	u = f.fam.plateau(f.th, g[:len(f.th)])
	return u, f.variance(g[:len(f.th)])
}

// exactResidual is the residual standard deviation (score units) below
// which a fit counts as exact: float64 noise of a curve near 1.
const exactResidual = 1e-12

// fitEnsemble fits every family to the stretch (epochs ep, values v) and
// weighs them; stretches longer than unbinned points are binned. It returns nil when no family fits.
func fitEnsemble(ep []int, v []float64, c Curve, unbinned int) (*ensemble, []Family) {
	n := len(v)
	scale := 1.0
	if !c.Fraction {
		var m float64
		for _, y := range v {
			m = math.Max(m, math.Abs(y))
		}
		if m > 0 {
			scale = m
		}
	}
	x := make([]float64, n)
	u := make([]float64, n)
	for i := range v {
		x[i] = float64(ep[i]-ep[0]) + 1
		u[i] = 1 - v[i]/scale
	}
	var d dataset
	d.reset(x, u, unbinned)
	if c.Fraction || nonNegative(v) {
		d.plateauMax = 1
	}
	var ft fitter
	byName := make(map[string]fitted, len(families))
	for i := range families {
		fam := &families[i]
		if n <= len(fam.lo) || fam.fromTwin != nil {
			continue
		}
		if fr, ok := ft.fit(fam, &d); ok {
			fr.rss = math.Max(fr.rss, exactResidual*exactResidual*float64(n))
			byName[fam.name] = fr
		}
	}
	fits := make([]fitted, 0, len(families))
	for i := range families {
		fam := &families[i]
		if fam.fromTwin != nil {
			if tw, ok := byName[fam.twin]; ok {
				fits = append(fits, tw.derive(fam))
			}
		} else if fr, ok := byName[fam.name]; ok {
			fits = append(fits, fr)
		}
	}
	if len(fits) == 0 {
		return nil, nil
	}
	// The residuals of a learning curve are serially correlated (the
	// weights change little from one epoch to the next), so n points carry
	// the information of fewer independent ones. The lag-1
	// autocorrelation ρ of the best fit's residuals gives the effective
	// count n(1 − ρ)/(1 + ρ) for the Akaike weights and the factor
	// (1 + ρ)/(1 − ρ) for the parameters' variances, as for the mean of an
	// AR(1) series (common practice in time-series regression).
	aic := make([]float64, len(fits))
	best := 0
	for i, fr := range fits {
		aic[i] = aicc(fr.rss, float64(n), len(fr.th))
		if aic[i] < aic[best] {
			best = i
		}
	}
	rho := clamp(lag1(&fits[best], x, u), 0, 0.95)
	ne := math.Max(float64(n)*(1-rho)/(1+rho), float64(min(n, MinPoints)))
	prior := make([]float64, len(fits))
	for i, fr := range fits {
		aic[i] = aicc(fr.rss, ne, len(fr.th))
		prior[i] = fr.fam.prior
	}
	w := akaikeWeights(aic, prior)
	e := &ensemble{
		scale:     scale,
		origin:    ep[0],
		inflation: (1 + rho) / (1 - rho),
		lower:     math.Inf(-1),
		upper:     math.Inf(1),
		grad:      make([]float64, 4),
	}
	if c.Fraction {
		e.lower, e.upper = 0, 1
	} else if d.plateauMax == 1 {
		e.lower = 0 // a metric with its floor at 0 (a loss) stays above it
	}
	if c.Noise > 0 && finite(c.Noise) {
		e.noise2 = (c.Noise / scale) * (c.Noise / scale)
	} else {
		e.noise2 = fits[best].rss / float64(n-len(fits[best].th))
	}
	fams := make([]Family, len(fits))
	var kept float64
	for i, fr := range fits {
		fams[i] = Family{Name: fr.fam.name, Weight: w[i], Params: paperParams(fr)}
		// A family with less than 1e-4 of the weight cannot move a
		// quantile by more than 1e-4 of the probability: leave it out of
		// the mixture.
		if w[i] >= 1e-4 {
			e.members = append(e.members, member{fit: fr, weight: w[i], s2: fr.rss / float64(n-len(fr.th))})
			kept += w[i]
		}
	}
	for i := range e.members {
		e.members[i].weight /= kept
	}
	// The drift: the ensemble's move over the second half of the stretch.
	e.last = float64(ep[n-1])
	mid := float64(ep[0]) + (e.last-float64(ep[0]))/2
	e.drift = math.Abs(e.meanScore(e.last) - e.meanScore(mid))
	return e, fams
}

// lag1 returns the lag-1 autocorrelation of the fit's residuals over the
// raw points.
func lag1(f *fitted, x, u []float64) float64 {
	var num, den, prev float64
	for i := range x {
		r := u[i] - f.fam.eval(f.th, x[i], math.Log(x[i]), nil)
		den += r * r
		if i > 0 {
			num += r * prev
		}
		prev = r
	}
	if !(den > 0) {
		return 0
	}
	return num / den
}

func paperParams(f fitted) []Param {
	vals := f.fam.paper(f.th)
	ps := make([]Param, len(vals))
	for i, v := range vals {
		ps[i] = Param{Name: f.fam.paperNames[i], Value: v}
	}
	return ps
}

// nonNegative reports whether no value is below 0: then the metric is
// taken to have 0 as its floor (losses, error rates, perplexities).
func nonNegative(v []float64) bool {
	for _, y := range v {
		if y < 0 {
			return false
		}
	}
	return true
}
