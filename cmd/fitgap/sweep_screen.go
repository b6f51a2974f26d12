package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"syscall"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep/live"
	"github.com/fitgap/fitgap/tui"
)

// sweepScreenSpec is what runSweepScreen needs beyond the sweep's options.
type sweepScreenSpec struct {
	opts      live.Options
	flags     screenFlags
	bayesNote string
	// started, when not nil, is given the sweep once it exists (the demo
	// marks its runs ended through it).
	started func(*live.Sweep)
	// after runs once the screen is closed (the demo stops its trainers).
	after func()
}

// runSweepScreen shows the run table on a sweep until the user quits or a
// signal ends it, then prints the ranked table and writes --summary.
func runSweepScreen(ctx context.Context, e *env, spec sweepScreenSpec) error {
	stdout, ok := e.stdout.(*os.File)
	if !ok {
		return &noTerminalError{err: errors.New("standard output is not a file")}
	}
	if spec.flags.stopFile != "" {
		return usageErrorf("--stop-file is for one run; on a sweep use --stop-file-name NAME")
	}
	s, err := newSweep(spec.opts)
	if err != nil {
		return err
	}
	if spec.started != nil {
		spec.started(s)
	}
	closes := make(chan tui.ExitReason, 2)
	sigs := catchSignals(func(sig syscall.Signal) {
		select {
		case closes <- screenReason(sig):
		default:
		}
	})
	defer sigs.stop()
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()

	feed := make(chan tui.SweepMsg, 1)
	var mu sync.Mutex
	var stops []live.StopEvent
	followed := make(chan error, 1)
	go func() {
		followed <- s.Follow(ctx, func(u live.Update) error {
			if len(u.Stops) > 0 {
				mu.Lock()
				stops = append(stops, u.Stops...)
				mu.Unlock()
			}
			if !u.Evaluated && !u.FirstRead && len(u.Added) == 0 && len(u.Notices) == 0 {
				return nil // nothing the table shows has changed yet
			}
			select { // the table reads the sweep itself: a signal is enough
			case feed <- tui.SweepMsg{}:
			default:
			}
			return nil
		})
	}()

	noColor := spec.flags.noColor || os.Getenv("NO_COLOR") != ""
	m := tui.NewSweep(tui.SweepOptions{
		Source:  s,
		Root:    s.Root(),
		NoColor: noColor,
		Open:    func(ctx context.Context, id int) (tui.RunScreen, error) { return openRun(ctx, s, id, spec.opts) },
		Run: tui.Options{
			BayesNote: spec.bayesNote,
			SaveSummary: func(sum report.Summary) (string, error) {
				return defaultSummaryFile, pipeline.SaveSummary(defaultSummaryFile, "", sum)
			},
		},
	})
	_, reason, err := tui.RunSweep(ctx, m, feed, closes, stdout)
	cancel()
	followErr := <-followed
	if spec.after != nil {
		spec.after()
	}
	if errors.Is(err, tui.ErrNoTerminal) {
		return &noTerminalError{err: err}
	}
	if err != nil {
		return err
	}
	if followErr != nil {
		return followErr
	}
	rep := s.Report(false)
	var fileErr error
	if p := spec.flags.summary; p != "" {
		fileErr = saveSweepReport(p, s, rep)
	}
	if reason != tui.ExitHangup {
		if _, err := e.stdout.Write([]byte(rep.Markdown())); err != nil && fileErr == nil {
			fileErr = err
		}
		// What the screen said, now that the terminal is back.
		if n, why := s.Polling(); n > 0 {
			fmt.Fprintf(e.stderr, "fitgap: %d run directories were polled instead of watched: %s\n", n, diagnose.Printable(why))
		}
		mu.Lock()
		for _, st := range stops {
			if st.Err == nil {
				fmt.Fprintf(e.stderr, "fitgap: %s: created %s at epoch %d (%s)\n", diagnose.Printable(st.Name),
					diagnose.Printable(st.Path), st.Epoch, diagnose.Printable(st.Reason))
			}
		}
		mu.Unlock()
	}
	if fileErr != nil {
		return fileErr
	}
	return exitOf(reason)
}

// openRun opens one run's screen: its log read again from the start
// through the sweep's watcher into a pipeline of its own (the same
// judgements as the sweep's, with the other columns' sparklines), until
// the screen goes back to the table. The run's last epoch is the one the
// table knows (its log's, its epochs hyperparameter, or --epochs), so its
// forecast ends where the run will; and the screen says finished once the
// table finds it finished (its writer ended, its length reached).
func openRun(ctx context.Context, s *live.Sweep, id int, opts live.Options) (tui.RunScreen, error) {
	ctx, cancel := context.WithCancel(ctx)
	batches, err := s.FollowRun(ctx, id)
	if err != nil {
		cancel()
		return tui.RunScreen{}, err
	}
	epochs := s.Length(id)
	run := pipeline.New(pipeline.Options{Name: s.Path(id), Judge: opts.Judge, Epochs: epochs, WriterDone: s.Finished(id)})
	feed := make(chan tui.FeedMsg, 4)
	go relay(ctx, run, batches, feed)
	return tui.RunScreen{History: run, Feed: feed, Close: cancel, Epochs: epochs}, nil
}

// saveSweepReport writes the sweep's report: JSON when the name ends in
// .json, Markdown otherwise; never over one of the runs' logs.
func saveSweepReport(path string, s *live.Sweep, rep report.SweepReport) error {
	for _, r := range rep.Rows {
		if err := pipeline.NotTheLog(path, s.Path(r.ID)); err != nil {
			return err
		}
	}
	var data []byte
	if strings.EqualFold(filepath.Ext(path), ".json") {
		b, err := json.MarshalIndent(rep.Document(), "", "  ")
		if err != nil {
			return fmt.Errorf("encode sweep report: %w", err)
		}
		data = append(b, '\n')
	} else {
		data = []byte(rep.Markdown())
	}
	return pipeline.WriteFileAtomic(path, data)
}
