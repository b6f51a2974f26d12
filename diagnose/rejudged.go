package diagnose

import "slices"

// Rejudged returns a new Tracker that holds the same points as t, judged
// with cfg: the screen's "what if" (another optimal error, another metric)
// while t, which other readers share, stays as it is. It costs one copy of
// the compact history and one replay of the points; the two Trackers share
// nothing afterwards.
func (t *Tracker) Rejudged(cfg Config) *Tracker {
	n := New(cfg)
	n.hist = t.hist.clone()
	n.order = make([]*baseInfo, len(t.order))
	for i, b := range t.order {
		c := *b
		n.order[i] = &c
		n.bases[c.name] = &c
	}
	n.Reconfigure(cfg)
	return n
}

// clone returns a deep copy of the history.
func (h *history) clone() history {
	c := history{
		n:      h.n,
		epochs: h.epochs.clone(),
		lines:  h.lines.clone(),
		segs:   append([]segRun(nil), h.segs...),
		bad:    append([]badMark(nil), h.bad...),
		names:  append([]string(nil), h.names...),
		series: make([]*seriesValues, len(h.series)),
	}
	for i, s := range h.series {
		c.series[i] = &seriesValues{base: s.base, split: s.split, vals: s.vals.clone()}
	}
	return c
}

func (c *floatColumn) clone() floatColumn {
	out := floatColumn{chunks: make([]floatChunk, len(c.chunks))}
	for i, ch := range c.chunks {
		if ch.dec != nil {
			out.chunks[i].dec = &decimalChunk{m: slices.Clone(ch.dec.m), scale: ch.dec.scale}
		}
		if ch.wide != nil {
			out.chunks[i].wide = slices.Clone(ch.wide)
		}
	}
	return out
}

func (c *intColumn) clone() intColumn {
	out := intColumn{chunks: make([]intChunk, len(c.chunks))}
	for i, ch := range c.chunks {
		out.chunks[i].base, out.chunks[i].step, out.chunks[i].even = ch.base, ch.step, ch.even
		if ch.off != nil {
			out.chunks[i].off = slices.Clone(ch.off)
		}
		if ch.wide != nil {
			out.chunks[i].wide = slices.Clone(ch.wide)
		}
	}
	return out
}
