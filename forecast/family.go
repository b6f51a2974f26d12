package forecast

import "math"

// A family is one parametric learning-curve family of Domhan, Springenberg
// & Hutter (IJCAI 2015, Table 1), written as in the paper for a score that
// rises with the epoch x towards a plateau (accuracy; we fit 1 − error, or
// 1 − loss/scale). Each family is fitted in its own internal parameters,
// chosen so that least squares is well conditioned (rate constants as
// logarithms, pow4's inner line as a shift); paper converts them back to
// the parameters of the paper's formula.
//
// Of the paper's eleven families we keep the eight that rise to a finite
// plateau with an offset of their own. Vapor pressure and log-log-linear
// have no finite plateau above zero, and Hill3 is MMF with β = 0.
type family struct {
	name string
	// prior is the family's prior weight in the Akaike weights (Burnham &
	// Anderson 2002, §2.9, allow unequal priors). Janoschek and Weibull
	// span exactly the same curves (Janoschek's κ is Weibull's κ^δ), so
	// each gets half a vote: together they count as one shape.
	prior float64
	// paperNames names the parameters of the paper's formula, in order.
	paperNames []string
	// lo and hi bound the internal parameters; a step of the fit that
	// leaves the box is projected back onto it. Bounds keep the curve
	// rising and its exponents in a range where float64 stays exact.
	lo, hi []float64
	// eval returns u(x) (lx = ln x) and, when grad is not nil, stores
	// ∂u/∂θ in grad.
	eval func(th []float64, x, lx float64, grad []float64) float64
	// plateau returns lim u(x) as x → ∞ and, when grad is not nil, its
	// gradient.
	plateau func(th []float64, grad []float64) float64
	// starts offers starting points with their weighted residual sum of
	// squares: a grid on the nonlinear parameters, the linear ones solved
	// exactly for each (variable projection).
	starts func(d *dataset, try func(th []float64, rss float64))
	// paper converts internal parameters to the paper's.
	paper func(th []float64) []float64
	// twin, when set, names a family spanning exactly the same curves, and
	// fromTwin maps a fit of the twin to this family's parameters with the
	// Jacobian of the map (p×p, row-major). The ensemble then derives this
	// family's least-squares fit from the twin's instead of repeating it:
	// the minimum maps onto the minimum, and the delta-method variance of a
	// prediction does not depend on the parametrization.
	twin     string
	fromTwin func(th []float64) (out, jac []float64)
}

// Bounds shared by the families (internal units).
const (
	// expMin, expMax bound the exponents α, δ: below 0.02 a power decays
	// so slowly that it is a log curve (ilog2 covers that); above 8 the
	// curve is a step that no noisy epoch can pin down.
	expMin, expMax = 0.02, 8.0
	// lnRateMin, lnRateMax bound ln κ: a time scale 1/κ from e^-12 to
	// e^14 epochs, far beyond any run on either side.
	lnRateMin, lnRateMax = -14.0, 12.0
	// big stands for "unbounded" in a box.
	big = 1e12
)

// families is the ensemble, in the order of the paper's Table 1.
var families = []family{
	pow3, logPower, pow4, mmf, exp4, janoschek, weibull, ilog2,
}

// pow3: u = c − a·x^(−α).
var pow3 = family{
	name: "pow3", prior: 1,
	paperNames: []string{"c", "a", "alpha"},
	lo:         []float64{-big, 0, expMin},
	hi:         []float64{big, big, expMax},
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		c, a, al := th[0], th[1], th[2]
		p := math.Exp(-al * lx)
		if g != nil {
			g[0], g[1], g[2] = 1, -p, a*p*lx
		}
		return c - a*p
	},
	plateau: offsetPlateau,
	starts: func(d *dataset, try func([]float64, float64)) {
		for _, al := range []float64{0.1, 0.25, 0.5, 0.8, 1.2, 2, 3.5} {
			c, a, rss, ok := d.offsetFit(func(x, lx float64) float64 { return math.Exp(-al * lx) })
			if ok {
				try([]float64{c, a, al}, rss)
			}
		}
	},
	paper: func(th []float64) []float64 { return []float64{th[0], th[1], th[2]} },
}

// logPower: u = a / (1 + (x/e^b)^c), rising for c < 0, plateau a.
var logPower = family{
	name: "log power", prior: 1,
	paperNames: []string{"a", "b", "c"},
	lo:         []float64{0, lnRateMin, -expMax},
	hi:         []float64{big, lnRateMax, -expMin},
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		a, b, c := th[0], th[1], th[2]
		q := math.Exp(c * (lx - b))
		h := 1 / (1 + q)
		if g != nil {
			g[0] = h
			g[1] = a * c * q * h * h
			g[2] = -a * (lx - b) * q * h * h
		}
		return a * h
	},
	plateau: func(th []float64, g []float64) float64 {
		if g != nil {
			g[0], g[1], g[2] = 1, 0, 0
		}
		return th[0]
	},
	starts: func(d *dataset, try func([]float64, float64)) {
		for _, tau := range d.timeScales() {
			b := math.Log(tau)
			for _, c := range []float64{-0.4, -1, -2.5} {
				a, rss, ok := d.scaleFit(func(x, lx float64) float64 { return 1 / (1 + math.Exp(c*(lx-b))) })
				if ok {
					try([]float64{a, b, c}, rss)
				}
			}
		}
	},
	paper: func(th []float64) []float64 { return []float64{th[0], th[1], th[2]} },
}

// pow4: u = c − (a·x + b)^(−α), fitted as c − A·(x + s)^(−α) with
// A = a^(−α) and s = b/a, a pow3 with a shifted origin; s > −1 keeps
// a·x + b > 0 from the first epoch on.
var pow4 = family{
	name: "pow4", prior: 1,
	paperNames: []string{"c", "a", "b", "alpha"},
	lo:         []float64{-big, 0, -0.999, expMin},
	hi:         []float64{big, big, 1e6, expMax},
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		c, A, s, al := th[0], th[1], th[2], th[3]
		z := x + s
		lz := math.Log(z)
		p := math.Exp(-al * lz)
		if g != nil {
			g[0], g[1], g[2], g[3] = 1, -p, A*al*p/z, A*p*lz
		}
		return c - A*p
	},
	plateau: offsetPlateau,
	starts: func(d *dataset, try func([]float64, float64)) {
		for _, s := range []float64{0, 2, 8, 30} {
			for _, al := range []float64{0.2, 0.5, 1, 2, 4} {
				c, A, rss, ok := d.offsetFit(func(x, lx float64) float64 { return math.Pow(x+s, -al) })
				if ok {
					try([]float64{c, A, s, al}, rss)
				}
			}
		}
	},
	paper: func(th []float64) []float64 {
		A, s, al := th[1], th[2], th[3]
		a := math.Pow(A, -1/al)
		return []float64{th[0], a, s * a, al}
	},
}

// The three saturating families are fitted in (α, D, ln κ, δ) with
// D = α − β ≥ 0, so that the box keeps them rising.
var (
	saturatingNames = []string{"alpha", "beta", "kappa", "delta"}
	saturatingLo    = []float64{-big, 0, lnRateMin, expMin}
	saturatingHi    = []float64{big, big, lnRateMax, expMax}
)

// mmf (Morgan–Mercer–Flodin): u = α − (α − β) / (1 + (κx)^δ).
var mmf = family{
	name: "MMF", prior: 1,
	paperNames: saturatingNames, lo: saturatingLo, hi: saturatingHi,
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		al, D, lk, de := th[0], th[1], th[2], th[3]
		lkx := lk + lx
		q := math.Exp(de * lkx)
		h := 1 / (1 + q)
		if g != nil {
			d := D * h * h * q
			g[0], g[1], g[2], g[3] = 1, -h, d*de, d*lkx
		}
		return al - D*h
	},
	plateau: offsetPlateau,
	starts: func(d *dataset, try func([]float64, float64)) {
		saturating(d, try, func(lkx, de float64) float64 { return 1 / (1 + math.Exp(de*lkx)) })
	},
	paper: saturatingPaper,
}

// exp4: u = c − e^(−a·x^α + b).
var exp4 = family{
	name: "exp4", prior: 1,
	paperNames: []string{"c", "a", "b", "alpha"},
	// internal: c, ln a, b, α
	lo: []float64{-big, lnRateMin, -60, expMin},
	hi: []float64{big, lnRateMax, 60, expMax},
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		c, la, b, al := th[0], th[1], th[2], th[3]
		t := math.Exp(la + al*lx) // a·x^α
		e := math.Exp(b - t)
		if g != nil {
			g[0], g[1], g[2], g[3] = 1, t*e, -e, t*lx*e
		}
		return c - e
	},
	plateau: offsetPlateau,
	starts: func(d *dataset, try func([]float64, float64)) {
		for _, tau := range d.timeScales() {
			for _, al := range []float64{0.3, 0.6, 1} {
				la := -al * math.Log(tau) // a·x^α = (x/τ)^α
				c, B, rss, ok := d.offsetFit(func(x, lx float64) float64 { return math.Exp(-math.Exp(la + al*lx)) })
				if ok {
					try([]float64{c, la, math.Log(math.Max(B, 1e-26)), al}, rss)
				}
			}
		}
	},
	paper: func(th []float64) []float64 { return []float64{th[0], math.Exp(th[1]), th[2], th[3]} },
}

// janoschek: u = α − (α − β)·e^(−κ·x^δ).
var janoschek = family{
	name: "Janoschek", prior: 0.5,
	paperNames: saturatingNames, lo: saturatingLo, hi: saturatingHi,
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		al, D, lk, de := th[0], th[1], th[2], th[3]
		t := math.Exp(lk + de*lx) // κ·x^δ
		e := math.Exp(-t)
		if g != nil {
			d := D * e * t
			g[0], g[1], g[2], g[3] = 1, -e, d, d*lx
		}
		return al - D*e
	},
	plateau: offsetPlateau,
	starts: func(d *dataset, try func([]float64, float64)) {
		// κ·x^δ = (x/τ)^δ: ln κ = −δ·ln τ, so the grid is Weibull's.
		saturating(d, func(th []float64, rss float64) {
			th[2] *= th[3]
			try(th, rss)
		}, func(lkx, de float64) float64 { return math.Exp(-math.Exp(de * lkx)) })
	},
	paper: saturatingPaper,
	twin:  "Weibull",
	// κ_J·x^δ = (κ_W·x)^δ: ln κ_J = δ·ln κ_W.
	fromTwin: func(th []float64) ([]float64, []float64) {
		out := []float64{th[0], th[1], th[3] * th[2], th[3]}
		jac := []float64{
			1, 0, 0, 0,
			0, 1, 0, 0,
			0, 0, th[3], th[2],
			0, 0, 0, 1,
		}
		return out, jac
	},
}

// weibull: u = α − (α − β)·e^(−(κx)^δ).
var weibull = family{
	name: "Weibull", prior: 0.5,
	paperNames: saturatingNames, lo: saturatingLo, hi: saturatingHi,
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		al, D, lk, de := th[0], th[1], th[2], th[3]
		lkx := lk + lx
		t := math.Exp(de * lkx) // (κx)^δ
		e := math.Exp(-t)
		if g != nil {
			d := D * e * t
			g[0], g[1], g[2], g[3] = 1, -e, d*de, d*lkx
		}
		return al - D*e
	},
	plateau: offsetPlateau,
	starts: func(d *dataset, try func([]float64, float64)) {
		saturating(d, try, func(lkx, de float64) float64 { return math.Exp(-math.Exp(de * lkx)) })
	},
	paper: saturatingPaper,
}

// ilog2: u = c − a / ln x, evaluated at x + 1 as the authors' group's
// public implementation does, since ln 1 = 0 at the first epoch. Linear in
// its parameters, so the grid is a single exact solve.
var ilog2 = family{
	name: "ilog2", prior: 1,
	paperNames: []string{"c", "a"},
	lo:         []float64{-big, 0},
	hi:         []float64{big, big},
	eval: func(th []float64, x, lx float64, g []float64) float64 {
		r := 1 / math.Log1p(x)
		if g != nil {
			g[0], g[1] = 1, -r
		}
		return th[0] - th[1]*r
	},
	plateau: offsetPlateau,
	starts: func(d *dataset, try func([]float64, float64)) {
		c, a, rss, ok := d.offsetFit(func(x, lx float64) float64 { return 1 / math.Log1p(x) })
		if ok {
			try([]float64{c, a}, rss)
		}
	},
	paper: func(th []float64) []float64 { return []float64{th[0], th[1]} },
}

// offsetPlateau is the plateau of a family whose first parameter is its
// limit (c or α).
func offsetPlateau(th []float64, g []float64) float64 {
	if g != nil {
		clear(g)
		g[0] = 1
	}
	return th[0]
}

// saturating offers the starts of the families α − (α − β)·h(κx, δ): a grid
// of time scales τ = 1/κ and shapes δ, with α and β solved exactly.
func saturating(d *dataset, try func([]float64, float64), h func(lkx, de float64) float64) {
	for _, tau := range d.timeScales() {
		lk := -math.Log(tau)
		for _, de := range []float64{0.5, 1, 2} {
			al, amb, rss, ok := d.offsetFit(func(x, lx float64) float64 { return h(lk+lx, de) })
			if ok {
				try([]float64{al, amb, lk, de}, rss)
			}
		}
	}
}

// saturatingPaper converts (α, D = α − β, ln κ, δ) to (α, β, κ, δ).
func saturatingPaper(th []float64) []float64 {
	return []float64{th[0], th[0] - th[1], math.Exp(th[2]), th[3]}
}
