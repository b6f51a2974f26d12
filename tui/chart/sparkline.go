package chart

import (
	"math"

	"github.com/NimbleMarkets/ntcharts/canvas"
	"github.com/NimbleMarkets/ntcharts/canvas/runes"
	"github.com/NimbleMarkets/ntcharts/sparkline"
)

// Sparklines are drawn by the chart library's sparkline model, one row
// high, and read back cell by cell into our grid (its View would render
// every cell with its own style call). The model has three traits the
// caller must work around, each handled here:
//   - it keeps only the last `width` values pushed (a ring), so it is fed
//     a copy already downsampled to the window, newest at the right;
//   - it clamps negative values to 0, so values are shifted by the
//     window's minimum before they are pushed;
//   - left to itself its maximum only grows (one early spike would
//     flatten the rest for good), so the maximum is set for every window
//     and automatic growth is off.
//
// The window's minimum is drawn as the lowest block (1/8 of the row) and
// its maximum as a full one: the value is shifted by min − span/7 and the
// maximum set to 8/7 of the span, so the eight block heights stand for
// equal steps of the window's range. A gap (NaN, ±Inf) is pushed as 0,
// which the model leaves blank, and so is the room left of a window
// shorter than the row. A flat window (a constant learning rate) is drawn
// as a horizontal line: blocks at any height would suggest a level that
// the window does not have.

// glyphFlat draws the values of a flat window.
const glyphFlat = runes.LineHorizontal

// Sparkline draws one-row column charts, reusing the library's model while
// the width holds. The zero Sparkline is ready.
type Sparkline struct {
	model *sparkline.Model
}

// Row draws vals (at most the last w are used) as a one-row column chart
// w cells wide into dst[:0] and returns the runes, right-aligned, blank
// where nothing was drawn.
func (s *Sparkline) Row(vals []float64, w int, dst []rune) []rune {
	dst = dst[:0]
	if w <= 0 {
		return dst
	}
	if len(vals) > w {
		vals = vals[len(vals)-w:]
	}
	sl := s.model
	if sl == nil || sl.Width() != w || sl.Height() != 1 {
		m := sparkline.New(w, 1, sparkline.WithNoAutoMaxValue())
		sl = &m
		s.model = sl
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		if isFinite(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	// Exactly w values go in, blanks (0) first, so the ring is overwritten
	// whole and needs no Clear (which would allocate the canvas again).
	for i := len(vals); i < w; i++ {
		sl.Push(0)
	}
	span := hi - lo
	flat := false
	switch {
	case span > 0 && span < math.MaxFloat64/2:
		sl.SetMax(span * 8 / 7)
		shift := lo - span/7
		for _, v := range vals {
			if isFinite(v) {
				sl.Push(v - shift)
			} else {
				sl.Push(0)
			}
		}
	default:
		// Flat, or every value a gap. A span too wide for float64 (values
		// near ±MaxFloat64) is shown as flat rather than as nonsense.
		flat = true
		sl.SetMax(1)
		for _, v := range vals {
			if isFinite(v) {
				sl.Push(0.5)
			} else {
				sl.Push(0)
			}
		}
	}
	sl.DrawColumnsOnly()
	for x := 0; x < w; x++ {
		r := sl.Canvas.Cell(canvas.Point{X: x, Y: 0}).Rune
		switch {
		case r == 0:
			r = ' '
		case flat:
			r = glyphFlat
		}
		dst = append(dst, r)
	}
	return dst
}
