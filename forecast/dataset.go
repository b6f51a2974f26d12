package forecast

import "math"

// dataset is a curve as the fit sees it: the rising score u at epochs x
// (counted from the first fitted epoch, 1-based), merged into bins.
//
// Binning is what makes a long curve fit in a fraction of a millisecond.
// Curves of up to maxUnbinned points are fitted point by point. Longer ones
// keep their early epochs, where the curve bends, single; later ones are
// merged while a bin spans less than binRel of its first epoch, so a run
// of n epochs has about 6 + 6·ln(n/6) bins (30 for 300, 70 for 10 000).
// Least squares on bin means weighted by their counts is least squares on
// the raw points up to the curve's bend inside a bin: the raw residual sum
// of squares is the binned one plus the spread inside the bins (within),
// which does not depend on the parameters. TestDataset_BinningKeepsForecast
// bounds what the bend costs.
type dataset struct {
	x, lx, y, w []float64 // bin mean epoch, its log, mean score, count
	n           int       // raw points
	within      float64   // Σ (u − bin mean)² over raw points
	sumw        float64
	xmax        float64
	// rawX, rawY are the unbinned points, for residual checks.
	rawX, rawY []float64
	// plateauMax bounds every family's plateau score (its parameter 0):
	// 1 when the metric cannot go below 0 (an error rate, a loss), so
	// that no fit extrapolates a falling line through zero.
	plateauMax float64
}

// bounds returns the box of parameter a of f on this dataset.
func (d *dataset) bounds(f *family, a int) (lo, hi float64) {
	lo, hi = f.lo[a], f.hi[a]
	if a == 0 {
		hi = math.Min(hi, d.plateauMax)
	}
	return lo, hi
}

// project moves th into the box of f.
func (d *dataset) project(f *family, th []float64) {
	for a := range th {
		lo, hi := d.bounds(f, a)
		th[a] = clamp(th[a], lo, hi)
	}
}

// binRel is the relative width of a bin: a sixth of its first epoch, where
// a falling power law bends by a fraction of a percent of its drop (design
// choice; TestDataset_BinningKeepsForecast). maxUnbinned is the longest
// curve fitted point by point: short curves are cheap, and their fits
// (the exact-recovery tests among them) are then plain least squares.
const (
	binRel      = 1.0 / 6
	maxUnbinned = 64
)

// reset bins the points (x rising, ≥ 1) into d, reusing its slices;
// curves of up to unbinned points stay point by point.
func (d *dataset) reset(x, u []float64, unbinned int) {
	d.x, d.lx, d.y, d.w = d.x[:0], d.lx[:0], d.y[:0], d.w[:0]
	d.n, d.within, d.sumw = len(x), 0, 0
	d.rawX, d.rawY = x, u
	d.plateauMax = math.Inf(1)
	for i := 0; i < len(x); {
		j := i + 1
		for len(x) > unbinned && j < len(x) && x[j]-x[i] < math.Max(1, binRel*x[i]) {
			j++
		}
		var sx, su float64
		for k := i; k < j; k++ {
			sx += x[k]
			su += u[k]
		}
		k := float64(j - i)
		mx, mu := sx/k, su/k
		for m := i; m < j; m++ {
			d.within += (u[m] - mu) * (u[m] - mu)
		}
		d.x = append(d.x, mx)
		d.lx = append(d.lx, math.Log(mx))
		d.y = append(d.y, mu)
		d.w = append(d.w, k)
		d.sumw += k
		i = j
	}
	if len(x) > 0 {
		d.xmax = x[len(x)-1]
	}
}

// timeScales is the grid of time scales (epochs) the starts try: five
// steps from half an epoch to three times the fitted stretch.
func (d *dataset) timeScales() [5]float64 {
	var t [5]float64
	lo, hi := math.Log(0.5), math.Log(3*math.Max(d.xmax, 1))
	for i := range t {
		t[i] = math.Exp(lo + (hi-lo)*float64(i)/4)
	}
	return t
}

// offsetFit solves u ≈ c − a·φ(x) with a ≥ 0 by weighted least squares:
// the linear part of a family once its nonlinear parameters are fixed. It
// returns the weighted residual sum of squares from the same sums, so a
// start costs one pass over the bins.
func (d *dataset) offsetFit(phi func(x, lx float64) float64) (c, a, rss float64, ok bool) {
	var sw, sz, sy, szz, szy, syy float64
	for i := range d.x {
		z, w, y := phi(d.x[i], d.lx[i]), d.w[i], d.y[i]
		sw += w
		sz += w * z
		sy += w * y
		szz += w * z * z
		szy += w * z * y
		syy += w * y * y
	}
	if sw == 0 {
		return 0, 0, 0, false
	}
	mz, my := sz/sw, sy/sw
	vzz, vzy, vyy := szz-sz*mz, szy-sz*my, syy-sy*my
	if vzz > 1e-300 {
		a = -vzy / vzz
	}
	rss = vyy
	if a > 0 {
		rss = vyy - a*a*vzz
	} else {
		a = 0
	}
	c = my + a*mz
	return c, a, math.Max(rss, 0), finite(c) && finite(a) && finite(rss)
}

// scaleFit solves u ≈ a·φ(x) with a ≥ 0, with its residual sum of squares.
func (d *dataset) scaleFit(phi func(x, lx float64) float64) (a, rss float64, ok bool) {
	var szz, szy, syy float64
	for i := range d.x {
		z := phi(d.x[i], d.lx[i])
		szz += d.w[i] * z * z
		szy += d.w[i] * z * d.y[i]
		syy += d.w[i] * d.y[i] * d.y[i]
	}
	if !(szz > 0) {
		return 0, 0, false
	}
	a = math.Max(0, szy/szz)
	rss = math.Max(syy-a*szy, 0) // at the optimum Σw(y − aφ)² = Σwy² − a·Σwφy
	return a, rss, finite(a) && finite(rss)
}

// rss is the weighted residual sum of squares of the bins under f at th,
// or +Inf when the curve is not finite at some bin.
func (d *dataset) rss(f *family, th []float64) float64 {
	var s float64
	for i := range d.x {
		r := d.y[i] - f.eval(th, d.x[i], d.lx[i], nil)
		s += d.w[i] * r * r
	}
	if !finite(s) {
		return math.Inf(1)
	}
	return s
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
