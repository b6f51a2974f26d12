package figure

import (
	"math"
	"strconv"

	"gonum.org/v1/plot"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
)

// span is a range of values; empty while lo > hi.
type span struct{ lo, hi float64 }

func emptySpan() span { return span{lo: math.Inf(1), hi: math.Inf(-1)} }

func (s *span) add(v float64) {
	if v < s.lo {
		s.lo = v
	}
	if v > s.hi {
		s.hi = v
	}
}

func (s span) empty() bool { return !(s.lo <= s.hi) }

// The value axis covers every finite value drawn, except that a run's
// first few points may not stretch it far beyond the rest: a first epoch
// at the error or loss of a random guess would squash the whole run into
// a strip at the bottom of the picture. Such a point is drawn as a mark at
// the edge with its value beside it (offScale). The screen keeps the same
// rule, so a run looks alike on both.
const (
	// leadMax is how many leading points may be left off the axis: the
	// steep start from random weights rarely lasts longer (common
	// practice; our judgement, no source).
	leadMax = 3
	// leadRoom is how far beyond the rest's span, in spans, the leading
	// points may stretch the axis: the rest keeps at least 1/(1+1.5) = 40 %
	// of the height, and an ordinary falling curve keeps its start.
	leadRoom = 1.5
	// headroom is the share of the span added above and below, so the
	// extreme points do not sit on the frame.
	headroom = 0.04
)

// leadPoints is how many of a series' n leading points may be left off:
// none in a short run, where the start cannot be told from the rest.
func leadPoints(n int) int { return min(leadMax, max(n-1, 0)/3) }

// valueAxis picks the value axis' range from every value (all) and the
// values after the leading points (rest): all, cut to leadRoom spans of
// rest beyond it, with headroom, never below 0 when no value is negative
// (errors and losses are not). A flat range is widened to show ticks.
func valueAxis(all, rest span) (lo, hi float64) {
	if all.empty() {
		return 0, 1
	}
	lo, hi = all.lo, all.hi
	if !rest.empty() {
		room := leadRoom * math.Max(rest.hi-rest.lo, flatRoom(rest.hi))
		hi = math.Min(hi, rest.hi+room)
		lo = math.Max(lo, rest.lo-room)
	}
	// Values near ±MaxFloat64 (a blow-up logged as a number) must not
	// make the span overflow to infinity: the axis keeps a quarter of
	// the float range each way.
	const far = math.MaxFloat64 / 4
	lo, hi = math.Max(lo, -far), math.Min(hi, far)
	if hi-lo <= 0 {
		d := flatRoom(hi)
		lo, hi = lo-d, hi+d
	}
	pad := (hi - lo) * headroom
	floor := lo >= 0
	lo, hi = lo-pad, hi+pad
	if floor && lo < 0 {
		lo = 0
	}
	return lo, hi
}

// flatRoom is the room given around a constant value v: a tenth of it, at
// least 0.05 (5 points of an error rate).
func flatRoom(v float64) float64 { return math.Max(math.Abs(v)*0.1, 0.05) }

// valueTicks marks the value axis at round steps, labelled exactly as the
// Markdown report writes a value of the metric (report.Value): percent for
// error rates, four significant digits otherwise.
type valueTicks struct{ fraction bool }

// tickCount is about how many labelled ticks an axis gets: enough to read
// a value off, few enough for labels like "12.5%" not to crowd 300 pixels.
const tickCount = 5

func (t valueTicks) Ticks(lo, hi float64) []plot.Tick {
	label := func(v float64) string { return report.Value(t.fraction, diagnose.Some(v)) }
	return roundTicks(lo, hi, 0, label)
}

// epochTicks marks the epoch axis at whole epochs.
type epochTicks struct{}

func (epochTicks) Ticks(lo, hi float64) []plot.Tick {
	return roundTicks(lo, hi, 1, func(v float64) string { return strconv.Itoa(int(math.Round(v))) })
}

// roundTicks returns ticks at multiples of a step of 1, 2 or 5 times a
// power of ten (Heckbert, "Nice numbers for graph labels", Graphics Gems,
// 1990), at least least: of the three steps from the largest nice one
// below (hi − lo)/tickCount, the one whose count of ticks in [lo, hi] is
// nearest tickCount (fewer on a tie). When two neighbours would print
// alike (a step finer than the labels show) the step grows until they do
// not.
func roundTicks(lo, hi, least float64, label func(float64) string) []plot.Tick {
	if !(hi > lo) || math.IsInf(hi-lo, 0) {
		return nil
	}
	step := math.Max(niceFloor((hi-lo)/tickCount), least)
	best, bestOff := step, math.Inf(1)
	for s, k := step, 0; k < 3; s, k = nextNice(s), k+1 {
		n := math.Floor(hi/s+1e-9) - math.Ceil(lo/s-1e-9) + 1
		if off := math.Abs(n - tickCount); off < bestOff || (off == bestOff && s > best) {
			best, bestOff = s, off
		}
	}
	step = best
	for tries := 0; tries < 40; tries++ {
		ticks, clash := ticksAt(lo, hi, step, label)
		if !clash {
			return ticks
		}
		step = nextNice(step)
	}
	return nil
}

func ticksAt(lo, hi, step float64, label func(float64) string) ([]plot.Tick, bool) {
	var ticks []plot.Tick
	first := math.Ceil(lo/step - 1e-9)
	for k := first; k*step <= hi+step*1e-9 && len(ticks) < 100; k++ {
		v := k * step
		if math.Abs(v) < step*1e-9 {
			v = 0 // no "-0"
		}
		s := label(v)
		if n := len(ticks); n > 0 && ticks[n-1].Label == s {
			return nil, true
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: s})
	}
	return ticks, false
}

// niceFloor returns the largest of 1, 2 and 5 times a power of ten that
// is at most raw; 1 for a raw that is not a positive number.
func niceFloor(raw float64) float64 {
	if !(raw > 0) || math.IsInf(raw, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	switch f := raw / p * (1 + 1e-12); {
	case f >= 5:
		return 5 * p
	case f >= 2:
		return 2 * p
	}
	return p
}

// nextNice returns the nice step after s: 1 → 2 → 5 → 10.
func nextNice(s float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(s)+1e-9))
	switch math.Round(s / p) {
	case 1:
		return 2 * p
	case 2:
		return 5 * p
	}
	return 10 * p
}
