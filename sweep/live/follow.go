package live

import (
	"context"
	"math"
	"strings"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/watch"
)

// Update is what one step of the sweep changed, for the command's sink.
type Update struct {
	// Run is the run a batch came from (-1 for none) and Name its name;
	// Applied is the batch judged (with the summary as of each point when
	// Options.Summaries is set).
	Run     int
	Name    string
	Applied pipeline.Update
	// Row is the run's row as of this update (Options.Summaries: the
	// sweep evaluated at this batch).
	Row *sweep.Row
	// Added are runs found since the last update.
	Added []int
	// Notices are messages about the sweep (a run's log that cannot be
	// read, a fallback to polling and why, a stop file refused).
	Notices []string
	// Stops are the stop files created (or that failed) since the last
	// update.
	Stops []StopEvent
	// Evaluated says the rows changed (a new evaluation found news).
	Evaluated bool
	// FirstRead says Run's log was read to its end for the first time.
	FirstRead bool
	// more: forecasts are still due (the evaluation's budget ran out).
	more bool
	// rulesTook is how long the evaluation's rules took (evalShare).
	rulesTook time.Duration
}

// StopEvent is a stop file created for a run, or why it could not be.
type StopEvent struct {
	Run  int
	Name string
	pipeline.StopEvent
	// Reason is why the run was stopped: its rules' flags, or its own
	// early-stopping signal.
	Reason string
}

// Timing of the follow loop.
const (
	// settleAfter is how long the loop lets batches gather before it
	// evaluates the sweep again: a thousand runs appending at once cost
	// one evaluation, not a thousand, and a new epoch still reaches the
	// screen within a frame or two. Unit: time.
	settleAfter = 50 * time.Millisecond
	// evalEvery is the least time between two evaluations while batches
	// keep coming: ten a second are more than a screen shows. Unit: time.
	evalEvery = 100 * time.Millisecond
	// evalShare bounds the share of a core the evaluations take while
	// batches keep coming: the next waits at least evalShare times as long
	// as the last one's rules took (the screen's rebuild follows each
	// evaluation and costs about as much again). A dozen runs evaluate in microseconds and keep evalEvery; a
	// thousand take a few milliseconds, which at ten a second was a third
	// of the CPU of 100 runs appending (`bench/sweep.sh`). Design choice:
	// a run table refreshed five times a second shows the same. Unit:
	// times the evaluation's wall time.
	evalShare = 100
	// evalGapMax is the longest wait between two evaluations the cost
	// rule may set. Unit: time.
	evalGapMax = time.Second
	// tickEvery re-evaluates for what time alone changes (a run going
	// quiet) and acts on it. Unit: time.
	tickEvery = time.Second
	// pendingEvery re-examines, when directories are polled, the files
	// not yet known to be logs (a console log before its first epoch),
	// whose growth changes no directory. Unit: time.
	pendingEvery = 10 * time.Second
)

// Follow finds the runs, follows their logs and every run that appears
// later, and hands each change to emit, until ctx ends (nil) or emit
// returns an error (returned). emit is called from Follow's goroutine.
func (s *Sweep) Follow(ctx context.Context, emit func(Update) error) error {
	g, err := watch.NewGroup(watch.GroupOptions{Poll: s.opts.Read.Poll, Notice: func(text string) {
		s.mu.Lock()
		s.notice(text)
		s.mu.Unlock()
	}})
	if err != nil {
		return err
	}
	go g.Run(ctx)
	s.mu.Lock()
	s.group, s.ctx = g, ctx
	// A few batches may wait: the watcher reads a few logs at a time.
	s.tagged = make(chan watch.Tagged, 16)
	u := Update{Run: -1}
	s.add(s.finder.Scan(), &u)
	s.observeDirs()
	s.mu.Unlock()
	if err := emit(s.finish(u, true)); err != nil {
		return err
	}
	settle := time.NewTimer(time.Hour)
	settle.Stop()
	settling := false
	tick := time.NewTicker(tickEvery)
	defer tick.Stop()
	lastPending := s.now()
	var lastEval time.Time
	gap := evalEvery // the least time to the next evaluation (evalShare)
	for {
		var u Update
		evaluate := false
		select {
		case <-ctx.Done():
			return nil
		case b := <-s.tagged:
			u = s.apply(b)
			if s.opts.Summaries {
				evaluate = true
			} else if !settling {
				settling = true
				settle.Reset(max(settleAfter, gap-time.Since(lastEval)))
			}
		case <-g.Changed():
			u = Update{Run: -1}
			s.mu.Lock()
			for _, d := range g.TakeChanged() {
				s.add(s.finder.Rescan(d), &u)
			}
			s.observeDirs()
			s.mu.Unlock()
			evaluate = len(u.Added) > 0
		case <-settle.C:
			settling = false
			u, evaluate = Update{Run: -1}, true
		case <-tick.C:
			u, evaluate = Update{Run: -1}, true
			if n, _ := g.Polling(); (n > 0 || s.opts.Read.Poll > 0) && s.now().Sub(lastPending) >= pendingEvery {
				lastPending = s.now()
				s.mu.Lock()
				for _, d := range s.finder.PendingDirs() {
					s.add(s.finder.Rescan(d), &u)
				}
				s.mu.Unlock()
			}
		}
		if evaluate {
			lastEval = time.Now()
		}
		u = s.finish(u, evaluate)
		if evaluate {
			// The rules' cost, not the forecasts' (those have a budget of
			// their own, and forecasts left over come back at evalEvery).
			gap = min(max(evalEvery, evalShare*u.rulesTook), evalGapMax)
		}
		if u.more && !settling {
			// Forecasts left for lack of time: another evaluation soon.
			settling = true
			settle.Reset(evalEvery)
		}
		if err := emit(u); err != nil {
			return err
		}
	}
}

// apply judges one tagged batch in its run's pipeline and tells the
// domain.
func (s *Sweep) apply(b watch.Tagged) Update {
	s.mu.Lock()
	defer s.mu.Unlock()
	e := s.runs[b.Tag]
	u := Update{Run: e.id, Name: e.found.Name}
	if !e.read {
		e.read = true
		s.read++
		u.FirstRead = true
	}
	fromEpoch, revision := math.MaxInt, uint64(0)
	e.run.Read(func(t *diagnose.Tracker) { revision = t.Revision() })
	if len(b.Points) > 0 {
		fromEpoch = b.Points[0].Epoch
	}
	if s.opts.Summaries {
		u.Applied = e.run.Apply(b.Batch)
	} else {
		e.run.Load(b.Batch)
		u.Applied = pipeline.Update{Points: b.Points, Notices: b.Notices, Stats: b.Stats}
	}
	s.take(e, &b.Batch)
	s.observeFrom(e, fromEpoch, revision)
	for _, n := range b.Notices {
		if strings.HasPrefix(n.Text, "waiting for ") {
			continue // every run not started yet says so: the table shows it
		}
		s.notice(e.found.Name + ": " + n.Text)
	}
	return u
}

// finish evaluates the sweep when asked, creates the stop files it calls
// for, and adds the pending notices to u.
func (s *Sweep) finish(u Update, evaluate bool) Update {
	if evaluate {
		u.Stops, u.Evaluated, u.more, u.rulesTook = s.evaluate()
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if u.Run >= 0 && evaluate {
		row := s.dom.Rows()[u.Run]
		u.Row = &row
	}
	u.Notices, s.pending = append(u.Notices, s.pending...), nil
	return u
}

// evaluate makes the forecasts due, judges the sweep as of now and
// creates the stop files of the runs it finds hopeless or told to stop,
// outside the lock; more says forecasts are still due.
func (s *Sweep) evaluate() (stops []StopEvent, changed, more bool, rulesTook time.Duration) {
	type todo struct {
		e      *entry
		j      diagnose.Judgement
		reason string
		flag   bool
	}
	var list []todo
	s.mu.Lock()
	now := s.now()
	// With summaries (follow DIR) every point's forecast was made already
	// and is kept by its run: taking them costs nothing.
	due := s.dueForecasts(now, !s.opts.Summaries)
	s.mu.Unlock()
	budget := forecastBudget
	if s.opts.Summaries {
		budget = 0
	}
	ms, more := forecastWithin(due, budget)
	s.mu.Lock()
	s.keep(ms, now)
	t0 := time.Now()
	changed = s.dom.Evaluate(now)
	rulesTook = time.Since(t0)
	s.markFinished()
	if changed && s.opts.StopFileName != "" {
		rows := s.dom.Rows()
		for _, e := range s.runs {
			r := &rows[e.id]
			if e.stop == nil || e.stopped || r.State == sweep.Finished || r.State == sweep.Removed || !r.Judged {
				continue
			}
			if !r.Hopeless() && r.Signal != diagnose.Stop {
				continue
			}
			var j diagnose.Judgement
			e.run.Read(func(t *diagnose.Tracker) { j, _ = t.Latest() })
			reason := ""
			if r.Hopeless() {
				var texts []string
				for _, f := range r.Flags {
					texts = append(texts, f.Text(r.Metric))
				}
				reason = "hopeless by the sweep's rules: " + strings.Join(texts, "; ")
			}
			list = append(list, todo{e, j, reason, r.Hopeless() && r.Signal != diagnose.Stop})
		}
	}
	s.mu.Unlock()
	for _, t := range list {
		ev := t.e.stop.Create(t.j, t.reason)
		why := t.reason
		if why == "" {
			why = t.j.EarlyStop.Reason
		}
		stops = append(stops, StopEvent{Run: t.e.id, Name: t.e.found.Name, StopEvent: *ev, Reason: why})
		s.mu.Lock()
		if ev.Err == nil {
			t.e.stopped = true
			s.dom.MarkStopFile(t.e.id, ev.Path, t.flag)
		} else {
			t.e.stop = nil // never tried again: the path is taken, or cannot be written
			s.notice(t.e.found.Name + ": stop file not created: " + ev.Err.Error())
		}
		s.mu.Unlock()
	}
	return stops, changed || len(stops) > 0, more, rulesTook
}
