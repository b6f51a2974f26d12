package forecast

import (
	"math"
)

// member is one fitted family in the ensemble.
type member struct {
	fit    fitted
	weight float64
	// s2 is the residual variance of the fit, rss/(n − p), in score units.
	s2 float64
}

// ensemble is the weighted set of fitted families with everything needed
// to turn a score at an epoch back into the user's metric and an
// interval.
type ensemble struct {
	members []member
	// scale maps the score back: value = scale·(1 − u).
	scale float64
	// origin is the epoch counted as x = 1.
	origin int
	// inflation multiplies the parameter variances for the serial
	// correlation of the residuals: (1 + ρ)/(1 − ρ).
	inflation float64
	// noise2 is the variance of one logged value around the curve, in
	// score units (the per-epoch noise).
	noise2 float64
	// drift is the model-error scale (score units): how far the curve
	// moved over the second half of the fitted stretch (see modelError).
	drift float64
	// last is the last fitted epoch.
	last float64
	// lower, upper clamp values (0 and 1 for error rates).
	lower, upper float64
	grad         []float64
}

// akaikeWeights returns w_i = π_i·exp(−Δ_i/2) / Σ_j π_j·exp(−Δ_j/2) with
// Δ_i = AIC_i − min AIC and π the prior weights (nil: equal): Burnham &
// Anderson (2002), §2.9 (and §4.2 for priors). A non-finite AIC gets no
// weight.
func akaikeWeights(aic, prior []float64) []float64 {
	w := make([]float64, len(aic))
	best := math.Inf(1)
	for _, a := range aic {
		if finite(a) {
			best = math.Min(best, a)
		}
	}
	var sum float64
	for i, a := range aic {
		if !finite(a) {
			continue
		}
		w[i] = math.Exp(-(a - best) / 2)
		if prior != nil {
			w[i] *= prior[i]
		}
		sum += w[i]
	}
	if sum > 0 {
		for i := range w {
			w[i] /= sum
		}
	}
	return w
}

// aicc is the small-sample Akaike criterion of a least-squares fit with p
// parameters to n points (Hurvich & Tsai 1989; Burnham & Anderson 2002,
// eq. 2.14): AIC = n·ln(RSS/n) + 2K with K = p + 1 (the noise variance is
// estimated too), plus 2K(K + 1)/(n − K − 1). It is +Inf when n is too
// small for the correction. n may be an effective count (not an integer).
func aicc(rss, n float64, p int) float64 {
	k := float64(p + 1)
	if n-k-1 <= 0 || !(rss > 0) {
		if rss == 0 && n-k-1 > 0 {
			return math.Inf(-1)
		}
		return math.Inf(1)
	}
	return n*math.Log(rss/n) + 2*k + 2*k*(k+1)/(n-k-1)
}

// score converts an epoch to the fit's x.
func (e *ensemble) x(epoch float64) float64 { return epoch - float64(e.origin) + 1 }

// value converts a score to the user's metric, clamped to its range.
func (e *ensemble) value(u float64) float64 {
	return clamp(e.scale*(1-u), e.lower, e.upper)
}

// mean is the ensemble's expected value at an epoch.
func (e *ensemble) mean(epoch float64) float64 { return e.value(e.meanScore(epoch)) }

// meanScore is the ensemble's mean score at an epoch.
func (e *ensemble) meanScore(epoch float64) float64 {
	x := e.x(epoch)
	lx := math.Log(x)
	var u float64
	for _, m := range e.members {
		u += m.weight * m.fit.fam.eval(m.fit.th, x, lx, nil)
	}
	return u
}

// component is one normal of the predictive mixture, in score units.
type component struct{ w, mu, sd float64 }

// components returns the predictive mixture at an epoch: each family's
// curve value with the delta-method variance of its parameters, plus the
// per-epoch noise when observed is set (the value a log will show, not
// the curve under it).
func (e *ensemble) components(epoch float64, observed bool, dst []component) []component {
	x := e.x(epoch)
	me := e.modelError(epoch)
	dst = dst[:0]
	for _, m := range e.members {
		u, v := m.fit.at(x, e.grad)
		c := e.component(m, u, v, observed)
		c.sd = math.Hypot(c.sd, me)
		dst = append(dst, c)
	}
	return dst
}

// modelErrorScale is κ of modelError (design choice, set on the tuning
// curves, see DEVELOPERS.md).
var modelErrorScale = 0.5

// modelError is the standard deviation (score units) of what no family
// can know: how the curve departs from every fitted shape beyond the last
// epoch (a learning-rate schedule that keeps annealing, a second descent,
// a slow turn). It grows with the log of the horizon and with how far the
// curve still moved over the second half of the fitted stretch:
// κ·drift·log₂(epoch/last). A curve that has stopped moving gets little; a
// curve still falling could fall further or stop, and gets much.
func (e *ensemble) modelError(epoch float64) float64 {
	if epoch <= e.last {
		return 0
	}
	return modelErrorScale * e.drift * math.Log2(e.x(epoch)/e.x(e.last))
}

// plateaus returns the mixture of the families' limits.
func (e *ensemble) plateaus(dst []component) []component {
	dst = dst[:0]
	for _, m := range e.members {
		u, v := m.fit.plateau(e.grad)
		dst = append(dst, e.component(m, u, v, false))
	}
	return dst
}

func (e *ensemble) component(m member, u, v float64, observed bool) component {
	variance := v * m.s2 * e.inflation
	if observed {
		variance += e.noise2
	}
	return component{w: m.weight, mu: u, sd: math.Sqrt(variance)}
}

// changes returns the mixture of the change u(to) − u(from) of each
// family's curve, with the delta-method variance of the difference.
func (e *ensemble) changes(from, to float64, dst []component) []component {
	x0, x1 := e.x(from), e.x(to)
	dst = dst[:0]
	g0 := make([]float64, 4)
	for _, m := range e.members {
		p := len(m.fit.th)
		u0 := m.fit.fam.eval(m.fit.th, x0, math.Log(x0), g0[:p])
		u1 := m.fit.fam.eval(m.fit.th, x1, math.Log(x1), e.grad[:p])
		for a := 0; a < p; a++ {
			e.grad[a] -= g0[a]
		}
		c := e.component(m, u1-u0, m.fit.variance(e.grad[:p]), false)
		c.sd = math.Hypot(c.sd, e.modelError(to)-e.modelError(from))
		dst = append(dst, c)
	}
	return dst
}

// mixtureCDF is P(U ≤ u) under the mixture.
func mixtureCDF(cs []component, u float64) float64 {
	var p float64
	for _, c := range cs {
		switch {
		case c.sd > 0:
			p += c.w * 0.5 * math.Erfc(-(u-c.mu)/(c.sd*math.Sqrt2))
		case u >= c.mu:
			p += c.w
		}
	}
	return p
}

// mixtureMean is the mixture's mean.
func mixtureMean(cs []component) float64 {
	var m float64
	for _, c := range cs {
		m += c.w * c.mu
	}
	return m
}

// mixtureQuantile returns the q-quantile of the mixture by bisection on
// its distribution function (monotone, so bisection cannot fail).
func mixtureQuantile(cs []component, q float64) float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, c := range cs {
		if c.w <= 0 {
			continue
		}
		lo = math.Min(lo, c.mu-9*c.sd)
		hi = math.Max(hi, c.mu+9*c.sd)
	}
	if !(lo <= hi) {
		return math.NaN()
	}
	// 60 halvings take any float64 bracket below its resolution.
	for i := 0; i < 60 && lo < hi; i++ {
		mid := lo + (hi-lo)/2
		if mid == lo || mid == hi {
			break
		}
		if mixtureCDF(cs, mid) < q {
			lo = mid
		} else {
			hi = mid
		}
	}
	return hi
}
