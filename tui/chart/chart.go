package chart

import (
	"math"
	"strconv"

	"github.com/NimbleMarkets/ntcharts/canvas/runes"
	"github.com/charmbracelet/x/ansi"
)

// Curve is one series of the main chart, already downsampled.
type Curve struct {
	Label  string // the legend entry; "" for none
	Glyph  rune   // marker drawn on the curve so series differ without colour; 0 for none
	Ink    Ink
	Points []Point // X in epochs, Y in plotted units (log10 when the axis is logarithmic); NaN Y is a gap
}

// Band is a dense series drawn as a faint band behind the curves (the
// per-step training values, a forecast's interval): its envelope under
// each braille column.
type Band interface {
	// Envelope returns the least and the greatest value, in plotted
	// units, of the samples whose place on the x axis lies in [x0, x1).
	// ok is false when there is none, or none finite.
	Envelope(x0, x1 float64) (lo, hi float64, ok bool)
}

// BandLayer is one band of the chart with its ink and legend entry.
type BandLayer struct {
	Band  Band
	Label string // the legend entry; "" for none
	Ink   Ink    // the band and its legend glyph
}

// Inks are the inks of the chart's own marks; the curves and bands carry
// theirs.
type Inks struct {
	Title  Ink // the title
	Legend Ink // the legend's words
	Axis   Ink // axes, tick labels, the legend's off-scale entry
	Cursor Ink // the inspected epoch's line
	Best   Ink // the best epoch's marker
	Bad    Ink // a non-finite value's marker
}

// Spec is everything one frame of the main chart shows.
type Spec struct {
	Title      string
	Curves     []Curve     // drawn in order: the last wins a shared cell
	Bands      []BandLayer // drawn in order, behind the curves
	XMin, XMax float64
	YMin, YMax float64 // plotted units
	LogY       bool    // y values are log10 of the values shown
	Percent    bool    // y values are fractions shown as percent
	Best       Point   // best epoch on the validation curve, plotted units
	HasBest    bool
	Cursor     float64 // inspected epoch
	HasCursor  bool
	Bad        []float64 // epochs with a non-finite value
	Off        []OffMark // values outside [YMin, YMax], in curve order
	Inks       Inks
}

// OffMark is a value the y range leaves out: an early epoch far above the
// rest, kept off the scale so that it does not squash the curves.
type OffMark struct {
	X, Y float64 // epoch, plotted value
	Up   bool    // above the range (else below)
	Ink  Ink     // the series' ink
}

// Glyphs of the chart's own marks. They are plain ASCII so that they keep
// their one-column width in every terminal and locale.
const (
	glyphBest = '*'
	glyphBad  = '!'
	// An arrow at the plot's edge marks a value off the scale. Like the
	// box-drawing axes, arrows are one column wide except in terminals
	// set to draw East Asian ambiguous-width characters wide.
	glyphAbove = '↑'
	glyphBelow = '↓'
	// glyphBand is the band's legend entry.
	glyphBand = '⠤'
)

// GlyphCursor is the inspected epoch's line, on the main chart and in
// the caller's sparklines.
const GlyphCursor = runes.LineVertical

// markerSpacing is the distance in columns between two markers of one
// curve when the curve has more points than fit a marker each: close
// enough that a short stretch of curve still shows whose it is.
const markerSpacing = 9

// Chart draws the main chart into a reused cell grid. It holds only
// scratch memory between frames, never data; the zero Chart is ready.
type Chart struct {
	grid  Grid
	mask  []rune // braille cell per plot cell, all layers merged; 0 when empty
	owner []Ink  // the layer that last put a dot in the cell
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
func geometry(w, h int, spec *Spec) (plotBox, bool) {
	var box plotBox
	box.y0 = 1
	box.ph = h - 3 // title row, x axis, x labels
	if box.ph < 2 || w < 12 {
		return box, false
	}
	n := max(2, min(6, box.ph/3+1))
	scale := 1.0
	if spec.Percent {
		scale = 100
	}
	if spec.LogY {
		box.yTicks, box.yLabel = logTicks(spec.YMin, spec.YMax, n, scale)
	} else {
		var step float64
		box.yTicks, step = ticks(spec.YMin, spec.YMax, n)
		for _, v := range box.yTicks {
			box.yLabel = append(box.yLabel, formatTick(v*scale, step*scale))
		}
	}
	if spec.Percent {
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

// Draw renders the chart of spec at w×h and returns its lines, styled by p.
func (c *Chart) Draw(w, h int, spec *Spec, p Palette) []string {
	g := &c.grid
	g.Reset(w, h)
	if w <= 0 || h <= 0 {
		return nil
	}
	g.Text(0, 0, spec.Title, spec.Inks.Title)
	box, ok := geometry(w, h, spec)
	if !ok {
		return g.Lines(p)
	}
	c.legend(spec, ansi.StringWidth(spec.Title)+2, w)
	pm := newPlotMap(box.pw, box.ph, spec.XMin, spec.XMax, spec.YMin, spec.YMax)

	n := box.pw * box.ph
	if cap(c.mask) < n {
		c.mask = make([]rune, n)
		c.owner = make([]Ink, n)
	}
	c.mask, c.owner = c.mask[:n], c.owner[:n]
	clear(c.mask)
	clear(c.owner)

	l := newLayer(pm, c.owner)
	for _, b := range spec.Bands {
		l.ink = b.Ink
		c.drawBand(spec, b.Band, box, l)
	}
	for _, cv := range spec.Curves {
		l.ink = cv.Ink
		l.polyline(cv.Points)
	}
	l.cells(c.mask)

	// Cursor first, so curves and markers stay readable across it.
	curCol := -1
	if spec.HasCursor {
		curCol = pm.dotX(spec.Cursor) / 2
	}
	for cy := 0; cy < box.ph; cy++ {
		for cx := 0; cx < box.pw; cx++ {
			i := cy*box.pw + cx
			switch {
			case c.mask[i] != 0:
				g.Set(box.x0+cx, box.y0+cy, c.mask[i], c.owner[i])
			case cx == curCol:
				g.Set(box.x0+cx, box.y0+cy, GlyphCursor, spec.Inks.Cursor)
			}
		}
	}
	for _, cv := range spec.Curves {
		c.markers(cv, box, pm)
	}
	c.offScale(spec, box, pm)
	if spec.HasBest && isFinite(spec.Best.Y) {
		g.Set(box.x0+pm.dotX(spec.Best.X)/2, box.y0+clampInt(pm.dotY(spec.Best.Y)/4, 0, box.ph-1), glyphBest, spec.Inks.Best)
	}
	for _, x := range spec.Bad {
		g.Set(box.x0+pm.dotX(x)/2, box.y0, glyphBad, spec.Inks.Bad)
	}
	c.axes(spec, box, pm, curCol)
	return g.Lines(p)
}

// drawBand draws the band as the envelope of its samples: the min and the
// max of the samples under each braille column (min/max downsampling keeps
// the spikes that averaging would hide). Values outside the y range are
// clipped: the range follows the curves, not the band's noise.
func (c *Chart) drawBand(spec *Spec, band Band, box plotBox, l *layer) {
	W2 := box.pw * 2
	if cap(c.lo) < W2 {
		c.lo, c.hi = make([]float64, W2), make([]float64, W2)
	}
	lo, hi := c.lo[:W2], c.hi[:W2]
	xspan := spec.XMax - spec.XMin
	half := 0.5 * xspan / float64(W2-1)
	// Column col covers the x positions [x(col) − half, x(col) + half),
	// each bound computed once so neighbouring columns share it exactly.
	prev := spec.XMin - half
	for col := 0; col < W2; col++ {
		next := spec.XMin + float64(col)*xspan/float64(W2-1) + half
		l, h, ok := band.Envelope(prev, next)
		prev = next
		lo[col], hi[col] = math.NaN(), math.NaN()
		if !ok || !isFinite(l) || !isFinite(h) {
			continue
		}
		if l > h {
			l, h = h, l
		}
		lo[col], hi[col] = l, h
	}
	// The band's edges: the min and the max of each column, each joined to
	// the previous column's, so the spread shows as two thin lines around
	// the curve instead of a block that hides it.
	colX := func(col int) float64 { return spec.XMin + float64(col)*xspan/float64(W2-1) }
	for col := 0; col < W2; col++ {
		if math.IsNaN(lo[col]) {
			continue
		}
		x := colX(col)
		if col > 0 && !math.IsNaN(lo[col-1]) {
			px := colX(col - 1)
			l.segment(Point{px, hi[col-1]}, Point{x, hi[col]})
			l.segment(Point{px, lo[col-1]}, Point{x, lo[col]})
		} else {
			l.point(Point{x, hi[col]})
			l.point(Point{x, lo[col]})
		}
	}
}

// markers puts a curve's glyph on the curve: on every point when the
// points are sparse enough to tell apart, else every markerSpacing columns
// (staggered by ink so two curves' markers rarely share a column).
func (c *Chart) markers(cv Curve, box plotBox, pm plotMap) {
	if cv.Glyph == 0 {
		return
	}
	g := &c.grid
	dotX, dotY := pm.dotX, pm.dotY
	finite := 0
	for _, p := range cv.Points {
		if isFinite(p.Y) {
			finite++
		}
	}
	put := func(x, y float64) {
		cx, cy := dotX(x)/2, dotY(y)/4
		if cx >= 0 && cx < box.pw && cy >= 0 && cy < box.ph {
			g.Set(box.x0+cx, box.y0+cy, cv.Glyph, cv.Ink)
		}
	}
	if finite*3 <= box.pw {
		for _, p := range cv.Points {
			if isFinite(p.Y) {
				put(p.X, p.Y)
			}
		}
		return
	}
	pts := cv.Points
	off := (int(cv.Ink) * 3) % markerSpacing
	k := 0
	for cx := off; cx < box.pw; cx += markerSpacing {
		// The point nearest the middle of the column.
		for k+1 < len(pts) && dotX(pts[k+1].X)/2 <= cx {
			k++
		}
		p := pts[k]
		if dotX(p.X)/2 == cx && isFinite(p.Y) {
			put(p.X, p.Y)
		} else if k+1 < len(pts) && dotX(pts[k+1].X)/2 == cx && isFinite(pts[k+1].Y) {
			put(pts[k+1].X, pts[k+1].Y)
		} else if k+1 < len(pts) && isFinite(p.Y) && isFinite(pts[k+1].Y) && dotX(p.X)/2 < cx {
			// Interpolate along the segment that crosses the column.
			q := pts[k+1]
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
func (c *Chart) axes(spec *Spec, box plotBox, pm plotMap, curCol int) {
	g := &c.grid
	dotX, dotY := pm.dotX, pm.dotY
	ax := box.x0 - 1
	for cy := 0; cy < box.ph; cy++ {
		g.Set(ax, box.y0+cy, runes.LineVertical, spec.Inks.Axis)
	}
	lastRow := -1
	for i, v := range box.yTicks {
		cy := dotY(v) / 4
		if cy < 0 || cy >= box.ph || cy == lastRow {
			continue // off the plot, or a row already labelled
		}
		lastRow = cy
		g.Set(ax, box.y0+cy, runes.LineVerticalLeft, spec.Inks.Axis)
		l := box.yLabel[i]
		if len(l) > ax {
			l = l[len(l)-ax:]
		}
		g.Text(ax-len(l), box.y0+cy, l, spec.Inks.Axis)
	}
	axisRow := box.y0 + box.ph
	g.Set(ax, axisRow, runes.LineUpRight, spec.Inks.Axis)
	for cx := 0; cx < box.pw; cx++ {
		g.Set(box.x0+cx, axisRow, runes.LineHorizontal, spec.Inks.Axis)
	}
	labelRow := axisRow + 1
	// Epoch ticks: whole epochs, spaced so labels never touch.
	maxLabel := len(strconv.Itoa(int(math.Max(math.Abs(spec.XMin), math.Abs(spec.XMax))))) + 1
	span := spec.XMax - spec.XMin
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
		g.Set(box.x0+cx, axisRow, runes.LineHorizontalDown, spec.Inks.Axis)
		l := strconv.Itoa(int(math.Round(v)))
		ts = append(ts, tick{min(box.x0+cx, g.w-len(l)), l})
	}
	lastTick := math.Inf(-1)
	for v := math.Ceil(spec.XMin/step) * step; v <= spec.XMax+1e-9; v += step {
		put(v)
		lastTick = v
	}
	// The latest whole epoch gets a tick of its own, so that the axis says
	// how far the run has come (36, not 35).
	if last := math.Floor(spec.XMax + 1e-9); last > lastTick+1e-9 && last >= spec.XMin {
		if n := len(ts); n > 0 {
			// A tick too close to it gives way: its label could not show.
			if prev := dotX(lastTick) / 2; dotX(last)/2-prev < len(strconv.Itoa(int(last)))+2 {
				g.Set(box.x0+prev, axisRow, runes.LineHorizontal, spec.Inks.Axis)
				ts = ts[:n-1]
			}
		}
		put(last)
	}
	limit := g.w
	if n := len(ts); n > 0 {
		last := ts[n-1]
		g.Text(last.x, labelRow, last.l, spec.Inks.Axis)
		limit = last.x - 1
		ts = ts[:n-1]
	}
	lastEnd := -1
	for _, t := range ts {
		if t.x <= lastEnd || t.x+len(t.l) > limit {
			continue
		}
		g.Text(t.x, labelRow, t.l, spec.Inks.Axis)
		lastEnd = t.x + len(t.l)
	}
	if curCol >= 0 && curCol < box.pw {
		g.Set(box.x0+curCol, axisRow, runes.LineHorizontalUp, spec.Inks.Cursor)
	}
}

// legend writes the series glyphs and names on the title row, from the
// given column, dropping entries that do not fit.
func (c *Chart) legend(spec *Spec, from, w int) {
	g := &c.grid
	type item struct {
		glyph rune
		ink   Ink
		text  string
	}
	var items []item
	for _, b := range spec.Bands {
		if b.Label != "" {
			items = append(items, item{glyphBand, b.Ink, b.Label})
		}
	}
	for _, cv := range spec.Curves {
		if cv.Label != "" {
			items = append(items, item{cv.Glyph, cv.Ink, cv.Label})
		}
	}
	if spec.HasBest {
		items = append(items, item{glyphBest, spec.Inks.Best, "best"})
	}
	if len(spec.Bad) > 0 {
		items = append(items, item{glyphBad, spec.Inks.Bad, "not finite"})
	}
	if len(spec.Off) > 0 {
		items = append(items, item{glyphAbove, spec.Inks.Axis, "off scale"})
	}
	total := 0
	for _, it := range items {
		total += 2 + ansi.StringWidth(it.text) + 2
	}
	// Right-align the legend when it fits, else show what fits from the left.
	x := max(from, w-total+2)
	for _, it := range items {
		need := 2 + ansi.StringWidth(it.text)
		if x+need > w {
			break
		}
		g.Set(x, 0, it.glyph, it.ink)
		g.Text(x+2, 0, it.text, spec.Inks.Legend)
		x += need + 2
	}
}

func clampInt(v, lo, hi int) int {
	if hi < lo {
		return lo
	}
	return min(max(v, lo), hi)
}
