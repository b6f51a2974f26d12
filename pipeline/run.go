// Package pipeline owns one training run end to end: the reader's batches
// go through one diagnose.Tracker, and the judged points go on to the
// sinks — the screen's feed, follow's JSON lines, the stop file, the
// summary.
//
//	watch.Batch ──► Run.Apply ──► one Tracker (under the Run's lock)
//	                   │
//	                   ├──► stop file (created once, when the signal first says stop)
//	                   └──► Update ──► emit: the screen's feed, or follow's lines
//	Run.Read ◄── the screen inspects past judgements ("as judged then")
//	Run.Summary ◄── report, the summary file, the s key
//
// A Run is cheap when its log is idle: Drive blocks on its channels, and
// holds a timer only when an idle end was asked for. Apply is the whole
// work of a batch, so a process watching many runs can drive them from
// one goroutine instead.
//
// The package does no terminal I/O and knows nothing of the screen; the
// only files it writes are the stop file and the summary file, never the
// log.
package pipeline

import (
	"context"
	"sync"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/watch"
)

// Options configure a Run.
type Options struct {
	// Name is how the log is named in output: its path, or "standard
	// input". It is untrusted: output sanitizes it.
	Name string
	// Judge is the judgement's configuration (the command line's settings).
	Judge diagnose.Config
	// StopFile, when not nil, is created the first time the early-stopping
	// signal reaches stop.
	StopFile *StopFile
	// EndOnStop ends the run at the first point whose signal is stop: the
	// batch is cut after that point and Drive returns.
	EndOnStop bool
	// BareForecasts keeps and hands out the run's forecasts bare
	// (forecast.Forecast.Bare: numbers and chance, no fits, no band): a
	// sweep's run, whose band no screen draws; a fit kept whole costs some
	// 70 KB, 70 MB for a thousand runs.
	BareForecasts bool
	// Summaries asks for the summary as of each point (follow's lines):
	// Update.Summaries then holds one per point.
	Summaries bool
	// WriterDone, when not nil, is closed when the process writing the log
	// has ended (the demo's trainer): a live source is then reported as
	// finished, since no more epochs will come.
	WriterDone <-chan struct{}
	// IdleEnd ends Drive after this long without a new line; 0 never.
	IdleEnd time.Duration
	// Epochs is the run's last epoch when the log announces none
	// (--epochs): the epoch the forecasts look to.
	Epochs int
	// Overrides are the columns the command line named for each split
	// (--train, --val, --train-dev, --test). With Judge.Metric they are
	// checked against the log's columns as soon as these are known
	// (watch.Stats.ColumnsKnown): one that the log lacks ends the run with
	// a *watch.ColumnsError, before any point is judged.
	Overrides watch.Overrides
}

// Run is one training run: its Tracker, the reader's latest counts and the
// stop file's state. Apply and Drive must be called from one goroutine at
// a time; Read, Summary and the accessors may be called from any.
type Run struct {
	opts Options

	mu       sync.Mutex // guards tracker, stats, notices, extras, gen and cached
	tracker  *diagnose.Tracker
	stats    watch.Stats
	notices  noticeLog // the reader's notices, for the summary
	finished bool      // WriterDone was closed
	// checked: the named columns were checked (once the log's columns
	// were known); colErr is what the check found.
	checked bool
	colErr  error

	// The forecast's inputs beyond the Tracker, and the last forecasts
	// made (forecast.go). gen counts the points taken: a forecast is kept
	// until the next one.
	extras extras
	gen    uint64
	cached [2]cachedForecast
	// carried are the forecasts last made for a summary, which the points
	// of a long batch between two fits carry (summaryForecasts). Apply's
	// own: no lock.
	carried report.Forecasts
}

// New returns a run with no point judged yet.
func New(opts Options) *Run {
	return &Run{opts: opts, tracker: diagnose.New(opts.Judge)}
}

// Update is what one batch changed, once judged. Points[i] was judged as
// Judgements[i], in order; a point whose epoch is not above the one before
// replaces the judgements from Judgements[i].Index on. The judgements where
// the forecast was weighed (every point with Options.Summaries, else the
// batch's last) carry its reason to stop, as the stop file does.
type Update struct {
	Points     []diagnose.Point
	Judgements []diagnose.Judgement
	// Summaries[i] is the summary as of Points[i], with Options.Summaries.
	Summaries []report.Summary
	// Rejudged says the Tracker judged every earlier point again while
	// taking this batch (it chose another metric, or found a rate written
	// in percent): judgements read before it are stale.
	Rejudged bool
	// Steps are the batch's per-step rows, Notices the reader's messages.
	Steps   diagnose.StepRows
	Notices []watch.Notice
	// Stats are the reader's counts so far. State is StateFinished once the
	// writer is known to have ended (Options.WriterDone).
	Stats watch.Stats
	// Stop is set when a point of the batch says stop while the stop file
	// is still to be created: it was created now, or why not (the next
	// point that says stop tries again).
	Stop *StopEvent
	// Ended: the run ends with this update (Options.EndOnStop reached, or
	// Err).
	Ended bool
	// Err ends the run: a column named on the command line is not in the
	// log (a *watch.ColumnsError). The batch's points were not judged.
	Err error
	// More is the batch's watch.Batch.More: written data follows at once.
	More bool
}

// StopEvent is the outcome of creating the stop file.
type StopEvent struct {
	Path      string
	Epoch     int // the epoch whose signal reached stop
	BestEpoch int // the epoch to restore
	Err       error
}

// Apply judges one batch: every point goes through the Tracker, the stop
// file is created when the signal first reaches stop, and the Update says
// what changed. The forecast's reason to stop (forecast.Forecast.Decide)
// is weighed at every point when summaries are asked for (follow), else
// at the last point of a batch that ends what was written (not
// watch.Batch.More): a backlog, in one batch or in many (a per-step log's
// rows fill a batch every few epochs), is judged as of its end, and a
// live log brings its epochs one batch each. The lock is
// held while judging a point, never while fitting a forecast or writing
// a file.
func (r *Run) Apply(b watch.Batch) Update {
	u := Update{Steps: b.Steps, Notices: b.Notices, More: b.More}
	stopAt := -1 // the first point of the batch that says stop, for the stop file
	r.mu.Lock()
	r.stats = b.Stats
	r.notices.add(b.Notices, len(b.Points))
	u.Stats = r.statsLocked()
	if err := r.checkLocked(); err != nil {
		r.mu.Unlock()
		u.Err, u.Ended = err, true
		return u
	}
	r.tracker.Reserve(len(b.Points))
	r.mu.Unlock()
	if len(b.Points) > 0 {
		u.Judgements = make([]diagnose.Judgement, 0, len(b.Points))
	}
	for i := range b.Points {
		p := &b.Points[i]
		r.mu.Lock()
		revision := r.tracker.Revision()
		j := r.tracker.Add(*p)
		r.took(p)
		if r.tracker.Revision() != revision && r.tracker.Len() > 1 {
			u.Rejudged = true // the points before p were judged again
		}
		var sum report.Summary
		if r.opts.Summaries {
			sum = r.summaryLocked()
		}
		r.mu.Unlock()
		switch {
		case r.opts.Summaries:
			fc := r.summaryForecasts(i, len(b.Points))
			j = fc.Val.Decide(j)
			u.Summaries = append(u.Summaries, sum.WithForecasts(fc))
		case i == len(b.Points)-1 && !b.More:
			f := r.Forecast(diagnose.SplitVal)
			j = f.Decide(j)
		}
		u.Points = b.Points[:i+1]
		u.Judgements = append(u.Judgements, j)
		if j.EarlyStop.Signal != diagnose.Stop {
			continue
		}
		if stopAt < 0 && r.opts.StopFile.pending() {
			stopAt = i
		}
		if r.opts.EndOnStop {
			u.Ended = true
			break
		}
	}
	if stopAt >= 0 {
		u.Stop = r.opts.StopFile.create(u.Judgements[stopAt])
	}
	return u
}

// took records, under the lock, what the forecast needs of the point the
// Tracker just took.
func (r *Run) took(p *diagnose.Point) {
	r.extras.add(r.tracker.Len()-1, p)
	r.gen++
}

// Load judges one batch of a whole log being read (report): every point,
// but only the judgements asked for later are built. Handing each batch on
// as it is read keeps memory to the Tracker's compact history, not the
// log's points. It returns the error of Update.Err: a named column the
// log lacks (then nothing more is judged).
func (r *Run) Load(b watch.Batch) error {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.stats = b.Stats
	r.notices.add(b.Notices, len(b.Points))
	if err := r.checkLocked(); err != nil {
		return err
	}
	r.tracker.Reserve(len(b.Points))
	for i := range b.Points {
		r.tracker.Push(b.Points[i])
		r.took(&b.Points[i])
	}
	return nil
}

// checkLocked checks the columns named on the command line once the log's
// columns are known, and returns the error found then, every time after.
func (r *Run) checkLocked() error {
	if !r.checked && r.stats.ColumnsKnown {
		r.checked = true
		r.colErr = watch.CheckColumns(r.stats.Columns, r.opts.Overrides, r.opts.Judge.Metric)
	}
	return r.colErr
}

// Drive applies the batches as they come and hands each Update to emit,
// until the source ends (the channel closes), ctx ends, the run ends on
// stop (Options.EndOnStop), no line came for Options.IdleEnd, or emit
// returns an error, which Drive returns; so it returns Update.Err (a named
// column the log lacks), after emitting that update. An update being handed on when
// ctx ends is still handed on whole: emit decides whether to wait for its
// reader (the screen's feed gives up once the screen is gone).
func (r *Run) Drive(ctx context.Context, batches <-chan watch.Batch, emit func(Update) error) error {
	var idle <-chan time.Time
	var timer *time.Timer
	if r.opts.IdleEnd > 0 {
		timer = time.NewTimer(r.opts.IdleEnd)
		defer timer.Stop()
		idle = timer.C
	}
	lines := 0
	writerDone := r.opts.WriterDone
	// take applies one batch; it reports whether the run is over.
	take := func(b watch.Batch, ok bool) (bool, error) {
		if !ok {
			return true, nil
		}
		if timer != nil && b.Stats.Lines != lines {
			timer.Reset(r.opts.IdleEnd) // new lines: not idle
		}
		lines = b.Stats.Lines
		u := r.Apply(b)
		err := emit(u)
		if err == nil {
			err = u.Err
		}
		return err != nil || u.Ended, err
	}
	for {
		select {
		case <-ctx.Done():
			return nil
		case <-idle:
			// A batch already waiting is not idleness (the process may
			// have had no CPU for a while): take it, and wait again.
			select {
			case b, ok := <-batches:
				timer.Reset(r.opts.IdleEnd)
				if over, err := take(b, ok); over {
					return err
				}
			default:
				return nil
			}
		case b, ok := <-batches:
			if over, err := take(b, ok); over {
				return err
			}
		case <-writerDone:
			writerDone = nil
			r.mu.Lock()
			r.finished = true
			u := Update{Stats: r.statsLocked()}
			r.mu.Unlock()
			if err := emit(u); err != nil {
				return err
			}
		}
	}
}

// statsLocked is the reader's latest counts, a live source shown finished
// once its writer has ended.
func (r *Run) statsLocked() watch.Stats {
	s := r.stats
	if r.finished && s.State == watch.StateLive {
		s.State = watch.StateFinished
	}
	return s
}

// Read calls f with the run's Tracker held still, for reading past
// judgements ("as judged then"). f must not modify the Tracker nor keep
// it, and must not call back into the Run.
func (r *Run) Read(f func(t *diagnose.Tracker)) {
	r.mu.Lock()
	defer r.mu.Unlock()
	f(r.tracker)
}

// Stats returns the reader's latest counts.
func (r *Run) Stats() watch.Stats {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.statsLocked()
}

// Len returns the number of points judged.
func (r *Run) Len() int {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.tracker.Len()
}

// Name returns how the log is named (untrusted text).
func (r *Run) Name() string { return r.opts.Name }
