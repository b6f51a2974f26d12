package tui

import (
	"math"
	"time"

	"github.com/fitgap/fitgap/diagnose"
)

// row is what the chart needs of one judged point, in our own store: the
// chart is rebuilt from these, never from the judgements, so a rebuild
// walks flat numbers.
type row struct {
	epoch    int
	train    float64 // judged (converted) raw values; NaN when absent
	val      float64
	trainDev float64
	bad      bool      // a judged split's value was NaN or ±Inf
	total    int       // announced number of epochs, 0 if unknown
	logged   time.Time // the point's own time column, if any
	arrived  time.Time // when the screen received it
	batch    int       // which FeedMsg brought it (intervals inside one batch are backlog, not pace)
}

// column is one other numeric column of the log, aligned with the rows
// (NaN where a point did not have it).
type column struct {
	meta diagnose.Column // Name sanitized
	vals []float64
}

// store keeps the raw series the screen draws: one row per judged point,
// the other columns per point, and the per-step series.
type store struct {
	rows    []row
	cols    []*column
	colByID map[string]*column

	steps     map[string]*stepSeries // per-step metric columns by name
	stepMeta  map[string]diagnose.Column
	stepOrder []string
	// stepCols is what each column of the per-step rows feeds, by the
	// rows' column index, worked out once per column.
	stepCols []*stepCol
	// shapes and shapeRoom are what each shape of a batch's per-step rows
	// feeds (shapeFeeds), kept for the next batch.
	shapes    [][]shapeFeed
	shapeRoom []shapeFeed
	clock     stepClock
	// percent remembers bases seen above 1 in per-step rows: a rate or score
	// written in percent (the same inference the judgement makes).
	percent map[string]bool

	// nonFinite lists, for the rare rows that have one, the base metrics
	// whose logged value was NaN or ±Inf at that row: a row is marked bad
	// when the judged metric is among them, whichever metric is judged.
	nonFinite map[int][]string

	// optimal holds the optimal errors given per base metric (flag or `b`),
	// so cycling the metric does not carry one metric's estimate to another.
	optimal map[string]givenOptimal
}

// givenOptimal is an optimal error as given for one metric: its value and
// whether it was given as a rate (diagnose.Config.BayesErrorRate).
type givenOptimal struct {
	v    float64
	rate bool
}

func newStore() *store {
	return &store{
		colByID:  map[string]*column{},
		steps:    map[string]*stepSeries{},
		stepMeta: map[string]diagnose.Column{},
		percent:  map[string]bool{},
	}
}

// truncate keeps the first n rows and column values.
func (s *store) truncate(n int) {
	if n < len(s.rows) {
		s.rows = s.rows[:n]
	}
	for _, c := range s.cols {
		if n < len(c.vals) {
			c.vals = c.vals[:n]
		}
	}
	for i := range s.nonFinite {
		if i >= n {
			delete(s.nonFinite, i)
		}
	}
}

// add stores the judgement j of point p, which replaces the rows from
// j.Index on (the Tracker's rule for a point whose epoch is not above the
// last one).
func (s *store) add(j diagnose.Judgement, p diagnose.Point, arrived time.Time, batch int) {
	n := j.Index
	if n < 0 || n > len(s.rows) {
		n = len(s.rows) // a gap cannot happen with the Tracker; stay aligned anyway
	}
	s.truncate(n)
	r := row{epoch: p.Epoch, total: p.Total, logged: p.Time, arrived: arrived, batch: batch}
	if j.Epoch != 0 || p.Epoch == 0 {
		r.epoch = j.Epoch
	}
	s.rows = append(s.rows, r)
	for _, smp := range p.Samples {
		switch smp.Column.Kind {
		case diagnose.KindEpoch, diagnose.KindStep, diagnose.KindTime:
			continue
		case diagnose.KindMetric:
			if !isFinite(smp.Value) {
				if s.nonFinite == nil {
					s.nonFinite = map[int][]string{}
				}
				s.nonFinite[n] = append(s.nonFinite[n], smp.Column.Base)
			}
		}
		name := clean(smp.Column.Name)
		c := s.colByID[name]
		if c == nil {
			meta := *smp.Column
			meta.Name = name
			c = &column{meta: meta}
			s.colByID[name] = c
			s.cols = append(s.cols, c)
		}
		for len(c.vals) < n {
			c.vals = append(c.vals, math.NaN())
		}
		c.vals = append(c.vals[:n], smp.Value)
	}
	for _, c := range s.cols {
		for len(c.vals) < n+1 {
			c.vals = append(c.vals, math.NaN())
		}
	}
	s.judge(n, j)
}

// rejudge refreshes the judged values of every row after the judgements
// changed (another metric, another optimal error, a replay of the run's
// Tracker), keeping what only the screen knows (arrival times). Rows the
// Tracker no longer holds are dropped; points it holds that the screen has
// not received yet come with their batch. It reads the logged values from
// the Tracker's history, without rebuilding a judgement per point.
func (s *store) rejudge(t *diagnose.Tracker) {
	n := min(t.Len(), len(s.rows))
	s.truncate(n)
	if n == 0 {
		return
	}
	base := t.At(t.Len() - 1).Metric.Base
	for i := 0; i < n; i++ {
		s.setJudged(i, base, t.Logged(i, diagnose.SplitTrain), t.Logged(i, diagnose.SplitVal), t.Logged(i, diagnose.SplitTrainDev))
	}
}

// judge sets the judged values of row i from its judgement j.
func (s *store) judge(i int, j diagnose.Judgement) {
	s.setJudged(i, j.Metric.Base, j.Train.Raw, j.Val.Raw, j.TrainDev.Raw)
}

// setJudged sets row i's logged values of the judged metric base; a row is
// bad when one of them, or any value of that metric, is NaN or ±Inf.
func (s *store) setJudged(i int, base string, train, val, trainDev diagnose.Num) {
	r := &s.rows[i]
	r.train, r.val, r.trainDev = loggedValue(train), loggedValue(val), loggedValue(trainDev)
	r.bad = false
	for _, v := range []diagnose.Num{train, val, trainDev} {
		if v.OK && !isFinite(v.V) {
			r.bad = true
		}
	}
	for _, b := range s.nonFinite[i] {
		if b == base {
			r.bad = true
		}
	}
}

// loggedValue is a row's value: NaN when absent.
func loggedValue(n diagnose.Num) float64 {
	if !n.OK {
		return math.NaN()
	}
	return n.V
}

// stepCol is what one column of the per-step rows feeds: its series (nil
// for a column that is no metric), and whether a value above 1 says its
// base metric is written in percent (seen once that was noted).
type stepCol struct {
	series  *stepSeries
	bounded bool
	seen    bool // a value above 1 was noted in store.percent
	base    string
}

// addSteps stores per-step rows: their metric columns, and their places
// on the epoch axis. A column is looked up by name once, when it first
// comes, and a shape of the batch's rows is resolved to the series its
// values feed once a batch. The rows are then taken a run at a time (rows
// of one epoch and shape whose steps go up and whose values follow each
// other: nearly a whole batch of a per-step log), and each series takes its values of the run
// in one loop that fills its last block (stepSeries.addRun), instead of a
// shape lookup and a call per value (tui/addsteps_bench_test.go). The
// result is that of adding the rows one by one (TestStore_AddStepsByRuns).
func (s *store) addSteps(rows *diagnose.StepRows) {
	if len(rows.Rows) == 0 {
		return
	}
	shapes := s.shapeFeeds(rows)
	all := rows.Rows
	for i := 0; i < len(all); {
		j := stepRun(rows, i)
		if j == i {
			i++ // a row without a step, or one outside the arrays
			continue
		}
		r, run := all[i], all[i:j]
		s.observeRun(run)
		width := len(rows.Shapes[r.Shape])
		vals := rows.Values[r.From : int(r.From)+len(run)*width]
		for _, f := range shapes[r.Shape] {
			c := f.col
			if c.bounded && !c.seen && anyAbove(vals, f.at, width, 1) {
				c.seen = true
				s.percent[c.base] = true
			}
			c.series.addRun(run, vals, f.at, width)
		}
		i = j
	}
}

// stepRun returns the end of the run of rows that starts at row i: rows
// with a step above the row before's, of row i's epoch and shape, each
// row's values right after the row before's, all within rows' arrays. It
// returns i when row i starts none (no step, or not Valid).
func stepRun(rows *diagnose.StepRows, i int) int {
	all := rows.Rows
	r := all[i]
	if r.Step < 0 || !rows.Valid(r) {
		return i
	}
	width := int32(len(rows.Shapes[r.Shape]))
	next, last, prev := r.From+width, int32(len(rows.Values))-width, r.Step
	j := i + 1
	for ; j < len(all); j++ {
		q := &all[j]
		if q.From != next || q.Step <= prev || q.Shape != r.Shape || q.Epoch != r.Epoch || next > last {
			break
		}
		next += width
		prev = q.Step
	}
	return j
}

// observeRun notes a run's steps on the clock. The rows share an epoch
// and their steps go up, so after the first row each only moves that
// epoch's last step on (stepClock.observe; the first step of the clock
// moves only to a step below it, which no later row of the run is): the
// last row says what all of them would.
func (s *store) observeRun(run []diagnose.StepRowAt) {
	s.clock.observe(int(run[0].Epoch), run[0].Step)
	if n := len(run); n > 1 {
		s.clock.observe(int(run[n-1].Epoch), run[n-1].Step)
	}
}

// anyAbove reports whether a value of vals[at], vals[at+stride], … is
// above limit.
func anyAbove(vals []float64, at, stride int, limit float64) bool {
	for k := at; k < len(vals); k += stride {
		if vals[k] > limit {
			return true
		}
	}
	return false
}

// shapeFeed is a value of a row of one shape that feeds a series: its
// place among the row's values, and its column.
type shapeFeed struct {
	at  int
	col *stepCol
}

// shapeFeeds returns, for each shape of rows, the values that feed a
// series, in arrays the store reuses from batch to batch.
func (s *store) shapeFeeds(rows *diagnose.StepRows) [][]shapeFeed {
	feeds := s.stepFeeds(rows.Columns)
	s.shapes, s.shapeRoom = s.shapes[:0], s.shapeRoom[:0]
	for _, cols := range rows.Shapes {
		from := len(s.shapeRoom)
		for k, col := range cols {
			if uint32(col) < uint32(len(feeds)) && feeds[col].series != nil {
				s.shapeRoom = append(s.shapeRoom, shapeFeed{at: k, col: feeds[col]})
			}
		}
		s.shapes = append(s.shapes, s.shapeRoom[from:len(s.shapeRoom):len(s.shapeRoom)])
	}
	return s.shapes
}

// stepFeeds returns what each of cols feeds, by column index, working out
// the columns not seen before. A batch's columns extend the last batch's,
// never change them (diagnose.StepRows), so the work is done once per
// column of the log.
func (s *store) stepFeeds(cols []diagnose.Column) []*stepCol {
	for k := len(s.stepCols); k < len(cols); k++ {
		s.stepCols = append(s.stepCols, s.newStepCol(cols[k]))
	}
	return s.stepCols
}

// newStepCol works out what a column of the per-step rows feeds.
func (s *store) newStepCol(col diagnose.Column) *stepCol {
	c := &stepCol{}
	if col.Kind != diagnose.KindMetric {
		return c
	}
	name := clean(col.Name)
	ss := s.steps[name]
	if ss == nil {
		ss = &stepSeries{}
		s.steps[name] = ss
		meta := col
		meta.Name = name
		s.stepMeta[name] = meta
		s.stepOrder = append(s.stepOrder, name)
	}
	c.series, c.bounded, c.base = ss, col.Rate || col.Dir == diagnose.HigherIsBetter, col.Base
	c.seen = s.percent[c.base]
	return c
}

// trainSteps returns the per-step training series of a base metric, if the
// log has one.
func (s *store) trainSteps(base string) (*stepSeries, diagnose.Column, bool) {
	for _, name := range s.stepOrder {
		m := s.stepMeta[name]
		if m.Base == base && m.Split == diagnose.SplitTrain && !s.steps[name].empty() {
			return s.steps[name], m, true
		}
	}
	return nil, diagnose.Column{}, false
}

// stepConverter returns the function that turns a logged per-step value of
// column c into the judged metric's units: an error rate as a fraction
// (1 − accuracy), the shortfall 1 − score of a bounded score, or the value
// itself. It mirrors how the judgement converts its points, so the band
// and the epoch curves share one axis.
func (s *store) stepConverter(c diagnose.Column) func(float64) float64 {
	scale := 1.0
	if s.percentFor(c) {
		scale = 0.01
	}
	switch {
	case c.Dir == diagnose.HigherIsBetter:
		return func(v float64) float64 { return 1 - v*scale }
	case c.Rate:
		return func(v float64) float64 { return v * scale }
	}
	return func(v float64) float64 { return v }
}

// percentFor reports whether a per-step column is written in percent. The
// reader's flag decides when set; else the judgement's own conversion of
// the same column at a recent epoch shows which scale it used (a training
// value of 0.95 judged as 0.05 is a fraction, judged as 0.9905 a percent);
// else a per-step value above 1 does.
func (s *store) percentFor(c diagnose.Column) bool {
	if c.Percent {
		return true
	}
	bounded := c.Rate || c.Dir == diagnose.HigherIsBetter
	if !bounded {
		return false
	}
	if col := s.colByID[c.Name]; col != nil {
		conv := func(v, scale float64) float64 {
			if c.Dir == diagnose.HigherIsBetter {
				return 1 - v*scale
			}
			return v * scale
		}
		for i := len(s.rows) - 1; i >= 0 && i >= len(s.rows)-64; i-- {
			if i >= len(col.vals) {
				continue
			}
			v, j := col.vals[i], s.rows[i].train
			if isFinite(v) && isFinite(j) && v != 0 {
				return math.Abs(j-conv(v, 0.01)) < math.Abs(j-conv(v, 1))
			}
		}
	}
	return s.percent[c.Base]
}
