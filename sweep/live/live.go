// Package live runs a sweep in one process: the runs found under the
// paths given (sweep/discover), each log followed through one shared
// watcher (watch.Group: one inotify instance, one stat sweep) and judged
// by its own pipeline.Run, all driven from one goroutine, and the sweep's
// domain (package sweep) told what each run now says.
//
//	discover ──► runs ──► watch.Group ──tagged batches──► Sweep.Follow
//	                                                          │ Run.Load / Run.Apply
//	                                                          ▼
//	            sweep.Sweep (ranks, rules) ◄── observe ── pipeline.Run per run
//	                     │
//	                     ├──► stop files (--stop-file-name), created once
//	                     └──► Update ──► the screen, follow's lines
//
// Load does the same once, to the end of every log (report DIR).
package live

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"time"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/sweep"
	"github.com/fitgap/fitgap/sweep/discover"
	"github.com/fitgap/fitgap/watch"
)

// Options configure a Sweep.
type Options struct {
	// Paths are the directories, log files and globs named.
	Paths []string
	// Read are the reader's options (format, roles, Poll); Follow and
	// Steps are the Sweep's to set.
	Read watch.Options
	// Judge is every run's judgement configuration.
	Judge diagnose.Config
	// Rules choose the rules that flag hopeless runs.
	Rules sweep.Config
	// StopFileName, when not empty, is created in the directory of a run
	// that a rule finds hopeless or whose early-stopping signal says stop
	// (never over an existing file).
	StopFileName string
	// Summaries asks for the summary as of each point in updates
	// (follow DIR's lines); the sweep is then evaluated at every batch.
	Summaries bool
	// Now is the clock; nil means time.Now.
	Now func() time.Time
}

// Sweep is a sweep being read. Its methods may be called from any
// goroutine; Follow and Load drive it from theirs.
type Sweep struct {
	opts   Options
	now    func() time.Time
	finder *discover.Finder

	mu      sync.Mutex // guards everything below, and the domain
	dom     *sweep.Sweep
	runs    []*entry
	byPath  map[string]*entry
	notices []string // the latest, for the screen
	pending []string // notices not yet handed on in an Update
	group   *watch.Group
	tagged  chan watch.Tagged
	ctx     context.Context
	// observed are the directories already watched for new runs.
	observed map[string]bool
	// read counts the runs whose log was read to its end once.
	read int
	// fcTokens are the refreshes of forecasts allowed now, as of
	// fcTokensAt (forecasts.go).
	fcTokens   float64
	fcTokensAt time.Time
	// scratchEpochs and scratchVals are observe's room for the points
	// a batch changed, reused from run to run.
	scratchEpochs []int
	scratchVals   []float64
}

// maxNotices bounds the notices kept for the screen.
const maxNotices = 32

// New checks the paths and the stop file's name; nothing is read yet.
func New(opts Options) (*Sweep, error) {
	if err := CheckStopFileName(opts.StopFileName); err != nil {
		return nil, err
	}
	now := opts.Now
	if now == nil {
		now = time.Now
	}
	name := opts.StopFileName
	f, err := discover.New(opts.Paths, discover.Options{Read: opts.Read, Skip: func(base string) bool {
		return name != "" && (base == name || strings.HasPrefix(base, "."+name+".tmp-"))
	}})
	if err != nil {
		return nil, err
	}
	return &Sweep{opts: opts, now: now, finder: f, dom: sweep.New(opts.Rules), byPath: map[string]*entry{},
		observed: map[string]bool{}}, nil
}

// CheckStopFileName refuses a stop file name that is not a plain file
// name: it goes in each run's own directory.
func CheckStopFileName(name string) error {
	switch {
	case name == "":
		return nil
	case name == "." || name == "..", strings.ContainsAny(name, `/\`), name != strings.TrimSpace(name):
		return fmt.Errorf("stop file name %q: give a file name, without a directory (it is created in each run's directory)", diagnose.Printable(name))
	case diagnose.Printable(name) != name:
		return fmt.Errorf("stop file name %q: unprintable characters", diagnose.Printable(name))
	}
	return nil
}

// Root returns the common root of the runs' names.
func (s *Sweep) Root() string { return s.finder.Root() }

// Read calls f with the domain held still, evaluated as of the last
// evaluation. f must not keep it nor call back into the Sweep.
func (s *Sweep) Read(f func(d *sweep.Sweep)) {
	s.mu.Lock()
	defer s.mu.Unlock()
	f(s.dom)
}

// Notices returns the latest notices (newest last).
func (s *Sweep) Notices() []string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return append([]string(nil), s.notices...)
}

// notice records a message for the screen and the next Update. s.mu is
// held.
func (s *Sweep) notice(text string) {
	text = watch.Sanitize(text)
	s.notices = append(s.notices, text)
	if over := len(s.notices) - maxNotices; over > 0 {
		s.notices = append(s.notices[:0], s.notices[over:]...)
	}
	s.pending = append(s.pending, text)
}

// Polling says how many run directories are polled because inotify could
// not watch them, and why.
func (s *Sweep) Polling() (int, string) {
	s.mu.Lock()
	g := s.group
	s.mu.Unlock()
	if g == nil {
		return 0, ""
	}
	return g.Polling()
}

// Progress says how many runs' logs were read to their end once, of how
// many found: the table is complete when they are equal.
func (s *Sweep) Progress() (read, total int) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.read, len(s.runs)
}

// Path returns run id's log.
func (s *Sweep) Path(id int) string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.runs[id].found.Path
}

// Run returns run id's pipeline (its judged history).
func (s *Sweep) Run(id int) *pipeline.Run {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.runs[id].run
}

// FollowRun follows run id's log again on a channel of its own, through
// the shared watcher, until ctx ends (the screen of one run).
func (s *Sweep) FollowRun(ctx context.Context, id int) (<-chan watch.Batch, error) {
	s.mu.Lock()
	g, path := s.group, s.runs[id].found.Path
	s.mu.Unlock()
	opts := s.opts.Read
	opts.Steps = true
	if g == nil {
		opts.Follow = false
		return watch.Follow(ctx, path, opts)
	}
	return g.Follow(ctx, path, opts)
}

// Length returns run id's last epoch as the sweep knows it (its log's
// announced total, its epochs hyperparameter, or Rules.Epochs); 0 when
// unknown.
func (s *Sweep) Length(id int) int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.dom.Length(id)
}

// Finished returns a channel closed once the sweep finds run id finished
// (it reached its length, its writer ended, or it went quiet after its own
// stop signal): the screen of one run says it then.
func (s *Sweep) Finished(id int) <-chan struct{} {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.runs[id].done
}

// MarkEnded says that the process writing a log has ended (the demo's
// trainer): its run is finished.
func (s *Sweep) MarkEnded(path string) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if e, ok := s.byPath[filepath.Clean(path)]; ok {
		e.ended = true
		s.observe(e)
	}
}

// add takes the runs discovery found: new ones get an entry (and, when
// following, their log followed); known ones get their new params. s.mu
// is held.
func (s *Sweep) add(found []discover.Run, u *Update) {
	for _, f := range found {
		if e, ok := s.byPath[f.Path]; ok {
			e.found.Params = f.Params
			s.dom.SetParams(e.id, e.params())
			s.syncEpochs(e)
			continue
		}
		e := &entry{found: f, added: s.now(), done: make(chan struct{})}
		e.id = s.dom.Add(f.Name, f.Params)
		e.run = pipeline.New(pipeline.Options{Name: f.Path, Judge: s.opts.Judge, Summaries: s.opts.Summaries, BareForecasts: true})
		s.syncEpochs(e)
		s.runs = append(s.runs, e)
		s.byPath[f.Path] = e
		u.Added = append(u.Added, e.id)
		if s.opts.StopFileName != "" {
			p := filepath.Join(f.Dir, s.opts.StopFileName)
			sf, err := pipeline.OpenStopFile(p, f.Path)
			if err != nil {
				s.notice(fmt.Sprintf("%s: no stop file for this run: %v", f.Name, err))
			}
			e.stop = sf
		}
		if s.group != nil {
			if err := s.group.FollowTagged(s.ctx, e.id, f.Path, s.opts.Read, s.tagged); err != nil {
				s.notice(fmt.Sprintf("%s: %v", f.Name, err))
				e.read = true // nothing to wait for
				s.read++
			}
		}
	}
	for _, n := range s.finder.Notices() {
		s.notice(n)
	}
}

// observeDirs asks the watcher to report new entries of every directory
// discovery walked. s.mu is held.
func (s *Sweep) observeDirs() {
	for _, d := range s.finder.Dirs() {
		if s.observed[d] {
			continue
		}
		s.observed[d] = true
		if err := s.group.Observe(d); err != nil && !errors.Is(err, os.ErrNotExist) {
			s.notice(fmt.Sprintf("cannot watch %s for new runs: %v", d, err))
		}
	}
}
