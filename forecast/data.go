package forecast

import (
	"fmt"
	"math"
	"strconv"

	"github.com/fitgap/fitgap/diagnose"
	"gonum.org/v1/gonum/stat/distuv"
)

// SizePoint is one run of a series that differs in training-set size: the
// number of training examples and the best validation value the run
// reached (lower is better).
type SizePoint struct {
	Size  float64 `json:"size"`
	Value float64 `json:"value"`
}

// DataOptions tune a data forecast; the zero value means the defaults.
type DataOptions struct {
	// Target is a validation value to reach; 0 asks for none.
	Target float64
	// Optimal is the optimal (Bayes) error, when the user gave it: the
	// floor is set beside it.
	Optimal diagnose.Num
	// Tolerance is the gap above the optimal error that counts as "well
	// above" (the diagnosis's tolerance); 0 means 2 points for error rates
	// (diagnose.DefaultTolerance) and a tenth of the optimal otherwise.
	Tolerance float64
	// Fraction says the values are error rates in [0, 1].
	Fraction bool
	// Level is the central probability of every interval; 0 means 0.8.
	Level float64
}

// MinSizes is the fewest distinct training-set sizes a data forecast
// fits: one more than the three parameters of the power law, so that
// there is a residual to measure the fit by.
const MinSizes = 4

// DataForecast is what more data would buy, from the power law
// ε(m) = a·m^(−b) + c fitted to the best validation values of runs that
// differ in training-set size m (Hestness et al. 2017; Rosenfeld et al.,
// ICLR 2020). Intervals are at Level, from the fit's covariance with a
// Student-t quantile for the residual degrees of freedom.
type DataForecast struct {
	Status   Status   `json:"status"`           // whether the law was fitted, and if not, why
	Reason   string   `json:"reason,omitempty"` // why there is no forecast; absent when there is one
	Fraction bool     `json:"fraction"`         // the values are error rates (fractions)
	Level    float64  `json:"level"`            // the probability of every interval (0.8)
	Runs     int      `json:"runs"`             // the runs fitted: the best run of each size
	Sizes    int      `json:"sizes"`            // their distinct training-set sizes
	Largest  float64  `json:"largest"`          // the largest training-set size fitted
	A        Interval `json:"a"`                // the law's a, with its interval
	B        Interval `json:"b"`                // the law's exponent b
	Floor    Interval `json:"floor"`            // the law's c: the floor more data approaches
	// the best value a run on twice the largest size would reach (the interval holds a new run, its scatter included)
	Doubled Interval     `json:"doubled"`
	Gain    Interval     `json:"gain"`           // the expected change of the law from the largest size to twice it (negative is better)
	Need    *DataNeed    `json:"need,omitempty"` // the size a target value needs, when a target is given
	Optimal diagnose.Num `json:"optimal"`        // the optimal error given; null when none
	// the floor's interval lies more than the tolerance above the optimal error: the model family, not the amount of data, limits the error
	FloorAbove bool `json:"floor_above_optimal"`

	law      powerLaw
	cov      []float64 // (JᵀJ)⁻¹ of the law's parameters
	s2, t    float64   // residual variance, Student-t quantile at Level
	fraction bool
}

// At returns the best value a new run on m training examples would reach:
// the law's value and the interval that holds such a run (the law's
// uncertainty and the runs' scatter about it). ok is false when there is
// no forecast.
func (f *DataForecast) At(m float64) (iv Interval, ok bool) {
	if f.Status != OK || f.cov == nil || !(m >= 1) {
		return Interval{}, false
	}
	g := make([]float64, 3)
	f.law.grad(m, g)
	sd := math.Sqrt(math.Max(quadForm(f.cov, g), 0)*f.s2 + f.s2)
	v := f.law.at(m)
	iv = Interval{Value: v, Lo: v - f.t*sd, Hi: v + f.t*sd}
	if f.fraction {
		iv.Lo = math.Max(iv.Lo, 0)
	}
	return iv, true
}

// DataNeed is the training-set size that reaches a target value.
type DataNeed struct {
	Target    float64  `json:"target"`    // the value aimed at
	Reachable bool     `json:"reachable"` // false when the floor itself is at or above the target
	Size      Interval `json:"size"`      // the training-set size needed; hi null when the floor's interval reaches the target
}

// powerLaw is ε(m) = a·m^(−b) + c.
type powerLaw struct{ a, b, c float64 }

func (p powerLaw) at(m float64) float64 { return p.a*math.Pow(m, -p.b) + p.c }

// grad stores ∂ε/∂(a, b, c) at m in g.
func (p powerLaw) grad(m float64, g []float64) {
	t := math.Pow(m, -p.b)
	g[0], g[1], g[2] = t, -p.a*t*math.Log(m), 1
}

// Bounds of the exponent b: the published exponents of the error against
// the data lie between 0.07 and 0.35 (Hestness et al. 2017, as summarised
// in reviews of the paper); the search allows from 0.005 to 4, far on
// either side.
const bMin, bMax = 0.005, 4.0

// Data fits the power law to runs of different training-set sizes and
// answers what more data would buy. It never panics; a series it cannot
// fit gives a DataForecast whose Status says why.
func Data(pts []SizePoint, o DataOptions) DataForecast {
	level := o.Level
	if !(level > 0 && level < 1) {
		level = DefaultLevel
	}
	f := DataForecast{Fraction: o.Fraction, Level: level, Optimal: o.Optimal}
	m := make([]float64, 0, len(pts))
	y := make([]float64, 0, len(pts))
	sizes := map[float64]bool{}
	for i, p := range pts {
		if !(p.Size >= 1) || !finite(p.Size) || !finite(p.Value) {
			return f.refuse(BadInput, fmt.Sprintf("no data forecast: run %d has size %v and value %v; want a size of at least 1 and a finite value",
				i+1, p.Size, p.Value))
		}
		m = append(m, p.Size)
		y = append(y, p.Value)
		sizes[p.Size] = true
		f.Largest = math.Max(f.Largest, p.Size)
	}
	f.Runs, f.Sizes = len(m), len(sizes)
	if f.Sizes < MinSizes {
		return f.refuse(TooFew, fmt.Sprintf("no data forecast: %s, need %d", plural(f.Sizes, "training-set size"), MinSizes))
	}
	law, rss := fitPowerLaw(m, y)
	dof := len(m) - 3
	if dof < 1 {
		return f.refuse(TooFew, fmt.Sprintf("no data forecast: %d runs leave no residual to judge the fit by", len(m)))
	}
	s2 := rss / float64(dof)
	cov, ok := powerLawCovariance(law, m)
	if !ok {
		return f.refuse(NoFit, "no data forecast: the power law is not determined by these runs")
	}
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile((1 + level) / 2)
	g := make([]float64, 3)
	se := func(g []float64) float64 { return math.Sqrt(math.Max(quadForm(cov, g), 0) * s2) }
	bound := func(v, sd float64) Interval { return Interval{Value: v, Lo: v - t*sd, Hi: v + t*sd} }
	f.Status = OK
	f.law, f.cov, f.s2, f.t, f.fraction = law, cov, s2, t, o.Fraction
	f.A = bound(law.a, math.Sqrt(math.Max(cov[0], 0)*s2))
	f.B = bound(law.b, math.Sqrt(math.Max(cov[4], 0)*s2))
	f.Floor = bound(law.c, math.Sqrt(math.Max(cov[8], 0)*s2))
	f.Floor.Lo = math.Max(f.Floor.Lo, 0)
	// Doubling the largest size: the law there, and the change.
	two := 2 * f.Largest
	f.Doubled, _ = f.At(two)
	law.grad(two, g)
	g2 := make([]float64, 3)
	law.grad(f.Largest, g2)
	for i := range g {
		g[i] -= g2[i]
	}
	f.Gain = bound(law.at(two)-law.at(f.Largest), se(g))
	f.Gain.Hi = math.Min(f.Gain.Hi, 0) // the law never rises with m
	if o.Target > 0 {
		f.Need = need(law, cov, s2, t, o.Target, f.Floor)
		// The law above the target at the largest size tried says more
		// data is needed than that, whatever the interval's low end.
		if f.Need.Reachable && law.at(f.Largest) > o.Target {
			f.Need.Size.Lo = math.Max(f.Need.Size.Lo, f.Largest)
		}
	}
	if o.Optimal.OK {
		tol := o.Tolerance
		if !(tol > 0) {
			tol = diagnose.DefaultTolerance
			if !o.Fraction {
				tol = diagnose.DefaultRelTolerance * math.Abs(o.Optimal.V)
			}
		}
		f.FloorAbove = f.Floor.Lo > o.Optimal.V+tol
	}
	return f
}

func (f DataForecast) refuse(s Status, reason string) DataForecast {
	f.Status, f.Reason = s, reason
	return f
}

// need returns the size at which the law reaches target: m = (a/(target −
// c))^(1/b), with the interval of its logarithm by the delta method.
func need(law powerLaw, cov []float64, s2, t, target float64, floor Interval) *DataNeed {
	n := &DataNeed{Target: target}
	if target <= law.c || law.a <= 0 {
		n.Size = Interval{Value: math.Inf(1), Lo: math.Inf(1), Hi: math.Inf(1)}
		return n
	}
	n.Reachable = true
	lm := (math.Log(law.a) - math.Log(target-law.c)) / law.b
	g := []float64{1 / (law.a * law.b), -lm / law.b, 1 / (law.b * (target - law.c))}
	sd := math.Sqrt(math.Max(quadForm(cov, g), 0) * s2)
	n.Size = Interval{Value: math.Exp(lm), Lo: math.Exp(lm - t*sd), Hi: math.Exp(lm + t*sd)}
	if target <= floor.Hi {
		n.Size.Hi = math.Inf(1)
	}
	return n
}

// fitPowerLaw fits ε(m) = a·m^(−b) + c by least squares with a, c ≥ 0:
// for a fixed b the law is linear in a and c, so the fit is a search over
// b alone on the profile of the residual sum of squares (variable
// projection), a log-spaced grid refined by golden-section search.
func fitPowerLaw(m, y []float64) (powerLaw, float64) {
	d := dataset{x: m, lx: logs(m), y: y, w: ones(len(m))}
	solve := func(b float64) (powerLaw, float64) {
		c, a, rss, _ := d.offsetFit(func(x, lx float64) float64 { return -math.Exp(-b * lx) })
		// offsetFit's form is c − a·φ with a ≥ 0; with φ = −m^(−b) that is
		// c + a·m^(−b).
		if c < 0 { // a floor below zero: hold it at zero and refit a
			c = 0
			var szz, szy float64
			for i := range m {
				z := math.Pow(m[i], -b)
				szz += z * z
				szy += z * y[i]
			}
			a = math.Max(0, szy/szz)
			rss = 0
			for i := range m {
				r := y[i] - a*math.Pow(m[i], -b)
				rss += r * r
			}
		}
		return powerLaw{a, b, c}, rss
	}
	const grid = 60
	best, bestRSS, at := powerLaw{}, math.Inf(1), 0
	for i := 0; i < grid; i++ {
		b := bMin * math.Pow(bMax/bMin, float64(i)/(grid-1))
		if p, r := solve(b); r < bestRSS {
			best, bestRSS, at = p, r, i
		}
	}
	// Golden-section search between the grid neighbours of the best b.
	lo := bMin * math.Pow(bMax/bMin, float64(max(at-1, 0))/(grid-1))
	hi := bMin * math.Pow(bMax/bMin, float64(min(at+1, grid-1))/(grid-1))
	const phi = 0.6180339887498949
	for i := 0; i < 60 && hi-lo > 1e-12*hi; i++ {
		b1, b2 := hi-phi*(hi-lo), lo+phi*(hi-lo)
		_, r1 := solve(b1)
		_, r2 := solve(b2)
		if r1 < r2 {
			hi = b2
		} else {
			lo = b1
		}
	}
	if p, r := solve((lo + hi) / 2); r < bestRSS {
		best, bestRSS = p, r
	}
	return best, bestRSS
}

// powerLawCovariance returns (JᵀJ)⁻¹ of the law at the runs (3×3,
// row-major), the covariance per unit of residual variance.
func powerLawCovariance(law powerLaw, m []float64) ([]float64, bool) {
	s := newSolver(3)
	g := make([]float64, 3)
	for _, x := range m {
		law.grad(x, g)
		for a := 0; a < 3; a++ {
			for b := 0; b <= a; b++ {
				s.ata[a*3+b] += g[a] * g[b]
			}
		}
	}
	cov := make([]float64, 9)
	active := []bool{false, false, law.c <= 0}
	return cov, s.covariance(cov, active)
}

func quadForm(cov, g []float64) float64 {
	p := len(g)
	var v float64
	for a := 0; a < p; a++ {
		for b := 0; b < p; b++ {
			v += g[a] * cov[a*p+b] * g[b]
		}
	}
	return v
}

func logs(v []float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = math.Log(x)
	}
	return out
}

func ones(n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = 1
	}
	return out
}

// Phrase says the data forecast in one line.
func (f *DataForecast) Phrase() string {
	if f.Status != OK {
		return f.Reason
	}
	v := func(x float64) string { return formatValue(x, f.Fraction) }
	bare := func(x float64) string {
		if f.Fraction {
			return diagnose.Percent(x)
		}
		return strconv.FormatFloat(x, 'g', 4, 64)
	}
	s := "twice the data (" + formatSize(2*f.Largest) + "): " + formatChange(f.Gain.Value, f.Fraction) +
		" [" + bare(f.Gain.Lo) + ", " + bare(f.Gain.Hi) + "] · floor " + v(f.Floor.Value) +
		" [" + bare(f.Floor.Lo) + ", " + bare(f.Floor.Hi) + "]"
	if f.Optimal.OK {
		if f.FloorAbove {
			s += ", well above the optimal " + v(f.Optimal.V) + ": the model, not the data, is the limit"
		} else {
			s += " beside the optimal " + v(f.Optimal.V)
		}
	}
	if n := f.Need; n != nil {
		switch {
		case !n.Reachable:
			s += " · " + v(n.Target) + " not reachable: the floor is above it"
		case math.IsInf(n.Size.Hi, 1):
			s += " · " + v(n.Target) + " needs " + formatSize(n.Size.Value) + " examples (at least " + formatSize(n.Size.Lo) + "; maybe never)"
		default:
			s += " · " + v(n.Target) + " needs " + formatSize(n.Size.Value) + " examples [" + formatSize(n.Size.Lo) + ", " + formatSize(n.Size.Hi) + "]"
		}
	}
	return s + " · " + strconv.Itoa(int(math.Round(f.Level*100))) + "% intervals"
}

// formatSize writes a number of examples with three significant digits
// (12,300 → "12.3k").
func formatSize(m float64) string {
	switch {
	case math.IsInf(m, 1):
		return "∞"
	case m >= 1e9:
		return strconv.FormatFloat(m/1e9, 'g', 3, 64) + "G"
	case m >= 1e6:
		return strconv.FormatFloat(m/1e6, 'g', 3, 64) + "M"
	case m >= 1e4:
		return strconv.FormatFloat(m/1e3, 'g', 3, 64) + "k"
	}
	return strconv.FormatFloat(math.Round(m), 'f', 0, 64)
}
