package diagnose

import "math"

// Columns of the history, stored exactly in about half the bytes of their
// plain form when the values allow it.
//
// A log prints its values as short decimals ("0.549255"), and a float64
// parsed from a decimal d·10⁻ᵏ is the correctly rounded quotient of two
// exact doubles, d / 10ᵏ: so a chunk whose values are all such decimals,
// with |d| < 2³¹ and a common k ≤ maxScale, keeps d as an int32 and reads
// back the very same bits. Each value is checked when it is stored (the
// quotient must give back its bits, -0 and NaN payloads included), and a
// chunk that meets a value that does not fit is widened to plain float64
// bits at once. Epochs and line numbers are kept as int32 offsets from the
// first value of their chunk, widened the same way.
//
// A chunk's values grow with the points set in it (growth below), so a
// short run costs its values, not a whole chunk: a sweep of a thousand
// runs of 300 epochs kept 24 KiB a run in chunks of 1,024 values, of which
// 7 KiB were values (bench/sweep.sh, heap profile).

// chunkLen is how many values a chunk holds at most: 4 or 8 KiB, so a
// long run is a short list of chunks (design choice).
const chunkLen = 1024

// minGrowth is the least room a chunk's values are grown to, and
// growthDiv what they grow by beyond it (a quarter of their room): at most
// a quarter of a chunk's room stands empty, and a run appended one point
// at a time copies its chunk some 13 times on its way to 300 values (a few
// KiB in all), where doubling would leave half the room empty (design
// choice). Reserve gives a batch of points exactly the room it needs.
const (
	minGrowth = 16
	growthDiv = 4
)

// grown returns s with at least n values (n ≤ chunkLen), the new ones
// set to fill: s itself while its room suffices, else in new room: of
// exactly want values for a first batch announced (want > n, clamped to
// chunkLen), else of want values or a quarter more, whichever is larger.
func grown[T any](s []T, n, want int, fill T) []T {
	if n > cap(s) {
		room := min(chunkLen, max(n, cap(s)+cap(s)/growthDiv, minGrowth))
		switch {
		case want > n && cap(s) == 0:
			room = min(chunkLen, want) // a first batch: exactly its room
		case want > n:
			// Never less than the quarter's growth: batches of a few
			// points each, as a live run sends them, would otherwise
			// copy the chunk at every batch.
			room = min(chunkLen, max(want, room))
		}
		t := make([]T, len(s), room)
		copy(t, s)
		s = t
	}
	for len(s) < n {
		s = append(s, fill)
	}
	return s
}

// maxScale is the largest power of ten a decimal chunk divides by: 10⁹ is
// exact in float64, and nine decimals cover what logs print.
const maxScale = 9

var pow10 = [maxScale + 1]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9}

// The int32 codes of a decimal chunk that are not decimals.
const (
	codeAbsent = math.MinInt32 + iota
	codeNaN
	codePosInf
	codeNegInf
	minDecimal // the smallest decimal mantissa
)

// floatColumn holds float64 values by position; a position never set
// reads as absent.
type floatColumn struct {
	chunks []floatChunk
}

type floatChunk struct {
	dec  *decimalChunk // values as decimals; nil once widened
	wide []float64     // values as they are; absentValue where unset or beyond
}

// decimalChunk holds the chunk's first len(m) positions; later ones are
// absent.
type decimalChunk struct {
	m     []int32
	scale uint8 // values are m / 10^scale
}

// absentValue marks an unset position of a widened chunk: a NaN whose
// payload no parser or arithmetic produces (stored NaNs are canonical).
var absentValue = math.Float64frombits(0x7ff4_0000_fa57_0001)

// at returns the value at i, and false where none was set.
func (c *floatColumn) at(i int) (float64, bool) {
	k := i / chunkLen
	if k >= len(c.chunks) {
		return 0, false
	}
	ch := &c.chunks[k]
	switch {
	case ch.dec != nil:
		j := i % chunkLen
		if j >= len(ch.dec.m) {
			return 0, false
		}
		m := ch.dec.m[j]
		switch m {
		case codeAbsent:
			return 0, false
		case codeNaN:
			return math.NaN(), true
		case codePosInf:
			return math.Inf(1), true
		case codeNegInf:
			return math.Inf(-1), true
		}
		return float64(m) / pow10[ch.dec.scale], true
	case ch.wide != nil:
		j := i % chunkLen
		if j >= len(ch.wide) {
			return 0, false
		}
		v := ch.wide[j]
		if math.Float64bits(v) == math.Float64bits(absentValue) {
			return 0, false
		}
		return v, true
	}
	return 0, false
}

// set stores v at i. A NaN is stored as math.NaN(): the judgement does not
// tell NaNs apart.
func (c *floatColumn) set(i int, v float64) { c.setAhead(i, v, 0) }

// setAhead is set where positions up to end−1 are about to be set too (a
// batch of points): the chunk grows once to hold them.
func (c *floatColumn) setAhead(i int, v float64, end int) {
	if v != v {
		v = math.NaN()
	}
	k := i / chunkLen
	for len(c.chunks) <= k {
		c.chunks = append(c.chunks, floatChunk{})
	}
	ch := &c.chunks[k]
	if ch.dec == nil && ch.wide == nil {
		ch.dec = new(decimalChunk)
	}
	j, want := i%chunkLen, end-k*chunkLen
	if ch.dec != nil {
		ch.dec.m = grown(ch.dec.m, j+1, want, codeAbsent)
		if !ch.dec.put(j, v) {
			ch.widen()
		}
	}
	if ch.wide != nil {
		ch.wide = grown(ch.wide, j+1, want, absentValue)
		ch.wide[j] = v
	}
}

// put stores v as a decimal at j, raising the chunk's scale when v needs
// more decimals; it reports false when v or the rescaled chunk does not
// fit.
func (d *decimalChunk) put(j int, v float64) bool {
	switch {
	case v != v:
		d.m[j] = codeNaN
		return true
	case math.IsInf(v, 1):
		d.m[j] = codePosInf
		return true
	case math.IsInf(v, -1):
		d.m[j] = codeNegInf
		return true
	}
	for s := d.scale; s <= maxScale; s++ {
		m, ok := decimal(v, s)
		if !ok {
			continue
		}
		if s > d.scale && !d.rescale(s) {
			return false
		}
		d.m[j] = m
		return true
	}
	return false
}

// decimal returns m with m / 10^s == v to the bit, when there is one that
// fits.
func decimal(v float64, s uint8) (int32, bool) {
	f := math.Round(v * pow10[s])
	if !(f >= minDecimal && f <= math.MaxInt32) {
		return 0, false
	}
	m := int32(f)
	return m, math.Float64bits(float64(m)/pow10[s]) == math.Float64bits(v)
}

// rescale multiplies the chunk's decimals up to scale s, when they fit
// (the values stay the same: m·10^(s−scale) / 10^s is still exact).
func (d *decimalChunk) rescale(s uint8) bool {
	f := int64(pow10[s-d.scale])
	for _, m := range d.m {
		if m >= minDecimal {
			if x := int64(m) * f; x < minDecimal || x > math.MaxInt32 {
				return false
			}
		}
	}
	for j, m := range d.m {
		if m >= minDecimal {
			d.m[j] = int32(int64(m) * f)
		}
	}
	d.scale = s
	return true
}

// widen turns a decimal chunk into plain values, in room as large.
func (ch *floatChunk) widen() {
	var w []float64
	if d := ch.dec; d != nil {
		w = make([]float64, len(d.m), cap(d.m))
		col := floatColumn{chunks: []floatChunk{{dec: d}}}
		for j := range w {
			w[j] = absentValue
			if v, ok := col.at(j); ok {
				w[j] = v
			}
		}
	}
	ch.dec, ch.wide = nil, w
}

// truncate keeps the first n positions: later ones read as absent again.
func (c *floatColumn) truncate(n int) {
	c.chunks = keepChunks(c.chunks, n)
	if n%chunkLen == 0 || n/chunkLen >= len(c.chunks) {
		return
	}
	ch, j := &c.chunks[n/chunkLen], n%chunkLen
	switch {
	case ch.dec != nil:
		ch.dec.m = ch.dec.m[:min(j, len(ch.dec.m))]
	case ch.wide != nil:
		ch.wide = ch.wide[:min(j, len(ch.wide))]
	}
}

// intColumn holds integers by position (epochs, line numbers). Only the
// positions set are read.
//
// A chunk whose values so far step evenly (epochs 1, 2, 3, …; the lines of
// a table of one row per epoch) keeps only its first value and the step:
// nothing a value. The first value that breaks the step, or a gap, turns
// the chunk into offsets (then plain values, as above). Each value is
// checked as it is stored against the very sum that reads it back, in
// the same wrapping integer arithmetic, so the values read are those set.
type intColumn struct {
	chunks []intChunk
}

type intChunk struct {
	base int
	// step and even: the chunk's first even values are base + j·step,
	// while off and wide are nil.
	step int
	even int
	off  []int32 // values as offsets from base; nil once widened
	wide []int
}

func (c *intColumn) at(i int) int {
	k := i / chunkLen
	if k >= len(c.chunks) {
		return 0
	}
	ch, j := &c.chunks[k], i%chunkLen
	switch {
	case j < ch.even:
		return ch.base + j*ch.step
	case j < len(ch.off):
		return ch.base + int(ch.off[j])
	case j < len(ch.wide):
		return ch.wide[j]
	}
	return 0
}

func (c *intColumn) set(i, v int) { c.setAhead(i, v, 0) }

// setAhead is set where positions up to end−1 are about to be set too (a
// batch of points): the chunk grows once to hold them.
func (c *intColumn) setAhead(i, v, end int) {
	k := i / chunkLen
	for len(c.chunks) <= k {
		c.chunks = append(c.chunks, intChunk{})
	}
	ch := &c.chunks[k]
	j, want := i%chunkLen, end-k*chunkLen
	if ch.off == nil && ch.wide == nil {
		switch {
		case ch.even == 0 && j == 0:
			ch.base, ch.even = v, 1
			return
		case ch.even == 1 && j == 1:
			ch.step, ch.even = v-ch.base, 2
			return
		case j <= ch.even && j > 0 && v == ch.base+j*ch.step:
			ch.even = max(ch.even, j+1)
			return
		case ch.even == 0:
			ch.base = v // the chunk's first value, not at its start
		}
		ch.uneven(want)
	}
	if ch.off != nil {
		if d := v - ch.base; d >= math.MinInt32 && d <= math.MaxInt32 && (v >= ch.base) == (d >= 0) {
			ch.off = grown(ch.off, j+1, want, 0)
			ch.off[j] = int32(d)
			return
		}
		ch.widen()
	}
	ch.wide = grown(ch.wide, j+1, want, 0)
	ch.wide[j] = v
}

// maxEvenOffset bounds the step whose multiples, up to chunkLen, fit an
// int32 offset.
const maxEvenOffset = math.MaxInt32 / chunkLen

// uneven turns a chunk of evenly stepping values into offsets from its
// first, or plain values when the steps do not fit an int32, in room for
// want values.
func (ch *intChunk) uneven(want int) {
	n := ch.even
	ch.even = 0
	if ch.step >= -maxEvenOffset && ch.step <= maxEvenOffset { // j·step fits an int32
		ch.off = grown([]int32{}, n, want, 0)
		for j := range n {
			ch.off[j] = int32(j * ch.step)
		}
		return
	}
	ch.wide = grown([]int{}, n, want, 0)
	for j := range n {
		ch.wide[j] = ch.base + j*ch.step
	}
}

// widen turns a chunk of offsets into plain values, in room as large.
func (ch *intChunk) widen() {
	w := make([]int, len(ch.off), max(1, cap(ch.off)))
	for j, d := range ch.off {
		w[j] = ch.base + int(d)
	}
	ch.off, ch.wide = nil, w
}

// truncate keeps the first n positions.
func (c *intColumn) truncate(n int) {
	c.chunks = keepChunks(c.chunks, n)
	if n%chunkLen == 0 || n/chunkLen >= len(c.chunks) {
		return
	}
	ch, j := &c.chunks[n/chunkLen], n%chunkLen
	switch {
	case ch.off != nil:
		ch.off = ch.off[:min(j, len(ch.off))]
	case ch.wide != nil:
		ch.wide = ch.wide[:min(j, len(ch.wide))]
	default:
		ch.even = min(j, ch.even)
	}
}

// keepChunks drops the chunks that hold no position below n, letting
// their memory go.
func keepChunks[C any](chunks []C, n int) []C {
	k := (n + chunkLen - 1) / chunkLen
	if k < len(chunks) {
		clear(chunks[k:])
		chunks = chunks[:k]
	}
	return chunks
}
