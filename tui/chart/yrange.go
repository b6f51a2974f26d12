package chart

import "math"

// The y range of the main chart covers every value shown, except that the
// first few epochs may not stretch it far beyond the rest: a first epoch
// near the loss of a uniform guess (−ln(1/10) ≈ 2.30 for ten classes, the
// cross-entropy at a random start; common practice) would otherwise
// squash a whole run into a few rows. Values left out are marked with an
// arrow at the edge (offMark).
const (
	// earlyEpochsMax is how many leading epochs may be left off the
	// scale: the steep start from random weights rarely lasts longer
	// (common practice; our judgement, no source).
	earlyEpochsMax = 3
	// earlyRoom is how far, in spans of the later values, the early ones
	// may stretch the range beyond them: the later values keep at least
	// 1/(1+1.5) = 40% of the plot height, and an ordinary falling curve
	// (each epoch a little lower) keeps its first epochs on the scale.
	earlyRoom = 1.5
)

// earlyEpochs is how many leading rows of n may be left off the scale:
// none in a run too short to tell the warm-up from the rest, then one
// row for every three, up to earlyEpochsMax.
func earlyEpochs(n int) int {
	return min(earlyEpochsMax, max(n-1, 0)/3)
}

// YRange gathers the plotted values of the main chart's curves, row by
// row, and gives the range to show. The zero YRange must be Reset.
type YRange struct {
	skip       int     // leading rows that may be left off the scale
	lo, hi     float64 // every finite value
	clo, chi   float64 // the values from row skip on
	cutLo, cut bool    // limits left values out below / above
}

// Reset starts a range for n rows.
func (r *YRange) Reset(n int) {
	*r = YRange{skip: earlyEpochs(n), lo: math.Inf(1), hi: math.Inf(-1), clo: math.Inf(1), chi: math.Inf(-1)}
}

// Add takes the finite value v of row i.
func (r *YRange) Add(i int, v float64) {
	// Plain comparisons: v is finite, and math.Min's NaN and signed-zero
	// cases cost a tenth of a rebuild on 30,000 values.
	if v < r.lo {
		r.lo = v
	}
	if v > r.hi {
		r.hi = v
	}
	if i >= r.skip {
		if v < r.clo {
			r.clo = v
		}
		if v > r.chi {
			r.chi = v
		}
	}
}

// Limits returns the range to show, before headroom: all values when the
// early ones stay within earlyRoom spans of the later ones, else the later
// values and that much room beyond them. Empty (lo > hi) when no value
// came.
func (r *YRange) Limits() (lo, hi float64) {
	lo, hi = r.lo, r.hi
	r.cutLo, r.cut = false, false
	if !(r.chi >= r.clo) {
		return lo, hi // no later values: nothing to protect
	}
	span := r.chi - r.clo
	if span <= 0 {
		// A flat rest: give it the room a flat chart gets (see YAxis).
		span = flatRoom(r.chi)
	}
	room := earlyRoom * span
	if top := r.chi + room; hi > top {
		hi, r.cut = top, true
	}
	if bottom := r.clo - room; lo < bottom {
		lo, r.cutLo = bottom, true
	}
	return lo, hi
}

// yHeadroom is the share of the y span added above and below the data, so
// the extreme points do not sit on the frame.
const yHeadroom = 0.04

// flatRoom is how far a flat range at v is widened each way on a linear
// axis: a tenth of the value, at least 0.05, so a constant error or loss
// sits mid-plot with round ticks around it.
func flatRoom(v float64) float64 { return math.Max(math.Abs(v)*0.1, 0.05) }

// YAxis returns the y axis' range for values spanning [lo, hi] (plotted
// units, lo ≤ hi): a flat range widened by flatRoom (half a decade each
// way on a log axis), then yHeadroom of the span added each way, except
// below 0 when no value is negative on a linear axis: errors and losses
// are not negative, so 0 stays the floor.
func YAxis(lo, hi float64, logY bool) (ymin, ymax float64) {
	if hi == lo {
		d := flatRoom(lo)
		if logY {
			d = 0.5
		}
		lo, hi = lo-d, hi+d
	}
	pad := (hi - lo) * yHeadroom
	ymin, ymax = lo-pad, hi+pad
	if !logY && lo >= 0 && ymin < 0 {
		ymin = 0
	}
	return ymin, ymax
}

// Skip is how many leading rows Limits may leave off the scale.
func (r *YRange) Skip() int { return r.skip }

// Clipped reports whether the last Limits left values out.
func (r *YRange) Clipped() bool { return r.cut || r.cutLo }

// offScale marks each value outside the y range with an arrow at the edge
// of its column, in its series' colour, and writes the most extreme value
// each way beside its arrow when the cells there are free: the reader sees
// that the point exists, where, and how far off it is.
func (c *Chart) offScale(spec *Spec, box plotBox, pm plotMap) {
	g := &c.grid
	top, bottom := -1, -1 // the most extreme mark each way
	for i, o := range spec.Off {
		cx := pm.dotX(o.X) / 2
		if cx < 0 || cx >= box.pw {
			continue
		}
		if o.Up {
			g.Set(box.x0+cx, box.y0, glyphAbove, o.Ink)
			if top < 0 || o.Y > spec.Off[top].Y {
				top = i
			}
		} else {
			g.Set(box.x0+cx, box.y0+box.ph-1, glyphBelow, o.Ink)
			if bottom < 0 || o.Y < spec.Off[bottom].Y {
				bottom = i
			}
		}
	}
	for _, i := range [2]int{top, bottom} {
		if i < 0 {
			continue
		}
		o := spec.Off[i]
		cy := box.y0
		if !o.Up {
			cy = box.y0 + box.ph - 1
		}
		cx := box.x0 + pm.dotX(o.X)/2
		text := spec.valueText(o.Y)
		n := len([]rune(text))
		// Right beside the arrow, else a few cells on past the curve that
		// leaves it, else on its left.
		for _, x := range [...]int{cx + 1, cx + 2, cx + 3, cx - n} {
			if c.blank(x, x+n, cy, box) {
				g.Text(x, cy, text, o.Ink)
				break
			}
		}
	}
}

// blank reports whether the cells [x0, x1) of row y are empty and inside
// the plot.
func (c *Chart) blank(x0, x1, y int, box plotBox) bool {
	if x0 < box.x0 || x1 > box.x0+box.pw {
		return false
	}
	for x := x0; x < x1; x++ {
		if r, _ := c.grid.at(x, y); r != ' ' {
			return false
		}
	}
	return true
}

// valueText prints a plotted value in the axis' units.
func (spec *Spec) valueText(y float64) string {
	v := y
	if spec.LogY {
		v = math.Pow(10, y)
	}
	if spec.Percent {
		return FormatNum(v*100, 3) + "%"
	}
	return FormatNum(v, 3)
}
