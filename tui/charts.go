package tui

import (
	"math"
	"strconv"

	"github.com/NimbleMarkets/ntcharts/canvas/runes"
)

// curve is one series of the main chart, already downsampled.
type curve struct {
	label string
	glyph rune // marker drawn on the curve so series differ without colour
	cls   class
	pts   []xy // X in epochs, Y in plotted units (log10 when the axis is logarithmic); NaN Y is a gap
}

// bandSource is the per-step training series drawn as a faint band behind
// the curves: the min and max of the steps under each braille column.
type bandSource struct {
	series *stepSeries
	knots  []xy                  // epoch position → step
	conv   func(float64) float64 // raw value → plotted units; NaN to skip
	label  string                // legend label
}

// chartSpec is everything one frame of the main chart shows.
type chartSpec struct {
	title      string
	curves     []curve // drawn in order: the last wins a shared cell
	band       *bandSource
	xmin, xmax float64
	ymin, ymax float64 // plotted units
	logY       bool
	percent    bool // y values are fractions shown as percent
	best       xy   // best epoch on the validation curve, plotted units
	hasBest    bool
	cursor     float64 // inspected epoch
	hasCursor  bool
	bad        []float64 // epochs with a non-finite value
	off        []offMark // values outside [ymin, ymax], in curve order
}

// offMark is a value the y range leaves out: an early epoch far above the
// rest, kept off the scale so that it does not squash the curves.
type offMark struct {
	x, y float64 // epoch, plotted value
	up   bool    // above the range (else below)
	cls  class   // the series' class
}

// Glyphs of the main chart. They are plain ASCII so that they keep their
// one-column width in every terminal and locale.
const (
	glyphTrain    = 'o'
	glyphVal      = 'x'
	glyphTrainDev = '+'
	glyphBest     = '*'
	glyphBad      = '!'
	// An arrow at the plot's edge marks a value off the scale. Like the
	// box-drawing axes, arrows are one column wide except in terminals
	// set to draw East Asian ambiguous-width characters wide.
	glyphAbove = '↑'
	glyphBelow = '↓'
	// glyphCursor is the inspected epoch's line, on the main chart and in
	// the sparklines.
	glyphCursor = runes.LineVertical
)

// markerSpacing is the distance in columns between two markers of one
// curve when the curve has more points than fit a marker each: close
// enough that a short stretch of curve still shows whose it is.
const markerSpacing = 9

// curveChart draws the main chart into a reused cell grid. It holds only
// scratch memory between frames, never data.
type curveChart struct {
	grid  cells
	mask  []rune  // braille cell per plot cell, all layers merged; 0 when empty
	owner []class // the layer that last put a dot in the cell
	lo    []float64
	hi    []float64
}

// plotBox is the geometry of the plot area inside the chart.
type plotBox struct {
	x0, y0 int // top-left cell of the plot area
	pw, ph int // plot width and height in cells
	yTicks []float64
	yLabel []string
}

// geometry lays out the y labels and the plot area of a w×h chart. ok is
// false when the chart is too small to carry any plot.
func geometry(w, h int, spec *chartSpec) (plotBox, bool) {
	var box plotBox
	box.y0 = 1
	box.ph = h - 3 // title row, x axis, x labels
	if box.ph < 2 || w < 12 {
		return box, false
	}
	n := max(2, min(6, box.ph/3+1))
	scale := 1.0
	if spec.percent {
		scale = 100
	}
	if spec.logY {
		box.yTicks, box.yLabel = logTicks(spec.ymin, spec.ymax, n, scale)
	} else {
		var step float64
		box.yTicks, step = ticks(spec.ymin, spec.ymax, n)
		for _, v := range box.yTicks {
			box.yLabel = append(box.yLabel, formatTick(v*scale, step*scale))
		}
	}
	if spec.percent {
		for i := range box.yLabel {
			box.yLabel[i] += "%"
		}
	}
	yw := 1
	for _, l := range box.yLabel {
		yw = max(yw, len(l))
	}
	yw = min(yw, w/3)
	box.x0 = yw + 1 // labels, then the axis column
	box.pw = w - box.x0
	return box, box.pw >= 4
}

// draw renders the chart at w×h and returns its lines.
func (c *curveChart) draw(w, h int, spec *chartSpec, st *Styles) []string {
	g := &c.grid
	g.reset(w, h)
	if w <= 0 || h <= 0 {
		return nil
	}
	g.text(0, 0, spec.title, clsHeading)
	box, ok := geometry(w, h, spec)
	if !ok {
		return g.lines(st)
	}
	c.legend(spec, ansiLen(spec.title)+2, w)
	pm := newPlotMap(box.pw, box.ph, spec.xmin, spec.xmax, spec.ymin, spec.ymax)

	n := box.pw * box.ph
	if cap(c.mask) < n {
		c.mask = make([]rune, n)
		c.owner = make([]class, n)
	}
	c.mask, c.owner = c.mask[:n], c.owner[:n]
	clear(c.mask)
	clear(c.owner)

	l := newLayer(pm, c.owner)
	if spec.band != nil {
		l.cls = clsSteps
		c.drawBand(spec, box, l)
	}
	for _, cv := range spec.curves {
		l.cls = cv.cls
		l.polyline(cv.pts)
	}
	l.cells(c.mask)

	// Cursor first, so curves and markers stay readable across it.
	curCol := -1
	if spec.hasCursor {
		curCol = pm.dotX(spec.cursor) / 2
	}
	for cy := 0; cy < box.ph; cy++ {
		for cx := 0; cx < box.pw; cx++ {
			i := cy*box.pw + cx
			switch {
			case c.mask[i] != 0:
				g.set(box.x0+cx, box.y0+cy, c.mask[i], c.owner[i])
			case cx == curCol:
				g.set(box.x0+cx, box.y0+cy, glyphCursor, clsCursor)
			}
		}
	}
	for _, cv := range spec.curves {
		c.markers(cv, box, pm)
	}
	c.offScale(spec, box, pm)
	if spec.hasBest && isFinite(spec.best.Y) {
		g.set(box.x0+pm.dotX(spec.best.X)/2, box.y0+clampInt(pm.dotY(spec.best.Y)/4, 0, box.ph-1), glyphBest, clsBest)
	}
	for _, x := range spec.bad {
		g.set(box.x0+pm.dotX(x)/2, box.y0, glyphBad, clsBad)
	}
	c.axes(spec, box, pm, curCol)
	return g.lines(st)
}

// drawBand draws the per-step series as the envelope of its steps: the min
// and the max of the steps under each braille column (min/max downsampling
// keeps the spikes that averaging would hide). Values outside the y range
// are clipped: the range follows the epoch curves, not per-step noise.
func (c *curveChart) drawBand(spec *chartSpec, box plotBox, l *layer) {
	b := spec.band
	W2 := box.pw * 2
	if len(b.knots) < 2 || len(b.series.steps) == 0 {
		return
	}
	if cap(c.lo) < W2 {
		c.lo, c.hi = make([]float64, W2), make([]float64, W2)
	}
	lo, hi := c.lo[:W2], c.hi[:W2]
	xspan := spec.xmax - spec.xmin
	half := 0.5 * xspan / float64(W2-1)
	stepOf := func(x float64) int64 { return int64(math.Ceil(stepAt(b.knots, x) - 1e-9)) }
	// Column col covers the epoch positions [x(col) − half, x(col) + half).
	prev := stepOf(spec.xmin - half)
	for col := 0; col < W2; col++ {
		next := stepOf(spec.xmin + float64(col)*xspan/float64(W2-1) + half)
		i, j := b.series.indexRange(prev, next)
		prev = next
		lo[col], hi[col] = math.NaN(), math.NaN()
		if i >= j {
			continue
		}
		l, h, ok := b.series.minMax(i, j)
		if !ok {
			continue
		}
		l, h = b.conv(l), b.conv(h)
		if !isFinite(l) || !isFinite(h) {
			continue
		}
		if l > h {
			l, h = h, l
		}
		lo[col], hi[col] = l, h
	}
	// The band's edges: the min and the max of each column, each joined to
	// the previous column's, so the per-step spread shows as two thin
	// lines around the epoch curve instead of a block that hides it.
	colX := func(col int) float64 { return spec.xmin + float64(col)*xspan/float64(W2-1) }
	for col := 0; col < W2; col++ {
		if math.IsNaN(lo[col]) {
			continue
		}
		x := colX(col)
		if col > 0 && !math.IsNaN(lo[col-1]) {
			px := colX(col - 1)
			l.segment(xy{px, hi[col-1]}, xy{x, hi[col]})
			l.segment(xy{px, lo[col-1]}, xy{x, lo[col]})
		} else {
			l.point(xy{x, hi[col]})
			l.point(xy{x, lo[col]})
		}
	}
}

// markers puts a curve's glyph on the curve: on every point when the
// points are sparse enough to tell apart, else every markerSpacing columns
// (staggered by class so two curves' markers rarely share a column).
func (c *curveChart) markers(cv curve, box plotBox, pm plotMap) {
	g := &c.grid
	dotX, dotY := pm.dotX, pm.dotY
	finite := 0
	for _, p := range cv.pts {
		if isFinite(p.Y) {
			finite++
		}
	}
	put := func(x, y float64) {
		cx, cy := dotX(x)/2, dotY(y)/4
		if cx >= 0 && cx < box.pw && cy >= 0 && cy < box.ph {
			g.set(box.x0+cx, box.y0+cy, cv.glyph, cv.cls)
		}
	}
	if finite*3 <= box.pw {
		for _, p := range cv.pts {
			if isFinite(p.Y) {
				put(p.X, p.Y)
			}
		}
		return
	}
	off := (int(cv.cls) * 3) % markerSpacing
	k := 0
	for cx := off; cx < box.pw; cx += markerSpacing {
		// The point nearest the middle of the column.
		for k+1 < len(cv.pts) && dotX(cv.pts[k+1].X)/2 <= cx {
			k++
		}
		p := cv.pts[k]
		if dotX(p.X)/2 == cx && isFinite(p.Y) {
			put(p.X, p.Y)
		} else if k+1 < len(cv.pts) && dotX(cv.pts[k+1].X)/2 == cx && isFinite(cv.pts[k+1].Y) {
			put(cv.pts[k+1].X, cv.pts[k+1].Y)
		} else if k+1 < len(cv.pts) && isFinite(p.Y) && isFinite(cv.pts[k+1].Y) && dotX(p.X)/2 < cx {
			// Interpolate along the segment that crosses the column.
			q := cv.pts[k+1]
			x0, x1 := float64(dotX(p.X)), float64(dotX(q.X))
			t := (float64(cx*2) - x0) / (x1 - x0)
			if t >= 0 && t <= 1 {
				put(p.X+t*(q.X-p.X), p.Y+t*(q.Y-p.Y))
			}
		}
	}
}

// axes draws the y labels and axis, the x axis with epoch ticks, and the
// cursor's place on the x axis.
func (c *curveChart) axes(spec *chartSpec, box plotBox, pm plotMap, curCol int) {
	g := &c.grid
	dotX, dotY := pm.dotX, pm.dotY
	ax := box.x0 - 1
	for cy := 0; cy < box.ph; cy++ {
		g.set(ax, box.y0+cy, runes.LineVertical, clsAxis)
	}
	lastRow := -1
	for i, v := range box.yTicks {
		cy := dotY(v) / 4
		if cy < 0 || cy >= box.ph || cy == lastRow {
			continue // off the plot, or a row already labelled
		}
		lastRow = cy
		g.set(ax, box.y0+cy, runes.LineVerticalLeft, clsAxis)
		l := box.yLabel[i]
		if len(l) > ax {
			l = l[len(l)-ax:]
		}
		g.text(ax-len(l), box.y0+cy, l, clsAxis)
	}
	axisRow := box.y0 + box.ph
	g.set(ax, axisRow, runes.LineUpRight, clsAxis)
	for cx := 0; cx < box.pw; cx++ {
		g.set(box.x0+cx, axisRow, runes.LineHorizontal, clsAxis)
	}
	labelRow := axisRow + 1
	// Epoch ticks: whole epochs, spaced so labels never touch.
	maxLabel := len(strconv.Itoa(int(math.Max(math.Abs(spec.xmin), math.Abs(spec.xmax))))) + 1
	span := spec.xmax - spec.xmin
	cellsPerEpoch := float64(box.pw) / math.Max(span, 1e-9)
	step := niceStep(float64(maxLabel+2)/cellsPerEpoch, 1)
	if step < 1 {
		step = 1
	}
	// Place the last tick's label first, flush right if need be: the
	// latest epoch is the one a reader looks for. Others fill in from the
	// left where they do not touch it or each other.
	type tick struct {
		x int
		l string
	}
	var ts []tick
	put := func(v float64) {
		cx := dotX(v) / 2
		if cx < 0 || cx >= box.pw {
			return
		}
		g.set(box.x0+cx, axisRow, runes.LineHorizontalDown, clsAxis)
		l := strconv.Itoa(int(math.Round(v)))
		ts = append(ts, tick{min(box.x0+cx, g.w-len(l)), l})
	}
	lastTick := math.Inf(-1)
	for v := math.Ceil(spec.xmin/step) * step; v <= spec.xmax+1e-9; v += step {
		put(v)
		lastTick = v
	}
	// The latest whole epoch gets a tick of its own, so that the axis says
	// how far the run has come (36, not 35).
	if last := math.Floor(spec.xmax + 1e-9); last > lastTick+1e-9 && last >= spec.xmin {
		if n := len(ts); n > 0 {
			// A tick too close to it gives way: its label could not show.
			if prev := dotX(lastTick) / 2; dotX(last)/2-prev < len(strconv.Itoa(int(last)))+2 {
				g.set(box.x0+prev, axisRow, runes.LineHorizontal, clsAxis)
				ts = ts[:n-1]
			}
		}
		put(last)
	}
	limit := g.w
	if n := len(ts); n > 0 {
		last := ts[n-1]
		g.text(last.x, labelRow, last.l, clsAxis)
		limit = last.x - 1
		ts = ts[:n-1]
	}
	lastEnd := -1
	for _, t := range ts {
		if t.x <= lastEnd || t.x+len(t.l) > limit {
			continue
		}
		g.text(t.x, labelRow, t.l, clsAxis)
		lastEnd = t.x + len(t.l)
	}
	if curCol >= 0 && curCol < box.pw {
		g.set(box.x0+curCol, axisRow, runes.LineHorizontalUp, clsCursor)
	}
}

// legend writes the series glyphs and names on the title row, from the
// given column, dropping entries that do not fit.
func (c *curveChart) legend(spec *chartSpec, from, w int) {
	g := &c.grid
	type item struct {
		glyph rune
		cls   class
		text  string
	}
	var items []item
	if spec.band != nil && len(spec.band.series.steps) > 0 {
		items = append(items, item{'⠤', clsSteps, spec.band.label})
	}
	for _, cv := range spec.curves {
		items = append(items, item{cv.glyph, cv.cls, cv.label})
	}
	if spec.hasBest {
		items = append(items, item{glyphBest, clsBest, "best"})
	}
	if len(spec.bad) > 0 {
		items = append(items, item{glyphBad, clsBad, "not finite"})
	}
	if len(spec.off) > 0 {
		items = append(items, item{glyphAbove, clsAxis, "off scale"})
	}
	total := 0
	for _, it := range items {
		total += 2 + ansiLen(it.text) + 2
	}
	// Right-align the legend when it fits, else show what fits from the left.
	x := max(from, w-total+2)
	for _, it := range items {
		need := 2 + ansiLen(it.text)
		if x+need > w {
			break
		}
		g.set(x, 0, it.glyph, it.cls)
		g.text(x+2, 0, it.text, clsDim)
		x += need + 2
	}
}

func clampInt(v, lo, hi int) int {
	if hi < lo {
		return lo
	}
	return min(max(v, lo), hi)
}
