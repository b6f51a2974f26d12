package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"syscall"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/pipeline"
	"github.com/fitgap/fitgap/report"
	"github.com/fitgap/fitgap/sweep/live"
	"github.com/fitgap/fitgap/tui"
	"github.com/fitgap/fitgap/watch"
)

var watchCommand = &command{
	name:    "watch",
	args:    "FILE | DIR | LOG... | 'GLOB'",
	summary: "the live screen on a growing log (the default command); the run table on a sweep",
	about: `Opens the live screen on a metrics log as training writes it: curves, where the
error comes from, the early-stopping signal and the next action. FILE "-" reads
standard input (python train.py | fitgap -); keys still come from the terminal.
A log that does not exist yet is waited for. On quit the snapshot summary is
printed to standard output; --summary also writes it to a file, including when
the SSH link drops (SIGHUP) or on SIGTERM.
Given a directory, several logs or a glob, it shows the run table of the
sweep: every run ranked, sortable and filterable, the hopeless ones flagged
with the rule and its numbers, the best runs' validation curves on one chart;
enter opens a run's own screen, esc comes back.`,
	example: `  fitgap runs/run7.csv
  fitgap watch --bayes-error 4% --summary run7.md runs/run7.csv
  python train.py 2>&1 | fitgap -
  fitgap --stop-file-name STOP runs/`,
	flags: func(fs *flag.FlagSet) func(context.Context, *env, []string) error {
		var (
			log logFlags
			scr screenFlags
			sw  sweepFlags
		)
		log.register(fs)
		scr.register(fs)
		sw.register(fs)
		return func(ctx context.Context, e *env, args []string) error {
			if isSweep(args) {
				opts, err := sweepOptions(args, &log, &sw, true)
				if err != nil {
					return err
				}
				if err := live.CheckStopFileName(scr.stopName); err != nil {
					return usageErrorf("--stop-file-name: %v", err)
				}
				opts.StopFileName = scr.stopName
				return runSweepScreen(ctx, e, sweepScreenSpec{opts: opts, flags: scr})
			}
			path, opts, cfg, err := log.parse(args, true)
			if err != nil {
				return err
			}
			if scr.stopName != "" {
				switch {
				case scr.stopFile != "":
					return usageErrorf("--stop-file and --stop-file-name: give one")
				case path == "-":
					return usageErrorf("--stop-file-name: standard input has no directory; use --stop-file PATH")
				}
				if err := live.CheckStopFileName(scr.stopName); err != nil {
					return usageErrorf("--stop-file-name: %v", err)
				}
				scr.stopFile = filepath.Join(filepath.Dir(path), scr.stopName)
			}
			return runScreen(ctx, e, screenSpec{path: path, opts: opts, cfg: cfg, epochs: log.epochs, flags: scr})
		}
	},
}

// screenFlags are the flags of the commands that open the screen.
type screenFlags struct {
	summary  string
	stopFile string
	stopName string
	noColor  bool
}

func (s *screenFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&s.summary, "summary", "", "also write the snapshot summary to this `file` on exit (JSON when it ends in .json); the s key writes it at any time")
	fs.StringVar(&s.stopFile, "stop-file", "", "create this `file` when the early-stopping signal first reaches stop (see fitgap follow --help)")
	fs.StringVar(&s.stopName, "stop-file-name", "", "create a file of this `name` in the log's directory (on a sweep: in each run's directory) when its run is to stop; never over an existing file")
	fs.BoolVar(&s.noColor, "no-color", false, "draw without colour (also when NO_COLOR is set)")
}

type screenSpec struct {
	path      string
	opts      watch.Options
	cfg       diagnose.Config
	epochs    int // the run's last epoch when the log announces none
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

// defaultSummaryFile is where the s key saves the summary without
// --summary, in the current directory; fitgap-summary-2.md and so on when
// it exists (never overwritten).
const defaultSummaryFile = "fitgap-summary.md"

// runScreen runs the log's pipeline with the screen as its sink until the
// user quits or a signal ends it, then prints the summary and writes the
// summary file.
func runScreen(ctx context.Context, e *env, spec screenSpec) error {
	spec.opts.Steps = true
	src := pipeline.Source{Path: spec.path, Stdin: e.stdin, Read: spec.opts}
	outs := screenOutputs{log: src.Log(), summary: spec.flags.summary, stop: spec.flags.stopFile}
	if err := checkOutputs(src, outs.flags()...); err != nil {
		return err
	}
	stop, err := openStopFile(outs.stop, src)
	if err != nil {
		return err
	}
	stdout, ok := e.stdout.(*os.File)
	if !ok {
		return &noTerminalError{err: errors.New("standard output is not a file")}
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
		Epochs: spec.epochs, Overrides: spec.opts.Roles})
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
		Epochs:    spec.epochs,
		BayesNote: spec.bayesNote,
		NoColor:   spec.flags.noColor || os.Getenv("NO_COLOR") != "",
		SaveSummary: func(s report.Summary) (string, error) {
			if outs.summary != "" {
				// The file asked for: the s key and the exit both write it.
				p, err := filepath.Abs(outs.summary)
				if err != nil {
					p = outs.summary
				}
				return p, pipeline.SaveSummary(outs.summary, outs.log, s, outs.stop)
			}
			// In the current directory, under a name no file has yet.
			return pipeline.SaveNewSummary(defaultSummaryFile, outs.log, s, outs.stop)
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
	if stopErr != nil {
		fmt.Fprintln(e.stderr, "fitgap: "+diagnose.Printable(stopErr.Error()))
	}
	return finishScreen(e, final.Summary(), reason, outs)
}

// screenOutputs are the paths the screen's commands write besides standard
// output, and the log none of them may land on.
type screenOutputs struct {
	log     string // "" for a stream
	summary string // --summary, "" for none
	stop    string // --stop-file, "" for none
}

// flags lists the outputs as given on the command line, for the checks at
// start.
func (o screenOutputs) flags() []pipeline.Output {
	return []pipeline.Output{
		{Flag: "--summary", Path: o.summary},
		{Flag: "--stop-file", Path: o.stop, Fresh: true},
	}
}

// finishScreen writes the summary once the screen has closed: to the
// --summary file, and to standard output unless the terminal hung up. A
// summary file that cannot be written (its directory went away during
// the run) is the command's error, and the summary then goes to standard
// output whatever the reason, so that it is not lost: after a hangup
// standard output may still be a file or a pipe. Otherwise the status is
// the reason's.
func finishScreen(e *env, sum report.Summary, reason tui.ExitReason, outs screenOutputs) error {
	var fileErr error
	if outs.summary != "" {
		fileErr = pipeline.SaveSummary(outs.summary, outs.log, sum, outs.stop)
	}
	if reason != tui.ExitHangup || fileErr != nil {
		if err := pipeline.WriteSummary(e.stdout, sum, false); err != nil && fileErr == nil {
			fileErr = err
		}
	}
	if fileErr != nil {
		return fileErr
	}
	return exitOf(reason)
}

// exitOf is the status a screen that ended for reason exits with: a
// signal's own (129, 143, 130), or 0.
func exitOf(reason tui.ExitReason) error {
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

// screenFeed is an update in the screen's terms. A stop file that could
// not be created is said with the update that reached stop, at once.
func screenFeed(run *pipeline.Run, u pipeline.Update) tui.FeedMsg {
	notices := make([]string, 0, len(u.Notices)+1)
	var waits []string
	for _, n := range u.Notices {
		if n.Waits() {
			waits = append(waits, n.Text)
		} else {
			notices = append(notices, n.Text)
		}
	}
	if u.Stop != nil && u.Stop.Err != nil {
		notices = append(notices, diagnose.Printable(stopFailure(u.Stop)))
	}
	examples := make([]string, len(u.Stats.Examples))
	for i, x := range u.Stats.Examples {
		examples[i] = x.Error()
	}
	return tui.FeedMsg{
		Points:      u.Points,
		Judgements:  u.Judgements,
		Rejudged:    u.Rejudged,
		More:        u.More,
		Steps:       u.Steps,
		Notices:     notices,
		WaitNotices: waits,
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

// stopFailure says that the stop file was not created, and why.
func stopFailure(ev *pipeline.StopEvent) string {
	return fmt.Sprintf("stop signal at epoch %d (restore epoch %d), but the stop file %s was not created: %v",
		ev.Epoch, ev.BestEpoch, ev.Path, ev.Err)
}

// checkOutputs checks every output path a command was given before
// anything runs: a problem is a usage error.
func checkOutputs(src pipeline.Source, outs ...pipeline.Output) error {
	if err := pipeline.CheckOutputs(src.Log(), outs...); err != nil {
		return usageErrorf("%v", err)
	}
	return nil
}

// openStopFile makes the --stop-file, if any, once its path is checked.
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
