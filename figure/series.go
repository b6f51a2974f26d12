package figure

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/plot/plotter"

	"github.com/fitgap/fitgap/diagnose"
)

// History is the judged series of one run, point by point in order of
// increasing epoch: what *diagnose.Tracker gives (Logged is the value
// logged at point i on a split, in the judged metric's units). The picture
// reads it twice and keeps only what it draws, so a run of a million
// epochs costs no copy of its history.
type History interface {
	Len() int
	Epoch(i int) int
	Logged(i int, s diagnose.Split) diagnose.Num
}

// series is one curve to draw: n points of increasing x, each with a
// value or none.
type series interface {
	len() int
	at(i int) (x float64, y diagnose.Num)
}

// split is one split of a History.
type split struct {
	h History
	s diagnose.Split
}

func (s split) len() int { return s.h.Len() }
func (s split) at(i int) (float64, diagnose.Num) {
	return float64(s.h.Epoch(i)), s.h.Logged(i, s.s)
}

// spans returns the span of every finite value of s and the span of those
// after its leading points (valueAxis), and how many values it has, in one
// pass over s: the few leading values wait aside until the count says how
// many of them lead.
func spans(s series) (all, rest span, n int) {
	all, rest = emptySpan(), emptySpan()
	var first [leadMax]float64 // the first values, NaN when not finite
	for i := 0; i < s.len(); i++ {
		_, y := s.at(i)
		if !y.OK {
			continue
		}
		ok := finite(y.V)
		if ok {
			all.add(y.V)
		}
		switch {
		case n < leadMax && ok:
			first[n] = y.V
		case n < leadMax:
			first[n] = math.NaN()
		case ok:
			rest.add(y.V)
		}
		n++
	}
	for k := leadPoints(n); k < min(n, leadMax); k++ {
		if !math.IsNaN(first[k]) {
			rest.add(first[k])
		}
	}
	return all, rest, n
}

// trace is a series as drawn: its finite stretches, reduced to what the
// picture's width can show, and where it has values that are not finite.
type trace struct {
	stretches []plotter.XYs
	// broken are the x of values that are NaN or ±Inf (one per column).
	broken []float64
	// last is the last finite point, for marks at a curve's end.
	last    plotter.XY
	hasLast bool
}

// reduce draws s over [x0, x1] in cols columns: in each column it keeps
// the first, lowest, highest and last point, in their order. A line
// through those is drawn on the same pixels as a line through all the
// points of the column (the M4 aggregation: Jugel, Jerzak, Hackenbroich &
// Markl, "M4: a visualization-oriented time series data aggregation",
// PVLDB 7(10), 2014), so a curve of a million epochs costs the picture a
// few thousand points. A value that is not finite ends a stretch; a missing
// value (a split logged every few epochs) does not.
func reduce(s series, x0, x1 float64, cols int) (trace, error) {
	var (
		t      trace
		cur    plotter.XYs
		col    = -1
		keep   [4]int // first, lowest, highest, last of the column
		lo, hi float64
		prevX  = math.Inf(-1)
		prevBr = -1
	)
	width := x1 - x0
	column := func(x float64) int {
		if !(width > 0) {
			return 0
		}
		return int(math.Floor((x - x0) / width * float64(cols)))
	}
	flush := func() {
		if col < 0 {
			return
		}
		idx := keep[:]
		slices.Sort(idx)
		idx = slices.Compact(idx)
		for _, i := range idx {
			x, y := s.at(i)
			cur = append(cur, plotter.XY{X: x, Y: y.V})
		}
		col = -1
	}
	end := func() {
		flush()
		if len(cur) > 0 {
			t.stretches = append(t.stretches, cur)
			cur = nil
		}
	}
	for i := 0; i < s.len(); i++ {
		x, y := s.at(i)
		if !(x > prevX) {
			return trace{}, fmt.Errorf("epoch %v follows epoch %v: epochs must increase", x, prevX)
		}
		prevX = x
		if !y.OK {
			continue
		}
		if !finite(y.V) {
			end()
			if c := column(x); c != prevBr {
				t.broken, prevBr = append(t.broken, x), c
			}
			continue
		}
		t.last, t.hasLast = plotter.XY{X: x, Y: y.V}, true
		c := column(x)
		if c != col {
			flush()
			col, keep, lo, hi = c, [4]int{i, i, i, i}, y.V, y.V
			continue
		}
		if y.V < lo {
			keep[1], lo = i, y.V
		}
		if y.V > hi {
			keep[2], hi = i, y.V
		}
		keep[3] = i
	}
	end()
	return t, nil
}

// columnsPerPixel is how many columns a curve is reduced to per pixel of
// the picture's width: at one, anti-aliasing makes 0.6 % of the pixels of
// a noisy curve differ from the curve drawn whole; at two, 0.14 %
// (TestReduce_DrawsTheSamePixels).
const columnsPerPixel = 2

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
