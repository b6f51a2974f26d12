package diagnose

import "sort"

// history keeps the inputs of every judged point, compactly, so that any
// past judgement can be rebuilt exactly: the epoch, the log line, the
// values of each judgeable series (one base metric on one split), and the
// rare facts (a segment change, a non-finite metric value) as sparse
// lists. It keeps no Point and no Sample: columns that cannot be judged
// (the learning rate, seconds per epoch) are not the Tracker's to keep.
//
// Cost per point (columns.go): 4 bytes each for the epoch and the line,
// and 4 per judgeable series logged as short decimals (8 otherwise): a log
// of train and validation loss and accuracy takes 24 bytes.
type history struct {
	n      int
	epochs intColumn
	lines  intColumn
	series []*seriesValues
	// segs holds the segment of the points from each change on.
	segs []segRun
	// bad holds the points with a non-finite metric value: the first such
	// sample, whatever its base or split (it makes the point diverging).
	bad   []badMark
	names []string // column names of bad marks, each kept once
	// ahead is the position a batch being added is to reach (Reserve):
	// the columns grow once to hold it.
	ahead int
}

type segRun struct{ from, segment int }

// badMark is the first non-finite metric sample of point i.
type badMark struct {
	i     int
	name  int32 // index into history.names
	value float64
}

// seriesValues holds one base metric on one split, as logged.
type seriesValues struct {
	base  string
	split Split
	vals  floatColumn
}

// epoch returns the epoch of point i.
func (h *history) epoch(i int) int { return h.epochs.at(i) }

// line returns the log line of point i (0 when unknown).
func (h *history) line(i int) int { return h.lines.at(i) }

// segment returns the segment of point i.
func (h *history) segment(i int) int {
	k := sort.Search(len(h.segs), func(k int) bool { return h.segs[k].from > i })
	if k == 0 {
		return 0
	}
	return h.segs[k-1].segment
}

// badAt returns the first non-finite metric sample of point i.
func (h *history) badAt(i int) (name string, value float64, ok bool) {
	k := sort.Search(len(h.bad), func(k int) bool { return h.bad[k].i >= i })
	if k < len(h.bad) && h.bad[k].i == i {
		return h.names[h.bad[k].name], h.bad[k].value, true
	}
	return "", 0, false
}

// value returns the value series s logged at point i.
func (h *history) value(s int, i int) (float64, bool) {
	if s < 0 {
		return 0, false
	}
	return h.series[s].vals.at(i)
}

// seriesOf returns the index of the series of base on split, adding it.
func (h *history) seriesOf(base string, split Split) int {
	for k, s := range h.series {
		if s.split == split && s.base == base {
			return k
		}
	}
	h.series = append(h.series, &seriesValues{base: base, split: split})
	return len(h.series) - 1
}

// add appends point p. keep gives the series of a metric column, or -1
// when its base cannot be judged (such values are not kept). Within a
// point, the last sample of a series is its value.
func (h *history) add(p *Point, keep func(c *Column) int) {
	i := h.n
	h.n++
	h.epochs.setAhead(i, p.Epoch, h.ahead)
	h.lines.setAhead(i, p.Line, h.ahead)
	if len(h.segs) == 0 && p.Segment != 0 || len(h.segs) > 0 && h.segs[len(h.segs)-1].segment != p.Segment {
		h.segs = append(h.segs, segRun{from: i, segment: p.Segment})
	}
	marked := false
	for k := range p.Samples {
		smp := &p.Samples[k]
		c := smp.Column
		if c.Kind != KindMetric {
			continue
		}
		if !marked && !finite(smp.Value) {
			marked = true
			h.bad = append(h.bad, badMark{i: i, name: h.nameID(c.Name), value: smp.Value})
		}
		if s := keep(c); s >= 0 {
			h.series[s].vals.setAhead(i, smp.Value, h.ahead)
		}
	}
}

func (h *history) nameID(name string) int32 {
	for k := len(h.names) - 1; k >= 0; k-- {
		if h.names[k] == name {
			return int32(k)
		}
	}
	h.names = append(h.names, name)
	return int32(len(h.names) - 1)
}

// truncate keeps the first n points.
func (h *history) truncate(n int) {
	if n >= h.n {
		return
	}
	h.n = n
	h.epochs.truncate(n)
	h.lines.truncate(n)
	for _, s := range h.series {
		s.vals.truncate(n)
	}
	k := sort.Search(len(h.segs), func(k int) bool { return h.segs[k].from >= n })
	h.segs = h.segs[:k]
	k = sort.Search(len(h.bad), func(k int) bool { return h.bad[k].i >= n })
	h.bad = h.bad[:k]
}
