package sweep

import (
	"cmp"
	"math"
	"slices"
	"sort"
	"strings"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/forecast"
)

// Config chooses the rules that flag hopeless runs, and the runs' length
// when nothing else says it.
type Config struct {
	// Median, UseRungs and UseForecast switch the rules on.
	Median, UseRungs, UseForecast bool
	Rungs                         Rungs
	// Epochs is every run's last epoch when neither its log nor its
	// hyperparameters say it (--epochs); 0 for unknown.
	Epochs int
}

// DefaultConfig has every rule on with the default rungs.
func DefaultConfig() Config {
	return Config{Median: true, UseRungs: true, UseForecast: true, Rungs: Rungs{First: DefaultFirstRung, Eta: DefaultEta}}
}

// Observation is what the caller knows of a run after a batch: its
// latest judgement and the reader's view of its log.
type Observation struct {
	// Latest is the judgement of the run's last point (Judged() false
	// when there is none); Points how many points were judged.
	Latest diagnose.Judgement
	Points int
	// Total is the number of epochs the log announces ("Epoch 3/50"),
	// 0 when unknown.
	Total int
	// Removed: the log was deleted or moved away.
	Removed bool
	// Ended: the process writing the log is known to have ended.
	Ended bool
	// LastWrite is when the log last grew; Pace its usual time between
	// epochs, 0 when not known yet.
	LastWrite time.Time
	Pace      time.Duration
}

// run is what the sweep keeps of one run.
type run struct {
	name   string
	params Params
	obs    Observation
	curve  Curve
	// stopFile is the stop file created for the run, and whether it was
	// created because the run was flagged (not for its own early stop).
	stopFile    string
	stopForFlag bool
	// Cached between evaluations: the run's length (from the log or its
	// params) and its values at the rungs, made again when the curve or
	// the params change.
	length     int
	trainSize  float64   // the params' training-set size; 0: none
	rungVals   []float64 // value at rung k; NaN: not reached
	rungsStale bool
	// fc is the run's validation forecast, bare (forecast.Forecast.Bare:
	// its numbers and its chance at the target, not its fits, which would
	// cost some 70 KB a run), nil before any; reach is the forecast
	// rule's verdict against the bar it was worked out for (reachBar; NaN:
	// to work out again).
	fc       *forecast.Forecast
	reach    ReachCheck
	reachOK  bool
	reachBar float64
}

// Sweep holds the runs of a sweep and judges them side by side. It is not
// safe for concurrent use: the caller serializes (a lock around it, as
// pipeline.Run has around its Tracker).
type Sweep struct {
	cfg  Config
	runs []*run

	// Results of the last Evaluate.
	rows      []Row
	metric    diagnose.Metric
	differing []string
	dirty     bool // data changed since the rules were last applied
	// gen counts the evaluations that changed something; the data
	// forecast is kept for the generation and options it was made for.
	gen      uint64
	dataGen  uint64
	dataOpts forecast.DataOptions
	dataOK   bool
	data     forecast.DataForecast
	// paramsDirty: params changed since Differing was worked out.
	paramsDirty bool
	// medians caches the median rule's median by epoch while the finished
	// runs and their curves stay the same; finished is that set.
	medians  map[int]medianAt
	finished []int
}

// medianAt is the median rule's median at one epoch.
type medianAt struct {
	v  float64
	n  int
	ok bool
}

// New returns an empty sweep judged with cfg.
func New(cfg Config) *Sweep { return &Sweep{cfg: cfg, dirty: true} }

// Config returns the rules in use.
func (s *Sweep) Config() Config { return s.cfg }

// Add adds a run and returns its id (0, 1, …). name is untrusted text.
func (s *Sweep) Add(name string, p Params) int {
	r := &run{name: name, rungsStale: true, reachBar: math.NaN()}
	r.setParams(p)
	r.length = s.total(r)
	s.runs = append(s.runs, r)
	s.dirty, s.paramsDirty = true, true
	return len(s.runs) - 1
}

// Len returns the number of runs.
func (s *Sweep) Len() int { return len(s.runs) }

// Name returns run id's name.
func (s *Sweep) Name(id int) string { return s.runs[id].name }

// SetParams replaces run id's hyperparameters.
func (s *Sweep) SetParams(id int, p Params) {
	r := s.runs[id]
	r.setParams(p)
	r.length = s.total(r)
	s.dirty, s.paramsDirty = true, true
}

// setParams keeps a copy of p, sorted, and what the evaluations read of
// it (the training-set size: a thousand runs' keys normalised at every
// evaluation were a fortieth of a watched sweep's CPU).
func (r *run) setParams(p Params) {
	r.params = Sorted(append(Params(nil), p...))
	r.trainSize, _ = r.params.TrainSize()
}

// Params returns run id's hyperparameters.
func (s *Sweep) Params(id int) Params { return s.runs[id].params }

// Observe records what the caller knows of run id now.
func (s *Sweep) Observe(id int, o Observation) {
	r := s.runs[id]
	r.obs = o
	r.length = s.total(r)
	s.dirty = true
}

// Length returns run id's last epoch as the sweep knows it: announced by
// its log, else its epochs hyperparameter, else Config.Epochs; 0 when
// unknown. It is the epoch the run's forecast looks to.
func (s *Sweep) Length(id int) int { return s.runs[id].length }

// SetForecast records run id's validation forecast (what more epochs
// would buy, made from its judged curve to its Length): the table's
// forecast column and the forecast rule read it. The sweep keeps it
// until the next call.
func (s *Sweep) SetForecast(id int, f forecast.Forecast) {
	r := s.runs[id]
	bare := f.Bare()
	r.fc = &bare
	r.reachBar = math.NaN()
	s.dirty = true
}

// SetCurve replaces run id's validation points from index from on (see
// Curve.Set).
func (s *Sweep) SetCurve(id, from int, epochs []int, vals []float64) {
	s.runs[id].curve.Set(from, epochs, vals)
	s.CurveChanged(id)
}

// CurveChanged says that the caller changed run id's curve in place
// (through Curve).
func (s *Sweep) CurveChanged(id int) {
	s.runs[id].rungsStale = true
	s.dirty = true
	if _, ok := slices.BinarySearch(s.finished, id); ok {
		s.medians = nil // a finished run's running means changed
	}
}

// Curve returns run id's validation curve; the caller must not keep it
// past its next call into the Sweep, and calls CurveChanged after
// changing it.
func (s *Sweep) Curve(id int) *Curve { return &s.runs[id].curve }

// MarkStopFile records that a stop file was created for run id, and
// whether because a rule flagged it (a run ended that way is not counted
// as completed by the median rule).
func (s *Sweep) MarkStopFile(id int, path string, forFlag bool) {
	r := s.runs[id]
	r.stopFile, r.stopForFlag = path, forFlag
	s.dirty = true
}

// StopFile returns the stop file created for run id, "" for none.
func (s *Sweep) StopFile(id int) string { return s.runs[id].stopFile }

// Row is one run as the table shows it. Values are in the judged metric.
type Row struct {
	ID    int
	Name  string // untrusted: sanitize before a terminal sees it
	State State
	// Epoch is the last epoch read; Total the run's length when known
	// (announced by the log, or an epochs key in its params), else 0.
	Epoch, Total int
	Points       int
	Judged       bool
	Metric       diagnose.Metric
	// Best is the best smoothed validation value and BestEpoch its epoch
	// (the epoch to restore); Now the latest smoothed validation value.
	Best      diagnose.Num
	BestEpoch int
	Now       diagnose.Num
	Diagnosis diagnose.Diagnosis
	Signal    diagnose.Signal
	Params    Params
	// Rank is the place by Best among the runs judged in the sweep's
	// metric (1 = best), 0 for a run not ranked.
	Rank int
	// Flags are the rules that find the run hopeless; none for a
	// finished run.
	Flags    []Flag
	StopFile string
	// Comparable says the run is judged in the sweep's metric.
	Comparable bool
	// Forecast is the run's validation forecast to its last epoch (its
	// numbers, not its fit); nil before the first, and for a finished run.
	Forecast *forecast.Forecast
	// Chance is the probability, by the forecast, that the run beats the
	// best other run at its last epoch (the forecast rule's number); absent
	// where that rule does not apply.
	Chance diagnose.Num
}

// Hopeless reports whether a rule flags the run.
func (r Row) Hopeless() bool { return len(r.Flags) > 0 }

// Evaluate judges the sweep as of now: each run's state, the sweep's
// metric, the ranks and the rules' flags. Rows and the other results read
// what it found. It reports whether anything changed since the last call
// (new data, or a state that time changed); when nothing did, it does no
// more than work out the states.
func (s *Sweep) Evaluate(now time.Time) bool {
	states := s.states(now)
	changed := s.dirty || len(s.rows) != len(s.runs)
	for id := range s.runs {
		if changed || s.rows[id].State != states[id] {
			changed = true
			break
		}
	}
	if !changed {
		return false
	}
	s.dirty = false
	s.rows = s.rows[:0]
	counts := map[string]int{}
	firstOf := map[string]int{}
	var metrics []diagnose.Metric
	for id, r := range s.runs {
		j := r.obs.Latest
		row := Row{ID: id, Name: r.name, State: states[id], Epoch: r.curve.LastEpoch(), Points: r.obs.Points,
			Total: r.length, Judged: j.Judged() && r.obs.Points > 0, Params: r.params, StopFile: r.stopFile}
		if row.State != Finished {
			row.Forecast = r.fc
		}
		if row.Judged {
			row.Metric, row.Diagnosis, row.Signal = j.Metric, j.Diagnosis, j.EarlyStop.Signal
			row.Best, row.BestEpoch, row.Now = j.EarlyStop.BestVal, j.EarlyStop.BestEpoch, j.Val.Smooth
			if row.Epoch == 0 {
				row.Epoch = j.Epoch
			}
			if l := j.Metric.Label; l != "" {
				if _, ok := counts[l]; !ok {
					firstOf[l] = id
					metrics = append(metrics, j.Metric)
				}
				counts[l]++
			}
		}
		s.rows = append(s.rows, row)
	}
	// The sweep's metric: the one most runs are judged in (the first seen
	// on a tie).
	s.metric = diagnose.Metric{}
	for _, m := range metrics {
		if s.metric.Label == "" || counts[m.Label] > counts[s.metric.Label] ||
			counts[m.Label] == counts[s.metric.Label] && firstOf[m.Label] < firstOf[s.metric.Label] {
			s.metric = m
		}
	}
	var ranked []int
	for id := range s.rows {
		row := &s.rows[id]
		row.Comparable = row.Judged && row.Metric.Label == s.metric.Label && s.metric.Label != ""
		if row.Comparable && row.Best.OK && finite(row.Best.V) {
			ranked = append(ranked, id)
		}
	}
	slices.SortFunc(ranked, func(a, b int) int {
		ra, rb := &s.rows[a], &s.rows[b]
		if c := cmp.Compare(ra.Best.V, rb.Best.V); c != 0 {
			return c
		}
		if c := strings.Compare(ra.Name, rb.Name); c != 0 {
			return c
		}
		return a - b
	})
	for i, id := range ranked {
		s.rows[id].Rank = i + 1
	}
	s.applyRules()
	if s.paramsDirty {
		s.paramsDirty = false
		params := make([]Params, len(s.runs))
		for id, r := range s.runs {
			params[id] = r.params
		}
		s.differing = Differing(params)
	}
	s.gen++
	return true
}

// total is the run's length: announced by the log, else its params',
// else the sweep's.
func (s *Sweep) total(r *run) int {
	if r.obs.Total > 0 {
		return r.obs.Total
	}
	if n, ok := r.params.Epochs(); ok {
		return n
	}
	return max(s.cfg.Epochs, 0)
}

// states works out every run's state as of now. The quiet threshold of a
// run whose pace is unknown comes from the sweep's median pace.
func (s *Sweep) states(now time.Time) []State {
	var paces []time.Duration
	for _, r := range s.runs {
		if r.obs.Pace > 0 {
			paces = append(paces, r.obs.Pace)
		}
	}
	fallback := time.Duration(quietUnknownPace / QuietFactor)
	if len(paces) > 0 {
		sort.Slice(paces, func(i, j int) bool { return paces[i] < paces[j] })
		fallback = paces[len(paces)/2]
	}
	out := make([]State, len(s.runs))
	for id, r := range s.runs {
		out[id] = r.state(now, fallback)
	}
	return out
}

// state is the run's state as of now. A run is finished (complete) when
// it reached its length, when its writer is known to have ended, or when
// it went quiet after its own early-stopping signal said stop (a training
// loop that stops itself, or one that read a stop file created for that
// reason); a run ended by a stop file created because a rule flagged it is
// quiet, not finished, so the median rule does not count it as completed.
func (r *run) state(now time.Time, fallbackPace time.Duration) State {
	o := &r.obs
	switch {
	case o.Removed:
		return Removed
	case o.Points == 0:
		return Waiting
	case o.Ended:
		return Finished
	}
	if t := r.length; t > 0 && r.curve.LastEpoch() >= t {
		return Finished
	}
	pace := o.Pace
	if pace <= 0 {
		pace = fallbackPace
	}
	if !o.LastWrite.IsZero() && now.Sub(o.LastWrite) > QuietAfter(pace) {
		if o.Latest.Judged() && o.Latest.EarlyStop.Signal == diagnose.Stop && !r.stopForFlag {
			return Finished
		}
		return Quiet
	}
	return Live
}

// applyRules flags the hopeless runs among the comparable ones.
func (s *Sweep) applyRules() {
	curves := make([]*Curve, len(s.runs))
	var completed []*Curve
	var finished []int
	for id := range s.rows {
		if !s.rows[id].Comparable {
			continue
		}
		curves[id] = &s.runs[id].curve
		if s.rows[id].State == Finished {
			completed = append(completed, curves[id])
			finished = append(finished, id)
		}
	}
	if !slices.Equal(finished, s.finished) {
		s.finished, s.medians = finished, nil
	}
	if s.medians == nil {
		s.medians = map[int]medianAt{}
	}
	var rungs map[int]RungCheck
	if s.cfg.UseRungs {
		rungs = halving(s.cfg.Rungs, curves, s.rungValue)
	}
	first := s.cfg.Rungs.First
	if first < 1 {
		first = DefaultFirstRung
	}
	var scratch []float64
	best, second, bestID := bestTwo(s.rows)
	for id := range s.rows {
		row := &s.rows[id]
		if curves[id] == nil || row.State == Finished {
			continue
		}
		if s.cfg.Median && row.Epoch >= first && len(completed) > 0 && curves[id].Len() > 0 {
			// The median depends only on the epoch: runs at the same epoch
			// (most of a sweep started together) share one.
			t := curves[id].LastEpoch()
			md, seen := s.medians[t]
			if !seen {
				md.v, md.n, md.ok = MedianAt(t, completed, scratch)
				s.medians[t] = md
			}
			if m := medianCheck(curves[id], md.v, md.n); md.ok && m.Hopeless {
				row.Flags = append(row.Flags, Flag{Rule: RuleMedian, Epoch: m.Epoch, Value: m.Best, Bar: m.Median, Count: m.Completed})
			}
		}
		if c, ok := rungs[id]; ok && c.Hopeless {
			row.Flags = append(row.Flags, Flag{Rule: RuleRungs, Epoch: c.Epoch, Value: c.Value, Bar: c.Bar,
				Count: c.Reached, Rung: c.Rung, Place: c.Place, Keep: c.Keep})
		}
		if s.cfg.UseForecast {
			bar := best
			if id == bestID {
				bar = second
			}
			if c, ok := s.reachOf(s.runs[id], bar); ok {
				row.Chance = diagnose.Some(c.Chance)
				if c.Hopeless {
					row.Flags = append(row.Flags, Flag{Rule: RuleForecast, Epoch: c.Target, Value: c.At.Value,
						Lo: c.At.Lo, Hi: c.At.Hi, Bar: c.Bar, Chance: c.Chance})
				}
			}
		}
	}
}

// reachOf is the forecast rule's verdict on run r against bar, worked out
// again only when the forecast or the bar changed.
func (s *Sweep) reachOf(r *run, bar float64) (ReachCheck, bool) {
	if r.fc == nil {
		return ReachCheck{}, false
	}
	if r.reachBar != bar { // NaN: never worked out
		r.reach, r.reachOK = Reach(r.fc, bar)
		r.reachBar = bar
	}
	return r.reach, r.reachOK
}

// rungValue is run id's value at rung epoch e, from the run's cached rung
// values (made again after its curve changed).
func (s *Sweep) rungValue(id, e int) (float64, bool) {
	r := s.runs[id]
	if r.rungsStale {
		r.rungsStale = false
		r.rungVals = r.rungVals[:0]
		for k := 0; ; k++ {
			re, ok := s.cfg.Rungs.Epoch(k)
			if !ok || re > r.curve.LastEpoch() {
				break
			}
			_, v, _ := r.curve.From(re)
			r.rungVals = append(r.rungVals, v)
		}
	}
	for k := range r.rungVals {
		if re, _ := s.cfg.Rungs.Epoch(k); re == e {
			return r.rungVals[k], true
		}
	}
	return 0, false
}

// Rows returns the rows of the last Evaluate, by run id. The slice is the
// Sweep's: read it before the next Evaluate.
func (s *Sweep) Rows() []Row { return s.rows }

// Metric returns the sweep's metric: the judged metric most runs share.
func (s *Sweep) Metric() diagnose.Metric { return s.metric }

// Differing returns the hyperparameter keys that differ between runs.
func (s *Sweep) Differing() []string { return s.differing }

// Ranked returns the run ids in the order of the table: ranked runs by
// rank, then the others by name.
func (s *Sweep) Ranked() []int {
	ids := make([]int, len(s.rows))
	for i := range ids {
		ids[i] = i
	}
	slices.SortFunc(ids, func(a, b int) int {
		ra, rb := &s.rows[a], &s.rows[b]
		switch {
		case ra.Rank > 0 && rb.Rank > 0:
			return ra.Rank - rb.Rank
		case ra.Rank > 0:
			return -1
		case rb.Rank > 0:
			return 1
		}
		if c := strings.Compare(ra.Name, rb.Name); c != 0 {
			return c
		}
		return a - b
	})
	return ids
}

// Completed returns how many comparable runs are finished, for saying
// whether the median rule has anything to compare with.
func (s *Sweep) Completed() int {
	n := 0
	for i := range s.rows {
		if s.rows[i].Comparable && s.rows[i].State == Finished {
			n++
		}
	}
	return n
}
