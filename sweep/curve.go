package sweep

import (
	"math"
	"sort"
)

// Curve is a run's validation curve in the judged metric (lower is
// better), one value per evaluation point as logged (not smoothed: the
// rules are defined on the reported values), with running sums so that
// the rules read a running mean or a best value up to any epoch in
// O(log n). Non-finite values (a diverged run's NaN) count as the worst
// value for the best so far and are left out of the running mean.
//
// 24 bytes a point: a thousand runs of 300 epochs keep 7 MB of curves.
type Curve struct {
	epochs []int32
	vals   []float64
	sum    []float64 // sum of the finite values up to i
	best   []int32   // index of the least finite value up to i; -1 when none
	bad    []int32   // indices of the non-finite values, ascending (rare)
}

// Len returns the number of points.
func (c *Curve) Len() int { return len(c.epochs) }

// At returns point i's epoch and value.
func (c *Curve) At(i int) (epoch int, v float64) { return int(c.epochs[i]), c.vals[i] }

// LastEpoch returns the epoch of the last point, 0 when empty.
func (c *Curve) LastEpoch() int {
	if len(c.epochs) == 0 {
		return 0
	}
	return int(c.epochs[len(c.epochs)-1])
}

// Set replaces the points from index from on by the given ones (a run
// rewound to a checkpoint, or the whole curve judged again in another
// metric from 0). Epochs must rise within the call and above the points
// kept; a point that does not is dropped.
func (c *Curve) Set(from int, epochs []int, vals []float64) {
	from = max(0, min(from, len(c.epochs)))
	c.epochs, c.vals = c.epochs[:from], c.vals[:from]
	c.sum, c.best = c.sum[:from], c.best[:from]
	c.bad = c.bad[:sort.Search(len(c.bad), func(k int) bool { return int(c.bad[k]) >= from })]
	if n := from + min(len(epochs), len(vals)); n > cap(c.epochs) && n-from > 1 {
		// A backlog's points: room for exactly them, not append's doubling
		// (a thousand runs of 300 epochs kept 60 bytes a point, not 32).
		c.epochs, c.vals = withRoom(c.epochs, n), withRoom(c.vals, n)
		c.sum, c.best = withRoom(c.sum, n), withRoom(c.best, n)
	}
	for i := range min(len(epochs), len(vals)) {
		c.Append(epochs[i], vals[i])
	}
}

// withRoom returns s in new room for exactly n values.
func withRoom[T any](s []T, n int) []T {
	t := make([]T, len(s), n)
	copy(t, s)
	return t
}

// Append adds a point after the last; a point whose epoch is not above the
// last one's is ignored (Set rewinds).
func (c *Curve) Append(epoch int, v float64) {
	if n := len(c.epochs); n > 0 && epoch <= int(c.epochs[n-1]) || epoch > math.MaxInt32 || epoch < math.MinInt32 {
		return
	}
	n := len(c.epochs)
	s, b := 0.0, int32(-1)
	if n > 0 {
		s, b = c.sum[n-1], c.best[n-1]
	}
	switch {
	case !finite(v):
		c.bad = append(c.bad, int32(n))
	case b < 0 || v < c.vals[b]:
		s, b = s+v, int32(n)
	default:
		s += v
	}
	c.epochs = append(c.epochs, int32(epoch))
	c.vals = append(c.vals, v)
	c.sum = append(c.sum, s)
	c.best = append(c.best, b)
}

// finiteUpTo returns how many of the values up to index i are finite.
func (c *Curve) finiteUpTo(i int) int {
	return i + 1 - sort.Search(len(c.bad), func(k int) bool { return int(c.bad[k]) > i })
}

// upTo returns the index of the last point at or before epoch t, -1 when
// none.
func (c *Curve) upTo(t int) int {
	return sort.Search(len(c.epochs), func(i int) bool { return int(c.epochs[i]) > t }) - 1
}

// IndexOf returns the index of the first point at or after epoch e: where
// points from e on start (Len when none).
func (c *Curve) IndexOf(e int) int {
	if e <= math.MinInt32 {
		return 0
	}
	return c.upTo(e-1) + 1
}

// MeanBy returns the running mean of the finite values at epochs up to t;
// false when there is none.
func (c *Curve) MeanBy(t int) (float64, bool) {
	i := c.upTo(t)
	if i < 0 {
		return 0, false
	}
	k := c.finiteUpTo(i)
	if k == 0 {
		return 0, false
	}
	return c.sum[i] / float64(k), true
}

// BestBy returns the least finite value at epochs up to t; false when
// there is none (no point yet, or only non-finite values).
func (c *Curve) BestBy(t int) (float64, bool) {
	i := c.upTo(t)
	if i < 0 || c.best[i] < 0 {
		return 0, false
	}
	return c.vals[c.best[i]], true
}

// From returns the first point at or after epoch t: the value a run had
// when it reached t.
func (c *Curve) From(t int) (epoch int, v float64, ok bool) {
	i := c.upTo(t - 1)
	if i+1 >= len(c.epochs) {
		return 0, 0, false
	}
	return int(c.epochs[i+1]), c.vals[i+1], true
}

// Points returns the curve's epochs and values as new slices.
func (c *Curve) Points() (epochs []int, vals []float64) {
	epochs = make([]int, len(c.epochs))
	for i, e := range c.epochs {
		epochs[i] = int(e)
	}
	return epochs, append([]float64(nil), c.vals...)
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
