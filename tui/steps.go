package tui

import (
	"math"
	"sort"

	"github.com/fitgap/fitgap/tui/chart"
)

// stepBlock is the number of per-step samples summarised by one min/max
// block. With 64, a 1,000,000-step series has 15,625 blocks, and the min and
// max over any step range cost at most 2×64 raw reads plus one read per
// block: the chart rebuild stays well under a millisecond per series at
// 400 braille columns (measured in BenchmarkRebuild).
const stepBlock = 64

// stepSeries is one per-step column in our own store: the raw values in
// step order and a min/max per block of stepBlock samples, so the chart can
// take the min and max of any step range without walking every sample.
// float32 halves the memory of a million-step run; a curve drawn on a few
// hundred rows cannot show the difference.
type stepSeries struct {
	steps []int64
	vals  []float32
	bmin  []float32 // per full or partial block; NaN-free (NaN samples are skipped)
	bmax  []float32
	bany  []bool // the block holds at least one finite value
}

// add appends one sample. A step not above the last one replaces the samples
// from that step on: the run was resumed from a checkpoint, and the old
// future did not happen.
func (s *stepSeries) add(step int64, v float64) {
	if n := len(s.steps); n > 0 && step <= s.steps[n-1] {
		s.truncate(sort.Search(n, func(i int) bool { return s.steps[i] >= step }))
	}
	s.steps = append(s.steps, step)
	f := float32(v)
	s.vals = append(s.vals, f)
	i := len(s.vals) - 1
	if i%stepBlock == 0 {
		s.bmin = append(s.bmin, float32(math.Inf(1)))
		s.bmax = append(s.bmax, float32(math.Inf(-1)))
		s.bany = append(s.bany, false)
	}
	if isFinite(v) && !math.IsInf(float64(f), 0) {
		b := i / stepBlock
		if f < s.bmin[b] {
			s.bmin[b] = f
		}
		if f > s.bmax[b] {
			s.bmax[b] = f
		}
		s.bany[b] = true
	}
}

// truncate keeps the first n samples and recomputes the last block.
func (s *stepSeries) truncate(n int) {
	if n >= len(s.steps) {
		return
	}
	s.steps = s.steps[:n]
	s.vals = s.vals[:n]
	nb := (n + stepBlock - 1) / stepBlock
	s.bmin, s.bmax, s.bany = s.bmin[:nb], s.bmax[:nb], s.bany[:nb]
	if nb == 0 {
		return
	}
	b := nb - 1
	s.bmin[b], s.bmax[b], s.bany[b] = float32(math.Inf(1)), float32(math.Inf(-1)), false
	for i := b * stepBlock; i < n; i++ {
		f := s.vals[i]
		if isFinite(float64(f)) {
			s.bmin[b] = min(s.bmin[b], f)
			s.bmax[b] = max(s.bmax[b], f)
			s.bany[b] = true
		}
	}
}

// indexRange returns the sample indices [i, j) whose steps lie in [lo, hi).
func (s *stepSeries) indexRange(lo, hi int64) (int, int) {
	i := sort.Search(len(s.steps), func(k int) bool { return s.steps[k] >= lo })
	j := i + sort.Search(len(s.steps)-i, func(k int) bool { return s.steps[i+k] >= hi })
	return i, j
}

// minMax returns the minimum and maximum finite value of samples [i, j),
// reading whole blocks from the summary. ok is false when there is none.
func (s *stepSeries) minMax(i, j int) (lo, hi float64, ok bool) {
	l, h := float32(math.Inf(1)), float32(math.Inf(-1))
	scan := func(a, b int) {
		for k := a; k < b; k++ {
			f := s.vals[k]
			if f == f && !math.IsInf(float64(f), 0) {
				if f < l {
					l = f
				}
				if f > h {
					h = f
				}
				ok = true
			}
		}
	}
	for i < j && i%stepBlock != 0 {
		scan(i, i+1)
		i++
	}
	for ; i+stepBlock <= j; i += stepBlock {
		b := i / stepBlock
		if s.bany[b] {
			l = min(l, s.bmin[b])
			h = max(h, s.bmax[b])
			ok = true
		}
	}
	scan(i, j)
	return float64(l), float64(h), ok
}

// epochEnd is the last step seen in one epoch of the per-step rows: the
// pairs map a step to a position on the epoch axis.
type epochEnd struct {
	epoch int
	step  int64
}

// stepClock maps training steps to the epoch axis of the chart from the
// per-step rows' own epoch numbers: the steps of epoch e are spread evenly
// over (e_prev, e], and the epoch in progress is spread at the pace of the
// epoch before it, so its samples do not jump when the epoch completes.
type stepClock struct {
	first int64 // first step seen
	ends  []epochEnd
}

// observe records that step belongs to epoch. Epochs going backwards drop the
// ends after it (a resumed run).
func (c *stepClock) observe(epoch int, step int64) {
	n := len(c.ends)
	if n == 0 {
		c.first = step
		c.ends = append(c.ends, epochEnd{epoch, step})
		return
	}
	last := &c.ends[n-1]
	switch {
	case epoch == last.epoch:
		last.step = step
		if n == 1 && step < c.first {
			c.first = step
		}
	case epoch > last.epoch:
		c.ends = append(c.ends, epochEnd{epoch, step})
	default:
		k := sort.Search(n, func(i int) bool { return c.ends[i].epoch >= epoch })
		c.ends = append(c.ends[:k], epochEnd{epoch, step})
		if k == 0 {
			c.first = step
		}
	}
}

// knots returns the piecewise-linear map as (epoch position, step) pairs:
// the start of the first epoch, then the end of each epoch. The end of the
// last epoch is extrapolated from the pace of the one before it.
func (c *stepClock) knots(dst []chart.Point) []chart.Point {
	dst = dst[:0]
	n := len(c.ends)
	if n == 0 {
		return dst
	}
	e0 := c.ends[0]
	dst = append(dst, chart.Point{X: float64(e0.epoch - 1), Y: float64(c.first - 1)})
	for i := 0; i < n-1; i++ {
		dst = append(dst, chart.Point{X: float64(c.ends[i].epoch), Y: float64(c.ends[i].step)})
	}
	last := c.ends[n-1]
	prev := dst[len(dst)-1]
	pace := 0.0 // steps per epoch of the last finished epoch
	if n >= 2 {
		before := dst[len(dst)-2]
		if prev.X > before.X {
			pace = (prev.Y - before.Y) / (prev.X - before.X)
		}
	}
	span := float64(last.epoch) - prev.X
	if pace <= 0 || float64(last.step)-prev.Y > pace*span {
		// First epoch, or the epoch is longer than the last one: it ends at its last step.
		dst = append(dst, chart.Point{X: float64(last.epoch), Y: float64(last.step)})
	} else {
		dst = append(dst, chart.Point{X: float64(last.epoch), Y: prev.Y + pace*span})
	}
	return dst
}

// stepAt maps an epoch position to a step on the knots (both increasing),
// extrapolating flat beyond the ends.
func stepAt(knots []chart.Point, x float64) float64 { return interpolate(knots, x, false) }

// epochAt maps a step to an epoch position, the inverse of stepAt.
func epochAt(knots []chart.Point, step float64) float64 { return interpolate(knots, step, true) }

// interpolate reads the piecewise-linear map through the knots at v: Y at
// X = v, or with inverse X at Y = v (both coordinates increase, so the map
// can be read either way), flat beyond the ends.
func interpolate(knots []chart.Point, v float64, inverse bool) float64 {
	n := len(knots)
	if n == 0 {
		return 0
	}
	in, out := func(p chart.Point) float64 { return p.X }, func(p chart.Point) float64 { return p.Y }
	if inverse {
		in, out = out, in
	}
	if v <= in(knots[0]) {
		return out(knots[0])
	}
	if v >= in(knots[n-1]) {
		return out(knots[n-1])
	}
	k := sort.Search(n, func(i int) bool { return in(knots[i]) >= v })
	a, b := knots[k-1], knots[k]
	if in(b) == in(a) {
		return out(b)
	}
	return out(a) + (v-in(a))*(out(b)-out(a))/(in(b)-in(a))
}
