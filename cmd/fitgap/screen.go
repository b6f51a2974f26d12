package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"syscall"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

var watchCommand = &command{
	name:    "watch",
	args:    "FILE",
	summary: "the live screen on a growing log (the default command)",
	about: `Opens the live screen on a metrics log as training writes it: curves, where the
error comes from, the early-stopping signal and the next action. FILE "-" reads
standard input (python train.py | fitgap -); keys still come from the terminal.
A log that does not exist yet is waited for. On quit the snapshot summary is
printed to standard output; --summary also writes it to a file, including when
the SSH link drops (SIGHUP) or on SIGTERM.`,
	example: `  fitgap runs/run7.csv
  fitgap watch --bayes-error 4% --summary run7.md runs/run7.csv
  python train.py 2>&1 | fitgap -`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log logFlags
			scr screenFlags
		)
		log.register(fs)
		scr.register(fs)
		return func(ctx context.Context, e *env, args []string) error {
			path, opts, cfg, err := log.parse(args, true)
			if err != nil {
				return err
			}
			return runScreen(ctx, e, screenSpec{path: path, opts: opts, cfg: cfg, flags: scr})
		}
	},
}

// screenFlags are the flags of the commands that open the screen.
type screenFlags struct {
	summary  string
	stopFile string
	noColor  bool
}

func (s *screenFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&s.summary, "summary", "", "also write the snapshot summary to this `file` on exit (JSON when it ends in .json); the s key writes it at any time")
	fs.StringVar(&s.stopFile, "stop-file", "", "create this `file` when the early-stopping signal first reaches stop (see fitgap follow --help)")
	fs.BoolVar(&s.noColor, "no-color", false, "draw without colour (also when NO_COLOR is set)")
}

type screenSpec struct {
	path      string
	opts      watch.Options
	cfg       diagnose.Config
	bayesNote string
	flags     screenFlags
	// after runs once the screen is closed, before the summary is printed
	// (the demo stops its trainer there).
	after func()
	// writerDone, when not nil, is closed when the process writing the log
	// has ended (the demo's trainer): the source is then shown finished
	// rather than quiet, since no more epochs will come.
	writerDone <-chan struct{}
}

// defaultSummaryFile is where the s key saves the summary without --summary.
const defaultSummaryFile = "fitgap-summary.md"

// runScreen runs the log's pipeline with the screen as its sink until the
// user quits or a signal ends it, then prints the summary and writes the
// summary file.
func runScreen(ctx context.Context, e *env, spec screenSpec) error {
	stdout, ok := e.stdout.(*os.File)
	if !ok {
		return &noTerminalError{err: errors.New("standard output is not a file")}
	}
	spec.opts.Steps = true
	src := pipeline.Source{Path: spec.path, Stdin: e.stdin, Read: spec.opts}
	stop, err := openStopFile(spec.flags.stopFile, src)
	if err != nil {
		return err
	}
	summaryPath := spec.flags.summary
	if summaryPath != "" {
		if err := pipeline.NotTheLog(summaryPath, src.Log()); err != nil {
			return usageErrorf("--summary %v", err)
		}
	}
	closes := make(chan tui.ExitReason, 2)
	sigs := catchSignals(func(s syscall.Signal) {
		select {
		case closes <- screenReason(s):
		default:
		}
	})
	defer sigs.stop()
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	batches, err := src.Follow(ctx)
	if err != nil {
		return readError(src.Name(), err)
	}

	run := pipeline.New(pipeline.Options{Name: src.Name(), Judge: spec.cfg, StopFile: stop, WriterDone: spec.writerDone,
		Overrides: spec.opts.Roles})
	feed := make(chan tui.FeedMsg, 4)
	var stopErr, runErr error
	relayed := make(chan struct{})
	go func() {
		defer close(relayed)
		stopErr, runErr = relay(ctx, run, batches, feed)
		if runErr != nil {
			cancel() // the run cannot go on (a named column is missing): close the screen
		}
	}()

	m := tui.New(tui.Options{
		History:   run,
		BayesNote: spec.bayesNote,
		NoColor:   spec.flags.noColor || os.Getenv("NO_COLOR") != "",
		SaveSummary: func(s report.Summary) (string, error) {
			p := summaryPath
			if p == "" {
				p = defaultSummaryFile
			}
			return p, pipeline.SaveSummary(p, src.Log(), s)
		},
	})
	final, reason, err := tui.Run(ctx, m, feed, closes, stdout)
	cancel()
	<-relayed
	if spec.after != nil {
		spec.after()
	}
	if errors.Is(err, tui.ErrNoTerminal) {
		return &noTerminalError{err: err}
	}
	if err != nil {
		return err
	}
	if runErr != nil {
		return runError(src.Name(), runErr)
	}
	sum := final.Summary()
	var fileErr error
	if summaryPath != "" {
		fileErr = pipeline.SaveSummary(summaryPath, src.Log(), sum)
	}
	if reason != tui.ExitHangup {
		// After a hangup the terminal is gone: only the file is kept.
		if err := pipeline.WriteSummary(e.stdout, sum, false); err != nil && fileErr == nil {
			fileErr = err
		}
	}
	if stopErr != nil {
		fmt.Fprintln(e.stderr, "fitgap: "+diagnose.Printable(stopErr.Error()))
	}
	if fileErr != nil {
		return fileErr
	}
	switch reason {
	case tui.ExitHangup:
		return &signalExit{code: exitHangup}
	case tui.ExitTerminated:
		return &signalExit{code: exitTerminated}
	case tui.ExitInterrupted:
		return &signalExit{code: exitInterrupted}
	}
	return nil
}

// relay drives the run and hands each update to the screen, until the
// source ends, the run does, or ctx does (the screen closed); it then
// closes feed. It never blocks on a feed nobody reads: a send gives up
// once ctx ends. The stop file is the run's business, whatever the screen
// shows (paused, or judging with another optimal error typed in to
// explore); relay returns the first error in creating it, for after the
// screen, and the error that ended the run (a named column the log lacks).
func relay(ctx context.Context, run *pipeline.Run, batches <-chan watch.Batch, feed chan<- tui.FeedMsg) (stopErr, runErr error) {
	defer close(feed)
	runErr = run.Drive(ctx, batches, func(u pipeline.Update) error {
		if u.Stop != nil && u.Stop.Err != nil && stopErr == nil {
			stopErr = u.Stop.Err
		}
		select {
		case feed <- screenFeed(run, u):
		case <-ctx.Done():
		}
		return nil // the screen takes what comes; nothing here ends the run
	})
	return stopErr, runErr
}

// screenFeed is an update in the screen's terms.
func screenFeed(run *pipeline.Run, u pipeline.Update) tui.FeedMsg {
	notices := make([]string, len(u.Notices))
	for i, n := range u.Notices {
		notices[i] = n.Text
	}
	examples := make([]string, len(u.Stats.Examples))
	for i, x := range u.Stats.Examples {
		examples[i] = x.Error()
	}
	return tui.FeedMsg{
		Points:     u.Points,
		Judgements: u.Judgements,
		Rejudged:   u.Rejudged,
		Steps:      u.Steps,
		Notices:    notices,
		Source: tui.SourceInfo{
			Name:      diagnose.Printable(run.Name()),
			Format:    u.Stats.Format.String(),
			State:     sourceState(u.Stats.State),
			Lines:     u.Stats.Lines,
			Skipped:   u.Stats.Skipped,
			NonFinite: u.Stats.NonFinite,
			Examples:  examples,
			LastWrite: u.Stats.LastWrite,
			Roles:     u.Stats.Roles,
		},
	}
}

func sourceState(s watch.State) tui.SourceState {
	switch s {
	case watch.StateWaiting:
		return tui.Waiting
	case watch.StateRemoved:
		return tui.Removed
	case watch.StateFinished:
		return tui.Finished
	}
	return tui.Live
}

// openStopFile checks the --stop-file path, if any, before anything runs.
func openStopFile(path string, src pipeline.Source) (*pipeline.StopFile, error) {
	if path == "" {
		return nil, nil
	}
	s, err := pipeline.OpenStopFile(path, src.Log())
	if err != nil {
		return nil, usageErrorf("--stop-file %v", err)
	}
	return s, nil
}
