package chart

import (
	"math"

	"github.com/NimbleMarkets/ntcharts/canvas"
	"github.com/NimbleMarkets/ntcharts/canvas/graph"
	"github.com/NimbleMarkets/ntcharts/canvas/runes"
)

// The curves are rasterized by the chart library's braille primitives: a
// graph.BrailleGrid with our axis ranges, dots placed with GridPoint,
// segments traced with GetLinePoints, and the cells read back with
// BraillePatterns once all the layers (the band, then each curve)
// are in. The cells go into the chart's own cell grid, which remembers the
// layer that last put a dot in a cell (its colour) and renders each run of
// same-ink cells with one escape sequence: the library's canvas would
// render every cell with its own Style.Render call, about 1.3 µs a cell.
// Only the dots of one frame are ever handed to the library, never the
// stored series. One grid serves all the layers of a frame: a grid holds
// a bool per dot (66 kB for a 150×55-cell plot), and its constructor
// allocates them twice.

// plotMap maps data coordinates to braille dots of a plot of pw×ph cells:
// 2 dots across and 4 down per cell, (0, 0) at the top left. It computes
// exactly what graph.BrailleGrid.GridPoint computes for a grid of the same
// size and ranges (checked in a test), so the markers and the axes placed
// with it fall on the dots the library drew.
type plotMap struct {
	w2, h4                 int // plot size in dots
	xmin, xmax, ymin, ymax float64
}

func newPlotMap(pw, ph int, xmin, xmax, ymin, ymax float64) plotMap {
	return plotMap{w2: pw * 2, h4: ph * 4, xmin: xmin, xmax: xmax, ymin: ymin, ymax: ymax}
}

// dotX is the dot column of x.
func (p plotMap) dotX(x float64) int {
	var s float64
	if dx := p.xmax - p.xmin; dx > 0 {
		s = (x - p.xmin) * (float64(p.w2-1) / dx)
	}
	return int(math.Round(s))
}

// dotY is the dot row of y (0 at the top).
func (p plotMap) dotY(y float64) int {
	var s float64
	if dy := p.ymax - p.ymin; dy > 0 {
		s = (y - p.ymin) * (float64(p.h4-1) / dy)
	}
	return p.h4 - 1 - int(math.Round(s))
}

// layer is the braille grid the series of one frame are rasterized into,
// one after the other. owner (pw×ph, row by row) records for each cell the
// ink of the series that last put a dot in it: the cell's colour, so the
// most important series is drawn last.
type layer struct {
	pm     plotMap
	grid   *graph.BrailleGrid
	owner  []Ink
	ink    Ink        // the series being drawn
	bounds [4]float64 // x0, x1, y0, y1: see newLayer
}

// newLayer returns an empty layer for the plot pm; owner receives the
// inks. Its bounds are the box of values whose dot falls inside the
// plot: the ranges widened by just under half a dot each way, since a
// value rounds to the nearest dot.
func newLayer(pm plotMap, owner []Ink) *layer {
	hx := 0.499 * (pm.xmax - pm.xmin) / float64(max(pm.w2-1, 1))
	hy := 0.499 * (pm.ymax - pm.ymin) / float64(max(pm.h4-1, 1))
	return &layer{
		pm:     pm,
		grid:   graph.NewBrailleGrid(pm.w2/2, pm.h4/4, pm.xmin, pm.xmax, pm.ymin, pm.ymax),
		owner:  owner,
		bounds: [4]float64{pm.xmin - hx, pm.xmax + hx, pm.ymin - hy, pm.ymax + hy},
	}
}

// set puts one dot and claims its cell for the current series.
func (l *layer) set(p canvas.Point) {
	if p.X < 0 || p.Y < 0 || p.X >= l.pm.w2 || p.Y >= l.pm.h4 {
		return
	}
	l.grid.Set(p)
	if i := (p.Y/4)*(l.pm.w2/2) + p.X/2; i < len(l.owner) {
		l.owner[i] = l.ink
	}
}

// point sets the dot of a if it lies inside the plot.
func (l *layer) point(a Point) {
	x0, x1, y0, y1 := l.bounds[0], l.bounds[1], l.bounds[2], l.bounds[3]
	if !(a.X >= x0 && a.X <= x1 && a.Y >= y0 && a.Y <= y1) {
		return
	}
	l.set(l.grid.GridPoint(canvas.Float64Point{X: a.X, Y: a.Y}))
}

// segment traces the part of a–b inside the plot. Clipping first keeps an
// off-scale value (a first epoch far above the rest, a per-step spike)
// from costing a line of millions of dots outside the plot.
func (l *layer) segment(a, b Point) {
	a, b, ok := clipSegment(a, b, l.bounds[0], l.bounds[1], l.bounds[2], l.bounds[3])
	if !ok {
		return
	}
	p1 := l.grid.GridPoint(canvas.Float64Point{X: a.X, Y: a.Y})
	p2 := l.grid.GridPoint(canvas.Float64Point{X: b.X, Y: b.Y})
	for _, p := range graph.GetLinePoints(p1, p2) {
		l.set(p)
	}
}

// polyline traces consecutive finite points; a NaN or ±Inf Y is a gap.
func (l *layer) polyline(pts []Point) {
	prevOK := false
	var prev Point
	for _, p := range pts {
		if !isFinite(p.Y) {
			prevOK = false
			continue
		}
		if prevOK {
			l.segment(prev, p)
		} else {
			l.point(p)
		}
		prev, prevOK = p, true
	}
}

// cells copies the grid's braille cells, all layers merged, into mask
// (pw×ph, row by row; 0 where no dot is set).
func (l *layer) cells(mask []rune) {
	pw := l.pm.w2 / 2
	for y, row := range l.grid.BraillePatterns() {
		for x, r := range row {
			if i := y*pw + x; r != runes.BrailleBlockOffset && x < pw && i < len(mask) {
				mask[i] = r
			}
		}
	}
}

// clipSegment clips the segment a–b to the box [x0, x1]×[y0, y1] by the
// parametric method of Liang and Barsky ("A new concept and method for
// line clipping", ACM Transactions on Graphics 3(1), 1984): ok is false
// when no part of the segment is inside.
func clipSegment(a, b Point, x0, x1, y0, y1 float64) (Point, Point, bool) {
	if a.X >= x0 && a.X <= x1 && b.X >= x0 && b.X <= x1 && a.Y >= y0 && a.Y <= y1 && b.Y >= y0 && b.Y <= y1 {
		return a, b, true // inside: the usual case
	}
	t0, t1 := 0.0, 1.0
	dx, dy := b.X-a.X, b.Y-a.Y
	edges := [4][2]float64{{-dx, a.X - x0}, {dx, x1 - a.X}, {-dy, a.Y - y0}, {dy, y1 - a.Y}}
	for _, e := range edges {
		p, q := e[0], e[1]
		if p == 0 {
			if q < 0 {
				return a, b, false // parallel to this edge and outside it
			}
			continue
		}
		r := q / p
		if p < 0 {
			if r > t1 {
				return a, b, false
			}
			t0 = math.Max(t0, r)
		} else {
			if r < t0 {
				return a, b, false
			}
			t1 = math.Min(t1, r)
		}
	}
	na, nb := a, b
	if t0 > 0 {
		na = Point{X: a.X + t0*dx, Y: a.Y + t0*dy}
	}
	if t1 < 1 {
		nb = Point{X: a.X + t1*dx, Y: a.Y + t1*dy}
	}
	// Rounding can leave an end a hair outside; the grid must not see it.
	na.X, nb.X = clampF(na.X, x0, x1), clampF(nb.X, x0, x1)
	na.Y, nb.Y = clampF(na.Y, y0, y1), clampF(nb.Y, y0, y1)
	return na, nb, true
}

func clampF(v, lo, hi float64) float64 {
	if v < lo {
		return lo
	}
	if v > hi {
		return hi
	}
	return v
}
