package live

import (
	"context"
	"fmt"
	"math"
	"os"
	"runtime"
	"sync"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/watch"
)

// Load finds the runs and reads every log to its end once (report DIR),
// on as many goroutines as there are cores, then evaluates the sweep. A
// log that cannot be read is a notice, not an error; Load fails only when
// no run was found.
func (s *Sweep) Load(ctx context.Context) error {
	s.mu.Lock()
	u := Update{Run: -1}
	s.add(s.finder.Scan(), &u)
	runs := append([]*entry(nil), s.runs...)
	s.mu.Unlock()
	if len(runs) == 0 {
		return fmt.Errorf("no runs found under %s: no metrics log (CSV/TSV, JSON Lines, console text) in its directories", s.finder.Root())
	}
	work := make(chan *entry)
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(runs)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for e := range work {
				s.loadOne(ctx, e)
			}
		}()
	}
	for _, e := range runs {
		select {
		case work <- e:
		case <-ctx.Done():
		}
	}
	close(work)
	wg.Wait()
	s.mu.Lock()
	defer s.mu.Unlock()
	now := s.now()
	s.dom.Evaluate(now)
	// The forecasts of the runs not finished, then the rules again.
	due := s.dueForecasts(now, false)
	s.mu.Unlock()
	ms := forecastAll(due)
	s.mu.Lock()
	s.keep(ms, now)
	s.dom.Evaluate(now)
	s.markFinished()
	judged := 0
	for _, r := range s.dom.Rows() {
		if r.Points > 0 {
			judged++
		}
	}
	if judged == 0 && ctx.Err() == nil {
		// The first run's reason, whichever worker read it first.
		why := ""
		for _, e := range runs {
			if e.readErr != "" {
				why = "; " + e.readErr
				break
			}
		}
		if why == "" && len(s.notices) > 0 {
			why = "; " + s.notices[0]
		}
		return fmt.Errorf("%s: no evaluation points in the %d run(s) found%s", s.finder.Root(), len(runs), why)
	}
	return ctx.Err()
}

// loadOne reads one run's log to its end into its pipeline.
func (s *Sweep) loadOne(ctx context.Context, e *entry) {
	opts := s.opts.Read
	opts.Follow = false
	batches, err := watch.Follow(ctx, e.found.Path, opts)
	if err != nil {
		s.mu.Lock()
		e.readErr = watch.Sanitize(fmt.Sprintf("%s: %v", e.found.Name, err))
		s.notice(e.readErr)
		e.read = true
		s.read++
		s.mu.Unlock()
		return
	}
	var last watch.Batch
	var c constants
	total := 0
	for b := range batches {
		e.run.Load(b)
		for i := range b.Points {
			c.add(&b.Points[i])
			if b.Points[i].Total > 0 {
				total = b.Points[i].Total
			}
		}
		for _, n := range b.Notices {
			s.mu.Lock()
			s.notice(e.found.Name + ": " + n.Text)
			s.mu.Unlock()
		}
		// The Tracker and the constants copied what they keep: the
		// arrays go back to the reader (only the last batch's Stats are
		// used below).
		b.ReleasePoints()
		last = b
	}
	// A snapshot: the log was last written when the file was.
	if fi, err := os.Stat(e.found.Path); err == nil {
		last.Stats.LastWrite = fi.ModTime()
	}
	last.Stats.State = watch.StateLive
	s.mu.Lock()
	defer s.mu.Unlock()
	e.stats, e.consts, e.total = last.Stats, c, total
	e.read, e.fcStale = true, true
	s.read++
	s.dom.SetParams(e.id, e.params())
	s.observeFrom(e, math.MinInt, revisionOf(e))
}

// revisionOf is the run's tracker revision.
func revisionOf(e *entry) uint64 {
	var r uint64
	e.run.Read(func(t *diagnose.Tracker) { r = t.Revision() })
	return r
}
