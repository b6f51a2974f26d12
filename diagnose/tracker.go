package diagnose

import "sort"

// Tracker judges a stream of evaluation points incrementally and keeps the
// judgement made at every point. It is not safe for concurrent use.
//
// Add appends a point. A point whose Epoch is not above the last one
// replaces the judgements from that epoch on (a run resumed from a
// checkpoint, or a reader refining a point it already handed on).
//
// Cost: each point stores one fixed-size record (the running state after
// it: moving averages, noise, best epoch, Prechelt's strip state, and the
// verdict in compact form), so Add does O(1) work from the previous record
// plus two short look-backs (the slope window and one strip), and a rewind
// just drops records. The texts of actions and warnings are built from a
// record when a Judgement is asked for (by Add, At or Latest).
//
// The judged metric: Config.Metric, or when it is empty the best candidate
// seen so far (see Metrics). When a better candidate appears, or a rate
// turns out to be written in percent, every point is judged again in the
// new terms; that happens at most a few times per log.
type Tracker struct {
	cfg    Config // normalized
	points []Point
	recs   records
	cur    state   // the state after the last point
	ckpts  []state // ckpts[c]: the state before point c·ckptEvery

	bases map[string]*baseInfo
	order []*baseInfo // bases in order of first appearance

	metric *baseInfo // judged metric, nil when none is judgeable yet
	loss   *baseInfo // a validation loss, for the overconfidence check
	rate   *baseInfo // a validation error rate, for the same check
	// missing is set when Config.Metric names a metric not (yet) logged.
	missing bool
	// desc describes the judged metric for output (built once per choice).
	desc Metric
	// bayes is the optimal error in use: Config.BayesError, read as a
	// percent when it exceeds 1 for a rate (bayesPercent says so).
	bayes        float64
	bayesPercent bool

	// last caches the judgement of the last point: Latest and At(n−1)
	// after Add return it without building the texts again.
	last      Judgement
	lastValid bool
	// replays counts the times every kept point was judged again.
	replays int

	buf text // scratch for building texts
}

// New returns a Tracker judging with cfg (zero settings take the defaults).
func New(cfg Config) *Tracker {
	t := &Tracker{cfg: cfg.normalized(), bases: make(map[string]*baseInfo)}
	t.choose()
	return t
}

// Config returns the settings in use, with defaults filled in.
func (t *Tracker) Config() Config { return t.cfg }

// Len returns the number of points kept.
func (t *Tracker) Len() int { return t.recs.n }

// Points returns the points kept, oldest first. The slice is shared with
// the Tracker: read it, do not modify it; it is valid until the next Add.
func (t *Tracker) Points() []Point { return t.points[:len(t.points):len(t.points)] }

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

// Add judges p, keeps it, and returns its judgement. A point whose Epoch
// is not above the last kept one first drops the points from that epoch
// on. The Tracker keeps p as it is: do not modify p.Samples afterwards.
func (t *Tracker) Add(p Point) Judgement {
	t.Push(p)
	t.last = t.judgement(t.recs.n - 1)
	t.lastValid = true
	return t.last
}

// Push is Add without building the judgement of p: for reading a whole
// log (a report, a replay in the screen) where only some judgements are
// looked at. At and Latest build them on demand, identical to Add's.
func (t *Tracker) Push(p Point) {
	t.lastValid = false
	changed := t.learn(&p)
	if n := len(t.points); n > 0 && p.Epoch <= t.points[n-1].Epoch {
		t.truncate(p.Epoch)
	}
	t.points = append(t.points, p)
	if changed {
		t.replay()
	} else {
		t.recs.push()
		t.step(t.recs.n - 1)
	}
}

// At returns the judgement as it was made at point i (0 <= i < Len).
// It panics when i is out of range, like a slice index.
func (t *Tracker) At(i int) Judgement {
	if i == t.recs.n-1 && t.lastValid {
		return t.last
	}
	if i < 0 || i >= t.recs.n {
		panic("diagnose: At(" + itoa(i) + ") out of range [0, " + itoa(t.recs.n) + ")")
	}
	return t.judgement(i)
}

// Latest returns the judgement of the last point, if any.
func (t *Tracker) Latest() (Judgement, bool) {
	if t.recs.n == 0 {
		return Judgement{}, false
	}
	return t.At(t.recs.n - 1), true
}

// Reconfigure judges every kept point again with cfg: a new estimate of
// the optimal error, another metric, another tolerance.
func (t *Tracker) Reconfigure(cfg Config) {
	t.cfg = cfg.normalized()
	t.choose()
	t.replay()
	if t.recs.n > 0 {
		t.last = t.judgement(t.recs.n - 1)
		t.lastValid = true
	}
}

// truncate drops the points whose epoch is at or above epoch. Kept epochs
// are strictly increasing, so a binary search finds the first to drop.
func (t *Tracker) truncate(epoch int) {
	n := sort.Search(len(t.points), func(i int) bool { return t.points[i].Epoch >= epoch })
	clear(t.points[n:]) // let the dropped samples be collected
	t.points = t.points[:n]
	t.lastValid = false
	// Restore the state after point n−1: the checkpoint before point
	// c·ckptEvery <= n, then judge the points from there to n−1 again
	// (same inputs, same records).
	c := n / ckptEvery
	t.cur = t.ckpts[c]
	t.ckpts = t.ckpts[:c]
	t.recs.n = c * ckptEvery
	for i := c * ckptEvery; i < n; i++ {
		t.recs.push()
		t.step(i)
	}
}

// Replays counts the times the Tracker judged every kept point again (it
// chose another metric, found a rate written in percent, or was
// reconfigured): a judgement read before the count changed may be stale.
func (t *Tracker) Replays() int { return t.replays }

// replay judges every kept point from scratch.
func (t *Tracker) replay() {
	t.replays++
	t.recs.n = 0
	t.ckpts = t.ckpts[:0]
	for i := range t.points {
		t.recs.push()
		t.step(i)
	}
	t.lastValid = false
}

// learn records the base metrics of p and reports whether the earlier
// points must be judged again: another metric is chosen, or a value above 1
// shows that a rate in use is written in percent (a fraction cannot exceed
// 1), so the earlier values were read on the wrong scale.
func (t *Tracker) learn(p *Point) bool {
	grew, flipped := false, false
	for i := range p.Samples {
		s := &p.Samples[i]
		c := &s.Column
		if c.Kind != KindMetric || c.Split == SplitNone || c.Split > SplitTest {
			continue
		}
		b := t.bases[c.Base]
		if b == nil {
			b = &baseInfo{name: c.Base, order: len(t.order), kind: kindOf(*c), dir: c.Dir}
			t.bases[c.Base] = b
			t.order = append(t.order, b)
			grew = true
		}
		if bit := uint8(1) << c.Split; b.splits&bit == 0 {
			b.splits |= bit
			grew = true
		}
		if !b.percent && b.kind.bounded() && (c.Percent || s.Value > 1 && finite(s.Value)) {
			b.percent = true
			flipped = flipped || b == t.metric || b == t.loss || b == t.rate
		}
	}
	if grew {
		m, l, r, miss := t.metric, t.loss, t.rate, t.missing
		t.choose()
		grew = t.metric != m || t.loss != l || t.rate != r || t.missing != miss
	}
	return grew || flipped
}

// choose picks the judged metric and the two series of the
// overconfidence check from the bases seen.
func (t *Tracker) choose() {
	t.metric, t.loss, t.rate, t.missing = nil, nil, nil, false
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
	t.bayes, t.bayesPercent = t.cfg.BayesError, false
	if t.metric != nil && t.metric.kind.bounded() && t.bayes > 1 && t.bayes <= 100 {
		t.bayes, t.bayesPercent = t.bayes/100, true
	}
	t.desc = metricOf(t.metric)
	if t.metric == nil && t.cfg.Metric != "" {
		name := Printable(t.cfg.Metric)
		t.desc = Metric{Base: name, Label: name}
	}
	const val = uint8(1) << SplitVal
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
}

// recChunk is how many records are allocated together: growing the
// history never copies records (a 10 000-point run would otherwise move
// megabytes at each doubling).
const recChunk = 128

// records is the per-point history, in chunks of recChunk.
type records struct {
	chunks []*[recChunk]rec
	n      int
}

func (s *records) at(i int) *rec { return &s.chunks[i/recChunk][i%recChunk] }

// push appends a zero record.
func (s *records) push() {
	if s.n/recChunk == len(s.chunks) {
		s.chunks = append(s.chunks, new([recChunk]rec))
	}
	*s.at(s.n) = rec{}
	s.n++
}
