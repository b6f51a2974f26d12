package tui

import (
	"math"
	"sort"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/tui/chart"
)

// maxStepBlocks bounds the summary of one per-step series. Samples go into
// blocks of width consecutive steps, each keeping only its first and last
// step and the least and greatest finite value; when every block is full,
// neighbours merge pairwise and width doubles. Memory stays at most
// maxStepBlocks × 32 B = 128 KiB a series however long the run, and a
// chart 200 columns wide (400 braille dot columns) still draws its band
// from at least 2048/400 ≈ 5 blocks a dot column over a whole run. Below
// maxStepBlocks samples a block holds one sample and the band is exact.
const maxStepBlocks = 4096

// stepBlock summarises width (or, for the last one, fewer) consecutive
// samples of a per-step series.
type stepBlock struct {
	first, last int64   // steps of the block's first and last sample
	lo, hi      float32 // least and greatest finite value; +Inf and −Inf when none
	n           int32   // samples
}

// stepSeries is one per-step column in the screen's store, downsampled as
// it arrives: the chart only ever asks for the min and max of the samples
// under a braille column, so the raw values are not kept. float32 is
// plenty for a curve drawn on a few hundred rows.
type stepSeries struct {
	width  int32 // samples a full block holds: a power of two, 1 at first
	blocks []stepBlock
}

// addRun appends the samples of a run of per-step rows whose steps go up
// (stepRun): row k's step and its value vals[at+k*stride]. It does what
// add does for each sample in turn, but fills the last block in one loop
// of comparisons while it has room, with the block's range in registers;
// a sample that opens a block, or goes back from the block before, takes
// add.
func (s *stepSeries) addRun(run []diagnose.StepRowAt, vals []float64, at, stride int) {
	for k := 0; k < len(run); {
		n := len(s.blocks)
		if n == 0 || s.blocks[n-1].n >= s.width || run[k].Step <= s.blocks[n-1].last {
			s.add(run[k].Step, vals[at+k*stride])
			k++
			continue
		}
		b := &s.blocks[n-1]
		end := min(len(run), k+int(s.width-b.n))
		lo, hi := b.lo, b.hi
		vs := vals[at+k*stride : at+(end-1)*stride+1] // its values, a stride apart
		for i := 0; i < len(vs); i += stride {
			if f := float32(vs[i]); f-f == 0 { // as take does
				if f < lo {
					lo = f
				}
				if f > hi {
					hi = f
				}
			}
		}
		b.last, b.lo, b.hi, b.n = run[end-1].Step, lo, hi, b.n+int32(end-k)
		k = end
	}
}

// add appends one sample, in a new block when the last is full. A step not
// above the last one replaces the samples from that step on: the run was
// resumed from a checkpoint, and the old future did not happen.
func (s *stepSeries) add(step int64, v float64) {
	if n := len(s.blocks); n > 0 && step <= s.blocks[n-1].last {
		s.truncate(step)
	}
	if s.width == 0 {
		s.width = 1
	}
	if n := len(s.blocks); n == 0 || s.blocks[n-1].n >= s.width {
		if n == maxStepBlocks {
			s.halve()
		}
		s.blocks = append(s.blocks, stepBlock{first: step, lo: float32(math.Inf(1)), hi: float32(math.Inf(-1))})
	}
	b := &s.blocks[len(s.blocks)-1]
	b.last = step
	b.n++
	b.take(v)
}

// take widens the block's range to v when v is finite in float32 (f−f is 0
// for a finite f, NaN for NaN and ±Inf, and a float64 beyond float32's range
// becomes ±Inf). Plain comparisons, not min and max: those order NaN and
// −0, which a finite f needs not, at twice the cost.
func (b *stepBlock) take(v float64) {
	if f := float32(v); f-f == 0 {
		if f < b.lo {
			b.lo = f
		}
		if f > b.hi {
			b.hi = f
		}
	}
}

// halve merges the blocks, all full, pairwise: width doubles.
func (s *stepSeries) halve() {
	k := 0
	for i := 0; i < len(s.blocks); i += 2 {
		b := s.blocks[i]
		if i+1 < len(s.blocks) {
			c := s.blocks[i+1]
			b.last, b.n = c.last, b.n+c.n
			b.lo, b.hi = min(b.lo, c.lo), max(b.hi, c.hi)
		}
		s.blocks[k] = b
		k++
	}
	s.blocks = s.blocks[:k]
	s.width *= 2
}

// truncate drops the samples from step on. A block that began before step
// and went on past it mixes samples that stay with samples that did not
// happen, and its min and max cannot be taken apart: it goes too (at most
// width−1 kept samples lost from the band, where an abandoned stretch is
// often the one that diverged). With one sample a block, none is lost.
func (s *stepSeries) truncate(step int64) {
	k := sort.Search(len(s.blocks), func(i int) bool { return s.blocks[i].first >= step })
	if k > 0 && s.blocks[k-1].last >= step {
		k--
	}
	s.blocks = s.blocks[:k]
}

// empty reports whether the series holds no sample.
func (s *stepSeries) empty() bool { return len(s.blocks) == 0 }

// lastStep is the step of the latest sample; the series must not be empty.
func (s *stepSeries) lastStep() int64 { return s.blocks[len(s.blocks)-1].last }

// indexRange returns the blocks [i, j) whose first steps lie in [lo, hi):
// each block belongs to the range its first sample falls in.
func (s *stepSeries) indexRange(lo, hi int64) (int, int) {
	i := sort.Search(len(s.blocks), func(k int) bool { return s.blocks[k].first >= lo })
	j := i + sort.Search(len(s.blocks)-i, func(k int) bool { return s.blocks[i+k].first >= hi })
	return i, j
}

// minMax returns the least and greatest finite value of blocks [i, j) (of
// the whole series with 0, len). ok is false when there is none.
func (s *stepSeries) minMax(i, j int) (lo, hi float64, ok bool) {
	l, h := float32(math.Inf(1)), float32(math.Inf(-1))
	for _, b := range s.blocks[i:j] {
		l, h = min(l, b.lo), max(h, b.hi)
	}
	if l > h {
		return 0, 0, false
	}
	return float64(l), float64(h), true
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
	case epoch == last.epoch && n > 1:
		last.step = step // the common case: a step of the epoch in progress
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
