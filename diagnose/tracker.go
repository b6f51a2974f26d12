package diagnose

import "sort"

// Tracker judges a stream of evaluation points incrementally and can give
// the judgement made at any point. It is not safe for concurrent use,
// except that At, Latest, Len, Metrics, Config and Revision may be called
// concurrently with each other (not with Add, Push or Reconfigure).
//
// Add appends a point. A point whose Epoch is not above the last one
// replaces the judgements from that epoch on (a run resumed from a
// checkpoint, or a reader refining a point it already handed on).
//
// Cost: the Tracker keeps the inputs of each point compactly (its epoch
// and line, nothing while they step evenly, and the values of each
// judgeable series, 4 bytes each for printed decimals: 30 bytes a point
// for a log of train and validation loss and accuracy, BenchmarkTrackerMemory)
// and a copy of its running state every ckptEvery points (about 14 bytes
// per point), never a Point or a judgement. Add does O(1) work from the state of the previous point
// plus one strip of look-back at strip ends; At(i) restores the copy at or
// before i and judges at most ckptEvery−1 points again (tens of µs); a
// rewind does the same at the point it goes back to.
//
// The judged metric: Config.Metric, or when it is empty the best candidate
// seen so far (see Metrics). When a better candidate appears, or a rate
// turns out to be written in percent, every point is judged again in the
// new terms (Revision counts it); that happens at most a few times per
// log.
type Tracker struct {
	cfg  Config // normalized
	hist history
	cur  state // the state after the last point
	// ckpts[c] is the state before point c·ckptEvery; ckpts[0] is nil,
	// since the state before the first point is always newState() (a
	// thousand runs of 300 epochs kept 1.7 MB of it).
	ckpts []*state
	// lastRec is the record of the last point (cur is the state after it).
	lastRec rec
	// revision counts the times every kept point was judged again.
	revision uint64

	bases map[string]*baseInfo
	order []*baseInfo // bases in order of first appearance

	metric *baseInfo // judged metric, nil when none is judgeable yet
	loss   *baseInfo // a validation loss, for the overconfidence check
	rate   *baseInfo // a validation error rate, for the same check and the chance level
	// lossT is a loss logged on the training split (loss when it has one):
	// a loss grown by orders of magnitude is a collapse (chance.go).
	lossT *baseInfo
	// missing is set when Config.Metric names a metric not (yet) logged.
	missing bool
	// desc describes the judged metric for output (built once per choice).
	desc Metric
	// bayes is the optimal error in use (chooseBayes): Config.BayesError,
	// read as a percent when it exceeds 1 for a rate (bayesPercent says
	// so), or turned from a label-noise rate into the optimal loss
	// (bayesNote says how); bayesGiven says it was given for the judged
	// metric, bayesUnused that a rate was given for a loss it cannot
	// apply to.
	bayes        float64
	bayesGiven   bool
	bayesPercent bool
	bayesUnused  bool
	bayesNote    string

	// last caches the judgement of the last point: Latest and At(n−1)
	// after Add return it without building the texts again. It is
	// allocated by the first Add: a Tracker fed by Push alone (a sweep's
	// runs) keeps no room for it (760 bytes).
	last      *Judgement
	lastValid bool
	scratch   text // the texts of Add's judgements are built here
}

// New returns a Tracker judging with cfg (zero settings take the defaults).
func New(cfg Config) *Tracker {
	t := &Tracker{cfg: cfg.normalized(), bases: make(map[string]*baseInfo), cur: newState()}
	t.choose()
	return t
}

// Config returns the settings in use, with defaults filled in.
func (t *Tracker) Config() Config { return t.cfg }

// Len returns the number of points kept.
func (t *Tracker) Len() int { return t.hist.n }

// Revision counts the times the Tracker judged every kept point again:
// another metric was chosen, a rate turned out to be written in percent,
// or Reconfigure. A reader that keeps values from earlier judgements
// refreshes them when it changes. (A rewind drops points but does not
// change the judgements before them.)
func (t *Tracker) Revision() uint64 { return t.revision }

// Epoch returns the epoch of point i (0 <= i < Len), without rebuilding
// its judgement.
func (t *Tracker) Epoch(i int) int {
	t.check(i)
	return t.hist.epoch(i)
}

// Logged returns the value logged at point i on split s, converted to the
// judged metric: what At(i).Estimate(s).Raw holds, without rebuilding the
// judgement (for redrawing a whole curve after a Revision).
func (t *Tracker) Logged(i int, s Split) Num {
	t.check(i)
	if t.metric == nil || s < SplitTrain || s > SplitTest {
		return None
	}
	v, ok := t.hist.value(t.metric.series[s], i)
	if !ok {
		return None
	}
	return Some(judgedValue(t.metric, v))
}

// Metrics returns the judgeable base metrics seen (error rates, scores,
// lower-is-better metrics), in order of first appearance, for cycling
// through them.
func (t *Tracker) Metrics() []string {
	out := make([]string, 0, len(t.order))
	for _, b := range t.order {
		if b.kind != kindNone {
			out = append(out, b.name)
		}
	}
	return out
}

// Add judges p, keeps what judging it again needs, and returns its
// judgement. A point whose Epoch is not above the last kept one first
// drops the points from that epoch on. The Tracker keeps nothing of p
// itself: p may be reused afterwards.
func (t *Tracker) Add(p Point) Judgement {
	t.Push(p)
	t.keepLast()
	return *t.last
}

// keepLast judges the last point into the cache Latest reads.
func (t *Tracker) keepLast() {
	if t.last == nil {
		t.last = new(Judgement)
	}
	*t.last = t.judgement(t.hist.n-1, &t.lastRec, &t.cur, &t.scratch)
	t.lastValid = true
}

// Push is Add without building the judgement of p: for reading a whole
// log (a report, a replay in the screen) where only some judgements are
// looked at. At and Latest build them on demand, identical to Add's.
func (t *Tracker) Push(p Point) {
	t.lastValid = false
	changed := t.learn(&p)
	if n := t.hist.n; n > 0 && p.Epoch <= t.hist.epoch(n-1) {
		t.truncate(p.Epoch)
	}
	t.hist.add(&p, t.keep)
	if changed {
		t.replay()
	} else {
		t.advance(t.hist.n - 1)
	}
}

// Reserve says that the next n points are about to be pushed (a batch of
// a log's backlog): the history grows once to hold them, not step by step
// with room to spare. It changes no judgement.
func (t *Tracker) Reserve(n int) { t.hist.ahead = t.hist.n + max(0, n) }

// keep returns the series that holds metric column c, or -1 when its base
// cannot be judged (learn has seen every base of the point).
func (t *Tracker) keep(c *Column) int {
	if c.Split == SplitNone || c.Split > SplitTest {
		return -1
	}
	b := t.bases[c.Base]
	if b == nil || b.kind == kindNone {
		return -1
	}
	if b.series[c.Split] < 0 {
		b.series[c.Split] = t.hist.seriesOf(b.name, c.Split)
	}
	return b.series[c.Split]
}

// advance judges point i from the current state, keeping a copy of the
// state before it every ckptEvery points.
func (t *Tracker) advance(i int) {
	if i%ckptEvery == 0 {
		c := i / ckptEvery
		if c == 0 {
			t.ckpts = append(t.ckpts[:0], nil)
		} else if c < len(t.ckpts) {
			*t.ckpts[c] = t.cur
			t.ckpts = t.ckpts[:c+1]
		} else {
			st := t.cur
			t.ckpts = append(t.ckpts, &st)
		}
	}
	t.step(&t.cur, i, &t.lastRec)
}

// At returns the judgement as it was made at point i (0 <= i < Len).
// It panics when i is out of range, like a slice index.
func (t *Tracker) At(i int) Judgement {
	t.check(i)
	n := t.hist.n
	if i == n-1 {
		if t.lastValid {
			return *t.last
		}
		return t.judgement(i, &t.lastRec, &t.cur, nil)
	}
	// Judge again from the state copy at or before i: the same inputs in
	// the same order give the same record, bit for bit.
	c := i / ckptEvery
	st := t.ckpt(c)
	var r rec
	for k := c * ckptEvery; k <= i; k++ {
		t.step(&st, k, &r)
	}
	return t.judgement(i, &r, &st, nil)
}

// ckpt returns the state before point c·ckptEvery.
func (t *Tracker) ckpt(c int) state {
	if p := t.ckpts[c]; p != nil {
		return *p
	}
	return newState()
}

func (t *Tracker) check(i int) {
	if i < 0 || i >= t.hist.n {
		panic("diagnose: point " + itoa(i) + " out of range [0, " + itoa(t.hist.n) + ")")
	}
}

// Latest returns the judgement of the last point, if any.
func (t *Tracker) Latest() (Judgement, bool) {
	if t.hist.n == 0 {
		return Judgement{}, false
	}
	return t.At(t.hist.n - 1), true
}

// Reconfigure judges every kept point again with cfg: a new estimate of
// the optimal error, another metric, another tolerance.
func (t *Tracker) Reconfigure(cfg Config) {
	t.cfg = cfg.normalized()
	t.choose()
	t.replay()
	if t.hist.n > 0 {
		t.keepLast()
	}
}

// truncate drops the points whose epoch is at or above epoch. Kept epochs
// are strictly increasing, so a binary search finds the first to drop.
func (t *Tracker) truncate(epoch int) {
	n := sort.Search(t.hist.n, func(i int) bool { return t.hist.epoch(i) >= epoch })
	t.hist.truncate(n)
	t.lastValid = false
	// Restore the state after point n−1: the copy before point
	// c·ckptEvery <= n, then judge the points from there to n−1 again
	// (same inputs, same records).
	c := n / ckptEvery
	if c < len(t.ckpts) {
		t.cur = t.ckpt(c)
		t.ckpts = t.ckpts[:c]
	}
	for i := c * ckptEvery; i < n; i++ {
		t.advance(i)
	}
}

// replay judges every kept point from scratch.
func (t *Tracker) replay() {
	t.cur = newState()
	t.ckpts = t.ckpts[:0]
	for i := 0; i < t.hist.n; i++ {
		t.advance(i)
	}
	t.lastValid = false
	t.revision++
}

// learn records the base metrics of p and reports whether the earlier
// points must be judged again: another metric is chosen, a value above 1
// shows that a rate in use is written in percent (a fraction cannot exceed
// 1), so the earlier values were read on the wrong scale, or a judgeable
// metric appears while the one asked for is missing (every point's warning
// lists the judgeable ones).
func (t *Tracker) learn(p *Point) bool {
	grew, flipped, listed := false, false, false
	for i := range p.Samples {
		s := &p.Samples[i]
		c := s.Column
		if c.Kind != KindMetric || c.Split == SplitNone || c.Split > SplitTest {
			continue
		}
		b := t.bases[c.Base]
		if b == nil {
			b = &baseInfo{name: c.Base, order: len(t.order), kind: kindOf(*c), dir: c.Dir, series: noSeries}
			t.bases[c.Base] = b
			t.order = append(t.order, b)
			grew = true
			listed = listed || t.missing && b.kind != kindNone
		}
		if bit := uint8(1) << c.Split; b.splits&bit == 0 {
			b.splits |= bit
			grew = true
		}
		if !b.percent && b.kind.bounded() && (c.Percent || s.Value > 1 && finite(s.Value)) {
			b.percent = true
			flipped = flipped || b == t.metric || b == t.loss || b == t.rate || b == t.lossT
		}
	}
	if grew {
		m, l, r, lt, miss := t.metric, t.loss, t.rate, t.lossT, t.missing
		t.choose()
		grew = t.metric != m || t.loss != l || t.rate != r || t.lossT != lt || t.missing != miss
	}
	return grew || flipped || listed && t.missing
}

// choose picks the judged metric and the two series of the
// overconfidence check from the bases seen.
func (t *Tracker) choose() {
	t.metric, t.loss, t.rate, t.lossT, t.missing = nil, nil, nil, nil, false
	if t.cfg.Metric != "" {
		if b := t.bases[t.cfg.Metric]; b != nil && b.kind != kindNone {
			t.metric = b
		} else {
			t.missing = true
		}
	} else {
		best := -1
		for _, b := range t.order {
			if b.kind == kindNone {
				continue
			}
			if r := b.rank(); r > best {
				best, t.metric = r, b
			}
		}
	}
	t.desc = metricOf(t.metric)
	if t.metric == nil && t.cfg.Metric != "" {
		name := Printable(t.cfg.Metric)
		t.desc = Metric{Base: name, Label: name}
	}
	const val, train = uint8(1) << SplitVal, uint8(1) << SplitTrain
	for _, b := range t.order {
		if b.splits&val == 0 {
			continue
		}
		if t.loss == nil && b.kind == kindLower && isLossName(b.name) {
			t.loss = b
		}
		if t.rate == nil && b.kind == kindErrorRate {
			t.rate = b
		}
	}
	if t.loss != nil && t.loss.splits&train != 0 {
		t.lossT = t.loss
	}
	for _, b := range t.order {
		if t.lossT == nil && b.splits&train != 0 && b.kind == kindLower && isLossName(b.name) {
			t.lossT = b
		}
	}
	t.chooseBayes()
}
