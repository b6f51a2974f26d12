package tui

import "math"

// sparkBlocks are the eight heights of a one-row column chart, lowest
// first (U+2581…U+2588).
var sparkBlocks = [8]rune{'▁', '▂', '▃', '▄', '▅', '▆', '▇', '█'}

// sparkRow draws one series as a one-row column chart, one value per
// column, right-aligned so the newest value is at the right edge. The
// range is taken from the values shown (min to max), so an early spike
// that has scrolled out of the window no longer flattens the rest, and
// negative values keep their shape. A gap (NaN, ±Inf) is a blank column;
// a flat series is drawn at mid height. vals must already be downsampled
// to at most w values.
func sparkRow(vals []float64, w int, dst []rune) []rune {
	dst = dst[:0]
	if w <= 0 {
		return dst
	}
	if len(vals) > w {
		vals = vals[len(vals)-w:]
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		if isFinite(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	for i := len(vals); i < w; i++ {
		dst = append(dst, ' ')
	}
	for _, v := range vals {
		switch {
		case !isFinite(v):
			dst = append(dst, ' ')
		case hi > lo:
			k := int(math.Round((v - lo) / (hi - lo) * 7))
			dst = append(dst, sparkBlocks[clampInt(k, 0, 7)])
		default:
			dst = append(dst, sparkBlocks[3])
		}
	}
	return dst
}
