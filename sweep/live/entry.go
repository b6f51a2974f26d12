package live

import (
	"math"
	"sort"
	"strconv"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/sweep/discover"
	"github.com/fitgap/fitgap/watch"
)

// entry is one run of the sweep: what discovery found, its pipeline, and
// what the sweep keeps of its reader.
type entry struct {
	id    int
	found discover.Run
	run   *pipeline.Run
	stats watch.Stats
	// total is the number of epochs the log announces, 0 if none.
	total int
	// ended: the process writing the log is known to have ended.
	ended bool
	// stop is the run's stop file (nil when none is wanted or it was
	// refused); stopped records that it was created.
	stop    *pipeline.StopFile
	stopped bool
	// consts tracks the log's columns that keep one value: the run's
	// settings written as columns (lr, batch_size, train_size).
	consts constants
	// added is when the run was found; arrivals the times of the recent
	// batches that brought points, for the run's pace.
	added    time.Time
	arrivals []time.Time
	// read: the first batch came, so the log was read to its end once;
	// readErr is why the log could not be read (Load).
	read    bool
	readErr string
	// The run's forecast (forecasts.go): fcStale says points came since
	// the last one, made at fcAt; epochs is the last epoch the pipeline
	// was told (pipeline.Run.SetEpochs).
	fcStale bool
	fcAt    time.Time
	epochs  int
	// done is closed once the sweep finds the run finished (an opened
	// run's screen then says so).
	done       chan struct{}
	doneClosed bool
}

// params are the run's hyperparameters: discovery's, then the log's
// constant columns.
func (e *entry) params() sweep.Params { return e.found.Params.Merge(e.consts.params()) }

// Thresholds of the pace and of constant columns.
const (
	// backlogFor is how long after a run is found its batches are taken
	// for its backlog being read, not for the pace of training. Unit: time.
	backlogFor = time.Second
	// paceWindow is how many recent intervals give a run's pace (their
	// median, so one slow epoch does not move it).
	paceWindow = 15
	// constantAfter is how many points a column must keep one value over
	// before it is taken for a setting: one or two points say nothing.
	constantAfter = 3
	// maxConstants bounds the columns tracked, whatever the log holds.
	maxConstants = 64
)

// arrived records a batch that brought points at t.
func (e *entry) arrived(t time.Time) {
	if t.Sub(e.added) < backlogFor {
		return
	}
	e.arrivals = append(e.arrivals, t)
	if len(e.arrivals) > paceWindow+1 {
		e.arrivals = append(e.arrivals[:0], e.arrivals[len(e.arrivals)-paceWindow-1:]...)
	}
}

// pace is the median interval between the recent batches that brought
// points; 0 when there are fewer than two.
func (e *entry) pace() time.Duration {
	if len(e.arrivals) < 2 {
		return 0
	}
	iv := make([]time.Duration, 0, len(e.arrivals)-1)
	for i := 1; i < len(e.arrivals); i++ {
		iv = append(iv, e.arrivals[i].Sub(e.arrivals[i-1]))
	}
	sort.Slice(iv, func(a, b int) bool { return iv[a] < iv[b] })
	return iv[len(iv)/2]
}

// constants tracks which of a log's other columns (not metrics, not the
// epoch, step or time) have kept one value.
type constants struct {
	cols   []constCol
	points int
}

type constCol struct {
	name  string
	value float64
	same  bool
}

// add looks at one point's values.
func (c *constants) add(p *diagnose.Point) {
	c.points++
	for _, s := range p.Samples {
		if s.Column.Kind != diagnose.KindOther {
			continue
		}
		i := c.find(s.Column.Name)
		switch {
		case i >= 0:
			col := &c.cols[i]
			if col.same && !(col.value == s.Value || math.IsNaN(col.value) && math.IsNaN(s.Value)) {
				col.same = false
			}
		case len(c.cols) < maxConstants:
			c.cols = append(c.cols, constCol{name: s.Column.Name, value: s.Value, same: c.points == 1})
		}
	}
}

func (c *constants) find(name string) int {
	for i := range c.cols {
		if c.cols[i].name == name {
			return i
		}
	}
	return -1
}

// params are the columns that kept one finite value over enough points.
func (c *constants) params() sweep.Params {
	if c.points < constantAfter {
		return nil
	}
	var out sweep.Params
	for _, col := range c.cols {
		if col.same && !math.IsNaN(col.value) && !math.IsInf(col.value, 0) {
			out = append(out, sweep.Param{Key: col.name, Value: strconv.FormatFloat(col.value, 'g', -1, 64), From: "log column"})
		}
	}
	return sweep.Sorted(out)
}

// take notes what a batch says of the log beyond its judgements: the
// reader's counts, the announced total, the constant columns, the
// arrival. s.mu is held.
func (s *Sweep) take(e *entry, b *watch.Batch) {
	e.stats = b.Stats
	before := len(e.consts.params())
	for i := range b.Points {
		p := &b.Points[i]
		if p.Total > 0 {
			e.total = p.Total
		}
		e.consts.add(p)
	}
	if len(b.Points) > 0 {
		e.fcStale = true
		e.arrived(s.now())
		if after := e.consts.params(); len(after) != before || e.consts.points == constantAfter {
			s.dom.SetParams(e.id, e.params())
		}
	}
}

// observe tells the domain what run e says now: its latest judgement, its
// validation curve from the first point the batch changed (fromEpoch; a
// rejudged run from the start), the reader's state. s.mu is held.
func (s *Sweep) observe(e *entry) { s.observeFrom(e, math.MaxInt, 0) }

func (s *Sweep) observeFrom(e *entry, fromEpoch int, revision uint64) {
	o := sweep.Observation{
		Total: e.total, Removed: e.stats.State == watch.StateRemoved, Ended: e.ended,
		LastWrite: e.stats.LastWrite, Pace: e.pace(),
	}
	curve := s.dom.Curve(e.id)
	e.run.Read(func(t *diagnose.Tracker) {
		o.Points = t.Len()
		if j, ok := t.Latest(); ok {
			o.Latest = j
		}
		if fromEpoch == math.MaxInt {
			return
		}
		if t.Revision() != revision {
			fromEpoch = math.MinInt
		}
		// The tracker's points from fromEpoch on replace the curve's.
		// (Into the sweep's scratch room: Set copies them.)
		k := sort.Search(t.Len(), func(i int) bool { return t.Epoch(i) >= fromEpoch })
		epochs, vals := s.scratchEpochs[:0], s.scratchVals[:0]
		for i := k; i < t.Len(); i++ {
			if v := t.Logged(i, diagnose.SplitVal); v.OK {
				epochs = append(epochs, t.Epoch(i))
				vals = append(vals, v.V)
			}
		}
		curve.Set(curve.IndexOf(fromEpoch), epochs, vals)
		s.scratchEpochs, s.scratchVals = epochs, vals
		s.dom.CurveChanged(e.id)
	})
	s.dom.Observe(e.id, o)
	s.syncEpochs(e)
}

// syncEpochs tells the run's pipeline the last epoch the sweep knows for
// it (its log's, its params', or --epochs), the epoch its forecast looks
// to. s.mu is held.
func (s *Sweep) syncEpochs(e *entry) {
	if n := s.dom.Length(e.id); n != e.epochs {
		e.epochs = n
		e.run.SetEpochs(n)
		e.fcStale = true
	}
}
